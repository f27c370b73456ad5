"""The capped pin-wise path count that the prover's structural step uses
(hazlint.netlist.walks.path_counts), against networkx' enumeration of simple paths in a
multigraph with one edge per input pin (brute force on small random DAGs)."""
from __future__ import annotations

import random

import networkx as nx

from hazlint.netlist.walks import path_counts


def _random_dag(rng: random.Random, n: int):
    """Node i reads 1-3 pins from lower-numbered nodes (a pin may repeat a net)."""
    g = nx.DiGraph()
    m = nx.MultiDiGraph()
    for i in range(n):
        name = f"n{i}"
        ins = [f"n{rng.randrange(i)}" for _ in range(rng.randint(1, 3))] if i >= 2 else []
        g.add_node(name, inputs=ins)
        m.add_node(name)
        for src in ins:
            g.add_edge(src, name)
            m.add_edge(src, name)
    return g, m


def test_path_counts_match_enumerated_paths():
    rng = random.Random(7)
    for _ in range(40):
        g, m = _random_dag(rng, rng.randint(3, 11))
        order = list(nx.topological_sort(g))
        pos = {n: i for i, n in enumerate(order)}
        for source in order:
            for cap in (1, 2, 5):
                want = {}
                for t in order:
                    k = 1 if t == source else len(list(nx.all_simple_edge_paths(m, source, t)))
                    if k:
                        want[t] = min(k, cap) if t != source else 1
                assert path_counts(g, order, source, cap) == want
                assert path_counts(g, order, source, cap, pos=pos) == want
