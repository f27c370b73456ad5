"""The slang front end (PyPI ``pyslang``) against the pyverilog front end, Icarus Verilog and
published benchmark netlists.

Oracles: the pyverilog front end, the reference reader (equal IR, equal gate graph, equal
``Design.evaluate`` on random vectors, equal findings); Icarus Verilog (``iverilog -g2012``) for
SystemVerilog that the pyverilog front end cannot read; the benchmark netlists shipped in the
PyPI package circuitgraph==0.2.1 (ISCAS-85, ISCAS-89, EPFL, ITC-99, ...); random hierarchical
netlists (tests/support/randnet.py). Where the two front ends differ by design, the difference
is pinned here and listed in DEVELOPERS.md ("Front ends").
"""
from __future__ import annotations

import gc
import hashlib
import importlib
import os
import random
import re
import subprocess
import sys
from pathlib import Path

import pytest

import pyslang  # noqa: F401  (a test dependency: pip install -e '.[test]')
import hazlint
from hazlint.api import lint
from hazlint.config import load_config
from hazlint.errors import ConfigError, ParseError
from hazlint import ir
from hazlint.frontends import registry
from hazlint.elaborate import elaborate
from hazlint.frontends.slang import reader as slang_reader
from support import iverilog, randnet, rtlcheck
from support.bench import netlist

ROOT = Path(__file__).resolve().parent.parent
FIX = ROOT / "fixtures"
INC = [str(FIX / "frontend" / "inc")]
# every fixture design; the hostile-input reproducers are errors and resource limits, not
# designs: test_hostile_inputs_end_located_through_slang holds the slang front end to them
FIXTURES = sorted(p for p in FIX.rglob("*.v") if "hostile" not in p.relative_to(FIX).parts)
HOSTILE_ERRORS = sorted(p for p in (FIX / "hostile").rglob("*.v")
                        if p.stat().st_size < 20_000 and p.name not in (
                            "vector_4096.v", "hier_doubling.v"))
# the flip-flop cells of the circuitgraph netlists (see tests/test_benchmarks_frontend.py)
CELLS = {c: {"inputs": ["CK", "D"], "outputs": {"Q": "IQ"},
             "ff": {"clocked_on": "CK", "next_state": "D"}} for c in ("ff", "fflopd")}
NETLIST_DIR = Path(netlist("c17.v")).parent
NETLISTS = sorted(p.name for p in NETLIST_DIR.glob("*.v"))
BIG = 100_000            # bytes: larger netlists are slow tests
# large netlists also read by the syntax walk alone (fast path off): one of each writer's style
WALKED = {"sin.v", "s38417.v", "b17_Cg.v"}


def _signature(sf) -> str:
    """A compact, typed signature of a file's IR: the sha256 of its ``repr`` (every field of
    every item; tuples and lists, ``True`` and ``1`` told apart, which JSON would merge)."""
    return hashlib.sha256(repr(sf).encode()).hexdigest()


def _assert_same_ir(sl, pv):
    if _signature(sl) != _signature(pv):
        assert ir.to_json(sl) == ir.to_json(pv)     # shows where they differ
        assert repr(sl) == repr(pv)                 # same JSON, different Python types


def _read(path, frontend, **kw):
    return registry.read_sources([str(path)], frontend=frontend, **kw)


def _ir(path, frontend, **kw):
    (sf,) = _read(path, frontend, **kw)
    return ir.to_json(sf)


def _same_read(path, **kw):
    """Both front ends give the same (typed) IR for ``path``."""
    (pv,), (sl,) = _read(path, "pyverilog", **kw), _read(path, "slang", **kw)
    _assert_same_ir(sl, pv)


def _graph_view(design):
    """Everything a rule reads from the gate graph, as plain comparable data."""
    g = design.graph
    keys = ("kind", "op", "inputs", "pins", "cell", "instance", "path", "line", "column",
            "role", "delays", "expr")
    nodes = {n: tuple(repr(d.get(k)) for k in keys) for n, d in g.nodes(data=True)}
    return nodes, sorted(g.edges), design.inputs, design.outputs, \
        [repr(r) for r in design.registers], [repr(b) for b in design.blackboxes], \
        [repr(n) for n in design.notes]


