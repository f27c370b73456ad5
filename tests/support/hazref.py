"""A brute-force reference for hazards under multi-input changes, written apart from the prover.

For a small gate graph it enumerates every transition a change model allows and decides, per
transition, each hazard kind by the published definitions, evaluated explicitly:

* static hazards by Eichelberger's ternary simulation (IBM J. Res. Dev. 9(2), 1965): every
  changing source X, each gate's output the set of values its function takes over the values
  its inputs may have (the ternary extension, by enumeration);
* dynamic hazards by counting changes (Brzozowski and Esik, "Algebras for hazard detection",
  2003): every net carries its start value and the largest number of changes it can make; a
  gate's count is the largest number of output changes over all orders in which its inputs'
  changes can interleave (a longest path through the lattice of input positions);
* function hazards from the function alone, over the corners of the transition cube.

Nothing here imports the prover's algebra or gate rules: gate functions come from
:mod:`hazlint.netlist.logic` evaluation of single vectors only.
"""
from __future__ import annotations

import itertools
from functools import lru_cache

from hazlint.netlist.logic import eval_op

KINDS = ("static-1-hazard", "static-0-hazard", "dynamic-hazard")


def gate_fn(op, expr, n):
    @lru_cache(maxsize=None)
    def f(bits):
        return eval_op(op, list(bits), 1, expr)
    return f


class Reference:
    def __init__(self, graph, sink, sources):
        self.g = graph
        self.sink = sink
        self.sources = list(sources)
        self.bit = {s: i for i, s in enumerate(self.sources)}
        order = []
        seen = set()

        def visit(n):
            if n in seen:
                return
            seen.add(n)
            for i in graph.nodes[n].get("inputs") or ():
                visit(i)
            order.append(n)
        visit(sink)
        # (node, kind, function, inputs) in topological order, read once
        self.nodes = []
        for n in order:
            d = graph.nodes[n]
            fn = gate_fn(d["op"], _hashable(d.get("expr")), len(d["inputs"])) \
                if d["kind"] == "gate" else None
            self.nodes.append((n, d["kind"], fn, tuple(d.get("inputs") or ()),
                               1 if d.get("op") == "const1" else 0))
        # the sink's truth table over the sources (bit i of the index: source i)
        self.table = [self._eval({s: (m >> i) & 1 for i, s in enumerate(self.sources)})
                      for m in range(1 << len(self.sources))]

    def _mask(self, vec) -> int:
        return sum(1 << i for s, i in self.bit.items() if vec[s])

    # ---- explicit evaluations -----------------------------------------------------------------
    def _eval(self, vec):
        v = dict(vec)
        for n, kind, fn, ins, const in self.nodes:
            if kind == "gate":
                v[n] = fn(tuple(v[i] for i in ins))
            elif kind == "sink":
                v[n] = v[ins[0]]
            elif kind == "const":
                v[n] = const
        return v[self.sink]

    def value(self, vec):
        return self.table[self._mask(vec)]

    def ternary(self, a, b):
        """The set of values the sink may take with every changing source X."""
        v = {s: frozenset({a[s], b[s]}) for s in self.sources}
        for n, kind, fn, ins, const in self.nodes:
            if kind == "gate":
                v[n] = frozenset(fn(bits) for bits in itertools.product(*(v[i] for i in ins)))
            elif kind == "sink":
                v[n] = v[ins[0]]
            elif kind == "const":
                v[n] = frozenset({const})
        return v[self.sink]

    def changes(self, a, b):
        """(start value, largest number of changes) of the sink."""
        v = {s: (a[s], int(a[s] != b[s])) for s in self.sources}
        for n, kind, fn, ins, const in self.nodes:
            if kind == "gate":
                v[n] = _gate_changes(fn, tuple(v[i] for i in ins))
            elif kind == "sink":
                v[n] = v[ins[0]]
            elif kind == "const":
                v[n] = (const, 0)
        return v[self.sink]

    def function_hazard(self, a, b, kind):
        """From the truth table alone: static, some corner of the cube has the other value;
        dynamic, the function returns to its start value after reaching its end value along a
        monotone path through the cube."""
        am, bm = self._mask(a), self._mask(b)
        ch = am ^ bm
        t = self.table
        fa, fb = t[am], t[bm]
        subs = []
        sub = ch
        while True:                       # every subset of the changing sources
            subs.append(sub)
            if sub == 0:
                break
            sub = (sub - 1) & ch
        if kind != "dynamic-hazard":
            return fa == fb and any(t[am ^ c] != fa for c in subs)
        if fa == fb:
            return False
        return any(c1 != c2 and c1 & c2 == c1 and t[am ^ c1] == fb and t[am ^ c2] == fa
                   for c1 in subs for c2 in subs)

    def classify(self, a, b):
        """{kind: None | "function" | "logic"} for one transition."""
        fa, fb = self.value(a), self.value(b)
        out = {k: None for k in KINDS}
        if fa == fb:
            if len(self.ternary(a, b)) == 2:
                k = "static-1-hazard" if fa else "static-0-hazard"
                out[k] = "function" if self.function_hazard(a, b, k) else "logic"
        else:
            start, count = self.changes(a, b)
            assert start == fa and count % 2 == 1
            if count >= 3:
                fh = self.function_hazard(a, b, "dynamic-hazard")
                out["dynamic-hazard"] = "function" if fh else "logic"
        return out


