"""The built-in yosys gate-level cells against yosys' own simulation models.

Oracle: ``simcells.v`` as Debian's yosys installs it (``<datdir>/simcells.v``), simulated by
Icarus Verilog. Every combinational cell is driven with every input vector (random vectors for
the 20-input ``$_MUX16_``) and compared with ``Design.evaluate`` of the same instance; every
flip-flop and latch cell, in every polarity variant, runs a random sequence of single-pin
changes in iverilog and in the register semantics hazlint recorded for it (clock edge, data
function, enable, set and reset levels), and Q is compared after each change.
"""
from __future__ import annotations

import random

import pytest

import hazlint
from hazlint.elaborate import cells_yosys
from support import iverilog, yosys
from support.cyclesim import CycleSim


@pytest.fixture(scope="module")
def simcells():
    return yosys.modules(yosys.datdir() / "simcells.v")


def test_every_simcells_cell_is_built_in_with_its_port_order(simcells):
    built = cells_yosys.gate_cells()
    for name, (ports, _body) in simcells.items():
        if name in cells_yosys.UNMODELLED:
            continue
        assert name in built, name
        # the positional order is the model's port list (simcells.v module header)
        assert built[name].pin_order == ports, name
    assert set(built) <= set(simcells)


def _netlist(cells: list[str], simcells) -> tuple[str, list[tuple[str, list[str]]]]:
    """One module instantiating each cell once, inputs as slices of port ``i``."""
    lines, slots, pos = [], [], 0
    for k, name in enumerate(cells):
        ports = simcells[name][0]
        outs = [p for p in ports if p in ("Y", "Q")]
        ins = [p for p in ports if p not in outs]
        conns = []
        for p in ins:
            conns.append(f".{p}(i[{pos}])")
            pos += 1
        conns.append(f".{outs[0]}(o[{k}])")
        lines.append(f"  \\{name} u{k} ({', '.join(conns)});")
        slots.append((name, ins))
    head = f"module cells(input [{pos - 1}:0] i, output [{len(cells) - 1}:0] o);\n"
    return head + "\n".join(lines) + "\nendmodule\n", slots


def _models(simcells, cells) -> str:
    return "\n".join(simcells[c][1] for c in cells) + "\n"


@pytest.mark.slow
def test_combinational_cells_match_simcells(simcells, tmp_path):
    cells = [c for c, d in cells_yosys.gate_cells().items() if d.sequential is None]
    net, slots = _netlist(cells, simcells)
    n_in = sum(len(ins) for _, ins in slots)
    rng = random.Random(16)
    L = 4096
    # per cell: every input vector in turn (exhaustive up to 12 inputs), random beyond
    vecs = [0] * L
    pos = 0
    for _name, ins in slots:
        n = len(ins)
        for k in range(L):
            v = k % (1 << n) if n <= 12 else rng.getrandbits(n)
            vecs[k] |= v << pos
        pos += n
    sim = iverilog.run_vectors({"models.v": _models(simcells, cells), "cells.v": net},
                               "cells", n_in, len(cells), vecs, tmp_path)
    (tmp_path / "cells.v").write_text(net)
    design = hazlint.load_design([str(tmp_path / "cells.v")], top="cells")
    assert not design.blackboxes
    values = {}
    for b in range(n_in):
        values[f"i[{b}]"] = sum(((vecs[k] >> b) & 1) << k for k in range(L))
    got = design.evaluate(values, width=L, nets=True)
    g = design.graph
    for j, name in enumerate(cells):
        col = len(cells) - 1 - j
        mine = got[f"o[{j}]"]
        if name == "$_TBUF_":
            # three-state: Z exactly while the enable sink says the driver is off
            sink = next(s for s in g if g.nodes[s].get("role") == "tristate_enable")
            for k in range(L):
                off = ((got[sink] >> k) & 1) != g.nodes[sink]["active"]
                assert (sim[k][col] == "z") == off, (name, k)
                if not off:
                    assert sim[k][col] == str((mine >> k) & 1), (name, k)
            continue
        for k in range(L):
            assert sim[k][col] == str((mine >> k) & 1), f"{name} vector {k}"


def _letter_pins(name: str) -> list[str]:
    fam = name[2:].split("_")[0]
    return {"DFF": ["C", "R", "V"], "DFFE": ["C", "R", "V", "E"], "ALDFF": ["C", "L"],
            "ALDFFE": ["C", "L", "E"], "DFFSR": ["C", "S", "R"], "DFFSRE": ["C", "S", "R", "E"],
            "SDFF": ["C", "R", "V"], "SDFFE": ["C", "R", "V", "E"],
            "SDFFCE": ["C", "R", "V", "E"], "DLATCH": ["E", "R", "V"],
            "DLATCHSR": ["E", "S", "R"], "SR": ["S", "R"]}[fam]


def _letters(name: str) -> dict[str, str]:
    letters = name[2:-1].split("_")[1]
    pins = _letter_pins(name)
    fam = name[2:].split("_")[0]
    if fam == "DFFE" and len(letters) == 2:
        pins = ["C", "E"]
    return dict(zip(pins, letters))