def _same_design(path, include_dirs=(), sources=None, **kw):
    """Both front ends give the same gate graph and the same values on random vectors
    (``sources``: the two front ends' IR when already read)."""
    pv, sl = sources or (_read(path, "pyverilog", include_dirs=include_dirs),
                         _read(path, "slang", include_dirs=include_dirs))
    gc.disable()                # as load_design does: a large netlist loads much faster
    try:
        a, b = elaborate(pv, **kw), elaborate(sl, **kw)
    finally:
        gc.enable()
    assert _graph_view(a) == _graph_view(b)
    rng = random.Random(str(path))
    width = 64
    values = {i: rng.getrandbits(width) for i in a.inputs}
    for r in a.registers:
        values[r.name] = rng.getrandbits(width)
    assert a.evaluate(values, width=width, nets=True) == \
        b.evaluate(values, width=width, nets=True)
    return a, b


def _findings(paths, frontend, cwd, cells=None, own_top=True, prove=True):
    cfg = load_config(cwd)
    cfg.frontend = frontend
    if own_top:
        cfg.top = None              # the file's own top, not that of a configured design
    if cells:
        cfg.cells = dict(cells)
    result = lint([str(p) for p in paths], config=cfg, cwd=str(cwd), use_cache=False,
                  include_dirs=INC + list(cfg.include_dirs), prove=prove)
    return [(d.rule, d.kind, str(d.severity), d.location, d.instance, d.message,
             repr(d.evidence), d.notes, d.fix) for d in result.diagnostics]


# ---------------------------------------------------------------------------------------------
# every fixture: equal IR, equal design, equal findings

@pytest.mark.parametrize("path", FIXTURES, ids=lambda p: str(p.relative_to(FIX)))
def test_fixture_ir_design_and_findings_equal(path):
    pv, sl = _read(path, "pyverilog", include_dirs=INC), _read(path, "slang", include_dirs=INC)
    _assert_same_ir(sl[0], pv[0])
    # the text fast path gives what the syntax walk gives
    _assert_same_ir(slang_reader.read_one(str(path), INC, fast=False), sl[0])
    if path.parent.name == "frontend" and path.name in ("specify_cells.v", "udp.v"):
        return              # cell libraries without a top of their own
    _same_design(path, sources=(pv, sl))
    # the RTL designs have thousands of findings whose proofs take minutes: the same IR gives
    # the same rule findings, and the prover reads nothing from the front end
    prove = path.parent.name not in ("rtl", "synth")
    assert _findings([path], "slang", path.parent, prove=prove) == \
        _findings([path], "pyverilog", path.parent, prove=prove)


@pytest.mark.parametrize("path", HOSTILE_ERRORS, ids=lambda p: str(p.relative_to(FIX)))
def test_hostile_inputs_end_located_through_slang(path, capsys):
    # the hostile-input reproducers (tests/test_hostile_input.py) through the slang front end:
    # exit 0, 1 or 2, never an internal error or a traceback; an error names file:line
    # (the large resource reproducers, a million-bit port list, 4096-bit vector logic and a
    # doubling hierarchy, test the elaborator's limits, which both front ends share: they run
    # through the pyverilog front end in tests/test_hostile_input.py)
    from hazlint.cli import main
    code = main(["check", "--no-cache", "--frontend", "slang", "--time-budget", "20", str(path)])
    out, err = capsys.readouterr()
    assert code in (0, 1, 2), err
    assert "Traceback" not in err and "internal error" not in err, err
    if code == 2:
        assert re.match(r"^[^\n:]+:\d+(:\d+)?: error: ", err), err


def test_demo_design_findings_equal_with_its_configuration():
    demo = FIX / "demo"
    cfg = load_config(demo)
    assert cfg.files
    assert _findings(cfg.files, "slang", demo, own_top=False) == \
        _findings(cfg.files, "pyverilog", demo, own_top=False)


# ---------------------------------------------------------------------------------------------
# benchmark netlists (circuitgraph): equal IR, and for the smaller ones the same design
#
# Each netlist is read once per front end and the two IRs compared by a typed signature (a
# mismatch falls back to the field-by-field comparison that shows it). Typed-equal IR gives
# the same design: elaboration reads nothing but the IR and is deterministic, so elaborating
# both copies of a large netlist would test the elaborator twice, not the front ends; it is
# done for the netlists up to BIG bytes (graph, evaluate on random vectors), and the larger
# ones are elaborated by the tests of the pyverilog front end (test_benchmarks_frontend.py).

