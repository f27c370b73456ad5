"""Arrival-time DP and the reconvergence rule on gate graphs built directly."""
from __future__ import annotations

import random

import networkx as nx
import pytest

from graphbuild import GraphBuilder
from hazlint.analysis.context import AnalysisContext
from hazlint.analysis.timing import ArrivalSolver, TimingGraph
from hazlint.netlist.library import Delay
from hazlint.plugins import get_rule

RULE = get_rule("unbalanced-reconvergence")


def run(design, config=None, **opts):
    # these tests look at the arrival-time machinery on plain outputs: the wider scope (the
    # default scope, glitch-sensitive sinks only, is checked in test_scope_option)
    opts.setdefault("scope", "outputs")
    ctx = AnalysisContext(design, config, {RULE.id: RULE.resolve_options(opts)})
    return list(RULE.check(design, ctx))


def mux(delay_not=1.0, sink_attrs=None, register_only=False):
    b = GraphBuilder()
    s, a, c = b.input("s"), b.input("a"), b.input("b")
    b.gate("sn", "not", [s], delay=delay_not)
    b.gate("t0", "and", [a, s])
    b.gate("t1", "and", [c, "sn"])
    b.gate("y", "or", ["t0", "t1"], line=40)
    if register_only:
        clk = b.input("clk")
        b.register("r", {"clock": clk, "data": "y"})
    else:
        b.output("y", "y", attrs=sink_attrs)
    return b.design()


def test_mux_with_inverter_skew_is_reported_at_the_or_gate():
    (d,) = run(mux())
    assert d.kind == "unbalanced-reconvergence" and d.line == 40
    ev = d.evidence
    assert ev["stem_node"] == "s" and ev["reconvergence_node"] == "y"
    assert ev["skew"] == 1.0 and ev["sink_nodes"] == ["<sink>y"]
    assert ev["slow_path"] == ["s", "sn", "t1", "y"] and ev["fast_path"] == ["s", "t0", "y"]
    assert [h.arrival for h in d.flows[1]] == [0.0, 1.0, 2.0, 3.0]


def test_balanced_branches_give_no_finding_and_threshold_applies():
    assert run(mux(delay_not=0.0)) == []        # zero-delay inverter: both branches arrive at 2
    assert run(mux(), min_skew=1.5) == []
    assert len(run(mux(), min_skew=1.0)) == 1


def test_rise_fall_spread_is_skew_under_the_delay_model():
    # both branches have one gate, but its min and max differ: the skew is max - min
    b = GraphBuilder()
    s = b.input("s")
    b.gate("p", "buf", [s], delay=Delay(1.0, 2.0, 1.0, 2.0))
    b.gate("q", "not", [s], delay=Delay(1.0, 2.0, 1.0, 2.0))
    b.gate("y", "and", ["p", "q"])
    b.output("y", "y")
    (d,) = run(b.design())
    assert d.evidence["skew"] == 1.0


def test_scope_option():
    assert RULE.resolve_options({})["scope"] == "async"     # the default: where glitches harm
    ctx = AnalysisContext(mux(), None, {RULE.id: RULE.resolve_options({})})
    assert list(RULE.check(mux(), ctx)) == []
    assert run(mux(register_only=True)) == []          # only a data pin downstream
    assert len(run(mux(register_only=True), scope="all")) == 1
    assert run(mux(), scope="async") == []              # a plain output is not asynchronous
    assert len(run(mux(sink_attrs={"hazlint_async": 1}), scope="async")) == 1


def test_quiet_input_is_not_a_stem():
    b = GraphBuilder()
    s = b.input("s", attrs={"hazlint_static": 1})
    a, c = b.input("a"), b.input("b")
    b.gate("sn", "not", [s])
    b.gate("t0", "and", [a, s])
    b.gate("t1", "and", [c, "sn"])
    b.gate("y", "or", ["t0", "t1"])
    b.output("y", "y")
    assert run(b.design()) == []


def test_worst_reconvergence_per_stem_and_sink():
    # s reconverges at r1 (skew 1) and again at r2 (skew 3); both reach y: only r2 is reported
    b = GraphBuilder()
    s = b.input("s")
    b.gate("d1", "not", [s])
    b.gate("r1", "and", [s, "d1"])
    b.gate("c1", "buf", [s])
    b.gate("c2", "buf", ["c1"])
    b.gate("c3", "buf", ["c2"])
    b.gate("c4", "buf", ["c3"])
    b.gate("r2", "or", ["r1", "c4"])
    b.output("y", "r2")
    b.output("z", "r1")
    found = {d.evidence["reconvergence_node"]: d for d in run(b.design())}
    assert set(found) == {"r1", "r2"}
    assert found["r2"].evidence["sink_nodes"] == ["<sink>y"]
    assert found["r1"].evidence["sink_nodes"] == ["<sink>z"]


# ---- the DP against path enumeration (the oracle; only on small graphs) -----------------------

