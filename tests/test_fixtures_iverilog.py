"""Every fixture design, simulated by Icarus Verilog (reference simulator) with zero delays,
equals Design.evaluate on random vectors.

Registers modelled by always blocks are cut the same way in both: the testbench forces each
register variable to a random value and compares the outputs after the logic settles. Designs
that cannot be compared this way are listed with the reason (a combinational loop has no single
zero-delay value; black boxes and library cells have no simulation model here).
"""
from __future__ import annotations

import random
import re
from pathlib import Path

import pytest

import hazlint
from hazlint.config import load_config
from support import iverilog

ROOT = Path(__file__).resolve().parent.parent
FIX = ROOT / "fixtures"
# fixtures that are deliberately malformed or need include paths/defines given by their tests
# (frontend), netlists of library cells, simulated against cell models in their own tests
# (tests/test_liberty.py, tests/test_sdf.py), RTL that yosys synthesises before hazlint reads it
# (tests/test_synth_corpus.py compares those netlists with iverilog's simulation of the RTL),
# and RTL with memories, whose words cannot be forced in iverilog: simulated clock by clock in
# tests/test_rtl_iverilog.py
SPECIAL = {"frontend", "sdf", "liberty", "synth", "rtl"}


def designs():
    out = []
    for toml in sorted(FIX.rglob("hazlint.toml")):
        out.append(("config", toml))
    configured = {p.parent for _, p in out}
    for v in sorted(FIX.rglob("*.v")):
        if v.parent in configured or v.parent.name in SPECIAL:
            continue
        out.append(("file", v))
    return out


def _load(kind, path):
    if kind == "config":
        cfg = load_config(path=str(path))
        return (hazlint.load_design(cfg.files, top=cfg.top, include_dirs=cfg.include_dirs,
                                    defines=cfg.defines, library=cfg.library()),
                cfg.files)
    return hazlint.load_design([str(path)]), [str(path)]


def _verilog_name(bit: str) -> str:
    """'a[3]' -> 'a[3]', an escaped name -> '\\name ' (a bit select of a vector stays)."""
    if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_$]*(\[\d+\])?", bit):
        return bit
    return "\\" + bit + " "


@pytest.mark.parametrize("kind,path", designs(), ids=lambda x: str(x).replace(str(FIX), ""))
def test_fixture_matches_iverilog(kind, path):
    design, files = _load(kind, path)
    assert not design.blackboxes and all(r.cell == "always" for r in design.registers)
    # outputs fed by a combinational loop have no unique zero-delay value: compare the others
    import networkx as nx
    g = design.graph
    looped = set()
    for scc in nx.strongly_connected_components(g):
        if len(scc) > 1:
            looped |= scc
    tainted = set(looped)
    for n in looped:
        tainted |= nx.descendants(g, n)
    compared = [b for b in design.outputs if design.output_node[b] not in tainted]
    if looped:
        # the loop is real and everything else is still checked
        assert len(compared) < len(design.outputs)
        if not compared:
            return      # every output depends on the loop: nothing has a zero-delay value
    top = design.top
    prefix = top + "."
    # port declarations of the top module, as vectors (name -> width)
    ports: dict[str, int] = {}
    for b in design.inputs + design.outputs:
        m = re.fullmatch(r"(.+)\[(\d+)\]", b)
        name, idx = (m.group(1), int(m.group(2))) if m else (b, 0)
        ports[name] = max(ports.get(name, 0), idx + 1)
    ins = sorted({re.sub(r"\[\d+\]$", "", b) for b in design.inputs})
    outs = sorted({re.sub(r"\[\d+\]$", "", b) for b in compared} - set(ins))
    regs: dict[str, int] = {}
    reg_bits = []
    for r in design.registers:
        local = r.instance[len(prefix):]
        m = re.fullmatch(r"(.+)\[(\d+)\]", local)
        name, idx = (m.group(1), int(m.group(2))) if m else (local, 0)
        regs[name] = max(regs.get(name, 0), idx + 1)
        reg_bits.append((r, name, idx))
    rng = random.Random(str(path))
    W = 40
    vecs = [({n: rng.randrange(1 << ports[n]) for n in ins},
             {n: rng.randrange(1 << w) for n, w in regs.items()}) for _ in range(W)]
    lines = ["module tb;"]
    lines += [f"  reg [{ports[n] - 1}:0] {n}_i;" for n in ins]
    lines += [f"  wire [{ports[n] - 1}:0] {n}_o;" for n in outs]
    conns = [f".{n}({n}_i)" for n in ins] + [f".{n}({n}_o)" for n in outs]
    lines.append(f"  {top} dut (" + ", ".join(conns) + ");")
    lines.append("  initial begin")
    for iv, rv in vecs:
        stim = " ".join(f"{n}_i = {ports[n]}'d{v};" for n, v in iv.items())
        force = " ".join(f"force dut.{n} = {regs[n]}'d{v};" for n, v in rv.items())
        shown = ", ".join(f"{n}_o" for n in outs)
        lines.append(f'    {stim} {force} #100000 $display("%b", {{{shown}}});')
    lines += ["  end", "endmodule"]
    sources = {f"dut{k}.v": Path(f).read_text() for k, f in enumerate(files)}
    sources["tb.v"] = "\n".join(lines) + "\n"
    sim = iverilog.simulate(sources, "tb").split()
    assert len(sim) == W
    values: dict[str, int] = {}
    for k, (iv, rv) in enumerate(vecs):
        for n, v in iv.items():
            for i in range(ports[n]):
                bit = n if (ports[n] == 1 and n in design.input_node) else f"{n}[{i}]"
                values[bit] = values.get(bit, 0) | (((v >> i) & 1) << k)
        for r, name, idx in reg_bits:
            q = r.outputs["Q"]
            values[q] = values.get(q, 0) | (((rv[name] >> idx) & 1) << k)
    got = design.evaluate(values, width=W)
    for k in range(W):
        mine = ""
        for n in outs:
            for i in reversed(range(ports[n])):
                bit = n if (ports[n] == 1 and n in design.output_node) else f"{n}[{i}]"
                mine += str((got[bit] >> k) & 1)
        assert mine == sim[k], f"vector {k}: hazlint {mine} iverilog {sim[k]}"
