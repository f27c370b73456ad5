"""Waveforms of a witness: VCD (IEEE 1364 value change dump, written with ``pyvcd``), a terminal
timing diagram, and an SVG image of the same rows for reports and pull-request comments."""
from __future__ import annotations

import io
import re
from dataclasses import dataclass
from typing import Sequence
from xml.sax.saxutils import escape

from ..findings.words import UNIT_DELAYS, TimeUnit
from .timedsim import Trace


def _row_label(names: dict[str, str], n: str) -> str:
    return names.get(n, n)


def vcd_timescale(unit: TimeUnit) -> str:
    """The VCD ``$timescale`` of times in ``unit``: the design's (``"100 ps"``); ``"1 ns"``
    standing in for a unit delay or an unnamed time unit (the file's comment says so)."""
    if unit.seconds is None:
        return "1 ns"
    f = unit.field
    return f"{f[:-2]} {f[-2:]}" if f[-2:] in ("ms", "us", "ns", "ps", "fs") else f"{f[:-1]} s"


def write_vcd(trace: Trace, nodes: Sequence[str], names: dict[str, str], out,
              timescale: str | None = None, scope: str = "hazlint",
              unit: TimeUnit = UNIT_DELAYS) -> None:
    """Write the waveforms of ``nodes`` as VCD to the text stream ``out``, times in ``unit``
    (the ``$timescale`` is that unit unless ``timescale`` is given). Times are scaled to
    integers (VCD times are integral): a trace with fractional times is written in tenths."""
    from vcd import VCDWriter
    timescale = timescale or vcd_timescale(unit)
    comment = "hazlint witness" + ("" if unit.seconds is not None else
                                   f"; times in {unit.label}, written as {timescale} each")
    times = [t for n in nodes for t, _ in trace.waves[n]]
    scale = 1
    while scale < 1000 and any(abs(t * scale - round(t * scale)) > 1e-9 for t in times):
        scale *= 10
    ts = timescale if scale == 1 else _scale_timescale(timescale, scale)
    with VCDWriter(out, timescale=ts, date="", comment=comment, version="hazlint") as w:
        used: set[str] = set()
        vars_ = {}
        for n in nodes:
            ident = re.sub(r"[^A-Za-z0-9_]", "_", _row_label(names, n)) or "net"
            base, k = ident, 1
            while ident in used:
                k += 1
                ident = f"{base}_{k}"
            used.add(ident)
            vars_[n] = w.register_var(scope, ident, "wire", size=1, init=trace.waves[n][0][1])
        events = sorted((round(t * scale), k, n, v) for k, n in enumerate(nodes)
                        for t, v in trace.waves[n][1:])
        for t, _, n, v in events:
            w.change(vars_[n], t, v)


def _scale_timescale(ts: str, scale: int) -> str:
    m = re.match(r"\s*(\d+)\s*(\w+)", ts)
    units = ["s", "ms", "us", "ns", "ps", "fs"]
    num, unit = int(m.group(1)), m.group(2)
    i = units.index(unit)
    while scale >= 1000 and i + 1 < len(units):
        scale //= 1000
        i += 1
    # 1 ns / 10 -> 100 ps
    value = num * 1000 // scale if i + 1 < len(units) else num
    return f"{value} {units[i + 1]}" if scale > 1 else f"{num} {units[i]}"


def vcd_text(trace: Trace, nodes: Sequence[str], names: dict[str, str], **kw) -> str:
    buf = io.StringIO()
    write_vcd(trace, nodes, names, buf, **kw)
    return buf.getvalue()


def _nice_step(span: float, n: int) -> float:
    raw = span / max(1, n)
    mag = 10 ** len(str(int(max(raw, 1)))) / 10
    for m in (1, 2, 5, 10):
        if raw <= m * mag:
            return max(m * mag, 1e-9)
    return 10 * mag


