"""Unbalanced reconvergent fanout.

What it finds
    A fanout stem (a net read by two or more pins: primary inputs and register outputs included)
    whose branches meet again at a gate, where the slowest arrival of a transition through one
    input of that gate exceeds the fastest arrival through another (the branch skew). Arrival
    times come from the design's delay model (per-pin rise/fall min/max delays, SDF when given) by
    dynamic programming over a topological order of the stem's fanout cone; the fastest and the
    slowest path are rebuilt from back-pointers, never enumerated. For each stem and each sink in
    scope only the worst reconvergence is reported, at the reconvergence gate. Times are in the
    unit of the delays the design was given (its timescale, the Liberty time_unit, the SDF
    TIMESCALE), and counted in unit delays when it was given none.

Why it matters
    While the two branches disagree the gate can produce a short pulse (a static or dynamic
    hazard). Into a register's data pin that is harmless if timing is met; into an asynchronous
    reset, a clock, a latch enable or an output that drives the outside world it is a real event.
    Whether a pulse can actually happen depends on the logic; ``hazlint prove`` classifies it.

Example
    ::

        module mux_hazard(input s, input a, input b, output y);
          wire sn, t0, t1;
          not g0 (sn, s);          // one branch of s is one gate slower
          and g1 (t0, a, s);
          and g2 (t1, b, sn);
          or  g3 (y, t0, t1);      // reported here: s reconverges with skew 1 unit delay
        endmodule

How to fix
    Balance the branches, add the consensus term (here ``and (t2, a, b)`` into the OR) so the
    output is held while the branches disagree, or register the signal before it reaches the
    sensitive sink.

Options
    ``scope``: which reconvergences to report: ``async`` (those that reach a glitch-sensitive
    sink, the default), ``outputs`` (those and every primary output), ``all`` (every sink,
    register data pins included). Outside the default scope a pulse is harmless when timing is
    met; the summary line counts the places left out. Findings at one sink fold into one.
    ``min_skew``: report when the skew reaches this many delay units (default 0: any skew).
    ``work_budget``: an upper bound on the arrival-time work of one run, in node visits (each
    stem costs at most the nodes after it in topological order; default 1e9: every EPFL
    benchmark but the 100k-node divider fits; 0: no limit). Stems that reach a glitch-sensitive sink go first. Past the budget
    the remaining stems are not analysed and one ``analysis-incomplete`` warning says how many,
    so a run never passes silently on a design too large for it.
"""
from __future__ import annotations

import heapq

from hazlint import budget
from hazlint.diagnostics import Diagnostic, Severity

from hazlint.findings.evidence import BudgetEvidence, ReconvergenceEvidence
from hazlint.findings.requests import HazardFromStem
from hazlint.findings.words import TimeUnit, count, gate_words
from hazlint.plugins import Option

from ._common import name_list, stable_key

ID = "unbalanced-reconvergence"
SUMMARY = "reconvergent fanout whose branches arrive at different times (static/dynamic hazard risk)"
KINDS = ("unbalanced-reconvergence", "analysis-incomplete")
SEVERITY = "warning"
OPTIONS = (
    Option("scope", str, "async",
           "report reconvergences reaching: async (glitch-sensitive sinks, the default), "
           "outputs (those and every primary output), all (every sink, register data pins "
           "included); also --scope on the command line", ("async", "outputs", "all")),
    Option("min_skew", float, 0.0,
           "report when the branch skew reaches this value, in the design's delay unit "
           "(unit delays when none is given; 0: any positive skew)"),
    Option("work_budget", float, 1e9,
           "arrival-time work per run in node visits; stems past it are reported as not "
           "analysed (0: no limit)"),
)


def plan_stems(context, reach, sinks, work_budget: float):
    """(stems to analyse, stems left out) as timing-graph indices. Each stem is charged the
    nodes after it in topological order (a bound on its fan-out cone); stems reaching a
    glitch-sensitive sink come first, then source order."""
    tg = context.timing_graph
    stem_ids = [tg.index[n] for n in context.stems if n in tg.index and reach[tg.index[n]]]
    if not work_budget or work_budget <= 0:
        return stem_ids, []
    n = len(tg.order)
    if sum(n - s for s in stem_ids) <= work_budget:
        return stem_ids, []
    sens_mask = 0
    sens = context.sensitive_sinks
    for i, t in enumerate(sinks):
        if t in sens:
            sens_mask |= 1 << i
    rank = context.source_rank
    pri = sorted(stem_ids, key=lambda s: (not (reach[s] & sens_mask), rank[tg.order[s]]))
    keep, left, spent = [], [], 0.0
    for s in pri:
        if spent + (n - s) <= work_budget:
            keep.append(s)
            spent += n - s
        else:
            left.append(s)
    keep_set = set(keep)
    return [s for s in stem_ids if s in keep_set], left


