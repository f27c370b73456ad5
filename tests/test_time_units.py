"""Times in the design's unit: words, JSON/SARIF evidence, waveforms and VCD agree with the
delays the design was given.

Outside references: Icarus Verilog (Debian ``iverilog``) simulates the fixtures with their
``timescale`` and ``#`` delays; its VCD (read with pyvcd's reader) says when the asynchronous
clear glitches, in seconds. IEEE 1364-2005 19.8: a ``timescale`` unit is 1, 10 or 100 of s, ms,
us, ns, ps, fs, and a delay is in the unit of the module it is written in (the per-module case
below). Liberty reference manual, library-level ``time_unit`` attribute ("1ps", "10ps",
"100ps", "1ns"; common practice values "1ns" and "1ps"). IEEE 1497 (SDF) ``TIMESCALE``.
"""
from __future__ import annotations

import io
import json
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from hazlint.findings.words import TimeUnit, count, number
from hazlint.loader import load_design

ROOT = Path(__file__).resolve().parent.parent
UNITS = ROOT / "fixtures" / "units"
LIB = ROOT / "fixtures" / "liberty" / "press_cells.lib"
VALVE = ROOT / "fixtures" / "sdf" / "press_valve.v"
needs_iverilog = pytest.mark.skipif(shutil.which("iverilog") is None, reason="needs iverilog")

_SI = {"s": 1.0, "ms": 1e-3, "us": 1e-6, "ns": 1e-9, "ps": 1e-12, "fs": 1e-15}


def read_vcd(text: str) -> tuple[float, dict[str, list[tuple[float, int]]]]:
    """(seconds per VCD tick, net reference -> [(time in seconds, value)]) by pyvcd's reader."""
    from vcd.reader import TokenKind, tokenize
    ids: dict[str, str] = {}
    waves: dict[str, list[tuple[float, int]]] = {}
    tick, now = 1.0, 0
    for tok in tokenize(io.BytesIO(text.encode())):
        if tok.kind is TokenKind.TIMESCALE:
            tick = tok.timescale.magnitude.value * _SI[tok.timescale.unit.value]
        elif tok.kind is TokenKind.VAR:
            ids[tok.var.id_code] = tok.var.reference
        elif tok.kind is TokenKind.CHANGE_TIME:
            now = tok.time_change
        elif tok.kind is TokenKind.CHANGE_SCALAR:
            v = tok.scalar_change.value
            if v in "01":
                waves.setdefault(ids[tok.scalar_change.id_code], []).append((now * tick, int(v)))
    return tick, waves


def _simulate(tmp_path, source: Path, top: str, ports: str, net: str) -> list[tuple[float, int]]:
    """iverilog: every input steady, maint_key falls at 10 ns; the changes of ``net``."""
    tb = tmp_path / "tb.v"
    tb.write_text(f"""`timescale 1ns/1ps
module tb;
  reg clk = 0, guard_closed = 1, mode_ok = 0, estop_n = 1, maint_key = 1;
  wire q;
  {top} dut ({ports});
  initial begin
    $dumpfile("{tmp_path / 'tb.vcd'}");
    $dumpvars(0, dut);
    #10 maint_key = 0;
    #20 $finish;
  end
endmodule
""")
    exe = tmp_path / "tb.vvp"
    subprocess.run(["iverilog", "-o", str(exe), str(source), str(tb)], check=True,
                   capture_output=True)
    subprocess.run(["vvp", "-n", str(exe)], check=True, capture_output=True, cwd=tmp_path)
    _tick, waves = read_vcd((tmp_path / "tb.vcd").read_text())
    return [(t, v) for t, v in waves[net] if t > 10e-9]      # after the change


@pytest.fixture
def hazlint(tmp_path, monkeypatch, capsys):
    """The command line in this process (run from an empty folder: no configuration found)."""
    from hazlint.cli import main
    monkeypatch.chdir(tmp_path)

    def run(*args):
        code = main([*map(str, args), "--no-cache", "--color", "never"])
        out = capsys.readouterr()
        return subprocess.CompletedProcess(args, code, out.out, out.err)
    return run


