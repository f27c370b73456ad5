"""The front end against published benchmarks (netlists from the circuitgraph package)."""
from __future__ import annotations

import random

import pytest

import hazlint
from support.bench import netlist

# ISCAS-85 primary input / output counts, Brglez & Fujiwara, "A neutral netlist of 10
# combinational benchmark circuits", ISCAS 1985 (values recalled from memory of the published
# table; c17 is the small example circuit distributed with the set).
ISCAS85_IO = {
    "c17": (5, 2), "c432": (36, 7), "c499": (41, 32), "c880": (60, 26), "c1355": (41, 32),
    "c1908": (33, 25), "c2670": (233, 140), "c3540": (50, 22), "c5315": (178, 123),
    "c6288": (32, 32), "c7552": (207, 108),
}


@pytest.mark.parametrize("name", sorted(ISCAS85_IO))
def test_iscas85_port_counts(name):
    d = hazlint.load_design(netlist(f"{name}.v"))
    assert (len(d.inputs), len(d.outputs)) == ISCAS85_IO[name]
    assert not d.registers and not d.blackboxes
    assert not d.has_loop          # ISCAS-85 circuits are combinational (Brglez & Fujiwara 1985)


def test_c17_function():
    # c17 is six NAND2 gates; its outputs are (Brglez & Fujiwara 1985, the c17 schematic):
    # N22 = NAND(NAND(N1,N3), NAND(N2, NAND(N3,N6))); N23 = NAND(NAND(N2,NAND(N3,N6)), NAND(NAND(N3,N6),N7))
    d = hazlint.load_design(netlist("c17.v"))
    nand = lambda a, b: 1 - (a & b)  # noqa: E731
    for v in range(32):
        n1, n2, n3, n6, n7 = ((v >> k) & 1 for k in range(5))
        n11 = nand(n3, n6)
        n16 = nand(n2, n11)
        want22 = nand(nand(n1, n3), n16)
        want23 = nand(n16, nand(n11, n7))
        got = d.evaluate({"N1": n1, "N2": n2, "N3": n3, "N6": n6, "N7": n7})
        assert (got["N22"], got["N23"]) == (want22, want23)


@pytest.mark.parametrize("name", ["c432", "c880", "c1908", "c6288"])
def test_iscas85_evaluate_matches_iverilog(name):
    # Reference: Icarus Verilog's zero-delay simulation of the same netlist file.
    from support import iverilog
    path = netlist(f"{name}.v")
    d = hazlint.load_design(path)
    rng = random.Random(len(name))
    W = 48
    vecs = [{i: rng.randrange(2) for i in d.inputs} for _ in range(W)]
    lines = ["module tb;", *(f"  reg {i};" for i in d.inputs), *(f"  wire {o};" for o in d.outputs),
             f"  {name} dut (" + ", ".join(f".{p}({p})" for p in d.inputs + d.outputs) + ");",
             "  initial begin"]
    for v in vecs:
        lines.append("    " + " ".join(f"{i} = {b};" for i, b in v.items()) +
                     ' #1 $display("%b", {' + ", ".join(d.outputs) + "});")
    lines += ["  end", "endmodule"]
    with open(path) as f:
        sim = iverilog.simulate({"dut.v": f.read(), "tb.v": "\n".join(lines)}, "tb").split()
    values = {i: sum(v[i] << k for k, v in enumerate(vecs)) for i in d.inputs}
    got = d.evaluate(values, width=W)
    for k in range(W):
        mine = "".join(str((got[o] >> k) & 1) for o in d.outputs)
        assert mine == sim[k], f"{name} vector {k}"


def test_epfl_multiplier_evaluates_a_times_b():
    # EPFL Combinational Benchmark Suite (Amaru, Gaillardon, De Micheli, IWLS 2015):
    # "multiplier" is a 64-bit by 64-bit unsigned multiplier, f = a * b (128 bits).
    d = hazlint.load_design(netlist("multiplier.v"))
    assert len(d.inputs) == 128 and len(d.outputs) == 128
    rng = random.Random(64)
    W = 256
    vecs = [(rng.getrandbits(64), rng.getrandbits(64)) for _ in range(W - 4)]
    vecs += [(0, 0), ((1 << 64) - 1, (1 << 64) - 1), (1, (1 << 64) - 1), ((1 << 63), 2)]
    values = {}
    for i in range(64):
        values[f"a[{i}]"] = sum(((a >> i) & 1) << k for k, (a, _) in enumerate(vecs))
        values[f"b[{i}]"] = sum(((b >> i) & 1) << k for k, (_, b) in enumerate(vecs))
    got = d.evaluate(values, width=W)
    for k, (a, b) in enumerate(vecs):
        f = sum(((got[f"f[{i}]"] >> k) & 1) << i for i in range(128))
        assert f == a * b


def test_s27_registers_through_configured_ff_cell():
    # ISCAS-89 s27 (Brglez, Bryan & Kozminski, ISCAS 1989): 4 inputs + clock, 1 output,
    # 3 D flip-flops; circuitgraph's netlist instantiates them as cell `ff` (CK, D, Q).
    cells = {"ff": {"inputs": ["CK", "D"], "outputs": {"Q": "IQ"},
                    "ff": {"clocked_on": "CK", "next_state": "D"}}}
    d = hazlint.load_design(netlist("s27.v"), library=cells)
    assert len(d.registers) == 3
    assert {r.name for r in d.registers} == {"DFF_0_Q_reg", "DFF_1_Q_reg", "DFF_2_Q_reg"}
    g = d.graph
    for r in d.registers:
        assert r.kind == "ff" and r.clock_edge == "posedge"
        assert g.nodes[r.pins["clock"]]["inputs"] == [d.input_node["clk"]]
        assert g.nodes[r.pins["data"]]["role"] == "data"
    assert not d.has_loop      # every feedback path of s27 runs through a flip-flop
    # with no cell declared, `ff` is a black box with one warning for the type
    d2 = hazlint.load_design(netlist("s27.v"))
    assert len(d2.blackboxes) == 3
    warnings = [n for n in d2.notes if "'ff'" in n.message]
    assert len(warnings) == 1
