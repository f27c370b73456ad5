"""SDF reader and back-annotation.

Outside references: the SDF example Debian's opensta package ships
(/usr/share/doc/opensta/examples/example1.sdf with example1.v); the SDF files the PyPI package
``sdf-timing`` ships as its test data, parsed by ``sdf-timing`` itself as a cross-check; Icarus
Verilog's ``$sdf_annotate`` (Debian ``iverilog``) for transition times.
"""
from __future__ import annotations

import glob
import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from hazlint.errors import ConfigError, ParseError
from hazlint.netlist.library import Delay
from hazlint.delays.sdf import annotate
from hazlint.delays.sdf_syntax import corner_bounds, delay_of, parse_sdf

ROOT = Path(__file__).resolve().parent.parent
OSTA = "/usr/share/doc/opensta/examples"
OSTA_SDF = f"{OSTA}/example1.sdf"


def sdf_text(body: str, header: str = '(DIVIDER /)\n (TIMESCALE 1ns)') -> str:
    return f'(DELAYFILE\n (SDFVERSION "3.0")\n (DESIGN "top")\n {header}\n{body}\n)\n'


# ------------------------------------------------------------------------------------------
# Reading


@pytest.mark.skipif(not os.path.exists(OSTA_SDF), reason="Debian opensta examples not installed")
def test_opensta_example_parses():
    s = parse_sdf(OSTA_SDF)
    # header values as written in the shipped file
    assert (s.version, s.design, s.divider, s.timescale) == ("OVI 2.1", "top", "/", 1e-9)
    assert [c.instance for c in s.cells] == [(), ("r1",), ("r2",), ("r3",), ("u1",), ("u2",)]
    assert {(p.instance, p.from_pin, p.to_pin) for p in s.iopaths} == {
        (("r1",), "CK", "Q"), (("r2",), "CK", "Q"), (("r3",), "CK", "Q"),
        (("u1",), "A", "Z"), (("u2",), "A1", "ZN"), (("u2",), "A2", "ZN")}
    ic = {(i.source, i.dest): i.values for i in s.interconnects}
    assert len(ic) == 10
    assert ic[(("in1",), ("r1", "D"))] == [(0.011, 0.011, 0.011), (0.01, 0.01, 0.01)]
    assert s.ignored == {"TIMINGCHECK": 3}
    # the comment line inside the file does not hide the INTERCONNECT after it
    assert min(i.line for i in s.interconnects) == 19


try:
    import sdf_timing
    SDF_TIMING_DATA = os.path.join(os.path.dirname(sdf_timing.__file__), "tests", "data")
except ImportError:      # optional: only this cross-check needs it
    SDF_TIMING_DATA = None

# sdf-timing runs in a fresh interpreter: its ply parser tables clash with pyverilog's once both
# are loaded in one process (seen here as spurious syntax errors)
_THEIRS = r"""
import json, sys
from sdf_timing import sdfparse
out = {}
for f in sys.argv[1:]:
    ref = sdfparse.parse(open(f).read())
    rows = []
    for insts in ref.get("cells", {}).values():
        for inst, ents in insts.items():
            for e in ents.values():
                if e["type"] not in ("iopath", "interconnect"):
                    continue
                dp = e["delay_paths"]
                vals = []
                for k in [k for k in ("fast", "nominal", "slow") if k in dp]:
                    t = [dp[k][m] for m in ("min", "avg", "max")]
                    vals.append(None if t == [None, None, None] else t)
                rows.append([e["type"], inst, e["from_pin"], e["to_pin"], vals])
    out[f] = {"rows": rows, "insts": [i for c in ref.get("cells", {}).values() for i in c if i]}
print(json.dumps(out))
"""


def _theirs(files):
    run = subprocess.run([sys.executable, "-c", _THEIRS, *files], check=True,
                         capture_output=True, text=True)
    data = json.loads(run.stdout)
    out = {}
    for f, d in data.items():
        rows = {(r[0], r[1], r[2], r[3], tuple(tuple(v) if v else None for v in r[4]))
                for r in d["rows"]}
        out[f] = (rows, d["insts"])
    return out


