"""The hazard prover: turns structural findings into proven (or disproven) hazards.

For a target net (a sink) and an input change it decides, per hazard kind, whether some values
of the other inputs make the change glitch under arbitrary gate and wire delays:

1. structural: a single changing input with one path to the target cannot glitch;
2. explicit bit-parallel ternary/transient simulation of random side-input vectors finds most
   hazards that exist (each hit is a witness);
3. symbolic ternary/transient simulation with BDDs decides the rest, within a node budget;
4. SAT on the same conditions, within a conflict budget;
5. past every budget: "inconclusive", with the reason. Never a silent pass.

A proven hazard is replayed by the timed simulator (:mod:`hazlint.analysis.timedsim`) with the
nominal delays; if it does not glitch there, a delay assignment that makes it glitch is searched
and reported. :func:`refine` is the entry point the lint pipeline calls on the rule findings.
"""
from __future__ import annotations

import random
import time
from dataclasses import dataclass, field, replace
from typing import Any, Iterable, Mapping, Sequence

import networkx as nx

from .. import budget
from ..diagnostics import Diagnostic, Severity
from ..netlist.graph import ASYNC_ROLES, SOURCE_KINDS
from ..netlist.walks import behind_loops
from . import fixes as _fixes
from .symbolic import Budget, HazardProof, bdd_hazards
from .satcheck import sat_hazards
from .ternary import (HAZARD_KINDS, CyclicCone, IntAlgebra, cone, free_sources, function_hazard,
                      hazard_planes, propagate, ternary_gate)
from .delaysearch import search_assignment
from .timedsim import DelayAssignment, Glitch, replay, simulate
from .changes import ChangeModel
from .loops import classify_loop
from .changewords import with_change_model
from .multichange import decide_sink, witness_function_hazard
from .waves import timing_diagram

DEFAULTS: dict[str, Any] = {
    "node_budget": 100_000,      # BDD live nodes per check
    "conflict_budget": 20_000,   # SAT conflicts per query
    "check_time": 2.0,           # seconds per check (BDD + SAT)
    "sim_vectors": 256,          # random side-input vectors simulated at once
    "max_sources": 12,           # changing sources tried per finding
    "max_sinks": 3,              # sinks classified per reconvergence finding
    "max_findings": 200,         # findings per run given timed replay, delay search, waveform
    "search_trials": 150,        # timed simulations when searching a glitching delay assignment
    "search_events": 500_000,    # simulation events per delay search, over its trials (0: none)
    "bdd_circuit_time": 10.0,    # seconds for the shared BDD of a batched pass, then SAT
    "batch_time": 120.0,         # seconds for the SAT part of a batched pass (0: no limit)
    "engine": "sat",             # batched pass: "sat" (one incremental solver) or "bdd" (a
                                 # shared BDD, then SAT past its budget)
    "max_changes": 0,            # glitch-sensitive sinks: largest set of simultaneously
                                 # changing sources examined (0: every set the model allows)
    "engine_sources": 16,        # ... cones with more sources go to SAT without a BDD try
    "show_proven_absent": False,
    "waveforms": True,
    "seed": 0,
}

CLASS_ORDER = ("static-1-hazard", "static-0-hazard", "dynamic-hazard")


def options_with_defaults(options: Mapping[str, Any] | None) -> dict[str, Any]:
    opts = dict(DEFAULTS)
    for k, v in dict(options or {}).items():
        opts[k.replace("-", "_")] = v
    return opts


# ---------------------------------------------------------------------------------------------
# One transition at one target

def path_count(graph: nx.DiGraph, order: Sequence[str], source: str, target: str, cap: int = 2
               ) -> int:
    """Number of paths (pin-wise) from ``source`` to ``target``, capped at ``cap`` (DP over the
    topological order)."""
    cnt = {source: 1}
    for n in order:
        if n == source:
            continue
        d = graph.nodes[n]
        ins = d.get("inputs") or []
        c = sum(cnt.get(i, 0) for i in ins)
        if c:
            cnt[n] = min(c, cap)
    return cnt.get(target, 0)


