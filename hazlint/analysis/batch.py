"""The prover's batched pass: every (target, changing source) single change decided together.

One explicit ternary/transient pass covers many (source, vector) pairs at once: lane block *i*
holds ``vectors`` random side-input vectors with source *i* changing (``chunk`` sources per
pass, so the bit-vectors stay a bounded size). What the random vectors do not show is settled
per pair by the structural path count, then BDD, then SAT, else reported inconclusive.

Work items (:mod:`hazlint.analysis.workers`). Both costly parts are cut by changing source,
and each piece computes exactly what the one-process pass computes for it:

* simulation: an item is a run of consecutive source chunks; it advances the random
  generator past the draws of the chunks before it (the same count of the same widths), so
  chunk *k* sees the vectors it would see in one process;
* SAT: an item is a group of changing sources; every worker builds the same shared encoding
  of the cone (same variable numbers) once and restores it before each source, as the
  one-process loop does, so each query and its model are the same.

The results of the items are disjoint (a pair belongs to one source) and are merged in item
order. What can differ between runs is only what a wall clock cuts (``batch_time``, the run's
time budget): such pairs are reported inconclusive with that reason.
"""
from __future__ import annotations

import random
import time
from dataclasses import dataclass
from typing import Any, Iterable, Mapping, Sequence

import networkx as nx

from .. import budget
from ..findings.words import count
from ..netlist.walks import path_counts, sources_in_pin_order
from .satcheck import sat_hazards
from .symbolic import Budget, HazardProof, bdd_hazards
from .ternary import (HAZARD_KINDS, IntAlgebra, cone, free_sources, propagate, ternary_gate)

@dataclass
class _Pass:
    """What every item of one batched pass shares (sent once per ``map`` call)."""
    key: str
    targets: list[str]
    opts: dict[str, Any]
    rounds: int = 3
    vectors: int = 256
    chunk: int = 64
    wanted: set | None = None
    deadline: float = float("inf")          # SAT part: wall-clock end (time.time())
    late: str = ""


def classify_batch(g: nx.DiGraph, targets: Sequence[str] | None, opts: Mapping[str, Any],
                   rounds: int = 3, vectors: int = 256, changing: Iterable[str] | None = None,
                   wanted: set[tuple[str, str]] | None = None, chunk: int = 64, session=None
                   ) -> dict[tuple[str, str], dict[str, HazardProof]]:
    """:func:`hazlint.analysis.prove.classify_outputs` with resolved options; ``session``
    (a :class:`~hazlint.analysis.workers.Session` over ``{"graph": g}``) spreads the
    simulation and SAT items over its workers."""
    if targets is None:
        targets = [n for n, d in g.nodes(data=True) if d["kind"] == "sink"]
    targets = list(targets)
    chunk = max(1, int(chunk))
    p = _Pass(key=f"{id(g)}:{len(targets)}:{hash(tuple(targets))}:{time.time()}",
              targets=targets, opts=dict(opts), rounds=rounds, vectors=vectors, chunk=chunk,
              wanted=wanted)
    local: dict = session.local if session is not None else {}
    order, srcs, index, sup = _derived(g, p, local)
    if changing is None:
        chg = list(srcs)
    else:
        want_src = set(changing)
        chg = [n for n in srcs if n in want_src]
    chg_mask = 0
    for n in chg:
        chg_mask |= 1 << index[n]
    chunks = [chg[c0:c0 + chunk] for c0 in range(0, len(chg), chunk)]
    # one run of chunks per worker: a run skips the random draws of the chunks before it,
    # so more runs would draw the same numbers more often
    items = _runs(list(enumerate(chunks)), session, per_worker=1)
    found: dict[tuple[str, str], dict[str, HazardProof]] = {}
    parts = _map(session, _simulate, items, p, {"graph": g}, local)
    for part in parts:
        found.update(part)
    # what the random vectors left open: structural proof, then shared BDD / SAT per source
    open_pairs: dict[str, list[str]] = {}
    counts: dict[str, dict[str, int]] = {}
    pos = {n: i for i, n in enumerate(order)}
    for t in targets:
        if budget.expired():
            break               # pairs left undecided are proven one by one, or reported
        for x in _pairs_wanted(t, sup[t] & chg_mask, srcs, wanted):
            res = found.setdefault((t, x), {})
            rest = [k for k in HAZARD_KINDS if k not in res]
            if not rest:
                continue
            if x not in counts:
                counts[x] = path_counts(g, order, x, pos=pos)
            if counts[x].get(t, 0) <= 1:
                for k in rest:
                    res[k] = HazardProof(k, "absent", method="structural",
                                         reason="a single path from the changing input")
                continue
            open_pairs.setdefault(x, []).append(t)
    if open_pairs and not budget.expired():
        _prove_open(g, order, targets, srcs, open_pairs, found, p, session, local)
    return found


