"""Timing in fresh processes, shared by the load benchmarks (bench_load.py, bench_frontends.py).

A measurement is a Python snippet run by ``python -c`` in a process of its own (so imports,
caches and the allocator start cold every time), which prints one JSON object as its last
line; ``run`` returns it, ``best`` the fastest of several runs (the least disturbed by other
load on a shared machine), and ``recorded`` the line every results file starts with.
"""
from __future__ import annotations

import json
import os
import platform
import subprocess
import sys
import time


def run(code: str, *args: str, timeout: float = 3600) -> dict:
    """Run ``code`` with ``args`` in a fresh interpreter; its last stdout line, as JSON."""
    r = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True,
                       timeout=timeout)
    if r.returncode != 0:
        raise SystemExit(f"benchmark child failed:\n{r.stderr}")
    return json.loads(r.stdout.strip().splitlines()[-1])


def best(n: int, code: str, *args: str, key: str = "seconds") -> dict:
    """The run with the smallest ``key`` among ``n`` fresh-process runs."""
    return min((run(code, *args) for _ in range(max(1, n))), key=lambda r: r[key])


def recorded(command: str) -> str:
    """"Recorded <date> on <machine>, <cores> cores, Python <version>, by `<command>`."."""
    return (f"Recorded {time.strftime('%Y-%m-%d')} on {platform.machine()}, "
            f"{os.cpu_count()} cores, Python {platform.python_version()}, by `{command}`.")
