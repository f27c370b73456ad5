"""Compare a hazlint Design with Icarus Verilog simulation of the same RTL, cycle by cycle.

Reference: Icarus Verilog (Debian ``iverilog``), run on the RTL source itself. Bits that
iverilog shows as x or z (variables before their first assignment, words never written, a
division by zero) are not compared: synthesis and hazlint treat them as don't-care.
"""
from __future__ import annotations

import random
import re
from pathlib import Path

import hazlint
from support import iverilog
from support.cyclesim import CycleSim


def port_value(design, net: dict, name: str, width: int) -> int:
    if width == 1 and name in design.output_node:
        return net[design.output_node[name]] & 1
    v = 0
    for i in range(width):
        v |= (net[design.output_node[f"{name}[{i}]"]] & 1) << i
    return v


def input_bits(design, name: str, width: int, value: int) -> dict:
    if width == 1 and name in design.input_node:
        return {name: value & 1}
    return {f"{name}[{i}]": (value >> i) & 1 for i in range(width)}


def port_widths(bits: list[str]) -> dict[str, int]:
    out: dict[str, int] = {}
    for b in bits:
        m = re.fullmatch(r"(.+)\[(\d+)\]", b)
        name, idx = (m.group(1), int(m.group(2))) if m else (b, 0)
        out[name] = max(out.get(name, 0), idx + 1)
    return out


def stimulus(ins: dict[str, int], n: int, seed, hold=()) -> list[dict[str, int]]:
    """Random input values per step; an active-low ``rst_n`` is asserted for the first two
    steps and then now and again; inputs in ``hold`` keep their first value."""
    rng = random.Random(seed)
    vecs = []
    for k in range(n):
        v = {name: rng.randrange(1 << w) for name, w in ins.items() if name != "clk"}
        if "rst_n" in v:
            v["rst_n"] = 0 if k < 2 else int(rng.random() > 0.05)
        for name in hold:
            if vecs:
                v[name] = vecs[0][name]
        vecs.append(v)
    return vecs


def testbench(top: str, ins: dict[str, int], outs: dict[str, int], vecs, clocked: bool) -> str:
    lines = ["module tb;"]
    lines += [f"  reg [{w - 1}:0] {n}_i;" for n, w in ins.items()]
    lines += [f"  wire [{w - 1}:0] {n}_o;" for n, w in outs.items()]
    conns = [f".{n}({n}_i)" for n in ins] + [f".{n}({n}_o)" for n in outs]
    lines.append(f"  {top} dut (" + ", ".join(conns) + ");")
    lines.append("  initial begin")
    shown = "@ " + " ".join("%b" for _ in outs)     # "@": the testbench's own lines
    args = ", ".join(f"{n}_o" for n in outs)
    for v in vecs:
        stim = " ".join(f"{n}_i = {ins[n]}'d{x};" for n, x in v.items())
        if clocked:
            lines.append(f"    clk_i = 0; {stim} #5 clk_i = 1; #5 $display(\"{shown}\", {args});")
        else:
            lines.append(f"    {stim} #5 $display(\"{shown}\", {args});")
    lines += ["  end", "endmodule"]
    return "\n".join(lines) + "\n"


def compare(paths, top: str, steps: int = 120, seed=0, hold=(), generation="2005", **options):
    """Load ``paths`` with ``top`` (``options`` go to ``load_design``, e.g. ``frontend``),
    drive the same random stimulus into hazlint's clocked simulation and into iverilog
    (``-g<generation>``), and assert equal outputs wherever iverilog is 0/1.
    Returns the design."""
    paths = [str(p) for p in paths]
    design = hazlint.load_design(paths, top=top, **options)
    assert not design.not_analysed, design.not_analysed
    assert not design.blackboxes, [b.reason for b in design.blackboxes]
    ins = port_widths(design.inputs)
    outs = port_widths(design.outputs)
    clocked = "clk" in ins
    vecs = stimulus(ins, steps, f"{top}:{seed}", hold)
    sources = {f"dut{k}.v": Path(p).read_text() for k, p in enumerate(paths)}
    sources["tb.v"] = testbench(top, ins, outs, vecs, clocked)
    lines = [ln.split()[1:] for ln in iverilog.simulate(sources, "tb", generation=generation).splitlines()
             if ln.startswith("@ ")]
    assert len(lines) == steps
    sim = CycleSim(design)          # registers start at their initial value, else 0
    compared = 0
    for k, v in enumerate(vecs):
        bits: dict[str, int] = {}
        for name, x in v.items():
            bits.update(input_bits(design, name, ins[name], x))
        if clocked:
            # inputs change with the clock low, then the clock rises (as in the testbench)
            sim.apply(dict(bits, **input_bits(design, "clk", 1, 0)))
            net = sim.apply(input_bits(design, "clk", 1, 1))
        else:
            net = sim.apply(bits)
        for (name, w), ref in zip(outs.items(), lines[k]):
            mine = format(port_value(design, net, name, w), f"0{w}b")
            ref = ref.rjust(w, ref[0] if ref[0] in "xz" else "0")
            for i, (a, b) in enumerate(zip(mine, ref)):
                if b in "01":
                    compared += 1
                    assert a == b, (f"{top} step {k} output {name}: hazlint {mine} iverilog "
                                    f"{ref} (inputs {v})")
    assert compared > steps, "almost every output bit was x in iverilog: nothing was compared"
    return design