def _netlist_params():
    out = []
    for name in NETLISTS:
        size = (NETLIST_DIR / name).stat().st_size
        marks = [pytest.mark.slow] if size > BIG else []
        out.append(pytest.param(name, marks=marks, id=name))
    return out


@pytest.mark.parametrize("name", _netlist_params())
def test_benchmark_netlist_reads_the_same(name):
    path = netlist(name)
    small = os.path.getsize(path) <= BIG
    pv, sl = _read(path, "pyverilog"), _read(path, "slang")
    _assert_same_ir(sl[0], pv[0])
    if small or name in WALKED:
        _assert_same_ir(slang_reader.read_one(path, fast=False), sl[0])
    if small:
        _same_design(path, sources=(pv, sl), library=CELLS)


@pytest.mark.parametrize("name,cells", [
    ("c17.v", None), ("s27.v", CELLS),
    pytest.param("c432.v", None, marks=pytest.mark.slow),
    pytest.param("c880.v", None, marks=pytest.mark.slow),
    pytest.param("c499.v", None, marks=pytest.mark.slow)])
def test_benchmark_findings_equal(name, cells, tmp_path):
    path = netlist(name)
    assert _findings([path], "slang", tmp_path, cells) == \
        _findings([path], "pyverilog", tmp_path, cells)


@pytest.mark.parametrize("seed", range(8))
def test_random_hierarchical_netlists_read_the_same(seed, tmp_path):
    text, top, _ins, _outs = randnet.design(seed)
    p = tmp_path / "dut.v"
    p.write_text(text)
    _same_read(p)
    _same_design(p, top=top)


# random RTL of the iverilog tests (always blocks with if/case/for, signed expressions): the
# same IR and the same design (module(seed) of those test modules writes the text)
@pytest.mark.parametrize("generator", ["test_rtl_procedural_iverilog",
                                       "test_rtl_expressions_iverilog"])
@pytest.mark.parametrize("seed", range(4))
def test_random_rtl_of_the_iverilog_tests_reads_the_same(generator, seed, tmp_path):
    module = importlib.import_module(generator).module
    p = tmp_path / f"press_rtl{seed}.v"
    p.write_text(module(seed))
    _same_read(p)
    _same_design(p)


SV_RTL = """\
module press_sv (input logic clk, input logic [7:0] a, b, output logic [7:0] y,
                 output logic [3:0] cnt, output logic par, output logic [7:0] acc);
  function automatic logic [7:0] rev (input logic [7:0] v);
    logic [7:0] r;
    for (int i = 0; i < 8; i++) r[i] = v[7 - i];
    rev = r;
  endfunction
  function automatic int ones (logic [7:0] v);
    ones = 0;
    for (int k = 0; k < 8; k++) ones += v[k];
  endfunction
  task automatic add_to (inout logic [7:0] t, input logic [7:0] d);
    t = t + d;
  endtask
  always_comb begin
    y = rev(a) ^ b;
    for (int j = 0; j < 4; j++) y[j] = y[j] & a[j];
    for (int j = 0; j < 2; j++) y[j + 4] = ~y[j + 4];
  end
  always_ff @(posedge clk) begin : step
    logic [7:0] t;
    cnt <= ones(a) + ones(b);
    t = acc;
    add_to(t, a);
    acc <= t;
  end
  assign par = ^(a ^~ b);
endmodule
"""


def test_systemverilog_functions_tasks_and_loop_variables_match_iverilog(tmp_path):
    # Reference: Icarus Verilog -g2012 on the same file, clock by clock (tests/support/
    # rtlcheck.py). IEEE 1800-2017 13.3/13.4 (tasks and functions with typed ANSI arguments,
    # an argument without a direction is an input), 12.7.1 (for-loop variables).
    p = tmp_path / "press_sv.sv"
    p.write_text(SV_RTL)
    d = rtlcheck.compare([p], "press_sv", steps=80, generation="2012", frontend="slang")
    # cnt (4), acc (8): the loop variables, t and the function temporaries are not registers
    assert len(d.registers) == 12
    (sf,) = _read(p, "slang")
    (comb,) = [it for it in sf.modules[0].items if isinstance(it, ir.Always)
               and it.kind == "always_comb"]
    loop = comb.body[1][1]      # for (int j ...): an unnamed block declaring j around the loop
    assert loop[0] == "block" and loop[1][0][0] == "for" and [n.name for n in loop[3]] == ["j"]


