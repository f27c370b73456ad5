"""How a cell or operator behaves while its inputs change: the model behind every verdict.

**Atomic model (the default).** A gate primitive, a library cell, a user-defined primitive and
every Verilog operator (``&``, ``|``, ``^``, ``~``, ``?:``) is one node with one output delay
and no internal glitch of its own: its ternary value is the *ternary extension* of its Boolean
function (the output is X exactly when the function is not constant over the input values the
X inputs allow), and its transient value is the exact transient extension (the output may
change more often than its start and end values need exactly when some order of the input
changes makes the function itself do so). So a mux ``s ? a : b`` (written as an operator, a
``$_MUX_`` cell, a Liberty cell whose ``function`` is a mux or a UDP table) does not glitch when
only ``s`` changes and ``a == b``, and ``~(a & b)`` behaves as one NAND gate. Reconvergence
*between* nodes is always analysed: an expression written as several operators is several
nodes.

**Sum-of-products model** (configuration ``cell_model = "sum-of-products"``, for libraries
whose complex cells are not hazard-free): every mux and every cell whose function is not a
single primitive is replaced, before any rule runs, by a two-level network of its function: an
irredundant sum of prime implicants (AND gates over the input literals, NOT gates for the
inverted ones, one OR gate; the cell's pin delays on the AND gates). A mux then has the static
hazard of ``s & a | ~s & b`` when ``s`` changes with ``a == b == 1``.

Both extensions are computed from the prime implicants of the function and of its complement
(Quine-McCluskey on the truth table, kept per expression): the ternary extension of ``f`` is
the sum of its prime implicants evaluated over "can be 1" / "can be 0" rails, because a cube of
input values meets the on-set exactly when some prime implicant of ``f`` allows it (the
all-prime-implicant cover is free of static logic hazards; Eichelberger 1965, from memory).
Cells with more than :data:`ATOMIC_MAX_INPUTS` inputs are evaluated through their expression as
written.
"""
from __future__ import annotations

from dataclasses import replace
from functools import lru_cache
from typing import Sequence

from ..delays.model import GRAPH_DELAYS
from ..netlist.logic import eval_expr, op_as_expr

ATOMIC_MAX_INPUTS = 10
CELL_MODELS = ("atomic", "sum-of-products")
MODEL_TEXT = {
    "atomic": "cells and operators atomic (ternary extension of their function)",
    "sum-of-products": "muxes and complex cells as the sum of products of their function",
}

# an implicant: (value bits, care bits) over the cell's inputs
Cube = tuple[int, int]


def truth_table(expr, n: int) -> int:
    """The function of ``expr`` over ``n`` inputs as a 2^n-bit int (bit m is f(minterm m))."""
    width = 1 << n
    mask = (1 << width) - 1
    ins = []
    for i in range(n):
        v = 0
        for m in range(width):
            if (m >> i) & 1:
                v |= 1 << m
        ins.append(v)
    return eval_expr(expr, ins, mask)


def _prime_implicants(table: int, n: int) -> tuple[Cube, ...]:
    """Prime implicants of the function whose truth table is ``table`` (Quine-McCluskey)."""
    width = 1 << n
    full = (1 << n) - 1
    current = {(m, full) for m in range(width) if (table >> m) & 1}
    primes: set[Cube] = set()
    while current:
        merged: set[Cube] = set()
        used: set[Cube] = set()
        by_care: dict[int, list[Cube]] = {}
        for c in current:
            by_care.setdefault(c[1], []).append(c)
        for care, cubes in by_care.items():
            present = {v for v, _ in cubes}
            for v, _ in cubes:
                bit = care
                while bit:
                    b = bit & -bit
                    bit &= bit - 1
                    if not v & b and (v | b) in present:
                        merged.add((v, care & ~b))
                        used.add((v, care))
                        used.add((v | b, care))
        primes |= current - used
        current = merged
    return tuple(sorted(primes, key=lambda c: (-bin(full & ~c[1]).count("1"), c)))


@lru_cache(maxsize=4096)
def primes_of(expr, n: int) -> tuple[tuple[Cube, ...], tuple[Cube, ...]]:
    """(prime implicants of f, prime implicants of not f) for ``expr`` over ``n`` inputs."""
    t = truth_table(expr, n)
    full = (1 << (1 << n)) - 1
    return _prime_implicants(t, n), _prime_implicants(~t & full, n)


