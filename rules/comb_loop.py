"""Combinational loops, judged by what they do.

What it finds
    Feedback paths that do not pass through a register: strongly connected components of the gate
    graph (registers cut the graph, so every component with more than one gate, or a gate feeding
    itself, is a real loop). Each component is reported once, at its gate that comes first in
    source order, with a shortest cycle through that gate as evidence, hop by hop across module
    boundaries, and with its behaviour, decided by ternary simulation whatever the spelling
    (primitives, ``assign`` expressions, muxes, library cells):

    * **oscillation** (kind ``oscillation``, an error): for some values of the loop's inputs no
      state is stable (an odd inverting ring), or an input change leaves the loop undetermined
      after Eichelberger's procedure B (it may oscillate or end in either state). The witness
      gives the inputs, and a timed simulation of the loop shows it;
    * **storage**: two stable states for some inputs. Set/reset latches (cross-coupled NAND or
      NOR in any spelling), C-elements, mutexes and latches built from gates are named and
      reported at option ``element_severity`` (default info), other storage loops at
      ``storage_severity`` (default warning), with advice for asynchronous design: the loop's
      hold condition (input changes that must not happen together, found by the same
      procedures) and the hazard-freedom of the logic driving it;
    * **settles**: one stable state for every input, reached from every change: the loop is
      logically redundant (also ``storage_severity``);
    * past the limits (``max_inputs`` loop inputs) the behaviour is left undecided and the loop
      is an error;
    * a loop closed through a transparent latch (the latch's output reaches its own data input
      through logic) is reported as its own case (option ``latch_loops``), since it only
      oscillates or races while the latch is open.

Why it matters
    A combinational loop has no defined settling time: it can hold state by accident, oscillate,
    or resolve differently in silicon than in simulation. Timing analysis cannot see through it,
    so every path through the loop is unconstrained. In asynchronous design storage loops are
    intended, and what matters is that their inputs obey the hold condition and do not glitch.

Example
    ::

        module careless(input a, input b, output y);
          wire n1, n2;
          nand g1 (n1, a, n2);     // reported here: first gate of the loop in source order
          and  g2 (n2, n1, b);     // oscillates when a = b = 1
          assign y = n2;
        endmodule

How to fix
    Break the feedback with a register clocked by the design clock, or remove the path that was
    added by mistake. If storage is intended, use a library latch or flip-flop cell in
    synchronous logic; in asynchronous logic keep the element, check its hold condition and
    drive its inputs from hazard-free logic, and accept the finding with the reason
    (``// hazlint accept(combinational-loop): reason`` on the reported line).
"""
from __future__ import annotations

from collections import deque
from typing import TYPE_CHECKING

from hazlint.diagnostics import Diagnostic, Severity
from hazlint.findings.evidence import LoopEvidence
from hazlint.findings.requests import LoopBehaviour
from hazlint.findings.words import TimeUnit, count
from hazlint.netlist.walks import cyclic_components
from hazlint.plugins import Option

from ._common import name_list, severity, stable_key

if TYPE_CHECKING:         # annotations only: a cached report loads no networkx
    import networkx as nx

ID = "combinational-loop"
SUMMARY = "feedback through combinational logic (a loop not broken by a register)"
KINDS = ("combinational-loop", "oscillation")
SEVERITY = "error"
_LEVELS = ("error", "warning", "info")
OPTIONS = (
    Option("element_severity", str, "info",
           "severity of recognised asynchronous storage elements (set/reset latches, "
           "C-elements, mutexes, latches built from gates)", _LEVELS),
    Option("storage_severity", str, "warning",
           "severity of other loops that hold state, and of loops that settle; oscillating "
           "loops are errors", _LEVELS),
    Option("storage_pair_severity", str, "",
           "old name of element_severity (kept for existing configurations)", ("",) + _LEVELS,
           old_name_of="element_severity"),
    Option("max_inputs", int, 12,
           "loops with more input nets than this are not classified (reported as errors)"),
    Option("latch_loops", bool, True,
           "also report loops closed through a single transparent latch"),
    Option("latch_loop_severity", str, "warning", "severity for loops through a latch", _LEVELS),
)


