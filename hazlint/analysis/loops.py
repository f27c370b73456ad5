"""Combinational loops by what they do: oscillate, store, or settle.

A loop is judged by its *behaviour*, never by how it is spelled (two NAND primitives,
``assign q = ~(s & qn)``, a mux feeding itself, a library cell's function):

1. **Stable states.** For every value of the loop's inputs (the nets that feed it from outside,
   up to ``max_inputs``, all combinations at once, bit-parallel) the binary states in which every
   loop net equals its gate's value are counted over a feedback vertex set. No stable state for
   some inputs: the loop **oscillates** there (an odd inverting ring, ``x = x ^ a`` with
   ``a = 1``).
2. **Transitions** (Eichelberger's procedures A and B, IBM J. Res. Dev. 1965): from every stable
   state, every single input change is applied in ternary: the changing input X and the loop
   propagated (A), then the input at its new value (B). A loop net still X after B means the
   loop may oscillate or end in either state for that change: it is reported as oscillating,
   with that change as the witness. Changes of two inputs together that do not settle are the
   loop's *hold condition* (an SR latch released from set and reset at once) and go into the
   advice.
3. **What it is.** Two or more stable states for some inputs make it **storage**; one state
   everywhere makes it a loop that **settles** (logically redundant). Storage elements of
   asynchronous design are recognised from their state table: a **set/reset latch** (two
   inputs; holds for one input value, each neighbour forces one of the two states), a
   **C-element** (holds while the inputs disagree, follows them when they agree, up to input
   polarity), a **mutex** (a set/reset core whose two states feed a grant filter that is never
   active for both), and a **latch built from gates** (holds while one input is inactive,
   follows the other while it is active).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Iterable

import networkx as nx

from ..netlist.graph import SOURCE_KINDS
from .ternary import IntAlgebra, bool_gate, lub_fixpoint, ternary_fixpoint

ELEMENT_WORDS = {"set/reset latch": "a set/reset latch", "C-element": "a C-element",
                 "mutex": "a mutual-exclusion element (mutex)",
                 "gate latch": "a level-sensitive latch built from gates"}


@dataclass
class LoopClass:
    behaviour: str                        # "oscillation" | "storage" | "settles" | "inconclusive"
    inputs: list[str] = field(default_factory=list)     # the loop's input nets
    element: str | None = None            # a recognised storage element (ELEMENT_WORDS)
    witness: dict[str, Any] | None = None  # oscillation: {"inputs": {...}} or a change
    race: dict[str, Any] | None = None    # storage: a two-input change that does not settle
    hold: list[dict[str, int]] = field(default_factory=list)   # input values that hold state
    roles: dict[str, str] = field(default_factory=dict)        # element pin -> input net
    reason: str = ""

    def to_json(self, label=lambda n: n) -> dict[str, Any]:
        def vec(v):
            return {label(n): x for n, x in sorted(v.items())}
        out: dict[str, Any] = {"behaviour": self.behaviour, "element": self.element,
                               "inputs": [label(n) for n in self.inputs], "reason": self.reason}
        if self.witness:
            out["witness"] = {k: vec(v) for k, v in self.witness.items()}
        if self.race:
            out["race"] = {k: vec(v) for k, v in self.race.items()}
        if self.hold:
            out["hold"] = [vec(h) for h in self.hold[:8]]
        if self.roles:
            out["roles"] = {k: label(v) for k, v in self.roles.items()}
        return out


def feedback_set(g: nx.DiGraph, comp: set[str]) -> list[str]:
    """A small feedback vertex set of the strongly connected ``comp`` (greedy)."""
    h = nx.DiGraph(g.subgraph(comp))
    cut = []
    while not nx.is_directed_acyclic_graph(h):
        n = max(h.nodes, key=lambda x: (h.in_degree(x) * h.out_degree(x), str(x)))
        cut.append(n)
        h.remove_node(n)
    return [n for n in cut if g.nodes[n]["kind"] == "gate"] or cut


def _value(g, n, vals, A):
    d = g.nodes[n]
    if d["kind"] == "gate":
        return bool_gate(A, d["op"], [vals[i] for i in d["inputs"]], d.get("expr"))
    return vals[d["inputs"][0]]


def classify_loop(graph: nx.DiGraph, scc: Iterable[str], max_inputs: int = 12,
                  max_cut: int = 10, lane_budget: int = 1 << 18) -> LoopClass:
    """Classify one strongly connected component of the gate graph (see the module doc)."""
    g = graph
    loop = set(scc)
    # the loop with the logic only it reads (``assign c = a&b | a&c | b&c`` puts a&b outside
    # the cycle): its inputs are then the element's inputs, whatever the spelling
    comp = set(loop)
    grew = True
    while grew:
        grew = False
        for p in sorted({p for n in comp for p in g.predecessors(n) if p not in comp}):
            d = g.nodes[p]
            if d["kind"] == "gate" and d.get("inputs") and \
                    all(x in comp for x in g.successors(p)):
                comp.add(p)
                grew = True
    ext = sorted({p for n in comp for p in g.predecessors(n) if p not in comp})
    k = len(ext)
    if k > max_inputs:
        return LoopClass("inconclusive", ext, reason=f"{k} loop inputs (limit {max_inputs})")
    cut = feedback_set(g, loop)
    if len(cut) > max_cut:
        return LoopClass("inconclusive", ext, reason=f"feedback set of {len(cut)} nets "
                                                     f"(limit {max_cut})")
    rest = list(nx.topological_sort(g.subgraph(comp - set(cut))))
    W = 1 << k
    A = IntAlgebra(W)
    inbits = {n: sum(1 << u for u in range(W) if (u >> i) & 1) for i, n in enumerate(ext)}
    # stable states: cut assignment s -> lanes (input vectors) where it is stable, and the
    # value of every loop net in that state
    stable: dict[int, int] = {}
    state_vals: dict[int, dict[str, int]] = {}
    for s in range(1 << len(cut)):
        ev = dict(inbits)
        for i, n in enumerate(cut):
            ev[n] = A.mask if (s >> i) & 1 else 0
        for n in rest:
            ev[n] = _value(g, n, ev, A)
        ok = A.mask
        for n in cut:
            ok &= ~(_value(g, n, ev, A) ^ ev[n]) & A.mask
        if ok:
            stable[s] = ok
            state_vals[s] = {n: ev[n] for n in comp}
    per_lane = [[s for s, m in stable.items() if (m >> u) & 1] for u in range(W)]

    def vec(u):
        return {n: (u >> i) & 1 for i, n in enumerate(ext)}

    def change_of(u, change):
        """The loop inputs of lane ``u`` before and after the inputs ``change`` flip."""
        after = vec(u)
        for i in change:
            after[ext[i]] ^= 1
        return {"from": vec(u), "to": after}
    for u in range(W):
        if not per_lane[u]:
            return LoopClass("oscillation", ext, witness={"inputs": vec(u)},
                             reason="no stable state for these loop inputs")
    # Eichelberger's procedures A and B for every single input change from every stable state
    blocks = [(s, (i,)) for s in stable for i in range(k)]
    if len(blocks) * W > lane_budget:
        return LoopClass("inconclusive", ext, reason=(
            f"{len(blocks) * W} (state, input change) pairs to check (limit {lane_budget})"))
    bad = _unsettled(g, comp, ext, blocks, stable, state_vals, W, inbits)
    if bad is not None:
        s, change, u = bad
        return LoopClass("oscillation", ext, witness=change_of(u, change),
                         reason="this input change leaves the loop undetermined (ternary "
                                "simulation, procedure B): it may oscillate or settle either way")
    holds = [u for u in range(W) if len(per_lane[u]) >= 2]
    if not holds:
        return LoopClass("settles", ext, reason="one stable state for every value of the loop "
                                                "inputs, reached from every change")
    out = LoopClass("storage", ext, hold=[vec(u) for u in holds],
                    reason="two stable states for some values of the loop inputs")
    pairs = [(s, (i, j)) for s in stable for i in range(k) for j in range(i + 1, k)]
    if pairs and len(pairs) * W <= lane_budget:
        race = _unsettled(g, comp, ext, pairs, stable, state_vals, W, inbits)
        if race is not None:
            s, change, u = race
            out.race = change_of(u, change)
    _recognise(g, out, loop, ext, per_lane, state_vals, W)
    return out


def _unsettled(g, comp, ext, blocks, stable, state_vals, W, inbits):
    """The first (state, changed inputs, input vector) whose change leaves a loop net X after
    procedures A and B, or None. Lanes: one block of W input vectors per (state, change)."""
    width = len(blocks) * W
    A = IntAlgebra(width)
    full = (1 << W) - 1

    def spread(x_of_block):
        v = 0
        for b, blk in enumerate(blocks):
            v |= (x_of_block(blk) & full) << (b * W)
        return v
    valid = spread(lambda blk: stable[blk[0]])
    vals: dict[str, tuple] = {}
    after: dict[str, int] = {}
    for i, n in enumerate(ext):
        a = spread(lambda blk, n=n: inbits[n])
        flips = spread(lambda blk, i=i: full if i in blk[1] else 0)
        b = a ^ flips
        vals[n] = (A.or_(A.not_(a), flips), A.or_(a, flips))     # X where it changes
        after[n] = b
    for n in comp:
        v = spread(lambda blk, n=n: state_vals[blk[0]][n])
        vals[n] = (A.not_(v), v)
    nodes = sorted(comp)
    vals = lub_fixpoint(g, nodes, vals, A)
    for n, b in after.items():
        vals[n] = (A.not_(b), b)
    vals = ternary_fixpoint(g, nodes, vals, A)
    x = 0
    for n in comp:
        x |= vals[n][0] & vals[n][1]
    x &= valid
    if not x:
        return None
    lane = (x & -x).bit_length() - 1
    s, change = blocks[lane // W]
    return s, change, lane % W


def _recognise(g, out: LoopClass, comp, ext, per_lane, state_vals, W) -> None:
    """Name the storage element from its state table (see the module doc)."""
    k = len(ext)
    states = {u: frozenset(per_lane[u]) for u in range(W)}
    hold = {u for u in range(W) if len(states[u]) >= 2}
    forced = {u: next(iter(states[u])) for u in range(W) if len(states[u]) == 1}
    full = W - 1
    if k >= 2 and len(forced) == 2:
        u, v = sorted(forced)
        if u ^ v == full and forced[u] != forced[v] and \
                all(states[h] == {forced[u], forced[v]} for h in hold):
            out.element = "C-element"
            return
    if k != 2:
        return
    if len(hold) == 1:
        (h,) = hold
        n1, n2 = h ^ 1, h ^ 2
        if n1 in forced and n2 in forced and forced[n1] != forced[n2] and \
                states[h] == {forced[n1], forced[n2]} and (h ^ full) in forced:
            out.element = "set/reset latch"
            if _grant_filter(g, comp, state_vals, [(forced[n1], n1), (forced[n2], n2),
                                                   (forced[h ^ full], h ^ full)]):
                out.element = "mutex"
                out.roles = {"request 1": ext[0], "request 2": ext[1]}
            return
    if len(hold) == 2:
        a, b = sorted(hold)
        diff = a ^ b
        if diff in (1, 2) and len(forced) == 2:
            x, y = sorted(forced)
            if x ^ y == diff and forced[x] != forced[y] and \
                    all(states[h] == {forced[x], forced[y]} for h in hold):
                data = ext[0] if diff == 1 else ext[1]
                en = ext[1] if diff == 1 else ext[0]
                out.element = "gate latch"
                out.roles = {"data": data, "enable": en}


def _grant_filter(g, comp, state_vals, at, depth: int = 3) -> bool:
    """Two nets just after the loop, computed from loop nets only, that are active in exactly
    one of the two held states each and inactive when neither request is (a mutex's metastability
    filter, any spelling)."""
    A = IntAlgebra(1)
    frontier = {s for n in comp for s in g.successors(n) if s not in comp}
    seen = set(frontier)
    cands = []
    for _ in range(depth):
        nxt = set()
        for n in sorted(frontier):
            d = g.nodes[n]
            if d["kind"] != "gate":
                continue
            pats = []
            for st, lane in at:      # the two states a request forces, then idle
                vals = {m: (state_vals[st][m] >> lane) & 1 for m in comp}
                v = _eval_from(g, n, comp, vals, A)
                if v is None:
                    break
                pats.append(v)
            if len(pats) == 3:
                cands.append(tuple(pats))
            for s in g.successors(n):
                if s not in seen and s not in comp:
                    seen.add(s)
                    nxt.add(s)
        frontier = nxt
    for p in cands:
        for q in cands:
            if p[2] == q[2] and p[0] != p[2] and p[1] == p[2] and q[1] != q[2] and q[0] == q[2]:
                return True
    return False


def _eval_from(g, n, comp, vals, A, budget: int = 16):
    """The value of ``n`` from the loop nets' values, when its cone stops at them (None when
    it reads anything else)."""
    memo = dict(vals)

    def ev(m, left):
        if m in memo:
            return memo[m]
        d = g.nodes[m]
        if d["kind"] in SOURCE_KINDS or d["kind"] != "gate" or left <= 0:
            raise LookupError
        v = bool_gate(A, d["op"], [ev(i, left - 1) for i in d["inputs"]], d.get("expr"))
        memo[m] = v
        return v
    try:
        return ev(n, budget)
    except LookupError:
        return None


def oscillation_trace(graph: nx.DiGraph, scc: Iterable[str], c: LoopClass, at: float = 10.0,
                      until: float = 40.0):
    """A timed simulation of the loop alone (its inputs as sources) into the oscillating
    witness, for the waveform: from a neighbouring input value with a stable state when there
    is one."""
    from .timedsim import simulate
    comp = set(scc)
    sub = nx.DiGraph(graph.subgraph(comp | set(c.inputs)))
    for n in c.inputs:
        sub.nodes[n].update(kind="input", inputs=[], pins=[])
        for p in list(sub.predecessors(n)):
            sub.remove_edge(p, n)
    w = c.witness or {}
    if "to" in w:
        start, end = dict(w["from"]), dict(w["to"])
    else:
        end = dict(w.get("inputs") or {})
        start = dict(end)
        if start:
            first = sorted(start)[0]
            start[first] ^= 1
    events = [(at, n, v) for n, v in end.items() if start.get(n) != v]
    return simulate(sub, start, events, until=until)
