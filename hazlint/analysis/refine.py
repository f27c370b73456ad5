"""The prover in the lint pipeline: :func:`refine` classifies the findings of the structural
rules (static-1, static-0 or dynamic hazard, proven absent, or inconclusive with its reason) at
their sinks, with the change model of each glitch-sensitive sink, replays each witness and
attaches its waveform and fix. The per-target decisions are :mod:`hazlint.analysis.prove`'s;
the work is split by sink over :mod:`hazlint.analysis.workers`.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any, Mapping, Sequence

from .. import budget, plugins
from ..diagnostics import Diagnostic, Severity
from ..findings.evidence import OscillationEvidence, Verdict, with_verdict
from ..findings.requests import (HazardAtSink, HazardFromStem, LoopBehaviour, ProofRequest,
                                 request_of)
from ..netlist.graph import ASYNC_ROLES
from ..netlist.walks import behind_loops
from . import workers
from .changes import ChangeModel
from .changewords import with_change_model
from .multichange import decide_sink, witness_function_hazard
from .prove import (Classification, classify_outputs, classify_sources, combine,
                    diagram_lines, fix_for, glitch_text, loop_behaviour, net_label,
                    options_with_defaults, replay_witness, stem_sources, waveform_nets,
                    witness_json, witness_text)
from .symbolic import Budget, HazardProof
from .ternary import HAZARD_KINDS, CyclicCone, cone, free_sources



# ---------------------------------------------------------------------------------------------
# The pipeline entry point

def is_sensitive_sink(graph, context, sink) -> bool:
    """Whether a glitch at ``sink`` does harm: an asynchronous pin, a clock, a latch enable, a
    three-state enable or an output declared asynchronous (the run context decides when it
    has one; else the sink node's pin role in the graph)."""
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

    Each finding is proven as its rule's proof hook asks (:mod:`hazlint.findings.requests`):
    a hazard request (from a fanout stem, or at a glitch-sensitive sink) makes the finding a
    static-1, static-0 or dynamic hazard (error when proven at a glitch-sensitive sink), keeps
    it a warning when inconclusive or structural only, and drops it when proven absent (kept
    with ``show_proven_absent``); a loop request adds an ``oscillation`` finding when the loop
    can oscillate. Findings whose hook asks nothing pass through unchanged; those of a rule
    without a hook are marked not proven.

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
    reqs = [_request(d) for d in diagnostics]
    plans = [_plan(graph, d, context, opts, memo, r) for d, r in zip(diagnostics, reqs)]
    view = _ContextView.of(graph, context)
    with workers.Session({"graph": graph, "context": view}, graph.number_of_nodes()) as ses:
        known = _decide_batch(graph, plans, opts, ses)
        limit = int(opts["max_findings"])
        rank = sorted((i for i, p in enumerate(plans) if p is not None),
                      key=lambda i: plans[i][0])
        full = set(rank[:limit]) if limit >= 0 else set(rank)
        done = _refine_split(ses, graph, diagnostics, reqs, plans, known, full, opts, limit)
    out: list[Diagnostic] = []
    for i, d in enumerate(diagnostics):
        out.extend(done.get(i, (d,) if reqs[i] is not _NO_HOOK else (_not_proven(d),)))
    return out


# a finding whose rule declares no proof hook (reported as not proven)
_NO_HOOK = object()


def _request(d: Diagnostic):
    """The proof request of ``d`` by its rule's hook; None when the finding asks nothing
    (or no rule owns it: hazlint's own notes), :data:`_NO_HOOK` when its rule has no hook."""
    rule = plugins.rule_for(d)
    if rule is not None and rule.prove is None:
        # its own kinds are claims left unproven; another (a rule that did not run) is a note
        return _NO_HOOK if d.kind in rule.kinds else None
    return request_of(rule, d, d.evidence if isinstance(d.evidence, Mapping) else {})


def _not_proven(d: Diagnostic) -> Diagnostic:
    """A finding of a rule that says nothing on how to prove it: kept as the rule made it,
    its evidence saying that no proof was attempted."""
    why = f"rule '{d.rule}' declares no proof hook"
    v = Verdict(classification="not-proven", not_proven_reason=why)
    return replace(d, evidence=with_verdict(d.evidence, v), notes=tuple(d.notes) + (v.note(),))


def _refine_split(ses, graph, diagnostics, reqs, plans, known, full, opts, limit) -> dict:
    """The refinement as work items (:mod:`hazlint.analysis.workers`), in two rounds.

    1. Per sink, the single-change verdicts of the reconvergence findings that name it, in
       finding order: everything one run shares between findings (verdicts, replays, cones)
       is kept per sink, so a sink's item computes what the one-process loop computes.
    2. Per finding, the verdict over its sinks and the finding it becomes; findings at one
       sink driver's glitch-sensitive sinks share that driver's verdict and go together.
    """
    per_sink: dict[str, list] = {}
    for i, r in enumerate(reqs):
        if plans[i] is not None and isinstance(r, HazardFromStem):
            for s, srcs in plans[i][1]:
                per_sink.setdefault(s, []).append((i, tuple(srcs), i in full))
    cut = workers.pack([[k] for k in range(len(per_sink))],
                       workers.items_for(ses, len(per_sink)))
    sinks = list(per_sink)
    items = [[(sinks[k], per_sink[sinks[k]],
               {(sinks[k], x): known[(sinks[k], x)] for _, srcs, _ in per_sink[sinks[k]]
                for x in srcs if (sinks[k], x) in known}) for k in it] for it in cut]
    verdicts: dict = {}
    for part in ses.map(_sink_verdicts, items, (opts, limit)):
        verdicts.update(part)
    keyed = []
    for i, r in enumerate(reqs):
        if plans[i] is None and not (isinstance(r, LoopBehaviour) and not r.decided):
            continue
        keys = []
        if isinstance(r, HazardAtSink) and plans[i] is not None:
            sink = plans[i][1][0][0]
            keys.append((graph.nodes[sink].get("inputs") or [sink])[0])
        keyed.append((i, keys))
    groups = workers.connected_groups(keyed)
    items = [[(i, diagnostics[i], reqs[i], plans[i], i in full,
               [verdicts[(i, s)] for s, _ in plans[i][1]]
               if plans[i] is not None and not isinstance(reqs[i], HazardAtSink)
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
        for i, srcs, full in reqs:
            if budget.expired():
                out[(i, s)] = None
                continue
            try:
                out[(i, s)] = _sink_verdict(graph, s, srcs, full, opts, memo, known, limit)
            except (Budget, RuntimeError, KeyError) as exc:
                out[(i, s)] = str(exc)
    return out


def _refine_item(shared, common, item, local) -> list:
    """Round 2 of :func:`_refine_split`: [(finding index, [findings])]."""
    graph, context = shared["graph"], shared["context"]
    opts, limit = common
    memo = _RunMemo()
    out = []
    for i, d, req, plan, full, results in item:
        try:
            if plan is not None and (budget.expired() or
                                     (results is not None and None in results)):
                got = [_out_of_time(d)]
            elif results is not None and any(isinstance(r, str) for r in results):
                raise RuntimeError(next(r for r in results if isinstance(r, str)))
            elif plan is not None and isinstance(req, HazardAtSink):
                got = _refine_sink(graph, d, req, context, opts, memo, full, limit)
            elif plan is not None:
                got = _finish_planned(graph, d, req, results, context, opts, memo, full, limit)
            else:
                osc = _refine_loop(graph, d, req)
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
    v = Verdict(classification="inconclusive", inconclusive_reason=why)
    return replace(d, severity=Severity.WARNING, evidence=with_verdict(d.evidence, v),
                   notes=tuple(d.notes) + (v.note(),))


def _plan(graph, d: Diagnostic, context, opts, memo=None, req="hook"):
    """(priority key, [(sink, [changing sources])]) for a finding the prover classifies by
    single changes or at a sink, by its proof request ``req`` (by default its rule's hook's).
    ``memo`` keeps each stem's sources (they do not depend on the sink)."""
    if req == "hook":
        req = _request(d)
    if isinstance(req, HazardFromStem) and req.stem in graph:
        stem = req.stem
        sinks = [s for s in req.sinks if s in graph]
        sinks.sort(key=lambda s: not is_sensitive_sink(graph, context, s))
        sinks = sinks[: int(opts["max_sinks"])]
        srcs = memo.get(stem) if memo is not None else None
        if srcs is None:
            srcs = stem_sources(graph, stem, None, int(opts["max_sources"]),
                                getattr(context, "quiet_sources", frozenset()))
            if memo is not None:
                memo[stem] = srcs
        work = [(s, srcs) for s in sinks]
        sens = any(is_sensitive_sink(graph, context, s) for s in sinks)
        skew = float(req.skew) if isinstance(req.skew, (int, float)) else 0.0
        return (0 if sens else 2, -skew, d.sort_key()), work
    if isinstance(req, HazardAtSink) and req.sink in graph:
        # decided over the change model by refine_sink (multichange), not by single changes
        return (1, 0.0, d.sort_key()), [(req.sink, [])]
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


def _sink_verdict(graph, s, srcs, full, opts, memo: _RunMemo, known, limit):
    """The verdict of one stem's changing sources at sink ``s``."""
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
                s, "inconclusive", {}, reason="no changing input found for the stem")
        cache[key] = c
    return cache[key]


def _finish_planned(graph, d, req, results, context, opts, memo: _RunMemo, full, limit):
    c = combine(results)
    if c is None:
        return [d]
    replayed = full or c.glitch is not None or bool(c.how)
    o = opts if full else dict(opts, waveforms=False)
    x = _apply(graph, d, c, req, context, o, replayed=replayed, limit=limit,
               fix_memo=memo.fixes)
    return [x] if x is not None else []


def _refine_sink(graph, d, req: HazardAtSink, context, opts, memo: _RunMemo, full, limit):
    """A glitch-sensitive sink's finding, decided over every transition the change model
    allows (:mod:`hazlint.analysis.multichange`); its drivers' verdicts are shared."""
    sink = req.sink
    drv = (graph.nodes[sink].get("inputs") or [sink])[0]
    v = memo.sinks.get(drv)
    if v is None:
        model = getattr(context, "change_model", None) if context is not None else None
        if model is None:
            model = ChangeModel(quiet=frozenset(req.quiet))
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
    x = _apply(graph, d, c, req, context, o, replayed=full or c.glitch is not None or bool(c.how),
               limit=limit, fix_memo=memo.fixes)
    return [] if x is None else [with_change_model(x, v, label, _cell_model(context))]


def _cell_model(context) -> str:
    return getattr(getattr(context, "config", None), "cell_model", None) or "atomic"


def _apply(graph, d: Diagnostic, c: Classification, req: ProofRequest, context, opts,
           replayed: bool = True,
           limit: int | None = None, fix_memo: dict | None = None) -> Diagnostic | None:
    sens = is_sensitive_sink(graph, context, c.target)
    sink_role = graph.nodes[c.target].get("role")
    # the sink the verdict is about, and the proof of every hazard kind
    verdict = dict(sink_node=c.target, classification=c.classification,
                   proof={k: p.to_json() for k, p in c.proofs.items()})
    notes = list(d.notes)
    if c.classification == "hazard-free":
        if not opts["show_proven_absent"]:
            return None
        notes.append(f"proven hazard-free under arbitrary delays ({c.reason})")
        return replace(d, severity=Severity.INFO, evidence=with_verdict(
            d.evidence, Verdict(**verdict)), notes=tuple(notes),
            message=d.message + "; proven hazard-free")
    if c.classification == "inconclusive":
        v = Verdict(**verdict, inconclusive_reason=c.reason)
        notes.append(v.note())
        return replace(d, severity=max(Severity.WARNING, min(d.severity, Severity.WARNING)),
                       evidence=with_verdict(d.evidence, v), notes=tuple(notes))
    kind = c.classification
    verdict["witness"] = witness_json(graph, c)
    verdict["function_hazard"] = bool(c.function_hazard)
    glitch = c.glitch.to_json() if c.glitch else {"occurs": False}
    glitch["how"] = c.how
    if c.assignment is not None:
        glitch["delays"] = c.assignment.to_json()
    verdict["glitch"] = glitch
    gt = glitch_text(c)
    notes.append(f"proof: {c.reason}")
    others = [k2 for k2 in c.present_kinds if k2 != kind]
    if others:
        notes.append("also possible for other transitions: " + ", ".join(others))
    verdict["present_kinds"] = c.present_kinds
    notes.append(f"witness: {witness_text(graph, c)}")
    if gt:
        notes.append(f"timed simulation: {gt}")
    elif not replayed:
        notes.append(f"timed replay, delay search and waveform left out: beyond the prover's "
                     f"limit of {limit} fully shown findings per run (option max_findings)")
    if c.assignment is not None and c.how not in ("nominal",):
        notes += ["  " + x for x in c.assignment.describe(graph)[1:]]
    if opts["waveforms"] and c.before:
        nets = waveform_nets(graph, c, req)
        verdict["waveform_nets"] = nets
        notes += diagram_lines(graph, c, nets)
    sev = Severity.ERROR if sens else Severity.WARNING
    fix = fix_for(graph, c, req, sink_role, fix_memo) if replayed else d.fix
    v = Verdict(**verdict)
    return replace(d, kind=kind, severity=sev, evidence=with_verdict(d.evidence, v),
                   message=v.headline(net_label(graph, c.target), witness_text(graph, c)),
                   notes=tuple(notes), fix=fix)


def _refine_loop(graph, d: Diagnostic, req) -> Diagnostic | None:
    """An oscillation finding for a loop finding the loop rule did not classify itself."""
    if not isinstance(req, LoopBehaviour) or req.decided:
        return None
    comp = [n for n in req.scc if n in graph]
    v = loop_behaviour(graph, comp)
    if v.behaviour != "oscillation":
        return None
    ins = ", ".join(f"{net_label(graph, n)}={x}" for n, x in sorted(v.inputs.items()))
    evidence = OscillationEvidence(
        scc=list(comp), cycle=list(req.cycle),
        inputs={net_label(graph, n): x for n, x in v.inputs.items()},
        behaviour=v.behaviour, reason=v.reason, key=f"osc:{req.key}")
    return replace(d, kind="oscillation", severity=Severity.ERROR,
                   message=f"loop oscillates when {ins}: it has no stable state",
                   evidence=evidence, notes=tuple(d.notes) + (
                       f"ternary simulation from the unknown state leaves the loop X and no "
                       f"binary state is stable for {ins}",),
                   fix="break the feedback with a register, or make the loop's inversion count "
                       "even so it can hold a value")
