"""The prover in the lint pipeline: :func:`refine` classifies the findings of the structural
rules (static-1, static-0 or dynamic hazard, proven absent, or inconclusive with its reason) at
their sinks, with the change model of each glitch-sensitive sink, replays each witness and
attaches its waveform and fix. The per-target decisions are :mod:`hazlint.analysis.prove`'s;
the work is split by sink over :mod:`hazlint.analysis.workers`.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from collections import ChainMap
from typing import Any, Callable, Iterable, Mapping, Sequence

from .. import budget, plugins
from ..diagnostics import Diagnostic, Severity
from ..findings.evidence import OscillationEvidence, Verdict, with_verdict
from ..findings.fold import placing_evidence
from ..findings.requests import (HazardAtSink, HazardFromStem, LoopBehaviour, ProofRequest,
                                 request_of)
from ..netlist.graph import ASYNC_ROLES
from ..findings.words import TimeUnit
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
           options: Mapping[str, Any] | None = None,
           shown: Callable[[list[Diagnostic]], Iterable[int]] | None = None) -> list[Diagnostic]:
    """Classify the findings of the structural rules.

    Each finding is proven as its rule's proof hook asks (:mod:`hazlint.findings.requests`):
    a hazard request (from a fanout stem, or at a glitch-sensitive sink) makes the finding a
    static-1, static-0 or dynamic hazard (error when proven at a glitch-sensitive sink), keeps
    it a warning when inconclusive or structural only, and drops it when proven absent (kept
    with ``show_proven_absent``); a loop request adds an ``oscillation`` finding when the loop
    can oscillate. Findings whose hook asks nothing pass through unchanged; those of a rule
    without a hook are marked not proven.

    Decide, choose, show. The single changes every finding needs are first decided together,
    in one batched pass (:func:`classify_outputs`: bit-parallel ternary simulation, then
    shared BDD or SAT); round 1 then gives every finding its verdict without timed replay
    (its sinks' single-change verdicts; a glitch-sensitive pin's verdict over the change
    model, one per pin driver). ``shown`` (by default :func:`hazlint.findings.fold.primaries`
    over the run's glitch-sensitive sinks and net names) picks, from stand-ins carrying these
    verdicts, the findings the report shows: one per problem. Round 2 replays the witness,
    searches delays, draws the waveform and searches a consensus fix for the first
    ``max_findings`` shown proven hazards in order of importance (glitch-sensitive sinks first,
    then the larger skew); every other finding keeps its classification, witness and proof
    with a note saying what was left out and why. Findings whose change the batch could not
    decide (a loop in the cone) are proven one by one for the first ``max_findings`` findings,
    else reported inconclusive with that reason.

    Findings the report does not show are returned deferred when they came deferred
    (:meth:`Diagnostic.deferred`): the prover reads their proof requests from their light
    evidence and never builds, nor ships to a worker, their paths and text.
    """
    opts = options_with_defaults(options)
    graph = design.graph if hasattr(design, "graph") else design
    memo: dict[str, list[str]] = {}
    reqs = [_request(d) for d in diagnostics]
    plans = [_plan(graph, d, context, opts, memo, r) for d, r in zip(diagnostics, reqs)]
    limit = int(opts["max_findings"])
    rank = sorted((i for i, p in enumerate(plans) if p is not None),
                  key=lambda i: plans[i][0])
    first = set(rank[:limit]) if limit >= 0 else set(rank)
    view = _ContextView.of(graph, context)
    with workers.Session({"graph": graph, "context": view}, graph.number_of_nodes()) as ses:
        known = _decide_batch(graph, plans, opts, ses, _loop_reach(design, graph, context))
        decided = _decide_split(ses, graph, reqs, plans, known, first, opts, limit)
        out = _unshown_all(graph, diagnostics, reqs, decided, context, opts)
        chosen = set(_primaries(out, shown, context))
        full = [i for i in rank if i in chosen and decided[i].c is not None and
                decided[i].c.proven]
        full = full[:limit] if limit >= 0 else full
        done = _show_split(ses, graph, diagnostics, reqs, plans, decided, full, opts)
    result: list[Diagnostic] = []
    for i, d in enumerate(diagnostics):
        dec = decided.get(i)
        if i in done:
            result.extend(done[i])
        elif i in chosen and dec is not None and dec.c is not None:
            x = _unshown(graph, d, reqs[i], dec, context, opts, _LIMIT.format(limit=limit))
            if x is not None:
                result.append(x)
        elif out[i] is not None:
            result.append(out[i])
    return result


# why a proven hazard was not replayed: a shown finding past the limit, a folded one
_LIMIT = ("timed replay, delay search and waveform left out: beyond the prover's limit of "
          "{limit} fully shown findings per run (option max_findings)")
_FOLDED = ("timed replay, delay search and waveform left out: the report shows another "
           "finding of the same problem")


def _primaries(stand_ins, shown, context) -> list[int]:
    """The positions of ``stand_ins`` (None: a finding the prover drops) the report shows."""
    pos = [i for i, d in enumerate(stand_ins) if d is not None]
    if shown is None:
        from ..findings.fold import primaries
        sens: Iterable[str] = ()
        if context is not None:
            try:
                sens = context.sensitive_sinks
            except Exception:  # noqa: BLE001 - a context without the analysis
                sens = ()
        name = getattr(context, "describe", None) or str
        nets = None
        if context is not None and getattr(context, "graph", None) is not None:
            from ..findings.netgroup import SinkNets
            nets = SinkNets.of(context)
        shown = lambda ds: primaries(ds, sens, name, nets)  # noqa: E731
    return [pos[k] for k in shown([stand_ins[i] for i in pos])]


# a finding whose rule declares no proof hook (reported as not proven)
_NO_HOOK = object()


def _request(d: Diagnostic, light: bool = True):
    """The proof request of ``d`` by its rule's hook, from the evidence that places it (a
    deferred finding's light evidence, unless not ``light``); None when the finding asks
    nothing (or no rule owns it: hazlint's own notes), :data:`_NO_HOOK` when its rule has
    no hook."""
    rule = plugins.rule_for(d)
    if rule is not None and rule.prove is None:
        # its own kinds are claims left unproven; another (a rule that did not run) is a note
        return _NO_HOOK if d.kind in rule.kinds else None
    ev = placing_evidence(d) if light else d.evidence
    return request_of(rule, d, ev if isinstance(ev, Mapping) else {})


def _not_proven(d: Diagnostic) -> Diagnostic:
    """A finding of a rule that says nothing on how to prove it: kept as the rule made it,
    its evidence saying that no proof was attempted."""
    why = f"rule '{d.rule}' declares no proof hook"
    v = Verdict(classification="not-proven", not_proven_reason=why)
    return replace(d, evidence=with_verdict(d.evidence, v), notes=tuple(d.notes) + (v.note(),))


@dataclass
class _Decision:
    """Round 1's answer for one finding: its verdict without timed replay (``c``; None for a
    finding with no sink to decide), the pin verdict over the change model (``v``, findings
    at a glitch-sensitive sink), the error that stopped it, or ``late``: no time left."""
    c: Classification | None = None
    v: Any = None
    error: str | None = None
    late: bool = False


def _decide_split(ses, graph, reqs, plans, known, first, opts, limit) -> dict[int, _Decision]:
    """Round 1 as work items (:mod:`hazlint.analysis.workers`): per sink, the single-change
    verdicts of the reconvergence findings that name it, in finding order (everything one run
    shares between findings, verdicts and cones, is kept per sink, so a sink's item computes
    what the one-process loop computes); per driver of glitch-sensitive sinks, its verdict
    over the change model and each of its findings' verdict. ``first``: the findings whose
    changes the batch left undecided are proven one by one."""
    per_sink: dict[str, list] = {}
    per_pin: dict[str, list] = {}
    for i, r in enumerate(reqs):
        if plans[i] is None:
            continue
        if isinstance(r, HazardFromStem):
            for s, srcs in plans[i][1]:
                per_sink.setdefault(s, []).append((i, tuple(srcs), i in first))
        elif isinstance(r, HazardAtSink):
            sink = plans[i][1][0][0]
            drv = (graph.nodes[sink].get("inputs") or [sink])[0]
            per_pin.setdefault(drv, []).append((i, sink, tuple(r.quiet)))
    units = [("sink", s, rs, {(s, x): known[(s, x)] for _, srcs, _ in rs for x in srcs
                              if (s, x) in known}) for s, rs in per_sink.items()]
    units += [("pin", drv, rs, None) for drv, rs in per_pin.items()]
    cut = workers.pack([[k] for k in range(len(units))], workers.items_for(ses, len(units)))
    got: dict = {}
    for part in ses.map(_decide_item, [[units[k] for k in it] for it in cut], (opts, limit)):
        got.update(part)
    decided: dict[int, _Decision] = {}
    for i, r in enumerate(reqs):
        if plans[i] is None:
            continue
        if isinstance(r, HazardAtSink):
            res = [got[("pin", i)]]
        else:
            res = [got[(i, s)] for s, _ in plans[i][1]]
        if any(x is None for x in res):
            decided[i] = _Decision(late=True)
        elif any(isinstance(x, str) for x in res):
            decided[i] = _Decision(error=next(x for x in res if isinstance(x, str)))
        elif isinstance(r, HazardAtSink):
            decided[i] = _Decision(c=res[0][1], v=res[0][0])
        else:
            decided[i] = _Decision(c=combine(res))
    return decided


def _decide_item(shared, common, item, local) -> dict:
    """Round 1 of :func:`refine`: {(finding index, sink): Classification} for the sinks of
    reconvergence findings, {("pin", finding index): (SinkVerdict, Classification)} for the
    findings at glitch-sensitive pins; the text of the error that stopped one, or None past
    the time budget."""
    graph, context = shared["graph"], shared["context"]
    opts, limit = common
    out: dict = {}
    for what, s, reqs, known in item:
        memo = _RunMemo()
        if what == "pin":
            _decide_pin(graph, context, reqs, opts, memo, out)
            continue
        for i, srcs, prove in reqs:
            if budget.expired():
                out[(i, s)] = None
                continue
            try:
                out[(i, s)] = _sink_verdict(graph, s, srcs, prove, opts, memo, known, limit)
            except (Budget, RuntimeError, KeyError) as exc:
                out[(i, s)] = str(exc)
    return out


def _decide_pin(graph, context, reqs, opts, memo: "_RunMemo", out: dict) -> None:
    """The verdict over the change model of one driver of glitch-sensitive sinks (decided
    once, at its first finding's sink), and each finding's verdict at its own sink."""
    v = None
    for i, sink, quiet in reqs:
        if budget.expired():
            out[("pin", i)] = None
            continue
        try:
            if v is None:
                model = getattr(context, "change_model", None) if context is not None else None
                if model is None:
                    model = ChangeModel(quiet=frozenset(quiet))
                v = decide_sink(graph, sink, model, opts)
            out[("pin", i)] = (v, _pin_classification(graph, sink, v, memo))
        except (Budget, RuntimeError, KeyError) as exc:
            out[("pin", i)] = str(exc)


def _unshown_all(graph, diagnostics, reqs, decided, context, opts) -> list:
    """Every finding as :func:`refine` returns it when the report does not show it, or
    None for one it drops: the stand-ins from which the shown findings are chosen.
    Findings with a verdict come deferred when they came deferred (their text made only
    when read)."""
    out: list = []
    for i, d in enumerate(diagnostics):
        dec = decided.get(i)
        if dec is None:
            out.append(_not_proven(d) if reqs[i] is _NO_HOOK else d)
        elif dec.late:
            out.append(_out_of_time(d))
        elif dec.error is not None:
            out.append(_stopped(d, dec.error))
        elif dec.c is None:
            out.append(d)
        else:
            out.append(_unshown(graph, d, reqs[i], dec, context, opts, _FOLDED))
    return out


class _Unshown:
    """The deferred part of a finding with a verdict the report does not show in full
    (``make()`` gives the finding); its light evidence places it by its sink."""

    __slots__ = ("sink", "light", "make")

    def __init__(self, c: Classification, light: Mapping, make):
        self.sink, self.light, self.make = c.target, light, make

    def light_evidence(self) -> Mapping:
        return self.light if "sink_node" in self.light else ChainMap(
            {"sink_node": self.sink}, self.light)

    def __call__(self) -> dict:
        x = self.make()
        return {f: getattr(x, f) for f in ("message", "evidence", "notes", "related", "flows",
                                           "fix")}


def _unshown(graph, d, req, dec: _Decision, context, opts, why: str) -> Diagnostic | None:
    """Finding ``d`` with its verdict, without timed replay, delay search, waveform or fix
    search; the note on the left-out replay says ``why``. Deferred when ``d`` is."""
    def make():
        o = dict(opts, waveforms=False)
        x = _apply(graph, d, dec.c, req, context, o, replayed=False, left_out=why)
        if x is not None and dec.v is not None:
            x = with_change_model(x, dec.v, lambda n: net_label(graph, n),
                                  _cell_model(context))
        return x
    if "_build" not in d.__dict__ or d.waived is not None:
        return make()
    head = _head(graph, d, dec.c, context, opts)
    if head is None:
        return None
    return Diagnostic.deferred(d.rule, head[0], head[1], d.location, d.instance,
                               _Unshown(dec.c, placing_evidence(d), make))


def _show_split(ses, graph, diagnostics, reqs, plans, decided, full, opts) -> dict:
    """Round 2 as work items: the findings shown in full (``full``) with their timed replay,
    delay search, waveform and fix; loops the rule left to the prover."""
    picked = list(full) + [i for i, r in enumerate(reqs) if plans[i] is None and
                           isinstance(r, LoopBehaviour) and not r.decided]
    picked.sort()
    cut = workers.pack([[i] for i in picked], workers.items_for(ses, len(picked)))
    items = [[(i, diagnostics[i], _request(diagnostics[i], light=False), decided.get(i))
              for i in it] for it in cut]
    done: dict = {}
    for part in ses.map(_show_item, items, opts):
        done.update(part)
    return done


def _show_item(shared, common, item, local) -> list:
    """Round 2 of :func:`refine`: [(finding index, [findings])]."""
    graph, context = shared["graph"], shared["context"]
    opts = common
    memo = _RunMemo()
    out = []
    for i, d, req, dec in item:
        try:
            if dec is None:
                osc = _refine_loop(graph, d, req)
                got = [d] if osc is None else [d, osc]
            elif budget.expired():
                got = [_out_of_time(d)]
            else:
                got = _show_full(graph, d, req, dec, context, opts, memo)
        except (Budget, RuntimeError, KeyError) as exc:
            got = [_stopped(d, str(exc))]
        out.append((i, got))
    return out


def _stopped(d: Diagnostic, why: str) -> Diagnostic:
    return replace(d, notes=tuple(d.notes) + (f"prover: inconclusive ({why})",))


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
        return (0 if sens else 2, -skew, _order_key(d, stem)), work
    if isinstance(req, HazardAtSink) and req.sink in graph:
        # decided over the change model by refine_sink (multichange), not by single changes
        return (1, 0.0, _order_key(d, req.sink)), [(req.sink, [])]
    return None


def _order_key(d: Diagnostic, node: str) -> tuple:
    """The finding's place, then its message (a deferred finding's stem or sink node: its
    message is not built for this)."""
    if "_build" in d.__dict__:
        loc = d.location
        return (loc.path, loc.line, loc.column, d.rule, d.instance, node)
    return d.sort_key()


def _loop_reach(design, graph, context) -> set[str] | None:
    """Nodes behind a combinational loop: none, without a walk, when the run already knows
    the graph is acyclic (the design's topological order, or the context's timing graph
    over every node with no edge cut to break a loop); None: not known, walk the graph."""
    known = vars(design) if design is not graph and hasattr(design, "__dict__") else {}
    if "topo_order" in known or known.get("has_loop") is False:
        return set()
    tg = vars(context).get("timing_graph") if hasattr(context, "__dict__") else None
    if tg is not None and getattr(context, "graph", None) is graph and not tg.cut_edges \
            and len(tg.order) == graph.number_of_nodes():
        return set()
    return None


def _decide_batch(graph, plans, opts, session=None, looped: set[str] | None = None
                  ) -> dict[tuple[str, str], dict[str, HazardProof]]:
    """Every (sink, source) single change the plans need, decided in one batched pass. Sinks
    whose fan-in cone holds a combinational loop (``looped``: the nodes behind one, None to
    find them) are left out (proven one by one)."""
    wanted = {(s, x) for p in plans if p is not None for s, xs in p[1] for x in xs}
    if not wanted:
        return {}
    targets = sorted({s for s, _ in wanted})
    if looped is None:
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
    """What one work item works out once and shares between its findings."""

    # (sink, changing sources, proven one by one) -> verdict over those sources
    verdicts: dict[tuple, Classification] = field(default_factory=dict)
    # sink -> (cone order, free sources), None for a cone with a loop
    cones: dict[str, tuple | None] = field(default_factory=dict)
    # (sink, source, replayed) -> verdict of that single change (never replayed in round 1)
    per_source: dict[tuple, Classification] = field(default_factory=dict)
    # consensus-term searches, per change and gate (see fixes.consensus_fix)
    fixes: dict = field(default_factory=dict)


def _sink_verdict(graph, s, srcs, prove, opts, memo: _RunMemo, known, limit):
    """The verdict of one stem's changing sources at sink ``s``, without timed replay; the
    changes the batch left undecided are proven one by one when ``prove``, else the verdict
    is inconclusive for the limit."""
    cache = memo.verdicts
    key = (s, srcs, prove)
    if not prove and (s, srcs, True) in cache:
        key = (s, srcs, True)
    if key not in cache:
        if not prove and not all((s, x) in known for x in srcs):
            c = Classification(s, "inconclusive", {}, reason=(
                f"not proven: beyond the prover's limit of {limit} findings per run "
                "(option max_findings)"))
        else:
            got = _cone_of(graph, s, memo.cones)
            order, free = got if got is not None else (None, None)
            c = combine(classify_sources(graph, s, list(srcs), opts, order=order, known=known,
                                         replay_glitch=False, free=free,
                                         memo=memo.per_source)) or Classification(
                s, "inconclusive", {}, reason="no changing input found for the stem")
        cache[key] = c
    return cache[key]


def _pin_classification(graph, sink, v, memo: _RunMemo) -> Classification:
    """The verdict at glitch-sensitive ``sink`` from its driver's verdict ``v`` over the
    change model (:mod:`hazlint.analysis.multichange`), without timed replay."""
    label = lambda n: net_label(graph, n)  # noqa: E731
    pick = v.best()
    if pick is None:
        return Classification(sink, "hazard-free" if v.status == "hazard-free" else
                              "inconclusive", {}, proofs=v.hazard_proofs(),
                              reason=v.proof_text(label))
    k, question, f = pick
    c = Classification(sink, k, {n: (f.before[n], f.after[n]) for n in f.changed},
                       dict(f.before), dict(f.after), proofs=v.hazard_proofs(),
                       reason=v.proof_text(label))
    got = _cone_of(graph, sink, memo.cones)
    order = got[0] if got is not None else None
    c.function_hazard = (question == "function" if question != "any" else
                         witness_function_hazard(graph, order, sink, f))
    return c


def _show_full(graph, d, req, dec: _Decision, context, opts, memo: _RunMemo) -> list:
    """A shown proven hazard in full: its witness replayed (nominal delays either way, else
    a delay search), the waveform and the fix; a glitch-sensitive pin's finding with its
    change model."""
    c = replace(dec.c)          # round 1's verdict stays as it was (shared, in one process)
    got = _cone_of(graph, c.target, memo.cones)
    if got is not None:
        replay_witness(graph, c, c.classification, got[0], opts)
    x = _apply(graph, d, c, req, context, opts, replayed=True, fix_memo=memo.fixes)
    if x is None:
        return []
    if dec.v is not None:
        x = with_change_model(x, dec.v, lambda n: net_label(graph, n), _cell_model(context))
    return [x]


def _cell_model(context) -> str:
    return getattr(getattr(context, "config", None), "cell_model", None) or "atomic"


def _head(graph, d: Diagnostic, c: Classification, context, opts):
    """(kind, severity) of finding ``d`` with verdict ``c``; None when it is dropped
    (proven absent, not kept by ``show_proven_absent``)."""
    if c.classification == "hazard-free":
        return (d.kind, Severity.INFO) if opts["show_proven_absent"] else None
    if c.classification == "inconclusive":
        return d.kind, max(Severity.WARNING, min(d.severity, Severity.WARNING))
    sens = is_sensitive_sink(graph, context, c.target)
    return c.classification, Severity.ERROR if sens else Severity.WARNING


def _apply(graph, d: Diagnostic, c: Classification, req: ProofRequest, context, opts,
           replayed: bool = True, left_out: str = "",
           fix_memo: dict | None = None) -> Diagnostic | None:
    head = _head(graph, d, c, context, opts)
    if head is None:
        return None
    kind, sev = head
    sink_role = graph.nodes[c.target].get("role")
    # the sink the verdict is about, and the proof of every hazard kind
    verdict = dict(sink_node=c.target, classification=c.classification,
                   proof={k: p.to_json() for k, p in c.proofs.items()})
    notes = list(d.notes)
    if c.classification == "hazard-free":
        notes.append(f"proven hazard-free under arbitrary delays ({c.reason})")
        return replace(d, severity=sev, evidence=with_verdict(
            d.evidence, Verdict(**verdict)), notes=tuple(notes),
            message=d.message + "; proven hazard-free")
    if c.classification == "inconclusive":
        v = Verdict(**verdict, inconclusive_reason=c.reason)
        notes.append(v.note())
        return replace(d, severity=sev, evidence=with_verdict(d.evidence, v), notes=tuple(notes))
    verdict["witness"] = witness_json(graph, c)
    verdict["function_hazard"] = bool(c.function_hazard)
    glitch = c.glitch.to_json() if c.glitch else {"occurs": False}
    glitch["how"] = c.how
    if c.assignment is not None:
        glitch["delays"] = c.assignment.to_json()
    verdict["glitch"] = glitch
    unit = TimeUnit.of(graph)
    verdict["time_unit"] = unit.field      # of the glitch's and the delays' numbers
    gt = glitch_text(c, unit)
    notes.append(f"proof: {c.reason}")
    others = [k2 for k2 in c.present_kinds if k2 != kind]
    if others:
        notes.append("also possible for other transitions: " + ", ".join(others))
    verdict["present_kinds"] = c.present_kinds
    notes.append(f"witness: {witness_text(graph, c)}")
    if gt:
        notes.append(f"timed simulation: {gt}")
    elif not replayed and left_out:
        notes.append(left_out)
    if c.assignment is not None and c.how not in ("nominal",):
        notes += ["  " + x for x in c.assignment.describe(graph)[1:]]
    if opts["waveforms"] and c.before:
        nets = waveform_nets(graph, c, req)
        verdict["waveform_nets"] = nets
        notes += diagram_lines(graph, c, nets)
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