def _ours(s, ref_insts):
    out = set()
    for p in s.iopaths:
        out.add(("iopath", s.divider.join(p.instance) if p.instance else None, p.from_pin,
                 p.to_pin, tuple(p.values)))
    for _, p in s.wildcard_iopaths:
        out.add(("iopath", "*", p.from_pin, p.to_pin, tuple(p.values)))
    for i in s.interconnects:
        if i.kind != "INTERCONNECT":
            continue
        src, dst = s.divider.join(i.source), s.divider.join(i.dest)
        # sdf-timing keeps the ports relative to the CELL's INSTANCE; we prefix it
        for inst in ref_insts:
            if inst and src.startswith(inst + s.divider) and dst.startswith(inst + s.divider):
                src, dst = src[len(inst) + 1:], dst[len(inst) + 1:]
        out.add(("interconnect", None, src, dst, tuple(i.values)))
    return out


@pytest.mark.skipif(SDF_TIMING_DATA is None, reason="sdf-timing not installed")
def test_values_agree_with_sdf_timing_on_its_own_test_files():
    files = sorted(glob.glob(os.path.join(SDF_TIMING_DATA, "*.sdf")))
    assert len(files) >= 10
    compared = 0
    reference = _theirs(files)
    for f in files:
        rows, insts = reference[f]
        s = parse_sdf(f)
        theirs = {t if t[0] == "iopath" else ("interconnect", None, *t[2:]) for t in rows}
        ours = _ours(s, insts)
        if "escaped" in f:      # sdf-timing keeps backslashes; we drop them (IEEE 1497 escapes)
            theirs = {(t[0], t[1], t[2], t[3].replace("\\", ""), t[4]) for t in theirs}
        # sdf-timing keys entries by name, so repeated (conditional) IOPATHs of one pin pair
        # collapse to one there: every one of theirs is ours, and the distinct pin pairs agree
        assert theirs <= ours, (f, sorted(map(str, theirs - ours))[:3])
        assert {t[:4] for t in theirs} == {t[:4] for t in ours}, f
        compared += len(theirs)
    assert compared > 150


def test_triples_edges_conditions_and_wildcards():
    s = parse_sdf("t.sdf", sdf_text("""
 (CELL (CELLTYPE "AO") (INSTANCE a/b\\[2\\]/g1)
  (DELAY (ABSOLUTE
    (IOPATH (posedge CK) Q (1:2:3) (::4))
    (COND A==1'b1 (IOPATH B Y (0.5) ()))
    (CONDELSE (IOPATH B Y (0.7)))
    (IOPATH C Y (RETAIN (0.1)) (1 : 2 : 3) (4:5:6) (7:8:9))
  ))
  (DELAY (INCREMENT (IOPATH D Y (0.25))))
 )
 (CELL (CELLTYPE "INV") (INSTANCE *) (DELAY (ABSOLUTE (IOPATH A Y (2)))))
 (CELL (CELLTYPE "top") (INSTANCE) (DELAY (ABSOLUTE (PORT u1/A (0.3)) (NETDELAY n1 (1)))))
"""))
    by = {(p.from_pin, p.cond, p.values[0]): p for p in s.iopaths}
    ck = s.iopaths[0]
    assert ck.instance == ("a", "b[2]", "g1") and ck.from_edge == "posedge"
    assert ck.values == [(1.0, 2.0, 3.0), (None, None, 4.0)]
    assert [p.cond for p in s.iopaths if p.from_pin == "B"] == [True, True]
    assert s.iopaths[1].values == [(0.5, 0.5, 0.5), None]
    assert by[("C", False, (1.0, 2.0, 3.0))].values[1] == (4.0, 5.0, 6.0)
    assert s.iopaths[-1].increment and s.iopaths[-1].from_pin == "D"
    assert s.wildcard_iopaths[0][0] == "INV"
    assert s.interconnects[0].kind == "PORT" and s.interconnects[0].dest == ("u1", "A")
    assert s.ignored == {"NETDELAY": 1}