def prove_transition(graph: nx.DiGraph, target: str, changes: Mapping[str, tuple[int, int]],
                     fixed: Mapping[str, int] | None = None, kinds: Sequence[str] = HAZARD_KINDS,
                     options: Mapping[str, Any] | None = None, order: Sequence[str] | None = None
                     ) -> dict[str, HazardProof]:
    """Decide every hazard kind at ``target`` for the change ``changes`` (source -> (before,
    after)), the sources in ``fixed`` held, all other free sources of the cone free."""
    opts = options_with_defaults(options)
    fixed = dict(fixed or {})
    try:
        order = order or cone(graph, [target])
    except CyclicCone:
        return {k: HazardProof(k, "inconclusive", reason="combinational loop in the cone",
                               method="structural") for k in kinds}
    in_cone = set(order)
    moving = [n for n, (a, b) in changes.items() if a != b and n in in_cone]
    if not moving:
        return {k: HazardProof(k, "absent", reason="no changing input reaches the target",
                               method="structural") for k in kinds}
    if len(moving) == 1 and path_count(graph, order, moving[0], target) <= 1:
        return {k: HazardProof(k, "absent", reason="a single path from the changing input",
                               method="structural") for k in kinds}
    srcs = free_sources(graph, order)
    changes = {n: v for n, v in changes.items() if n in in_cone}
    free = [n for n in srcs if n not in changes and n not in fixed]
    out: dict[str, HazardProof] = {}
    # 2. explicit random simulation, bit-parallel
    width = max(1, int(opts["sim_vectors"])) if free else 1
    A = IntAlgebra(width)
    rng = random.Random(opts["seed"])
    va, vb = {}, {}
    for n in srcs:
        if n in changes:
            a, b = changes[n]
            va[n], vb[n] = (A.mask if a else 0), (A.mask if b else 0)
        elif n in fixed:
            va[n] = vb[n] = A.mask if fixed[n] else 0
        else:
            va[n] = vb[n] = rng.getrandbits(width)
    planes = hazard_planes(graph, order, target, A, va, vb, srcs)
    for k in kinds:
        lanes = planes[k]
        if not lanes:
            continue
        pick, is_fh = None, None
        for _ in range(8 if len(moving) > 1 else 1):
            lane = (lanes & -lanes).bit_length() - 1
            wit = {n: (va[n] >> lane) & 1 for n in free}
            fh = None
            if len(moving) > 1:
                before = dict(wit, **fixed, **{n: a for n, (a, _) in changes.items()})
                after = dict(wit, **fixed, **{n: b for n, (_, b) in changes.items()})
                fh = function_hazard(graph, order, target, before, after)
            if pick is None or (is_fh and not fh):
                pick, is_fh = wit, fh
            if not fh:
                break
            lanes &= lanes - 1
            if not lanes:
                break
        out[k] = HazardProof(k, "present", witness=pick, method="simulation",
                             function_hazard=is_fh,
                             reason=f"found by ternary simulation of {width} vectors")
    rest = [k for k in kinds if k not in out]
    if not rest:
        return out
    if not free:
        # every input known: the simulation above was exhaustive
        for k in rest:
            out[k] = HazardProof(k, "absent", method="simulation",
                                 reason="the transition is fully specified")
        return out
    # 3. BDD, 4. SAT
    t0 = time.perf_counter()
    try:
        res = bdd_hazards(graph, order, target, changes, fixed, rest,
                          node_budget=int(opts["node_budget"]),
                          time_budget=float(opts["check_time"]) / 2)
        out.update(res)
        return out
    except Budget as exc:
        bdd_reason = exc.reason
    left = float(opts["check_time"]) - (time.perf_counter() - t0)
    res = sat_hazards(graph, order, target, changes, fixed, rest,
                      conflict_budget=int(opts["conflict_budget"]), time_budget=max(0.05, left))
    for k, p in res.items():
        if p.status == "inconclusive":
            p.reason = f"{bdd_reason}; {p.reason}"
        out[k] = p
    return out


@dataclass
class Classification:
    """The verdict for one change at one target, with everything needed to show it."""

    target: str
    classification: str                 # a hazard kind, "hazard-free" or "inconclusive"
    changes: dict[str, tuple[int, int]]
    before: dict[str, int] = field(default_factory=dict)
    after: dict[str, int] = field(default_factory=dict)
    proofs: dict[str, HazardProof] = field(default_factory=dict)
    reason: str = ""
    function_hazard: bool | None = None
    glitch: Glitch | None = None
    assignment: DelayAssignment | None = None
    how: str = ""                      # "nominal" | "min-corner" | "within-bounds" | "arbitrary"
    trace: Any = None

    @property
    def proven(self) -> bool:
        return self.classification in HAZARD_KINDS

    @property
    def present_kinds(self) -> list[str]:
        return [k for k in CLASS_ORDER if k in self.proofs and self.proofs[k].status == "present"]


def classify(graph: nx.DiGraph, target: str, changes: Mapping[str, tuple[int, int]],
             fixed: Mapping[str, int] | None = None, options: Mapping[str, Any] | None = None,
             order: Sequence[str] | None = None, replay_glitch: bool = True,
             proofs: Mapping[str, HazardProof] | None = None,
             sources: Sequence[str] | None = None) -> Classification:
    """Classify the change at ``target`` and, for a proven hazard, replay its witness in the
    timed simulator (nominal delays first, then a search for a glitching assignment).
    ``proofs`` (every hazard kind decided already, e.g. by :func:`classify_outputs`) skips the
    proof step; ``sources`` (the free sources of ``order``) saves finding them again."""
    opts = options_with_defaults(options)
    try:
        order = order or cone(graph, [target])
    except CyclicCone:
        return Classification(target, "inconclusive", dict(changes),
                              reason="combinational loop in the cone")
    if proofs is None or any(k not in proofs for k in HAZARD_KINDS):
        proofs = prove_transition(graph, target, changes, fixed, HAZARD_KINDS, opts, order)
    else:
        proofs = dict(proofs)
    c = Classification(target, "hazard-free", dict(changes), proofs=proofs)
    present = [k for k in CLASS_ORDER if proofs[k].status == "present"]
    if present:
        k = present[0]
        p = proofs[k]
        c.classification = k
        c.function_hazard = p.function_hazard
        srcs = sources if sources is not None else free_sources(graph, order)
        wit = dict(p.witness or {})
        base = {n: wit.get(n, 0) for n in srcs}
        base.update(fixed or {})
        c.before = dict(base, **{n: a for n, (a, _) in changes.items()})
        c.after = dict(base, **{n: b for n, (_, b) in changes.items()})
        if p.function_hazard is None and sum(a != b for a, b in changes.values()) > 1:
            c.function_hazard = function_hazard(graph, order, target, c.before, c.after)
        c.reason = p.reason or p.method
        if replay_glitch:
            replay_witness(graph, c, k, order, opts)
    else:
        inc = [p for p in proofs.values() if p.status == "inconclusive"]
        if inc:
            c.classification = "inconclusive"
            c.reason = "; ".join(sorted({p.reason for p in inc}))
        else:
            c.reason = "; ".join(sorted({p.reason for p in proofs.values() if p.reason}))
    return c