def shortest_cycle(g: "nx.DiGraph", start: str, within: set[str]) -> list[str]:
    """A shortest cycle through ``start`` using only nodes of ``within`` (breadth-first)."""
    if g.has_edge(start, start):
        return [start]
    parent = {start: None}
    q = deque([start])
    while q:
        u = q.popleft()
        for v in sorted(g.successors(u)):
            if v == start:
                path = [u]
                while parent[path[-1]] is not None:
                    path.append(parent[path[-1]])
                return list(reversed(path))
            if v in within and v not in parent:
                parent[v] = u
                q.append(v)
    raise AssertionError(f"{start} is on no cycle inside its component")


def shortest_path_within(g: "nx.DiGraph", src: str, dst: str, within: set[str]) -> list[str] | None:
    parent = {src: None}
    q = deque([src])
    while q:
        u = q.popleft()
        if u == dst:
            path = [u]
            while parent[path[-1]] is not None:
                path.append(parent[path[-1]])
            return list(reversed(path))
        for v in sorted(g.successors(u)):
            if v in within and v not in parent:
                parent[v] = u
                q.append(v)
    return None


def _cycle_evidence(ctx, cycle: list[str]):
    hops = tuple(ctx.hop(n) for n in cycle) + (ctx.hop(cycle[0]),)
    notes = [f"loop of {len(cycle)} gate{'s' if len(cycle) != 1 else ''}:"]
    for i, h in enumerate(hops[:-1], 1):
        notes.append(f"  {i}. {ctx.hop_text(h)}")
    notes.append(f"  back to {hops[0].net}")
    return hops, notes


def check(design, context):
    from hazlint.analysis.loops import classify_loop   # here: a cached report loads no networkx
    g = design.graph
    opts = context.options(ID)
    reported_nodes: set[str] = set()
    comps = cyclic_components(g)
    rank = context.source_rank if comps or design.latch_paths else {}
    for comp in sorted(comps, key=lambda c: min(rank[n] for n in c)):
        start = min(comp, key=lambda n: rank[n])
        cycle = shortest_cycle(g, start, comp)
        reported_nodes |= comp
        hops, notes = _cycle_evidence(context, cycle)
        names = [context.net_name(n) for n in cycle]
        loop_txt = " -> ".join(names[:8] + (["..."] if len(names) > 8 else []) + [names[0]])
        extra = f"; the loop's component has {len(comp)} gates" if len(comp) > len(cycle) else ""
        c = classify_loop(g, comp, max_inputs=opts["max_inputs"])
        kind, sev, msg, fix, more = _verdict(context, c, comp, cycle, loop_txt, opts)
        yield Diagnostic(
            rule=ID, kind=kind, severity=sev, location=context.location(start),
            instance=g.nodes[start].get("instance", "") or "", message=msg + extra,
            evidence=LoopEvidence(cycle=list(cycle), scc=sorted(comp),
                                  storage_element=c.element, behaviour=c.behaviour,
                                  loop=c.to_json(context.net_name), through_latch=[],
                                  key=stable_key("loop", *sorted(comp))),
            notes=tuple(notes + more), flows=(hops,), fix=fix)
    if opts["latch_loops"]:
        yield from _latch_loops(design, context, opts, reported_nodes)


def _vector(context, v) -> str:
    return ", ".join(f"{context.net_name(n)}={x}" for n, x in sorted(
        v.items(), key=lambda x: context.net_name(x[0]))) or "any input"


