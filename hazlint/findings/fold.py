"""One finding per problem.

The rules describe one hazard several times: the reconvergence rule once per fanout stem whose
branches meet on the way to a sink, the glitch-sensitive-pin rule once per pin; a loop can come
with its oscillation. :func:`fold` groups the findings by the problem they describe (a hazard at
one sink; one loop) and gives one finding per group: the headline, witness, waveform and fix of
the most telling member, the evidence of the other rules folded in as notes, and the other stems
listed by name with their skew (at most :data:`MAX_STEMS`, then a count of the rest).

The glitch-sensitive pins one net drives, with the same verdict, are then one problem
``net:<net>`` (:mod:`hazlint.findings.netgroup`); :func:`groups` is the one place that groups
and ranks.

Every folded finding carries ``evidence["problem"]`` (``hazard:<sink>``, ``net:<net>`` or
``loop:<net>``),
which is its identity for baselines and SARIF fingerprints: it does not change when another stem
becomes the worst one or the proof picks another witness, only when the sink (or the loop) does.
``evidence["also"]`` lists the folded members (rule, kind, place): every other rule's report and
the first :data:`MAX_LISTED` other reports of the leading rule (``also_left_out`` counts the
rest), so an acceptance written for any of them still applies.
"""
from __future__ import annotations

import json
from dataclasses import dataclass, replace
from typing import Callable, Iterable, Mapping, Sequence

from .. import plugins
from ..diagnostics import PROVEN_HAZARD_KINDS, Diagnostic, sort_diagnostics
from .evidence import Folded, with_folded
from .netgroup import SinkNets, also_entry, combine
from .requests import request_of
from .words import evidence_unit

# the kinds of the built-in rules' hazard and loop findings (for reports and tests that count
# them; grouping asks each rule's proof hook, never these)
HAZARD_KINDS = frozenset(("unbalanced-reconvergence", "unregistered-async", "static-1-hazard",
                          "static-0-hazard", "dynamic-hazard"))
PROVEN_KINDS = frozenset(PROVEN_HAZARD_KINDS)
LOOP_KINDS = frozenset(("combinational-loop", "oscillation"))
MAX_STEMS = 5        # other stems named in a folded finding's text; the rest are counted
MAX_LISTED = 20      # folded members of the leading rule kept in the evidence (JSON, SARIF)


def placing_evidence(d: Diagnostic) -> Mapping:
    """The evidence that places a finding (what its proof hook reads). A deferred finding
    whose builder offers ``light_evidence()`` is not built for it (tens of thousands of
    findings of one netlist fold into a few; only those shown are built)."""
    build = d.__dict__.get("_build")
    light = getattr(build, "light_evidence", None)
    if light is not None:
        return light()
    return d.evidence if isinstance(d.evidence, Mapping) else {}


_ev = placing_evidence


def _request(d: Diagnostic, memo: dict | None = None):
    """The proof request of ``d`` by its rule's hook, from the evidence that places it;
    ``memo`` (one per fold, by object) asks each finding's hook once."""
    if memo is None:
        return request_of(plugins.rule_for(d), d, _ev(d))
    got = memo.get(id(d))
    if got is None:
        got = memo[id(d)] = (d, request_of(plugins.rule_for(d), d, _ev(d)))
    return got[1]


def problem_of(d: Diagnostic, sensitive: Iterable[str] = (),
               name: Callable[[str], str] = str, memo: dict | None = None) -> str | None:
    """The problem a finding describes, as its proof request says: ``hazard:<sink node>``,
    ``loop:<first net of the loop>``, or None for findings that are problems of their own."""
    req = _request(d, memo)
    return req.problem(_ev(d), frozenset(sensitive), name) if req is not None else None


def describes_loop(d: Diagnostic) -> bool:
    """Whether ``d`` is about a combinational loop, as its rule's proof request says (its
    evidence path is then a loop, not a path from a change to a sink)."""
    req = _request(d)
    return bool(req is not None and req.loop)


def _stem(d: Diagnostic, memo: dict):
    req = _request(d, memo)
    return req.stem if req is not None else None


def _is_reconvergence(d: Diagnostic, memo: dict) -> bool:
    return _stem(d, memo) is not None


def _rank(d: Diagnostic, memo: dict) -> tuple:
    """Order of members: a proven hazard first, then the more severe, then a reconvergence
    (its place is the gate to edit and it shows both paths), then the larger skew."""
    req = _request(d, memo)
    skew = req.skew if req is not None else None
    skew = float(skew) if isinstance(skew, (int, float)) else 0.0
    loc = d.location
    return (d.kind not in PROVEN_KINDS, -int(d.severity), not _is_reconvergence(d, memo), -skew,
            loc.path, loc.line, loc.column, d.rule, d.instance)