def replay_witness(graph, c: Classification, k: str, order, opts) -> None:
    """Replay a proven hazard's witness in the timed simulator: the nominal delays (either
    direction), then a search for a glitching assignment (skews between changing sources,
    delay bounds, arbitrary wire delays)."""
    if _nominal_reversed(graph, c, k, order):
        return
    asg, gl, how = search_assignment(graph, c.target, c.before, c.after, order,
                                     trials=int(opts["search_trials"]),
                                     event_budget=int(opts["search_events"]),
                                     seed=int(opts["seed"]), want_dynamic=k == "dynamic-hazard")
    if asg is None:
        c.how = how
        return
    c.assignment, c.glitch, c.how = asg, gl, how
    # a transport glitch that inertial gates also show is reported as inertial
    if asg.mode == "transport":
        inert = DelayAssignment(asg.corner, asg.pins, asg.wires, "inertial", asg.offsets)
        g2, _ = replay(graph, c.target, c.before, c.after, inert, watch=[c.target])
        if g2.occurs and len(g2.changes) >= (3 if k == "dynamic-hazard" else 2):
            c.assignment, c.glitch = inert, g2


def _nominal_reversed(graph, c: Classification, kind: str, order) -> bool:
    """Hazard kinds are the same for a change and its reverse (time reversal of the transient
    algebra); when the reverse change glitches with the nominal delays and the given one does
    not, show the reverse."""
    need = 3 if kind == "dynamic-hazard" else 2
    for before, after, flip in ((c.before, c.after, False), (c.after, c.before, True)):
        asg = DelayAssignment("max", mode="inertial")
        gl, _ = replay(graph, c.target, before, after, asg, watch=[c.target])
        if gl.occurs and len(gl.changes) >= need:
            if flip:
                c.before, c.after = dict(c.after), dict(c.before)
                c.changes = {n: (b, a) for n, (a, b) in c.changes.items()}
            c.assignment, c.glitch, c.how = asg, gl, "nominal"
            return True
    return False


def combine(results: Sequence[Classification]) -> Classification | None:
    """The verdict over several candidate changes: the first proven hazard (static before
    dynamic), else inconclusive if any is, else hazard-free."""
    if not results:
        return None
    for k in CLASS_ORDER:
        for r in results:
            if r.classification == k:
                return r
    for r in results:
        if r.classification == "inconclusive":
            return r
    return results[0]


# ---------------------------------------------------------------------------------------------
# Choice of changing sources for a finding

def stem_sources(graph: nx.DiGraph, stem: str, target: str | None, limit: int,
                 quiet: frozenset[str] = frozenset()) -> list[str]:
    """Free sources whose change can toggle ``stem`` (and so reach the ``target`` the stem
    feeds; the choice does not depend on it): the stem itself when it is a source, else the
    sources of its fan-in cone, nearest first. ``quiet`` sources (quasi-static) never
    change."""
    if graph.nodes[stem]["kind"] in SOURCE_KINDS:
        return [] if stem in quiet else [stem]
    dist = {stem: 0}
    frontier = [stem]
    out = []
    while frontier and len(out) < limit:
        nxt = []
        for n in frontier:
            for p in graph.predecessors(n):
                if p in dist:
                    continue
                dist[p] = dist[n] + 1
                k = graph.nodes[p]["kind"]
                if k in SOURCE_KINDS and k != "const":
                    if p not in quiet:
                        out.append(p)
                elif k == "gate":
                    nxt.append(p)
        frontier = nxt
    return out[:limit]


def classify_sources(graph, target, sources, options, order=None, known=None,
                     replay_glitch=True, free=None, memo=None) -> list[Classification]:
    """Single changes of ``sources`` (in turn, up to the first proven hazard) at ``target``.
    ``known`` maps (target, source) to proofs decided beforehand; ``order`` and ``free``
    (the target's cone in topological order and its free sources) may be given. ``memo``
    keeps each (target, source) classification for the run: findings of different stems
    share their sinks and sources, and the timed replay of one change is done once (a
    replayed classification also serves a caller that does not need the replay)."""
    out = []
    for s in sources:
        c = None
        if memo is not None:
            c = memo.get((target, s, True))
            if c is None and not replay_glitch:
                c = memo.get((target, s, False))
        if c is None:
            pre = known.get((target, s)) if known else None
            c = classify(graph, target, {s: (0, 1)}, options=options, order=order,
                         replay_glitch=replay_glitch, proofs=pre, sources=free)
            if memo is not None:
                memo[(target, s, replay_glitch)] = c
        out.append(c)
        if c.proven:
            break
    return out


# ---------------------------------------------------------------------------------------------
# Loops: Eichelberger's ternary simulation on the feedback

@dataclass
class LoopVerdict:
    behaviour: str                       # "oscillation" | "storage" | "settles" | "inconclusive"
    inputs: dict[str, int] | None = None  # external values that make it oscillate
    stable_states: int | None = None
    reason: str = ""