def _pairs_wanted(t: str, mask: int, srcs: Sequence[str], wanted) -> Iterable[str]:
    """The changing sources of target ``t`` whose bits are set in ``mask`` (source index order),
    those of ``wanted`` (pairs ``(t, x)``) only when it is given."""
    while mask:
        i = (mask & -mask).bit_length() - 1
        mask &= mask - 1
        x = srcs[i]
        if wanted is None or (t, x) in wanted:
            yield x


def _map(session, func, items, p: _Pass, shared, local) -> list:
    if session is None:
        return [func(shared, p, it, local) for it in items]
    return session.map(func, items, p)


def _runs(seq: list, session, per_worker: int = 4) -> list[list]:
    """``seq`` cut into consecutive runs: one run in a single process, else ``per_worker``
    runs per worker (the results do not depend on the cut)."""
    if not seq:
        return []
    from .workers import items_for
    size = -(-len(seq) // items_for(session, len(seq), per_worker))
    return [seq[i:i + size] for i in range(0, len(seq), size)]


def _derived(g, p: _Pass, local: dict):
    """(cone order, free sources, source index, support bit sets) of the pass's targets,
    worked out once per worker."""
    got = local.get(("derived", p.key))
    if got is None:
        order = cone(g, p.targets)
        srcs = free_sources(g, order)
        index = {n: i for i, n in enumerate(srcs)}
        # support of each node, by bit sets over sources (DP over the topological order)
        sup: dict[str, int] = {}
        for n in order:
            if n in index:
                sup[n] = 1 << index[n]
            else:
                v = 0
                for i in g.nodes[n].get("inputs") or ():
                    v |= sup.get(i, 0)
                sup[n] = v
        got = local[("derived", p.key)] = (order, srcs, index, sup)
    return got


def _skip_draws(rng: random.Random, draws: int, width: int) -> None:
    """Advance ``rng`` past ``draws`` calls of ``getrandbits(width)``."""
    if width % 32 == 0:
        # getrandbits(k) takes ceil(k / 32) words: whole-word draws add up, so take them in
        # large pieces
        words = draws * (width // 32)
        step = 1 << 20
        while words > 0 and not budget.expired():
            rng.getrandbits(32 * min(words, step))
            words -= step
        return
    for _ in range(draws):
        rng.getrandbits(width)


def _simulate(shared, p: _Pass, item, local) -> dict:
    """The random-vector simulation of a run of consecutive source chunks."""
    g = shared["graph"]
    order, srcs, index, sup = _derived(g, p, local)
    targets, vectors, wanted = p.targets, p.vectors, p.wanted
    rng = random.Random(p.opts["seed"])
    first = item[0][0]
    # every chunk before this run had p.chunk sources and drew one value per source per round
    _skip_draws(rng, first * p.rounds * len(srcs), p.chunk * vectors)
    block = (1 << vectors) - 1
    found: dict[tuple[str, str], dict[str, HazardProof]] = {}
    for _k, part in item:
        if budget.expired():
            break               # the pairs left open are proven one by one, or reported
        lane_of = {n: k for k, n in enumerate(part)}
        part_mask = 0
        for n in part:
            part_mask |= 1 << index[n]
        width = len(part) * vectors
        A = IntAlgebra(width)
        for _ in range(p.rounds):
            if budget.expired():
                break
            va, vb = {}, {}
            for n in srcs:
                r = rng.getrandbits(width)
                if n in lane_of:
                    own = block << (lane_of[n] * vectors)
                    va[n] = r & ~own & A.mask
                    vb[n] = r | own
                else:
                    va[n] = vb[n] = r
            ta, tb, tx, tr = _planes_inputs(A, va, vb, srcs)
            ra = propagate(g, order, ta, A, ternary_gate)
            rb = propagate(g, order, tb, A, ternary_gate)
            rx = propagate(g, order, tx, A, ternary_gate)
            rt = propagate(g, order, tr, A, _transient)
            for t in targets:
                s = sup[t] & part_mask
                if not s:
                    continue
                a0, a1 = ra[t]
                b0, b1 = rb[t]
                x0, x1 = rx[t]
                h = rt[t][2]
                one_a, zero_a = a1 & ~a0, a0 & ~a1
                one_b, zero_b = b1 & ~b0, b0 & ~b1
                xm = x0 & x1
                planes = {"static-1-hazard": one_a & one_b & xm,
                          "static-0-hazard": zero_a & zero_b & xm,
                          "dynamic-hazard": ((one_a & zero_b) | (zero_a & one_b)) & h}
                for x in _pairs_wanted(t, s, srcs, wanted):
                    base = lane_of[x] * vectors
                    res = found.setdefault((t, x), {})
                    for k, lanes in planes.items():
                        if k in res:
                            continue
                        lanes = (lanes >> base) & block
                        if lanes:
                            lane = (lanes & -lanes).bit_length() - 1 + base
                            wit = {n: (va[n] >> lane) & 1 for n in srcs if n != x and
                                   sup[t] >> index[n] & 1}
                            res[k] = HazardProof(
                                k, "present", witness=wit, method="simulation",
                                reason=f"found by ternary simulation of {count(vectors, 'vector')}")
    return found


def _var_order(g, order, targets, srcs) -> list[str]:
    """Sources in depth-first fan-in order from the targets (a common BDD ordering
    heuristic: inputs that meet early in the logic get neighbouring levels)."""
    return sources_in_pin_order(g, targets, srcs)


def _prove_open(g, order, targets, srcs, open_pairs, found, p: _Pass, session, local):
    from .symbolic import BACKEND, BDDAlgebra
    from .ternary import SharedPlanes, has_three_state
    opts = p.opts
    if has_three_state(g, order):
        for x, ts in open_pairs.items():
            for t in ts:
                rest = [k for k in HAZARD_KINDS if k not in found[(t, x)]]
                found[(t, x)].update(prove_symbolic(g, cone(g, [t]), t, {x: (0, 1)}, rest, opts))
        return
    todo = dict(open_pairs)
    budget_time = float(opts.get("bdd_circuit_time", 10.0))
    try:
        if opts.get("engine", "sat") == "sat":
            raise Budget("SAT engine chosen")
        A = BDDAlgebra(node_budget=int(opts["node_budget"]) * 10,
                       deadline=time.perf_counter() + budget_time)
        names = {n: f"v{k}" for k, n in enumerate(_var_order(g, order, targets, srcs))}
        sv = {n: A.var(names[n]) for n in names}
        sp = SharedPlanes(g, order, A, sv)
        back = {v: n for n, v in names.items()}
        for x in list(todo):
            planes = sp.planes(x, todo[x])
            for t in todo[x]:
                res = found[(t, x)]
                for k in [k for k in HAZARD_KINDS if k not in res]:
                    u = planes[t][k]
                    if u == A.false:
                        res[k] = HazardProof(k, "absent", method="bdd",
                                             reason=f"BDD ({BACKEND})")
                    else:
                        pick = A.bdd.pick(u) or {}
                        wit = {back[v]: int(bool(b)) for v, b in pick.items() if v in back}
                        wit.pop(x, None)
                        res[k] = HazardProof(k, "present", witness=wit, method="bdd")
            del todo[x]
        return
    except Budget as exc:
        bdd_reason = exc.reason
    # SAT: one incremental solver per changing source over one shared encoding
    batch_time = float(opts["batch_time"])
    left = min(batch_time if batch_time > 0 else float("inf"), budget.left())
    p.deadline = time.time() + left
    p.late = (f"{bdd_reason}; the batched proof's time budget ({batch_time:g} s, option "
              "batch_time) was used up")
    p.opts = dict(opts, _bdd_reason=bdd_reason)
    items = _runs([(x, ts, {(t, x): found[(t, x)] for t in ts}) for x, ts in todo.items()],
                  session)
    for part in _map(session, _sat_sources, items, p, {"graph": g}, local):
        found.update(part)


def _sat_base(g, p: _Pass, local):
    """The shared encoding of the pass's cone: built once per worker, restored per source."""
    got = local.get(("sat", p.key))
    if got is None:
        from .satcheck import CNFAlgebra
        from .ternary import SharedPlanes
        order, srcs, _, _ = _derived(g, p, local)
        C = CNFAlgebra()
        sv = {n: C.new() for n in srcs}
        sp = SharedPlanes(g, order, C, sv)
        base = (C.nvars, len(C.clauses), dict(C._memo), dict(C.defs))
        got = local[("sat", p.key)] = (C, sv, sp, base)
    return got


def _sat_sources(shared, p: _Pass, item, local) -> dict:
    """The SAT queries of a group of changing sources: ``item`` is [(source, targets,
    {pair: proofs so far})]; returns the completed proofs of those pairs."""
    from pysat.solvers import Solver
    from .satcheck import SOLVER
    g = shared["graph"]
    C, sv, sp, base = _sat_base(g, p, local)
    cb = int(p.opts["conflict_budget"])
    bdd_reason = p.opts["_bdd_reason"]
    found: dict = {}
    for _x, _ts, got in item:
        found.update({k: dict(v) for k, v in got.items()})

    def give_up(x, ts):
        why = f"{bdd_reason}; {budget.reason()}" if budget.expired() else p.late
        for t in ts:
            for k in [k for k in HAZARD_KINDS if k not in found[(t, x)]]:
                found[(t, x)][k] = HazardProof(k, "inconclusive", method="sat", reason=why)

    for x, ts, _got in item:
        if time.time() > p.deadline:
            give_up(x, ts)
            continue
        C.nvars, C._memo, C.defs = base[0], dict(base[2]), dict(base[3])
        del C.clauses[base[1]:]
        try:
            planes = sp.planes(x, ts)
        except Budget as exc:
            for t in ts:
                for k in [k for k in HAZARD_KINDS if k not in found[(t, x)]]:
                    found[(t, x)][k] = HazardProof(k, "inconclusive", method="sat",
                                                   reason=f"{bdd_reason}; {exc.reason}")
            continue
        roots = [lit for t in ts for lit in planes[t].values()]
        statics = {}
        for t in ts:
            # one query for "any static hazard" first: most open pairs are hazard-free
            p1, p0 = planes[t]["static-1-hazard"], planes[t]["static-0-hazard"]
            statics[t] = C.or_(p1, p0)
            roots.append(statics[t])
        # cone of influence: only the clauses these queries depend on, renumbered densely
        # (solvers size their arrays by the largest variable)
        cls = C.cone_clauses(roots)
        ren: dict[int, int] = {}
        for c in cls:
            for lit in c:
                if abs(lit) not in ren:
                    ren[abs(lit)] = len(ren) + 1
        dense = [[ren[lit] if lit > 0 else -ren[-lit] for lit in c] for c in cls]
        src_dense = {n: ren[v] for n, v in sv.items() if v in ren}
        with Solver(name=SOLVER, bootstrap_with=dense) as solver:
            def ask(lit):
                if lit == -1:
                    return False, None
                if lit == 1:
                    return True, {n: 0 for n in sv if n != x}
                solver.conf_budget(cb)
                r = solver.solve_limited(assumptions=[ren[lit] if lit > 0 else -ren[-lit]])
                if r:
                    model = solver.get_model()      # literal of variable v at index v - 1
                    m = len(model)
                    last_model[:] = model
                    return True, {n: int(v <= m and model[v - 1] > 0)
                                  for n, v in src_dense.items() if n != x}
                return r, None

            def holds(lit):
                if lit in (1, -1):
                    return lit == 1
                v = ren.get(abs(lit))
                if v is None or v > len(last_model):
                    return False
                return (last_model[v - 1] > 0) == (lit > 0)
            last_model: list[int] = []
            for t in ts:
                if time.time() > p.deadline:
                    give_up(x, [t])
                    continue
                res = found[(t, x)]
                rest = [k for k in HAZARD_KINDS if k not in res]
                if "static-1-hazard" in rest and "static-0-hazard" in rest:
                    r, wit = ask(statics[t])
                    if r is False:
                        for k in ("static-1-hazard", "static-0-hazard"):
                            res[k] = HazardProof(k, "absent", method="sat",
                                                 reason=f"{bdd_reason}; unsatisfiable")
                    elif r:
                        # the model shows one of the two kinds: no second query for it
                        for k in ("static-1-hazard", "static-0-hazard"):
                            if holds(planes[t][k]):
                                res[k] = HazardProof(k, "present", witness=wit, method="sat")
                                break
                for k in [k for k in HAZARD_KINDS if k not in res]:
                    r, wit = ask(planes[t][k])
                    if r is None:
                        res[k] = HazardProof(k, "inconclusive", method="sat",
                                             reason=f"{bdd_reason}; SAT conflict budget ({cb}) "
                                                    "exceeded")
                    elif r:
                        res[k] = HazardProof(k, "present", witness=wit, method="sat")
                    else:
                        res[k] = HazardProof(k, "absent", method="sat",
                                             reason=f"{bdd_reason}; unsatisfiable")
    return found


def _planes_inputs(A, va, vb, srcs):
    from .ternary import lanes_planes
    return lanes_planes(A, va, vb, srcs)


def _transient(A, op, ins, expr=None):
    from .ternary import transient_gate
    return transient_gate(A, op, ins, expr)


def prove_symbolic(graph, order, target, changes, kinds, opts) -> dict[str, HazardProof]:
    """BDD within the node budget, then SAT within the conflict budget, else inconclusive."""
    t0 = time.perf_counter()
    try:
        return bdd_hazards(graph, order, target, changes, None, kinds,
                           node_budget=int(opts["node_budget"]),
                           time_budget=float(opts["check_time"]) / 2)
    except Budget as exc:
        bdd_reason = exc.reason
    left = float(opts["check_time"]) - (time.perf_counter() - t0)
    res = sat_hazards(graph, order, target, changes, None, kinds,
                      conflict_budget=int(opts["conflict_budget"]), time_budget=max(0.05, left))
    for p in res.values():
        if p.status == "inconclusive":
            p.reason = f"{bdd_reason}; {p.reason}"
    return res