@dataclass
class Problem:
    """One problem and the findings that describe it, ranked (``members[0]`` is shown).
    A glitching net's problem (``net:<net>``) has ``pins``: per pin, its node, its own key
    (``hazard:<pin>``) and its ranked members, best pin first; ``members`` is then every
    pin's members in that order."""

    key: str
    members: list
    pins: list | None = None
    driver: str | None = None


def groups(diagnostics: Sequence[Diagnostic], sensitive: Mapping[str, str] | Iterable[str] = (),
           name: Callable[[str], str] = str, nets: SinkNets | None = None,
           memo: dict | None = None) -> tuple[list[Diagnostic], list[Problem]]:
    """The grouping of :func:`fold`: ``(alone, problems)``, ``alone`` the findings that
    describe no shared problem. Findings group by :func:`problem_of` and rank by
    :func:`_rank`; with ``nets``, the problems at the glitch-sensitive pins of one driving net
    whose shown verdicts are the same (:func:`_verdict`) become one ``net:<net>`` problem
    (:mod:`hazlint.findings.netgroup`): the verdict shown is then true for each pin."""
    memo = {} if memo is None else memo
    sens = frozenset(sensitive)
    by_key: dict[str, list[Diagnostic]] = {}
    alone: list[Diagnostic] = []
    for d in diagnostics:
        key = problem_of(d, sens, name, memo)
        if key is None:
            alone.append(d)
        else:
            by_key.setdefault(key, []).append(d)
    problems = [Problem(k, sorted(ms, key=lambda m: _rank(m, memo))) for k, ms in by_key.items()]
    if nets is None:
        return alone, problems
    per_driver: dict[str, list[tuple[str, Problem]]] = {}
    out: list[Problem] = []
    for p in problems:
        sink = _sink(p.members[0], sens, memo) if p.key.startswith("hazard:") else None
        drv = nets.driver(sink) if sink is not None and sink in sens else None
        if drv is None:
            out.append(p)
        else:
            per_driver.setdefault(drv, []).append((sink, p))
    for drv, pins in per_driver.items():
        pins.sort(key=lambda sp: (_rank(sp[1].members[0], memo), sp[0]))
        lead = _verdict(pins[0][1].members[0])
        same = [sp for sp in pins if _verdict(sp[1].members[0]) == lead]
        if len(same) < 2:
            out += [p for _, p in pins]
            continue
        out.append(Problem(f"net:{nets.name(drv)}", [m for _, p in same for m in p.members],
                           pins=[(s, p.key, p.members) for s, p in same], driver=drv))
        folded = {s for s, _ in same}
        out += [p for s, p in pins if s not in folded]
    return alone, out


def _sink(d: Diagnostic, sensitive: frozenset, memo: dict) -> str | None:
    req = _request(d, memo)
    return req.sink_of(_ev(d), sensitive) if req is not None else None


def _verdict(d: Diagnostic) -> tuple:
    """What a problem's shown finding claims, beyond its sink: kind, severity, the prover's
    classification and reason, and the witness (by net name). Pins of one net fold only when
    these are equal."""
    ev = _ev(d)
    w = ev.get("witness")
    seen = None
    if isinstance(w, Mapping):
        # a change and its reverse are one witness (the kinds of hazard are the same both
        # ways; the timed replay of the shown finding may turn its witness round)
        t = w.get("transition") or {}
        back = {k: list(v)[::-1] for k, v in t.items()} if isinstance(t, Mapping) else t
        seen = min(json.dumps([w.get("inputs"), x], sort_keys=True, default=str)
                   for x in (t, back))
    return (d.kind, int(d.severity), ev.get("classification"), ev.get("inconclusive_reason"),
            ev.get("not_proven_reason"), seen)


def primaries(diagnostics: Sequence[Diagnostic], sensitive: Mapping[str, str] | Iterable[str] = (),
              name: Callable[[str], str] = str, nets: SinkNets | None = None) -> list[int]:
    """The positions of the findings whose headline, witness, waveform and fix :func:`fold`
    shows: the first member of each problem (of a glitching net's problem, its best pin's),
    and every finding that describes no shared problem (it passes through); ascending. The
    prover asks this of stand-ins that carry each finding's verdict (kind, severity, sink,
    witness) to spend its timed replays on these findings only."""
    alone, problems = groups(diagnostics, sensitive, name, nets)
    pos = {id(d): i for i, d in enumerate(diagnostics)}
    return sorted([pos[id(d)] for d in alone] + [pos[id(p.members[0])] for p in problems])