def find_reconvergences(design, context, scope: str = "outputs", min_skew: float = 0.0,
                        stem_ids=None, stopped: list | None = None):
    """Worst reconvergence per (stem, sink in scope), grouped by gate.

    Yields :class:`Finding` objects (stem and gate node ids, the :class:`Reconvergence`, the
    sinks, the fastest and slowest paths as node-id tuples). Work per stem is linear in its
    fanout cone plus the length of the reported paths. ``stem_ids`` (timing-graph indices)
    limits the stems; by default every stem that reaches a sink in scope. With ``stopped`` (a
    list) the search ends when the run's time budget is used up, and the stems not analysed
    are appended to it.
    """
    tg = context.timing_graph
    order = tg.order
    compiled = _compiled(context, scope)
    if compiled is not None:
        if not compiled.sinks:
            return
        if stem_ids is None:
            reach = compiled.reach
            stem_ids = [tg.index[n] for n in context.stems if n in tg.index
                        and reach[tg.index[n]]]
        yield from compiled.findings(stem_ids, min_skew, budget.expired, stopped)
        return
    sinks, reach = context.scope_reach(scope)
    if not sinks:
        return
    rank = context.source_rank
    rank_i = [rank[n] for n in order]
    if stem_ids is None:
        stem_ids = [tg.index[n] for n in context.stems if n in tg.index and reach[tg.index[n]]]
    rank_np = None
    done: set[int] = set()
    for si, st, found in context.stem_reconvergences(stem_ids, min_skew):
        if stopped is not None:
            if budget.expired():
                stopped.extend(s for s in stem_ids if s not in done)
                return
            done.add(si)
        # every sink in scope goes to the worst reconvergence that reaches it (ties: the gate
        # first in source order); sinks are bits of the precomputed reachability sets. The
        # reconvergences are taken in that order until every sink is taken (one gate per
        # reconvergence of a stem, so the keys never tie).
        if not len(found):
            continue
        remaining = reach[si]
        chosen = []
        gates = getattr(found, "gates", None)
        if gates is not None:
            # the batch solver's arrays: one sort instead of an object per candidate
            if rank_np is None:
                import numpy as np
                rank_np = np.array(rank_i, dtype=np.int64)
            for k in np.lexsort((rank_np[gates], -found.skews)).tolist():
                bits = reach[int(gates[k])] & remaining
                if bits:
                    remaining &= ~bits
                    chosen.append((found[k], bits))
                    if not remaining:
                        break
        else:
            keys = [(-r.skew, rank_i[r.gate], k) for k, r in enumerate(found) if reach[r.gate]]
            heapq.heapify(keys)
            while keys and remaining:
                r = found[heapq.heappop(keys)[2]]
                bits = reach[r.gate] & remaining
                if bits:
                    remaining &= ~bits
                    chosen.append((r, bits))
        if not chosen:
            continue
        stem = order[si]
        for r, bits in sorted(chosen, key=lambda x: rank_i[x[0].gate]):
            yield Finding(stem, order[r.gate], r, _bits_to_sinks(bits, sinks), st)


def _compiled(context, scope: str):
    """The compiled kernels' driver for this scope (:mod:`hazlint.analysis.compiled`), or None
    for the pure path (small graph, numba missing or failing)."""
    memo = context.__dict__.setdefault("_compiled_stems", {})
    if scope not in memo:
        from hazlint.analysis import compiled
        kern = None
        if compiled.wanted(len(context.timing_graph.order)):
            kern = compiled.kernels()
        if kern is None:
            memo[scope] = None
        else:
            from hazlint.analysis.compiled_stems import CompiledStems
            memo[scope] = CompiledStems(context, scope, kern)
    return memo[scope]


def _bits_to_sinks(bits: int, sinks: list[str]) -> list[str]:
    out = []
    while bits:
        low = bits & -bits
        out.append(sinks[low.bit_length() - 1])
        bits ^= low
    return out


