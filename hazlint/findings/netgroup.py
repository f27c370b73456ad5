"""One finding per glitching net: the pins one net drives fold into one finding.

A reset from logic that drives every register of a block is one problem for the designer:
the net (or the logic that drives it) is fixed once. The prover already decides the pins of
one driver together (:func:`hazlint.analysis.refine._refine_sink` shares one verdict per
driver); :func:`hazlint.findings.fold.groups` then puts the problems at the glitch-sensitive
pins of one driving net into one ``net:<net>`` problem when their verdicts are the same (the
same kind, severity, classification, reason and witness), and :func:`combine` here writes the
finding: the net, how many glitch-sensitive pins it reaches by role, the first few pins with
their instance paths, each pin in the evidence (``also``, capped, with a count) and the
location of the net's driver, where the designer edits. A pin whose verdict differs (a pin
behind gating of its own has another driver anyway) keeps its own ``hazard:<pin>`` finding,
and so does a net that reaches a single pin (its finding and fingerprint are unchanged).

The driving net of a pin is the net at its input, followed back through non-inverting
buffers (a buffered reset tree is one net to the designer; an inverter changes the hazard's
kind and so starts another net).

The old per-pin identities stay usable: the folded finding keeps, outside its printed
evidence, each pin's ``hazard:<pin>`` problem and the places of the findings folded into it
(:attr:`~hazlint.findings.evidence.Folded.pin_members`), so a baseline entry or an acceptance
written for the pins still applies (:mod:`hazlint.baseline`, :mod:`hazlint.waivers`).
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, replace
from typing import Any, Callable, Mapping, Sequence

from ..diagnostics import Diagnostic, Location, Related
from .evidence import Folded, with_folded
from .words import count

MAX_PINS_SHOWN = 5      # pins named in the text; the rest are counted
MAX_PINS_LISTED = 20    # pins kept in the printed evidence (``also``); the rest are counted
MAX_RELATED_PINS = 100  # pins given as related locations (SARIF, LSP); the rest are counted

# a pin role in words, singular and plural (the sink roles of hazlint.netlist.graph)
ROLE_WORDS = {"reset": ("asynchronous reset", "asynchronous resets"),
              "set": ("asynchronous set", "asynchronous sets"),
              "clock": ("clock", "clocks"),
              "enable": ("latch enable", "latch enables"),
              "tristate_enable": ("three-state enable", "three-state enables"),
              "output": ("asynchronous output", "asynchronous outputs")}
ROLE_ORDER = tuple(ROLE_WORDS)


@dataclass(frozen=True)
class SinkNets:
    """What the grouping needs to know of the graph: a pin's driving net, a node's name, and
    where a node is written (location and instance path)."""

    graph: Any
    name: Callable[[str], str]
    location: Callable[[str], Location]
    where: Callable[[str], str] = lambda n: ""     # ``file:line`` of a node, in words

    @classmethod
    def of(cls, context) -> "SinkNets":
        return cls(context.graph, context.describe, context.location, context.where)

    def driver(self, sink: str) -> str | None:
        """The net driving ``sink``, back through non-inverting buffers; None for a node that
        is not a pin read from a net."""
        g = self.graph
        if sink not in g:
            return None
        ins = g.nodes[sink].get("inputs") or ()
        if len(ins) != 1:
            return None
        n, seen = ins[0], set()
        while n not in seen:
            seen.add(n)
            d = g.nodes[n]
            up = d.get("inputs") or ()
            if d.get("kind") != "gate" or d.get("op") != "buf" or len(up) != 1:
                break
            n = up[0]
        return n

    def place(self, node: str) -> tuple[Location, str]:
        return self.location(node), self.graph.nodes[node].get("instance", "") or ""


def roles_words(roles: Mapping[str, int]) -> str:
    """``"3 asynchronous resets, 1 clock"`` (roles in a fixed order)."""
    order = sorted(roles, key=lambda r: (ROLE_ORDER.index(r) if r in ROLE_ORDER else 99, r))
    return ", ".join(count(roles[r], *ROLE_WORDS.get(r, (r, r + "s"))) for r in order)


def _member(d: Diagnostic) -> list:
    return [d.rule, d.location.path, d.location.line, d.instance]


def combine(key: str, net: str, pins: Sequence[tuple], place: tuple[Location, str],
            where: str = "") -> Diagnostic:
    """The finding of a glitching net: ``pins`` are ``(pin name, role, the pin's folded
    finding, the findings folded into it, the pin's (location, instance))``, best first (the
    first pin's witness, waveform and fix are shown: every pin reads the same net);
    ``place`` is the driver's location and instance path, ``where`` its ``file:line`` in
    words. The pins are also the finding's related locations (the first
    :data:`MAX_RELATED_PINS`, then a count)."""
    pins = [tuple(p) for p in pins]
    lead_name, _, lead, _, _ = pins[0]
    roles = Counter(p[1] for p in pins)
    n = len(pins)
    said = roles_words(roles)
    head = f"net {net} ({said})"
    msg = lead.message
    mark = f" at {lead_name}: "
    if mark in msg:
        before, _, after = msg.partition(mark)
        message = f"{before} at {head}: {after}"
    else:
        message = f"{head}: {msg}"
    shown = [f"{p[0]} ({p[4][1]})" if p[4][1] else p[0] for p in pins[:MAX_PINS_SHOWN]]
    rest = n - len(shown)
    notes = [f"net {net}{f' ({where})' if where else ''} reaches {count(n, 'glitch-sensitive pin')}"
             f": {said}; every pin reads this net, so the witness below glitches each of them",
             "pins: " + ", ".join(shown) + (f" and {rest} more" if rest else "")]
    notes += list(lead.notes)
    lead_ev = lead.evidence if isinstance(lead.evidence, Mapping) else {}
    lead_folded = getattr(lead.evidence, "folded", None)
    also = list(lead_ev.get("also") or [])
    listed = [dict(also_entry(d), pin=p, role=r) for p, r, d, _, _ in pins[1:MAX_PINS_LISTED + 1]]
    left_out = (lead_ev.get("also_left_out") or 0) + max(0, n - 1 - MAX_PINS_LISTED)
    rules = sorted({m.rule for p in pins for m in p[3]})
    folded = Folded(
        problem=key, rules=rules, also=also + listed or None, also_left_out=left_out or None,
        other_stems=lead_ev.get("other_stems"), other_stem_count=lead_ev.get("other_stem_count"),
        time_unit=lead_folded.time_unit if lead_folded is not None else None,
        net=net, pin_count=n, pin_roles=dict(sorted(roles.items())),
        pin_members=[[f"hazard:{p[0]}", [_member(m) for m in p[3]]] for p in pins])
    related = [Related(ploc, f"{_role_word(r)} {p}" + (f" ({inst})" if inst else ""))
               for p, r, _, _, (ploc, inst) in pins[:MAX_RELATED_PINS] if ploc.path]
    loc, inst = place
    if n > MAX_RELATED_PINS and loc.path:
        related.append(Related(loc, f"and {count(n - MAX_RELATED_PINS, 'more pin')} of net "
                                    f"{net} (evidence: pin_count)"))
    return replace(lead, location=loc if loc.path else lead.location,
                   instance=inst or lead.instance, message=message,
                   severity=max(p[2].severity for p in pins), notes=tuple(notes),
                   related=tuple(lead.related) + tuple(related),
                   evidence=with_folded(lead.evidence, folded))


def _role_word(role: str) -> str:
    return ROLE_WORDS.get(role, (role or "pin",))[0]


def also_entry(d: Diagnostic) -> dict:
    """A folded member as the evidence lists it (``also``): rule, kind and place."""
    return {"rule": d.rule, "kind": d.kind, "path": d.location.path, "line": d.location.line,
            "column": d.location.column, "instance": d.instance}
