"""Ternary (Eichelberger) and transient (Brzozowski-Esik) simulation."""
from __future__ import annotations

import itertools

import pytest

from hazlint.analysis.prove import loop_behaviour
from hazlint.analysis.ternary import (IntAlgebra, classify_explicit, function_hazard, cone,
                                      procedure_a_b, ternary_gate, transient_gate)
from hazlint.analysis.circuits import build_graph
from hazlint.netlist.library import Delay
from hazlint.netlist.logic import eval_op

OPS = ("and", "or", "nand", "nor", "xor", "xnor")
T = {"0": (1, 0), "1": (0, 1), "X": (1, 1)}


def _lub_extension(op, vals):
    """The ternary extension by definition: the set of outputs over every binary completion of
    the X inputs (Eichelberger 1965; common practice)."""
    outs = set()
    choices = [(0, 1) if v == "X" else (int(v),) for v in vals]
    for combo in itertools.product(*choices):
        outs.add(eval_op(op, list(combo), 1))
    return "X" if len(outs) == 2 else str(outs.pop())


@pytest.mark.parametrize("op", OPS + ("not", "buf"))
def test_dual_rail_gates_are_the_ternary_extension(op):
    A = IntAlgebra(1)
    arities = (1,) if op in ("not", "buf") else (2, 3)
    for n in arities:
        for vals in itertools.product("01X", repeat=n):
            c0, c1 = ternary_gate(A, op, [T[v] for v in vals])
            got = "X" if c0 and c1 else "1" if c1 else "0"
            assert got == _lub_extension(op, vals), (op, vals)


def _words(max_changes=3):
    """Alternating binary waveforms: (start value, number of changes)."""
    return [(s, c) for s in (0, 1) for c in range(max_changes + 1)]


def _max_output_changes(op, words):
    """Brute force over every interleaving of the inputs' changes (arbitrary delays)."""
    tokens = [i for i, (_, c) in enumerate(words) for _ in range(c)]
    best = 0
    for perm in set(itertools.permutations(tokens)):
        cur = [s for s, _ in words]
        out = eval_op(op, cur, 1)
        changes = 0
        for i in perm:
            cur[i] ^= 1
            v = eval_op(op, cur, 1)
            if v != out:
                changes += 1
                out = v
        best = max(best, changes)
    return best


@pytest.mark.parametrize("op", OPS)
def test_transient_gates_match_brute_force_interleavings(op):
    # Brzozowski & Esik, "Algebras for hazard detection" (2003): the worst-case number of
    # output changes under arbitrary delays; our saturated form must give the same yes/no
    A = IntAlgebra(1)
    for words in itertools.product(_words(), repeat=2):
        ins = []
        for s, c in words:
            e = s ^ (c & 1)
            ins.append((s, e, 1 if c > (s ^ e) else 0))
        s, e, h = transient_gate(A, op, ins)
        final = [s0 ^ (c & 1) for s0, c in words]
        assert s == eval_op(op, [w[0] for w in words], 1)
        assert e == eval_op(op, final, 1)
        brute = _max_output_changes(op, list(words))
        assert bool(h) == (brute > (s ^ e)), (op, words, brute)


def _sop():
    # F = A&~B | B&C
    return build_graph(["A", "B", "C"], [("nb", "not", ["B"], 1), ("t1", "and", ["A", "nb"], 1),
                                         ("t2", "and", ["B", "C"], 1),
                                         ("F", "or", ["t1", "t2"], 1)], ["F"])


def test_textbook_static_1_hazard():
    g = _sop()
    # common practice (any logic design text): B falling with A = C = 1 is a static-1 hazard
    assert classify_explicit(g, "<sink>F", {"A": 1, "B": 1, "C": 1},
                             {"A": 1, "B": 0, "C": 1}) == "static-1-hazard"
    # with A = 0 only the B&C term changes: a clean 1 -> 0
    assert classify_explicit(g, "<sink>F", {"A": 0, "B": 1, "C": 1},
                             {"A": 0, "B": 0, "C": 1}) is None
    # adding the consensus term A&C removes it (consensus theorem, common practice)
    g2 = build_graph(["A", "B", "C"], [("nb", "not", ["B"], 1), ("t1", "and", ["A", "nb"], 1),
                                       ("t2", "and", ["B", "C"], 1), ("t3", "and", ["A", "C"], 1),
                                       ("F", "or", ["t1", "t2", "t3"], 1)], ["F"])
    assert classify_explicit(g2, "<sink>F", {"A": 1, "B": 1, "C": 1},
                             {"A": 1, "B": 0, "C": 1}) is None


def test_pos_static_0_dual_and_dynamic():
    # F = (A | B) & (~B | C): static-0 when B changes with A = C = 0 (the dual, common practice)
    g = build_graph(["A", "B", "C"], [("nb", "not", ["B"], 1), ("s1", "or", ["A", "B"], 1),
                                      ("s2", "or", ["nb", "C"], 1), ("F", "and", ["s1", "s2"], 1)],
                    ["F"])
    assert classify_explicit(g, "<sink>F", {"A": 0, "B": 1, "C": 0},
                             {"A": 0, "B": 0, "C": 0}) == "static-0-hazard"
    # multi-level: G = F1 & B where F1 = A&~B | B&C has the static-1 hazard: three paths
    # from B give up to three changes of G when B falls with A = C = 1 (dynamic hazard)
    d = build_graph(["A", "B", "C"], [("nb", "not", ["B"], 1), ("t1", "and", ["A", "nb"], 1),
                                      ("t2", "and", ["B", "C"], 1), ("f", "or", ["t1", "t2"], 1),
                                      ("bd", "buf", ["B"], 5), ("G", "and", ["f", "bd"], 1)],
                    ["G"])
    assert classify_explicit(d, "<sink>G", {"A": 1, "B": 1, "C": 1},
                             {"A": 1, "B": 0, "C": 1}) == "dynamic-hazard"
    assert classify_explicit(d, "<sink>G", {"A": 0, "B": 1, "C": 1},
                             {"A": 0, "B": 0, "C": 1}) is None


