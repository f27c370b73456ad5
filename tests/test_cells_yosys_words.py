"""Word-level yosys cells, bit-blasted by hazlint, against yosys' own simulation models.

Oracle: ``simlib.v`` as Debian's yosys installs it (``<datdir>/simlib.v``), simulated by Icarus
Verilog. Each cell is instantiated with several parameter sets (widths that extend and truncate,
signed and unsigned operands, both polarities of every control pin, reset values with 0 and 1
bits); the combinational ones get random input vectors, the registers and latches a random
sequence of single-bit changes, and hazlint's ``Design.evaluate`` (with the register semantics
of ``support.cyclesim``) must give the same outputs wherever iverilog's are defined (the models
give ``x`` for an out-of-range ``$shiftx`` or two active ``$pmux`` selects).
"""
from __future__ import annotations

import random
import re

import pytest

import hazlint
from hazlint.elaborate import cells_yosys_words
from support import iverilog, yosys
from support.cyclesim import CycleSim

U, S = 0, 1


def _arith(cell, aw, bw, yw, sa, sb):
    return (cell, {"A_WIDTH": aw, "B_WIDTH": bw, "Y_WIDTH": yw, "A_SIGNED": sa, "B_SIGNED": sb},
            [("A", aw), ("B", bw)], [("Y", yw)])


def _unary(cell, aw, yw, sa):
    return (cell, {"A_WIDTH": aw, "Y_WIDTH": yw, "A_SIGNED": sa}, [("A", aw)], [("Y", yw)])


def combinational_cases(rng: random.Random):
    cases = []
    for cell in ("$not", "$pos", "$neg"):
        cases += [_unary(cell, 3, 5, U), _unary(cell, 3, 5, S), _unary(cell, 5, 3, S)]
    for cell in ("$reduce_and", "$reduce_or", "$reduce_xor", "$reduce_xnor", "$reduce_bool",
                 "$logic_not"):
        cases += [_unary(cell, 4, 1, U), _unary(cell, 3, 2, U)]
    shapes = [(3, 4, 5, U, U), (4, 3, 6, S, S), (5, 3, 4, S, U), (4, 4, 3, S, S)]
    for cell in ("$and", "$or", "$xor", "$xnor", "$add", "$sub", "$mul"):
        cases += [_arith(cell, *sh) for sh in shapes]
    for cell in ("$lt", "$le", "$gt", "$ge", "$eq", "$ne", "$eqx", "$nex", "$logic_and",
                 "$logic_or"):
        cases += [_arith(cell, 3, 4, 1, U, U), _arith(cell, 4, 3, 2, S, S),
                  _arith(cell, 4, 4, 1, S, U)]
    for cell in ("$shl", "$shr", "$sshl", "$sshr", "$shift", "$shiftx"):
        cases += [_arith(cell, 5, 3, 7, U, U), _arith(cell, 5, 3, 4, S, U),
                  _arith(cell, 4, 2, 6, S, U)]
    for cell in ("$shift", "$shiftx"):
        cases += [_arith(cell, 5, 3, 5, U, S), _arith(cell, 4, 3, 6, S, S)]
    cases += [
        ("$mux", {"WIDTH": 3}, [("A", 3), ("B", 3), ("S", 1)], [("Y", 3)]),
        ("$pmux", {"WIDTH": 2, "S_WIDTH": 3}, [("A", 2), ("B", 6), ("S", 3)], [("Y", 2)]),
        # WIDTH 1 only: simlib.v of yosys 0.23 takes one bit where WIDTH > 1 needs a slice
        # (test_bmux_wide_matches_yosys_eval checks that case against yosys itself)
        ("$bmux", {"WIDTH": 1, "S_WIDTH": 3}, [("A", 8), ("S", 3)], [("Y", 1)]),
        ("$demux", {"WIDTH": 2, "S_WIDTH": 2}, [("A", 2), ("S", 2)], [("Y", 8)]),
        ("$lut", {"WIDTH": 3, "LUT": rng.getrandbits(8)}, [("A", 3)], [("Y", 1)]),
        ("$sop", {"WIDTH": 3, "DEPTH": 3, "TABLE": rng.getrandbits(18)}, [("A", 3)],
         [("Y", 1)]),
        ("$slice", {"A_WIDTH": 6, "Y_WIDTH": 3, "OFFSET": 2}, [("A", 6)], [("Y", 3)]),
        ("$concat", {"A_WIDTH": 2, "B_WIDTH": 3}, [("A", 2), ("B", 3)], [("Y", 5)]),
        ("$fa", {"WIDTH": 3}, [("A", 3), ("B", 3), ("C", 3)], [("X", 3), ("Y", 3)]),
        ("$lcu", {"WIDTH": 4}, [("P", 4), ("G", 4), ("CI", 1)], [("CO", 4)]),
        ("$alu", {"A_WIDTH": 3, "B_WIDTH": 4, "Y_WIDTH": 5, "A_SIGNED": 0, "B_SIGNED": 0},
         [("A", 3), ("B", 4), ("CI", 1), ("BI", 1)], [("X", 5), ("Y", 5), ("CO", 5)]),
        ("$alu", {"A_WIDTH": 4, "B_WIDTH": 3, "Y_WIDTH": 4, "A_SIGNED": 1, "B_SIGNED": 1},
         [("A", 4), ("B", 3), ("CI", 1), ("BI", 1)], [("X", 4), ("Y", 4), ("CO", 4)]),
    ]
    return cases


