"""Symbolic (BDD) and SAT hazard checks against brute-force explicit ternary simulation."""
from __future__ import annotations

import random

import pytest

from hazlint.analysis.satcheck import sat_hazards
from hazlint.analysis.symbolic import Budget, bdd_hazards
from hazlint.analysis.ternary import (HAZARD_KINDS, IntAlgebra, classify_explicit, cone,
                                      free_sources, hazard_planes)
from hazlint.analysis.circuits import random_circuit


def _brute_force(g, order, target, x):
    """Every side-input vector at once, one lane each (explicit ternary and transient
    simulation, no symbolic work)."""
    srcs = free_sources(g, order)
    side = [n for n in srcs if n != x]
    width = 1 << len(side)
    A = IntAlgebra(width)
    va, vb = {x: 0}, {x: A.mask}
    for i, n in enumerate(side):
        va[n] = vb[n] = sum(1 << c for c in range(width) if (c >> i) & 1)
    planes = hazard_planes(g, order, target, A, va, vb, srcs)
    return {k: planes[k] != 0 for k in HAZARD_KINDS}


def _cases(seed, count, max_inputs=10):
    rng = random.Random(seed)
    for _ in range(count):
        g = random_circuit(rng, rng.randint(2, max_inputs), rng.randint(4, 22), 1)
        target = next(n for n, d in g.nodes(data=True) if d["kind"] == "sink")
        order = cone(g, [target])
        srcs = free_sources(g, order)
        if not srcs:
            continue
        yield g, target, order, rng.choice(srcs)


def test_bdd_equals_brute_force_and_witnesses_replay():
    seen = {k: 0 for k in HAZARD_KINDS}
    for g, target, order, x in _cases(7, 60):
        brute = _brute_force(g, order, target, x)
        got = bdd_hazards(g, order, target, {x: (0, 1)})
        for k in HAZARD_KINDS:
            assert (got[k].status == "present") == brute[k], (k, x)
            if brute[k]:
                seen[k] += 1
                before = dict(got[k].witness, **{x: 0})
                after = dict(got[k].witness, **{x: 1})
                # the kinds exclude each other (static needs f(A) == f(B), dynamic not)
                assert classify_explicit(g, target, before, after, order) == k
    # the random circuits exercise every class
    assert all(v > 0 for v in seen.values()), seen


def test_sat_equals_bdd():
    for g, target, order, x in _cases(11, 40):
        b = bdd_hazards(g, order, target, {x: (1, 0)})
        s = sat_hazards(g, order, target, {x: (1, 0)})
        for k in HAZARD_KINDS:
            assert s[k].status == b[k].status, (k, x)
            if s[k].status == "present":
                before = dict(s[k].witness, **{x: 1})
                after = dict(s[k].witness, **{x: 0})
                assert classify_explicit(g, target, before, after, order) == k


def test_budgets_give_inconclusive_not_a_pass():
    rng = random.Random(3)
    g = random_circuit(rng, 10, 60, 1, ops=("xor", "and", "or", "nand"))
    target = next(n for n, d in g.nodes(data=True) if d["kind"] == "sink")
    order = cone(g, [target])
    from hazlint.analysis.prove import path_count
    x = next(s for s in free_sources(g, order) if path_count(g, order, s, target) > 1)
    with pytest.raises(Budget):
        bdd_hazards(g, order, target, {x: (0, 1)}, node_budget=1)
    res = sat_hazards(g, order, target, {x: (0, 1)}, conflict_budget=0, time_budget=0.0)
    # past the time budget every query is inconclusive, with the reason
    assert all(p.status == "inconclusive" and p.reason for p in res.values())
