"""Fix hints for proven hazards, each specific: the nets, the term, the delay.

* Static-1 hazard in a sum-of-products region: the consensus term that covers the transition.
  By the consensus theorem ``x·a + x'·b = x·a + x'·b + a·b`` the term ``a·b`` is redundant for
  the function but holds the output at 1 while ``x`` changes with ``a = b = 1`` (common practice;
  Huffman 1957, any logic design text). Static-0 in a product-of-sums region: the dual clause
  ``(a + b)`` from ``(x + a)(x' + b)``.
* Otherwise: register the signal before the asynchronous sink, or balance the paths by the
  computed delay difference.

The consensus term is checked before it is offered: the hazard check runs again on a copy of the
graph with the term added, for the same transition (:func:`verify_consensus`).
"""
from __future__ import annotations

import os

from typing import Mapping, Sequence

import networkx as nx

from ..findings.words import TimeUnit, gate_words
from ..netlist.library import Delay
from ..netlist.walks import fanin, ordered_copy
from .ternary import IntAlgebra, bool_gate, classify_explicit, cone, propagate

MAX_CUBES = 64

Literal = tuple  # (net, polarity 1|0)


def sop(graph: nx.DiGraph, node: str, positive: bool = True, depth: int = 6
        ) -> list[frozenset] | None:
    """The function of ``node`` (or its complement) as a list of cubes over leaf nets, read
    through AND/OR/NAND/NOR/NOT/BUF gates up to ``depth`` levels; other nets are leaves. None when
    the expansion would exceed :data:`MAX_CUBES` cubes."""
    d = graph.nodes[node]
    op = d.get("op") if d["kind"] == "gate" else None
    if d["kind"] == "sink":
        return sop(graph, d["inputs"][0], positive, depth)
    if depth <= 0 or op not in ("and", "or", "nand", "nor", "not", "buf"):
        return [frozenset({(node, 1 if positive else 0)})]
    ins = d["inputs"]
    if op in ("not", "buf"):
        return sop(graph, ins[0], positive if op == "buf" else not positive, depth)
    inv = op in ("nand", "nor")
    base = "and" if op in ("and", "nand") else "or"
    pol = positive != inv
    # f = AND(ins): positive -> product of children's covers; complement -> OR of complements
    as_product = (base == "and") == pol
    parts = []
    for i in ins:
        c = sop(graph, i, pol, depth - 1)
        if c is None:
            return None
        parts.append(c)
    if not as_product:
        cubes = [c for p in parts for c in p]
    else:
        cubes = [frozenset()]
        for p in parts:
            cubes = [a | b for a in cubes for b in p if not _clash(a | b)]
            if len(cubes) > MAX_CUBES:
                return None
    # drop duplicates and cubes containing another
    # (ties in a fixed order, not a set's hash order: the first consensus found is reported)
    uniq = sorted(set(cubes), key=lambda c: (len(c), sorted(c)))
    out: list[frozenset] = []
    for c in uniq:
        if not any(o <= c for o in out):
            out.append(c)
    return out if len(out) <= MAX_CUBES else None


def _clash(cube) -> bool:
    nets = {}
    for n, p in cube:
        if nets.setdefault(n, p) != p:
            return True
    return False


def _cube_true(cube, values: Mapping[str, int]) -> bool:
    return all(values.get(n, 0) == p for n, p in cube)


def consensus_term(cover: Sequence[frozenset], before: Mapping[str, int],
                   after: Mapping[str, int]) -> frozenset | None:
    """A consensus cube of two cubes of ``cover`` that covers the transition: one cube true
    before, another true after, opposite in exactly the changing leaf; their consensus is true
    both before and after (it holds the output). ``before``/``after`` give leaf net values."""
    if any(_cube_true(c, before) and _cube_true(c, after) for c in cover):
        return None        # already held by one cube: the hazard is not in this cover
    for c1 in cover:
        if not _cube_true(c1, before):
            continue
        for c2 in cover:
            if c2 is c1 or not _cube_true(c2, after):
                continue
            opp = [(n, p) for n, p in c1 if (n, 1 - p) in c2]
            if len(opp) != 1:
                continue
            n = opp[0][0]
            term = frozenset(l for l in c1 | c2 if l[0] != n)
            if not _clash(term) and _cube_true(term, before) and _cube_true(term, after):
                return term
    return None


