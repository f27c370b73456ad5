"""Hazards at one sink over every transition the change model allows.

For a glitch-sensitive sink the question is not "can this one input glitch the pin" but "can any
transition the circuit can make glitch it". Every source of the sink's cone that may change gets
two variables, its value before (``a``) and after (``b``) the transition, so one symbolic problem
covers single changes, pairs and every larger set at once; the change model
(:mod:`hazlint.analysis.changes`) adds its constraints (quasi-static sources held, at most one
member of a one-at-a-time group changing, one-hot groups one-hot before and after).

Per hazard kind (static-1, static-0, dynamic) three questions are decided:

* **any hazard**: the ternary/transient hazard conditions of :mod:`hazlint.analysis.ternary`
  (Eichelberger's ternary simulation with every changing source at X; Brzozowski and Esik's
  transient algebra for dynamic hazards), which hold for a transition exactly when some gate and
  wire delays make the sink glitch;
* **function hazard**: the sink's Boolean function itself is not monotone over the transition
  cube (static: some corner of the cube has the other value; dynamic: the function can return
  to its start value after reaching its end value along a monotone path through the cube, Unger
  1969, from memory). No implementation avoids it: the inputs must not change together;
* **logic hazard**: a hazard of a transition that has no function hazard (a consensus term or
  a balanced implementation removes it).

The witness of each is the *smallest* set of changing sources (single changes first, then pairs,
then larger sets), with its values before and after.

Two engines decide the same conditions. BDDs (``dd``) are exact for all three questions (the
function-hazard conditions quantify the cube's corners away) within a node budget. Past the
budget SAT (``python-sat``, one incremental solver per sink, a totalizer counting the changing
sources) decides "any" and "function" exactly; a logic hazard needs "no corner of the cube has
the other value", a universal condition, which SAT decides exactly for changes of one and two
sources (the two middle corners are encoded), so a sink that has function hazards and no logic
hazard of one or two changes gets "inconclusive" for logic hazards of larger sets, with that
reason. Every SAT query runs under a conflict budget (a count, so the answer is the same on
every machine); past it the question is "inconclusive" with the reason.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping, Sequence

from ..netlist.graph import SOURCE_KINDS
from ..netlist.walks import path_counts, sources_in_pin_order
from .changes import ChangeModel, SinkModel
from .changesim import known_minimal, random_transitions
from .symbolic import BACKEND, Budget, BDDAlgebra, HazardProof, new_manager
from .ternary import (HAZARD_KINDS, CyclicCone, bool_gate, cone, free_sources, function_hazard,
                      hazard_planes, propagate)

QUESTIONS = ("any", "function", "logic")
# cones of at most this many sources always get the exact BDD engine first (its witness is the
# first smallest one in a fixed order, the same for every spelling of the circuit)
SMALL_CONE = 8


@dataclass
class Found:
    """The answer to one question (any / function / logic hazard of one kind) at a sink."""

    status: str                             # "present" | "absent" | "inconclusive"
    before: dict[str, int] | None = None    # witness: every source of the cone, before
    after: dict[str, int] | None = None     # ... and after the transition
    size: int | None = None                 # changing sources of the witness
    minimal: bool = False                   # no witness with fewer changing sources exists
    reason: str = ""

    @property
    def changed(self) -> list[str]:
        if not self.before:
            return []
        return sorted(n for n in self.before if self.before[n] != self.after.get(n))

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"status": self.status}
        if self.before is not None:
            out.update(before=dict(sorted(self.before.items())),
                       after=dict(sorted(self.after.items())), size=self.size,
                       minimal=self.minimal)
        if self.reason:
            out["reason"] = self.reason
        return out


@dataclass
class SinkVerdict:
    """Every hazard kind at one target over the change model."""

    target: str
    model: SinkModel
    kinds: dict[str, dict[str, Found]] = field(default_factory=dict)   # kind -> question -> Found
    method: str = ""
    bound: int | None = None        # largest change set examined (None: all the model allows)
    reason: str = ""

    @property
    def complete(self) -> bool:
        return self.bound is None or self.bound >= self.model.max_changes

    @property
    def status(self) -> str:
        """"hazard", "hazard-free" (proven over every allowed transition) or "inconclusive"."""
        anys = [q["any"] for q in self.kinds.values()]
        if any(f.status == "present" for f in anys):
            return "hazard"
        if any(f.status == "inconclusive" for f in anys) or not self.complete:
            return "inconclusive"
        return "hazard-free"

    def best(self) -> tuple[str, str, Found] | None:
        """The hazard to show as (kind, question, witness): fewest changing sources, then a
        logic hazard before a function hazard, then static-1, static-0, dynamic."""
        cands = []
        for r, k in enumerate(HAZARD_KINDS):
            q = self.kinds.get(k, {})
            for pref, name in ((0, "logic"), (1, "function"), (2, "any")):
                f = q.get(name)
                if f is not None and f.status == "present":
                    cands.append((f.size or 0, pref, r, k, name, f))
        if not cands:
            return None
        cands.sort(key=lambda x: x[:3])
        return cands[0][3], cands[0][4], cands[0][5]

    def hazard_proofs(self) -> dict[str, HazardProof]:
        """Per kind, the "any hazard" answer in the prover's proof form (the witness holds the
        values of the sources that do not change)."""
        out = {}
        for k in HAZARD_KINDS:
            q = self.kinds.get(k)
            if q is None:
                continue
            f = q["any"]
            held = None
            if f.before is not None:
                held = {n: v for n, v in f.before.items() if f.after.get(n) == v}
            fh = {"present": True, "absent": False}.get(q["function"].status) \
                if f.status == "present" else None
            if fh and q["logic"].status == "present" and q["logic"].size == f.size:
                fh = False
            out[k] = HazardProof(k, f.status, witness=held, method=self.method,
                                 reason=f.reason or self.reason, function_hazard=fh)
        return out

    def proof_text(self, label) -> str:
        """What was proven, over which transitions, by which engine."""
        cover = self.model.proven_text(label, self.bound)
        engine = {"bdd": "BDD", "sat": "SAT"}.get(self.method, self.method)
        if self.status == "hazard-free":
            if self.method == "structural":
                return f"hazard-free: {self.reason}"
            return f"{engine} over {cover} ({self.reason})"
        if self.status == "inconclusive":
            why = sorted({f.reason for q in self.kinds.values() for f in q.values()
                          if f.status == "inconclusive" and f.reason})
            if not self.complete and not why:
                why = [f"hazard-free for transitions of up to {self.bound} sources; the model "
                       f"allows up to {self.model.max_changes} (option max_changes)"]
            return "; ".join(why) or self.reason
        return f"{engine} over {cover} ({self.reason})"

    def summary(self, label) -> list[str]:
        """One line per hazard kind found: its function and logic hazards and their smallest
        change sets."""
        out = []
        words = {"static-1-hazard": "static-1", "static-0-hazard": "static-0",
                 "dynamic-hazard": "dynamic"}
        for k in HAZARD_KINDS:
            q = self.kinds.get(k)
            if q is None or q["any"].status != "present":
                continue
            parts = []
            for name in ("function", "logic"):
                f = q[name]
                if f.status == "present":
                    names = [label(n) for n in f.changed]
                    moved = (f"{names[0]} changes" if len(names) == 1 else
                             f"{', '.join(names[:-1])} and {names[-1]} change together")
                    parts.append(f"{name} hazard when {moved}")
                elif f.status == "absent":
                    parts.append(f"no {name} hazard")
                else:
                    parts.append(f"{name} hazard undecided ({f.reason})")
            out.append(f"{words[k]}: " + "; ".join(parts))
        return out

    def to_json(self, label=None) -> dict[str, Any]:
        """The verdict without the values of unchanged sources (those of the shown witness are
        in the finding's witness)."""
        label = label or (lambda n: n)

        def found(f: Found):
            d: dict[str, Any] = {"status": f.status}
            if f.before is not None:
                d["changes"] = {label(n): [f.before[n], f.after[n]] for n in f.changed}
                d["minimal"] = f.minimal
            if f.reason:
                d["reason"] = f.reason
            return d
        return {"status": self.status, "method": self.method, "bound": self.bound,
                "kinds": {k: {q: found(f) for q, f in v.items()} for k, v in self.kinds.items()},
                **({"reason": self.reason} if self.reason else {})}


def options_bound(options: Mapping[str, Any] | None) -> int | None:
    b = int((options or {}).get("max_changes", 0) or 0)
    return b if b > 0 else None


def decide_sink(graph, target: str, model: ChangeModel | SinkModel | None = None,
                options: Mapping[str, Any] | None = None, order: Sequence[str] | None = None
                ) -> SinkVerdict:
    """Decide every hazard kind at ``target`` over the transitions ``model`` allows.

    ``options``: ``node_budget`` (BDD nodes), ``conflict_budget`` (SAT conflicts per query),
    ``max_changes`` (0: every change set the model allows; else the largest examined),
    ``engine_sources`` (cones with more changing sources go to SAT directly)."""
    opts = dict(options or {})
    bound = options_bound(opts)
    try:
        order = list(order) if order is not None else cone(graph, [target])
    except CyclicCone:
        sm = SinkModel((), ())
        return _all(SinkVerdict(target, sm, method="structural", bound=bound,
                                reason="combinational loop in the cone"), "inconclusive",
                    "combinational loop in the cone")
    srcs = free_sources(graph, order)
    if model is None:
        model = ChangeModel()
    sm = model.for_sources(srcs) if isinstance(model, ChangeModel) else model
    v = SinkVerdict(target, sm, bound=bound)
    if not sm.sources:
        v.method = "structural"
        return _all(v, "absent", "no source of the cone can change")
    if len(sm.sources) == 1 and path_counts(graph, order, sm.sources[0]).get(target, 0) <= 1:
        v.method = "structural"
        return _all(v, "absent", "a single path from its only changing source")
    node_budget = int(opts.get("node_budget", 100_000))
    limit = int(opts.get("engine_sources", 16))
    n_src = len(sm.sources) + len(sm.quiet)
    known = None
    if n_src > SMALL_CONE:
        # random transitions first: most witnesses need no solver, and when every question
        # has a witness of the smallest size it allows, nothing is left to prove
        known = random_transitions(graph, order, target, srcs, sm, seed=int(opts.get("seed", 0)))
        if v.bound is not None:
            known = {k: {q: w for q, w in d.items() if w[2] <= v.bound}
                     for k, d in known.items()}
        if all(known_minimal(known.get(k, {}), q, k) for k in HAZARD_KINDS for q in QUESTIONS):
            v.method = "simulation"
            v.reason = (f"{len(sm.sources)} changing and {len(sm.quiet)} held sources; every "
                        "witness found by simulating random transitions is of the smallest "
                        "size possible")
            for k in HAZARD_KINDS:
                v.kinds[k] = {q: Found("present", *known[k][q][:2], size=known[k][q][2],
                                       minimal=True) for q in QUESTIONS}
            return v
    if n_src <= limit:
        try:
            return _decide_bdd(graph, order, target, srcs, v, node_budget)
        except Budget as exc:
            v.reason = exc.reason
    if known is None:
        known = random_transitions(graph, order, target, srcs, sm, seed=int(opts.get("seed", 0)))
        if v.bound is not None:
            known = {k: {q: w for q, w in d.items() if w[2] <= v.bound}
                     for k, d in known.items()}
    return _decide_sat(graph, order, target, srcs, v, int(opts.get("conflict_budget", 20_000)),
                       known)


def _all(v: SinkVerdict, status: str, reason: str) -> SinkVerdict:
    for k in HAZARD_KINDS:
        v.kinds[k] = {q: Found(status, reason=reason) for q in QUESTIONS}
    v.reason = reason
    return v


def _source_order(graph, target, sources) -> list[str]:
    """Sources in depth-first fan-in order from the target (neighbouring BDD levels for inputs
    that meet early in the logic)."""
    return sources_in_pin_order(graph, [target], sources)


def _conditions(A, graph, order, target, srcs, sm: SinkModel, va, vb, z, y):
    """The hazard conditions over algebra ``A``: per kind, (any, function hazard) values, plus
    the model constraint and the change indicators."""
    c = [A.xor(va[n], vb[n]) for n in sm.sources]
    planes = hazard_planes(graph, order, target, A, va, vb, srcs)
    fa, fb = planes["before"], planes["after"]
    # corners of the transition cube: z (first) and y (a later one on a monotone path)
    vz = dict(va)
    vy = dict(va)
    for i, n in enumerate(sm.sources):
        vz[n], vy[n] = z[i], y[i]
    fz = propagate(graph, order, vz, A, bool_gate)[target]
    fy = propagate(graph, order, vy, A, bool_gate)[target]
    same = A.not_(A.xor(fa, fb))
    sfh = A.and_(same, A.xor(fz, fa))
    dfh = A.and_(A.xor(fa, fb), A.not_(A.xor(fz, fb)), A.not_(A.xor(fy, fa)))
    fh = {"static-1-hazard": sfh, "static-0-hazard": sfh, "dynamic-hazard": dfh}
    return c, planes, fh


def _corner_constraint(A, sm: SinkModel, va, c, z, y):
    """z and y are corners of the cube, y at or after z on a monotone path from a to b."""
    parts = []
    for i, n in enumerate(sm.sources):
        za, ya = A.xor(z[i], va[n]), A.xor(y[i], va[n])
        parts.append(A.or_(c[i], A.and_(A.not_(za), A.not_(ya))))   # steady: both equal a
        parts.append(A.or_(A.not_(za), ya))                          # moved at z: moved at y
    return A.and_(*parts)


def _model_constraint_bdd(A, sm: SinkModel, va, vb, c):
    parts = []
    for gr, ids in sm.groups:
        if gr.kind == "one-at-a-time":
            parts.append(_at_most_bdd(A, [c[i] for i in ids], 1))
        else:
            names = [sm.sources[i] for i in ids]
            parts.append(_at_most_bdd(A, [va[n] for n in names], 1))
            parts.append(_at_most_bdd(A, [vb[n] for n in names], 1))
    return A.and_(*parts) if parts else A.true


def _exactly_bdd(A, lits, top: int) -> list:
    """[exactly k of lits for k in 0..top] (dynamic programming over the literals)."""
    cnt = [A.true] + [A.false] * top
    for x in lits:
        nx_ = [A.false] * (top + 1)
        for k in range(top + 1):
            stay = A.and_(cnt[k], A.not_(x))
            up = A.and_(cnt[k - 1], x) if k > 0 else A.false
            nx_[k] = A.or_(stay, up)
        cnt = nx_
    return cnt


def _at_most_bdd(A, lits, m: int):
    ex = _exactly_bdd(A, lits, m)
    return A.or_(*ex)


def _decide_bdd(graph, order, target, srcs, v: SinkVerdict, node_budget: int) -> SinkVerdict:
    """Every question exactly, over BDD variables a (before) and c (changes) per source (the
    after value is a ^ c), plus corner variables z, y for dynamic function hazards."""
    sm = v.model
    A = BDDAlgebra(new_manager(64), node_budget=node_budget)
    va, vb = {}, {}
    names: dict[str, tuple[str, str | None]] = {}
    cvar = {}
    for n in _source_order(graph, target, sm.sources):
        k = sm.sources.index(n)
        names[n] = (f"a{k}", f"c{k}")
        va[n] = A.var(f"a{k}")
        cvar[n] = A.var(f"c{k}")
        vb[n] = A.xor(va[n], cvar[n])
        A.var(f"z{k}")
        A.var(f"y{k}")
    z = [A.bdd.var(f"z{k}") for k in range(len(sm.sources))]
    y = [A.bdd.var(f"y{k}") for k in range(len(sm.sources))]
    for j, n in enumerate(sm.quiet):
        names[n] = (f"q{j}", None)
        va[n] = vb[n] = A.var(f"q{j}")
    c, planes, fh = _conditions(A, graph, order, target, srcs, sm, va, vb, z, y)
    c = [cvar[n] for n in sm.sources]      # the same functions, as plain variables
    cons = _model_constraint_bdd(A, sm, va, vb, c)
    # static function hazard: the function takes both values over the cube; "can be 1" is f
    # with every changing source quantified away, one source at a time
    fa, fb = planes["before"], planes["after"]
    can = []
    for f0 in (fa, A.not_(fa)):
        u = f0
        for n in sm.sources:
            a_n = names[n][0]
            u = A.or_(A.and_(A.not_(cvar[n]), u), A.and_(cvar[n], A.bdd.exist([a_n], u)))
        can.append(u)
    sfh = A.and_(A.not_(A.xor(fa, fb)), can[0], can[1])
    dfh = _dynamic_fh_bdd(A, graph, order, target, srcs, sm, va, vb, c, z, fa, fb)
    fhs = {"static-1-hazard": sfh, "static-0-hazard": sfh, "dynamic-hazard": dfh}
    counts = _exactly_bdd(A, c, len(c))
    bound = v.bound
    if bound is not None:
        cons = A.and_(cons, A.or_(*counts[:bound + 1]))
    care = sorted({x for pair in names.values() for x in pair if x})
    for k in HAZARD_KINDS:
        anyk = A.and_(planes[k], cons)
        fun = A.and_(anyk, fhs[k])
        logic = A.and_(anyk, A.not_(fhs[k]))
        q = {}
        for name, u in (("any", anyk), ("function", fun), ("logic", logic)):
            q[name] = _smallest_bdd(A, u, counts, names, care, sm, c)
        v.kinds[k] = q
        if len(A.bdd) > node_budget:
            raise Budget(f"BDD exceeded {node_budget} nodes")
    v.method = "bdd"
    v.reason = f"{len(sm.sources)} changing and {len(sm.quiet)} held sources; {BACKEND}"
    return v


def _dynamic_fh_bdd(A, graph, order, target, srcs, sm, va, vb, c, z, fa, fb):
    """Dynamic function hazard: a corner x of the cube with f(x) = f(b) from which a later
    corner (more sources at their after value) has f = f(a). "Some later corner has f = f(a)"
    is built one source at a time from f(x) = f(a), so the only quantified copy is x."""
    vz = dict(va)
    for i, n in enumerate(sm.sources):
        vz[n] = z[i]
    fz = propagate(graph, order, {k: vz[k] for k in srcs}, A, bool_gate)[target]
    later = A.not_(A.xor(fz, fa))
    for i, n in enumerate(sm.sources):
        zn = f"z{sm.sources.index(n)}"
        at_a = A.not_(A.xor(z[i], va[n]))
        moved = A.bdd.exist([zn], A.and_(later, A.xor(z[i], va[n])))   # later with z_i at b_i
        later = A.or_(later, A.and_(c[i], at_a, moved))
    inside = A.and_(*[A.or_(c[i], A.not_(A.xor(z[i], va[n])))
                      for i, n in enumerate(sm.sources)])
    first = A.and_(inside, A.not_(A.xor(fz, fb)))
    zs = [f"z{k}" for k in range(len(sm.sources))]
    return A.and_(A.xor(fa, fb), A.and_exists(first, later, zs))


def _smallest_bdd(A, u, counts, names, care, sm, c) -> Found:
    """The witness with the fewest changing sources; among those the first in a fixed order
    (changes of sources earlier by name, then values 0 before 1), so the same circuit gets the
    same witness whatever its spelling or the BDD's variable order."""
    if u == A.false:
        return Found("absent")
    for m, cm in enumerate(counts):
        w = A.and_(u, cm)
        if w == A.false:
            continue
        index = {n: i for i, n in enumerate(sm.sources)}
        for n in sorted(sm.sources):
            w1 = A.and_(w, c[index[n]])
            w = w1 if w1 != A.false else A.and_(w, A.not_(c[index[n]]))
        for n in sorted(names):
            for var in names[n]:
                if var is None:
                    continue
                x = A.bdd.var(var)
                w0 = A.and_(w, A.not_(x))
                w = w0 if w0 != A.false else A.and_(w, x)
        pick = A.bdd.pick(w, care_vars=care) or {}
        before = {n: int(bool(pick.get(a, False))) for n, (a, _) in names.items()}
        after = {n: before[n] ^ int(bool(pick.get(ch, False))) if ch else before[n]
                 for n, (_, ch) in names.items()}
        return Found("present", before, after, size=m, minimal=True)
    return Found("absent")       # pragma: no cover - u is not false, so some count holds


# ---------------------------------------------------------------------------------------------
# SAT


def _decide_sat(graph, order, target, srcs, v: SinkVerdict, conflict_budget: int,
                known: Mapping[str, Mapping[str, tuple]] | None = None) -> SinkVerdict:
    from pysat.card import CardEnc, EncType, ITotalizer
    from pysat.solvers import Solver
    from .satcheck import SOLVER, CNFAlgebra
    sm = v.model
    known = known or {}
    C = CNFAlgebra()
    va, vb = {}, {}
    for n in sm.sources:
        va[n], vb[n] = C.new(), C.new()
    for n in sm.quiet:
        va[n] = vb[n] = C.new()
    z = [C.new() for _ in sm.sources]
    y = [C.new() for _ in sm.sources]
    c, planes, fh = _conditions(C, graph, order, target, srcs, sm, va, vb, z, y)
    C.clauses.append([_corner_constraint(C, sm, va, c, z, y)])
    extra: list[list[int]] = []

    def card(lits, k, kind="atmost", act=None):
        enc = (CardEnc.atmost if kind == "atmost" else CardEnc.equals)(
            lits=lits, bound=k, top_id=C.nvars, encoding=EncType.seqcounter)
        C.nvars = max(C.nvars, enc.nv)
        for cl in enc.clauses:
            extra.append(cl + ([-act] if act else []))
    for gr, ids in sm.groups:
        if gr.kind == "one-at-a-time":
            card([c[i] for i in ids], 1)
        else:
            names = [sm.sources[i] for i in ids]
            card([va[n] for n in names], 1)
            card([vb[n] for n in names], 1)
    # the two middle corners of a change of two sources: a ^ p and a ^ (c & ~p), |p| = 1
    act = C.new()
    p = [C.new() for _ in sm.sources]
    card(p, 1, "equals", act)
    for i in range(len(p)):
        extra.append([-act, -p[i], c[i]])
    m1, m2 = dict(va), dict(va)
    for i, n in enumerate(sm.sources):
        m1[n] = C.xor(va[n], p[i])
        m2[n] = C.xor(va[n], C.and_(c[i], -p[i]))
    fa = planes["before"]
    f1 = propagate(graph, order, m1, C, bool_gate)[target]
    f2 = propagate(graph, order, m2, C, bool_gate)[target]
    pair_flat = C.and_(-C.xor(f1, fa), -C.xor(f2, fa))
    # counting the changing sources: enough outputs for the bound and for small witnesses
    top_count = min(len(c), max(16, v.bound or 0))
    tot = ITotalizer(lits=list(c), ubound=top_count, top_id=C.nvars)
    C.nvars = max(C.nvars, tot.top_id)
    extra += tot.cnf.clauses
    rhs = list(tot.rhs)
    tot.delete()

    def at_most(m: int | None) -> list[int]:
        if m is None or m >= len(rhs):
            return []
        return [-rhs[m]]
    bound = v.bound
    spent = {"queries": 0}
    with Solver(name=SOLVER, bootstrap_with=C.clauses + extra) as solver:
        def ask(lits, m=None):
            """True (with a witness), False, or None past the conflict budget."""
            if any(x == -1 for x in lits):
                return False, None
            lits = [x for x in lits if x != 1]
            mm = m if bound is None or (m is not None and m < bound) else bound
            spent["queries"] += 1
            solver.conf_budget(conflict_budget)
            r = solver.solve_limited(assumptions=lits + at_most(mm))
            if not r:
                return r, None
            model = solver.get_model()
            val = lambda x: int(x <= len(model) and model[x - 1] > 0)  # noqa: E731
            before = {n: val(va[n]) for n in list(sm.sources) + list(sm.quiet)}
            after = {n: val(vb[n]) for n in list(sm.sources) + list(sm.quiet)}
            return True, (before, after)

        def smallest(lits, start: int = 1, known=None) -> Found:
            r, wit = (True, known) if known is not None else ask(lits)
            if r is None:
                return Found("inconclusive", reason=_budget_text(conflict_budget))
            if not r:
                return Found("absent")
            size = sum(wit[0][n] != wit[1][n] for n in sm.sources)
            best, minimal = wit, size <= len(rhs)
            for m in range(start, min(size, len(rhs))):
                r2, w2 = ask(lits, m)
                if r2 is None:
                    minimal = False
                    break
                if r2:
                    best, minimal = w2, True
                    break
            size = sum(best[0][n] != best[1][n] for n in sm.sources)
            return Found("present", best[0], best[1], size=size, minimal=minimal)

        def from_sim(hit, lits, start) -> Found:
            """A simulated witness: minimal when of the smallest size possible, else the
            solver looks for a smaller one."""
            before, after, size = hit
            if size <= start:
                return Found("present", before, after, size=size, minimal=True)
            return smallest(lits, start=start, known=(before, after))

        for k in HAZARD_KINDS:
            q: dict[str, Found] = {}
            sim = known.get(k, {})
            q["any"] = from_sim(sim["any"], [planes[k]], 1) if "any" in sim else \
                smallest([planes[k]])
            if q["any"].status == "absent":
                q["function"] = Found("absent")
                q["logic"] = Found("absent")
            else:
                # a function hazard needs two changing sources, a dynamic one three
                low = 3 if k == "dynamic-hazard" else 2
                q["function"] = from_sim(sim["function"], [planes[k], fh[k]], low) \
                    if "function" in sim else smallest([planes[k], fh[k]], start=low)
                if q["function"].status == "absent":
                    q["logic"] = q["any"]
                elif "logic" in sim and sim["logic"][2] <= 1:
                    q["logic"] = from_sim(sim["logic"], [planes[k]], 1)
                else:
                    q["logic"] = _logic_sat(ask, smallest, planes[k], k, act, pair_flat, sm,
                                            bound, conflict_budget, v.reason)
            v.kinds[k] = q
    v.method = "sat"
    why = f"{v.reason}; " if v.reason else ""
    v.reason = (f"{why}{len(sm.sources)} changing and {len(sm.quiet)} held sources; "
                f"{spent['queries']} queries")
    return v


def _budget_text(cb: int) -> str:
    return f"SAT conflict budget ({cb}, option conflict_budget) exceeded"


def _logic_sat(ask, smallest, plane, kind, act, pair_flat, sm, bound, cb, bdd_reason) -> Found:
    """A logic hazard of a kind that also has function hazards: changes of one source (every
    hazard of a single change is a logic hazard), then of two (static: both middle corners keep
    the value; dynamic: no function hazard exists for two changes)."""
    r, wit = ask([plane], 1)
    if r is None:
        return Found("inconclusive", reason=_budget_text(cb))
    if r:
        return smallest([plane], known=wit)
    lits = [plane, act, pair_flat] if kind != "dynamic-hazard" else [plane]
    r, wit = ask(lits, 2)
    if r is None:
        return Found("inconclusive", reason=_budget_text(cb))
    if r:
        size = sum(wit[0][n] != wit[1][n] for n in sm.sources)
        return Found("present", wit[0], wit[1], size=size, minimal=True)
    top = sm.max_changes if bound is None else min(bound, sm.max_changes)
    if top <= 2:
        return Found("absent")
    return Found("inconclusive", reason=(
        "logic hazards of three or more simultaneous changes are decided by BDDs only, and the "
        f"BDD of this cone exceeded its budget ({bdd_reason or 'not tried'}); none for changes "
        "of one or two sources"))


def witness_function_hazard(graph, order, target, found: Found) -> bool | None:
    """Whether a witness is a function hazard (explicit check of its cube's corners)."""
    if found.before is None:
        return None
    if (found.size or 0) <= 1:
        return False
    try:
        return function_hazard(graph, order, target, found.before, found.after)
    except ValueError:
        return None


def is_free_source(graph, n: str) -> bool:
    d = graph.nodes[n]
    return d["kind"] in SOURCE_KINDS and d["kind"] != "const"