def register_cases(rng: random.Random):
    """(cell, params, inputs, outputs) with every polarity parameter drawn at random."""
    pol = lambda: rng.getrandbits(1)  # noqa: E731
    W = 3
    cases = []
    for _ in range(2):
        clk = {"CLK_POLARITY": pol()}
        en = {"EN_POLARITY": pol()}
        arst = {"ARST_POLARITY": pol(), "ARST_VALUE": rng.getrandbits(W)}
        srst = {"SRST_POLARITY": pol(), "SRST_VALUE": rng.getrandbits(W)}
        sr = {"SET_POLARITY": pol(), "CLR_POLARITY": pol()}
        aload = {"ALOAD_POLARITY": pol()}
        one = lambda n: (n, 1)  # noqa: E731
        wide = lambda n: (n, W)  # noqa: E731
        table = [
            ("$dff", clk, [one("CLK"), wide("D")]),
            ("$dffe", {**clk, **en}, [one("CLK"), one("EN"), wide("D")]),
            ("$adff", {**clk, **arst}, [one("CLK"), one("ARST"), wide("D")]),
            ("$adffe", {**clk, **arst, **en}, [one("CLK"), one("ARST"), one("EN"), wide("D")]),
            ("$sdff", {**clk, **srst}, [one("CLK"), one("SRST"), wide("D")]),
            ("$sdffe", {**clk, **srst, **en}, [one("CLK"), one("SRST"), one("EN"), wide("D")]),
            ("$sdffce", {**clk, **srst, **en}, [one("CLK"), one("SRST"), one("EN"),
                                                  wide("D")]),
            ("$aldff", {**clk, **aload}, [one("CLK"), one("ALOAD"), wide("AD"), wide("D")]),
            ("$aldffe", {**clk, **aload, **en}, [one("CLK"), one("ALOAD"), wide("AD"),
                                                 one("EN"), wide("D")]),
            ("$dffsr", {**clk, **sr}, [one("CLK"), wide("SET"), wide("CLR"), wide("D")]),
            ("$dffsre", {**clk, **sr, **en}, [one("CLK"), wide("SET"), wide("CLR"), one("EN"),
                                              wide("D")]),
            ("$dlatch", en, [one("EN"), wide("D")]),
            ("$adlatch", {**en, **arst}, [one("EN"), one("ARST"), wide("D")]),
            ("$dlatchsr", {**en, **sr}, [one("EN"), wide("SET"), wide("CLR"), wide("D")]),
            ("$sr", sr, [wide("SET"), wide("CLR")]),
        ]
        cases += [(c, {"WIDTH": W, **p}, ins, [("Q", W)]) for c, p, ins in table]
    return cases


