"""Reader cases found in use, in both front ends (pyverilog and slang): ``^~``, ANSI output
variables with initial values, a delay before a system task, a behavioural top with two
edges, and the readers' own notes in the report.

Oracles: IEEE 1364-2005 (clause numbers from memory: 5.1 operators, 6.2.1 variable
declaration assignments, 9.7.1 delay control, 12.3.4 port declarations), brute-force truth
tables, Icarus Verilog (``fixtures/rtl/press_pump.v`` is simulated clock by clock in
tests/test_rtl_iverilog.py and read the same by both front ends in tests/test_frontend_slang.py).
"""
from __future__ import annotations

import subprocess
import sys

import pytest

import hazlint
from hazlint.errors import ParseError
from hazlint import ir
from hazlint.frontends import registry
from support import rtlcheck

FRONT_ENDS = ["pyverilog", "slang"]


def _one(path, frontend):
    (sf,) = registry.read_sources([str(path)], frontend=frontend)
    return sf


def _gate_ops(design):
    g = design.graph
    return sorted(g.nodes[n]["op"] for n in g if g.nodes[n]["kind"] == "gate")


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "hazlint", *args], capture_output=True,
                          text=True, cwd=cwd)


@pytest.mark.parametrize("frontend", FRONT_ENDS)
def test_caret_tilde_is_one_xnor_gate(tmp_path, frontend):
    p = tmp_path / "x.v"
    p.write_text("module x (input a, b, input [2:0] v, output y, z);\n"
                 "  assign y = a ^~ b;\n  assign z = ^~v;\nendmodule\n")
    items = _one(p, frontend).modules[0].items
    # IEEE 1364-2005 5.1: ^~ and ~^ are the same operator, binary and reduction XNOR
    assert [it.rhs for it in items] == [("binop", "~^", ("id", "a"), ("id", "b")),
                                        ("unop", "~^", ("id", "v"))]
    d = hazlint.load_design([str(p)], frontend=frontend)
    (y_gate,) = [n for n in d.graph.predecessors(d.output_node["y"])]
    assert d.graph.nodes[y_gate]["op"] == "xnor"           # one gate, no separate inverter
    for k in range(32):                                      # brute force over all inputs
        a, b, v = k & 1, (k >> 1) & 1, k >> 2
        vals = {"a": a, "b": b, **{f"v[{i}]": (v >> i) & 1 for i in range(3)}}
        out = d.evaluate(vals)
        assert out["y"] == 1 - (a ^ b)
        assert out["z"] == 1 - (bin(v).count("1") & 1)


@pytest.mark.parametrize("frontend", FRONT_ENDS)
def test_ansi_output_variables_with_initial_values(tmp_path, frontend):
    p = tmp_path / "p.v"
    # 12.3.4: list_of_variable_port_identifiers takes "= constant_expression"; the bare
    # continuation ("a = 0, b = 1") is grammar Icarus Verilog 11 rejects, so it is checked
    # here by its initial values rather than by simulation
    p.write_text("module p (input clk, d, output reg q = 1'b1, output reg a = 0, b = 1,\n"
                 "          output integer n = 7);\n"
                 "  always @(posedge clk) begin q <= d; a <= q; b <= a; n <= n + 1; end\n"
                 "endmodule\n")
    sf = _one(p, frontend)
    m = sf.modules[0]
    assert [m.ports[x].net_type for x in ("q", "a", "b", "n")] == ["reg", "reg", "reg",
                                                                   "integer"]
    inits = [it for it in m.items if isinstance(it, ir.Initial)]
    assert [(it.body[2][1], it.body[3][2]) for it in inits] == [("q", 1), ("a", 0), ("b", 1),
                                                                ("n", 7)]
    d = hazlint.load_design([str(p)], frontend=frontend)
    init = {r.name: r.init for r in d.registers}
    assert (init["q"], init["a"], init["b"], init["n[0]"], init["n[1]"], init["n[3]"]) == \
        (1, 0, 1, 1, 1, 0)


@pytest.mark.parametrize("frontend", FRONT_ENDS)
@pytest.mark.parametrize("header,name", [
    ("input a = 1'b0, output y", "a"),          # an input has no initial value
    ("input a, output wire y = 1'b0", "y"),     # nor does a net
])
def test_initial_value_on_a_port_that_cannot_have_one_is_an_error(tmp_path, frontend, header,
                                                                  name):
    p = tmp_path / "e.v"
    p.write_text(f"module e ({header});\nendmodule\n")
    with pytest.raises(ParseError) as exc:
        _one(p, frontend)
    assert exc.value.line == 1 and exc.value.construct == name


