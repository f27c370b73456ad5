"""Typed evidence: one frozen dataclass per kind of finding.

The evidence of a finding is a value of one of these classes. Its fields are the keys of the
machine-readable evidence (JSON, SARIF, the result cache), in that order; :meth:`to_dict`
serialises it to exactly the dict those reports print. An evidence value is also a read-only
mapping over that dict (``ev["skew"]``, ``ev.get("witness")``), so a reader that only prints
it need not know its class.

What happens to a finding after its rule made it is kept in typed parts, not in added keys:

* :class:`Verdict` - what the prover concluded (:mod:`hazlint.analysis.refine`), appended to
  the rule's own evidence (``classification``, ``proof``, ``witness``, ``glitch``...);
* :class:`Folded` - the other findings of the same problem (:mod:`hazlint.findings.fold`).

Fields listed in a class's ``OPTIONAL`` are left out of the dict while they are None (e.g. a
loop through a latch has no ``behaviour``).

    >>> ev = AsyncSinkEvidence(sink_node="@q.reset", role="reset", source_nodes=["a", "b"],
    ...                        quiet_nodes=[], stems=["a"], cone_gates=2, key="async:1")
    >>> ev["role"], ev.get("skew")
    ('reset', None)
    >>> v = with_verdict(ev, Verdict(classification="hazard-free", sink_node="@q.reset",
    ...                              proof={}))
    >>> list(v)[-3:]
    ['key', 'classification', 'proof']
    >>> v.verdict.classification, v == dict(v)
    ('hazard-free', True)

A rule of another package may give a plain dict; it is kept as :class:`RuleEvidence` once the
prover or the fold adds to it.
"""
from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, ClassVar


class _Typed(Mapping):
    """A frozen dataclass that reads as the mapping of its serialised dict."""

    OPTIONAL: ClassVar[frozenset] = frozenset()
    #: fields whose values are node ids (a string or a list of them): machine-readable
    #: reports print them as net names (:mod:`hazlint.findings.public`)
    NODE_FIELDS: ClassVar[frozenset] = frozenset()
    _PARTS: ClassVar[tuple] = ()        # fields that are typed parts, not keys

    def node_fields(self) -> frozenset:
        """The keys of the serialised dict whose values are node ids."""
        return self.NODE_FIELDS

    def _own(self) -> dict[str, Any]:
        out = {}
        for f in dataclasses.fields(self):
            if f.name in self._PARTS:
                continue
            v = getattr(self, f.name)
            if v is None and f.name in self.OPTIONAL:
                continue
            out[f.name] = v
        return out

    def to_dict(self) -> dict[str, Any]:
        """The evidence as the reports print it (a fresh dict)."""
        return dict(self._dict)

    @cached_property
    def _dict(self) -> dict[str, Any]:
        return self._own()

    def __getitem__(self, key: str) -> Any:
        return self._dict[key]

    def __iter__(self):
        return iter(self._dict)

    def __len__(self) -> int:
        return len(self._dict)

    def __repr__(self) -> str:
        return f"{type(self).__name__}({self._dict!r})"

    def __getstate__(self):
        # the cached dict is rebuilt on demand, never shipped to a worker or cached
        return {k: v for k, v in self.__dict__.items() if k != "_dict"}

    def __setstate__(self, state):
        self.__dict__.update(state)


