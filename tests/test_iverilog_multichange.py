"""Multi-input witnesses replayed in Icarus Verilog (the reference simulator).

For random circuits of gate primitives every sink is decided over the change model (every input
may change, alone or together); each hazard whose smallest witness changes two or more inputs is
replayed by hazlint's timed simulator with the delays, skews and extra wire delays it reports.
The same circuit, the same delays (gate ``#(rise, fall)``, wire delays as transport delay
elements ``always @(u) w <= #d u;``) and the same input changes at the same times are then
simulated by iverilog, which dumps a VCD: the sink's waveform in iverilog's VCD must show the
pulse, with every change at the time hazlint reports.
"""
from __future__ import annotations

import random
import re
import shutil
import subprocess

import pytest

from hazlint.analysis.multichange import decide_sink
from hazlint.analysis.prove import Classification, options_with_defaults, replay_witness
from hazlint.analysis.ternary import cone
from hazlint.analysis.circuits import random_circuit
from hazlint.analysis.timedsim import pin_delay, replay

pytestmark = pytest.mark.skipif(shutil.which("iverilog") is None, reason="needs iverilog")
SETTLE = 1000


def _num(x):
    return str(int(x)) if float(x).is_integer() else f"{x:g}"


def verilog(module, g, asg):
    """The circuit with the assignment's delays: inertial gate primitives, transport wires."""
    ins = [n for n, d in g.nodes(data=True) if d["kind"] == "input"]
    gates = [n for n in cone(g, list(g.nodes)) if g.nodes[n]["kind"] == "gate"]
    outs = [n for n, d in g.nodes(data=True) if d["kind"] == "sink"]
    ident = {n: f"i_{n}" for n in ins}
    ident.update({n: f"n_{n}" for n in gates})
    lines = [f"module {module}({', '.join([ident[n] for n in ins] + [f'o{k}' for k in range(len(outs))])});"]
    lines += [f"  input {ident[n]};" for n in ins]
    lines += [f"  output o{k};" for k in range(len(outs))]
    lines += [f"  wire {ident[n]};" for n in gates]
    for n in gates:
        d = g.nodes[n]
        args = []
        for p, u in enumerate(d["inputs"]):
            w = asg.wires.get((u, n, p), asg.wires.get((u, n), 0.0))
            if w:
                r = f"w_{u}_{n}_{p}"
                lines.append(f"  reg {r};")
                lines.append(f"  always @({ident[u]}) {r} <= #{_num(w)} {ident[u]};")
                args.append(r)
            else:
                args.append(ident[u])
        r, f = asg.pins.get((n, 0), pin_delay(d, 0, asg.corner))
        lines.append(f"  {d['op']} #({_num(r)}, {_num(f)}) g_{n}({ident[n]}, {', '.join(args)});")
    for k, o in enumerate(outs):
        lines.append(f"  assign o{k} = {ident[g.nodes[o]['inputs'][0]]};")
    lines.append("endmodule")
    return "\n".join(lines) + "\n", ins, outs


def vcd_changes(text, name):
    """(time, value) changes of the scalar variable ``name`` in a VCD."""
    ident = None
    for m in re.finditer(r"\$var\s+\w+\s+1\s+(\S+)\s+(\S+)\s+\$end", text):
        if m.group(2) == name:
            ident = m.group(1)
    assert ident is not None, name
    out, t = [], 0
    body = text.split("$enddefinitions", 1)[1]
    for tok in body.split():
        if tok.startswith("#"):
            t = int(tok[1:])
        elif tok[1:] == ident and tok[0] in "01xz":
            out.append((t, tok[0]))
    return out


def witnesses(seed, count):
    rng = random.Random(seed)
    opts = options_with_defaults({})
    found = []
    while len(found) < count:
        g = random_circuit(rng, rng.randint(2, 6), rng.randint(3, 14), rng.randint(1, 2),
                           ops=("and", "or", "nand", "nor", "xor", "xnor", "not"))
        for sink in [n for n, d in g.nodes(data=True) if d["kind"] == "sink"]:
            v = decide_sink(g, sink)
            pick = v.best()
            if pick is None or (pick[2].size or 0) < 2:
                continue
            k, _, f = pick
            c = Classification(sink, k, {n: (f.before[n], f.after[n]) for n in f.changed},
                               dict(f.before), dict(f.after))
            replay_witness(g, c, k, cone(g, [sink]), opts)
            found.append((g, sink, c))
    return found


@pytest.mark.slow
def test_multi_input_witnesses_replay_in_iverilog(tmp_path):
    cases = witnesses(31, 60)
    checked, hows = 0, {}
    for idx, (g, sink, c) in enumerate(cases):
        assert c.glitch is not None, f"hazard not reproduced: {c.how}"
        asg = c.assignment
        hows[c.how] = hows.get(c.how, 0) + 1
        if asg.mode != "inertial":
            continue          # iverilog's gate primitives are inertial only
        text, ins, outs = verilog(f"m{idx}", g, asg)
        k_out = outs.index(sink)
        tb = ["module tb;"]
        tb += [f"  reg r_{n};" for n in ins]
        tb += [f"  wire o{k};" for k in range(len(outs))]
        tb.append(f"  m{idx} dut({', '.join([f'r_{n}' for n in ins] + [f'o{k}' for k in range(len(outs))])});")
        tb += ["  initial begin", '    $dumpfile("w.vcd");', f"    $dumpvars(0, o{k_out});"]
        tb += [f"    r_{n} = {c.before.get(n, 0)};" for n in ins]
        moves = sorted((asg.offsets.get(n, 0.0), n) for n in c.changes)
        last = 0.0
        for t, n in moves:
            at = SETTLE + t
            tb.append(f"    #{_num(at - last)} r_{n} = {c.after[n]};")
            last = at
        tb += ["    #500 $finish;", "  end", "endmodule"]
        (tmp_path / "c.v").write_text("`timescale 1ns/1ns\n" + text + "\n".join(tb) + "\n")
        subprocess.run(["iverilog", "-o", "sim", "c.v"], cwd=tmp_path, check=True,
                       capture_output=True)
        subprocess.run(["vvp", "-n", "sim"], cwd=tmp_path, check=True, capture_output=True)
        ref = [(t - SETTLE, v) for t, v in vcd_changes((tmp_path / "w.vcd").read_text(),
                                                       f"o{k_out}") if t >= SETTLE]
        _, tr = replay(g, sink, c.before, c.after, asg, settle=0.0, watch=[sink])
        mine = [(t, str(v)) for t, v in tr.changes(sink)]
        assert mine == [(float(t), v) for t, v in ref], (idx, c.how, mine, ref)
        need = 3 if c.classification == "dynamic-hazard" else 2
        assert len(ref) >= need          # the pulse is in iverilog's VCD
        checked += 1
    # most witnesses replay with the nominal delays and a skew between the changes
    assert checked >= 0.8 * len(cases), hows