@pytest.mark.slow
def test_sequential_cells_match_simcells(simcells, tmp_path):
    cells = [c for c, d in cells_yosys.gate_cells().items() if d.sequential is not None]
    net, slots = _netlist(cells, simcells)
    rng = random.Random(1965)
    steps = 160
    # per cell: its pins' values, changed one pin at a time
    state = [{p: rng.getrandbits(1) for p in ins} for _, ins in slots]
    for (name, ins), vals in zip(slots, state):
        lv = _letters(name)
        if "S" in lv and "R" in lv:
            vals["S"] = 0 if lv["S"] == "P" else 1
    seq = [[dict(v) for v in state]]
    for _ in range(steps):
        row = []
        for (name, ins), vals in zip(slots, seq[-1]):
            lv = _letters(name)
            nxt = dict(vals)
            for _try in range(20):
                p = rng.choice(ins)
                cand = dict(vals, **{p: 1 - vals[p]})

                def on(q):
                    return q in lv and cand[q] == (1 if lv[q] == "P" else 0)
                if on("S") and on("R"):
                    continue            # both active: no priority in the model (see _forbidden)
                if p == "AD" and on("L"):
                    continue            # simcells.v samples AD only at L's edge
                nxt = cand
                break
            row.append(nxt)
        seq.append(row)
    flat = []
    for row in seq:
        v, pos = 0, 0
        for (_n, ins), vals in zip(slots, row):
            for p in ins:
                v |= vals[p] << pos
                pos += 1
        flat.append(v)
    n_in = pos
    sim = iverilog.run_vectors({"models.v": _models(simcells, cells), "cells.v": net},
                               "cells", n_in, len(cells), flat, tmp_path)
    (tmp_path / "cells.v").write_text(net)
    design = hazlint.load_design([str(tmp_path / "cells.v")], top="cells")
    assert not design.blackboxes and len(design.registers) == len(cells)
    # start from iverilog's first sample (x -> 0), then follow the sequence
    by_out = {}
    for r in design.registers:
        q = r.outputs["Q"]
        by_out[q] = r.name
    first = sim[0]
    init = {}
    for j in range(len(cells)):
        ch = first[len(cells) - 1 - j]
        node = design.graph.nodes[design.output_node[f"o[{j}]"]]["inputs"][0]
        init[by_out[node]] = 1 if ch == "1" else 0
    bits = lambda v: {f"i[{b}]": (v >> b) & 1 for b in range(n_in)}  # noqa: E731
    cs = CycleSim(design, init, inputs=bits(flat[0]))
    compared = 0
    for k in range(1, len(flat)):
        cs.apply(bits(flat[k]))
        for j, name in enumerate(cells):
            ch = sim[k][len(cells) - 1 - j]
            if ch in "xz":
                continue        # iverilog has not loaded this register yet
            compared += 1
            assert ch == str(cs.output(f"o[{j}]")), f"{name} step {k}: {seq[k][j]}"
    # most samples are defined (a register without reset stays x until its first load)
    assert compared > 0.8 * len(cells) * (len(flat) - 1)


def test_register_roles_and_reset_values(tmp_path):
    """Pin roles and levels hazlint records, read from the cell names by yosys' convention
    (simcells.v: P/N active level or edge, 0/1 reset value)."""
    design_src = "module t(input c, r, s, e, d, l, a, output q1, q2, q3, q4);\n" \
        "  \\$_DFF_NN1_ f1 (.C(c), .R(r), .D(d), .Q(q1));\n" \
        "  \\$_SDFFE_PN0P_ f2 (.C(c), .R(r), .E(e), .D(d), .Q(q2));\n" \
        "  \\$_DLATCHSR_NPN_ f3 (.E(e), .S(s), .R(r), .D(d), .Q(q3));\n" \
        "  \\$_ALDFF_PN_ f4 (.C(c), .L(l), .AD(a), .D(d), .Q(q4));\nendmodule\n"
    (tmp_path / "t.v").write_text(design_src)
    design = hazlint.load_design([str(tmp_path / "t.v")])
    regs = {r.instance.rsplit(".", 1)[-1]: r for r in design.registers}
    g = design.graph
    f1 = regs["f1"]
    assert f1.kind == "ff" and f1.clock_edge == "negedge"
    assert set(f1.pins) == {"clock", "data", "set"} and f1.active["set"] == 0
    f2 = regs["f2"]                      # synchronous reset and enable: data function only
    assert f2.clock_edge == "posedge" and set(f2.pins) == {"clock", "data"}
    f3 = regs["f3"]
    assert f3.kind == "latch" and f3.active == {"enable": 0, "set": 1, "reset": 0}
    f4 = regs["f4"]
    assert set(f4.pins) == {"clock", "data", "set", "reset"}
    for role in ("set", "reset"):
        assert g.nodes[f4.pins[role]]["role"] == role
    # the enable/reset logic of f2 is part of the cell, not counted as design gates
    assert design.summary()["gates"] == 0
