"""The multi-input prover against brute force.

Reference (tests/support/hazref.py, written apart from the prover): every transition the change
model allows is enumerated and each hazard kind decided by Eichelberger's ternary simulation of
the transition cube (static), by counting changes over every interleaving of input changes
(Brzozowski and Esik; dynamic), and by the function's values at the cube's corners (function
versus logic hazard). On at least 300 random circuits of at most 8 sources, with quasi-static
sources, one-at-a-time groups and one-hot groups, the prover's verdict at every sink must equal
the reference for every kind and question, present and absent alike, and its witness must have
the smallest number of changing sources.
"""
from __future__ import annotations

import random

import networkx as nx
import pytest

from hazlint.analysis.changes import ChangeModel, Group
from hazlint.analysis.multichange import QUESTIONS, decide_sink
from hazlint.netlist.library import Delay
from support.hazref import KINDS, Reference, reference_verdict

CELLS = {   # complex cells as expression trees (atomic in the default model)
    "aoi21": ("not", ("or", ("and", ("in", 0), ("in", 1)), ("in", 2))),
    "oai21": ("not", ("and", ("or", ("in", 0), ("in", 1)), ("in", 2))),
    "maj3": ("or", ("and", ("in", 0), ("in", 1)), ("and", ("in", 0), ("in", 2)),
             ("and", ("in", 1), ("in", 2))),
    "andnot": ("and", ("in", 0), ("not", ("in", 1))),
}
OPS = ("and", "or", "nand", "nor", "xor", "xnor", "not", "buf", "mux", "aoi21", "oai21",
       "maj3", "andnot")


def random_circuit(rng: random.Random):
    n_src = rng.choice((2, 3, 4, 5, 6, 6, 7, 7, 8, 8))
    g = nx.DiGraph()
    sources = [f"s{i}" for i in range(n_src)]
    for s in sources:
        g.add_node(s, kind=rng.choice(("input", "input", "state")), name=s)
    nets = list(sources)
    unused = list(sources)
    for k in range(rng.randint(n_src, 16)):
        op = rng.choice(OPS)
        arity = {"not": 1, "buf": 1, "mux": 3, "aoi21": 3, "oai21": 3, "maj3": 3,
                 "andnot": 2}.get(op, rng.choice((2, 2, 3)))
        pool = nets[-5:] + nets
        ins = [rng.choice(pool) for _ in range(arity)]
        if unused and rng.random() < 0.9:        # every source read somewhere, mostly
            ins[rng.randrange(arity)] = unused.pop(rng.randrange(len(unused)))
        name = f"g{k}"
        attrs = dict(kind="gate", name=name, op=op, inputs=ins,
                     pins=[str(i) for i in range(arity)], delays=[Delay.unit()] * arity)
        if op in CELLS:
            attrs.update(op="expr", expr=CELLS[op])
        g.add_node(name, **attrs)
        for p, u in enumerate(ins):
            if g.has_edge(u, name):
                g.edges[u, name]["pins"].append(p)
            else:
                g.add_edge(u, name, pins=[p])
        nets.append(name)
    gates = [n for n in nets if n not in sources]
    # the gate with the largest cone first, then two more
    gates.sort(key=lambda n: -len(nx.ancestors(g, n)))
    sinks = []
    for o in dict.fromkeys(gates[:1] + rng.sample(gates, min(2, len(gates)))):
        s = f"<sink>{o}"
        g.add_node(s, kind="sink", role="reset", inputs=[o], pins=["in"], name=o)
        g.add_edge(o, s, pins=[0])
        sinks.append(s)
    # the change model: some sources quasi-static, some groups
    quiet = [s for s in sources if rng.random() < 0.15]
    movable = [s for s in sources if s not in quiet]
    groups = []
    rng.shuffle(movable)
    if len(movable) >= 3 and rng.random() < 0.4:
        groups.append(Group("gray", "one-at-a-time", tuple(movable[:rng.randint(2, 3)])))
        movable = movable[len(groups[0].members):]
    if len(movable) >= 2 and rng.random() < 0.3:
        groups.append(Group("state", "one-hot", tuple(movable[:rng.randint(2, 3)])))
    return g, sources, sinks, ChangeModel(quiet=frozenset(quiet), groups=tuple(groups))