def _netlist(cases):
    """One module with every case, its inputs slices of ``i`` and outputs slices of ``o``."""
    lines, layout, pi, po = [], [], 0, 0
    for k, (cell, params, ins, outs) in enumerate(cases):
        conns, pins = [], {}
        for p, w in ins:
            conns.append(f".{p}(i[{pi + w - 1}:{pi}])")
            pins[p] = (pi, w)
            pi += w
        for p, w in outs:
            conns.append(f".{p}(o[{po + w - 1}:{po}])")
            pins[p] = (po, w)
            po += w
        ps = ", ".join(f".{n}({v})" for n, v in params.items())
        lines.append(f"  \\{cell} #({ps}) u{k} ({', '.join(conns)});")
        layout.append(pins)
    text = (f"module words(input [{pi - 1}:0] i, output [{po - 1}:0] o);\n" + "\n".join(lines)
            + "\nendmodule\n")
    return text, layout, pi, po


@pytest.fixture(scope="module")
def simlib():
    return yosys.modules(yosys.datdir() / "simlib.v")


def _models(simlib, cases) -> str:
    return "\n".join(simlib[c][1] for c in sorted({c[0] for c in cases})) + "\n"


def _load(tmp_path, text):
    (tmp_path / "words.v").write_text(text)
    return hazlint.load_design([str(tmp_path / "words.v")], top="words")


class _Mismatch(Exception):
    pass


def _check(sim_row: str, n_out: int, mine) -> int:
    """Compare one iverilog sample with ``mine(bit) -> 0|1``; return the bits compared."""
    done = 0
    for b in range(n_out):
        ch = sim_row[n_out - 1 - b]
        if ch in "xz":
            continue
        if ch != str(mine(b)):
            raise _Mismatch(b)
        done += 1
    return done


def test_every_modelled_word_cell_has_simlib_port_order(simlib):
    for cell in cells_yosys_words.word_cells():
        ports = simlib[cell][0]
        assert list(cells_yosys_words.port_order(cell)) == ports, cell


@pytest.mark.slow
def test_combinational_word_cells_match_simlib(simlib, tmp_path):
    rng = random.Random(2005)
    cases = combinational_cases(rng)
    text, layout, n_in, n_out = _netlist(cases)
    L = 3000
    vecs = [rng.getrandbits(n_in) for _ in range(L)]
    sim = iverilog.run_vectors({"models.v": _models(simlib, cases), "words.v": text}, "words",
                               n_in, n_out, vecs, tmp_path)
    design = _load(tmp_path, text)
    assert not design.blackboxes
    values = {f"i[{b}]": sum(((vecs[k] >> b) & 1) << k for k in range(L)) for b in range(n_in)}
    got = design.evaluate(values, width=L)
    done = 0
    for k in range(L):
        try:
            done += _check(sim[k], n_out, lambda b: (got[f"o[{b}]"] >> k) & 1)
        except _Mismatch as exc:
            b = exc.args[0]
            case = next(c for c, pins in zip(cases, layout)
                        if any(p in dict(c[3]) and lo <= b < lo + w
                               for p, (lo, w) in pins.items()))
            raise AssertionError(f"vector {k}, output bit {b}: {case}") from None
    assert done > 0.95 * L * n_out        # x only where the models leave a bit undefined


