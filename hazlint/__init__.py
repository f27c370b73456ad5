"""hazlint: find the places where a structural or gate-level Verilog circuit can glitch."""
from __future__ import annotations

__version__ = "0.1.0"

from .errors import HazlintError  # noqa: E402

__all__ = ["load_design", "Design", "HazlintError", "__version__"]


def __getattr__(name):  # lazy, so `import hazlint` stays cheap for the CLI and the LSP
    if name == "load_design":
        from .loader import load_design
        return load_design
    if name == "Design":
        from .netlist.design import Design
        return Design
    raise AttributeError(name)