@needs_iverilog
def test_nanosecond_words_and_vcd_agree_with_iverilog(tmp_path, hazlint):
    src = UNITS / "fault_reset_ns.v"
    ref = _simulate(tmp_path, src, "fault_reset_ns",
                    ".clk(clk), .guard_closed(guard_closed), .mode_ok(mode_ok), "
                    ".estop_n(estop_n), .maint_key(maint_key), .fault_q(q)", "clear_n")
    # iverilog: clear_n falls 1.3 ns after maint_key falls (at 10 ns) and rises 1 ns later
    (fall, v0), (rise, v1) = ref
    assert (v0, v1) == (0, 1)
    r = hazlint("prove", src, "--vcd", tmp_path / "w.vcd", "--svg", tmp_path / "w.svg")
    assert r.returncode == 1, r.stderr
    m = re.search(r"pulse (\S+) ns after the change, (\S+) ns wide", r.stdout)
    assert m, r.stdout
    assert float(m[1]) * 1e-9 == pytest.approx(fall - 10e-9)
    assert float(m[2]) * 1e-9 == pytest.approx(rise - fall)
    assert "skew 1 ns;" in r.stdout and "(2 gates, 1.3 ns)" in r.stdout
    assert re.search(r"^ +0 .* ns$", r.stdout, re.M)           # the axis names its unit
    # our VCD: the same pulse, measured from our own change of maint_key, in seconds
    tick, waves = read_vcd((tmp_path / "w.vcd").read_text())
    assert tick == pytest.approx(1e-10)                 # 1 ns in tenths (times like 1.3)
    (change, _), = [c for c in waves["maint_key"] if c[0] > 0]     # past the initial values
    pulse = [t - change for t, _ in waves["fault_q_reset"] if t > 0]
    assert pulse == pytest.approx([fall - 10e-9, rise - 10e-9])
    import xml.etree.ElementTree as ET
    svg_texts = [t.text for t in ET.parse(tmp_path / "w.svg").getroot().iter(
        "{http://www.w3.org/2000/svg}text")]
    assert "time (ns)" in svg_texts
    # JSON: numbers unchanged, the unit beside them
    j = hazlint("check", src, "--format", "json")
    (finding,) = json.loads(j.stdout)
    ev = finding["evidence"]
    assert ev["time_unit"] == "1ns"
    assert ev["glitch"]["time"] * 1e-9 == pytest.approx(fall - 10e-9)
    assert ev["skew"] == pytest.approx(1.0)


@needs_iverilog
def test_modules_with_different_timescales_print_in_the_finest_unit(tmp_path, hazlint):
    src = UNITS / "lamp_two_units.v"
    ref = _simulate(tmp_path, src, "lamp_top",
                    ".clk(clk), .guard_closed(guard_closed), .maint_key(maint_key), "
                    ".lamp_q(q)", "lamp")
    (fall, _), (rise, _) = ref
    # the design's unit is the finest of the two (100 ps); times print in ps
    assert TimeUnit.of(load_design([str(src)], top="lamp_top").graph) == TimeUnit(1e-10)
    r = hazlint("check", src, "--top", "lamp_top")
    m = re.search(r"pulse (\S+) ps after the change, (\S+) ps wide", r.stdout)
    assert m, r.stdout
    assert float(m[1]) * 1e-12 == pytest.approx(fall - 10e-9)
    assert float(m[2]) * 1e-12 == pytest.approx(rise - fall)
    j = hazlint("check", src, "--top", "lamp_top", "--format", "json")
    (finding,) = json.loads(j.stdout)
    assert finding["evidence"]["time_unit"] == "100ps"
    # 1 ns of skew is 10 units of 100 ps
    assert finding["evidence"]["skew"] == pytest.approx(10.0)


def test_no_delays_given_is_unit_delays():
    # the demo has no delays: its README block (the real output, tests/test_readme.py) counts
    # unit delays and never prints a bare time
    shown = (ROOT / "README.md").read_text().split("<!-- demo-output:begin -->")[1]
    shown = shown.split("<!-- demo-output:end -->")[0]
    assert "skew 1 unit delay;" in shown
    assert "(2 gates, 2 unit delays)" in shown
    assert re.search(r"pulse \d+ unit delays after the change, 1 unit delay wide", shown)
    assert re.search(r"^ +0 .*  unit delays$", shown, re.M)
    assert " ns" not in shown


def _valve(tmp_path, time_unit: str, extra: str = ""):
    lib = tmp_path / "cells.lib"
    lib.write_text(LIB.read_text().replace('time_unit : "1ns"', f'time_unit : "{time_unit}"'))
    src = tmp_path / "valve.v"
    src.write_text(VALVE.read_text().replace("endmodule", extra + "endmodule"))
    return lib, src


def test_liberty_time_unit_names_the_unit(tmp_path):
    from hazlint.delays.liberty import read_liberty
    for text, seconds in (("1ns", 1e-9), ("1ps", 1e-12), ("100ps", 1e-10)):
        lib, src = _valve(tmp_path, text)
        d = load_design([str(src)], library=read_liberty(str(lib)))
        unit = TimeUnit.of(d.graph)
        assert (unit.seconds, unit.origin) == (pytest.approx(seconds), "Liberty")
        assert unit.field == text
    # ps library: the numbers stay the library's, the words say ps
    lib, src = _valve(tmp_path, "1ps")
    d = load_design([str(src)], library=read_liberty(str(lib)))
    assert TimeUnit.of(d.graph).words(250) == "250 ps"


