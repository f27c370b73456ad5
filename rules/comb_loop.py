"""Combinational loops.

What it finds
    Feedback paths that do not pass through a register: strongly connected components of the gate
    graph (registers cut the graph, so every component with more than one gate, or a gate feeding
    itself, is a real loop). Each component is reported once, at its gate that comes first in
    source order, with a shortest cycle through that gate as evidence, hop by hop across module
    boundaries. Two special cases are told apart:

    * two cross-coupled NAND (or NOR) gates, the classic set/reset storage element, are reported
      at a lower severity (option ``storage_pair_severity``);
    * a loop closed through a transparent latch (the latch's output reaches its own data input
      through logic) is reported as its own case (option ``latch_loops``), since it only
      oscillates or races while the latch is open.

Why it matters
    A combinational loop has no defined settling time: it can hold state by accident, oscillate,
    or resolve differently in silicon than in simulation. Timing analysis cannot see through it,
    so every path through the loop is unconstrained.

Example
    ::

        module careless(input a, input b, output y);
          wire n1, n2;
          nand g1 (n1, a, n2);     // reported here: first gate of the loop in source order
          and  g2 (n2, n1, b);
          assign y = n2;
        endmodule

How to fix
    Break the feedback with a register clocked by the design clock, or remove the path that was
    added by mistake. If storage is intended, use a library latch or flip-flop cell so the tools
    know about it, or accept the storage pair with a waiver that says why.
"""
from __future__ import annotations

from collections import deque


from hazlint.diagnostics import Diagnostic, Severity
from hazlint.plugins import Option

from ._common import name_list, severity, stable_key

ID = "comb-loop"
SUMMARY = "feedback through combinational logic (a loop not broken by a register)"
KINDS = ("combinational-loop",)
SEVERITY = "error"
_LEVELS = ("error", "warning", "info")
OPTIONS = (
    Option("storage_pair_severity", str, "info",
           "severity for two cross-coupled NAND or NOR gates (a set/reset storage element)",
           _LEVELS),
    Option("latch_loops", bool, True,
           "also report loops closed through a single transparent latch"),
    Option("latch_loop_severity", str, "warning", "severity for loops through a latch", _LEVELS),
)


def nontrivial_sccs(g: "nx.DiGraph") -> list[set[str]]:
    """Strongly connected components that contain a cycle (Tarjan's algorithm via networkx)."""
    import networkx as nx      # here, not at the top: a cached report loads no networkx
    out = []
    for comp in nx.strongly_connected_components(g):
        if len(comp) > 1:
            out.append(comp)
        else:
            (n,) = comp
            if g.has_edge(n, n):
                out.append(comp)
    return out


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


def _storage_pair(g: "nx.DiGraph", comp: set[str]) -> str | None:
    """'nand' or 'nor' when ``comp`` is two cross-coupled NAND/NOR gates, else None."""
    if len(comp) != 2:
        return None
    a, b = sorted(comp)
    da, db = g.nodes[a], g.nodes[b]
    op = da.get("op")
    if op not in ("nand", "nor") or db.get("op") != op:
        return None
    for x, y, dx in ((a, b, da), (b, a, db)):
        ins = dx.get("inputs") or []
        if len(ins) < 2 or ins.count(y) != 1 or x in ins:
            return None
    return op


def _cycle_evidence(ctx, cycle: list[str]):
    hops = tuple(ctx.hop(n) for n in cycle) + (ctx.hop(cycle[0]),)
    notes = [f"loop of {len(cycle)} gate{'s' if len(cycle) != 1 else ''}:"]
    for i, h in enumerate(hops[:-1], 1):
        notes.append(f"  {i}. {ctx.hop_text(h)}")
    notes.append(f"  back to {hops[0].net}")
    return hops, notes


def check(design, context):
    g = design.graph
    opts = context.options(ID)
    reported_nodes: set[str] = set()
    comps = nontrivial_sccs(g)
    rank = context.source_rank if comps or design.latch_paths else {}
    for comp in sorted(comps, key=lambda c: min(rank[n] for n in c)):
        start = min(comp, key=lambda n: rank[n])
        cycle = shortest_cycle(g, start, comp)
        reported_nodes |= comp
        hops, notes = _cycle_evidence(context, cycle)
        pair = _storage_pair(g, comp)
        names = [context.net_name(n) for n in cycle]
        sev = Severity.parse(SEVERITY)
        if pair:
            sev = severity(opts["storage_pair_severity"])
            msg = (f"cross-coupled {pair.upper()} pair forms a set/reset storage element "
                   f"({names[0]} <-> {names[1]})")
            fix = ("use a library latch or flip-flop cell for storage, or waive this pair with "
                   "the reason it is intended")
        else:
            loop_txt = " -> ".join(names[:8] + (["..."] if len(names) > 8 else []) + [names[0]])
            extra = f"; the loop's component has {len(comp)} gates" if len(comp) > len(cycle) else ""
            msg = f"combinational loop through {len(cycle)} gate(s): {loop_txt}{extra}"
            fix = ("break the feedback with a register, or remove the path that closes the loop")
        yield Diagnostic(
            rule=ID, kind="combinational-loop", severity=sev, location=context.location(start),
            instance=g.nodes[start].get("instance", "") or "", message=msg,
            evidence={"cycle": list(cycle), "scc": sorted(comp),
                      "storage_element": pair or None, "through_latch": [],
                      "key": stable_key("loop", *sorted(comp))},
            notes=tuple(notes), flows=(hops,), fix=fix)
    if opts["latch_loops"]:
        yield from _latch_loops(design, context, opts, reported_nodes)


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
    for comp in sorted(nontrivial_sccs(h), key=lambda c: min(rank.get(n, 0) for n in c)):
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
            evidence={"cycle": list(cycle), "scc": sorted(comp), "storage_element": None,
                      "through_latch": sorted({e[1] for e in edges}),
                      "key": stable_key("latch-loop", *sorted(comp))},
            notes=tuple(notes), flows=(hops,),
            fix=("make sure the latch can never be transparent while its output changes its "
                 "input (use a flip-flop, or a second latch on the opposite phase)"))
