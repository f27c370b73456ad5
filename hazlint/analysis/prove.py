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
and reported. :func:`hazlint.analysis.refine.refine` is the entry point the lint pipeline calls
on the rule findings; this module decides one target at a time and the whole design at once.
"""
from __future__ import annotations

import random
import time
from dataclasses import dataclass, field
from typing import Any, Iterable, Mapping, Sequence

import networkx as nx

from ..netlist.graph import SOURCE_KINDS
from ..options import PROVE
from . import fixes as _fixes
from .batch import classify_batch, prove_symbolic  # noqa: F401 - prove_symbolic: public name
from .symbolic import Budget, HazardProof, bdd_hazards
from .satcheck import sat_hazards
from .ternary import (HAZARD_KINDS, CyclicCone, IntAlgebra, cone, free_sources, function_hazard,
                      hazard_planes)
from .delaysearch import search_assignment
from .timedsim import DelayAssignment, Glitch, replay
from .loops import classify_loop
from .waves import timing_diagram

# the prover's options, their types, defaults and docs: hazlint.options.PROVE_OPTIONS
DEFAULTS: dict[str, Any] = PROVE.defaults()

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


def classification_of(graph, verdict, sink: str | None = None) -> Classification | None:
    """The replayable case of a proven finding's verdict
    (:class:`hazlint.findings.evidence.Verdict`, made by :func:`witness_json` and the glitch
    replay): its witness, delay assignment and glitch; None without a witness or a sink in
    ``graph``. ``sink`` is the sink the verdict is about (the finding's evidence names it)."""
    w = verdict.witness
    if not w or "before_nodes" not in w:
        return None
    before, after = dict(w["before_nodes"]), dict(w["after_nodes"])
    changes = {n: (before[n], after[n]) for n in before if before[n] != after.get(n)}
    target = sink or verdict.sink_node
    if target is None and verdict.waveform_nets:
        target = verdict.waveform_nets[-1]
    if target is None or target not in graph:
        return None
    c = Classification(target, verdict.classification, changes, before, after)
    gl = verdict.glitch or {}
    if gl.get("delays"):
        c.assignment = DelayAssignment.from_json(gl["delays"])
    if gl.get("occurs"):
        c.glitch = Glitch(True, [tuple(x) for x in gl.get("changes", [])], gl.get("time"),
                          gl.get("width"), gl.get("mode", "inertial"))
        c.how = gl.get("how", "")
    return c


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


def waveform_nets(graph, c: Classification, request=None) -> list[str]:
    """The nets drawn for a witness: the changing sources, the nets the finding's proof
    request names (:attr:`hazlint.findings.requests.ProofRequest.draw`: a stem, its
    branches, the gate where they meet), then the sink."""
    nets: list[str] = list(c.changes)
    if request is not None:
        nets += list(request.draw)
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


def fix_for(graph, c: Classification, request, sink_role, memo: dict | None = None) -> str:
    """The fix hint of a proven hazard: a verified consensus term where one exists, else
    registering or balancing. ``request`` (the finding's proof request, or None) names the gate
    where the branches meet, the skew and the fast path. ``memo`` (one per run) keeps the
    consensus search per change and gate, which findings of different stems at the same sink
    share."""
    gate = getattr(request, "gate", None)
    cands = [gate] if gate else []
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
                "make the inputs change one at a time, or "
                + _fixes.fallback_fix(graph, c.target, None, (), sink_role))
    skew = getattr(request, "skew", None)
    if skew is None and c.glitch is not None:
        skew = c.glitch.width
    return _fixes.fallback_fix(graph, c.target, skew, getattr(request, "fast_path", ()) or (),
                               sink_role)


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