def node_expr(op: str, n: int, expr=None):
    """The expression tree of a gate node (its own for ``expr``, else the op's), as nested
    tuples (the key of the prime-implicant memo)."""
    if op != "expr":
        return _op_expr(op, n)
    return expr if isinstance(expr, tuple) else _freeze(expr)


@lru_cache(maxsize=256)
def _op_expr(op: str, n: int):
    return op_as_expr(op, n)


def _freeze(e):
    return tuple(_freeze(x) if isinstance(x, (list, tuple)) else x for x in e)


def _lits(cube: Cube, n: int):
    v, care = cube
    return [(i, (v >> i) & 1) for i in range(n) if (care >> i) & 1]


def _sum(A, cubes, n, rail):
    """OR over ``cubes`` of the AND of their literals, literal (i, v) read from ``rail(i, v)``."""
    terms = []
    for c in cubes:
        lits = _lits(c, n)
        terms.append(A.and_(*(rail(i, v) for i, v in lits)) if lits else A.true)
    return A.or_(*terms) if terms else A.false


def atomic_ternary(A, expr, ins: Sequence[tuple]) -> tuple:
    """Dual-rail ``(can be 0, can be 1)`` of an atomic cell with function ``expr``."""
    n = len(ins)
    on, off = primes_of(expr, n)
    c1 = _sum(A, on, n, lambda i, v: ins[i][v])
    c0 = _sum(A, off, n, lambda i, v: ins[i][v])
    return c0, c1


def atomic_transient(A, expr, ins: Sequence[tuple]) -> tuple:
    """Saturated transient ``(start, end, more changes than needed)`` of an atomic cell.

    Static part: start == end and the function is not constant over the values the inputs
    take during the change (each input that changes or may pulse is X). Dynamic part: start !=
    end and there are two moments t1 < t2, each input at a value its own waveform allows at
    that moment, with f = end at t1 and f = start at t2 (then the output goes start, end,
    start, end). An input that changes once allows (before, before), (before, after) and
    (after, after) at (t1, t2); one that may pulse allows anything; the conditions are summed
    over pairs of prime implicants of f and of its complement."""
    n = len(ins)
    on, off = primes_of(expr, n)
    s_in = [i[0] for i in ins]
    e_in = [i[1] for i in ins]
    s = _bool(A, on, n, s_in)
    e = _bool(A, on, n, e_in)
    # rails of the input values possible at some moment of the change
    may = []
    for si, ei, hi in ins:
        may.append((A.or_(A.not_(si), A.not_(ei), hi), A.or_(si, ei, hi)))
    c0 = _sum(A, off, n, lambda i, v: may[i][v])
    c1 = _sum(A, on, n, lambda i, v: may[i][v])
    same = A.not_(A.xor(s, e))
    static = A.and_(same, c0, c1)

    def lit(i, v, which):
        x = ins[i][which]
        return x if v else A.not_(x)

    def cond(i, x, y):
        """Input i can be x at t1 and y at t2 (x or y None: any value)."""
        si, ei, hi = ins[i]
        if x is None and y is None:
            return A.true
        if x is None or y is None or x == y:
            v = x if y is None else y
            return A.or_(hi, lit(i, v, 0), lit(i, v, 1))
        return A.or_(hi, A.and_(lit(i, x, 0), lit(i, y, 1)))

    def pairs(first, second):
        terms = []
        for c1_ in first:
            v1, k1 = c1_
            for c2_ in second:
                v2, k2 = c2_
                conds = []
                for i in range(n):
                    x = (v1 >> i) & 1 if (k1 >> i) & 1 else None
                    y = (v2 >> i) & 1 if (k2 >> i) & 1 else None
                    if x is not None or y is not None:
                        conds.append(cond(i, x, y))
                terms.append(A.and_(*conds) if conds else A.true)
        return A.or_(*terms) if terms else A.false
    rise_back = pairs(on, off)      # end value 1 at t1, start value 0 at t2
    fall_back = pairs(off, on)
    dyn = A.and_(A.xor(s, e), A.or_(A.and_(e, rise_back), A.and_(A.not_(e), fall_back)))
    return s, e, A.or_(static, dyn)


def _bool(A, on, n, vals):
    return _sum(A, on, n, lambda i, v: vals[i] if v else A.not_(vals[i]))


def is_atomic_candidate(op: str, n: int) -> bool:
    """Ops whose ternary and transient values this module gives (the primitives have their
    own exact rules in :mod:`hazlint.analysis.ternary`)."""
    return op in ("mux", "expr") and 0 < n <= ATOMIC_MAX_INPUTS