class Finding:
    """One reported reconvergence. Its paths are walked from the back-pointers on demand, while
    the stem's arrival arrays are current (before the generator advances to the next stem)."""

    __slots__ = ("stem", "gate", "r", "sinks", "st")

    def __init__(self, stem, gate, r, sinks, st):
        self.stem, self.gate, self.r, self.sinks, self.st = stem, gate, r, sinks, st

    def path(self, slow: bool, make=None):
        """(node ids, items) of the slowest/fastest path, stem first, ending at the gate.
        ``make(node id, delay, arrival)`` builds the items (default: the triple itself)."""
        st = self.st
        tg = st.solver.tg
        order = tg.order
        gi = tg.index[self.gate]
        r = self.r
        k = r.slow_pin if slow else r.fast_pin
        src, _pin, dmin, dmax = tg.fanin[gi][k]
        tag = "raw" if make is None else "made"
        make = make or (lambda n, dl, a: (n, dl, a))
        ids, items = st.chain_ids(src, slow, lambda i, dl, a: make(order[i], dl, a), tag)
        last = make(self.gate, dmax if slow else dmin, r.slow_arrival if slow else r.fast_arrival)
        return list(ids) + [self.gate], items + (last,)


def check(design, context):
    opts = context.options(ID)
    compiled = _compiled(context, opts["scope"])
    if compiled is not None:
        sinks_in_scope, reach = compiled.sinks, compiled.reach
    else:
        sinks_in_scope, reach = context.scope_reach(opts["scope"])
    if not sinks_in_scope:
        return
    stem_ids, left = plan_stems(context, reach, sinks_in_scope, opts["work_budget"])
    if left:
        yield _incomplete(context, left, len(stem_ids), opts["work_budget"])
    nodes = design.graph.nodes
    severity = Severity.parse(SEVERITY)
    where: dict[str, tuple] = {}      # gate -> (location, instance): gates recur across stems
    stopped: list[int] = []
    for f in find_reconvergences(design, context, opts["scope"], opts["min_skew"], stem_ids,
                                 stopped):
        gate = f.gate
        place = where.get(gate)
        if place is None:
            place = where[gate] = (context.location(gate),
                                   nodes[gate].get("instance", "") or "")
        location, instance = place
        if compiled is not None:
            # the compiled path keeps every finding's paths in its arrays: the text and the
            # evidence are made when a reader first asks (same values as made here)
            yield Diagnostic.deferred(ID, "unbalanced-reconvergence", severity, location,
                                      instance, _Fields(context, f))
        else:
            yield Diagnostic(rule=ID, kind="unbalanced-reconvergence", severity=severity,
                             location=location, instance=instance,
                             **_fields(context, f.stem, gate, f.r, f.sinks, f.path))
    if stopped:
        yield _incomplete(context, stopped, len(stem_ids) - len(stopped), None)


class _Fields:
    """The deferred part of one compiled finding's diagnostic."""

    __slots__ = ("context", "f")

    def __init__(self, context, f):
        self.context, self.f = context, f

    def light_evidence(self) -> dict:
        """The evidence that places the finding (stem, sinks, skew) without its paths or text:
        what :mod:`hazlint.findings.fold` reads to group findings it does not all show."""
        stem, _gate, r, sinks = self.f.facts()[:4]
        return {"stem_node": stem, "sink_nodes": list(sinks), "skew": r.skew,
                "time_unit": TimeUnit.of(self.context.graph).field}

    def __call__(self) -> dict:
        f = self.f
        facts = f.facts()
        stem, gate, r, sinks = facts[:4]
        return _fields(self.context, stem, gate, r, sinks,
                       lambda slow, make: f.path(slow, make, facts))