def _cone_sources(g, sink, sources):
    anc = nx.ancestors(g, sink)
    return [s for s in sources if s in anc]


def reference(g, sources, sink, model):
    cone_src = _cone_sources(g, sink, sources)
    want, ref = reference_verdict(
        g, sink, cone_src, quiet=[s for s in cone_src if s in model.quiet],
        one_at_a_time=[[m for m in gr.members if m in cone_src] for gr in model.groups
                       if gr.kind == "one-at-a-time"],
        one_hot=[[m for m in gr.members if m in cone_src] for gr in model.groups
                 if gr.kind == "one-hot"])
    return cone_src, want, ref


def check_engine(g, sink, model, options, cone_src, want, ref):
    """Compare one engine's verdict with the reference; returns (questions compared, any
    hazard present)."""
    got = decide_sink(g, sink, model, options)
    compared = 0
    for k in KINDS:
        for q in QUESTIONS:
            f = got.kinds[k][q]
            if f.status == "inconclusive":
                # only SAT may leave a logic hazard of three or more changes open
                assert got.method == "sat" and q == "logic", (k, q, f)
                continue
            compared += 1
            assert (f.status == "present") == (want[k][q] is not None), (sink, k, q, f, want)
            if f.status == "present":
                # the witness is allowed, is what it claims, and is of the smallest size
                assert got.model.allows(f.before, f.after)
                cls = ref.classify({s: f.before[s] for s in cone_src},
                                   {s: f.after[s] for s in cone_src})
                assert cls[k] is not None and (q == "any" or cls[k] == q), (k, q, cls)
                if f.minimal:
                    assert f.size == want[k][q], (k, q, f.size, want[k][q])
    return compared, got.status == "hazard"


@pytest.mark.slow
def test_prover_equals_brute_force_on_random_circuits():
    rng = random.Random(2024)
    engines = {"bdd": {"engine_sources": 100}, "sat": {"engine_sources": 0,
                                                       "conflict_budget": 100_000}}
    circuits = sinks = 0
    compared = {e: 0 for e in engines}
    present = 0
    big = 0
    while circuits < 300:
        g, sources, sink_list, model = random_circuit(rng)
        circuits += 1
        for s in sink_list:
            sinks += 1
            cone_src, want, ref = reference(g, sources, s, model)
            big += len(cone_src) >= 6
            for e, opts in engines.items():
                n, hz = check_engine(g, s, model, opts, cone_src, want, ref)
                compared[e] += n
            present += hz
    assert circuits >= 300 and sinks >= 300 and big >= 30
    # the BDD engine decides every question; SAT all but some multi-change logic questions
    assert compared["bdd"] == 9 * sinks and compared["sat"] > 8 * sinks
    # both verdicts occur often enough for the comparison to mean something
    assert 0.1 * sinks < present < 0.95 * sinks, (present, sinks)


def test_reference_agrees_with_textbook_cases():
    # NAND(0,1) = NAND(1,0) = 1 but NAND(1,1) = 0: a static-1 function hazard when both change
    # (Unger 1969, from memory)
    g = nx.DiGraph()
    for s in ("a", "b"):
        g.add_node(s, kind="input", name=s)
    g.add_node("y", kind="gate", op="nand", inputs=["a", "b"], name="y")
    g.add_edge("a", "y", pins=[0])
    g.add_edge("b", "y", pins=[1])
    ref = Reference(g, "y", ["a", "b"])
    assert ref.classify({"a": 0, "b": 1}, {"a": 1, "b": 0})["static-1-hazard"] == "function"
    assert ref.classify({"a": 0, "b": 1}, {"a": 1, "b": 1}) == {k: None for k in KINDS}