def term_text(term: frozenset, graph: nx.DiGraph, sep: str = " & ", neg: str = "~") -> str:
    def nm(n):
        return graph.nodes[n].get("port") or graph.nodes[n].get("name") or n
    return sep.join(f"{'' if p else neg}{nm(n)}" for n, p in sorted(term, key=lambda l: nm(l[0])))


def add_term(graph: nx.DiGraph, node: str, term: frozenset, kind: str,
             roots: Sequence[str] | None = None) -> nx.DiGraph:
    """A copy of ``graph`` where every reader of ``node`` reads ``node | term`` (static-1) or
    ``node & ~term`` (static-0, the dual clause) instead. With ``roots``, only the fan-in
    cone of ``roots`` and of the term's literals is copied (what a check at ``roots`` reads;
    a copy of a whole chip for each fix would cost the chip's size)."""
    if roots is None:
        h = graph.copy()
    else:
        h = ordered_copy(graph, fanin(graph, [*roots, *(n for n, _ in sorted(term))]))
    lits = []
    for k, (n, p) in enumerate(sorted(term)):
        if p:
            lits.append(n)
        else:
            inv = f"{node}.fix_not{k}"
            h.add_node(inv, kind="gate", op="not", inputs=[n], pins=["A"],
                       delays=[Delay.unit()], name=inv, instance=inv)
            h.add_edge(n, inv, pins=[0])
            lits.append(inv)
    t = f"{node}.fix_term"
    h.add_node(t, kind="gate", op="and", inputs=lits, pins=[str(i) for i in range(len(lits))],
               delays=[Delay.unit()] * len(lits), name=t, instance=t)
    for i, n in enumerate(lits):
        if h.has_edge(n, t):
            h.edges[n, t]["pins"].append(i)
        else:
            h.add_edge(n, t, pins=[i])
    out = f"{node}.fix_out"
    readers = [r for r in graph.successors(node) if r in h]
    zero = [Delay.fixed(0.0)] * 2
    if kind == "static-1-hazard":
        h.add_node(out, kind="gate", op="or", inputs=[node, t], pins=["A", "B"], delays=zero,
                   name=out, instance=out)
        h.add_edge(node, out, pins=[0])
        h.add_edge(t, out, pins=[1])
    else:
        # f & ~term == nor(term, ~f)
        inv = f"{node}.fix_inv"
        h.add_node(inv, kind="gate", op="not", inputs=[node], pins=["A"],
                   delays=[Delay.fixed(0.0)], name=inv, instance=inv)
        h.add_edge(node, inv, pins=[0])
        h.add_node(out, kind="gate", op="nor", inputs=[t, inv], pins=["A", "B"], delays=zero,
                   name=out, instance=out)
        h.add_edge(t, out, pins=[0])
        h.add_edge(inv, out, pins=[1])
    for r in readers:
        d = dict(h.nodes[r])
        d["inputs"] = [out if i == node else i for i in d["inputs"]]
        h.nodes[r].update(d)
        h.remove_edge(node, r)
        h.add_edge(out, r, pins=[p for p, i in enumerate(d["inputs"]) if i == out])
    return h


def leaf_values(graph: nx.DiGraph, target: str, values: Mapping[str, int]) -> dict[str, int]:
    order = cone(graph, [target])
    A = IntAlgebra(1)
    vals = {n: values.get(n, 0) & 1 for n in order
            if graph.nodes[n]["kind"] in ("input", "state", "blackbox")}
    return propagate(graph, order, vals, A, bool_gate)