@dataclass(frozen=True, eq=False, repr=False)
class Verdict(_Typed):
    """What the prover concluded about a finding. ``classification`` is a hazard kind,
    ``hazard-free``, ``inconclusive`` or ``not-proven`` (the rule has no proof hook);
    ``sink_node`` is set only when the rule's evidence names no single sink.
    ``witness``/``glitch`` are the witness transition and its timed replay as the reports
    print them; :func:`hazlint.analysis.prove.classification_of` turns them back into a
    replayable case."""

    sink_node: str | None = None
    classification: str = ""
    proof: dict | None = None
    inconclusive_reason: str | None = None
    witness: dict | None = None
    function_hazard: bool | None = None
    glitch: dict | None = None
    present_kinds: list | None = None
    waveform_nets: list | None = None
    change_model: dict | None = None
    cell_model: str | None = None
    sink_hazards: dict | None = None
    not_proven_reason: str | None = None
    time_unit: str | None = None        # of the glitch's times (findings.words.TimeUnit.field)

    NODE_FIELDS: ClassVar[frozenset] = frozenset(("sink_node", "waveform_nets"))
    OPTIONAL: ClassVar[frozenset] = frozenset((
        "sink_node", "proof", "inconclusive_reason", "witness", "function_hazard", "glitch",
        "present_kinds", "waveform_nets", "change_model", "cell_model", "sink_hazards",
        "not_proven_reason", "time_unit"))

    # the words of a verdict: a proven hazard's headline, the line of one left unproven
    KIND_WORDS: ClassVar[dict] = {"static-1-hazard": "static-1 hazard",
                                  "static-0-hazard": "static-0 hazard",
                                  "dynamic-hazard": "dynamic hazard"}

    @property
    def proven(self) -> bool:
        return self.witness is not None

    def headline(self, sink: str, witness: str) -> str:
        """The message of a proven hazard at ``sink`` (its net name) with the ``witness``
        in words.

            >>> Verdict(classification="static-1-hazard", witness={}, function_hazard=True
            ...         ).headline("rst_n", "a falls with b=1")
            'static-1 hazard at rst_n: a falls with b=1 (function hazard)'
        """
        text = f"{self.KIND_WORDS[self.classification]} at {sink}: {witness}"
        return text + " (function hazard)" if self.function_hazard else text

    def note(self) -> str | None:
        """The evidence line of a finding the prover did not prove: why not."""
        if self.not_proven_reason is not None:
            return f"not proven: {self.not_proven_reason}"
        if self.inconclusive_reason is not None:
            return f"hazard proof inconclusive: {self.inconclusive_reason}"
        return None


@dataclass(frozen=True, eq=False, repr=False)
class Folded(_Typed):
    """The problem a folded finding describes and the other findings folded into it."""

    problem: str = ""
    rules: list = field(default_factory=list)
    also: list | None = None
    also_left_out: int | None = None
    other_stems: list | None = None
    other_stem_count: int | None = None
    time_unit: str | None = None        # of the other stems' skews
    # a glitching net's finding (:mod:`hazlint.findings.netgroup`): the net, how many
    # glitch-sensitive pins it reaches, by role
    net: str | None = None
    pin_count: int | None = None
    pin_roles: dict | None = None
    # not printed: each pin's own problem (``hazard:<pin>``) and the (rule, path, line,
    # instance) of the findings folded into it, for baselines and acceptances written per pin
    pin_members: list | None = None

    OPTIONAL: ClassVar[frozenset] = frozenset(("also", "also_left_out", "other_stems",
                                               "other_stem_count", "time_unit", "net",
                                               "pin_count", "pin_roles"))
    _PARTS: ClassVar[tuple] = ("pin_members",)


@dataclass(frozen=True, eq=False, repr=False)
class Evidence(_Typed):
    """Base of the evidence classes: the rule's own fields, then the prover's
    :class:`Verdict` and the fold's :class:`Folded` (keys the rule already gave keep their
    place, as a dict update keeps it)."""

    verdict: Verdict | None = field(default=None, kw_only=True)
    folded: Folded | None = field(default=None, kw_only=True)

    _PARTS: ClassVar[tuple] = ("verdict", "folded")

    @cached_property
    def _dict(self) -> dict[str, Any]:
        out = self._own()
        for part in (self.verdict, self.folded):
            if part is not None:
                out.update(part._dict)
        return out

    def node_fields(self) -> frozenset:
        out = self.NODE_FIELDS
        for part in (self.verdict, self.folded):
            if part is not None:
                out = out | part.node_fields()
        return out

    @property
    def sink(self) -> str | None:
        """The sink the prover's verdict is about."""
        return self.get("sink_node")


@dataclass(frozen=True, eq=False, repr=False)
class ReconvergenceEvidence(Evidence):
    """``unbalanced-reconvergence``: a fanout stem whose branches meet at a gate with a skew."""

    stem_node: str
    reconvergence_node: str
    sink_nodes: list
    skew: float
    fast_path: list
    slow_path: list
    fast_arrival: float
    slow_arrival: float
    slow_pin: str
    fast_pin: str
    key: str
    time_unit: str = "unit delay"       # of skew and arrivals (findings.words.TimeUnit.field)

    NODE_FIELDS: ClassVar[frozenset] = frozenset(("stem_node", "reconvergence_node",
                                                  "sink_nodes", "fast_path", "slow_path"))


