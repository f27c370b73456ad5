"""The hazard conditions as a SAT problem (package ``python-sat``), for cones whose BDDs exceed
the node budget.

The same gate semantics as :mod:`hazlint.analysis.ternary`, evaluated over an algebra whose values
are CNF literals: every AND/OR/XOR becomes a fresh variable with its Tseitin clauses (Tseitin,
"On the complexity of derivation in propositional calculus", 1968), with constant folding and
structural hashing so shared sub-terms are encoded once. One satisfying assignment is a witness;
unsatisfiable proves the hazard absent. Each query runs under a conflict budget; past it the
answer is "inconclusive".
"""
from __future__ import annotations

import time
from typing import Mapping, Sequence

from pysat.solvers import Solver

from .symbolic import Budget, HazardProof
from .ternary import HAZARD_KINDS, free_sources, hazard_planes

SOLVER = "glucose4"   # supports conflict budgets and assumptions


class CNFAlgebra:
    """Literals as ints; variable 1 is constant true."""

    def __init__(self, var_budget: int = 2_000_000):
        self.clauses: list[list[int]] = [[1]]
        self.nvars = 1
        self.true = 1
        self.false = -1
        self._memo: dict[tuple, int] = {}
        self.var_budget = var_budget
        # for cone-of-influence loading: a defined variable -> (its clauses, its operands)
        self.defs: dict[int, tuple[list[list[int]], tuple[int, ...]]] = {}

    def new(self) -> int:
        self.nvars += 1
        if self.nvars > self.var_budget:
            raise Budget(f"CNF exceeded {self.var_budget} variables")
        return self.nvars

    def not_(self, a: int) -> int:
        return -a

    def and_(self, *xs: int) -> int:
        lits = set()
        for x in xs:
            if x == -1:
                return -1
            if x == 1:
                continue
            if -x in lits:
                return -1
            lits.add(x)
        if not lits:
            return 1
        if len(lits) == 1:
            return next(iter(lits))
        key = ("and", tuple(sorted(lits)))
        v = self._memo.get(key)
        if v is None:
            v = self.new()
            cls = [[-v, x] for x in lits]
            cls.append([v, *(-x for x in lits)])
            self.clauses += cls
            self.defs[v] = (cls, tuple(abs(x) for x in lits))
            self._memo[key] = v
        return v

    def or_(self, *xs: int) -> int:
        return -self.and_(*(-x for x in xs))

    def xor(self, a: int, b: int) -> int:
        if a == -1:
            return b
        if b == -1:
            return a
        if a == 1:
            return -b
        if b == 1:
            return -a
        if a == b:
            return -1
        if a == -b:
            return 1
        neg = (a < 0) != (b < 0)
        a, b = sorted((abs(a), abs(b)))
        key = ("xor", a, b)
        v = self._memo.get(key)
        if v is None:
            v = self.new()
            cls = [[-v, a, b], [-v, -a, -b], [v, -a, b], [v, a, -b]]
            self.clauses += cls
            self.defs[v] = (cls, (a, b))
            self._memo[key] = v
        return -v if neg else v


    def cone_clauses(self, lits) -> list[list[int]]:
        """The clauses that define ``lits`` (transitively): all a query on them needs."""
        out: list[list[int]] = [[1]]
        seen: set[int] = set()
        stack = [abs(l) for l in lits]
        while stack:
            v = stack.pop()
            if v in seen:
                continue
            seen.add(v)
            d = self.defs.get(v)
            if d is not None:
                out += d[0]
                stack.extend(d[1])
        return out


def sat_hazards(graph, order: Sequence[str], target: str, changes: Mapping[str, tuple[int, int]],
                fixed: Mapping[str, int] | None = None, kinds: Sequence[str] = HAZARD_KINDS,
                conflict_budget: int = 20_000, time_budget: float = 5.0
                ) -> dict[str, HazardProof]:
    """Decide each hazard kind with SAT. A kind whose query runs out of budget is
    "inconclusive" (with the reason); the others are proven present (with a witness) or absent."""
    fixed = dict(fixed or {})
    A = CNFAlgebra()
    srcs = free_sources(graph, order)
    va, vb, var_of = {}, {}, {}
    for n in srcs:
        if n in changes:
            a, b = changes[n]
            va[n], vb[n] = (1 if a else -1), (1 if b else -1)
        elif n in fixed:
            va[n] = vb[n] = 1 if fixed[n] else -1
        else:
            var_of[n] = A.new()
            va[n] = vb[n] = var_of[n]
    planes = hazard_planes(graph, order, target, A, va, vb, srcs)
    out: dict[str, HazardProof] = {}
    deadline = time.perf_counter() + time_budget
    with Solver(name=SOLVER, bootstrap_with=A.clauses) as s:
        for k in kinds:
            lit = planes[k]
            if lit == -1:
                out[k] = HazardProof(k, "absent", method="sat", reason="folded to false")
                continue
            if time.perf_counter() > deadline:
                out[k] = HazardProof(k, "inconclusive", method="sat",
                                     reason="SAT time budget exceeded")
                continue
            s.conf_budget(conflict_budget)
            r = s.solve_limited(assumptions=[lit])
            if r is None:
                out[k] = HazardProof(k, "inconclusive", method="sat",
                                     reason=f"SAT conflict budget ({conflict_budget}) exceeded")
            elif r:
                model = set(l for l in s.get_model() if l > 0)
                wit = {n: int(v in model) for n, v in var_of.items()}
                out[k] = HazardProof(k, "present", witness=wit, method="sat")
            else:
                out[k] = HazardProof(k, "absent", method="sat",
                                     reason=f"unsatisfiable ({A.nvars} variables)")
    return out
