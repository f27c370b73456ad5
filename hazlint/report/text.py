"""Plain text: ``path:line:column: severity: message [rule-id]``, evidence indented below, then a
summary line. This is the shape editors' quick-fix lists and CI problem matchers read. Colour
only when asked (the command asks when stdout is a terminal and NO_COLOR is not set)."""
from __future__ import annotations

from typing import Any

from .registry import ReportOptions

NAME = "text"
SUMMARY = "path:line:column: severity: message [rule], evidence indented below, a summary line"

CAUTION = ("note: a clean lint run does not make a machine safe; safety functions follow the "
           "applicable functional-safety standards and a qualified review.")

_COLOURS = {"error": "\033[1;31m", "warning": "\033[1;33m", "info": "\033[1;36m"}
_DIM = "\033[2m"
_BOLD = "\033[1m"
_RESET = "\033[0m"


def _plural(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


# longest line of text evidence; the full data stays in the JSON and SARIF reports
MAX_LINE = 240


def cap(text: str, width: int = MAX_LINE) -> list[str]:
    """``text`` as lines a terminal shows: a long list ("a=1, b=0, ...") cut after the last item
    that fits, with the number left out; long prose wrapped."""
    if len(text) <= width:
        return [text]
    if text.count(", ") >= 10:
        cut = text.rfind(", ", 0, width - 40)
        if cut > width // 2:
            rest = text[cut + 2:].count(", ") + 1
            return [text[:cut] + f", ... ({rest} more; --format json has all)"]
    import textwrap
    return textwrap.wrap(text, 110, subsequent_indent="  ", break_on_hyphens=False)


def _headline(message: str) -> str:
    """The headline stays one line (problem matchers read one line per finding)."""
    lines = cap(message)
    return lines[0] if len(lines) == 1 else message[:MAX_LINE - 40] + " ..."


def format_diagnostic(d, relpath, color: bool = False, evidence: bool = True) -> list[str]:
    sev = str(d.severity)
    where = f"{relpath(d.location.path)}:{d.location.line}:{d.location.column}"
    if color:
        head = (f"{_BOLD}{where}{_RESET}: {_COLOURS.get(sev, '')}{sev}{_RESET}: {_headline(d.message)} "
                f"{_DIM}[{d.rule}]{_RESET}")
    else:
        head = f"{where}: {sev}: {_headline(d.message)} [{d.rule}]"
    lines = [head]
    if not evidence:
        return lines
    body = list(d.notes)
    if not body and d.flows:
        for k, flow in enumerate(d.flows, 1):
            body.append(f"path {k}: " + " -> ".join(h.describe() for h in flow))
    if d.instance:
        body.insert(0, f"instance {d.instance}")
    if d.fix:
        body.append(f"fix: {d.fix}")
    if d.waived is not None:
        body.append(f"accepted: {d.waived}")
    for b in (line for text in body for line in cap(text)):
        # evidence lines carry their own file:line in parentheses, never at the line start, so
        # problem matchers do not mistake them for findings
        lines.append(("    " + b) if not color else f"    {_DIM}{b}{_RESET}")
    return lines


def summary_line(result: Any) -> str:
    c = result.counts
    parts = []
    for sev in ("error", "warning", "info"):
        if c.get(sev):
            parts.append(_plural(c[sev], sev))
    total = c.get("total", len(result.diagnostics))
    head = f"hazlint: {_plural(total, 'finding')}" + (f" ({', '.join(parts)})" if parts else "")
    extra = []
    if c.get("waived"):
        extra.append(f"{c['waived']} accepted")
    if c.get("baselined"):
        extra.append(f"{c['baselined']} in baseline")
    files = getattr(result, "files", None) or []
    design = getattr(result, "design", None)
    where = f" in {_plural(len(files), 'file')}" if files else ""
    top = f" (top {design.top})" if design is not None and getattr(design, "top", None) else ""
    from ..findings.scope import summary_text
    return (head + (", " + ", ".join(extra) if extra else "") + where + top
            + coverage_text(design) + summary_text(c.get("unlisted")))


def coverage_text(design) -> str:
    """"; 2 of 5 modules not analysed: a, b" when part of the design was left out."""
    left = getattr(design, "not_analysed", None) or []
    if not left:
        return ""
    total = max(len(getattr(design, "modules", None) or []), len(left))
    names = [r["module"] for r in left]
    shown = ", ".join(names[:5]) + (f" and {len(names) - 5} more" if len(names) > 5 else "")
    return f"; {len(left)} of {total} module{'' if total == 1 else 's'} not analysed: {shown}"


# the timing diagrams' glyphs in ASCII, as hazlint.analysis.waves draws them with ascii_only
ASCII = str.maketrans({"\u203e": "-", "\u2191": "r", "\u2193": "f"})


def write(result: Any, stream, options: ReportOptions | None = None) -> None:
    o = options or ReportOptions()
    rel = getattr(result, "relpath", None) or (lambda p: p)
    for d in result.diagnostics:
        text = "\n".join(format_diagnostic(d, rel, o.color, o.evidence)) + "\n"
        stream.write(text.translate(ASCII) if o.ascii_only else text)
    stream.write(summary_line(result) + "\n")
    if o.caution:
        stream.write(CAUTION + "\n")


def render(result: Any, options: ReportOptions | None = None) -> str:
    import io
    buf = io.StringIO()
    write(result, buf, options)
    return buf.getvalue()
