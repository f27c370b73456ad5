"""The gate graph as integer-indexed arrays in topological order, for the arrival-time solvers.

:class:`TimingGraph` is what :mod:`hazlint.analysis.timing`'s solvers and the compiled kernel
(:mod:`hazlint.analysis.compiled`) read: compressed sparse rows over a topological order, the
edges inside combinational loops cut (loops are the loop rule's business).
"""
from __future__ import annotations

from array import array
from functools import cached_property

import networkx as nx

from ..delays.model import GRAPH_DELAYS, DelayModel


class TimingGraph:
    """The gate graph as integer-indexed arrays in topological order (acyclic part only).

    Held as compressed sparse rows in :mod:`array` arrays (about 30 bytes per pin, no Python
    object per node or edge): ``fi_ptr``/``fi_src``/``fi_pin``/``fi_dmin``/``fi_dmax`` (fan-in
    per input pin: driver, pin index, min/max delay with the wire delay), ``fo_ptr``/``fo_dst``
    (distinct successors, ascending) and ``pr_ptr``/``pr_src`` (distinct predecessors,
    ascending); the compiled kernel reads them without a copy. The list views
    ``fanin``, ``fanout``, ``reads`` and ``preds`` of the pure Python solver are built on first
    use only.
    """

    def __init__(self, order, index, fi_ptr, fi_src, fi_pin, fi_dmin, fi_dmax, cut_edges):
        self.order: list[str] = order               # node ids; index = topological position
        self.index: dict[str, int] = index
        self.fi_ptr, self.fi_src, self.fi_pin = fi_ptr, fi_src, fi_pin
        self.fi_dmin, self.fi_dmax = fi_dmin, fi_dmax
        self.cut_edges: list[tuple[str, str]] = cut_edges   # edges dropped to break loops
        n = len(order)
        # distinct predecessors of each node, ascending; distinct successors from them
        pr_ptr, pr_src = array("q", [0]), array("q")
        outdeg = [0] * n
        for v in range(n):
            a, b = fi_ptr[v], fi_ptr[v + 1]
            if b - a == 1:
                u = fi_src[a]
                pr_src.append(u)
                outdeg[u] += 1
            elif b > a:
                for u in sorted(set(fi_src[a:b])):
                    pr_src.append(u)
                    outdeg[u] += 1
            pr_ptr.append(len(pr_src))
        fo_ptr = array("q", [0]) * (n + 1)
        acc = 0
        for u in range(n):
            fo_ptr[u] = acc
            acc += outdeg[u]
        fo_ptr[n] = acc
        fill = array("q", fo_ptr[:n]) if n else array("q")
        fo_dst = array("q", [0]) * acc
        for v in range(n):
            for e in range(pr_ptr[v], pr_ptr[v + 1]):
                u = pr_src[e]
                fo_dst[fill[u]] = v
                fill[u] += 1
        self.pr_ptr, self.pr_src, self.fo_ptr, self.fo_dst = pr_ptr, pr_src, fo_ptr, fo_dst

    @classmethod
    def build(cls, g: nx.DiGraph, order: list[str] | None = None,
              delays: DelayModel = GRAPH_DELAYS) -> "TimingGraph":
        """``order``: ``nx.topological_sort(g)`` when the caller has it already (a DAG);
        ``delays``: the delay model the pin and wire delays come from."""
        cut: list[tuple[str, str]] = []
        if order is None:
            try:
                order = list(nx.topological_sort(g))
            except nx.NetworkXUnfeasible:
                # loops are the loop rule's business; timing ignores the edges inside them
                comp = {}
                for k, scc in enumerate(nx.strongly_connected_components(g)):
                    for n in scc:
                        comp[n] = k
                cut = sorted((u, v) for u, v in g.edges if comp[u] == comp[v])
                work = g.copy()
                work.remove_edges_from(cut)
                order = list(nx.topological_sort(work))
        index = {n: i for i, n in enumerate(order)}
        nodes = g.nodes
        adj = g.adj
        fi_ptr, fi_src, fi_pin = array("q", [0]), array("q"), array("q")
        fi_dmin, fi_dmax = array("d"), array("d")
        cutset = set(cut)
        for v in order:
            d = nodes[v]
            ins = d.get("inputs")
            kind = d["kind"]
            if ins and kind in ("gate", "sink"):
                for pin, u in enumerate(ins):
                    ui = index.get(u)
                    if ui is None or (cutset and (u, v) in cutset):
                        continue
                    w = delays.wire(adj[u][v])
                    wmin = w.min if w is not None else 0.0
                    wmax = w.max if w is not None else 0.0
                    if kind == "gate":
                        dl = delays.pin(d, pin)
                        dmin = dl.min + wmin
                        dmax = dl.max + wmax
                    else:
                        dmin, dmax = wmin, wmax
                    fi_src.append(ui)
                    fi_pin.append(pin)
                    fi_dmin.append(dmin)
                    fi_dmax.append(dmax)
            fi_ptr.append(len(fi_src))
        return cls(order, index, fi_ptr, fi_src, fi_pin, fi_dmin, fi_dmax, cut)

    # ---- list views for the pure Python solver (built on first use) ----------------------------
    @cached_property
    def fanin(self) -> list[list[tuple[int, int, float, float]]]:
        """Per node: (pred index, pin index, min delay, max delay) per input pin."""
        # one conversion to lists, then list slices (slicing the arrays per node costs more)
        p = self.fi_ptr.tolist()
        rows = list(zip(self.fi_src.tolist(), self.fi_pin.tolist(), self.fi_dmin.tolist(),
                        self.fi_dmax.tolist()))
        return [rows[p[v]:p[v + 1]] for v in range(len(self.order))]

    @cached_property
    def fanout(self) -> list[list[int]]:
        """Distinct successor indices, ascending."""
        p, d = self.fo_ptr.tolist(), self.fo_dst.tolist()
        return [d[p[v]:p[v + 1]] for v in range(len(self.order))]

    @cached_property
    def preds(self) -> list[list[int]]:
        """Distinct predecessor indices, ascending."""
        p, s = self.pr_ptr.tolist(), self.pr_src.tolist()
        return [s[p[v]:p[v + 1]] for v in range(len(self.order))]

    def reach_bits(self, sinks) -> list[int]:
        """For every node (by index), the set of ``sinks`` (node names, each in the graph) it
        reaches, as a bit set: bit k stands for ``sinks[k]``. One pass of dynamic programming
        in reverse topological order (a node reaches what its successors reach), no path
        enumeration.

        >>> from hazlint.analysis.circuits import build_graph
        >>> g = build_graph(["a", "b"], [("y", "and", ["a", "b"], 1), ("z", "not", ["b"], 1)],
        ...                 ["y", "z"])
        >>> tg = TimingGraph.build(g)
        >>> bits = tg.reach_bits(["<sink>y", "<sink>z"])
        >>> [bits[tg.index[n]] for n in ("a", "b", "y", "z")]
        [1, 3, 1, 2]
        """
        reach = [0] * len(self.order)
        for k, n in enumerate(sinks):
            reach[self.index[n]] |= 1 << k
        fanout = self.fanout
        for i in range(len(self.order) - 1, -1, -1):
            m = reach[i]
            for w in fanout[i]:
                m |= reach[w]
            reach[i] = m
        return reach

    @cached_property
    def reads(self) -> list[list[tuple[int, int]]]:
        """(successor index, pin index) per read of each node's net."""
        out: list[list[tuple[int, int]]] = [[] for _ in self.order]
        p, s, pin = self.fi_ptr, self.fi_src, self.fi_pin
        for v in range(len(self.order)):
            for e in range(p[v], p[v + 1]):
                out[s[e]].append((v, pin[e]))
        return out