def test_corners():
    t = (1.0, 2.0, 3.0)
    assert corner_bounds(t, "min") == (1.0, 1.0)
    assert corner_bounds(t, "typ") == (2.0, 2.0)
    assert corner_bounds(t, "max") == (3.0, 3.0)
    assert corner_bounds(t, "minmax") == (1.0, 3.0)
    assert corner_bounds((None, None, 4.0), "min") == (4.0, 4.0)   # falls back to what is given
    assert delay_of([(1, 2, 3), (4, 5, 6)], "minmax") == Delay(1, 3, 4, 6)
    assert delay_of([(1, 2, 3)], "typ") == Delay(2, 2, 2, 2)        # one value: both transitions
    # "()" leaves that transition as it was; the scale converts units
    assert delay_of([None, (1, 1, 1)], "max", 1000.0, Delay(7, 8, 9, 10)) == Delay(7, 8, 1000,
                                                                                    1000)
    assert delay_of([None, None], "max") is None


BAD = [
    ("(DELAYFILE\n (CELL (CELLTYPE \"x\") (INSTANCE a)\n", 3, "never closed"),
    ("(DELAYFILE\n (DIVIDER :)\n)\n", 2, "DIVIDER"),
    ("(DELAYFILE\n (TIMESCALE 3ns)\n)\n", 2, "TIMESCALE"),
    ("(DELAYFILE\n (TIMESCALE 1 fortnight)\n)\n", 2, "TIMESCALE"),
    ("(DELAYFILE\n (CELL (INSTANCE a))\n)\n", 2, "CELLTYPE"),
    ("(DELAYFILE\n (CELL (CELLTYPE \"x\")\n  (INSTANCE a) (DELAY (ABSOLUTE\n"
     "   (IOPATH A Y (1:2)))))\n)\n", 4, "min:typ:max"),
    ("(DELAYFILE\n (CELL (CELLTYPE \"x\") (INSTANCE a) (DELAY (ABSOLUTE\n"
     "   (IOPATH A Y (fast)))))\n)\n", 3, "found '(fast"),
    ("(DELAYFILE\n (CELL (CELLTYPE \"x\") (INSTANCE a) (DELAY (ABSOLUTE\n"
     "   (IOPATH A Y (1:x:2)))))\n)\n", 3, "not a number"),
    ("(DELAYFILE\n (CELL (CELLTYPE \"x\") (INSTANCE a) (DELAY (ABSOLUTE\n"
     "   (IOPATH A (1)))))\n)\n", 3, "input port and an output port"),
    ("(DELAYFILE\n (CELL (CELLTYPE \"x\") (INSTANCE a) (DELAY (ABSOLUTE\n"
     "   (INTERCONNECT a/Y (1)))))\n)\n", 3, "2 port names"),
    ("(DELAYFILE\n /* open\n)\n", 2, "unterminated comment"),
    ("(DELAYFILE\n (DESIGN \"x)\n)\n", 2, "unterminated string"),
    ("(DELAYFILE)\n)\n", 2, "unbalanced"),
    ("(DELAYFILE)\n(DELAYFILE)\n", 2, "after the end"),
    ("(CELL)\n", 1, "DELAYFILE"),
]


@pytest.mark.parametrize("text,line,words", BAD, ids=[b[2] for b in BAD])
def test_malformed_files_name_file_and_line(text, line, words):
    with pytest.raises(ParseError) as ei:
        parse_sdf("bad.sdf", text)
    assert ei.value.path == "bad.sdf" and ei.value.line == line, str(ei.value)
    assert words in str(ei.value)
    assert str(ei.value).startswith(f"bad.sdf:{line}: error: SDF")


def test_missing_file(tmp_path):
    with pytest.raises(ParseError) as ei:
        parse_sdf(str(tmp_path / "none.sdf"))
    assert "cannot read SDF file" in str(ei.value)


# ------------------------------------------------------------------------------------------
# Back-annotation through load_design

FIX = ROOT / "fixtures" / "sdf"
PRESS_LIB = str(ROOT / "fixtures" / "liberty" / "press_cells.lib")


def _press_design():
    from hazlint.loader import load_design
    from hazlint.delays.liberty import read_liberty
    lib = read_liberty(PRESS_LIB)
    return load_design(str(FIX / "press_valve.v"), library=lib), lib