@pytest.mark.parametrize("frontend", FRONT_ENDS)
def test_delayed_system_task_in_an_initial_block_is_read_and_noted(tmp_path, frontend):
    p = tmp_path / "i.v"
    p.write_text("module i (input clk, d, output reg q);\n"
                 "  reg armed = 1'b1, spare = 0;\n"
                 "  initial begin\n"
                 "    q = 1'b0;\n"
                 "    #5 $display(\"up %b\", q);\n"
                 "    #1;\n"
                 "  end\n"
                 "  always @(posedge clk) q <= d & armed;\nendmodule\n")
    body = [it for it in _one(p, frontend).modules[0].items if isinstance(it, ir.Initial)][-1]
    # the delay has no gate meaning: the statement is the system task; a lone "#1;" stays a
    # construct of its own
    assert body.body[1][1:] == [("call", "$display", [("str", "up %b"), ("id", "q")], 5),
                                ("other", "delay or disable statement", 6)]
    d = hazlint.load_design([str(p)], frontend=frontend)
    assert {r.name: r.init for r in d.registers}["q"] == 0
    (note,) = [n for n in d.notes if "simulation-only" in n.message]
    assert note.location.line == 3 and not d.not_analysed


@pytest.mark.parametrize("frontend", FRONT_ENDS)
def test_behavioural_top_with_two_edges_is_a_warning_not_an_internal_error(tmp_path,
                                                                          frontend):
    (tmp_path / "b.v").write_text("module b (input a, b, output reg q);\n"
                                  "  always @(posedge a or posedge b) q <= 1;\nendmodule\n")
    r = _cli("check", "--no-cache", "--frontend", frontend, "b.v", cwd=tmp_path)
    # neither edge signal is tested in the block, so neither is a set or reset: which one is
    # the clock cannot be told, and the module is left out with a warning (exit 1)
    assert r.returncode == 1, r.stdout + r.stderr
    assert "internal error" not in r.stderr and "Traceback" not in r.stderr
    assert "b.v:2:" in r.stdout and "not analysed" in r.stdout


@pytest.mark.parametrize("frontend", FRONT_ENDS)
def test_reader_notes_reach_the_report_at_their_line(tmp_path, frontend):
    (tmp_path / "pl.v").write_text("module pl (a, y);\n  input a;\n  input b;\n  output y;\n"
                                   "  assign y = a & b;\nendmodule\n")
    r = _cli("check", "--no-cache", "--frontend", frontend, "pl.v", cwd=tmp_path)
    assert r.returncode == 0, r.stdout + r.stderr
    (line,) = [ln for ln in r.stdout.splitlines() if "port list" in ln]
    assert line.startswith("pl.v:3:9: info: 'b' is declared input but is not in the port "
                           "list of 'pl'")
    d = hazlint.load_design([str(tmp_path / "pl.v")], frontend=frontend)
    assert [(n.rule, n.kind) for n in d.notes] == [("front-end", "design-note")]


@pytest.mark.parametrize("frontend", FRONT_ENDS)
def test_integer_parameters_are_32_bit_signed(tmp_path, frontend):
    # IEEE 1364-2005 12.2: a parameter declared integer is a signed 32-bit value, whatever the
    # type of its value; compared with Icarus Verilog's simulation of the same module
    p = tmp_path / "press_limits.v"
    p.write_text("module press_limits #(parameter integer N = 32'hffffffff) (\n"
                 "  input [1:0] a, output y, output z, output [3:0] w);\n"
                 "  parameter integer M = 4'hf;\n"
                 "  localparam integer K = 36'hf_0000_0003;\n"
                 "  localparam U = 32'hffffffff;\n"
                 "  assign y = a[0] ^ (N < 0);\n"
                 "  assign z = a[1] & (U > 0) & (M > 14);\n"
                 "  assign w = K + a;\nendmodule\n")
    m = _one(p, frontend).modules[0]
    assert all(prm.signed and prm.width is not None for prm in m.params + [
        it for it in m.items if isinstance(it, ir.Param) and it.name != "U"])
    rtlcheck.compare([p], "press_limits", steps=16, frontend=frontend)


NON_ANSI = """\
module press_count (clk, d, q, n, w);
  input clk, d;
  output reg q = 1'b1;
  output integer n = 3;
  output w;
  reg w = 1;
  always @(posedge clk) begin q <= q ^ d; n <= n + d; w <= w ^ q; end
endmodule
"""


@pytest.mark.parametrize("frontend", FRONT_ENDS)
def test_non_ansi_output_variables_with_initial_values_match_iverilog(tmp_path, frontend):
    # 12.3.3: an output variable declaration may give an initial value. Reference: Icarus
    # Verilog, clock by clock (registers that keep their power-up value until d changes them)
    p = tmp_path / "press_count.v"
    p.write_text(NON_ANSI)
    m = _one(p, frontend).modules[0]
    assert (m.ports["n"].net_type, m.ports["q"].net_type) == ("integer", "reg")
    assert [type(it).__name__ for it in m.items[:2]] == ["Initial", "Initial"]
    d = rtlcheck.compare([p], "press_count", steps=40, frontend=frontend)
    init = {r.name: r.init for r in d.registers}
    assert (init["q"], init["w"], init["n[0]"], init["n[1]"], init["n[2]"]) == (1, 1, 1, 1, 0)