def loop_behaviour(graph: nx.DiGraph, scc: Iterable[str], max_inputs: int = 12,
                   max_cut: int = 10) -> LoopVerdict:
    """Does the loop settle, hold state, or oscillate? (:func:`hazlint.analysis.loops.
    classify_loop`: stable states over every value of the loop inputs, then Eichelberger's
    procedures A and B for every single input change.)"""
    c = classify_loop(graph, scc, max_inputs=max_inputs, max_cut=max_cut)
    w = c.witness or {}
    return LoopVerdict(c.behaviour, inputs=w.get("inputs", w.get("to")),
                       stable_states=0 if "inputs" in w else None, reason=c.reason)


# ---------------------------------------------------------------------------------------------
# Presentation helpers

def net_label(graph: nx.DiGraph, n: str) -> str:
    d = graph.nodes[n]
    return d.get("port") or d.get("name") or n


def witness_json(graph, c: Classification) -> dict[str, Any]:
    inputs = {net_label(graph, n): v for n, v in sorted(c.before.items())
              if n not in c.changes}
    trans = {net_label(graph, n): [a, b] for n, (a, b) in sorted(c.changes.items())}
    return {"inputs": inputs, "transition": trans,
            "before_nodes": dict(sorted(c.before.items())),
            "after_nodes": dict(sorted(c.after.items()))}


def witness_text(graph, c: Classification) -> str:
    moves = ", ".join(f"{net_label(graph, n)} {'rises' if b > a else 'falls'}"
                      for n, (a, b) in sorted(c.changes.items()) if a != b)
    held = ", ".join(f"{net_label(graph, n)}={v}" for n, v in sorted(
        c.before.items(), key=lambda x: net_label(graph, x[0])) if n not in c.changes)
    return f"{moves} with {held}" if held else moves


def glitch_text(c: Classification) -> str:
    if c.glitch is None:
        return f"not reproduced by timed simulation ({c.how})" if c.how else ""
    g = c.glitch
    what = (f"pulse {_num(g.time)} after the change, {_num(g.width)} wide, "
            f"{len(g.changes)} output changes")
    if c.how == "nominal":
        return f"glitches with the nominal delays ({c.assignment.mode}): {what}"
    if c.how == "skewed":
        return f"glitches with the nominal delays and the changes skewed as below: {what}"
    if c.how in ("min-corner", "within-bounds"):
        return f"glitches within the delay bounds ({c.how}): {what}"
    return ("hazardous under arbitrary delays but not with the nominal delays; it glitches "
            f"with the delay assignment below: {what}")


def _num(x) -> str:
    if x is None:
        return "?"
    return str(int(x)) if float(x).is_integer() else f"{x:g}"


def waveform_nets(graph, c: Classification, evidence: Mapping[str, Any] | None) -> list[str]:
    ev = evidence or {}
    nets: list[str] = []
    for n in c.changes:
        nets.append(n)
    stem = ev.get("stem_node")
    if stem:
        nets.append(stem)
    fp, sp = list(ev.get("fast_path") or []), list(ev.get("slow_path") or [])
    for n in (fp[1:-1] + sp[1:-1])[:6]:
        nets.append(n)
    if ev.get("reconvergence_node"):
        nets.append(ev["reconvergence_node"])
    nets.append(c.target)
    d = graph.nodes[c.target]
    if d["kind"] == "sink" and d.get("inputs"):
        nets = [n for n in nets if n != d["inputs"][0]]
    out = []
    for n in nets:
        if n in graph and n not in out:
            out.append(n)
    return out


def witness_lead(c: Classification) -> float:
    """When the drawn witness changes its inputs: a round time before which all is steady."""
    end = 1.0
    if c.glitch is not None and c.glitch.changes:
        end = max(t for t, _ in c.glitch.changes)
    lead = 1.0
    while lead * 4 < end:
        lead *= 10
    return lead


def witness_trace(graph, c: Classification, nets: Sequence[str] | None,
                  settle: float | None = None):
    """Replay the witness (inputs change at ``settle``, by default :func:`witness_lead`)."""
    asg = c.assignment or DelayAssignment()
    at = witness_lead(c) if settle is None else settle
    _, tr = replay(graph, c.target, c.before, c.after, asg, settle=at, watch=nets)
    return tr


def diagram_lines(graph, c: Classification, nets: Sequence[str], ascii_only=False) -> list[str]:
    tr = witness_trace(graph, c, nets)
    c.trace = tr
    names = {n: net_label(graph, n) for n in nets}
    return timing_diagram(tr, nets, names, ascii_only=ascii_only)


def fix_for(graph, c: Classification, evidence: Mapping[str, Any] | None, sink_role,
            memo: dict | None = None) -> str:
    """The fix hint of a proven hazard: a verified consensus term where one exists, else
    registering or balancing. ``memo`` (one per run) keeps the consensus search per change and
    gate, which findings of different stems at the same sink share."""
    ev = evidence or {}
    cands = []
    if ev.get("reconvergence_node"):
        cands.append(ev["reconvergence_node"])
    n = graph.nodes[c.target].get("inputs", [c.target])[0] if \
        graph.nodes[c.target]["kind"] == "sink" else c.target
    for _ in range(6):
        if n not in cands:
            cands.append(n)
        d = graph.nodes[n]
        if d["kind"] != "gate" or d["op"] not in ("buf", "not"):
            break
        n = d["inputs"][0]
    if c.classification in ("static-1-hazard", "static-0-hazard") and not c.function_hazard:
        f = _fixes.consensus_fix(graph, c.target, c.classification, c.before, c.after, cands,
                                 memo=memo)
        if f:
            return f["text"] + " (checked: the hazard is gone with it)"
    if c.function_hazard:
        return ("function hazard: no logic implementation is glitch-free for this input change; "
                "make the inputs change one at a time or register the result. "
                + _fixes.fallback_fix(graph, c.target, None, (), sink_role))
    skew = ev.get("skew")
    if skew is None and c.glitch is not None:
        skew = c.glitch.width
    return _fixes.fallback_fix(graph, c.target, skew, ev.get("fast_path") or (), sink_role)