@pytest.mark.parametrize("item,what", [
    ("function void note_it; endfunction", "void function note_it"),
])
def test_systemverilog_subprograms_without_an_ir_form_are_left_out(tmp_path, item, what):
    p = tmp_path / "v.sv"
    p.write_text(f"module v (input a, output y);\n  {item}\n  assign y = a;\nendmodule\n")
    (sf,) = _read(p, "slang")
    (u,) = [it for it in sf.modules[0].items if isinstance(it, ir.Unsupported)]
    assert (u.what, u.loc.line) == (what, 2)


def test_return_statement_leaves_its_module_out(tmp_path):
    p = tmp_path / "r.sv"
    p.write_text("module r (input [3:0] a, output [3:0] y);\n"
                 "  function automatic [3:0] inc (input [3:0] v);\n"
                 "    return v + 1;\n"
                 "  endfunction\n"
                 "  assign y = inc(a);\nendmodule\n")
    d = hazlint.load_design([str(p)])
    ((reason, line),) = [(n.message, n.location.line) for n in d.notes
                          if n.kind == "not-analysed"]
    assert "return statement" in reason and line == 3


# ---------------------------------------------------------------------------------------------
# tolerant reading: a file that does not parse is a warning unless the top needs it

def test_unparsable_file_the_top_does_not_need_is_a_warning_in_slang(tmp_path):
    (tmp_path / "good.sv").write_text(
        "module press_top(input logic a, b, output logic y);\n  and g (y, a, b);\nendmodule\n")
    (tmp_path / "broken.sv").write_text("\nmodule scratch(input a; output b);\nendmodule\n")
    r = subprocess.run([sys.executable, "-m", "hazlint", "check", "--no-cache", "--no-prove",
                        "good.sv", "broken.sv"], capture_output=True, text=True, cwd=tmp_path)
    assert r.returncode == 1, r.stdout + r.stderr
    (w,) = [ln for ln in r.stdout.splitlines() if "file not read" in ln]
    assert w.startswith("broken.sv:2:") and "(scratch)" in w
    (tmp_path / "user.sv").write_text(
        "module press_user(input a, output y);\n  scratch u (.a(a), .b(y));\nendmodule\n")
    r = subprocess.run([sys.executable, "-m", "hazlint", "check", "--no-cache", "--no-prove",
                        "user.sv", "broken.sv"], capture_output=True, text=True, cwd=tmp_path)
    assert r.returncode == 2 and "broken.sv:2:" in r.stderr and "Traceback" not in r.stderr
    broken = str(tmp_path / "broken.sv")
    with pytest.raises(ParseError):
        _read(broken, "slang")
    for jobs in (1, 2):             # in this process and in worker processes
        sl, _good = registry.read_sources([broken, str(tmp_path / "good.sv")], tolerant=True,
                                          jobs=jobs, frontend="slang")
        assert sl.error["modules"] == ["scratch"] and sl.error["line"] == 2 and not sl.modules
    (pv,) = _read(broken, "pyverilog", tolerant=True)
    assert (pv.error["modules"], pv.error["line"]) == (sl.error["modules"], sl.error["line"])


# ---------------------------------------------------------------------------------------------
# locations through the preprocessor

