"""Orders of fan-in cones that do not depend on the string hash seed.

A sub-graph view of a *set* of nodes iterates that set, that is in the hash order of the node
names, which changes from one Python process to the next (``PYTHONHASHSEED``); a topological
sort or a copy of such a view then differs between runs, and so do the ties of everything
built on it (event order in the timed simulator, the order random delays are drawn in). These
helpers only follow the graph's own adjacency order and the order of the roots given.
"""
from __future__ import annotations

from typing import Callable, Iterable

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
    sub = nx.DiGraph()
    sub.graph.update(graph.graph)
    keep = [n for n in graph if n in nodes] if len(nodes) * 8 > len(graph) else \
        fanin_postorder(graph, sorted(nodes), within=nodes)
    sub.add_nodes_from((n, graph.nodes[n].copy()) for n in keep)
    succ = graph.succ
    sub.add_edges_from((u, v, d.copy()) for u in keep for v, d in succ[u].items() if v in nodes)
    return sub
