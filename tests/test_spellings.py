"""One verdict per circuit, whatever its spelling.

The same RTL (ours: the press controller's clear, clock gate and lamp clear) is synthesised by
yosys (the reference synthesis tool, Debian's package) in three spellings: ``write_verilog`` with
``assign`` expressions, ``write_verilog -noexpr`` with yosys' generic gate and flip-flop cells
(``$_AND_``, ``$_MUX_``, ``$_DFF_PP0_``...), and flip-flops mapped by ``dfflibmap`` onto the
``cells.lib`` Liberty file yosys ships. A hand-written structural version (gate primitives and a
user-defined mux primitive) is the fourth. All four must give the same findings at the same
sinks: the register pin, the changing sources of the smallest witness, whether it is a function
hazard, and whether the pulse goes towards the pin's active level (yosys turns the NAND in front
of an active-low clear into an AND in front of an active-high one, so the static-1 hazard of one
spelling is the static-0 hazard of the other).
"""
from __future__ import annotations

from pathlib import Path

from hazlint.api import lint
from hazlint.config import Config
from support.yosys import datdir, run as yosys

RTL = """\
module press_ctl (clk, ack, door_n, run, sel, key_a, key_b, d, fault_q, valve_q, lamp_q);
  input clk, ack, door_n, run, sel, key_a, key_b, d;
  output reg fault_q, valve_q, lamp_q;
  wire clr_n = ~(ack & door_n);
  wire gclk = clk & run;
  wire lamp_clr_n = sel ? key_a : key_b;
  always @(posedge clk or negedge clr_n)
    if (!clr_n) fault_q <= 1'b0; else fault_q <= d;
  always @(posedge gclk) valve_q <= d;
  always @(posedge clk or negedge lamp_clr_n)
    if (!lamp_clr_n) lamp_q <= 1'b0; else lamp_q <= d;
endmodule
"""

STRUCTURAL = """\
primitive mux2 (y, s, a, b);
  output y; input s, a, b;
  table
    // s a b : y
       1 1 ? : 1;
       1 0 ? : 0;
       0 ? 1 : 1;
       0 ? 0 : 0;
       ? 1 1 : 1;
       ? 0 0 : 0;
  endtable
endprimitive

module press_ctl (clk, ack, door_n, run, sel, key_a, key_b, d, fault_q, valve_q, lamp_q);
  input clk, ack, door_n, run, sel, key_a, key_b, d;
  output fault_q, valve_q, lamp_q;
  reg fault_q, valve_q, lamp_q;
  wire clr_n, gclk, lamp_clr_n;
  nand g_clr (clr_n, ack, door_n);
  and  g_gate (gclk, clk, run);
  mux2 g_lamp (lamp_clr_n, sel, key_a, key_b);
  always @(posedge clk or negedge clr_n)
    if (!clr_n) fault_q <= 1'b0; else fault_q <= d;
  always @(posedge gclk) valve_q <= d;
  always @(posedge clk or negedge lamp_clr_n)
    if (!lamp_clr_n) lamp_q <= 1'b0; else lamp_q <= d;
endmodule
"""


def verdicts(path: Path, liberty: str | None = None):
    cfg = Config(root=str(path.parent), liberty=[liberty] if liberty else [])
    r = lint([str(path)], config=cfg, cwd=str(path.parent), use_cache=False)
    g = r.design.graph
    by_pin = {}
    for reg in r.design.registers:
        q = g.nodes[reg.outputs["Q"]].get("name") or reg.outputs["Q"]
        for role, sink in reg.pins.items():
            by_pin[sink] = (q.split(".")[-1], role, reg.active.get(role, reg.clock_edge))
    out = set()
    for d in r.diagnostics:
        assert d.rule == "unregistered-async", d
        q, role, active = by_pin[d.evidence["sink_node"]]
        kind = d.kind
        if active in (0, 1):
            towards_active = (kind == "static-1-hazard") == (active == 0)
        else:     # a clock: any extra edge counts
            towards_active = True
        out.add((q, role, tuple(sorted(d.evidence["witness"]["transition"])),
                 d.evidence["function_hazard"], towards_active, str(d.severity)))
    return out