def consensus_fix(graph: nx.DiGraph, target: str, kind: str, before: Mapping[str, int],
                  after: Mapping[str, int], candidates: Sequence[str],
                  memo: dict | None = None) -> dict | None:
    """Find and verify a consensus term at one of ``candidates`` (gate nodes, nearest the
    hazard first). Returns ``{"node", "term", "text", "verified"}`` or None. ``memo`` keeps,
    per change, the settled values and the outcome at each gate tried (many findings of one
    run ask about the same change at the same gates)."""
    if kind not in ("static-1-hazard", "static-0-hazard"):
        return None
    change = (target, kind, tuple(sorted(before.items())), tuple(sorted(after.items())))
    if memo is not None and change in memo:
        va, vb, tried = memo[change]
    else:
        va = leaf_values(graph, target, before)
        vb = leaf_values(graph, target, after)
        tried = {}
        if memo is not None:
            memo[change] = (va, vb, tried)
    for node in candidates:
        if node not in graph or graph.nodes[node]["kind"] != "gate":
            continue
        if node not in tried:
            tried[node] = _consensus_at(graph, target, kind, before, after, va, vb, node)
        if tried[node] is not None:
            return tried[node]
    return None


def _consensus_at(graph, target, kind, before, after, va, vb, node) -> dict | None:
    """A verified consensus term at gate ``node`` for this change, or None."""
    for positive in (True, False):
        # the cover whose value is 1 across the transition: f for static-1 at this node
        if bool(va.get(node, 0)) != positive or bool(vb.get(node, 0)) != positive:
            continue
        cover = sop(graph, node, positive)
        if not cover:
            continue
        term = consensus_term(cover, va, vb)
        if term is None:
            continue
        node_kind = "static-1-hazard" if positive else "static-0-hazard"
        fixed = add_term(graph, node, term, node_kind, roots=[target])
        verified = classify_explicit(fixed, target, before, after) != kind
        if not verified:
            continue
        text = term_text(term, graph)
        gate = _gate_name(graph, node)
        cell = graph.nodes[node].get("cell") or graph.nodes[node].get("op")
        where = _where(graph, node).replace(" (", ", ").rstrip(")")
        what = gate_words(cell or "", gate) + (f" ({where.lstrip(', ')})" if where else "")
        if positive:
            desc = (f"add the consensus term {text} to the sum of products of {what}: OR a "
                    f"gate for the term into its output (it holds the output at 1 during the "
                    f"change)")
        else:
            clause = _clause_text(term, graph)
            desc = (f"add the consensus clause ({clause}) to the product of sums of {what}: "
                    f"AND a gate for the clause into its output (it holds the output at 0 "
                    f"during the change)")
        return {"node": node, "term": sorted([n, p] for n, p in term), "text": desc,
                "verified": True}
    return None


def _clause_text(term, graph) -> str:
    # a cube of ~f, complemented: the clause of f
    def nm(n):
        return graph.nodes[n].get("port") or graph.nodes[n].get("name") or n
    return " | ".join(f"{'~' if p else ''}{nm(n)}" for n, p in sorted(term, key=lambda l: nm(l[0])))


def _gate_name(graph, n) -> str:
    inst = graph.nodes[n].get("instance") or ""
    return inst.rsplit(".", 1)[-1] if inst else (graph.nodes[n].get("name") or n)


def _where(graph, n) -> str:
    d = graph.nodes[n]
    path = d.get("path")
    return f" ({os.path.basename(path)}:{d.get('line')})" if path and d.get("line") else ""


def _nm(graph, n) -> str:
    d = graph.nodes[n]
    inst = d.get("instance") or ""
    return f"{d.get('cell') or d.get('op')} {inst.rsplit('.', 1)[-1]}" if inst else (
        d.get("name") or n)


def fallback_fix(graph: nx.DiGraph, target: str, skew: float | None, fast_path: Sequence[str],
                 sink_role: str | None) -> str:
    parts = []
    tname = graph.nodes[target].get("name") or target
    if sink_role and sink_role != "output":
        parts.append(f"register the signal feeding {tname} (drive the {sink_role} pin from a "
                     f"flip-flop output)")
    else:
        parts.append(f"register the signal before {tname}")
    if skew and fast_path:
        first = fast_path[1] if len(fast_path) > 1 else fast_path[0]
        parts.append(f"or balance the paths: delay the fast branch at "
                     f"{graph.nodes[first].get('name') or first} by "
                     f"{TimeUnit.of(graph).words(skew)}")
    return "; ".join(parts)