# ---------------------------------------------------------------------------------------------
# The pipeline entry point

def _sensitive(graph, context, sink) -> bool:
    if context is not None:
        try:
            return sink in context.sensitive_sinks
        except Exception:  # noqa: BLE001 - a context without the analysis
            pass
    d = graph.nodes[sink]
    return d.get("role") in ASYNC_ROLES or bool(d.get("asynchronous"))


def refine(design, diagnostics: Sequence[Diagnostic], context=None,
           options: Mapping[str, Any] | None = None) -> list[Diagnostic]:
    """Classify the findings of the structural rules.

    ``unbalanced-reconvergence`` and ``unregistered-async`` findings become static-1, static-0 or
    dynamic hazards (error when proven at a glitch-sensitive sink), stay warnings when
    inconclusive or structural only, and are dropped when proven absent (kept with
    ``show_proven_absent``). ``combinational-loop`` findings gain an ``oscillation`` finding when
    the loop can oscillate. Other findings pass through unchanged.

    Cost: the single changes every finding needs are first decided together, in one batched
    pass (:func:`classify_outputs`: bit-parallel ternary simulation, then shared BDD or SAT).
    The timed replay, delay search and waveform of a proven hazard are then done for the first
    ``max_findings`` findings in order of importance (glitch-sensitive sinks first, then the
    larger skew); the others keep their classification and witness, with a note saying the
    replay was left out, unless the same change at the same sink was replayed already for one
    of the first (each (sink, source) change is classified, and replayed, once per run).
    Findings whose change the batch could not decide (a loop in the cone) are proven one by one
    within the same limit, else reported inconclusive with that reason.
    """
    opts = options_with_defaults(options)
    graph = design.graph if hasattr(design, "graph") else design
    memo: dict[str, list[str]] = {}
    plans = [_plan(graph, d, context, opts, memo) for d in diagnostics]
    known = _decide_batch(graph, plans, opts)
    limit = int(opts["max_findings"])
    rank = sorted((i for i, p in enumerate(plans) if p is not None),
                  key=lambda i: plans[i][0])
    full = set(rank[:limit]) if limit >= 0 else set(rank)
    out: list[Diagnostic] = []
    memo = _RunMemo()
    for i, d in enumerate(diagnostics):
        ev = d.evidence if isinstance(d.evidence, Mapping) else {}
        try:
            if plans[i] is not None and budget.expired():
                out.append(_out_of_time(d))
            elif plans[i] is not None:
                out.extend(_refine_planned(graph, d, ev, plans[i][1], context, opts, memo,
                                           known, i in full, limit))
            elif d.kind == "combinational-loop" and ev.get("scc"):
                out.append(d)
                osc = _refine_loop(graph, d, ev)
                if osc is not None:
                    out.append(osc)
            else:
                out.append(d)
        except (Budget, RuntimeError, KeyError) as exc:
            out.append(replace(d, notes=tuple(d.notes) + (f"prover: inconclusive ({exc})",)))
    return out


def _out_of_time(d: Diagnostic) -> Diagnostic:
    """A finding the prover had no time left for: inconclusive, with the budget as reason."""
    why = budget.reason()
    evidence = dict(d.evidence) if isinstance(d.evidence, Mapping) else {}
    evidence.update(classification="inconclusive", inconclusive_reason=why)
    return replace(d, severity=Severity.WARNING, evidence=evidence,
                   notes=tuple(d.notes) + (f"hazard proof inconclusive: {why}",))


def _plan(graph, d: Diagnostic, context, opts, memo=None):
    """(priority key, [(sink, [changing sources])]) for a finding the prover classifies.
    ``memo`` keeps each stem's sources (they do not depend on the sink)."""
    ev = d.evidence if isinstance(d.evidence, Mapping) else {}
    if d.kind == "unbalanced-reconvergence" and ev.get("stem_node") in graph:
        stem = ev["stem_node"]
        sinks = [s for s in ev.get("sink_nodes") or [] if s in graph]
        sinks.sort(key=lambda s: not _sensitive(graph, context, s))
        sinks = sinks[: int(opts["max_sinks"])]
        srcs = memo.get(stem) if memo is not None else None
        if srcs is None:
            srcs = stem_sources(graph, stem, None, int(opts["max_sources"]),
                                getattr(context, "quiet_sources", frozenset()))
            if memo is not None:
                memo[stem] = srcs
        work = [(s, srcs) for s in sinks]
        sens = any(_sensitive(graph, context, s) for s in sinks)
        skew = ev.get("skew")
        skew = float(skew) if isinstance(skew, (int, float)) else 0.0
        return (0 if sens else 2, -skew, d.sort_key()), work
    if d.kind == "unregistered-async" and ev.get("sink_node") in graph:
        # decided over the change model by refine_sink (multichange), not by single changes
        return (1, 0.0, d.sort_key()), [(ev["sink_node"], [])]
    return None