def test_three_yosys_spellings_and_the_structural_one_agree(tmp_path):
    (tmp_path / "rtl.v").write_text(RTL)
    lib = datdir() / "cells.lib"
    yosys("read_verilog rtl.v; synth -top press_ctl; write_verilog -noattr assign.v; "
          "write_verilog -noattr -noexpr noexpr.v; "
          f"dfflibmap -liberty {lib}; write_verilog -noattr mapped.v", tmp_path)
    (tmp_path / "structural.v").write_text(STRUCTURAL)
    noexpr = (tmp_path / "noexpr.v").read_text()
    assert "$_MUX_" in noexpr and "$_DFF_PP0_" in noexpr    # the generic cells are used
    assert "DFF_PP0" in (tmp_path / "mapped.v").read_text()
    got = {
        "assign": verdicts(tmp_path / "assign.v"),
        "noexpr": verdicts(tmp_path / "noexpr.v"),
        "mapped": verdicts(tmp_path / "mapped.v", str(lib)),
        "structural": verdicts(tmp_path / "structural.v"),
        "rtl": verdicts(tmp_path / "rtl.v"),
    }
    want = {
        # NAND(0,1) = NAND(1,0) = 1, NAND(1,1) = 0: the clear pulses when both change
        ("fault_q", "reset", ("ack", "door_n"), True, True, "error"),
        # AND(0,1) = AND(1,0) = 0: the gated clock pulses when clk and run change together
        ("valve_q", "clock", ("clk", "run"), True, True, "error"),
        # an atomic mux holds while only sel moves (a == b): the smallest witness moves two
        ("lamp_q", "reset", ("key_a", "sel"), True, True, "error"),
    }
    for name, v in got.items():
        assert v == want, (name, v)


def test_mux_spellings_agree_at_a_sensitive_pin(tmp_path):
    """A mux written as ``?:``, as a yosys ``$_MUX_`` cell and as a Liberty cell whose function
    is a mux give the same verdict (common practice: a library mux holds its output while only
    the select changes with equal data; the sum-of-products option says otherwise)."""
    lib = tmp_path / "mux.lib"
    lib.write_text("""library (muxlib) {
  cell (MX2) {
    pin (A) { direction : input; }
    pin (B) { direction : input; }
    pin (S) { direction : input; }
    pin (Y) { direction : output; function : "(A & !S) | (B & S)"; }
  }
}
""")
    body = {
        "op": "assign m = s ? b : a;",
        "yosys": "\\$_MUX_ u (.A(a), .B(b), .S(s), .Y(m));",
        "liberty": "MX2 u (.A(a), .B(b), .S(s), .Y(m));",
    }
    results = {}
    for tag, text in body.items():
        p = tmp_path / f"{tag}.v"
        p.write_text("module t(input clk, input s, input a, input b, input d, output reg q);\n"
                     f"  wire m;\n  {text}\n"
                     "  always @(posedge clk or negedge m) if (!m) q <= 0; else q <= d;\n"
                     "endmodule\n")
        for model in ("atomic", "sum-of-products"):
            cfg = Config(root=str(tmp_path), liberty=[str(lib)] if tag == "liberty" else [],
                         cell_model=model)
            r = lint([str(p)], config=cfg, cwd=str(tmp_path), use_cache=False)
            (d,) = r.diagnostics
            results[(tag, model)] = (d.kind, tuple(sorted(d.evidence["witness"]["transition"])),
                                     d.evidence["cell_model"])
    for model in ("atomic", "sum-of-products"):
        assert len({results[(t, model)] for t in body}) == 1, results
    # atomic: two sources must move; sum of products: the select alone glitches s&b | ~s&a
    assert len(results[("op", "atomic")][1]) == 2
    assert results[("op", "sum-of-products")][1] == ("s",)
