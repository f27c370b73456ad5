"""Ternary and transient simulation of the gate graph (explicit, bit-parallel).

Two published methods, written once over an abstract Boolean algebra so the same gate semantics
serve explicit simulation (Python ints, one bit per vector), symbolic simulation (BDDs, see
:mod:`hazlint.analysis.symbolic`) and SAT (:mod:`hazlint.analysis.satcheck`):

* **Ternary simulation** (Eichelberger, "Hazard detection in combinational and sequential
  switching circuits", IBM J. Res. Dev. 9(2), 1965; Brzozowski & Seger, *Asynchronous Circuits*,
  1995). Values 0, 1 and X in a *dual-rail* encoding: every net carries two bit vectors,
  ``c0`` (the net can be 0) and ``c1`` (the net can be 1); X sets both. A transition from input
  vector A to B has a static hazard at an output iff the output is the same binary value at A and
  B but X when the changing inputs are X. Three-state drivers that may be disabled give X (Z is
  treated as X for hazard purposes).
* **Transient simulation** (Brzozowski & Esik, "Algebras for hazard detection", Formal Methods
  in System Design 23, 2003), saturated: every net carries ``s`` (value before), ``e`` (value
  after) and ``h`` (the net may change more often than ``s != e`` requires under some gate and
  wire delays). ``h`` with ``s == e`` is a static hazard, ``h`` with ``s != e`` a dynamic hazard
  (three or more changes). Saturation at "more than the minimum" keeps the yes/no answer of the
  unsaturated change-counting algebra, because every gate rule only asks whether an input changes
  at all and whether it changes more than its minimum. Three-state drivers are taken as their
  enabled AND function here.

Eichelberger's procedures A and B for circuits with feedback are :func:`procedure_a_b`.
"""
from __future__ import annotations

from functools import reduce
from typing import Any, Callable, Iterable, Mapping, Sequence

import networkx as nx

from ..netlist.graph import SOURCE_KINDS
from ..netlist.logic import op_as_expr
from ..netlist.walks import fanin_postorder
from .cellmodel import atomic_ternary, atomic_transient, is_atomic_candidate, node_expr

# ---------------------------------------------------------------------------------------------
# Boolean algebras (explicit bit-parallel ints here; BDD and CNF builders elsewhere)


class IntAlgebra:
    """Bit-parallel Boolean algebra over Python ints: bit *k* is vector *k*."""

    def __init__(self, width: int = 1):
        self.width = width
        self.mask = (1 << width) - 1
        self.true = self.mask
        self.false = 0

    def not_(self, a):
        return ~a & self.mask

    def and_(self, *xs):
        return reduce(int.__and__, xs, self.mask)

    def or_(self, *xs):
        return reduce(int.__or__, xs, 0)

    def xor(self, a, b):
        return a ^ b


# ---------------------------------------------------------------------------------------------
# Gate semantics, generic over the algebra ``A``

_TRISTATE_STRUCT = {  # three-state drivers as their enabled function (data, enable)
    "bufif1": lambda d, en, A: A.and_(d, en),
    "bufif0": lambda d, en, A: A.and_(d, A.not_(en)),
    "notif1": lambda d, en, A: A.and_(A.not_(d), en),
    "notif0": lambda d, en, A: A.and_(A.not_(d), A.not_(en)),
}


def _structural(op: str, n: int, expr):
    return expr if op == "expr" else op_as_expr(op, n)


def bool_gate(A, op: str, ins: Sequence, expr=None):
    """Binary value of a gate."""
    if op == "and":
        return A.and_(*ins)
    if op == "or":
        return A.or_(*ins)
    if op == "nand":
        return A.not_(A.and_(*ins))
    if op == "nor":
        return A.not_(A.or_(*ins))
    if op in ("xor", "xnor"):
        v = reduce(A.xor, ins[1:], ins[0])
        return v if op == "xor" else A.not_(v)
    if op == "not":
        return A.not_(ins[0])
    if op == "buf":
        return ins[0]
    if op == "const0":
        return A.false
    if op == "const1":
        return A.true
    if op in _TRISTATE_STRUCT:
        return _TRISTATE_STRUCT[op](ins[0], ins[1], A)
    return _expr_eval(A, _structural(op, len(ins), expr), ins, bool_gate)


