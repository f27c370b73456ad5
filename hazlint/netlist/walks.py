"""The graph walks every stage uses: fan-in cones (as sets and in a fixed post-order), fan-out
reach, fanout stems and combinational loops. Pure functions over a ``networkx.DiGraph`` of the
gate-graph schema (:mod:`hazlint.netlist.graph`); no other module walks the graph on its own.

Orders that do not depend on the string hash seed.

A sub-graph view of a *set* of nodes iterates that set, that is in the hash order of the node
names, which changes from one Python process to the next (``PYTHONHASHSEED``); a topological
sort or a copy of such a view then differs between runs, and so do the ties of everything
built on it (event order in the timed simulator, the order random delays are drawn in). These
helpers only follow the graph's own adjacency order and the order of the roots given.
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Callable, Iterable

if TYPE_CHECKING:
    import networkx as nx


def fanin_postorder(graph: nx.DiGraph, roots: Iterable[str], within: set | None = None,
                    on_cycle: Callable[[], Exception] | None = None) -> list[str]:
    """``roots`` and every node they depend on (only nodes of ``within`` when given), in
    depth-first post-order over the predecessors: each node after all of its predecessors
    when the cone is acyclic. With ``on_cycle``, a cycle raises ``on_cycle()``."""
    pred = graph.pred
    state: dict[str, bool] = {}          # False: on the stack, True: placed
    order: list[str] = []
    for root in roots:
        if root in state:
            continue
        state[root] = False
        stack = [(root, iter(pred[root]))]
        while stack:
            n, it = stack[-1]
            for p in it:
                if within is not None and p not in within:
                    continue
                seen = state.get(p)
                if seen is None:
                    state[p] = False
                    stack.append((p, iter(pred[p])))
                    break
                if seen is False and on_cycle is not None:
                    raise on_cycle()
            else:
                stack.pop()
                state[n] = True
                order.append(n)
    return order


def ordered_copy(graph: nx.DiGraph, nodes: set) -> nx.DiGraph:
    """The sub-graph of ``nodes`` (closed under predecessors) as a copy whose nodes and edges
    keep an order fixed by ``graph`` alone: ``graph``'s order for a large part of it, else the
    fan-in post-order from the sorted nodes."""
    import networkx as nx
    sub = nx.DiGraph()
    sub.graph.update(graph.graph)
    keep = [n for n in graph if n in nodes] if len(nodes) * 8 > len(graph) else \
        fanin_postorder(graph, sorted(nodes), within=nodes)
    sub.add_nodes_from((n, graph.nodes[n].copy()) for n in keep)
    # the edges into each kept node (``nodes`` is closed under predecessors, so these are all
    # the edges inside it): walking each node's fan-out instead would cost the whole fan-out
    # of a reset or clock net, read by every register of a chip, for every copy
    pred = graph.pred
    sub.add_edges_from((u, v, d.copy()) for v in keep for u, d in pred[v].items())
    return sub


def fanin(graph: nx.DiGraph, roots: Iterable[str], *, include_roots: bool = True,
          stop: Callable[[str], bool] | None = None) -> set[str]:
    """Every node ``roots`` depend on (the transitive fan-in), with the roots themselves unless
    ``include_roots`` is false; a node for which ``stop`` holds is taken but not walked past.

    >>> import networkx as nx
    >>> g = nx.DiGraph([("a", "g1"), ("b", "g1"), ("g1", "y"), ("c", "z")])
    >>> sorted(fanin(g, ["y"]))
    ['a', 'b', 'g1', 'y']
    >>> sorted(fanin(g, ["y"], include_roots=False, stop=lambda n: n == "g1"))
    ['g1']
    """
    pred = graph.pred
    roots = list(roots)
    seen = set(roots) if include_roots else set()
    stack = list(roots) if include_roots else []
    if not include_roots:
        for r in roots:
            for p in pred[r]:
                if p not in seen:
                    seen.add(p)
                    stack.append(p)
    while stack:
        u = stack.pop()
        if stop is not None and stop(u):
            continue
        for p in pred[u]:
            if p not in seen:
                seen.add(p)
                stack.append(p)
    return seen


def fanout(graph: nx.DiGraph, seeds: Iterable[str]) -> set[str]:
    """``seeds`` and every node reachable from them (the transitive fan-out).

    >>> import networkx as nx
    >>> sorted(fanout(nx.DiGraph([("a", "b"), ("b", "c"), ("d", "c")]), ["b"]))
    ['b', 'c']
    """
    succ = graph.succ
    seen = set(seeds)
    stack = list(seen)
    while stack:
        for v in succ[stack.pop()]:
            if v not in seen:
                seen.add(v)
                stack.append(v)
    return seen


def cyclic_components(graph: nx.DiGraph) -> list[set[str]]:
    """The strongly connected components that hold a cycle: two or more nodes, or one node
    with an edge to itself (Tarjan, R. E., "Depth-first search and linear graph algorithms",
    SIAM J. Comput. 1(2), 1972; networkx' implementation), in networkx' order.

    >>> import networkx as nx
    >>> comps = cyclic_components(nx.DiGraph([("a", "b"), ("b", "a"), ("c", "c"), ("c", "d")]))
    >>> sorted(sorted(c) for c in comps)
    [['a', 'b'], ['c']]
    """
    import networkx as nx
    out = []
    for comp in nx.strongly_connected_components(graph):
        if len(comp) > 1:
            out.append(comp)
        else:
            (n,) = comp
            if graph.has_edge(n, n):
                out.append(comp)
    return out


def behind_loops(graph: nx.DiGraph) -> set[str]:
    """Nodes a combinational loop can reach (the loops included): their fan-in cone is
    cyclic.

    >>> import networkx as nx
    >>> sorted(behind_loops(nx.DiGraph([("x", "a"), ("a", "b"), ("b", "a"), ("b", "y")])))
    ['a', 'b', 'y']
    """
    return fanout(graph, [n for comp in cyclic_components(graph) for n in comp])


def fanout_stems(graph: nx.DiGraph, skip: Iterable[str] = ()) -> list[str]:
    """Drivers whose net is read by two or more pins (stems of fanout branches), in the graph's
    node order; sink nodes and nodes of ``skip`` are not stems. An edge counts its ``pins``
    (one when it has none).

    >>> import networkx as nx
    >>> g = nx.DiGraph()
    >>> g.add_nodes_from([("a", {"kind": "input"}), ("g", {"kind": "gate"}),
    ...                   ("y", {"kind": "sink"})])
    >>> g.add_edge("a", "g", pins=[0, 1]); g.add_edge("g", "y")
    >>> fanout_stems(g)
    ['a']
    """
    skip = skip if isinstance(skip, (set, frozenset, dict)) else set(skip)
    out = []
    for n, d in graph.nodes(data=True):
        if d["kind"] == "sink" or n in skip:
            continue
        reads = 0
        for _, _, e in graph.out_edges(n, data=True):
            reads += len(e.get("pins") or (0,))
            if reads >= 2:
                out.append(n)
                break
    return out


def sources_in_pin_order(graph: "nx.DiGraph", roots: Iterable[str], sources) -> list[str]:
    """``sources`` in depth-first post-order of the fan-in from ``roots``, following each
    node's ``inputs`` in pin order (a common BDD variable-ordering heuristic: inputs that meet
    early in the logic get neighbouring levels); sources outside the cone last, in their order.

    >>> import networkx
    >>> g = networkx.DiGraph()
    >>> g.add_node("y", inputs=["g", "c"]); g.add_node("g", inputs=["b", "a"])
    >>> for n in "abc": g.add_node(n)
    >>> sources_in_pin_order(g, ["y"], ["a", "b", "c", "d"])
    ['b', 'a', 'c', 'd']
    """
    want = set(sources)
    seen: set = set()
    out: list[str] = []
    nodes = graph.nodes
    for t in roots:
        if t in seen:
            continue
        seen.add(t)
        stack = [(t, iter(nodes[t].get("inputs") or ()))]
        while stack:
            n, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                stack.pop()
                if n in want:
                    out.append(n)
                continue
            if nxt not in seen:
                seen.add(nxt)
                stack.append((nxt, iter(nodes[nxt].get("inputs") or ())))
    placed = set(out)
    return out + [n for n in sources if n not in placed]


def path_counts(graph: "nx.DiGraph", order, source: str, cap: int = 2,
                pos: dict | None = None) -> dict[str, int]:
    """Paths from ``source`` to every node it reaches, counted pin-wise (a gate reading the
    same net on two pins counts two) and capped at ``cap``: dynamic programming over the
    topological ``order``. With ``pos`` (each node's position in ``order``) only ``source``'s
    fan-out is sorted and walked instead of all of ``order`` scanned, so many sources with
    small fan-outs cost their size. Nodes no path reaches are absent.

    >>> import networkx
    >>> g = networkx.DiGraph([("a", "g"), ("g", "h"), ("a", "h")])
    >>> g.nodes["g"]["inputs"] = ["a", "a"]; g.nodes["h"]["inputs"] = ["g", "a"]
    >>> path_counts(g, ["a", "g", "h"], "a", cap=9)
    {'a': 1, 'g': 2, 'h': 3}
    """
    cnt = {source: 1}
    nodes = graph.nodes
    if pos is None:
        walk = order
    else:
        walk = sorted((n for n in fanout(graph, [source]) if n in pos), key=pos.__getitem__)
    for n in walk:
        if n == source:
            continue
        c = 0
        for i in nodes[n].get("inputs") or ():
            c += cnt.get(i, 0)
        if c:
            cnt[n] = min(c, cap)
    return cnt
