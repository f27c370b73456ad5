"""The pyslang front end: Verilog and SystemVerilog files -> IR through slang's preprocessor,
parser and syntax tree. pyslang is an optional dependency (``pip install 'hazlint[slang]'``);
:func:`available` says whether it is installed without importing it."""
from __future__ import annotations

import importlib.util


def available() -> bool:
    return importlib.util.find_spec("pyslang") is not None
