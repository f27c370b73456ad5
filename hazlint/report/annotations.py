"""One line per finding in the workflow-command form CI runners turn into inline annotations::

    ::warning file=rtl/press.v,line=12,col=5,title=hazlint reconvergence (press_top.g3)::message

The runner reads ``::<level> <properties>::<text>`` from a step's output and shows ``text`` on the
pull-request diff at ``file:line``. Levels are ``error``, ``warning`` and ``notice``. Property
values escape ``%``, CR, LF, ``:`` and ``,``; the text escapes ``%``, CR and LF (the runner's
escaping rules, from memory of its documentation), so the fix can follow the message on the
same physical line as a ``%0A``-separated line; the evidence stays in the text, JSON and SARIF
reports. Paths are relative to the project root (:func:`hazlint.paths.relpath`),
because the runner resolves them against the repository checkout; a file outside the root is
named by its absolute path.
"""
from __future__ import annotations

import os
from typing import Any

from ..diagnostics import Diagnostic, Severity, sort_diagnostics
from ..paths import relpath
from .registry import ReportOptions

NAME = "annotations"
SUMMARY = "one ::level file=,line=,col=,title=::text line per finding for CI runners"

_LEVEL = {Severity.ERROR: "error", Severity.WARNING: "warning", Severity.INFO: "notice"}


def escape_data(text: str) -> str:
    return text.replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A")


def escape_property(text: str) -> str:
    return escape_data(text).replace(":", "%3A").replace(",", "%2C")


def annotation_line(d: Diagnostic, root: str | None = None) -> str:
    props = [f"file={escape_property(relpath(d.location.path, root))}"]
    if d.location.line:
        props.append(f"line={int(d.location.line)}")
        if d.location.column:
            props.append(f"col={int(d.location.column)}")
    title = f"hazlint {d.rule}" + (f" ({d.instance})" if d.instance else "")
    props.append(f"title={escape_property(title)}")
    # the headline and the fix: the evidence (paths, waveform) is for the full report, a
    # pull-request annotation must stay readable beside the diff
    body = [d.message]
    if d.fix:
        body.append(f"fix: {d.fix}")
    level = _LEVEL.get(d.severity, "warning")
    return f"::{level} {','.join(props)}::{escape_data(chr(10).join(body))}"


def write(result: Any, stream, options: ReportOptions | None = None) -> None:
    root = getattr(result, "root", None) or os.getcwd()
    for d in sort_diagnostics(getattr(result, "diagnostics", ()) or ()):
        if d.waived is None:
            stream.write(annotation_line(d, root) + "\n")


def render(result: Any, options: ReportOptions | None = None) -> str:
    """Annotation lines for a :class:`hazlint.api.LintResult` (waived findings are left out)."""
    import io
    buf = io.StringIO()
    write(result, buf, options)
    return buf.getvalue()
