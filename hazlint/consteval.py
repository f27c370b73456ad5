"""Constant-expression evaluation over IR expressions (parameters, ranges, genvars, delays)."""
from __future__ import annotations

import math
from typing import Callable, Mapping

from .errors import ElaborationError


class NotConstant(Exception):
    """The expression depends on something that is not a parameter or constant."""


def const_value(e, params: Mapping[str, object], where=None, call=None):
    """Evaluate ``e`` to an int (or float for real constants).

    ``params`` maps parameter and genvar names to values. ``call(name, values)`` evaluates
    calls of other functions (constant user functions, constant system functions); without it
    they are not constant. Raises :class:`NotConstant` when ``e`` reads a net, and
    :class:`ElaborationError` for unsupported operators.
    """
    tag = e[0]
    if tag == "num":
        _, width, value, xz, _signed = e
        if xz:
            raise NotConstant("x/z bits")
        return value
    if tag == "real":
        return e[1]
    if tag == "id":
        name = e[1]
        if name in params:
            v = params[name]
            if isinstance(v, tuple):   # (value, width) pairs are allowed
                return v[0]
            return v
        raise NotConstant(name)
    if tag == "str":
        raise NotConstant("string")
    if tag == "unop":
        op, a = e[1], const_value(e[2], params, where, call)
        if op == "-":
            return -a
        if op == "+":
            return a
        if op == "!":
            return int(not a)
        if op == "~":
            return ~a
        if op in ("&", "|", "^", "~&", "~|", "~^", "^~"):
            raise NotConstant("reduction of an unsized constant")
        raise ElaborationError(f"unsupported operator '{op}' in constant expression",
                               *(where or ()))
    if tag == "binop":
        op = e[1]
        a = const_value(e[2], params, where, call)
        b = const_value(e[3], params, where, call)
        fn = _BINOPS.get(op)
        if fn is None:
            raise ElaborationError(f"unsupported operator '{op}' in constant expression",
                                   *(where or ()))
        try:
            return fn(a, b)
        except ZeroDivisionError:
            raise ElaborationError("division by zero in constant expression",
                                   *(where or ())) from None
    if tag == "cond":
        return const_value(e[2] if const_value(e[1], params, where, call) else e[3], params,
                           where, call)
    if tag == "call":
        name, args = e[1], e[2]
        vals = [const_value(a, params, where, call) for a in args]
        if name == "$clog2":
            v = int(vals[0])
            return 0 if v <= 1 else (v - 1).bit_length()
        if name in ("$unsigned", "$signed"):
            return vals[0]
        if call is not None:
            return call(name, vals)
        raise NotConstant(name)
    if tag == "concat":
        raise NotConstant("concatenation")
    raise NotConstant(tag)


def _div(a, b):
    if isinstance(a, float) or isinstance(b, float):
        return a / b
    q = abs(a) // abs(b)
    return q if (a >= 0) == (b >= 0) else -q


def _mod(a, b):
    return int(math.fmod(a, b))


_BINOPS: dict[str, Callable] = {
    "+": lambda a, b: a + b, "-": lambda a, b: a - b, "*": lambda a, b: a * b,
    "/": _div, "%": _mod, "**": lambda a, b: a ** b,
    "<<": lambda a, b: a << b, ">>": lambda a, b: a >> b,
    "<<<": lambda a, b: a << b, ">>>": lambda a, b: a >> b,
    "==": lambda a, b: int(a == b), "!=": lambda a, b: int(a != b),
    "===": lambda a, b: int(a == b), "!==": lambda a, b: int(a != b),
    "<": lambda a, b: int(a < b), "<=": lambda a, b: int(a <= b),
    ">": lambda a, b: int(a > b), ">=": lambda a, b: int(a >= b),
    "&&": lambda a, b: int(bool(a) and bool(b)), "||": lambda a, b: int(bool(a) or bool(b)),
    "&": lambda a, b: a & b, "|": lambda a, b: a | b, "^": lambda a, b: a ^ b,
    "~^": lambda a, b: ~(a ^ b), "^~": lambda a, b: ~(a ^ b),
}


def try_const(e, params) -> int | None:
    try:
        v = const_value(e, params)
    except NotConstant:
        return None
    return v
