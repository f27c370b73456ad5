"""Proof requests: what a rule asks the prover to prove about one of its findings.

Each rule has a proof hook, ``prove(diagnostic, evidence)`` (see :mod:`hazlint.plugins`), that
looks at a finding of its own and answers with one of the requests below, or None when the
finding claims nothing a prover could check (a note, a budget report). The prover
(:func:`hazlint.analysis.refine.refine`) and the grouping of findings per problem
(:mod:`hazlint.findings.fold`) read these requests only: they never switch on kind strings nor
read a rule's own evidence keys.

* :class:`HazardFromStem` - single changes of the sources behind a fanout stem, decided at the
  sinks the stem reaches (a reconvergent fanout);
* :class:`HazardAtSink` - every change the change model allows, decided at one
  glitch-sensitive sink;
* :class:`LoopBehaviour` - whether a combinational loop (a strongly connected component) can
  oscillate; ``decided`` when the rule classified the loop itself.

A request also carries what the prover shows with a proven hazard: the nets worth drawing in
the waveform (``draw``), the gate where a consensus term would go (``gate``), the skew and the
fast path that the fallback fix names.

    >>> r = HazardFromStem(stem="b", sinks=("<sink>f",), skew=2.0, gate="f",
    ...                    fast_path=("b", "t2", "f"), slow_path=("b", "nb", "t1", "f"))
    >>> r.draw
    ('b', 't2', 'nb', 't1', 'f')
    >>> r.problem(None, frozenset(), str)
    'hazard:<sink>f'
    >>> LoopBehaviour(scc=("n2", "n1")).problem(None, frozenset(), str)
    'loop:n1'
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Mapping

#: the prover's own evidence key: the sink its verdict is about (set on every refined finding)
VERDICT_SINK = "sink_node"


@dataclass(frozen=True)
class ProofRequest:
    """What every request answers; subclasses say what to prove."""

    @property
    def sinks(self) -> tuple[str, ...]:
        """The sinks a hazard finding is about (empty for a loop)."""
        return ()

    @property
    def draw(self) -> tuple[str, ...]:
        """Nets between the change and the sink worth drawing in the waveform."""
        return ()

    gate = None             # where the branches meet (a consensus term goes here), or None
    skew = None             # the delay skew the rule measured, or None
    fast_path = ()          # the fast branch (node ids), named by the fallback fix
    stem = None             # the fanout stem, for requests that have one

    #: whether the finding describes a combinational loop (reports label its path a loop)
    loop = False

    def problem(self, evidence: Mapping | None, sensitive: frozenset,
                name: Callable[[str], str]) -> str | None:
        """The problem the finding describes (``hazard:<sink>``, ``loop:<net>``): findings of
        one problem are folded into one (:mod:`hazlint.findings.fold`)."""
        sink = self.sink_of(evidence, sensitive)
        return f"hazard:{name(sink)}" if sink else None

    def sink_of(self, evidence: Mapping | None, sensitive: frozenset) -> str | None:
        """The sink node a hazard finding's problem is at: the prover's verdict sink, else
        the first glitch-sensitive one of :attr:`sinks`, else the first; None for a loop."""
        sink = (evidence or {}).get(VERDICT_SINK)
        if sink:
            return sink
        sinks = list(self.sinks)
        if not sinks:
            return None
        return next((s for s in sinks if s in sensitive), sinks[0])


@dataclass(frozen=True)
class HazardFromStem(ProofRequest):
    """Prove a hazard at ``sinks`` for single changes of the sources behind ``stem``."""

    stem: str = ""
    sinks: tuple[str, ...] = ()
    skew: float | None = None
    gate: str | None = None
    fast_path: tuple[str, ...] = ()
    slow_path: tuple[str, ...] = ()

    @property
    def draw(self) -> tuple[str, ...]:
        inner = (list(self.fast_path)[1:-1] + list(self.slow_path)[1:-1])[:6]
        return tuple([self.stem] + inner + ([self.gate] if self.gate else []))


@dataclass(frozen=True)
class HazardAtSink(ProofRequest):
    """Prove a hazard at the glitch-sensitive ``sink`` over every change the change model
    allows; ``quiet`` are sources held still when the run has no change model."""

    sink: str = ""
    quiet: tuple[str, ...] = ()

    @property
    def sinks(self) -> tuple[str, ...]:
        return (self.sink,) if self.sink else ()


@dataclass(frozen=True)
class LoopBehaviour(ProofRequest):
    """Decide whether the loop ``scc`` can oscillate (unless ``decided`` by the rule)."""

    scc: tuple[str, ...] = ()
    cycle: tuple[str, ...] = ()
    key: str = ""
    decided: bool = False
    loop = True

    def problem(self, evidence, sensitive, name):
        return f"loop:{name(min(self.scc))}" if self.scc else None

    def sink_of(self, evidence, sensitive):
        return None


def request_of(rule, diagnostic, evidence: Mapping | None) -> ProofRequest | None:
    """The proof request of ``diagnostic`` by its rule's hook (``rule`` a
    :class:`hazlint.plugins.Rule` or None); None without a rule or a hook."""
    hook = getattr(rule, "prove", None) if rule is not None else None
    if hook is None:
        return None
    return hook(diagnostic, evidence if evidence is not None else {})
