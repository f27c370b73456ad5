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
from . import workers
from .batch import classify_batch, prove_symbolic  # noqa: F401 - prove_symbolic: public name
from .symbolic import Budget, HazardProof, bdd_hazards
from .satcheck import sat_hazards
from .ternary import (HAZARD_KINDS, CyclicCone, IntAlgebra, cone, free_sources, function_hazard,
                      hazard_planes)
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
    view = _ContextView.of(graph, context)
    with workers.Session({"graph": graph, "context": view}, graph.number_of_nodes()) as ses:
        known = _decide_batch(graph, plans, opts, ses)
        limit = int(opts["max_findings"])
        rank = sorted((i for i, p in enumerate(plans) if p is not None),
                      key=lambda i: plans[i][0])
        full = set(rank[:limit]) if limit >= 0 else set(rank)
        done = _refine_split(ses, graph, diagnostics, plans, known, full, opts, limit)
    out: list[Diagnostic] = []
    for i, d in enumerate(diagnostics):
        out.extend(done.get(i, (d,)))
    return out


def _refine_split(ses, graph, diagnostics, plans, known, full, opts, limit) -> dict:
    """The refinement as work items (:mod:`hazlint.analysis.workers`), in two rounds.

    1. Per sink, the single-change verdicts of the reconvergence findings that name it, in
       finding order: everything one run shares between findings (verdicts, replays, cones)
       is kept per sink, so a sink's item computes what the one-process loop computes.
    2. Per finding, the verdict over its sinks and the finding it becomes; findings at one
       sink driver's glitch-sensitive sinks share that driver's verdict and go together.
    """
    per_sink: dict[str, list] = {}
    for i, d in enumerate(diagnostics):
        if plans[i] is not None and d.kind != "unregistered-async":
            for s, srcs in plans[i][1]:
                per_sink.setdefault(s, []).append((i, tuple(srcs), i in full, d.kind))
    cut = workers.pack([[k] for k in range(len(per_sink))],
                       workers.items_for(ses, len(per_sink)))
    sinks = list(per_sink)
    items = [[(sinks[k], per_sink[sinks[k]],
               {(sinks[k], x): known[(sinks[k], x)] for _, srcs, _, _ in per_sink[sinks[k]]
                for x in srcs if (sinks[k], x) in known}) for k in it] for it in cut]
    verdicts: dict = {}
    for part in ses.map(_sink_verdicts, items, (opts, limit)):
        verdicts.update(part)
    keyed = []
    for i, d in enumerate(diagnostics):
        if plans[i] is None and d.kind != "combinational-loop":
            continue
        keys = []
        if d.kind == "unregistered-async" and plans[i] is not None:
            sink = plans[i][1][0][0]
            keys.append((graph.nodes[sink].get("inputs") or [sink])[0])
        keyed.append((i, keys))
    groups = workers.connected_groups(keyed)
    items = [[(i, diagnostics[i], plans[i], i in full,
               [verdicts[(i, s)] for s, _ in plans[i][1]]
               if plans[i] is not None and diagnostics[i].kind != "unregistered-async"
               else None) for i in it]
             for it in workers.pack(groups, workers.items_for(ses, len(groups)))]
    done: dict = {}
    for part in ses.map(_refine_item, items, (opts, limit)):
        done.update(part)
    return done


def _sink_verdicts(shared, common, item, local) -> dict:
    """Round 1 of :func:`_refine_split`: {(finding index, sink): Classification, or the
    text of the error that stopped it, or None past the time budget}."""
    graph = shared["graph"]
    opts, limit = common
    out: dict = {}
    for s, reqs, known in item:
        memo = _RunMemo()
        for i, srcs, full, kind in reqs:
            if budget.expired():
                out[(i, s)] = None
                continue
            try:
                out[(i, s)] = _sink_verdict(graph, s, srcs, full, kind, opts, memo, known,
                                            limit)
            except (Budget, RuntimeError, KeyError) as exc:
                out[(i, s)] = str(exc)
    return out