def _window(trace: Trace, nodes: Sequence[str], t0: float | None, t1: float | None):
    ch = [t for n in nodes for t, _ in trace.waves[n][1:]]
    lo = t0 if t0 is not None else (min(ch) if ch else 0.0)
    hi = t1 if t1 is not None else (max(ch) if ch else lo + 1)
    span = max(hi - lo, 1.0)
    step = _nice_step(span, 4)
    lo = (int((lo - 0.2 * span) // step)) * step
    hi = (int((hi + 0.3 * span) // step) + 1) * step
    return float(lo), float(hi)


def timing_diagram(trace: Trace, nodes: Sequence[str], names: dict[str, str],
                   t0: float | None = None, t1: float | None = None, width: int = 56,
                   ascii_only: bool = False, unit: TimeUnit = UNIT_DELAYS) -> list[str]:
    """A terminal timing diagram: one row per net, a time axis under it. High is ``‾`` (``-``
    with ``ascii_only``), low ``_``, a change ``/`` or ``\\`` (``|`` for a pulse narrower than
    a column); the times of the changes follow each row (``↑``/``↓``, or ``r``/``f``). Times
    are numbers in ``unit``, named after the axis."""
    lo, hi = _window(trace, nodes, t0, t1)
    hi_ch, lo_ch = ("-", "_") if ascii_only else ("\u203e", "_")
    step = (hi - lo) / width
    label_w = min(28, max((len(_row_label(names, n)) for n in nodes), default=4))
    lines = []
    for n in nodes:
        row = []
        wave = trace.waves[n]
        for c in range(width):
            a, b = lo + c * step, lo + (c + 1) * step
            inside = [t for t, _ in wave[1:] if a <= t < b]
            before = trace.value_at(n, a - 1e-9) if a > wave[0][0] else wave[0][1]
            after = trace.value_at(n, b - 1e-9)
            if not inside:
                row.append(hi_ch if after else lo_ch)
            elif before == after:
                row.append("|")
            else:
                row.append("/" if after else "\\")
        up, down = ("r", "f") if ascii_only else ("\u2191", "\u2193")
        times = ", ".join(f"{unit.number(t)}{up if v else down}" for t, v in wave[1:]
                          if lo <= t <= hi)
        label = _row_label(names, n)[:label_w].ljust(label_w)
        lines.append(f"{label} {''.join(row)}  {times}".rstrip())
    axis = [" "] * (width + 8)
    tick = _nice_step(hi - lo, 4)
    t = lo
    while t <= hi + 1e-9:
        c = int(round((t - lo) / step))
        txt = unit.number(round(t, 3))
        if c + len(txt) <= len(axis) and all(x == " " for x in axis[max(0, c - 1):c + len(txt)]):
            axis[c:c + len(txt)] = list(txt)
        t += tick
    lines.append(" " * label_w + " " + "".join(axis).rstrip() + "  " + unit.label)
    return lines


# Text width in SVG: a fixed advance per character of the monospace font (DejaVu Sans Mono
# advances 0.6 em per glyph, from memory; 0.62 leaves a margin for a substitute font)
CHAR_EM = 0.62
TITLE_SIZE = 14
LABEL_SIZE = 12
MAX_LABEL = 28


def text_width(text: str, size: float) -> float:
    """Estimated width in pixels of ``text`` at font size ``size``."""
    return len(text) * CHAR_EM * size


def _title_lines(title: str, width: int) -> list[str]:
    """``title`` wrapped to lines that fit ``width`` pixels with a 10 px margin each side; a
    word longer than a line is cut."""
    import textwrap
    per_line = max(8, int((width - 20) / (CHAR_EM * TITLE_SIZE)))
    return textwrap.wrap(title, per_line, break_long_words=True, break_on_hyphens=False) \
        if title else []


def _label(text: str) -> str:
    return text if len(text) <= MAX_LABEL else text[:MAX_LABEL - 3] + "..."


@dataclass
class Panel:
    """One witness to draw: its trace, the nets (rows) and their names, a title and the time
    interval to shade (the glitch)."""

    trace: Trace
    nodes: Sequence[str]
    names: dict[str, str]
    title: str = ""
    highlight: tuple[float, float] | None = None
    t0: float | None = None
    t1: float | None = None


def _panel(p: Panel, y0: float, width: int, row_h: int, unit: TimeUnit) -> tuple[list[str], float]:
    """The SVG elements of one panel from ``y0`` down, and its height."""
    lo, hi = _window(p.trace, p.nodes, p.t0, p.t1)
    label_w = 12 + int(CHAR_EM * LABEL_SIZE * min(MAX_LABEL, max(
        (len(_row_label(p.names, n)) for n in p.nodes), default=4)))
    plot_w = width - label_w - 20
    titles = _title_lines(p.title, width)
    top = y0 + (18 * len(titles) + 16 if titles else 12)

    def x(t):
        return label_w + (min(max(t, lo), hi) - lo) / (hi - lo) * plot_w

    parts = []
    for k, line in enumerate(titles):
        parts.append(f'<text x="10" y="{y0 + 20 + 18 * k:.0f}" font-size="{TITLE_SIZE}" '
                     f'font-weight="bold">{escape(line)}</text>')
    if p.highlight:
        a, b = p.highlight
        parts.append(f'<rect x="{x(a):.1f}" y="{top - 4:.0f}" '
                     f'width="{max(2.0, x(b) - x(a)):.1f}" '
                     f'height="{row_h * len(p.nodes) + 4}" fill="#ffd6d6"/>')
    for i, n in enumerate(p.nodes):
        y_hi = top + i * row_h + 6
        y_lo = y_hi + row_h - 14
        parts.append(f'<text x="8" y="{(y_hi + y_lo) / 2 + 4:.1f}">'
                     f'{escape(_label(_row_label(p.names, n)))}</text>')
        pts = []
        v = p.trace.waves[n][0][1]
        pts.append((x(lo), y_hi if v else y_lo))
        for t, nv in p.trace.waves[n][1:]:
            if t < lo or t > hi:
                v = nv
                continue
            pts.append((x(t), y_hi if v else y_lo))
            pts.append((x(t), y_hi if nv else y_lo))
            v = nv
        pts.append((x(hi), y_hi if v else y_lo))
        path = " ".join(f"{px:.1f},{py:.1f}" for px, py in pts)
        parts.append(f'<polyline points="{path}" fill="none" stroke="#1f4e9c" stroke-width="2"/>')
        parts.append(f'<line x1="{label_w}" y1="{y_lo + 4:.0f}" x2="{label_w + plot_w}" '
                     f'y2="{y_lo + 4:.0f}" stroke="#dddddd"/>')
    ay = top + row_h * len(p.nodes) + 8
    parts.append(f'<line x1="{label_w}" y1="{ay:.0f}" x2="{label_w + plot_w}" y2="{ay:.0f}" '
                 f'stroke="#444444"/>')
    tick = _nice_step(hi - lo, 6)
    first = -(-lo // tick) * tick
    for k in range(int((hi - first) // tick) + 1):
        t = first + k * tick
        parts.append(f'<line x1="{x(t):.1f}" y1="{ay:.0f}" x2="{x(t):.1f}" y2="{ay + 5:.0f}" '
                     f'stroke="#444444"/>')
        parts.append(f'<text x="{x(t):.1f}" y="{ay + 18:.0f}" text-anchor="middle">'
                     f'{escape(unit.number(round(t, 1)))}</text>')
    parts.append(f'<text x="{label_w + plot_w}" y="{ay + 34:.0f}" text-anchor="end">'
                 f'time ({escape(unit.label)})</text>')
    return parts, ay + 44 - y0


def svg_panels(panels: Sequence[Panel], unit: TimeUnit = UNIT_DELAYS, row_h: int = 34,
               width: int = 720) -> str:
    """Every witness of ``panels`` as one SVG image, one panel under the other, each with its
    title (wrapped to the image's width), its rows and a time axis in ``unit``."""
    body: list[str] = []
    y = 0.0
    for k, p in enumerate(panels):
        if k:
            body.append(f'<line x1="0" y1="{y:.0f}" x2="{width}" y2="{y:.0f}" '
                        f'stroke="#bbbbbb"/>')
        parts, h = _panel(p, y, width, row_h, unit)
        body += parts
        y += h
    height = int(round(y))
    return "\n".join([f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" '
                      f'height="{height}" viewBox="0 0 {width} {height}" '
                      f'font-family="DejaVu Sans Mono, monospace" font-size="{LABEL_SIZE}">',
                      f'<rect width="{width}" height="{height}" fill="#ffffff"/>',
                      *body, "</svg>"]) + "\n"


def svg(trace: Trace, nodes: Sequence[str], names: dict[str, str], t0: float | None = None,
        t1: float | None = None, title: str = "", highlight: tuple[float, float] | None = None,
        row_h: int = 34, width: int = 720, unit: TimeUnit = UNIT_DELAYS) -> str:
    """One witness as an SVG image (:func:`svg_panels` with one panel)."""
    return svg_panels([Panel(trace, nodes, names, title, highlight, t0, t1)], unit, row_h,
                      width)