def ternary_gate(A, op: str, ins: Sequence[tuple], expr=None) -> tuple:
    """Dual-rail ternary value ``(c0, c1)`` of a gate: the ternary extension of its function
    (every node is atomic, see :mod:`hazlint.analysis.cellmodel`)."""
    if op in ("and", "nand"):
        c0 = A.or_(*(i[0] for i in ins))
        c1 = A.and_(*(i[1] for i in ins))
        return (c0, c1) if op == "and" else (c1, c0)
    if op in ("or", "nor"):
        c0 = A.and_(*(i[0] for i in ins))
        c1 = A.or_(*(i[1] for i in ins))
        return (c0, c1) if op == "or" else (c1, c0)
    if op in ("xor", "xnor"):
        a0, a1 = ins[0]
        for b0, b1 in ins[1:]:
            a0, a1 = (A.or_(A.and_(a0, b0), A.and_(a1, b1)),
                      A.or_(A.and_(a1, b0), A.and_(a0, b1)))
        return (a0, a1) if op == "xor" else (a1, a0)
    if op == "not":
        return (ins[0][1], ins[0][0])
    if op == "buf":
        return ins[0]
    if op == "const0":
        return (A.true, A.false)
    if op == "const1":
        return (A.false, A.true)
    if op in ("bufif1", "bufif0", "notif1", "notif0"):
        d0, d1 = ins[0]
        e0, e1 = ins[1]
        if op.endswith("0"):
            e0, e1 = e1, e0          # active-low enable
        if op.startswith("not"):
            d0, d1 = d1, d0
        # enabled: data; may be disabled (Z): X
        return (A.or_(A.and_(e1, d0), e0), A.or_(A.and_(e1, d1), e0))
    if is_atomic_candidate(op, len(ins)):
        return atomic_ternary(A, node_expr(op, len(ins), expr), ins)
    return _expr_eval(A, _structural(op, len(ins), expr), ins, ternary_gate)


def transient_gate(A, op: str, ins: Sequence[tuple], expr=None) -> tuple:
    """Saturated transient value ``(s, e, h)`` of a gate (Brzozowski & Esik)."""
    if op in ("and", "nand", "or", "nor"):
        if op in ("and", "nand"):
            s = A.and_(*(i[0] for i in ins))
            e = A.and_(*(i[1] for i in ins))
            # an input constantly at the controlling value 0 blocks every change
            blocked = A.or_(*(A.not_(A.or_(i[0], i[1], i[2])) for i in ins))
            both = A.not_(A.or_(s, e))          # 0 before and after
        else:
            s = A.or_(*(i[0] for i in ins))
            e = A.or_(*(i[1] for i in ins))
            blocked = A.or_(*(A.and_(i[0], i[1], A.not_(i[2])) for i in ins))
            both = A.and_(s, e)
        h = A.and_(A.not_(blocked), A.or_(both, *(i[2] for i in ins)))
        if op in ("nand", "nor"):
            return (A.not_(s), A.not_(e), h)
        return (s, e, h)
    if op in ("xor", "xnor"):
        s, e, h = ins[0]
        chg = A.or_(A.xor(s, e), h)
        for bs, be, bh in ins[1:]:
            bchg = A.or_(A.xor(bs, be), bh)
            h = A.or_(h, bh, A.and_(chg, bchg))
            chg = A.or_(chg, bchg)
            s, e = A.xor(s, bs), A.xor(e, be)
        return (s, e, h) if op == "xor" else (A.not_(s), A.not_(e), h)
    if op == "not":
        s, e, h = ins[0]
        return (A.not_(s), A.not_(e), h)
    if op == "buf":
        return ins[0]
    if op == "const0":
        return (A.false, A.false, A.false)
    if op == "const1":
        return (A.true, A.true, A.false)
    if op in _TRISTATE_STRUCT:
        e = {"bufif1": ("and", ("in", 0), ("in", 1)),
             "bufif0": ("and", ("in", 0), ("not", ("in", 1))),
             "notif1": ("and", ("not", ("in", 0)), ("in", 1)),
             "notif0": ("and", ("not", ("in", 0)), ("not", ("in", 1)))}[op]
        return _expr_eval(A, e, ins, transient_gate)
    if is_atomic_candidate(op, len(ins)):
        return atomic_transient(A, node_expr(op, len(ins), expr), ins)
    return _expr_eval(A, _structural(op, len(ins), expr), ins, transient_gate)