def _random_dag(rng, n, equal=False):
    b = GraphBuilder()
    nodes = [b.input(f"i{k}") for k in range(3)]
    for k in range(n):
        fanin = rng.randint(1, 3)
        srcs = [rng.choice(nodes) for _ in range(fanin)]
        delays = [Delay(lo, lo + rng.choice([0.0, 0.5]), lo, lo + rng.choice([0.0, 1.0]))
                  for lo in (rng.choice([0.0, 1.0, 2.0]) for _ in srcs)]
        if equal:       # unit delays: many reconvergences with zero skew
            delays = [Delay.fixed(1.0)] * len(srcs)
        nodes.append(b.gate(f"g{k}", "and" if fanin > 1 else "buf", srcs, delay=delays))
    for k, x in enumerate(nodes[-3:]):
        b.output(f"o{k}", x)
    return b.design()


def _paths(g, stem, v, memo):
    """All (arrival_min, arrival_max, first branch) of paths stem -> v, by enumeration."""
    if v == stem:
        return [(0.0, 0.0, None)]
    if v in memo:
        return memo[v]
    d = g.nodes[v]
    out = []
    for pin, u in enumerate(d.get("inputs") or []):
        for lo, hi, br in _paths(g, stem, u, memo):
            dl = d["delays"][pin] if d["kind"] == "gate" else Delay(0, 0, 0, 0)
            out.append((lo + dl.min, hi + dl.max, br if br is not None else (v, pin)))
    memo[v] = out
    return out


def _dominator_meet(idom, stem, a, b):
    up = [a]
    while up[-1] != stem:
        up.append(idom[up[-1]])
    seen = set(up)
    while b not in seen:
        b = idom[b]
    return b


@pytest.mark.parametrize("seed", range(30))
def test_arrival_dp_matches_path_enumeration(seed):
    # oracles: arrival times by enumerating every path (small graphs only); "branches first meet
    # here" by networkx's immediate_dominators on the stem's cone (Cooper, Harvey & Kennedy 2001)
    rng = random.Random(seed)
    design = _random_dag(rng, rng.randint(4, 12))
    g = design.graph
    tg = TimingGraph.build(g)
    solver = ArrivalSolver(tg)
    for stem in sorted(n for n in g if g.nodes[n]["kind"] != "sink"):
        seen = {}
        st = solver.solve(tg.index[stem], on_reconvergence=lambda r: seen.setdefault(r.gate, r))
        cone = nx.descendants(g, stem) | {stem}
        idom = nx.immediate_dominators(g.subgraph(cone), stem)
        memo = {}
        visited = set(st.cone)
        full = ArrivalSolver(tg).solve(tg.index[stem], complete=True)
        assert set(full.cone) == {tg.index[n] for n in cone}
        for v in sorted(cone - {stem}, key=tg.index.get):
            vi = tg.index[v]
            ps = _paths(g, stem, v, memo)
            assert ps, v
            for sol in (st, full) if vi in visited else (full,):
                assert sol.arrival_min[vi] == min(p[0] for p in ps)
                assert sol.arrival_max[vi] == max(p[1] for p in ps)
                # the slowest path rebuilt from back-pointers really has the maximum arrival
                path = sol.path_to(vi, True)
                assert path[0][0] == tg.index[stem] and path[-1][2] == sol.arrival_max[vi]
            d = g.nodes[v]
            if d["kind"] != "gate":
                continue
            pins = []
            for pin, u in enumerate(d["inputs"]):
                sub = _paths(g, stem, u, memo)
                if not sub:
                    continue
                dl = d["delays"][pin]
                pins.append((pin, u, min(p[0] for p in sub) + dl.min,
                             max(p[1] for p in sub) + dl.max))
            skews = [ha - lb for pa, ua, _, ha in pins for pb, ub, lb, _ in pins
                     if pa != pb and (ua == stem or ub == stem or
                                      (ua != ub and _dominator_meet(idom, stem, ua, ub) == stem))]
            if skews:
                assert vi in seen and seen[vi].skew == max(skews)
            else:
                assert vi not in seen


@pytest.mark.parametrize("seed", range(25))
def test_batch_solver_equals_the_scalar_sweep(seed):
    # the numpy batch DP must reproduce the scalar DP exactly (same arithmetic and tie rules)
    from hazlint.analysis.timing import BatchArrivalSolver
    rng = random.Random(1000 + seed)
    design = _random_dag(rng, rng.randint(4, 24), equal=seed % 2 == 0)
    tg = TimingGraph.build(design.graph)
    scalar = ArrivalSolver(tg)
    stems = [i for i, n in enumerate(tg.order) if design.graph.nodes[n]["kind"] != "sink"]
    batch = BatchArrivalSolver(tg)
    batch.MAX_CELLS = len(tg.order) * 5       # several batches
    seen = set()
    for s, st, rs in batch.solve_all(stems, 0.0):
        seen.add(s)
        exp = []
        st2 = scalar.solve(s, on_reconvergence=lambda r: exp.append(r) if r.skew > 0 else None)
        assert rs == exp
        for r in rs:
            for slow, k in ((True, r.slow_pin), (False, r.fast_pin)):
                src = tg.fanin[r.gate][k][0]
                triple = lambda i, dl, a: (i, dl, a)  # noqa: E731
                assert st.chain(src, slow, triple) == st2.chain(src, slow, triple)
    assert seen == set(stems)