def _decide_batch(graph, plans, opts) -> dict[tuple[str, str], dict[str, HazardProof]]:
    """Every (sink, source) single change the plans need, decided in one batched pass. Sinks
    whose fan-in cone holds a combinational loop are left out (proven one by one)."""
    wanted = {(s, x) for p in plans if p is not None for s, xs in p[1] for x in xs}
    if not wanted:
        return {}
    targets = sorted({s for s, _ in wanted})
    looped = behind_loops(graph)
    targets = [t for t in targets if t not in looped]
    if not targets:
        return {}
    keep = set(targets)
    wanted = {(s, x) for s, x in wanted if s in keep}
    try:
        res = classify_outputs(graph, targets, opts, changing={x for _, x in wanted},
                               wanted=wanted, vectors=max(1, int(opts["sim_vectors"])))
    except (CyclicCone, Budget, RuntimeError):
        return {}
    return {k: v for k, v in res.items() if all(kind in v for kind in HAZARD_KINDS)}


def _cone_of(graph, sink, cones):
    """(order, free sources) of ``sink``'s fan-in cone, computed once per run; None for a
    cone with a loop (``classify`` reports that itself)."""
    if sink not in cones:
        try:
            order = cone(graph, [sink])
            cones[sink] = (order, free_sources(graph, order))
        except CyclicCone:
            cones[sink] = None
    return cones[sink]


@dataclass
class _RunMemo:
    """What one :func:`refine` run works out once and shares between its findings."""

    # (sink, changing sources, replayed) -> verdict over those sources
    verdicts: dict[tuple, Classification] = field(default_factory=dict)
    # sink -> (cone order, free sources), None for a cone with a loop
    cones: dict[str, tuple | None] = field(default_factory=dict)
    # (sink, source, replayed) -> verdict of that single change
    per_source: dict[tuple, Classification] = field(default_factory=dict)
    # consensus-term searches, per change and gate (see fixes.consensus_fix)
    fixes: dict = field(default_factory=dict)
    # driver of a glitch-sensitive sink -> its verdict over the change model
    sinks: dict = field(default_factory=dict)


def _refine_planned(graph, d, ev, work, context, opts, memo: _RunMemo, known, full, limit):
    if d.kind == "unregistered-async":
        return _refine_sink(graph, d, ev, context, opts, memo, full, limit)
    results = []
    cache = memo.verdicts
    for s, srcs in work:
        key = (s, tuple(srcs), full)
        if not full and (s, tuple(srcs), True) in cache:
            key = (s, tuple(srcs), True)
        if key not in cache:
            if not full and not all((s, x) in known for x in srcs):
                c = Classification(s, "inconclusive", {}, reason=(
                    f"not proven: beyond the prover's limit of {limit} findings per run "
                    "(option max_findings)"))
            else:
                got = _cone_of(graph, s, memo.cones)
                order, free = got if got is not None else (None, None)
                c = combine(classify_sources(graph, s, srcs, opts, order=order, known=known,
                                             replay_glitch=full, free=free,
                                             memo=memo.per_source)) or Classification(
                    s, "inconclusive", {}, reason="no changing input found for the stem"
                    if d.kind == "unbalanced-reconvergence" else "no changing source")
            cache[key] = c
        results.append(cache[key])
    c = combine(results)
    if c is None:
        return [d]
    replayed = full or c.glitch is not None or bool(c.how)
    o = opts if full else dict(opts, waveforms=False)
    x = _apply(graph, d, c, ev, context, o, replayed=replayed, limit=limit,
               fix_memo=memo.fixes)
    return [x] if x is not None else []


def _refine_sink(graph, d, ev, context, opts, memo: _RunMemo, full, limit):
    """A glitch-sensitive sink's finding, decided over every transition the change model
    allows (:mod:`hazlint.analysis.multichange`); its drivers' verdicts are shared."""
    sink = ev["sink_node"]
    drv = (graph.nodes[sink].get("inputs") or [sink])[0]
    v = memo.sinks.get(drv)
    if v is None:
        model = getattr(context, "change_model", None) if context is not None else None
        if model is None:
            model = ChangeModel(quiet=frozenset(ev.get("quiet_nodes") or ()))
        v = memo.sinks[drv] = decide_sink(graph, sink, model, opts)
    label = lambda n: net_label(graph, n)  # noqa: E731
    pick = v.best()
    if pick is not None:
        k, question, f = pick
        c = Classification(sink, k, {n: (f.before[n], f.after[n]) for n in f.changed},
                           dict(f.before), dict(f.after), proofs=v.hazard_proofs(),
                           reason=v.proof_text(label))
        got = _cone_of(graph, sink, memo.cones)
        order = got[0] if got is not None else None
        c.function_hazard = (question == "function" if question != "any" else
                             witness_function_hazard(graph, order, sink, f))
        if full and order is not None:
            replay_witness(graph, c, k, order, opts)
    else:
        c = Classification(sink, "hazard-free" if v.status == "hazard-free" else "inconclusive",
                           {}, proofs=v.hazard_proofs(), reason=v.proof_text(label))
    o = opts if full else dict(opts, waveforms=False)
    x = _apply(graph, d, c, ev, context, o, replayed=full or c.glitch is not None or bool(c.how),
               limit=limit, fix_memo=memo.fixes)
    return [] if x is None else [with_change_model(x, v, label, _cell_model(context))]


def _cell_model(context) -> str:
    return getattr(getattr(context, "config", None), "cell_model", None) or "atomic"