def _expr_eval(A, e, ins, gate_fn):
    tag = e[0]
    if tag == "in":
        return ins[e[1]]
    if tag == "const":
        return gate_fn(A, "const1" if e[1] else "const0", ())
    sub = [_expr_eval(A, x, ins, gate_fn) for x in e[1:]]
    return gate_fn(A, tag, sub)


# ---------------------------------------------------------------------------------------------
# Cones and propagation

def cone(graph: nx.DiGraph, targets: Iterable[str]) -> list[str]:
    """The transitive fan-in of ``targets`` (targets included) in topological order.

    Raises :class:`CyclicCone` when the cone holds a combinational loop.
    """
    # in the graph's own adjacency order: the same for the same graph whatever the string
    # hash seed (a sub-graph view of a set of nodes would iterate that set, in hash order)
    return fanin_postorder(graph, targets,
                           on_cycle=lambda: CyclicCone("combinational loop in the cone"))


class CyclicCone(ValueError):
    pass


def free_sources(graph: nx.DiGraph, order: Iterable[str]) -> list[str]:
    """Source nodes of a cone whose value is not fixed by the design (inputs, state, black boxes)."""
    return [n for n in order if graph.nodes[n]["kind"] in SOURCE_KINDS
            and graph.nodes[n]["kind"] != "const"]


def propagate(graph: nx.DiGraph, order: Sequence[str], values: dict, A, gate_fn: Callable,
              default=None) -> dict:
    """Evaluate ``gate_fn`` over ``order``; ``values`` holds every free source's value (missing
    ones get ``default``, or raise). Returns ``values`` extended with every node of ``order``."""
    nodes = graph.nodes
    for n in order:
        if n in values:
            continue
        d = nodes[n]
        k = d["kind"]
        if k == "gate":
            values[n] = gate_fn(A, d["op"], [values[i] for i in d["inputs"]], d.get("expr"))
        elif k == "const":
            values[n] = gate_fn(A, d.get("op", "const0"), ())
        elif k == "sink":
            ins = d.get("inputs") or list(graph.predecessors(n))
            values[n] = values[ins[0]] if ins else gate_fn(A, "const0", ())
        else:
            if default is None:
                raise KeyError(f"no value for source {n}")
            values[n] = default
    return values


# ---------------------------------------------------------------------------------------------
# Transitions and hazard classes

HAZARD_KINDS = ("static-1-hazard", "static-0-hazard", "dynamic-hazard")


def lanes_planes(A, values_a: Mapping[str, Any], values_b: Mapping[str, Any], sources):
    """Source values for the three ternary runs (A, B, X) and the transient run."""
    ta, tb, tx, tr = {}, {}, {}, {}
    for n in sources:
        a, b = values_a[n], values_b[n]
        ta[n] = (A.not_(a), a)
        tb[n] = (A.not_(b), b)
        diff = A.xor(a, b)
        tx[n] = (A.or_(A.not_(a), diff), A.or_(a, diff))
        tr[n] = (a, b, A.false)
    return ta, tb, tx, tr


def hazard_planes(graph, order, target, A, values_a, values_b, sources):
    """The hazard conditions at ``target`` as values of algebra ``A``:
    ``{"static-1-hazard": ..., "static-0-hazard": ..., "dynamic-hazard": ...,
    "before": f(A), "after": f(B)}``."""
    ta, tb, tx, tr = lanes_planes(A, values_a, values_b, sources)
    ra = propagate(graph, order, ta, A, ternary_gate)[target]
    rb = propagate(graph, order, tb, A, ternary_gate)[target]
    rx = propagate(graph, order, tx, A, ternary_gate)[target]
    rt = propagate(graph, order, tr, A, transient_gate)[target]
    one_a = A.and_(ra[1], A.not_(ra[0]))
    zero_a = A.and_(ra[0], A.not_(ra[1]))
    one_b = A.and_(rb[1], A.not_(rb[0]))
    zero_b = A.and_(rb[0], A.not_(rb[1]))
    x_mid = A.and_(rx[0], rx[1])
    return {
        "static-1-hazard": A.and_(one_a, one_b, x_mid),
        "static-0-hazard": A.and_(zero_a, zero_b, x_mid),
        "dynamic-hazard": A.and_(A.or_(A.and_(one_a, zero_b), A.and_(zero_a, one_b)), rt[2]),
        "before": one_a, "after": one_b,
    }