@dataclass(frozen=True, eq=False, repr=False)
class AsyncSinkEvidence(Evidence):
    """``unregistered-async``: a glitch-sensitive pin and the cone of logic that drives it."""

    sink_node: str
    role: str
    source_nodes: list
    quiet_nodes: list
    stems: list
    cone_gates: int
    key: str

    NODE_FIELDS: ClassVar[frozenset] = frozenset(("sink_node", "source_nodes", "quiet_nodes",
                                                  "stems"))


@dataclass(frozen=True, eq=False, repr=False)
class LoopEvidence(Evidence):
    """``combinational-loop`` (and the loop rule's own ``oscillation``): a shortest cycle, its
    component and, where the rule classified it, the loop's behaviour."""

    cycle: list
    scc: list
    storage_element: str | None
    behaviour: str | None = None
    loop: dict | None = None
    through_latch: list = field(default_factory=list)
    key: str = ""

    OPTIONAL: ClassVar[frozenset] = frozenset(("behaviour", "loop"))
    NODE_FIELDS: ClassVar[frozenset] = frozenset(("cycle", "scc"))


@dataclass(frozen=True, eq=False, repr=False)
class OscillationEvidence(Evidence):
    """``oscillation`` found by the prover for a loop: the input values with no stable
    state."""

    scc: list
    cycle: list
    inputs: dict
    behaviour: str
    reason: str
    key: str

    NODE_FIELDS: ClassVar[frozenset] = frozenset(("scc", "cycle"))


@dataclass(frozen=True, eq=False, repr=False)
class BudgetEvidence(Evidence):
    """``analysis-incomplete``: a rule stopped at its work budget (``work_budget``) or at the
    run's time budget (``work_budget`` None)."""

    not_analysed: int
    analysed: int
    work_budget: float | None
    stems_not_analysed: list
    key: str


@dataclass(frozen=True, eq=False, repr=False)
class NotRunEvidence(Evidence):
    """``analysis-incomplete``: a rule that did not run at all (the time budget was used)."""

    reason: str
    key: str


@dataclass(frozen=True, eq=False, repr=False)
class AcceptanceEvidence(Evidence):
    """``unused-acceptance``: an acceptance that matched no finding."""

    rules: list
    origin: str
    reason: str
    key: str


@dataclass(frozen=True, eq=False, repr=False)
class RuleEvidence(Evidence):
    """The evidence of a rule that gives a plain dict (a rule of another package)."""

    data: dict = field(default_factory=dict)

    def _own(self) -> dict[str, Any]:
        return dict(self.data)

    def node_fields(self) -> frozenset:
        # a rule of another package declares its node-id keys by name: ``*_node``, ``*_nodes``
        own = frozenset(k for k in self.data if k.endswith(("_node", "_nodes")))
        return own | super().node_fields()


#: every evidence class (the result cache's codec registers them)
CLASSES = (Verdict, Folded, ReconvergenceEvidence, AsyncSinkEvidence, LoopEvidence,
           OscillationEvidence, BudgetEvidence, NotRunEvidence, AcceptanceEvidence,
           RuleEvidence)


def typed(evidence: Mapping | None) -> Evidence:
    """``evidence`` as an :class:`Evidence` value (a plain mapping becomes
    :class:`RuleEvidence`)."""
    if isinstance(evidence, Evidence):
        return evidence
    return RuleEvidence(data=dict(evidence or {}))


def with_verdict(evidence: Mapping | None, verdict: Verdict) -> Evidence:
    """The evidence with the prover's verdict (replacing an earlier one). The verdict's sink
    is dropped when the rule's own evidence names it already."""
    ev = typed(evidence)
    if verdict.sink_node is not None and "sink_node" in ev._own():
        verdict = dataclasses.replace(verdict, sink_node=None)
    return dataclasses.replace(ev, verdict=verdict)


def with_folded(evidence: Mapping | None, folded: Folded) -> Evidence:
    """The evidence of a folded finding."""
    return dataclasses.replace(typed(evidence), folded=folded)
