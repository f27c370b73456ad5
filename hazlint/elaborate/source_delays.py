"""Delays written in the source: ``#(...)`` on gates and assigns scaled by the
module's time unit, and ``specify`` module paths onto the pins of the gates that drive them.
A mixin of :class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

from .. import limits as _limits
from ..errors import ElaborationError
from ..netlist.library import Delay
from .common import where as _where
from .consteval import NotConstant, const_value
from .scope import Scope


class SourceDelays:
    """``#`` delays and specify paths."""

    def apply_specify(self, scope: Scope, paths, drivers) -> None:
        """Module path delays (``specify``) onto the gates of this module instance.

        A path ``(A => Y)`` sets the delay of the pin fed by ``A`` on the gate that drives
        ``Y``, when that gate reads ``A`` directly: the single-gate cells of a Verilog cell
        library, the common case. A primitive written with its own delay keeps the larger of
        the two; one written without a delay (zero in Verilog, one unit here by default) takes
        the path delay. Conditional paths of one pin pair fold to their min and max. Paths
        through more than one gate and edge-sensitive paths (clock to output) are reported
        and not applied; SDF or a Liberty library gives those arcs."""
        by_out: dict[str, dict] = {}
        for rec in drivers:
            if rec["kind"] == "gate":
                by_out.setdefault(self.find(rec["out"]), rec)
        arcs: dict[tuple[int, int], Delay] = {}        # (driver id, pin) -> folded delay
        recs: dict[int, dict] = {}
        skipped = []
        for path in paths:
            if path.edge is not None or not path.delay:
                skipped.append((path, "edge-sensitive path" if path.edge else "no delay"))
                continue
            d = self.delay(path.delay, scope, path.loc)
            srcs = [b for e in path.sources for b in (self.conn_bits(scope, e, path.loc) or [])]
            dsts = [b for e in path.destinations
                    for b in (self.conn_bits(scope, e, path.loc) or [])]
            pairs = list(zip(srcs, dsts)) if not path.full and len(srcs) == len(dsts) else \
                [(a, b) for a in srcs for b in dsts]
            missed = False
            for a, b in pairs:
                rec = by_out.get(self.find(b))
                pins = [i for i, u in enumerate(rec["inputs"]) if self.find(u) == self.find(a)] \
                    if rec is not None else []
                if not pins:
                    missed = True
                    continue
                recs[id(rec)] = rec
                for pin in pins:
                    old = arcs.get((id(rec), pin))
                    arcs[(id(rec), pin)] = d if old is None else Delay(
                        min(old.rise_min, d.rise_min), max(old.rise_max, d.rise_max),
                        min(old.fall_min, d.fall_min), max(old.fall_max, d.fall_max))
            if missed:
                skipped.append((path, "the path runs through more than one gate"))
        for (rid, pin), d in arcs.items():
            rec = recs[rid]
            delays = list(rec["delays"])
            if rec.get("explicit_delay"):
                own = delays[pin]
                d = Delay(max(own.rise_min, d.rise_min), max(own.rise_max, d.rise_max),
                          max(own.fall_min, d.fall_min), max(own.fall_max, d.fall_max))
            if rec["out"] in self.net_delay:
                d = sum_delay(d, self.net_delay[rec["out"]])
            delays[pin] = d
            rec["delays"] = delays
            rec["path_delay"] = True
        for path, why in skipped:
            self.note(f"specify path delay not applied ({why}); gate delays, SDF or the "
                      f"library give that arc", path.loc, scope.instance,
                      key=("specify", scope.module.name, why))

    def cell_delays_given(self, cell, delays: list) -> None:
        """A cell definition gave ``delays`` (Liberty arcs in its library's time unit, or a
        configured delay in the design's unit): kept for :meth:`settle_time_unit`."""
        self.cell_delays.append((cell.time_unit, delays))

    def settle_time_unit(self) -> tuple[float | None, str]:
        """(seconds per delay unit, origin) of the delays the design was given: the design's
        time unit (the finest ``timescale``) when the source or the configuration gives
        delays, Liberty arcs converted into it; else the Liberty ``time_unit`` (the finest
        when libraries differ, the others converted); else unit delays (None, "unit").
        Converts the Liberty delay lists in place, before the graph is built."""
        given = self.cell_delays
        lib = sorted({u for u, _ in given if u})
        source = self.source_delays or any(not u for u, _ in given)
        if source:
            unit = self.time_unit or (lib[0] if lib else None)
            origin = "timescale" if self.time_unit else ("Liberty" if lib else "source")
        elif lib:
            unit, origin = lib[0], "Liberty"
        else:
            return None, "unit"
        for u, delays in given:
            if u and unit and u != unit:
                f = u / unit
                delays[:] = [Delay(d.rise_min * f, d.rise_max * f, d.fall_min * f,
                                   d.fall_max * f) for d in delays]
        return unit, origin

    def delay(self, d, scope: Scope, loc) -> Delay:
        """An IR delay (list of (min, typ, max) expressions: rise, fall, turn-off) as a Delay in
        design time units."""
        self.source_delays = True
        params = scope.all_params()
        vals = []
        for mtm in d[:2]:
            try:
                mn, _typ, mx = (float(const_value(x, params, _where(loc))) for x in mtm)
            except NotConstant as exc:
                raise ElaborationError(f"delay is not a constant expression ('{exc}')",
                                       *_where(loc)) from None
            except OverflowError:
                _limits.check("delay", float("inf"), "a delay too large to represent",
                              _where(loc))
            for v in (mn, mx):
                if not v >= 0:
                    raise ElaborationError(f"delay {v:g} is not a non-negative number",
                                           *_where(loc))
                _limits.check("delay", v, "the delay", _where(loc))
            vals.append((mn, mx))
        if len(vals) == 1:
            vals.append(vals[0])
        f = self.unit_factor(scope.module.timescale)
        (rmin, rmax), (fmin, fmax) = vals
        return Delay(rmin * f, rmax * f, fmin * f, fmax * f)

    def unit_factor(self, timescale) -> float:
        if not timescale or not self.time_unit:
            return 1.0
        return timescale[0] / self.time_unit


def sum_delay(a: Delay, b: Delay) -> Delay:
    return Delay(a.rise_min + b.rise_min, a.rise_max + b.rise_max,
                 a.fall_min + b.fall_min, a.fall_max + b.fall_max)