def _refine_item(shared, common, item, local) -> list:
    """Round 2 of :func:`_refine_split`: [(finding index, [findings])]."""
    graph, context = shared["graph"], shared["context"]
    opts, limit = common
    memo = _RunMemo()
    out = []
    for i, d, plan, full, results in item:
        ev = d.evidence if isinstance(d.evidence, Mapping) else {}
        try:
            if plan is not None and (budget.expired() or
                                     (results is not None and None in results)):
                got = [_out_of_time(d)]
            elif results is not None and any(isinstance(r, str) for r in results):
                raise RuntimeError(next(r for r in results if isinstance(r, str)))
            elif plan is not None and d.kind == "unregistered-async":
                got = _refine_sink(graph, d, ev, context, opts, memo, full, limit)
            elif plan is not None:
                got = _finish_planned(graph, d, ev, results, context, opts, memo, full, limit)
            else:
                osc = _refine_loop(graph, d, ev) if ev.get("scc") else None
                got = [d] if osc is None else [d, osc]
        except (Budget, RuntimeError, KeyError) as exc:
            got = [replace(d, notes=tuple(d.notes) + (f"prover: inconclusive ({exc})",))]
        out.append((i, got))
    return out


@dataclass
class _ContextView:
    """What the refinement of a finding reads of the run's context, small enough to ship to
    a worker: the glitch-sensitive sinks, the change model, the cell model."""
    change_model: Any = None
    config: Any = None

    @classmethod
    def of(cls, graph, context) -> "_ContextView | None":
        if context is None:
            return None
        from types import SimpleNamespace
        v = cls(change_model=getattr(context, "change_model", None),
                config=SimpleNamespace(cell_model=_cell_model(context)))
        try:
            v.sensitive_sinks = frozenset(context.sensitive_sinks)
        except Exception:  # noqa: BLE001 - a context without the analysis: roles decide
            pass
        return v


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


def _decide_batch(graph, plans, opts, session=None) -> dict[tuple[str, str], dict[str, HazardProof]]:
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
                               wanted=wanted, vectors=max(1, int(opts["sim_vectors"])),
                               session=session)
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


def _sink_verdict(graph, s, srcs, full, kind, opts, memo: _RunMemo, known, limit):
    """The verdict of one reconvergence finding's changing sources at sink ``s``."""
    cache = memo.verdicts
    key = (s, srcs, full)
    if not full and (s, srcs, True) in cache:
        key = (s, srcs, True)
    if key not in cache:
        if not full and not all((s, x) in known for x in srcs):
            c = Classification(s, "inconclusive", {}, reason=(
                f"not proven: beyond the prover's limit of {limit} findings per run "
                "(option max_findings)"))
        else:
            got = _cone_of(graph, s, memo.cones)
            order, free = got if got is not None else (None, None)
            c = combine(classify_sources(graph, s, list(srcs), opts, order=order, known=known,
                                         replay_glitch=full, free=free,
                                         memo=memo.per_source)) or Classification(
                s, "inconclusive", {}, reason="no changing input found for the stem"
                if kind == "unbalanced-reconvergence" else "no changing source")
        cache[key] = c
    return cache[key]


def _finish_planned(graph, d, ev, results, context, opts, memo: _RunMemo, full, limit):
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
                     wanted: set[tuple[str, str]] | None = None, chunk: int = 64, session=None
                     ) -> dict[tuple[str, str], dict[str, HazardProof]]:
    """For every target (default: every sink) and every free source in its cone (or only the
    ``changing`` ones; only the (target, source) pairs in ``wanted`` when given), decide each
    hazard kind for a single change of that source (:mod:`hazlint.analysis.batch`: random
    bit-parallel ternary simulation, structural path count, shared BDD or SAT, else
    inconclusive). ``session`` spreads the work over worker processes or a cluster
    (:mod:`hazlint.analysis.workers`); the result does not depend on it.
    """
    return classify_batch(graph, targets, options_with_defaults(options), rounds=rounds,
                          vectors=vectors, changing=changing, wanted=wanted, chunk=chunk,
                          session=session)