def _change(context, w) -> str:
    moved = [n for n in w["to"] if w["from"].get(n) != w["to"][n]]
    held = {n: x for n, x in w["from"].items() if n not in moved}
    text = " and ".join(f"{context.net_name(n)} {'rises' if w['to'][n] else 'falls'}"
                        for n in sorted(moved, key=context.net_name))
    return text + (f" with {_vector(context, held)}" if held else "")


def _verdict(context, c, comp, cycle, loop_txt, opts):
    """(kind, severity, message, fix, extra notes) for a classified loop."""
    from hazlint.analysis.loops import ELEMENT_WORDS
    n = len(cycle)
    gates = f"{n} gate{'s' if n != 1 else ''}"
    more = [f"behaviour: {c.behaviour} ({c.reason})"]
    if c.inputs:
        more.append("loop inputs: " + name_list(sorted(context.net_name(x) for x in c.inputs),
                                                8))
    if c.behaviour == "oscillation":
        w = c.witness or {}
        if "inputs" in w:
            when = f"when {_vector(context, w['inputs'])}" if w["inputs"] else "for any input"
            msg = f"loop oscillates {when}: no state is stable ({gates}: {loop_txt})"
        else:
            msg = (f"loop may oscillate when {_change(context, w)}: ternary simulation leaves it "
                   f"undetermined ({gates}: {loop_txt})")
        more += _waveform(context, comp, c)
        return ("oscillation", Severity.ERROR, msg,
                "break the feedback with a register, or make the loop's inversion count even so "
                "it can hold a value", more)
    if c.behaviour == "inconclusive":
        return ("combinational-loop", Severity.parse(SEVERITY),
                f"combinational loop through {gates}: {loop_txt} (behaviour not decided: "
                f"{c.reason})",
                "break the feedback with a register, or remove the path that closes the loop",
                more)
    level = opts["storage_severity"]
    if c.element:
        level = opts["element_severity"]
    sev = severity(level)
    if c.behaviour == "settles":
        return ("combinational-loop", sev,
                f"combinational loop through {gates} settles to one state for every input: "
                f"{loop_txt}",
                "remove the path that closes the loop (it is logically redundant) or break it "
                "with a register: timing analysis cannot see through it", more)
    if c.hold:
        more.append("holds state when " + "; ".join(_vector(context, h) for h in c.hold[:3])
                    + (f" (and {len(c.hold) - 3} more)" if len(c.hold) > 3 else ""))
    race = ""
    if c.race and c.element != "mutex":       # both requests at once is a mutex's job
        race = (f"its state is undetermined when {_change(context, c.race)} together, so "
                "those inputs must not change at the same time")
        more.append(f"hold condition: {race}")
    ins = name_list(sorted(context.net_name(x) for x in c.inputs), 6)
    if c.element:
        what = ELEMENT_WORDS[c.element]
        msg = f"{what} built from {gates} (storage loop): {loop_txt}"
        fix = (f"asynchronous storage: check its hold condition{' (' + race + ')' if race else ''}"
               f" and that the logic driving {ins} is hazard-free, since a glitch there changes "
               "the stored state; in synchronous logic use a library latch or flip-flop")
        if c.element == "mutex":
            fix = ("mutual exclusion: both requests together is its normal contention case (it "
                   "may take time to decide; keep the grant filter); check that a request is "
                   f"released only after its grant and that the logic driving {ins} is "
                   "hazard-free")
        return "combinational-loop", sev, msg, fix, more
    msg = f"storage loop through {gates}: {loop_txt}"
    fix = ("if the storage is intended, check its hold condition"
           f"{' (' + race + ')' if race else ''} and that the logic driving {ins} is "
           "hazard-free, or use a library latch; if not, break the feedback with a register or "
           "remove the path that closes the loop")
    return "combinational-loop", sev, msg, fix, more