def fold(diagnostics: Sequence[Diagnostic], sensitive: Mapping[str, str] | Iterable[str] = (),
         name: Callable[[str], str] = str, nets: SinkNets | None = None) -> list[Diagnostic]:
    """One finding per problem (see the module docstring); findings that describe no shared
    problem pass through. ``sensitive`` are the glitch-sensitive sink nodes (a reconvergence
    reaching several sinks belongs to the first sensitive one; a mapping gives each pin's
    role), ``name`` turns a node id into the net name a designer reads; with ``nets`` the
    pins of one glitching net fold into one finding (:func:`groups`)."""
    memo: dict = {}
    alone, problems = groups(diagnostics, sensitive, name, nets, memo)
    out = list(alone)
    roles = sensitive if isinstance(sensitive, Mapping) else {}
    for p in problems:
        if p.pins is None:
            out.append(_fold_group(p.key, p.members, name, memo))
            continue
        pins = [(name(s), roles.get(s, ""), _fold_group(k, ms, name, memo), ms, nets.place(s))
                for s, k, ms in p.pins]
        out.append(combine(p.key, nets.name(p.driver), pins, nets.place(p.driver),
                           nets.where(p.driver)))
    return sort_diagnostics(out)


def _before(notes: Sequence[str], stop: tuple[str, ...]) -> list[str]:
    out = []
    for n in notes:
        if n.startswith(stop):
            break
        out.append(n)
    return out


def _fold_group(key: str, members: list[Diagnostic], name: Callable[[str], str],
                memo: dict) -> Diagnostic:
    primary, others = members[0], members[1:]
    folded = dict(problem=key, rules=sorted({m.rule for m in members}))
    notes = list(primary.notes)
    flows = tuple(primary.flows)
    fix = primary.fix
    if others:
        # every other rule's report, and the first of the leading rule's other reports (a
        # plain output of an arithmetic block can gather thousands of stems)
        same = [m for m in others if m.rule == primary.rule]
        folded["also"] = [also_entry(m) for m in others if m.rule != primary.rule] + \
            [also_entry(m) for m in same[:MAX_LISTED]]
        if len(same) > MAX_LISTED:
            folded["also_left_out"] = len(same) - MAX_LISTED
    stems = [m for m in others if _is_reconvergence(m, memo)]
    if stems and not _is_reconvergence(primary, memo):
        # the reconvergence evidence (stem, both paths, skew) of the worst stem
        first = stems.pop(0)
        notes.append(f"reconvergent fanout ({first.rule}):")
        notes += ["  " + n for n in _before(first.notes, ("proof:", "witness:",
                                                            "hazard proof", "timed "))]
        flows = flows + tuple(first.flows)
    for m in others:
        if _is_reconvergence(m, memo) or m.rule == primary.rule and m.kind == primary.kind:
            continue
        notes.append(f"also found by {m.rule} ({m.kind}):")
        notes += ["  " + n for n in _before(m.notes, ("witness:", "timed simulation:"))]
        tail = m.fix.partition("; this removes the logic hazard only: ")[2]
        if tail and tail not in fix:
            fix = f"{fix}; this removes the logic hazard only: {tail}"
    if stems:
        folded["other_stems"] = [
            {"stem": name(_stem(m, memo)),
             "skew": _request(m, memo).skew, "path": m.location.path, "line": m.location.line}
            for m in stems[:MAX_LISTED]]
        folded["other_stem_count"] = len(stems)
        if "time_unit" in _ev(stems[0]):      # the unit of the skews listed
            folded["time_unit"] = _ev(stems[0])["time_unit"]
        unit = evidence_unit(folded)
        shown = [f"{s['stem']} (skew {unit.words(s['skew'])})" for s in folded["other_stems"]
                 [:MAX_STEMS]]
        rest = len(stems) - len(shown)
        word = "stem" if len(stems) == 1 else "stems"
        notes.append(f"other {word} reconverging toward the same sink: " + ", ".join(shown)
                     + (f" and {rest} more" if rest else ""))
    severity = max(m.severity for m in members)
    evidence = with_folded(primary.evidence if isinstance(primary.evidence, Mapping) else {},
                           Folded(**folded))
    return replace(primary, severity=severity, evidence=evidence, notes=tuple(notes),
                   flows=flows, fix=fix)