def test_locations_through_include_define_and_line(tmp_path):
    (tmp_path / "inc").mkdir()
    (tmp_path / "inc" / "cells.vh").write_text(
        "// a header with a gate\n"
        "  nand g_inc (n2, a, b);\n")
    top = tmp_path / "top.v"
    top.write_text(
        "`define AND2(g, o, x, y) and g (o, x, y);\n"           # 1
        "`define TWO_LINE(o, x) \\\n"                            # 2
        "  not g_two (o, x);\n"                                  # 3
        "module top (input a, b, output y, z, w);\n"             # 4
        "  wire n1, n2;\n"                                       # 5
        "  `AND2(g_n1, n1, a, b)\n"                              # 6
        '`include "cells.vh"\n'                                  # 7
        "  `TWO_LINE(w, a)\n"                                    # 8
        '`line 40 "generated.v" 0\n'                             # 9
        "  or g_line (y, n1, n2);\n"                             # 10 -> generated.v:40
        "  assign z = n1;\n"                                     # 11 -> generated.v:41
        "endmodule\n")
    inc_dir = [str(tmp_path / "inc")]
    (sf,) = registry.read_sources([str(top)], include_dirs=inc_dir, frontend="slang")
    locs = {it.name or it.cell: (os.path.basename(it.loc.path), it.loc.line)
            for it in sf.modules[0].items if isinstance(it, ir.Instance)}
    # lines known by construction of the text above
    assert locs == {"g_n1": ("top.v", 6), "g_inc": ("cells.vh", 2), "g_two": ("top.v", 8),
                    "g_line": ("generated.v", 40)}
    assign = [it for it in sf.modules[0].items if isinstance(it, ir.Assign)][0]
    assert (assign.loc.path, assign.loc.line) == ("generated.v", 41)
    assert sf.includes == [str(tmp_path / "inc" / "cells.vh")]
    sl, pv = _ir(top, "slang", include_dirs=inc_dir), _ir(top, "pyverilog", include_dirs=inc_dir)
    # a construct that comes out of a macro: slang gives the macro use's column (3), the
    # pyverilog front end the column in its expanded line (7); everything else is equal
    for k in (2, 4):
        assert (sl["modules"][0]["items"][k]["loc"]["col"],
                pv["modules"][0]["items"][k]["loc"]["col"]) == (3, 7)
        pv["modules"][0]["items"][k]["loc"]["col"] = 3
    assert sl == pv


def test_editor_buffers_stand_in_for_files_and_includes(tmp_path):
    top = tmp_path / "top.sv"
    top.write_text('`include "h.vh"\nmodule on_disk; endmodule\n')
    (tmp_path / "h.vh").write_text("module from_header_disk; endmodule\n")
    buffers = {str(top): '`include "h.vh"\n\nmodule unsaved; endmodule\n',
               str(tmp_path / "h.vh"): "module header_buffer; endmodule\n"}
    (sf,) = registry.read_sources([str(top)], texts=buffers, frontend="slang")
    assert [m.name for m in sf.modules] == ["header_buffer", "unsaved"]
    assert sf.modules[1].loc.line == 3 and sf.modules[0].loc.path == str(tmp_path / "h.vh")


# ---------------------------------------------------------------------------------------------
# errors: file:line, exit code 2, never a traceback

@pytest.mark.parametrize("text,line,word", [
    ("module m (input a, output y);\n  assign y = a &;\nendmodule\n", 2, None),
    ("module m (input a, output y);\n  and g1 (y a);\nendmodule\n", 2, None),
    ("module m (input a, output y);\n`undefined_macro\nendmodule\n", 2, "undefined_macro"),
    ("module m (input a, output y);\n  assign y = a;\n", 2, "endmodule"),
])
def test_syntax_errors_name_the_file_and_line(tmp_path, text, line, word):
    p = tmp_path / "bad.sv"
    p.write_text(text)
    with pytest.raises(ParseError) as exc:
        registry.read_sources([str(p)], frontend="slang")
    assert exc.value.path == str(p) and exc.value.line == line
    if word:
        assert word in str(exc.value)
    r = subprocess.run([sys.executable, "-m", "hazlint", "check", "--no-cache", str(p)],
                       capture_output=True, text=True, cwd=tmp_path)
    assert r.returncode == 2
    assert f"bad.sv:{line}:" in r.stderr and "Traceback" not in r.stderr


def test_error_inside_an_include_points_into_the_header(tmp_path):
    (tmp_path / "h.vh").write_text("wire ok;\nwire broken broken;\n")
    top = tmp_path / "top.sv"
    top.write_text('module m (input a, output y);\n`include "h.vh"\n  assign y = a;\nendmodule\n')
    with pytest.raises(ParseError) as exc:
        registry.read_sources([str(top)], frontend="slang")
    assert exc.value.path == str(tmp_path / "h.vh") and exc.value.line == 2


def test_include_outside_the_project_root_is_refused(tmp_path):
    outside = tmp_path / "outside"
    proj = tmp_path / "proj"
    outside.mkdir()
    proj.mkdir()
    (outside / "secret.vh").write_text("wire s;\n")
    top = proj / "top.sv"
    top.write_text('module m;\n`include "../outside/secret.vh"\nendmodule\n')
    with pytest.raises(ParseError, match="refused") as exc:
        registry.read_sources([str(top)], frontend="slang")
    assert exc.value.line == 2


