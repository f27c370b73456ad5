"""The cell model: atomic cells and operators, and the sum-of-products option.

External references: the ternary extension of a function is checked against enumeration of the
values the function takes over the inputs' possible values (Eichelberger 1965), the transient
extension against the longest change sequence over every interleaving of the input changes
(Brzozowski and Esik 2003; tests/support/hazref.py), each on every input combination.
"""
from __future__ import annotations

import itertools

import pytest

from hazlint.analysis.cellmodel import (atomic_ternary, atomic_transient, decompose_design,
                                        node_expr, primes_of, sop_cover)
from hazlint.analysis.ternary import IntAlgebra
from hazlint.netlist.design import Design
from hazlint.netlist.logic import eval_expr
from support.hazref import _gate_changes

CELLS = {
    "mux": node_expr("mux", 3),
    "aoi22": ("not", ("or", ("and", ("in", 0), ("in", 1)), ("and", ("in", 2), ("in", 3)))),
    "maj3": ("or", ("and", ("in", 0), ("in", 1)), ("and", ("in", 0), ("in", 2)),
             ("and", ("in", 1), ("in", 2))),
    "xor3": ("xor", ("in", 0), ("in", 1), ("in", 2)),
    "const1": ("or", ("in", 0), ("not", ("in", 0))),
}


def _f(expr):
    return lambda bits: eval_expr(expr, list(bits), 1)


@pytest.mark.parametrize("name", sorted(CELLS))
def test_atomic_ternary_is_the_ternary_extension(name):
    expr = CELLS[name]
    n = max(i for i in range(4) if f"('in', {i})" in repr(expr)) + 1
    f = _f(expr)
    A = IntAlgebra(1)
    rails = {0: (1, 0), 1: (0, 1), "x": (1, 1)}
    for vals in itertools.product((0, 1, "x"), repeat=n):
        sets = [(0, 1) if v == "x" else (v,) for v in vals]
        want = {f(b) for b in itertools.product(*sets)}
        c0, c1 = atomic_ternary(A, expr, [rails[v] for v in vals])
        assert (bool(c0), bool(c1)) == (0 in want, 1 in want), (name, vals)


@pytest.mark.parametrize("name", sorted(CELLS))
def test_atomic_transient_is_the_longest_interleaving(name):
    expr = CELLS[name]
    n = max(i for i in range(4) if f"('in', {i})" in repr(expr)) + 1
    f = _f(expr)
    A = IntAlgebra(1)
    # every input: start value and 0..3 changes; the saturated algebra sees h = changes >= 2
    for ins in itertools.product(itertools.product((0, 1), range(4)), repeat=n):
        start, count = _gate_changes(f, tuple(ins))
        end = start ^ (count & 1)
        s, e, h = atomic_transient(A, expr, [(st, st ^ (k & 1), int(k >= 2)) for st, k in ins])
        assert (s, e) == (start, end)
        assert bool(h) == (count > (start != end)), (name, ins, count)


def test_mux_primes_and_cover():
    on, off = primes_of(node_expr("mux", 3), 3)
    # s&a, ~s&b and the consensus a&b (inputs: 0 = s, 1 = a, 2 = b)
    assert set(on) == {(0b011, 0b011), (0b100, 0b101), (0b110, 0b110)}
    assert sop_cover(node_expr("mux", 3), 3) == [(0b011, 0b011), (0b100, 0b101)]
    assert len(off) == 3


def test_sum_of_products_model_rewrites_a_mux():
    from hazlint.analysis.multichange import decide_sink
    from hazlint.analysis.circuits import build_graph
    g = build_graph(["s", "a", "b"], [("y", "mux", ["s", "a", "b"], 1)], ["y"])
    d = Design(graph=g, top="t", inputs=["s", "a", "b"], outputs=["y"])
    atomic = decide_sink(g, "<sink>y")
    sop = decide_sink(decompose_design(d).graph, "<sink>y")
    one = {k: v["any"].size for k, v in atomic.kinds.items()}
    # atomic: no single change glitches (common practice: a mux cell holds its output when
    # only the select moves with equal data); the sum of products s&a | ~s&b does
    assert one["static-1-hazard"] == 2
    assert sop.kinds["static-1-hazard"]["any"].size == 1
    assert sop.kinds["static-1-hazard"]["any"].changed == ["s"]
    h = decompose_design(d).graph
    assert h.nodes["y"]["op"] == "or" and sorted(h.nodes["y"]["inputs"]) == ["y$sop.t0",
                                                                              "y$sop.t1"]
