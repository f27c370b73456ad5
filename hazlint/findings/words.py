"""Words a designer reads: gate types as nouns, counts with their plural, numbers, and times
in the unit of the delays the design was analysed with.

    >>> gate_words("or", "g_clear")
    'OR gate g_clear'
    >>> gate_words("NAND2X1", "u7")
    'NAND2X1 cell u7'
    >>> count(2, "gate"), count(1, "source")
    ('2 gates', '1 source')
    >>> number(3.0), number(0.25), number(None), number(-(10 ** 40))
    ('3', '0.25', '?', '-a 133-bit number')
    >>> ns, units = TimeUnit(1e-9, "timescale"), TimeUnit(None, "unit")
    >>> ns.words(2.5), units.words(1), units.words(2), TimeUnit(1e-10, "Liberty").words(3)
    ('2.5 ns', '1 unit delay', '2 unit delays', '300 ps')
    >>> ns.field, units.field, TimeUnit.from_field("100ps") == TimeUnit(1e-10, "")
    ('1ns', 'unit delay', True)
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Mapping

# Verilog gate primitives and the operators the elaborator builds (IEEE 1364-2005 7.2-7.4)
_PRIMITIVES = {
    "and": "AND gate", "or": "OR gate", "nand": "NAND gate", "nor": "NOR gate",
    "xor": "XOR gate", "xnor": "XNOR gate", "not": "inverter", "buf": "buffer",
    "mux": "multiplexer", "bufif0": "three-state buffer", "bufif1": "three-state buffer",
    "notif0": "three-state inverter", "notif1": "three-state inverter",
}


def gate_words(cell: str, name: str) -> str:
    """"OR gate g_clear" for a primitive or operator, "<cell> cell <name>" for a library, yosys
    or user cell."""
    kind = _PRIMITIVES.get((cell or "").lower()) if cell and cell.islower() else None
    if kind:
        return f"{kind} {name}".strip()
    return f"{cell} cell {name}".strip() if cell else name


def count(n: int, word: str, plural: str | None = None) -> str:
    """"1 gate", "2 gates"."""
    return f"{n} {word if n == 1 else (plural or word + 's')}"


def number(x: Any) -> str:
    """A number as messages, evidence and Verilog text write it: ``3`` for 3.0, else ``%g``;
    an integer too long to read (30 digits or more; Python refuses to print one of more than
    4300) as its size; ``?`` for no number."""
    if isinstance(x, bool) or not isinstance(x, (int, float)):
        return "?"
    if isinstance(x, int):
        if abs(x) >= 10 ** 30:
            return f"{'-' if x < 0 else ''}a {x.bit_length()}-bit number"
        return str(x)
    return str(int(x)) if x.is_integer() else f"{x:g}"


# SI prefixes of the time units Verilog, Liberty and SDF write (IEEE 1364-2005 19.8: s, ms,
# us, ns, ps, fs with a magnitude of 1, 10 or 100)
_PREFIXES = ((0, "s"), (-3, "ms"), (-6, "us"), (-9, "ns"), (-12, "ps"), (-15, "fs"))
_SECONDS = {name: 10.0 ** e for e, name in _PREFIXES}


@dataclass(frozen=True)
class TimeUnit:
    """What one delay number means: ``seconds`` per unit (None when the design names no unit)
    and where it comes from (``origin``: ``"unit"`` when no delays were given, so every gate
    has the unit delay; ``"timescale"``, ``"Liberty"``, ``"SDF"``; ``"source"`` for delays in
    a source without a ``timescale``). Times are printed in the SI unit of ``seconds``
    (``100ps`` units: a value of 3 prints as "300 ps"); without seconds as "unit delays" or
    "time units", never as a bare number that looks like nanoseconds."""

    seconds: float | None
    origin: str = field(default="", compare=False)

    # the graph attribute a design records its unit in (hazlint.netlist.graph)
    ATTR = "time_unit"

    @classmethod
    def of(cls, graph) -> "TimeUnit":
        """The unit recorded on a gate graph (``graph.graph["time_unit"]``); unit delays when
        none is recorded."""
        rec = getattr(graph, "graph", None) or {}
        rec = rec.get(cls.ATTR) if isinstance(rec, Mapping) else None
        if not isinstance(rec, Mapping):
            return cls(None, "unit")
        return cls(rec.get("seconds"), rec.get("origin") or "unit")

    def record(self, graph) -> None:
        """Write this unit onto a gate graph (what :meth:`of` reads)."""
        graph.graph[self.ATTR] = {"seconds": self.seconds, "origin": self.origin}

    @classmethod
    def from_field(cls, text: Any) -> "TimeUnit":
        """The unit a report's ``time_unit`` field names (see :attr:`field`)."""
        if not isinstance(text, str):
            return cls(None, "unit")
        t = text.strip()
        if t == "time unit":
            return cls(None, "source")
        for _e, name in _PREFIXES:
            if t.endswith(name) and t[:-len(name)].strip().isdigit():
                return cls(int(t[:-len(name)]) * _SECONDS[name], "")
        return cls(None, "unit")

    @property
    def field(self) -> str:
        """The unit as machine-readable reports give it beside the numbers: ``"1ns"``,
        ``"100ps"`` (as a ``timescale`` writes it), ``"unit delay"`` or ``"time unit"``."""
        if self.seconds is None:
            return "unit delay" if self.origin in ("unit", "") else "time unit"
        factor, name = self._display()
        return f"{number(factor)}{name}"

    def _display(self) -> tuple[float, str]:
        """(numbers per delay unit, SI unit name) of the printed times."""
        s = self.seconds
        e = max(-15, min(0, 3 * math.floor(round(math.log10(s), 9) / 3)))
        name = dict(_PREFIXES)[e]
        return round(s / 10.0 ** e, 9), name

    @property
    def label(self) -> str:
        """The unit of printed times, for an axis or a column: ``ns``, ``unit delays``."""
        if self.seconds is None:
            return "unit delays" if self.origin in ("unit", "") else "time units"
        return self._display()[1]

    def value(self, x: float) -> float:
        """``x`` delay units in the printed unit (``label``)."""
        return x if self.seconds is None else x * self._display()[0]

    def number(self, x: Any) -> str:
        """``x`` delay units as a number in the printed unit, without the unit."""
        if not isinstance(x, (int, float)) or isinstance(x, bool):
            return number(x)
        return number(round(self.value(x), 9))

    def words(self, x: Any) -> str:
        """``x`` delay units with the unit: "2.5 ns", "1 unit delay", "3 time units"."""
        n = self.number(x)
        if self.seconds is not None:
            return f"{n} {self.label}"
        word = "unit delay" if self.origin in ("unit", "") else "time unit"
        return f"{n} {word}" if n == "1" else f"{n} {word}s"


UNIT_DELAYS = TimeUnit(None, "unit")


def evidence_unit(evidence: Any) -> TimeUnit:
    """The unit of the times in a finding's evidence (its ``time_unit`` field; unit delays
    when it has none)."""
    return TimeUnit.from_field(evidence.get("time_unit")) if isinstance(evidence, Mapping) \
        else UNIT_DELAYS