@pytest.mark.skipif(not os.path.exists(OSTA_SDF), reason="Debian opensta examples not installed")
def test_opensta_example_annotates_every_instance():
    from hazlint.config import load_config
    from hazlint.loader import load_design
    cfg = load_config(path=str(FIX / "opensta_example1_cells.toml"))
    lib = cfg.library()
    design = load_design(f"{OSTA}/example1.v", library=lib)
    rep = annotate(design, OSTA_SDF, corner="minmax", library=lib)
    assert rep.complete, rep.lines()
    # every CELL of the shipped SDF names an instance of example1.v
    assert rep.annotated_instances == ["r1", "r2", "r3", "u1", "u2"]
    assert rep.instances_without_iopath == []
    assert (rep.iopaths_applied, rep.interconnects_applied) == (6, 10)
    g = design.graph
    u2 = next(n for n, d in g.nodes(data=True) if d.get("instance") == "top.u2")
    # (IOPATH A1 ZN (1:1:1) (1.1:1.1:1.1)) as written in the file: rise 1, fall 1.1
    assert g.nodes[u2]["pins"] == ["A1", "A2"]
    assert g.nodes[u2]["delays"] == [Delay(1.0, 1.0, 1.1, 1.1)] * 2
    # (INTERCONNECT in1 r1/D (0.011:0.011:0.011) (0.01:0.01:0.01))
    r1 = next(r for r in design.registers if r.instance == "top.r1")
    d_sink = r1.pins["data"]
    assert g.edges[design.input_node["in1"], d_sink]["wire"] == Delay(0.011, 0.011, 0.01, 0.01)
    # (IOPATH CK Q (1:1:1) (1.1:1.1:1.1)) lands on the state node
    assert g.nodes[r1.outputs["Q"]]["arc_delays"] == {"CK": Delay(1.0, 1.0, 1.1, 1.1)}


def test_report_lists_what_does_not_fit():
    design, lib = _press_design()
    text = sdf_text("""
 (CELL (CELLTYPE "BUFX1") (INSTANCE u_gone) (DELAY (ABSOLUTE (IOPATH A Y (1)))))
 (CELL (CELLTYPE "INVX1") (INSTANCE u_hands) (DELAY (ABSOLUTE (IOPATH A Y (1)))))
 (CELL (CELLTYPE "NAND2X1") (INSTANCE u_n1) (DELAY (ABSOLUTE (IOPATH C Y (1)))))
 (CELL (CELLTYPE "press_valve") (INSTANCE) (DELAY (ABSOLUTE
   (INTERCONNECT u_inv/Y u_n1/B (1))
   (INTERCONNECT guard_closed u_nope/A (1)))))
""").replace('"top"', '"press_valve"')
    rep = annotate(design, "inline.sdf", text=text, library=lib)
    assert not rep.complete
    assert [m[0] for m in rep.missing_instances] == ["u_gone"]
    assert rep.celltype_mismatches == [("u_hands", "INVX1", "AND2X1", 8)]
    assert [(a[0], a[2], a[3]) for a in rep.arcs_missing] == [("u_n1", "C", "Y")]
    assert [u[1] for u in rep.unmatched_interconnects] == ["u_n1/B", "u_nope/A"]
    assert "guard_closed" in rep.unmatched_interconnects[0][3]   # what really drives u_n1/B
    assert ("u_out", "NAND2X1") in rep.instances_without_iopath
    assert any("u_gone" in line for line in rep.lines())


def test_corner_and_timescale_conversion():
    design, lib = _press_design()
    assert design.timescale[0] == pytest.approx(1e-9)
    # the fixture rewritten in units of 100 ps (every number times ten)
    text = (FIX / "press_valve.sdf").read_text().replace("(TIMESCALE 1ns)", "(TIMESCALE 100 ps)")
    text = re.sub(r"\(([\d.:]+)\)", lambda m: "(" + ":".join(
        f"{float(x) * 10:g}" for x in m.group(1).split(":")) + ")", text)
    assert "(IOPATH A Y (15:20:25) (12:14:16))" in text
    rep = annotate(design, "press_valve_100ps.sdf", corner="minmax", library=lib, text=text)
    assert rep.complete and rep.scale == pytest.approx(0.1)     # 100 ps units -> 1 ns
    g = design.graph
    inv = next(n for n, d in g.nodes(data=True) if d.get("instance") == "press_valve.u_inv")
    # (IOPATH A Y (15:20:25) (12:14:16)) in 100 ps: rise 1.5..2.5 ns, fall 1.2..1.6 ns
    got = g.nodes[inv]["delays"][0]
    assert (got.rise_min, got.rise_max, got.fall_min, got.fall_max) == pytest.approx(
        (1.5, 2.5, 1.2, 1.6))
    n2 = next(n for n, d in g.nodes(data=True) if d.get("instance") == "press_valve.u_n2")
    w = g.edges[inv, n2]["wire"]
    assert (w.rise_min, w.rise_max, w.fall_min, w.fall_max) == pytest.approx((0.3, 0.5, 0.3, 0.5))
    with pytest.raises(ConfigError):
        annotate(design, str(FIX / "press_valve.sdf"), corner="fast")


