"""The combinational-loop rule on gate graphs built directly (no front end)."""
from __future__ import annotations

import random

import networkx as nx
import pytest

from graphbuild import GraphBuilder
from hazlint.analysis.context import AnalysisContext
from hazlint.diagnostics import Severity
from hazlint.plugins import get_rule

RULE = get_rule("combinational-loop")


def run(design, **opts):
    ctx = AnalysisContext(design, None, {"combinational-loop": RULE.resolve_options(opts)})
    return list(RULE.check(design, ctx))


def test_two_gate_loop_reported_once_at_first_gate_in_source_order():
    b = GraphBuilder()
    a, c = b.input("a"), b.input("c")
    b.gate("n2", "and", ["n1", c], line=20)      # written later in the file ...
    b.gate("n1", "or", [a, "n2"], line=10)       # ... than this one
    b.output("y", "n2")
    (d,) = run(b.design())
    # n1 = a | n2, n2 = n1 & c: set by a, cleared by c = 0, held otherwise (a set/reset
    # latch by its state table, whatever the gates)
    assert d.kind == "combinational-loop" and d.evidence["storage_element"] == "set/reset latch"
    assert d.severity == Severity.INFO
    assert d.line == 10 and d.evidence["cycle"] == ["n1", "n2"]
    assert set(d.evidence["scc"]) == {"n1", "n2"}
    assert [h.net for h in d.flows[0]] == ["n1", "n2", "n1"]


def test_self_loop_and_acyclic_graph():
    b = GraphBuilder()
    a = b.input("a")
    b.gate("x", "xor", [a, "x"])
    b.output("y", "x")
    (d,) = run(b.design())
    # x = a ^ x has no stable state for a = 1
    assert d.evidence["cycle"] == ["x"] and d.kind == "oscillation"
    assert d.evidence["loop"]["witness"] == {"inputs": {"a": 1}}
    b2 = GraphBuilder()
    a = b2.input("a")
    b2.gate("x", "not", [a])
    b2.output("y", "x")
    assert run(b2.design()) == []


def test_cross_coupled_nand_pair_is_lower_severity_and_configurable():
    b = GraphBuilder()
    s_n, r_n = b.input("s_n"), b.input("r_n")
    b.gate("q", "nand", [s_n, "qb"])
    b.gate("qb", "nand", [r_n, "q"])
    b.output("q", "q")
    (d,) = run(b.design())
    assert d.evidence["storage_element"] == "set/reset latch" and d.severity == Severity.INFO
    (d,) = run(b.design(), element_severity="error")
    assert d.severity == Severity.ERROR
    (d,) = run(b.design(), storage_pair_severity="warning")      # the old option name
    assert d.severity == Severity.WARNING
    # a NAND and a NOR: stores (held for s_n = 1, r_n = 0) but every other input forces the
    # same state: storage, not a set/reset latch
    b = GraphBuilder()
    s_n, r_n = b.input("s_n"), b.input("r_n")
    b.gate("q", "nand", [s_n, "qb"])
    b.gate("qb", "nor", [r_n, "q"])
    b.output("q", "q")
    (d,) = run(b.design())
    assert d.evidence["storage_element"] is None and d.severity == Severity.WARNING
    assert d.evidence["behaviour"] == "storage"


def test_register_breaks_loop_but_single_latch_loop_is_its_own_case():
    b = GraphBuilder()
    clk, a = b.input("clk"), b.input("a")
    q = b.register("r", {"clock": clk})
    b.gate("nx", "xor", [a, q])
    b.pin("r", "data", "nx")
    b.output("y", q)
    assert run(b.design()) == []          # flip-flop feedback is not a loop
    b = GraphBuilder()
    en, a = b.input("en"), b.input("a")
    q = b.register("l", {"enable": en}, kind="latch")
    b.gate("nx", "xor", [a, q])
    b.pin("l", "data", "nx")
    b.output("y", q)
    (d,) = run(b.design())
    assert d.kind == "combinational-loop" and d.severity == Severity.WARNING
    assert d.evidence["through_latch"] == ["l.q"] and "transparent latch" in d.message
    assert run(b.design(), latch_loops=False) == []


def _random_design(rng: random.Random, n: int, density: float) -> GraphBuilder:
    b = GraphBuilder()
    ins = [b.input(f"i{k}") for k in range(3)]
    names = [f"g{k}" for k in range(n)]
    lines = list(range(100, 100 + n))
    rng.shuffle(lines)
    for k, name in enumerate(names):
        fanin = rng.randint(1, 3)
        srcs = [rng.choice(names + ins) if rng.random() < density else rng.choice(ins)
                for _ in range(fanin)]
        op = rng.choice(["and", "or", "xor"]) if fanin > 1 else "not"
        b.gate(name, op, srcs, line=lines[k])
    for k, name in enumerate(names[:3]):
        b.output(f"o{k}", name)
    return b


@pytest.mark.parametrize("seed", range(40))
def test_against_networkx_cycle_algorithms(seed):
    rng = random.Random(seed)
    b = _random_design(rng, rng.randint(3, 11), 0.5)
    design = b.design()
    g = design.graph
    found = run(design)
    # reference: networkx's strongly connected components (Tarjan) plus self-loops
    ref = [frozenset(c) for c in nx.strongly_connected_components(g)
           if len(c) > 1 or g.has_edge(next(iter(c)), next(iter(c)))]
    assert sorted(map(sorted, ref)) == sorted(sorted(d.evidence["scc"]) for d in found)
    for d in found:
        scc = set(d.evidence["scc"])
        cycle = d.evidence["cycle"]
        start = cycle[0]
        assert d.line == min(g.nodes[n]["line"] for n in scc)
        assert g.nodes[start]["line"] == d.line
        assert len(set(cycle)) == len(cycle) and set(cycle) <= scc
        for u, v in zip(cycle, cycle[1:] + cycle[:1]):
            assert g.has_edge(u, v)
        # reference: the shortest simple cycle through the start gate (networkx simple_cycles)
        shortest = min(len(c) for c in nx.simple_cycles(g.subgraph(scc)) if start in c)
        assert len(cycle) == shortest