def _fields(context, stem, gate, r, sinks, path) -> dict:
    """message, evidence, notes, flows and fix of the finding at ``gate``; ``path(slow, make)``
    gives (node ids, hops) of the slow/fast path."""
    g = context.graph
    sens = context.sensitive_sinks
    d = g.nodes[gate]
    stem_name = context.net_name(stem)
    sink_names = [context.describe(t) for t in sinks]
    sens_names = [context.describe(t) for t in sinks if t in sens]
    reach = (f"reaching glitch-sensitive {name_list(sens_names, 3)}" if sens_names
             else f"reaching {name_list(sink_names, 3)}")
    pins = d.get("pins") or []
    ins = d.get("inputs") or []
    slow_pin = pins[r.slow_pin] if r.slow_pin < len(pins) else str(r.slow_pin)
    fast_pin = pins[r.fast_pin] if r.fast_pin < len(pins) else str(r.fast_pin)
    slow_net = context.net_name(ins[r.slow_pin]) if r.slow_pin < len(ins) else slow_pin
    fast_net = context.net_name(ins[r.fast_pin]) if r.fast_pin < len(ins) else fast_pin
    where = gate_words(d.get("cell") or d.get("op") or "",
                       (d.get("instance") or gate).rsplit(".", 1)[-1])
    unit = TimeUnit.of(g)
    msg = (f"fanout of {stem_name} reconverges at {where} with skew {unit.words(r.skew)} "
           f"(through {slow_net} at {unit.words(r.slow_arrival)}, through {fast_net} at "
           f"{unit.words(r.fast_arrival)}), {reach}")
    fast_ids, fast_hops = path(False, context.hop)
    slow_ids, slow_hops = path(True, context.hop)
    notes = (f"stem {stem_name}" + (f" ({context.where(stem)})"
                                    if g.nodes[stem].get("path") else ""),
             "fast path: " + _path_text(fast_hops, unit),
             "slow path: " + _path_text(slow_hops, unit),
             f"skew {unit.words(r.skew)}; worst reconvergence of this stem for "
             f"{name_list(sink_names, 4)}")
    return dict(
        message=msg,
        evidence=ReconvergenceEvidence(
            stem_node=stem, reconvergence_node=gate, sink_nodes=list(sinks), skew=r.skew,
            fast_path=fast_ids, slow_path=slow_ids, fast_arrival=r.fast_arrival,
            slow_arrival=r.slow_arrival, slow_pin=slow_pin, fast_pin=fast_pin,
            key=stable_key("reconv", stem, gate), time_unit=unit.field),
        notes=notes, flows=(fast_hops, slow_hops),
        fix=("balance the branch delays, add the consensus term that holds the output "
             "while the branches disagree, or register the signal before the sensitive sink"))


def _incomplete(context, left, analysed: int, work_budget: float | None) -> Diagnostic:
    tg = context.timing_graph
    names = [tg.order[s] for s in sorted(left, key=lambda s: context.source_rank[tg.order[s]])]
    first = names[0]
    shown = [context.net_name(n) for n in names[:10]]
    return Diagnostic(
        rule=ID, kind="analysis-incomplete", severity=Severity.WARNING,
        location=context.location(first), instance=context.graph.nodes[first].get(
            "instance", "") or "",
        message=("reconvergence analysis stopped "
                 + (f"at its work budget ({work_budget:g} node visits)" if work_budget is not None
                    else f"because {budget.reason()}")
                 + f": {len(left)} of {len(left) + analysed} fanout stems not analysed, "
                 f"first {name_list(shown, 3)}"),
        evidence=BudgetEvidence(
            not_analysed=len(left), analysed=analysed, work_budget=work_budget,
            stems_not_analysed=[context.net_name(n) for n in names[:100]],
            key=stable_key("reconv-incomplete" if work_budget is not None
                           else "reconv-out-of-time", str(len(left)))),
        notes=(f"stems reaching a glitch-sensitive sink were analysed first; "
               f"not analysed: {name_list(shown, 10)}",),
        fix=(("raise [rules.unbalanced-reconvergence] work_budget (0: no limit)"
              if work_budget is not None else "raise the time budget (--time-budget, "
              "time_budget; 0: none)")
             + ", narrow scope to 'async', or lint the block's sub-modules one at a time"))


def _path_text(hops, unit: TimeUnit, keep: int = 4) -> str:
    """``a@0 -> b@1 -> ... (2 gates, 2 unit delays)``: arrival times in ``unit``, the path's
    delay at the end; long paths show their first and last hops and the gate count."""
    parts = [f"{h.net}@{unit.number(h.arrival)}" for h in
             (hops if len(hops) <= 2 * keep else hops[:keep] + hops[-keep:])]
    if len(hops) > 2 * keep:
        parts.insert(keep, f"... {len(hops) - 2 * keep} more ...")
    span = ""
    if hops and hops[-1].arrival is not None and hops[0].arrival is not None:
        span = ", " + unit.words(hops[-1].arrival - hops[0].arrival)
    return " -> ".join(parts) + f" ({count(len(hops) - 1, 'gate')}{span})"


def prove(diagnostic, evidence):
    """The proof hook: a reconvergence is proven or refuted by single changes of the sources
    behind its stem, decided at the sinks it reaches (the budget report proves nothing)."""
    if "stem_node" not in evidence:
        return None
    return HazardFromStem(stem=evidence["stem_node"],
                          sinks=tuple(evidence.get("sink_nodes") or ()),
                          skew=evidence.get("skew"),
                          gate=evidence.get("reconvergence_node"),
                          fast_path=tuple(evidence.get("fast_path") or ()),
                          slow_path=tuple(evidence.get("slow_path") or ()))