def test_deep_nesting_is_an_error_not_a_crash(tmp_path):
    p = tmp_path / "deep.sv"
    p.write_text("module m(input a, output y);\nassign y = " + "(" * 3000 + "a" + ")" * 3000
                 + ";\nendmodule\n")
    with pytest.raises(ParseError):
        registry.read_sources([str(p)], frontend="slang")


# ---------------------------------------------------------------------------------------------
# choosing the front end

SV_TEXT = """\
module sv_top (input logic [3:0] a, input logic s, output logic [3:0] y, output logic p);
  for (genvar i = 0; i < 4; i++) begin : g
    assign y[i] = s ? a[i] : ~a[i];
  end
  always_comb p = ^a;
endmodule
"""


def test_sv_files_go_through_slang_and_match_iverilog(tmp_path):
    sv = tmp_path / "sv_top.sv"
    sv.write_text(SV_TEXT)
    assert registry.reader_for(str(sv)) == "slang"
    assert registry.reader_for(str(tmp_path / "x.v")) == "pyverilog"
    with pytest.raises(ParseError):
        registry.read_sources([str(sv)], frontend="pyverilog")   # genvar in for, i++
    d = hazlint.load_design([str(sv)])                           # auto: slang
    # Reference: Icarus Verilog (-g2012) simulation of the same file on every input.
    tb = ["module tb;", "  reg [3:0] a; reg s; wire [3:0] y; wire p;",
          "  sv_top dut (.a(a), .s(s), .y(y), .p(p));", "  integer k;", "  initial begin",
          "    for (k = 0; k < 32; k = k + 1) begin",
          "      {s, a} = k; #1 $display(\"%b %b\", y, p);", "    end", "  end", "endmodule"]
    sim = iverilog.simulate({"sv_top.sv": SV_TEXT, "tb.v": "\n".join(tb)}, "tb",
                            generation="2012").split("\n")
    for k in range(32):
        a, s = k & 15, k >> 4
        values = {f"a[{i}]": (a >> i) & 1 for i in range(4)}
        values["s"] = s
        got = d.evaluate(values)
        y = "".join(str(got[f"y[{i}]"]) for i in reversed(range(4)))
        assert f"{y} {got['p']}" == sim[k].strip()


def test_systemverilog_declarations_map_to_ir(tmp_path):
    p = tmp_path / "sv1.sv"
    p.write_text(
        "module leaf (input logic a, b, output logic y);\n  assign y = a ^ b;\nendmodule\n"
        "module sv1 (input logic a, b, output logic y, output int unsigned cnt);\n"
        "  timeunit 1ns; timeprecision 10ps;\n"
        "  int k;\n"
        "  wire w1 = a, w2 = b;\n"
        "  leaf u (.a, .b(w2), .y);\n"
        "  genvar i;\n"
        "  for (i = 0; i < 2; i += 1) begin : g end\n"
        "  always_comb begin k = 0; k++; end\n"
        "endmodule\n")
    (sf,) = registry.read_sources([str(p)])
    m = sf.modules[1]
    one, w32 = ("num", None, 1, 0, True), (("num", None, 31, 0, True), ("num", None, 0, 0, True))
    assert m.timescale == (1e-9, 1e-11)                      # timeunit / timeprecision
    assert (m.ports["cnt"].width, m.ports["cnt"].signed) == (w32, False)
    nets = {it.name: it for it in m.items if isinstance(it, ir.Net)}
    assert (nets["k"].width, nets["k"].signed) == (w32, True)    # int: signed 32 bits
    assigns = [(it.lhs, it.rhs) for it in m.items if isinstance(it, ir.Assign)]
    assert assigns == [(("id", "w1"), ("id", "a")), (("id", "w2"), ("id", "b"))]
    (inst,) = [it for it in m.items if isinstance(it, ir.Instance)]
    assert inst.connections == [("a", ("id", "a")), ("b", ("id", "w2")), ("y", ("id", "y"))]
    (loop,) = [it for it in m.items if isinstance(it, ir.GenFor)]
    assert loop.step == ("binop", "+", ("id", "i"), one)
    (comb,) = [it for it in m.items if isinstance(it, ir.Always)]
    assert comb.kind == "always_comb" and comb.body[1][1][3] == ("binop", "+", ("id", "k"), one)


