"""Symbolic ternary and transient simulation with BDDs.

The gate semantics of :mod:`hazlint.analysis.ternary` (dual-rail ternary, saturated transient
algebra) evaluated over BDDs instead of bit vectors: every free source of the cone that does not
change becomes a BDD variable, so one pass answers the hazard question for *all* values of the
non-changing inputs at once (Bryant, "Graph-based algorithms for Boolean function
manipulation", IEEE Trans. Computers C-35, 1986). The BDD package is ``dd``: its CUDD backend
when importable, else the pure-Python ``dd.autoref``.

Work is bounded: a node budget (live nodes in the manager) and a time budget; past either the
check raises :class:`Budget`, and the caller falls back to SAT or reports "inconclusive".
"""
from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, Mapping, Sequence

try:  # pragma: no cover - depends on the installed wheel
    from dd import cudd as _bdd_mod
    BACKEND = "cudd"
except ImportError:  # pragma: no cover
    from dd import autoref as _bdd_mod
    BACKEND = "autoref"

from .ternary import HAZARD_KINDS, bool_gate, free_sources, hazard_planes, propagate


class Budget(Exception):
    """A symbolic or SAT budget was exceeded; ``reason`` says which."""

    def __init__(self, reason: str):
        super().__init__(reason)
        self.reason = reason


def new_manager(memory_mb: int | None = None):
    """A fresh BDD manager; ``memory_mb`` sizes CUDD's tables (its default allocation costs
    tens of milliseconds, more than a small cone needs)."""
    if BACKEND == "cudd" and memory_mb:
        return _bdd_mod.BDD(memory_estimate=memory_mb * 2 ** 20, initial_cache_size=2 ** 14)
    return _bdd_mod.BDD()


class BDDAlgebra:
    """The algebra interface of :class:`hazlint.analysis.ternary.IntAlgebra` over BDD nodes."""

    def __init__(self, bdd=None, node_budget: int = 200_000, deadline: float | None = None):
        self.bdd = bdd or _bdd_mod.BDD()
        self.true = self.bdd.true
        self.false = self.bdd.false
        self.node_budget = node_budget
        self.deadline = deadline
        self._ops = 0

    def _tick(self):
        self._ops += 1
        if self._ops & 255 == 0:
            if self.deadline is not None and time.perf_counter() > self.deadline:
                raise Budget("BDD time budget exceeded")
            # counting live nodes is costly in CUDD: look less often
            if self._ops & 4095 == 0 and len(self.bdd) > self.node_budget:
                raise Budget(f"BDD exceeded {self.node_budget} nodes")

    def var(self, name: str):
        self.bdd.declare(name)
        return self.bdd.var(name)

    def not_(self, a):
        return ~a

    def and_(self, *xs):
        r = self.true
        for x in xs:
            r = r & x
            self._tick()
            if r == self.false:
                break
        return r

    def or_(self, *xs):
        r = self.false
        for x in xs:
            r = r | x
            self._tick()
            if r == self.true:
                break
        return r

    def xor(self, a, b):
        self._tick()
        return self.bdd.apply("xor", a, b)

    def and_exists(self, u, w, qvars):
        """``exists qvars: u & w`` (one relational product with CUDD)."""
        self._tick()
        if BACKEND == "cudd" and hasattr(_bdd_mod, "and_exists"):
            return _bdd_mod.and_exists(u, w, qvars)
        return self.bdd.exist(qvars, u & w)


@dataclass
class HazardProof:
    """The answer for one hazard kind at one target for one (partly free) transition."""

    kind: str
    status: str                            # "present" | "absent" | "inconclusive"
    witness: dict[str, int] | None = None  # values of the free, non-changing sources
    reason: str = ""
    method: str = ""                       # "bdd" | "sat" | "simulation" | "structural"
    function_hazard: bool | None = None    # for multi-input changes: no logic fixes it

    def to_json(self) -> dict[str, Any]:
        return {"kind": self.kind, "status": self.status, "witness": self.witness,
                "reason": self.reason, "method": self.method,
                "function_hazard": self.function_hazard}


def bdd_hazards(graph, order: Sequence[str], target: str, changes: Mapping[str, tuple[int, int]],
                fixed: Mapping[str, int] | None = None, kinds: Sequence[str] = HAZARD_KINDS,
                node_budget: int = 200_000, time_budget: float = 2.0) -> dict[str, HazardProof]:
    """Decide each hazard kind at ``target`` for the change ``changes`` over all values of the
    free sources not in ``changes`` or ``fixed``. Raises :class:`Budget` past a budget.

    For a change of two or more sources a logic-hazard witness (one no function hazard
    explains) is preferred; the proof says whether the witness is a function hazard.
    """
    fixed = dict(fixed or {})
    deadline = time.perf_counter() + time_budget
    A = BDDAlgebra(node_budget=node_budget, deadline=deadline)
    srcs = free_sources(graph, order)
    free = [n for n in srcs if n not in changes and n not in fixed]
    names = {n: f"v{k}" for k, n in enumerate(free)}
    va, vb = {}, {}
    for n in srcs:
        if n in changes:
            a, b = changes[n]
            va[n] = A.true if a else A.false
            vb[n] = A.true if b else A.false
        elif n in fixed:
            va[n] = vb[n] = A.true if fixed[n] else A.false
        else:
            va[n] = vb[n] = A.var(names[n])
    planes = hazard_planes(graph, order, target, A, va, vb, srcs)
    if len(A.bdd) > node_budget:
        raise Budget(f"BDD exceeded {node_budget} nodes")
    fh = None
    moving = [n for n, (a, b) in changes.items() if a != b]
    if 2 <= len(moving) <= 4:
        fh = _function_hazard_bdd(graph, order, target, A, va, vb, srcs, moving)
    back = {v: n for n, v in names.items()}
    out: dict[str, HazardProof] = {}
    for k in kinds:
        u = planes[k]
        if u == A.false:
            out[k] = HazardProof(k, "absent", method="bdd",
                                 reason=f"BDD over {len(free)} free inputs ({BACKEND})")
            continue
        is_fh = None
        if fh is not None:
            logic = u & ~fh[k]
            is_fh = logic == A.false
            if not is_fh:
                u = logic
        pick = A.bdd.pick(u, care_vars=sorted(names.values())) or {}
        wit = {back[v]: int(bool(x)) for v, x in pick.items() if v in back}
        out[k] = HazardProof(k, "present", witness=wit, method="bdd", function_hazard=is_fh)
    return out


def _function_hazard_bdd(graph, order, target, A, va, vb, srcs, moving):
    """Where a function hazard exists, as BDDs per kind (2^k binary corners, k <= 4)."""
    k = len(moving)
    corners = []
    for c in range(1 << k):
        vals = {}
        for n in srcs:
            if n in moving:
                vals[n] = vb[n] if (c >> moving.index(n)) & 1 else va[n]
            else:
                vals[n] = va[n]
        corners.append(propagate(graph, order, vals, A, bool_gate)[target])
    fa, fb = corners[0], corners[-1]
    static = A.false
    for f in corners[1:]:
        static = A.or_(static, A.xor(f, fa))
    dyn = A.false
    for c in range(1 << k):
        for d in range(1 << k):
            if d & c == c and d != c:
                # f(c) == f(B) and f(d) == f(A): the output goes back after reaching its end value
                dyn = A.or_(dyn, A.and_(A.not_(A.xor(corners[c], fb)),
                                        A.not_(A.xor(corners[d], fa))))
    dyn = A.and_(dyn, A.xor(fa, fb))
    return {"static-1-hazard": static, "static-0-hazard": static, "dynamic-hazard": dyn}
