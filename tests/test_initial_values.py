"""Initial values are power-up states of registers, never drivers.

Oracles: Icarus Verilog (the outputs at time 0, before any clock edge, come from the power-up
values) and yosys, which writes the same initial values in two spellings: ``reg x = v;`` (with
expressions) and the ``init`` attribute on the wire a flip-flop cell drives (``-noexpr``).
"""
from __future__ import annotations

import random
from pathlib import Path

import hazlint
from support import iverilog, yosys

FIX = Path(__file__).resolve().parent.parent / "fixtures" / "initial"


def _ports(design):
    out: dict[str, int] = {}
    for b in design.outputs:
        name, _, idx = b.partition("[")
        out[name] = max(out.get(name, 0), int(idx[:-1]) + 1 if idx else 1)
    return out


def _power_up_outputs_iverilog(path: Path, design, inputs: dict[str, int]) -> dict[str, int]:
    """Output port values at time 1 with constant inputs and no clock edge."""
    ports = _ports(design)
    ins = sorted({b.partition("[")[0] for b in design.inputs})
    lines = ["module tb;"]
    lines += [f"  reg {n}_i = 1'b{inputs.get(n, 0)};" for n in ins]
    lines += [f"  wire [{w - 1}:0] {n}_o;" for n, w in ports.items()]
    conns = [f".{n}({n}_i)" for n in ins] + [f".{n}({n}_o)" for n in ports]
    lines.append(f"  {design.top} dut ({', '.join(conns)});")
    shown = ", ".join(f"{n}_o" for n in ports)
    lines += [f'  initial #1 $display("%b", {{{shown}}});', "endmodule"]
    sim = iverilog.simulate({"dut.v": path.read_text(), "tb.v": "\n".join(lines)}, "tb")
    text = sim.split()[-1]
    out, pos = {}, 0
    for n, w in ports.items():
        for i in reversed(range(w)):
            out[n if w == 1 and n in design.output_node else f"{n}[{i}]"] = text[pos]
            pos += 1
    return out


def test_power_up_values_are_state_not_drivers():
    design = hazlint.load_design([str(FIX / "power_up.v")])
    assert not [n for n in design.notes if "drivers" in n.message]
    regs = {r.name: r for r in design.registers}
    # every register stays a register (no constant took its place)
    assert sorted(regs) == ["count[0]", "count[1]", "count[2]", "count[3]", "fault",
                            "guard_hist[0]", "guard_hist[1]"]
    assert regs["fault"].init == 1 and regs["count[2]"].init == 0
    assert regs["guard_hist[1]"].init == 0
    g = design.graph
    assert g.nodes[regs["fault"].outputs["Q"]]["init"] == 1
    # the variable nothing assigns keeps its value: a constant
    assert g.nodes[design.net_node("spare_one")]["kind"] == "const"
    assert not [n for n in design.notes if "initial" in n.message]


def test_simulation_only_statements_are_reported(tmp_path):
    (tmp_path / "s.v").write_text(
        "module s(input c, d, output reg q);\n"
        "  initial begin\n    q = 1'b1;\n    $display(\"powered up\");\n  end\n"
        "  always @(posedge c) q <= d;\nendmodule\n")
    design = hazlint.load_design([str(tmp_path / "s.v")])
    assert design.registers[0].init == 1
    notes = [n for n in design.notes if "simulation-only" in n.message]
    assert len(notes) == 1 and notes[0].location.line == 2


def test_power_up_outputs_match_iverilog():
    path = FIX / "power_up.v"
    design = hazlint.load_design([str(path)])
    for guard in (0, 1):
        want = _power_up_outputs_iverilog(path, design, {"guard_closed": guard})
        got = design.evaluate({"guard_closed": guard})     # registers at their init
        assert {k: str(v) for k, v in got.items()} == want


def test_yosys_spellings_keep_the_initial_values(tmp_path):
    """yosys writes ``reg x = v`` and ``(* init *)``: both give the power-up values the RTL
    has, and iverilog agrees on the synthesised netlists' outputs at time 0."""
    src = FIX / "power_up.v"
    yosys.run(f"read_verilog {src}; synth -top press_power_up; "
              f"write_verilog -noexpr noexpr.v; write_verilog expr.v", tmp_path)
    rtl = hazlint.load_design([str(src)])
    rtl_init = {r.outputs["Q"]: r.init for r in rtl.registers}
    for name in ("noexpr.v", "expr.v"):
        d = hazlint.load_design([str(tmp_path / name)])
        assert not [n for n in d.notes if "drivers" in n.message], name
        inits = {r.outputs["Q"]: r.init for r in d.registers}
        # the registers yosys kept carry the RTL's values (constant ones may be optimised away)
        assert inits and all(rtl_init.get(q, v) == v for q, v in inits.items()), name
        assert d.evaluate({"guard_closed": 1}) == rtl.evaluate({"guard_closed": 1})


def test_init_attribute_with_unknown_bits(tmp_path):
    # yosys -noexpr: (* init = 3'bx01 *) on the wire the flip-flop cells drive
    (tmp_path / "a.v").write_text(
        "module a(input c, input [2:0] d, output [2:0] q);\n"
        "  (* init = 3'bx01 *) wire [2:0] q;\n"
        "  \\$_DFF_P_ r0 (.C(c), .D(d[0]), .Q(q[0]));\n"
        "  \\$_DFF_P_ r1 (.C(c), .D(d[1]), .Q(q[1]));\n"
        "  \\$_DFF_P_ r2 (.C(c), .D(d[2]), .Q(q[2]));\nendmodule\n")
    d = hazlint.load_design([str(tmp_path / "a.v")])
    assert [r.init for r in sorted(d.registers, key=lambda r: r.name)] == [1, 0, None]


def test_random_registers_start_from_init_in_evaluate():
    design = hazlint.load_design([str(FIX / "power_up.v")])
    rng = random.Random(7)
    for _ in range(10):
        vals = {b: rng.getrandbits(1) for b in design.inputs}
        # giving the power-up values explicitly changes nothing
        explicit = {r.name: r.init for r in design.registers if r.init is not None}
        assert design.evaluate(vals) == design.evaluate({**vals, **explicit})