@pytest.mark.parametrize("item,construct", [
    ("assign y = '0;", "unbased unsized literal"),
    ("logic [1:0][3:0] pk;", "packed dimension"),
    ("typedef logic [3:0] nib_t; nib_t x;", "named type"),
    ("assign y = int'(a);", "cast"),
    ("sub u (.*);", "port connection"),
])
def test_constructs_without_an_ir_form_are_errors_at_their_line(tmp_path, item, construct):
    p = tmp_path / "n.sv"
    p.write_text(f"module n (input a, output y);\n  {item}\nendmodule\n")
    with pytest.raises(ParseError, match=construct) as exc:
        registry.read_sources([str(p)])
    assert (exc.value.path, exc.value.line) == (str(p), 2)


def test_several_declaration_assignments_read_the_same(tmp_path):
    # IEEE 1364-2005 6.1.1: a net declaration assignment list may name several nets
    p = tmp_path / "d.v"
    p.write_text("module d (input a, b, output y);\n  wire n1 = a, n2 = b;\n"
                 "  and g (y, n1, n2);\nendmodule\n")
    _same_read(p)
    d = hazlint.load_design([str(p)], frontend="slang")
    assert [d.evaluate({"a": x, "b": z})["y"] for x in (0, 1) for z in (0, 1)] == [0, 0, 0, 1]


def test_declarations_over_several_lines_read_the_same(tmp_path):
    # items of a declaration at its keyword, each initial value's statement at its own line
    p = tmp_path / "ml.v"
    p.write_text("module ml (input clk, output [3:0] y);\n"
                 "  integer a = 1,\n          b = 2;\n"
                 "  reg [3:0] r = 4'd1,\n            s = 4'd2;\n"
                 "  wire [3:0] w = r,\n             v = s;\n"
                 "  assign y = a + b + w + v;\n"
                 "  always @(posedge clk) r <= r + 1;\nendmodule\n")
    _same_read(p)
    (sf,) = _read(p, "slang")
    inits = [(it.loc.line, it.body[4]) for it in sf.modules[0].items
             if isinstance(it, ir.Initial)]
    assert inits == [(2, 2), (2, 3), (4, 4), (4, 5)]


def test_columns_count_characters_after_non_ascii_text(tmp_path):
    p = tmp_path / "u.v"
    p.write_bytes("module u (input a, output y);\n  /* éé */ not g (y, a);\nendmodule\n"
                  .encode("utf-8"))
    sl = _ir(p, "slang")
    assert sl == _ir(p, "pyverilog")
    assert sl["modules"][0]["items"][0]["loc"]["col"] == 16       # 'g', counted in characters


def test_frontend_configuration_key_and_option(tmp_path):
    (tmp_path / "hazlint.toml").write_text('frontend = "slang"\n')
    assert load_config(tmp_path).frontend == "slang"
    (tmp_path / "hazlint.toml").write_text('jobs = 1\nfrontend = "verilator"\n')
    with pytest.raises(ConfigError) as exc:
        load_config(tmp_path)
    assert exc.value.line == 2 and "frontend" in str(exc.value)
    v = tmp_path / "t.v"
    v.write_text("module t (input a, output y);\n  not g (y, a);\nendmodule\n")
    (tmp_path / "hazlint.toml").write_text("")
    for fe in ("slang", "pyverilog", "auto"):
        r = subprocess.run([sys.executable, "-m", "hazlint", "summary", "--frontend", fe,
                            "--format", "json", str(v)], capture_output=True, text=True,
                           cwd=tmp_path)
        assert r.returncode == 0, r.stderr
        assert '"gates": 1' in r.stdout


def test_mixed_files_keep_input_order_and_one_progress_count(tmp_path):
    a = tmp_path / "leaf.sv"
    a.write_text("module leaf (input logic x, output logic y); assign y = ~x; endmodule\n")
    b = tmp_path / "top.v"
    b.write_text("module top (input i, output o); leaf u (.x(i), .y(o)); endmodule\n")
    calls = []
    out = registry.read_sources([str(b), str(a)], progress=lambda *c: calls.append(c))
    assert [sf.path for sf in out] == [str(b), str(a)]
    assert [c[0] for c in calls] == [1, 2] and {c[1] for c in calls} == {2}
    d = hazlint.load_design([str(b), str(a)])
    assert d.evaluate({"i": 1})["o"] == 0 and d.evaluate({"i": 0})["o"] == 1
    parallel = registry.read_sources([str(b), str(a)], jobs=2)      # worker processes
    assert [ir.to_json(sf) for sf in parallel] == [ir.to_json(sf) for sf in out]


