"""Benchmark netlists shipped by the PyPI package circuitgraph==0.2.1 (MIT), read in place."""
from __future__ import annotations

import importlib.resources
from pathlib import Path


def netlist(name: str) -> str:
    """Filesystem path of ``netlists/<name>`` inside the installed circuitgraph package."""
    p = importlib.resources.files("circuitgraph") / "netlists" / name
    path = Path(str(p))
    if not path.is_file():
        raise FileNotFoundError(f"circuitgraph does not ship {name}")
    return str(path)