def _apply(graph, d: Diagnostic, c: Classification, ev, context, opts, replayed: bool = True,
           limit: int | None = None, fix_memo: dict | None = None) -> Diagnostic | None:
    sens = _sensitive(graph, context, c.target)
    sink_role = graph.nodes[c.target].get("role")
    evidence = dict(d.evidence)
    evidence.setdefault("sink_node", c.target)      # the sink the verdict is about
    evidence["classification"] = c.classification
    evidence["proof"] = {k: p.to_json() for k, p in c.proofs.items()}
    notes = list(d.notes)
    if c.classification == "hazard-free":
        if not opts["show_proven_absent"]:
            return None
        notes.append(f"proven hazard-free under arbitrary delays ({c.reason})")
        return replace(d, severity=Severity.INFO, evidence=evidence, notes=tuple(notes),
                       message=d.message + "; proven hazard-free")
    if c.classification == "inconclusive":
        notes.append(f"hazard proof inconclusive: {c.reason}")
        evidence["inconclusive_reason"] = c.reason
        return replace(d, severity=max(Severity.WARNING, min(d.severity, Severity.WARNING)),
                       evidence=evidence, notes=tuple(notes))
    kind = c.classification
    evidence["witness"] = witness_json(graph, c)
    evidence["function_hazard"] = bool(c.function_hazard)
    glitch = c.glitch.to_json() if c.glitch else {"occurs": False}
    glitch["how"] = c.how
    if c.assignment is not None:
        glitch["delays"] = c.assignment.to_json()
    evidence["glitch"] = glitch
    tname = net_label(graph, c.target)
    label = {"static-1-hazard": "static-1 hazard", "static-0-hazard": "static-0 hazard",
             "dynamic-hazard": "dynamic hazard"}[kind]
    msg = f"{label} at {tname}: {witness_text(graph, c)}"
    if c.function_hazard:
        msg += " (function hazard)"
    gt = glitch_text(c)
    notes.append(f"proof: {c.reason}")
    others = [k2 for k2 in c.present_kinds if k2 != kind]
    if others:
        notes.append("also possible for other transitions: " + ", ".join(others))
    evidence["present_kinds"] = c.present_kinds
    notes.append(f"witness: {witness_text(graph, c)}")
    if gt:
        notes.append(f"timed simulation: {gt}")
    elif not replayed:
        notes.append(f"timed replay, delay search and waveform left out: beyond the prover's "
                     f"limit of {limit} fully shown findings per run (option max_findings)")
    if c.assignment is not None and c.how not in ("nominal",):
        notes += ["  " + x for x in c.assignment.describe(graph)[1:]]
    if opts["waveforms"] and c.before:
        nets = waveform_nets(graph, c, ev)
        evidence["waveform_nets"] = nets
        notes += diagram_lines(graph, c, nets)
    sev = Severity.ERROR if sens else Severity.WARNING
    fix = fix_for(graph, c, ev, sink_role, fix_memo) if replayed else d.fix
    return replace(d, kind=kind, severity=sev, message=msg, evidence=evidence,
                   notes=tuple(notes), fix=fix)


def _refine_loop(graph, d: Diagnostic, ev) -> Diagnostic | None:
    """An oscillation finding for a loop finding the loop rule did not classify itself."""
    if ev.get("loop"):
        return None
    comp = [n for n in ev["scc"] if n in graph]
    v = loop_behaviour(graph, comp)
    if v.behaviour != "oscillation":
        return None
    ins = ", ".join(f"{net_label(graph, n)}={x}" for n, x in sorted(v.inputs.items()))
    evidence = {"scc": list(comp), "cycle": list(ev.get("cycle") or []), "inputs":
                {net_label(graph, n): x for n, x in v.inputs.items()},
                "behaviour": v.behaviour, "reason": v.reason,
                "key": f"osc:{ev.get('key', '')}"}
    return replace(d, kind="oscillation", severity=Severity.ERROR,
                   message=f"loop oscillates when {ins}: it has no stable state",
                   evidence=evidence, notes=tuple(d.notes) + (
                       f"ternary simulation from the unknown state leaves the loop X and no "
                       f"binary state is stable for {ins}",),
                   fix="break the feedback with a register, or make the loop's inversion count "
                       "even so it can hold a value")


# ---------------------------------------------------------------------------------------------
# Whole-design classification (every output, every single-input change)

