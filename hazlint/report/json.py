"""JSON: a list of finding objects (``rule``, ``kind``, ``severity``, ``path``, ``line``,
``column``, ``instance``, ``message``, ``evidence``, ``fix``), paths relative to the project root.
Deterministic: the same input gives the same bytes (sorted findings, sorted keys).

Layout: the array's brackets on lines of their own and one finding per line in between, so that
line tools (grep, diff, head) work on it and it is written one finding at a time: a large
netlist can have tens of thousands of findings with paths of hundreds of gates each, and the
report is never held in memory as a whole."""
from __future__ import annotations

import json
from typing import Any

from .registry import ReportOptions

NAME = "json"
SUMMARY = "a JSON array, one finding object per line, paths relative to the project root"


def write(result: Any, stream, options: ReportOptions | None = None) -> None:
    rel = getattr(result, "relpath", None) or (lambda p: p)
    diags = list(result.diagnostics)
    if not diags:
        stream.write("[]\n")
        return
    stream.write("[\n")
    last = len(diags) - 1
    for i, d in enumerate(diags):
        stream.write(json.dumps(d.to_json(rel), sort_keys=True, ensure_ascii=False,
                                allow_nan=False))
        stream.write("\n" if i == last else ",\n")
    stream.write("]\n")


def render(result: Any, options: ReportOptions | None = None) -> str:
    import io
    buf = io.StringIO()
    write(result, buf, options)
    return buf.getvalue()