def _iverilog_netlist(corner: str, tmp: Path) -> Path:
    """The fixture netlist for Icarus Verilog: iverilog 11 ignores INTERCONNECT in SDF
    ("SDF WARNING: INTERCONNECT not supported"), so each interconnect delay of the SDF is written
    into the netlist as a delayed assign in front of the pin it feeds."""
    from hazlint.delays.sdf_syntax import delay_of as dly
    sdf = parse_sdf(str(FIX / "press_valve.sdf"))
    text = (FIX / "press_valve.v").read_text()
    extra = []
    for k, ic in enumerate(sdf.interconnects):
        inst, pin = ic.dest
        # Icarus 11 reads TIMESCALE but does not scale by it (checked by hand: 100ps and 1ns
        # gave the same times), so the fixture is written in 1 ns units
        d = dly(ic.values, corner, sdf.timescale / 1e-9)
        assert d.rise_max == d.fall_max       # the timed simulator's wires take one value
        m = re.search(rf"(\b{inst}\s*\(.*?\.{pin}\()(\w+)(\))", text)
        net = m.group(2)
        text = text[:m.start(2)] + f"{net}__w{k}" + text[m.end(2):]
        extra.append(f"  wire {net}__w{k};\n  assign #({d.rise_max:g}) {net}__w{k} = {net};")
    text = text.replace("endmodule", "\n".join(extra) + "\nendmodule")
    out = tmp / "press_valve_iv.v"
    out.write_text(text)
    return out


