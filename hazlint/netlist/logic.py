"""Boolean functions of gate-graph nodes and their bit-parallel evaluation.

A node's function is ``op`` (a Verilog gate primitive name or one of a few structural ops) over its
ordered ``inputs``. Cells whose function is not a primitive carry ``op == "expr"`` and an expression
tree over input indices:

    ("in", i) | ("const", 0|1) | ("not", e) | ("and", e, ...) | ("or", e, ...) | ("xor", e, ...)

Values are Python ints used as bit vectors: bit *k* of every value belongs to the *k*-th of
``width`` independent input vectors, so one pass over the graph evaluates ``width`` vectors.
"""
from __future__ import annotations

from functools import reduce
from typing import Sequence

# ops and the number of inputs they take (None: any number >= 1)
OPS = {
    "and": None, "or": None, "nand": None, "nor": None, "xor": None, "xnor": None,
    "not": 1, "buf": 1, "const0": 0, "const1": 0,
    "mux": 3,                      # inputs (select, when_1, when_0): select ? when_1 : when_0
    "bufif0": 2, "bufif1": 2, "notif0": 2, "notif1": 2,   # inputs (data, enable)
    "expr": None,
}
THREE_STATE = {"bufif0", "bufif1", "notif0", "notif1"}


def eval_op(op: str, ins: Sequence[int], mask: int, expr=None) -> int:
    """Evaluate one node bit-parallel. ``mask`` is ``(1 << width) - 1``.

    A disabled three-state driver yields 0 here (zero-delay evaluation has no Z); callers that
    care about Z use the ternary evaluators in :mod:`hazlint.analysis`.
    """
    if op == "and":
        return reduce(int.__and__, ins, mask)
    if op == "or":
        return reduce(int.__or__, ins, 0)
    if op == "nand":
        return ~reduce(int.__and__, ins, mask) & mask
    if op == "nor":
        return ~reduce(int.__or__, ins, 0) & mask
    if op == "xor":
        return reduce(int.__xor__, ins, 0)
    if op == "xnor":
        return ~reduce(int.__xor__, ins, 0) & mask
    if op == "not":
        return ~ins[0] & mask
    if op == "buf":
        return ins[0]
    if op == "const0":
        return 0
    if op == "const1":
        return mask
    if op == "mux":
        s, a, b = ins
        return (s & a) | (~s & mask & b)
    if op == "bufif1":
        return ins[0] & ins[1]
    if op == "bufif0":
        return ins[0] & ~ins[1] & mask
    if op == "notif1":
        return ~ins[0] & ins[1] & mask
    if op == "notif0":
        return ~ins[0] & ~ins[1] & mask
    if op == "expr":
        return eval_expr(expr, ins, mask)
    raise ValueError(f"unknown op {op!r}")


def eval_expr(e, ins: Sequence[int], mask: int) -> int:
    tag = e[0]
    if tag == "in":
        return ins[e[1]]
    if tag == "const":
        return mask if e[1] else 0
    if tag == "not":
        return ~eval_expr(e[1], ins, mask) & mask
    vals = [eval_expr(x, ins, mask) for x in e[1:]]
    if tag == "and":
        return reduce(int.__and__, vals, mask)
    if tag == "or":
        return reduce(int.__or__, vals, 0)
    if tag == "xor":
        return reduce(int.__xor__, vals, 0)
    raise ValueError(f"bad expression node {e!r}")


def op_as_expr(op: str, n: int):
    """The function of a primitive op as an expression tree over ``n`` inputs."""
    ins = [("in", i) for i in range(n)]
    if op == "expr":
        raise ValueError("op 'expr' carries its own expression")
    table = {
        "and": lambda: ("and", *ins), "or": lambda: ("or", *ins), "xor": lambda: ("xor", *ins),
        "nand": lambda: ("not", ("and", *ins)), "nor": lambda: ("not", ("or", *ins)),
        "xnor": lambda: ("not", ("xor", *ins)), "not": lambda: ("not", ins[0]),
        "buf": lambda: ins[0], "const0": lambda: ("const", 0), "const1": lambda: ("const", 1),
        "mux": lambda: ("or", ("and", ins[0], ins[1]), ("and", ("not", ins[0]), ins[2])),
        "bufif1": lambda: ("and", ins[0], ins[1]),
        "bufif0": lambda: ("and", ins[0], ("not", ins[1])),
        "notif1": lambda: ("and", ("not", ins[0]), ins[1]),
        "notif0": lambda: ("and", ("not", ins[0]), ("not", ins[1])),
    }
    return table[op]()


def expr_inputs(e) -> set[int]:
    if e[0] == "in":
        return {e[1]}
    if e[0] == "const":
        return set()
    out: set[int] = set()
    for x in e[1:]:
        out |= expr_inputs(x)
    return out


def expr_to_text(e, names: Sequence[str]) -> str:
    """Render an expression in Liberty function syntax with the given input names."""
    tag = e[0]
    if tag == "in":
        return names[e[1]]
    if tag == "const":
        return str(e[1])
    if tag == "not":
        inner = expr_to_text(e[1], names)
        return f"!{inner}" if e[1][0] in ("in", "const", "not") else f"!({inner})"
    sep = {"and": "&", "or": "|", "xor": "^"}[tag]
    parts = []
    for x in e[1:]:
        t = expr_to_text(x, names)
        parts.append(f"({t})" if x[0] in ("and", "or", "xor") and x[0] != tag else t)
    return sep.join(parts)