def test_parse_cache_keeps_the_front_ends_apart(tmp_path):
    from hazlint.store.parse import ParseCache
    p = tmp_path / "t.v"
    # (an expression: outside the compiled reader's flat subset, so slang's entry is stored)
    p.write_text("module t (input a, b, output y);\n  assign y = a & ~b;\nendmodule\n")
    cache = ParseCache(tmp_path / "cache")
    registry.read_sources([str(p)], cache=cache, frontend="pyverilog")
    registry.read_sources([str(p)], cache=cache, frontend="slang")
    assert (cache.hits, cache.stores) == (0, 2)
    registry.read_sources([str(p)], cache=cache, frontend="slang")
    assert cache.hits == 1


def test_flat_module_is_read_again_rather_than_cached(tmp_path):
    # a module the compiled reader takes has no IR items yet: the parse cache does not store
    # it (that would build every item), and a second read gives the same IR
    from hazlint.elaborate import flat
    from hazlint.store.parse import ParseCache
    if flat.extension() is None:
        pytest.skip("the compiled flat-netlist reader is not built")
    p = tmp_path / "t.v"
    p.write_text("module t (input a, output y);\n  not g (y, a);\nendmodule\n")
    cache = ParseCache(tmp_path / "cache")
    first = registry.read_sources([str(p)], cache=cache, frontend="slang")
    second = registry.read_sources([str(p)], cache=cache, frontend="slang")
    assert (cache.hits, cache.stores) == (0, 0)
    assert first == second and getattr(first[0].modules[0], "flat", None) is not None


def test_design_cache_key_follows_the_front_end(tmp_path):
    from hazlint.store.design import design_key
    v, sv = tmp_path / "t.v", tmp_path / "t.sv"
    for p in (v, sv):
        p.write_text("module t; endmodule\n")
    assert design_key([str(v)], frontend="auto") == design_key([str(v)], frontend="pyverilog")
    assert design_key([str(v)], frontend="slang") != design_key([str(v)], frontend="pyverilog")
    assert design_key([str(sv)], frontend="auto") == design_key([str(sv)], frontend="slang")


# ---------------------------------------------------------------------------------------------
# the differences, pinned (DEVELOPERS.md, "Front ends")

@pytest.mark.parametrize("word", ["medium", "bit", "logic", "cell", "int"])
def test_keywords_of_the_standards_are_not_names_in_slang(tmp_path, word):
    # IEEE 1364-2005 annex B (medium, cell) and IEEE 1800-2017 annex B (bit, logic, int)
    p = tmp_path / "k.v"
    p.write_text(f"module k (input a, output y);\n  wire {word};\n  assign y = a;\nendmodule\n")
    with pytest.raises(ParseError) as exc:
        registry.read_sources([str(p)], frontend="slang")
    assert exc.value.line == 2
    if word in ("medium", "cell"):
        registry.read_sources([str(p)], frontend="pyverilog")     # read as plain names


def test_token_pasting_in_macros_reads_in_slang_only(tmp_path):
    # IEEE 1800-2017 22.5.1: `` joins tokens in a macro body (not in IEEE 1364)
    p = tmp_path / "paste.v"
    p.write_text("`define INV(n) not g_``n (n``_b, n);\n"
                 "module paste (input a, output a_b);\n  `INV(a)\nendmodule\n")
    (sf,) = registry.read_sources([str(p)], frontend="slang")
    (inst,) = sf.modules[0].items
    assert (inst.name, inst.connections, inst.loc.line) == \
        ("g_a", [(None, ("id", "a_b")), (None, ("id", "a"))], 3)
    with pytest.raises(ParseError):
        registry.read_sources([str(p)], frontend="pyverilog")


def test_input_reg_is_a_systemverilog_port_in_slang(tmp_path):
    p = tmp_path / "r.v"
    p.write_text("module r (input reg a, output y);\n  assign y = a;\nendmodule\n")
    with pytest.raises(ParseError):
        registry.read_sources([str(p)], frontend="pyverilog")
    d = hazlint.load_design([str(p)], frontend="slang")
    assert d.evaluate({"a": 1}) == {"y": 1}


def test_slang_front_end_missing_is_a_clear_error(monkeypatch):
    monkeypatch.setattr(registry, "slang_available", lambda: False)
    with pytest.raises(ConfigError, match="pyslang"):
        registry.check_choice("slang")
    assert registry.reader_for("x.sv") == "pyverilog"
