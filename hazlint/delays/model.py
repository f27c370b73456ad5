"""The delay model: the one way an analysis learns the delay of a gate's input pin and of a
wire.

Delays come from four sources, and each writes them onto the gate graph before any analysis
runs: the unit delay (a gate nothing else times), the source (``#`` delays and ``specify``
paths, :mod:`hazlint.elaborate.source_delays`), a Liberty library (the cell's timing arcs,
:mod:`hazlint.delays.liberty`) and SDF back-annotation (:mod:`hazlint.delays.sdf`, which
replaces pin delays and adds wire delays). Analyses never read those attributes themselves:
they ask a :class:`DelayModel`, by default :data:`GRAPH_DELAYS`, which reads what was written
and holds the one unit-delay fallback.
"""
from __future__ import annotations

from typing import Any, Mapping, Protocol

from ..netlist.library import UNIT_DELAY, Delay


class DelayModel(Protocol):
    """What every analysis asks for a delay. ``node`` is a gate node's attribute mapping,
    ``edge`` an edge's (see :mod:`hazlint.netlist.graph`)."""

    def pin(self, node: Mapping[str, Any], pin: int) -> Delay:
        """Pin-to-output delay of input ``pin`` of the gate ``node``."""

    def wire(self, edge: Mapping[str, Any]) -> Delay | None:
        """Delay of the wire ``edge`` (None: no wire delay)."""


class AnnotatedDelays:
    """The delays written onto the graph (``delays`` per gate input pin, ``wire`` per edge),
    ``default`` for a pin that has none.

    >>> from hazlint.netlist.library import Delay
    >>> model = AnnotatedDelays()
    >>> model.pin({"delays": [Delay.fixed(2.0)]}, 0).max, model.pin({"delays": []}, 1).max
    (2.0, 1.0)
    >>> model.wire({}) is None
    True
    """

    __slots__ = ("default",)

    def __init__(self, default: Delay = UNIT_DELAY):
        self.default = default

    def pin(self, node: Mapping[str, Any], pin: int) -> Delay:
        delays = node.get("delays") or ()
        dl = delays[pin] if pin < len(delays) else None
        return self.default if dl is None else dl

    def wire(self, edge: Mapping[str, Any]) -> Delay | None:
        return edge.get("wire")


# what the analyses use unless given another model
GRAPH_DELAYS = AnnotatedDelays()