def _gate_changes(f, ins):
    """Largest number of output changes over every interleaving of the inputs' changes."""
    counts = [k for _, k in ins]
    starts = [s for s, _ in ins]

    if sum(counts) <= 1:                     # at most one input changes: no choice of order
        return f(tuple(starts)), sum(counts) and int(
            f(tuple(s ^ k for s, k in zip(starts, counts))) != f(tuple(starts)))
    return _interleave(f, tuple(starts), tuple(counts))


@lru_cache(maxsize=None)
def _interleave(f, starts, counts):
    def val(pos):
        return f(tuple(s ^ (p & 1) for s, p in zip(starts, pos)))
    best = {}
    for pos in sorted(itertools.product(*(range(k + 1) for k in counts)), key=sum):
        here = val(pos)
        b = 0
        for i in range(len(pos)):
            if pos[i]:
                prev = pos[:i] + (pos[i] - 1,) + pos[i + 1:]
                b = max(b, best[prev][0] + (best[prev][1] != here))
        best[pos] = (b, here)
    end = tuple(counts)
    return val(tuple(0 for _ in counts)), best[end][0]


def _hashable(e):
    if e is None:
        return None
    return tuple(_hashable(x) if isinstance(x, (list, tuple)) else x for x in e)


def allowed_transitions(sources, quiet=(), one_at_a_time=(), one_hot=()):
    """Every (before, after) pair of source vectors the change model allows: quiet sources
    hold, at most one member of each one-at-a-time group changes, one-hot groups have at most
    one member at 1 before and after."""
    n = len(sources)
    for a_bits in range(1 << n):
        a = {s: (a_bits >> i) & 1 for i, s in enumerate(sources)}
        if any(sum(a[s] for s in grp) > 1 for grp in one_hot):
            continue
        for c_bits in range(1, 1 << n):
            b = {s: a[s] ^ ((c_bits >> i) & 1) for i, s in enumerate(sources)}
            if any(a[s] != b[s] for s in quiet):
                continue
            if any(sum(a[s] != b[s] for s in grp) > 1 for grp in one_at_a_time):
                continue
            if any(sum(b[s] for s in grp) > 1 for grp in one_hot):
                continue
            yield a, b


def reference_verdict(graph, sink, sources, **model):
    """{kind: {"any"|"function"|"logic": smallest witness size or None}} over the model."""
    ref = Reference(graph, sink, sources)
    out = {k: {"any": None, "function": None, "logic": None} for k in KINDS}
    for a, b in allowed_transitions(sources, **model):
        size = sum(a[s] != b[s] for s in sources)
        for k, what in ref.classify(a, b).items():
            if what is None:
                continue
            for q in ("any", what):
                if out[k][q] is None or size < out[k][q]:
                    out[k][q] = size
    return out, ref