# ---------------------------------------------------------------------------------------------
# The sum-of-products model: a graph rewrite before the rules run

def sop_cover(expr, n: int) -> list[Cube]:
    """An irredundant cover of the on-set by prime implicants: essential primes first, then
    the prime covering most uncovered minterms (ties: fewest literals, then order)."""
    on, _ = primes_of(expr, n)
    t = truth_table(expr, n)
    minterms = {m for m in range(1 << n) if (t >> m) & 1}

    def covers(c, m):
        v, care = c
        return (m & care) == v

    cover: list[Cube] = []
    left = set(minterms)
    for m in sorted(minterms):
        hits = [c for c in on if covers(c, m)]
        if len(hits) == 1 and hits[0] not in cover:
            cover.append(hits[0])
    for c in cover:
        left -= {m for m in left if covers(c, m)}
    while left:
        best = max(on, key=lambda c: (sum(1 for m in left if covers(c, m)),
                                      -bin(c[1]).count("1"), [-x for x in c]))
        cover.append(best)
        left -= {m for m in left if covers(best, m)}
    return cover


def decompose_design(design):
    """A copy of ``design`` whose muxes and complex cells are two-level sum-of-products
    networks (the pessimistic cell model). Node ids of every existing driver stay (the cell's
    output node becomes the OR gate); the new internal nodes are ``<node>$sop.*``."""
    import networkx as nx
    from ..netlist.library import Delay
    g = design.graph
    h = nx.DiGraph()
    h.graph.update(g.graph)
    zero = Delay.fixed(0.0)
    for n, d in g.nodes(data=True):
        ins = d.get("inputs") or []
        if d["kind"] != "gate" or not is_atomic_candidate(d.get("op", ""), len(ins)):
            h.add_node(n, **d)
            continue
        expr = node_expr(d["op"], len(ins), d.get("expr"))
        cover = sop_cover(expr, len(ins))
        base = {k: v for k, v in d.items() if k not in ("op", "expr", "inputs", "pins",
                                                         "delays")}
        pins = list(d.get("pins") or [str(i) for i in range(len(ins))])

        def pin_delay(i):
            return GRAPH_DELAYS.pin(d, i)
        if not cover or cover == [(0, 0)]:
            h.add_node(n, **base, op="const1" if cover else "const0", inputs=[], pins=[],
                       delays=[])
            continue
        inv: dict[int, str] = {}
        terms = []
        for k, c in enumerate(cover):
            lits = _lits(c, len(ins))
            t_ins, t_pins, t_del = [], [], []
            for i, v in lits:
                if v:
                    t_ins.append(ins[i])
                else:
                    if i not in inv:
                        inv[i] = f"{n}$sop.n{i}"
                        h.add_node(inv[i], **dict(base, name=inv[i]), op="not", inputs=[ins[i]],
                                   pins=[pins[i]], delays=[zero])
                    t_ins.append(inv[i])
                t_pins.append(pins[i])
                t_del.append(pin_delay(i))
            terms.append((t_ins, t_pins, t_del))
        if len(terms) == 1:
            t_ins, t_pins, t_del = terms[0]
            h.add_node(n, **base, op="and" if len(t_ins) > 1 else "buf", inputs=t_ins,
                       pins=t_pins, delays=t_del)
            continue
        outs = []
        for k, (t_ins, t_pins, t_del) in enumerate(terms):
            tn = f"{n}$sop.t{k}"
            h.add_node(tn, **dict(base, name=tn), op="and" if len(t_ins) > 1 else "buf",
                       inputs=t_ins, pins=t_pins, delays=t_del)
            outs.append(tn)
        h.add_node(n, **base, op="or", inputs=outs, pins=[f"t{k}" for k in range(len(outs))],
                   delays=[zero] * len(outs))
    for v, d in h.nodes(data=True):
        owner = v.split("$sop.")[0] if "$sop." in v else v
        for p, u in enumerate(d.get("inputs") or ()):
            if h.has_edge(u, v):
                h.edges[u, v]["pins"].append(p)
            else:
                # wire delays (SDF) of the cell's input stay in front of its internal gates
                extra = {k: x for k, x in (g.edges[u, owner].items()
                                           if g.has_edge(u, owner) else ()) if k != "pins"}
                h.add_edge(u, v, pins=[p], **extra)
    return replace(design, graph=h)
