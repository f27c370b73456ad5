"""What the default scope leaves out.

By default only reconvergence that reaches a glitch-sensitive sink is listed: a pulse into a
plain output or a register's data pin is harmless when timing is met (common practice: a
synchronous receiver samples after the logic has settled). The summary line still says how
many such places there are, so that nothing disappears without a word; this module counts them.

A sink has reconvergent fanout in its fan-in cone when some net is read along two different
ways that both reach the sink: two pins of one gate, or two distinct readers that both reach
it. One pass in reverse topological order gives, per node, the set of plain sinks it reaches (a
bit mask); one pass over the fanout stems then marks, per stem, the sinks reached by two or more
of its reads (``twice |= once & m; once |= m``). Linear in the graph, with masks as wide as the
number of plain sinks; no path is enumerated.
"""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Unlisted:
    """Plain sinks with reconvergent fanout in their cone that the default scope does not list."""

    outputs: int = 0          # primary output bits not declared asynchronous
    data_pins: int = 0        # register and latch data pins

    def __bool__(self) -> bool:
        return bool(self.outputs or self.data_pins)

    def to_json(self) -> dict:
        return {"outputs": self.outputs, "data_pins": self.data_pins}


def unlisted(context) -> Unlisted:
    """Count the plain sinks (outputs not declared asynchronous, data pins) that reconvergent
    fanout reaches (see the module docstring)."""
    g = context.graph
    sensitive = context.sensitive_sinks
    tg = context.timing_graph
    plain = [n for n, d in g.nodes(data=True)
             if d["kind"] == "sink" and d.get("role") in ("output", "data")
             and n not in sensitive and n in tg.index]
    if not plain:
        return Unlisted()
    plain.sort(key=lambda n: tg.index[n])
    reach = tg.reach_bits(plain)
    found = 0
    index = tg.index
    for stem in context.stems:
        i = index.get(stem)
        if i is None or not reach[i]:
            continue
        once = twice = 0
        for _, w, e in g.out_edges(stem, data=True):
            j = index.get(w)
            if j is None:
                continue
            m = reach[j]
            if len(e.get("pins") or (0,)) >= 2:
                twice |= m
            twice |= once & m
            once |= m
        found |= twice
    outputs = data = 0
    for k, n in enumerate(plain):
        if found >> k & 1:
            if g.nodes[n].get("role") == "output":
                outputs += 1
            else:
                data += 1
    return Unlisted(outputs, data)


def summary_text(u: Unlisted | dict | None) -> str:
    """"; not listed: reconvergent fanout into 2 plain outputs (--scope outputs) and 3 register
    data pins (--scope all)", or "" when there are none."""
    if not u:
        return ""
    if isinstance(u, dict):
        u = Unlisted(int(u.get("outputs", 0)), int(u.get("data_pins", 0)))
    parts = []
    if u.outputs:
        parts.append(f"{u.outputs} plain output{'' if u.outputs == 1 else 's'} "
                     "(--scope outputs)")
    if u.data_pins:
        parts.append(f"{u.data_pins} register data pin{'' if u.data_pins == 1 else 's'} "
                     "(--scope all)")
    return "; not listed: reconvergent fanout into " + " and ".join(parts)