STIMULUS = [  # (input, value) every 10 ns from t = 20: hands on, maintenance, guard toggles
    ("two_hand_left", 1), ("two_hand_right", 1), ("maint_key", 1), ("guard_closed", 1),
    ("guard_closed", 0), ("maint_key", 0), ("guard_closed", 1), ("two_hand_right", 0),
    ("guard_closed", 0), ("maint_key", 1), ("two_hand_left", 0), ("two_hand_right", 1),
    ("guard_closed", 1), ("two_hand_left", 1), ("guard_closed", 0),
]
WATCH = ["hands", "guard_n", "n1", "n2", "valve_enable", "mismatch", "alarm_n"]


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("iverilog") is None, reason="iverilog not installed")
@pytest.mark.parametrize("corner", ["min", "max"])
def test_transition_times_equal_icarus_sdf_annotate(corner, tmp_path):
    from hazlint.analysis.timedsim import DelayAssignment, simulate
    from hazlint.delays.liberty import verilog_models
    design, lib = _press_design()
    rep = annotate(design, str(FIX / "press_valve.sdf"), corner=corner, library=lib)
    assert rep.complete and len(rep.annotated_instances) == 7
    # Icarus: cell models with specify paths from the Liberty functions, the SDF applied by
    # $sdf_annotate, the corner chosen with -Tmin / -Tmax
    (tmp_path / "cells.v").write_text("`timescale 1ns/1ps\n" + verilog_models(
        lib, specify=True, cells=["AND2X1", "INVX1", "NAND2X1", "XOR2X1", "AOI21X1"]))
    net = _iverilog_netlist(corner, tmp_path)
    ins = ["guard_closed", "two_hand_left", "two_hand_right", "maint_key"]
    tb = ["`timescale 1ns/1ps", "module tb;"]
    tb += [f"  reg {i} = 0;" for i in ins]
    tb.append("  wire valve_enable, alarm_n;")
    tb.append("  press_valve dut(" + ", ".join(f".{p}({p})" for p in ins + ["valve_enable",
                                                                           "alarm_n"]) + ");")
    for w in WATCH:
        tb.append(f'  always @(dut.{w}) $display("%0.3f {w} %b", $realtime, dut.{w});')
    tb.append("  initial begin")
    tb.append(f'    $sdf_annotate("{FIX / "press_valve.sdf"}", dut);')
    tb.append("    #20;")
    for name, v in STIMULUS:
        tb.append(f"    {name} = {v}; #10;")
    tb.append("    $finish;\n  end\nendmodule")
    (tmp_path / "tb.v").write_text("\n".join(tb) + "\n")
    subprocess.run(["iverilog", "-gspecify", f"-T{corner}", "-o", str(tmp_path / "sim"),
                    str(tmp_path / "tb.v"), str(net), str(tmp_path / "cells.v")],
                   check=True, capture_output=True, text=True)
    run = subprocess.run(["vvp", "-n", str(tmp_path / "sim")], check=True, capture_output=True,
                         text=True)
    theirs = []
    for line in run.stdout.splitlines():
        m = re.fullmatch(r"(\d+\.\d+) (\w+) ([01xz])", line.strip())
        if m and float(m.group(1)) >= 20.0:
            theirs.append((round(float(m.group(1)), 3), m.group(2), int(m.group(3))))
    # hazlint's timed simulator on the annotated gate graph, the same stimulus
    events = [(20.0 + 10.0 * k, design.input_node[name], v)
              for k, (name, v) in enumerate(STIMULUS)]
    nodes = {design.net_node(w): w for w in WATCH}
    trace = simulate(design.graph, {design.input_node[i]: 0 for i in ins}, events,
                     assignment=DelayAssignment(corner=corner, mode="inertial"), watch=nodes)
    ours = sorted((round(t, 3), nodes[n], v) for n in nodes for t, v in trace.changes(n, 20.0))
    theirs.sort()
    assert len(theirs) > 20
    # the static-1 hazard on valve_enable shows in both: it falls and rises while
    # guard_closed changes with hands and maint_key at 1
    assert sum(1 for _, w, v in theirs if w == "valve_enable") >= 4
    assert ours == theirs