def classify_explicit(graph: nx.DiGraph, target: str, before: Mapping[str, int],
                      after: Mapping[str, int], order: Sequence[str] | None = None) -> str | None:
    """Classify one fully specified transition (every free source of the cone in ``before`` and
    ``after``). Returns a kind of :data:`HAZARD_KINDS` or None (hazard-free under arbitrary
    delays)."""
    order = order or cone(graph, [target])
    A = IntAlgebra(1)
    srcs = free_sources(graph, order)
    res = hazard_planes(graph, order, target, A, {n: before.get(n, 0) & 1 for n in srcs},
                        {n: after.get(n, before.get(n, 0)) & 1 for n in srcs}, srcs)
    for k in HAZARD_KINDS:
        if res[k]:
            return k
    return None


def ternary_value(c0: int, c1: int, lane: int = 0) -> str:
    a, b = (c0 >> lane) & 1, (c1 >> lane) & 1
    return "X" if a and b else "1" if b else "0" if a else "-"


# ---------------------------------------------------------------------------------------------
# Function hazards (multi-input changes)

def function_hazard(graph, order, target, before: Mapping[str, int], after: Mapping[str, int]
                    ) -> bool:
    """Is there a *function* hazard for this transition: can some order of the changing inputs
    pass through a vector where the output differs from what a clean change would show? Then no
    implementation of the function is glitch-free for it (common practice). Enumerates the
    2^k corners of the transition cube (k changing sources), bit-parallel."""
    srcs = free_sources(graph, order)
    changing = [n for n in srcs if (before.get(n, 0) & 1) != (after.get(n, before.get(n, 0)) & 1)]
    k = len(changing)
    if k <= 1:
        return False
    if k > 16:
        raise ValueError("too many changing inputs for the function-hazard check")
    width = 1 << k
    A = IntAlgebra(width)
    vals = {}
    for n in srcs:
        if n in changing:
            i = changing.index(n)
            flip = sum(1 << c for c in range(width) if (c >> i) & 1)
            vals[n] = flip if not before.get(n, 0) & 1 else A.not_(flip)
        else:
            vals[n] = A.mask if before.get(n, 0) & 1 else 0
    out = propagate(graph, order, vals, A, bool_gate)[target]
    fa, fb = out & 1, (out >> (width - 1)) & 1
    if fa == fb:
        return out not in (0, A.mask)
    # dynamic: a corner c (after) d with f(c) == f(B) and f(d) == f(A) where d includes c
    for c in range(width):
        if (out >> c) & 1 == fb:
            for d in range(width):
                if d & c == c and d != c and (out >> d) & 1 == fa:
                    return True
    return False


# ---------------------------------------------------------------------------------------------
# Eichelberger procedures A and B on circuits with feedback

def ternary_fixpoint(graph: nx.DiGraph, nodes: Sequence[str], values: dict, A,
                     max_rounds: int | None = None) -> dict:
    """Iterate ternary evaluation of ``nodes`` (any order, loops allowed) from ``values`` until
    nothing changes. Ternary simulation of a monotone change converges within 2*len(nodes)
    rounds (each net's value moves at most twice in the information order)."""
    rounds = max_rounds or 2 * len(nodes) + 2
    g = graph.nodes
    for _ in range(rounds):
        changed = False
        for n in nodes:
            d = g[n]
            if d["kind"] == "gate":
                v = ternary_gate(A, d["op"], [values[i] for i in d["inputs"]], d.get("expr"))
            elif d["kind"] == "sink":
                v = values[d["inputs"][0]]
            else:
                continue
            if values.get(n) != v:
                values[n] = v
                changed = True
        if not changed:
            return values
    return values


def procedure_a_b(graph: nx.DiGraph, nodes: Sequence[str], state: Mapping[str, tuple],
                  inputs_a: Mapping[str, int], inputs_b: Mapping[str, int], A=None) -> dict:
    """Eichelberger's procedures for the input change A -> B from the stable ``state``
    (dual-rail values of every net in ``nodes``). Procedure A: changing inputs to X, propagate
    (values only become less defined). Procedure B: inputs to their B values, propagate (X's may
    resolve). Nets still X afterwards may end in either value or oscillate."""
    A = A or IntAlgebra(1)
    vals = dict(state)
    for n, a in inputs_a.items():
        b = inputs_b.get(n, a)
        vals[n] = (A.true, A.true) if a != b else (A.not_(A.true * a), A.true * a)
    # procedure A may only add X: take the least upper bound with the old values
    vals = lub_fixpoint(graph, nodes, vals, A)
    for n, b in inputs_b.items():
        vals[n] = (A.not_(A.true * b), A.true * b)
    return ternary_fixpoint(graph, nodes, vals, A)


