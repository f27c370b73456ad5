"""Waveform output: VCD (read back with pyvcd's reader), terminal timing diagram, SVG."""
from __future__ import annotations

import io
import xml.etree.ElementTree as ET

from hazlint.analysis.circuits import build_graph
from hazlint.analysis.timedsim import replay
from hazlint.analysis.waves import svg, timing_diagram, vcd_text


def _trace():
    g = build_graph(["A", "B", "C"], [("nb", "not", ["B"], 2), ("t1", "and", ["A", "nb"], 1),
                                      ("t2", "and", ["B", "C"], 1), ("F", "or", ["t1", "t2"], 1)],
                    ["F"])
    gl, tr = replay(g, "<sink>F", {"A": 1, "B": 1, "C": 1}, {"A": 1, "B": 0, "C": 1}, settle=10)
    return gl, tr, ["B", "nb", "t1", "t2", "F"]


def test_vcd_reads_back_with_the_same_changes():
    from vcd.reader import TokenKind, tokenize
    gl, tr, nets = _trace()
    text = vcd_text(tr, nets, {n: n for n in nets})
    ids, changes, now = {}, [], 0
    for tok in tokenize(io.BytesIO(text.encode())):
        if tok.kind is TokenKind.VAR:
            ids[tok.var.id_code] = tok.var.reference
        elif tok.kind is TokenKind.CHANGE_TIME:
            now = tok.time_change
        elif tok.kind is TokenKind.CHANGE_SCALAR and now > 0:
            changes.append((now, ids[tok.scalar_change.id_code], int(tok.scalar_change.value)))
    want = sorted((t, n, v) for n in nets for t, v in tr.waves[n][1:])
    assert sorted(changes) == want
    # the static-1 pulse on F: down at 12, up at 14 (B falls at 10, nb is 2 slower)
    assert [(t, v) for t, n, v in changes if n == "F"] == [(12, 0), (14, 1)]


def test_terminal_diagram_rows_and_marks():
    gl, tr, nets = _trace()
    lines = timing_diagram(tr, nets, {n: n for n in nets}, ascii_only=True)
    assert len(lines) == len(nets) + 1
    f_row = lines[nets.index("F")]
    assert "\\" in f_row and "/" in f_row and "12f" in f_row and "14r" in f_row
    assert all(ch in "_-/\\| " for ch in lines[0].split(" ", 1)[1].split("  ")[0].strip())


def test_svg_is_well_formed_with_one_trace_per_net():
    gl, tr, nets = _trace()
    text = svg(tr, nets, {n: n for n in nets}, title="static-1 hazard", highlight=(12, 14))
    root = ET.fromstring(text)
    ns = "{http://www.w3.org/2000/svg}"
    assert len(root.findall(f"{ns}polyline")) == len(nets)
    labels = [t.text for t in root.findall(f"{ns}text")]
    assert "static-1 hazard" in labels and "F" in labels


def test_svg_stacks_one_panel_per_witness_with_titles_that_fit():
    from hazlint.analysis.waves import Panel, svg_panels, text_width, TITLE_SIZE
    from hazlint.findings.words import TimeUnit
    gl, tr, nets = _trace()
    names = {n: n for n in nets}
    long = ("static-1 hazard at u_press.u_fault.fault_q.reset: maint_key falls with "
            + ", ".join(f"guard_closed_{k}=1" for k in range(30)))
    panels = [Panel(tr, nets, names, long, (12, 14)), Panel(tr, nets[:2], names, "second")]
    text = svg_panels(panels, TimeUnit(1e-9))
    assert text == svg_panels(panels, TimeUnit(1e-9))          # same bytes twice
    root = ET.fromstring(text)                                  # valid XML
    ns = "{http://www.w3.org/2000/svg}"
    width = float(root.get("width"))
    assert len(root.findall(f"{ns}polyline")) == len(nets) + 2  # every witness drawn
    titles = [t for t in root.findall(f"{ns}text") if t.get("font-weight") == "bold"]
    assert len(titles) > 2                                      # the long title wrapped
    for t in titles:                                            # and every line fits
        assert float(t.get("x")) + text_width(t.text, TITLE_SIZE) <= width
    assert " ".join(t.text for t in titles[:-1]) == long and titles[-1].text == "second"
    # the second panel starts below the first one's rows and axis
    lowest = max(float(p.split(",")[1]) for pl in root.findall(f"{ns}polyline")[:len(nets)]
                 for p in pl.get("points").split())
    assert float(titles[-1].get("y")) > lowest
    assert [t.text for t in root.findall(f"{ns}text")].count("time (ns)") == 2
    assert float(root.get("height")) > lowest


def test_svg_time_axis_carries_the_unit():
    gl, tr, nets = _trace()
    from hazlint.findings.words import TimeUnit
    for unit, label in ((TimeUnit(None, "unit"), "time (unit delays)"),
                        (TimeUnit(1e-10), "time (ps)")):
        root = ET.fromstring(svg(tr, nets, {n: n for n in nets}, unit=unit))
        texts = [t.text for t in root.findall("{http://www.w3.org/2000/svg}text")]
        assert label in texts
    # 100 ps units: the tick at 10 units reads 1000 (ps)
    root = ET.fromstring(svg(tr, nets, {n: n for n in nets}, unit=TimeUnit(1e-10)))
    assert "1000" in [t.text for t in root.findall("{http://www.w3.org/2000/svg}text")]