@pytest.mark.slow
def test_word_registers_match_simlib(simlib, tmp_path):
    rng = random.Random(1364)
    cases = register_cases(rng)
    text, layout, n_in, n_out = _netlist(cases)
    # a random walk of single-bit changes per case; set and clear of one bit are never both
    # active (hazlint's register has no priority between them), and an asynchronous load
    # data bit does not change while the load is active (simlib.v samples AD only at the
    # edge of ALOAD, the cell is transparent then)
    def active(params, pin, v):
        key = {"SET": "SET_POLARITY", "CLR": "CLR_POLARITY", "ALOAD": "ALOAD_POLARITY"}[pin]
        return v == params[key]

    cur = [{p: 0 for p, _w in c[2]} for c in cases]
    for c, vals in zip(cases, cur):
        for p, w in c[2]:
            vals[p] = rng.getrandbits(w)
        if "SET" in vals:
            inactive = 0 if c[1]["SET_POLARITY"] else (1 << 3) - 1
            vals["SET"] = inactive
    steps = [[dict(v) for v in cur]]
    for _ in range(200):
        row = []
        for c, vals in zip(cases, steps[-1]):
            params = c[1]
            widths = dict(c[2])
            nxt = dict(vals)
            for _try in range(20):
                p = rng.choice(list(widths))
                bit = rng.randrange(widths[p])
                cand = dict(vals, **{p: vals[p] ^ (1 << bit)})
                if "SET" in cand and any(
                        active(params, "SET", (cand["SET"] >> j) & 1)
                        and active(params, "CLR", (cand["CLR"] >> j) & 1) for j in range(3)):
                    continue
                if p == "AD" and active(params, "ALOAD", cand["ALOAD"]):
                    continue
                nxt = cand
                break
            row.append(nxt)
        steps.append(row)
    flat = []
    for row in steps:
        v = 0
        for vals, pins in zip(row, layout):
            for p, x in vals.items():
                v |= x << pins[p][0]
        flat.append(v)
    sim = iverilog.run_vectors({"models.v": _models(simlib, cases), "words.v": text}, "words",
                               n_in, n_out, flat, tmp_path)
    design = _load(tmp_path, text)
    assert not design.blackboxes
    assert len(design.registers) == sum(c[1]["WIDTH"] for c in cases)
    # registers are named after the nets they drive: o[...]
    reg_of_out = {}
    for r in design.registers:
        reg_of_out[design.graph.nodes[r.outputs["Q"]]["name"]] = r.name
    bits = lambda v: {f"i[{b}]": (v >> b) & 1 for b in range(n_in)}  # noqa: E731
    init = {reg_of_out[f"o[{b}]"]: int(sim[0][n_out - 1 - b] == "1") for b in range(n_out)}
    cs = CycleSim(design, init, inputs=bits(flat[0]))
    done = 0
    for k in range(1, len(flat)):
        cs.apply(bits(flat[k]))
        try:
            done += _check(sim[k], n_out, lambda b: cs.output(f"o[{b}]"))
        except _Mismatch as exc:
            b = exc.args[0]
            case = next(c for c, pins in zip(cases, layout)
                        if pins["Q"][0] <= b < pins["Q"][0] + pins["Q"][1])
            raise AssertionError(f"step {k}, output bit {b}: {case}") from None
    assert done > 0.8 * n_out * (len(flat) - 1)


def test_unmodelled_cells_are_named_warnings(tmp_path):
    (tmp_path / "d.v").write_text(
        "module d(input [3:0] a, b, output [3:0] q, output [3:0] r);\n"
        "  \\$div #(.A_SIGNED(0), .B_SIGNED(0), .A_WIDTH(4), .B_WIDTH(4), .Y_WIDTH(4)) u_div "
        "(.A(a), .B(b), .Y(q));\n"
        "  \\$assert u_chk (.A(a[0]), .EN(1'b1));\n"
        "  assign r = a;\nendmodule\n")
    design = hazlint.load_design([str(tmp_path / "d.v")])
    assert [b.cell for b in design.blackboxes] == ["$div"]
    warn = [n for n in design.notes if n.severity.name == "WARNING"]
    assert len(warn) == 1 and "'$div'" in warn[0].message and warn[0].location.line == 2
    assert any("'$assert'" in n.message for n in design.notes)
    # q is a free input now, not a silent constant
    assert design.graph.nodes[design.net_node("q[0]")]["kind"] == "blackbox"


def test_bmux_wide_matches_yosys_eval(tmp_path):
    """``$bmux`` with WIDTH > 1 against yosys' own evaluator (the ``eval`` pass), since the
    simlib.v model of yosys 0.23 selects single bits there: Y = A[S*WIDTH +: WIDTH]."""
    text = ("module bm(input [7:0] a, input [1:0] s, output [1:0] y);\n"
            "  \\$bmux #(.WIDTH(2), .S_WIDTH(2)) u (.A(a), .S(s), .Y(y));\nendmodule\n")
    (tmp_path / "bm.v").write_text(text)
    a = 0b11100100
    cmds = "; ".join(f"eval -set a 8'd{a} -set s 2'd{s} -show y" for s in range(4))
    log = yosys.run(f"read_verilog -icells bm.v; {cmds}", tmp_path)
    want = [int(m, 2) for m in re.findall(r"Eval result: \\y = 2'([01]{2})", log)]
    assert len(want) == 4
    design = hazlint.load_design([str(tmp_path / "bm.v")])
    for s in range(4):
        vals = {f"a[{b}]": (a >> b) & 1 for b in range(8)}
        vals.update({f"s[{b}]": (s >> b) & 1 for b in range(2)})
        out = design.evaluate(vals)
        assert out["y[0]"] | out["y[1]"] << 1 == want[s]