def lub_fixpoint(graph, nodes, vals, A):
    """Procedure A's propagation: iterate ternary evaluation of ``nodes``, each value the
    least upper bound of its old value and the new one (values only become less defined)."""
    g = graph.nodes
    for _ in range(2 * len(nodes) + 2):
        changed = False
        for n in nodes:
            d = g[n]
            if d["kind"] == "gate":
                v = ternary_gate(A, d["op"], [vals[i] for i in d["inputs"]], d.get("expr"))
            elif d["kind"] == "sink":
                v = vals[d["inputs"][0]]
            else:
                continue
            old = vals[n]
            new = (A.or_(old[0], v[0]), A.or_(old[1], v[1]))
            if new != old:
                vals[n] = new
                changed = True
        if not changed:
            break
    return vals


class SharedPlanes:
    """Hazard conditions for many (target, changing source) pairs over one algebra.

    The binary function of every net is computed once; for a changing source ``x`` only the nets
    in ``x``'s fan-out get the dual-rail ternary and transient values (everything else is a
    steady binary value). Valid for cones without three-state drivers (whose disabled state is
    X only in the ternary runs); :func:`has_three_state` tells.
    """

    def __init__(self, graph: nx.DiGraph, order: Sequence[str], A, source_values: Mapping):
        self.g = graph
        self.order = list(order)
        self.pos = {n: i for i, n in enumerate(self.order)}
        self.A = A
        self.f = propagate(graph, self.order, dict(source_values), A, bool_gate)

    def fanout(self, x: str) -> list[str]:
        seen = {x}
        stack = [x]
        while stack:
            n = stack.pop()
            for s in self.g.successors(n):
                if s in self.pos and s not in seen:
                    seen.add(s)
                    stack.append(s)
        seen.discard(x)
        return sorted(seen, key=self.pos.__getitem__)

    def planes(self, x: str, targets: Iterable[str]) -> dict[str, dict[str, Any]]:
        A, g, f = self.A, self.g.nodes, self.f
        targets = list(targets)
        fo = self.fanout(x)
        fos = set(fo)
        # only the part of x's fan-out that reaches the targets
        need = set()
        stack = [t for t in targets if t in fos]
        while stack:
            n = stack.pop()
            if n in need:
                continue
            need.add(n)
            stack.extend(p for p in self.g.predecessors(n) if p in fos and p not in need)
        fo = [n for n in fo if n in need]
        fa, fb, tx, tr = {x: A.false}, {x: A.true}, {x: (A.true, A.true)}, \
            {x: (A.false, A.true, A.false)}

        def get(m, n, kind):
            v = m.get(n)
            if v is not None:
                return v
            b = f[n]
            if kind == 0:
                return b
            if kind == 1:
                return (A.not_(b), b)
            return (b, b, A.false)
        for n in fo:
            d = g[n]
            if d["kind"] == "sink":
                i = d["inputs"][0]
                fa[n], fb[n] = get(fa, i, 0), get(fb, i, 0)
                tx[n], tr[n] = get(tx, i, 1), get(tr, i, 2)
                continue
            if d["kind"] != "gate":
                continue
            ins = d["inputs"]
            op, e = d["op"], d.get("expr")
            fa[n] = bool_gate(A, op, [get(fa, i, 0) for i in ins], e)
            fb[n] = bool_gate(A, op, [get(fb, i, 0) for i in ins], e)
            tx[n] = ternary_gate(A, op, [get(tx, i, 1) for i in ins], e)
            tr[n] = transient_gate(A, op, [get(tr, i, 2) for i in ins], e)
        out = {}
        for t in targets:
            if t not in fos:
                continue
            a, b = fa[t], fb[t]
            x0, x1 = tx[t]
            xm = A.and_(x0, x1)
            out[t] = {"static-1-hazard": A.and_(a, b, xm),
                      "static-0-hazard": A.and_(A.not_(a), A.not_(b), xm),
                      "dynamic-hazard": A.and_(A.xor(a, b), tr[t][2])}
        return out


def has_three_state(graph: nx.DiGraph, order: Iterable[str]) -> bool:
    from ..netlist.logic import THREE_STATE
    return any(graph.nodes[n].get("op") in THREE_STATE for n in order)