def test_multi_output_three_state_and_register_cells():
    from hazlint.loader import load_design
    from hazlint.delays.liberty import read_liberty
    lib = read_liberty(PRESS_LIB)
    design = load_design(str(FIX / "press_fault.v"), library=lib)
    text = sdf_text("""
 (CELL (CELLTYPE "HAX1") (INSTANCE u_ha) (DELAY (ABSOLUTE
   (IOPATH A S (1:2:3) (4:5:6)) (IOPATH B S (1.5) (2.5))
   (IOPATH A CO (7:8:9) (10:11:12)))))
 (CELL (CELLTYPE "TBUFX1") (INSTANCE u_tb) (DELAY (ABSOLUTE
   (IOPATH A Y (0.7) (0.8)) (IOPATH OE Y (0.9) (1.0)))))
 (CELL (CELLTYPE "DFFRX1") (INSTANCE u_ff) (DELAY (ABSOLUTE
   (IOPATH (posedge CK) Q (2:2:2) (3:3:3)) (IOPATH (posedge CK) QN (4) (5))
   (IOPATH RN Q () (6)))))
 (CELL (CELLTYPE "press_fault") (INSTANCE) (DELAY (ABSOLUTE
   (INTERCONNECT estop_n u_ff/RN (0.25))
   (INTERCONNECT u_ha/S u_ff/D (0.125))
   (INTERCONNECT u_ha/CO u_ff/D (0.5)))))
""").replace('"top"', '"press_fault"')
    rep = annotate(design, "fault.sdf", text=text, corner="minmax", library=lib)
    g = design.graph
    nodes = {n: d for n, d in g.nodes(data=True) if d.get("instance") == "press_fault.u_ha"}
    s_node = design.net_node("differ")
    co_node = design.net_node("both")
    assert set(nodes) == {s_node, co_node}
    # each output got its own IOPATHs (told apart by function: S is XOR, CO is AND)
    assert g.nodes[s_node]["delays"] == [Delay(1, 3, 4, 6), Delay(1.5, 1.5, 2.5, 2.5)]
    assert g.nodes[co_node]["delays"][0] == Delay(7, 9, 10, 12)
    assert g.nodes[co_node]["delays"][1] == lib.cells["HAX1"].arcs[("B", "CO")]   # not in SDF
    # three-state cell: the data path and the enable path
    tb = {n: d for n, d in g.nodes(data=True) if d.get("instance") == "press_fault.u_tb"}
    by_pins = {tuple(d["pins"]): d for d in tb.values()}
    assert by_pins[("A",)]["delays"] == [Delay(0.7, 0.7, 0.8, 0.8)]
    assert by_pins[("OE",)]["delays"] == [Delay(0.9, 0.9, 1.0, 1.0)]
    # register: clock-to-output arcs on the state nodes; "()" rise keeps nothing to keep
    ff = next(r for r in design.registers if r.instance == "press_fault.u_ff")
    q, qn = ff.outputs["Q"], ff.outputs["QN"]
    assert g.nodes[q]["arc_delays"]["CK"] == Delay(2, 2, 3, 3)
    assert g.nodes[qn]["arc_delays"]["CK"] == Delay(4, 4, 5, 5)
    assert g.nodes[q]["arc_delays"]["RN"] == Delay(0, 0, 6, 6)
    # interconnects onto the register's reset and data pins
    assert g.edges[design.input_node["estop_n"], ff.pins["reset"]]["wire"] == Delay.fixed(0.25)
    assert g.edges[s_node, ff.pins["data"]]["wire"] == Delay.fixed(0.125)
    # the SDF claims CO drives D; the design says S does
    assert [(u[0], u[1]) for u in rep.unmatched_interconnects] == [("u_ha/CO", "u_ff/D")]
    assert not rep.arcs_missing and not rep.missing_instances
    # without the library argument the register's pins are found through the sinks' `pin`
    # attribute that the flattener records: the same annotation results
    design2 = load_design(str(FIX / "press_fault.v"), library=lib)
    rep2 = annotate(design2, "fault.sdf", text=text, corner="minmax")
    assert [(u[0], u[1]) for u in rep2.unmatched_interconnects] == [("u_ha/CO", "u_ff/D")]
    ff2 = next(r for r in design2.registers if r.instance == "press_fault.u_ff")
    assert design2.graph.edges[design2.input_node["estop_n"], ff2.pins["reset"]]["wire"] == \
        Delay.fixed(0.25)


def test_configured_liberty_and_sdf_through_the_command_line(tmp_path):
    import sys as _sys
    (tmp_path / "hazlint.toml").write_text(
        f'liberty = ["{PRESS_LIB}"]\nsdf = "{FIX / "press_valve.sdf"}"\n')
    run = subprocess.run([_sys.executable, "-m", "hazlint.cli", "summary",
                          str(FIX / "press_valve.v")], cwd=tmp_path, capture_output=True,
                         text=True)
    assert run.returncode == 0, run.stderr
    assert "NAND2X1     3" in run.stdout
    run = subprocess.run([_sys.executable, "-m", "hazlint.cli", "check",
                          str(FIX / "press_valve.v")], cwd=tmp_path, capture_output=True,
                         text=True)
    assert run.returncode in (0, 1) and "Traceback" not in run.stderr, run.stderr
    # a broken SDF: exit code 2 and one file:line message
    bad = tmp_path / "bad.sdf"
    bad.write_text("(DELAYFILE\n (CELL (CELLTYPE \"INVX1\") (INSTANCE u_inv)\n  (DELAY "
                   "(ABSOLUTE (IOPATH A Y (1:2))))))\n")
    (tmp_path / "hazlint.toml").write_text(f'liberty = ["{PRESS_LIB}"]\nsdf = "{bad}"\n')
    run = subprocess.run([_sys.executable, "-m", "hazlint.cli", "check",
                          str(FIX / "press_valve.v")], cwd=tmp_path, capture_output=True,
                         text=True)
    assert run.returncode == 2 and "Traceback" not in run.stderr
    assert f"{bad}:3: error: SDF" in run.stderr