def test_function_hazard_versus_logic_hazard():
    # F = A xor B: A and B changing together 00 -> 11 passes through 01 or 10: a function
    # hazard (no implementation avoids it; common practice)
    g = build_graph(["A", "B"], [("F", "xor", ["A", "B"], 1)], ["F"])
    o = cone(g, ["<sink>F"])
    assert function_hazard(g, o, "<sink>F", {"A": 0, "B": 0}, {"A": 1, "B": 1})
    # F = A & B from 01 to 10: 00 on the way is also 0, 11 is not: also a function hazard
    h = build_graph(["A", "B"], [("F", "and", ["A", "B"], 1)], ["F"])
    o = cone(h, ["<sink>F"])
    assert function_hazard(h, o, "<sink>F", {"A": 0, "B": 1}, {"A": 1, "B": 0})
    # F = A | B from 01 to 11: every intermediate vector is 1: no function hazard
    k = build_graph(["A", "B"], [("F", "or", ["A", "B"], 1)], ["F"])
    o = cone(k, ["<sink>F"])
    assert not function_hazard(k, o, "<sink>F", {"A": 0, "B": 1}, {"A": 1, "B": 1})


def _loop(gates, inputs):
    g = build_graph(inputs, [], [])
    for name, op, ins in gates:
        g.add_node(name, kind="gate", op=op, inputs=ins, pins=[str(i) for i in range(len(ins))],
                   delays=[Delay.unit()] * len(ins), name=name)
        for p, u in enumerate(ins):
            if g.has_edge(u, name):
                g.edges[u, name]["pins"].append(p)
            else:
                g.add_edge(u, name, pins=[p])
    return g


def test_loops_oscillation_storage_and_procedure_b():
    ring = _loop([("n1", "nand", ["en", "n3"]), ("n2", "not", ["n1"]), ("n3", "not", ["n2"])],
                 ["en"])
    v = loop_behaviour(ring, ["n1", "n2", "n3"])
    # an odd inverting ring enabled by en = 1 has no stable state (common practice)
    assert v.behaviour == "oscillation" and v.inputs == {"en": 1}
    latch = _loop([("q", "nor", ["R", "qn"]), ("qn", "nor", ["S", "q"])], ["S", "R"])
    assert loop_behaviour(latch, ["q", "qn"]).behaviour == "storage"
    # Eichelberger's procedures: from S = R = 1 (q = qn = 0) to S = R = 0 the NOR latch's next
    # state is undetermined (critical race / oscillation; common practice)
    A = IntAlgebra(1)
    state = {"S": (0, 1), "R": (0, 1), "q": (1, 0), "qn": (1, 0)}
    res = procedure_a_b(latch, ["q", "qn"], state, {"S": 1, "R": 1}, {"S": 0, "R": 0}, A)
    assert res["q"] == (1, 1) and res["qn"] == (1, 1)
    # releasing only S (S = 1, R = 0 -> S = 0) leaves the latch set: q = 1, qn = 0
    state = {"S": (0, 1), "R": (1, 0), "q": (0, 1), "qn": (1, 0)}
    res = procedure_a_b(latch, ["q", "qn"], state, {"S": 1, "R": 0}, {"S": 0, "R": 0}, A)
    assert res["q"] == (0, 1) and res["qn"] == (1, 0)


def test_consensus_fix_copies_only_the_cone_it_checks():
    # F = A&~B | B&C (static-1 on B falling, A = C = 1) beside an unrelated output G that
    # reads B and D: the fix at F's OR gate is the consensus term A&C (consensus theorem,
    # common practice), verified on a copy of F's cone alone
    from hazlint.analysis.fixes import add_term, consensus_fix
    g = build_graph(["A", "B", "C", "D"],
                    [("nb", "not", ["B"], 1), ("t1", "and", ["A", "nb"], 1),
                     ("t2", "and", ["B", "C"], 1), ("F", "or", ["t1", "t2"], 1),
                     ("G", "xor", ["B", "D"], 1)], ["F", "G"])
    before, after = {"A": 1, "B": 1, "C": 1, "D": 0}, {"A": 1, "B": 0, "C": 1, "D": 0}
    fix = consensus_fix(g, "<sink>F", "static-1-hazard", before, after, ["F"])
    assert fix is not None and fix["verified"] and fix["term"] == [["A", True], ["C", True]]
    term = frozenset({("A", True), ("C", True)})
    part = add_term(g, "F", term, "static-1-hazard", roots=["<sink>F"])
    whole = add_term(g, "F", term, "static-1-hazard")
    assert "G" not in part and "D" not in part and "G" in whole
    assert set(whole.nodes) - set(part.nodes) == {"G", "D", "<sink>G"}
    assert sorted(part.edges) == sorted(e for e in whole.edges if e[1] in part)
    assert classify_explicit(g, "<sink>F", before, after) == "static-1-hazard"
    for h in (part, whole):
        assert classify_explicit(h, "<sink>F", before, after) is None