def test_source_delays_and_liberty_arcs_in_one_unit(tmp_path):
    from hazlint.delays.liberty import read_liberty
    # a ps library under a 1 ns timescale with a # delay: the arcs are converted into ns
    lib, src = _valve(tmp_path, "1ps", "  wire spare;\n  buf #2 g_spare (spare, maint_key);\n")
    plain = load_design([str(VALVE)], library=read_liberty(str(LIB)))
    mixed = load_design([str(src)], library=read_liberty(str(lib)))
    assert TimeUnit.of(mixed.graph) == TimeUnit(1e-9)
    inv = [n for n, a in mixed.graph.nodes(data=True) if a.get("cell") == "INVX1"][0]
    inv_ns = [n for n, a in plain.graph.nodes(data=True) if a.get("cell") == "INVX1"][0]
    # the same table numbers read as ps are a thousandth of those read as ns
    assert mixed.graph.nodes[inv]["delays"][0].rise_max == pytest.approx(
        plain.graph.nodes[inv_ns]["delays"][0].rise_max / 1000)
    spare = [n for n, a in mixed.graph.nodes(data=True) if a.get("instance", "").endswith(
        "g_spare")][0]
    assert mixed.graph.nodes[spare]["delays"][0].rise_max == 2.0


def test_sdf_over_liberty_records_the_sdf_unit(tmp_path):
    from hazlint.delays.liberty import read_liberty
    from hazlint.delays.sdf import annotate
    lib = read_liberty(str(LIB))
    d = load_design([str(VALVE)], library=lib)
    sdf = ROOT / "fixtures" / "sdf" / "press_valve.sdf"
    rep = annotate(d, str(sdf), library=lib)
    unit = TimeUnit.of(d.graph)
    assert (unit.seconds, unit.origin) == (pytest.approx(1e-9), "SDF")
    assert rep.time_unit == pytest.approx(1e-9)
    # an SDF in ps over the ns library: its values are converted into the library's unit
    d2 = load_design([str(VALVE)], library=lib)
    text = sdf.read_text().replace("(TIMESCALE 1ns)", "(TIMESCALE 1ps)")
    annotate(d2, str(sdf), library=lib, text=text)
    inv = [n for n, a in d2.graph.nodes(data=True) if a.get("cell") == "INVX1"][0]
    inv1 = [n for n, a in d.graph.nodes(data=True) if a.get("cell") == "INVX1"][0]
    assert d2.graph.nodes[inv]["delays"][0].rise_max == pytest.approx(
        d.graph.nodes[inv1]["delays"][0].rise_max / 1000)
    assert TimeUnit.of(d2.graph) == TimeUnit(1e-9)


def test_words_and_plurals():
    # plurals: "1 gate", "2 gates"; "1 unit delay", "2 unit delays"
    assert [count(n, "gate") for n in (0, 1, 2)] == ["0 gates", "1 gate", "2 gates"]
    unit = TimeUnit(None, "unit")
    assert [unit.words(x) for x in (1, 2, 0.5)] == ["1 unit delay", "2 unit delays",
                                                    "0.5 unit delays"]
    assert TimeUnit(None, "source").words(1) == "1 time unit"
    # every SI unit IEEE 1364 allows, at magnitudes 1, 10, 100, round-trips through the field
    for e, name in ((0, "s"), (-3, "ms"), (-6, "us"), (-9, "ns"), (-12, "ps"), (-15, "fs")):
        for mag in (1, 10, 100):
            u = TimeUnit(mag * 10.0 ** e)
            assert u.field == f"{mag}{name}"
            assert TimeUnit.from_field(u.field) == u
            assert u.words(3) == f"{number(3 * mag)} {name}"
    assert number(2 ** 200) == "a 201-bit number" and number(1.5) == "1.5"


def test_prove_draws_every_witness_in_one_svg(tmp_path, hazlint):
    import xml.etree.ElementTree as ET
    demo = ROOT / "fixtures" / "demo"
    r = hazlint("prove", "--config", demo / "hazlint.toml", "--svg", tmp_path / "w.svg",
                "--vcd", tmp_path / "w.vcd")
    assert r.returncode == 1
    headlines = [line for line in r.stdout.splitlines() if ": error: " in line]
    assert len(headlines) == 2                      # the demo's two proven hazards
    root = ET.parse(tmp_path / "w.svg").getroot()
    texts = [t.text for t in root.iter("{http://www.w3.org/2000/svg}text")]
    assert texts.count("time (unit delays)") == 2   # one panel per witness
    assert (tmp_path / "w.vcd").exists() and (tmp_path / "w-2.vcd").exists()
    assert "unit delays" in (tmp_path / "w.vcd").read_text()   # the VCD says what 1 ns means