def _waveform(context, comp, c) -> list[str]:
    """A timed simulation of the oscillating loop (its input nets as sources)."""
    from hazlint.analysis.loops import oscillation_trace
    from hazlint.analysis.waves import timing_diagram
    try:
        tr = oscillation_trace(context.graph, comp, c)
    except Exception:  # noqa: BLE001 - the waveform is an illustration; the verdict stands
        return []
    moved = [n for n in c.inputs if len(tr.waves.get(n, ())) > 1]
    loop = [n for n in sorted(comp, key=lambda x: context.source_rank[x])
            if len(tr.waves.get(n, ())) > 1][:4]
    if not loop:
        return []
    nets = moved + loop
    unit = TimeUnit.of(context.graph)
    head = (f"timed simulation of the loop alone (its delays, inputs changed at "
            f"{unit.words(10)}): "
            + ("still changing when the simulation stopped" if tr.truncated else
               count(max(len(tr.waves[n]) - 1 for n in loop), "change")))
    return [head] + timing_diagram(tr, nets, {n: context.net_name(n) for n in nets},
                                   unit=unit)


def _latch_loops(design, context, opts, comb_nodes):
    """Loops closed through one transparent latch: the latch output reaches its data pin."""
    import networkx as nx
    g = design.graph
    rank = context.source_rank
    closing = []
    for data_sink, _enable_sink, state in design.latch_paths:
        if data_sink not in g or state not in g:
            continue
        if data_sink in nx.descendants(g, state):
            closing.append((data_sink, state))
    if not closing:
        return
    h = g.copy()
    h.add_edges_from(closing)
    closing_set = set(closing)
    for comp in sorted(cyclic_components(h), key=lambda c: min(rank.get(n, 0) for n in c)):
        edges = sorted((d, s) for d, s in closing_set if d in comp and s in comp)
        if not edges:
            continue
        # the latch first in source order, and a shortest path from its output to its data pin
        data_sink, state = min(edges, key=lambda e: rank[e[1]])
        path = shortest_path_within(g, state, data_sink, comp)
        if path is None:
            continue
        cycle = path                       # state ... data sink, then back through the latch
        hops = tuple(context.hop(n) for n in cycle) + (context.hop(state),)
        gates_on = [n for n in comp if g.nodes[n]["kind"] == "gate"]
        anchor = min(gates_on, key=lambda n: rank[n]) if gates_on else state
        latch = context.describe(data_sink).rsplit(".", 1)[0]
        reg = design.register_by_state.get(state)
        latch_name = reg.name if reg is not None else latch
        names = [context.describe(n) for n in cycle]
        notes = [f"loop through latch {latch_name} while it is transparent:"]
        notes += [f"  {i}. {context.hop_text(hp)}" for i, hp in enumerate(hops[:-1], 1)]
        notes.append(f"  through {latch_name} back to {hops[0].net}")
        yield Diagnostic(
            rule=ID, kind="combinational-loop", severity=severity(opts["latch_loop_severity"]),
            location=context.location(anchor),
            instance=g.nodes[anchor].get("instance", "") or "",
            message=(f"loop through transparent latch {latch_name}: its output reaches its own "
                     f"data input ({name_list(names, 5)})"),
            evidence=LoopEvidence(cycle=list(cycle), scc=sorted(comp), storage_element=None,
                                  through_latch=sorted({e[1] for e in edges}),
                                  key=stable_key("latch-loop", *sorted(comp))),
            notes=tuple(notes), flows=(hops,),
            fix=("make sure the latch can never be transparent while its output changes its "
                 "input (use a flip-flop, or a second latch on the opposite phase)"))


def prove(diagnostic, evidence):
    """The proof hook: whether the loop can oscillate. The rule classifies most loops itself
    (``loop`` in the evidence); an oscillation finding is its own verdict."""
    scc = evidence.get("scc")
    if not scc:
        return None
    return LoopBehaviour(scc=tuple(scc), cycle=tuple(evidence.get("cycle") or ()),
                         key=str(evidence.get("key", "")),
                         decided=bool(evidence.get("loop")) or diagnostic.kind == "oscillation")