def test_rule_gives_the_same_findings_with_either_solver():
    rng = random.Random(7)
    design = _random_dag(rng, 40)
    out = []
    # scalar only; batch only (every scalar sweep over budget at once); scalar then batch
    for threshold, budget in ((10**9, 0), (0, 0), (0, 6)):
        ctx = AnalysisContext(design, None, {RULE.id: RULE.resolve_options({"scope": "outputs"})})
        ctx.BATCH_MIN_NODES = threshold
        ctx.SCALAR_BUDGET_MIN, ctx.SCALAR_BUDGET_DIVISOR = budget, 10**9
        out.append(sorted((d.evidence["stem_node"], d.evidence["reconvergence_node"],
                           d.evidence["sink_nodes"], d.evidence["skew"], d.evidence["fast_path"],
                           d.evidence["slow_path"], d.message) for d in RULE.check(design, ctx)))
    assert out[0] and out[0] == out[1] == out[2]


def test_work_budget_reports_what_it_left_out_and_keeps_the_rest_exact():
    # ISCAS-85 c432 (Brglez & Fujiwara 1985; netlist of the PyPI package circuitgraph==0.2.1)
    import importlib.resources
    import hazlint
    path = str(importlib.resources.files("circuitgraph") / "netlists" / "c432.v")
    design = hazlint.load_design(path)
    full = run(design)
    assert full and all(d.kind == "unbalanced-reconvergence" for d in full)
    n = len(AnalysisContext(design).timing_graph.order)
    part = run(design, work_budget=n * 10)
    inc = [d for d in part if d.kind == "analysis-incomplete"]
    assert len(inc) == 1 and inc[0].severity.name == "WARNING"
    left = inc[0].evidence["not_analysed"]
    assert left > 0 and inc[0].evidence["analysed"] > 0
    # what was analysed is exactly what the unbounded run says for those stems
    key = lambda d: (d.evidence["stem_node"], d.evidence["reconvergence_node"], d.message)
    got = {key(d) for d in part if d.kind != "analysis-incomplete"}
    assert got and got <= {key(d) for d in full} and len(got) < len(full)
    # no limit, or a budget above the need: the same findings as the default
    assert [key(d) for d in run(design, work_budget=0)] == [key(d) for d in full]


def test_work_budget_takes_stems_reaching_sensitive_sinks_first():
    b = GraphBuilder()
    s, k = b.input("s"), b.input("k")      # the only stems: every other input is read once
    for p, sink, attrs in (("p", "y_plain", None), ("q", "y_async", {"hazlint_async": 1})):
        st = s if p == "p" else k
        a, c = b.input(f"{p}a"), b.input(f"{p}b")
        b.gate(f"{p}n", "not", [st])
        b.gate(f"{p}0", "and", [a, st])
        b.gate(f"{p}1", "and", [c, f"{p}n"])
        b.gate(f"{p}y", "or", [f"{p}0", f"{p}1"])
        b.output(sink, f"{p}y", attrs=attrs)
    design = b.design()
    ctx = AnalysisContext(design)
    n = len(ctx.timing_graph.order)
    assert {d.evidence["stem_node"] for d in run(design)} == {"s", "k"}
    out = run(design, work_budget=n)       # room for one stem only
    stems = {d.evidence["stem_node"] for d in out if d.kind == "unbalanced-reconvergence"}
    assert stems == {"k"}                  # the stem reaching the asynchronous output
    (inc,) = [d for d in out if d.kind == "analysis-incomplete"]
    assert inc.evidence["stems_not_analysed"] == ["s"]


def test_fast_hop_is_the_same_value_as_the_dataclass_hop():
    # Hop.fast skips the frozen dataclass __init__; it must set exactly the declared fields
    # (a field added to Hop and forgotten there fails here), compare and hash equal, and stay
    # frozen
    import dataclasses
    from hazlint.diagnostics import Hop, Location
    names = [f.name for f in dataclasses.fields(Hop)]
    vals = ["n1", "g1", "nand", Location("a.v", 3, 5), "top.g1", 1.5, 4.0]
    a = Hop(**dict(zip(names, vals)))
    b = Hop.fast(*vals)
    assert a == b and hash(a) == hash(b) and vars(a) == vars(b)
    assert list(vars(b)) == names
    with pytest.raises(dataclasses.FrozenInstanceError):
        b.net = "other"