def classify_outputs(graph: nx.DiGraph, targets: Sequence[str] | None = None,
                     options: Mapping[str, Any] | None = None, rounds: int = 3,
                     vectors: int = 256, changing: Iterable[str] | None = None,
                     wanted: set[tuple[str, str]] | None = None, chunk: int = 64
                     ) -> dict[tuple[str, str], dict[str, HazardProof]]:
    """For every target (default: every sink) and every free source in its cone (or only the
    ``changing`` ones; only the (target, source) pairs in ``wanted`` when given), decide each
    hazard kind for a single change of that source.

    One explicit ternary/transient pass covers many (source, vector) pairs at once: lane block
    *i* holds ``vectors`` random side-input vectors with source *i* changing (``chunk`` sources
    per pass, so the bit-vectors stay a bounded size). What the random vectors do not show is
    settled per pair by the structural path count, then BDD, then SAT, else reported
    inconclusive.
    """
    opts = options_with_defaults(options)
    g = graph
    if targets is None:
        targets = [n for n, d in g.nodes(data=True) if d["kind"] == "sink"]
    order = cone(g, targets)
    srcs = free_sources(g, order)
    index = {n: i for i, n in enumerate(srcs)}
    if changing is None:
        chg = list(srcs)
    else:
        want_src = set(changing)
        chg = [n for n in srcs if n in want_src]
    chg_mask = 0
    for n in chg:
        chg_mask |= 1 << index[n]
    rng = random.Random(opts["seed"])
    block = (1 << vectors) - 1
    found: dict[tuple[str, str], dict[str, HazardProof]] = {}
    # support of each target, by bit sets over sources (DP over the topological order)
    sup: dict[str, int] = {}
    for n in order:
        d = g.nodes[n]
        if n in index:
            sup[n] = 1 << index[n]
        else:
            v = 0
            for i in d.get("inputs") or ():
                v |= sup.get(i, 0)
            sup[n] = v
    chunk = max(1, int(chunk))
    for c0 in range(0, len(chg), chunk):
        if budget.expired():
            break               # the pairs left open are proven one by one, or reported
        part = chg[c0:c0 + chunk]
        lane_of = {n: k for k, n in enumerate(part)}
        part_mask = 0
        for n in part:
            part_mask |= 1 << index[n]
        width = len(part) * vectors
        A = IntAlgebra(width)
        for _ in range(rounds):
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
                while s:
                    i = (s & -s).bit_length() - 1
                    s &= s - 1
                    x = srcs[i]
                    if wanted is not None and (t, x) not in wanted:
                        continue
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
                                reason=f"found by ternary simulation of {vectors} vectors")
    # what the random vectors left open: structural proof, then shared BDD / SAT per source
    open_pairs: dict[str, list[str]] = {}
    counts: dict[str, dict[str, int]] = {}
    pos = {n: i for i, n in enumerate(order)}
    for t in targets:
        if budget.expired():
            break               # pairs left undecided are proven one by one, or reported
        s = sup[t] & chg_mask
        while s:
            i = (s & -s).bit_length() - 1
            s &= s - 1
            x = srcs[i]
            if wanted is not None and (t, x) not in wanted:
                continue
            res = found.setdefault((t, x), {})
            rest = [k for k in HAZARD_KINDS if k not in res]
            if not rest:
                continue
            if x not in counts:
                counts[x] = _path_counts(g, order, x, pos=pos)
            if counts[x].get(t, 0) <= 1:
                for k in rest:
                    res[k] = HazardProof(k, "absent", method="structural",
                                         reason="a single path from the changing input")
                continue
            open_pairs.setdefault(x, []).append(t)
    if open_pairs and not budget.expired():
        _prove_open(g, order, targets, srcs, open_pairs, found, opts)
    return found


def _path_counts(g, order, source, cap=2, pos=None) -> dict[str, int]:
    """Paths (pin-wise) from ``source`` to every node, capped (DP over the topological order of
    ``source``'s fan-out only; with ``pos``, each node's position in ``order``, the fan-out is
    sorted instead of ``order`` scanned: many sources with small fan-outs cost their size)."""
    cnt = {source: 1}
    stack, fo = [source], {source}
    while stack:
        n = stack.pop()
        for s in g.successors(n):
            if s not in fo:
                fo.add(s)
                stack.append(s)
    walk = order if pos is None else sorted((n for n in fo if n in pos), key=pos.__getitem__)
    for n in walk:
        if n == source or n not in fo:
            continue
        c = sum(cnt.get(i, 0) for i in g.nodes[n].get("inputs") or ())
        if c:
            cnt[n] = min(c, cap)
    return cnt


def _var_order(g, order, targets, srcs) -> list[str]:
    """Sources in depth-first fan-in order from the targets (a common BDD ordering
    heuristic: inputs that meet early in the logic get neighbouring levels)."""
    seen, out = set(), []
    src_set = set(srcs)
    for t in targets:
        stack = [(t, iter(g.nodes[t].get("inputs") or ()))]
        seen.add(t)
        while stack:
            n, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                stack.pop()
                if n in src_set:
                    out.append(n)
                continue
            if nxt not in seen:
                seen.add(nxt)
                stack.append((nxt, iter(g.nodes[nxt].get("inputs") or ())))
    return out + [n for n in srcs if n not in set(out)]


def _prove_open(g, order, targets, srcs, open_pairs, found, opts):
    from .satcheck import CNFAlgebra, SOLVER
    from .symbolic import BACKEND, BDDAlgebra
    from .ternary import SharedPlanes, has_three_state
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
    # SAT: one incremental solver for the whole design
    from pysat.solvers import Solver
    C = CNFAlgebra()
    sv = {n: C.new() for n in srcs}
    sp = SharedPlanes(g, order, C, sv)
    cb = int(opts["conflict_budget"])
    # each source's planes are thrown away after its solver: restore the shared encoding
    base = (C.nvars, len(C.clauses), dict(C._memo), dict(C.defs))
    batch_time = float(opts["batch_time"])
    deadline = time.perf_counter() + batch_time if batch_time > 0 else float("inf")
    deadline = min(deadline, time.perf_counter() + budget.left())
    late = (f"{bdd_reason}; the batched proof's time budget ({batch_time:g} s, option "
            "batch_time) was used up")

    def give_up(x, ts):
        why = f"{bdd_reason}; {budget.reason()}" if budget.expired() else late
        for t in ts:
            for k in [k for k in HAZARD_KINDS if k not in found[(t, x)]]:
                found[(t, x)][k] = HazardProof(k, "inconclusive", method="sat", reason=why)

    for x, ts in todo.items():
        if time.perf_counter() > deadline:
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
            for l in c:
                if abs(l) not in ren:
                    ren[abs(l)] = len(ren) + 1
        dense = [[ren[l] if l > 0 else -ren[-l] for l in c] for c in cls]
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
                if time.perf_counter() > deadline:
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
