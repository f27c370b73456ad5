"""Constant-expression evaluation over IR expressions (parameters, ranges, genvars, delays).

Integers are exact (Python ints), with the rules of IEEE 1364-2005 5.1 for the operators that
Python defines differently (from memory of the standard's tables):

* ``/`` truncates toward zero; ``%`` takes the sign of the first operand; both by zero have no
  defined integer value (x) and are an error here;
* integer ``a ** b`` with ``b`` negative is 1 for ``a == 1``, +-1 for ``a == -1``, 0 for
  ``|a| > 1`` and x (an error) for ``a == 0``; a negative real raised to a fractional power has
  no real value (an error);
* a negative shift amount is an error (the standard reads the amount as unsigned, which makes a
  negative constant a shift by about four thousand million places: never what was meant).

Values are bounded (:mod:`hazlint.limits`): an intermediate integer wider than ``const_bits``
is refused *before* it is computed, so ``2**(2**40)`` costs nothing; a real that overflows or
is not a number is an error. Every error is an :class:`~hazlint.errors.ElaborationError`
carrying the ``where`` location given by the caller (the flattener adds the location of the
item being elaborated when a caller had none).
"""
from __future__ import annotations

import math
from typing import Callable, Mapping

from .. import limits as _limits
from ..errors import ElaborationError
from ..findings.words import number


class NotConstant(Exception):
    """The expression depends on something that is not a parameter or constant."""


class _Refused(Exception):
    """An operation with no defined value (the message says why)."""


def const_value(e, params: Mapping[str, object], where=None, call=None):
    """Evaluate ``e`` to an int (or float for real constants).

    ``params`` maps parameter and genvar names to values. ``call(name, values)`` evaluates
    calls of other functions (constant user functions, constant system functions); without it
    they are not constant. Raises :class:`NotConstant` when ``e`` reads a net, and
    :class:`ElaborationError` (at ``where``: ``(path, line[, column])``) for unsupported
    operators and values without a definition (division by zero, ...).
    """
    try:
        return _eval(e, params, where, _limits.current().const_bits, call)
    except _Refused as exc:
        raise ElaborationError(f"{exc} in constant expression", *(where or ())) from None
    except OverflowError:
        raise ElaborationError("a real value in a constant expression overflows",
                               *(where or ())) from None
    except _limits.LimitExceeded as exc:
        if not exc.path and where:
            exc.path, exc.line = where[0], where[1]
        raise


def _eval(e, params, where, max_bits: int, call=None):
    tag = e[0]
    if tag == "num":
        _, width, value, xz, _signed = e
        if xz:
            raise NotConstant("x/z bits")
        return value
    if tag == "real":
        if not math.isfinite(e[1]):
            # a literal beyond the range of a double (1e400): no value to compute with
            raise _Refused("a real literal too large for a double-precision number")
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
        op, a = e[1], _eval(e[2], params, where, max_bits, call)
        if op == "-":
            return -a
        if op == "+":
            return a
        if op == "!":
            return int(not a)
        if op == "~":
            if isinstance(a, float):
                raise _Refused("'~' of a real value")
            return ~a
        if op in ("&", "|", "^", "~&", "~|", "~^", "^~"):
            raise NotConstant("reduction of an unsized constant")
        raise ElaborationError(f"unsupported operator '{op}' in constant expression",
                               *(where or ()))
    if tag == "binop":
        op = e[1]
        a = _eval(e[2], params, where, max_bits, call)
        b = _eval(e[3], params, where, max_bits, call)
        fn = _BINOPS.get(op)
        if fn is None:
            raise ElaborationError(f"unsupported operator '{op}' in constant expression",
                                   *(where or ()))
        _bound(op, a, b, max_bits)
        v = fn(a, b)
        if isinstance(v, float) and not math.isfinite(v):
            raise _Refused(f"'{op}' gives a real value that is not finite")
        return v
    if tag == "cond":
        return _eval(e[2] if _eval(e[1], params, where, max_bits, call) else e[3], params,
                     where, max_bits, call)
    if tag == "call":
        name, args = e[1], e[2]
        vals = [_eval(a, params, where, max_bits, call) for a in args]
        if name == "$clog2":
            if not vals:
                raise _Refused("$clog2 needs an argument")
            v = _to_int(vals[0], "$clog2 argument")
            return 0 if v <= 1 else (v - 1).bit_length()
        if name in ("$unsigned", "$signed") and vals:
            return vals[0]
        if call is not None:
            return call(name, vals)
        raise NotConstant(name)
    if tag == "concat":
        raise NotConstant("concatenation")
    raise NotConstant(tag)


def _to_int(v, what: str) -> int:
    if isinstance(v, float):
        if not math.isfinite(v):
            raise _Refused(f"{what} is not a finite number")
        return int(v)
    return v


def _bits(v) -> int:
    return v.bit_length() if isinstance(v, int) else 0


def _bound(op: str, a, b, max_bits: int) -> None:
    """Refuse an integer result wider than ``max_bits`` before computing it."""
    if isinstance(a, float) or isinstance(b, float):
        return
    if op == "*":
        need = _bits(a) + _bits(b)
    elif op == "**":
        need = _bits(a) * b if b > 0 and abs(a) > 1 else 0
    elif op in ("<<", "<<<"):
        if b < 0:
            raise _Refused(f"negative shift amount {number(b)}")
        need = _bits(a) + b if a else 0
    elif op in (">>", ">>>"):
        if b < 0:
            raise _Refused(f"negative shift amount {number(b)}")
        return
    else:
        need = max(_bits(a), _bits(b)) + 1
    if need > max_bits:
        raise _limits.LimitExceeded(
            "const_bits", f"the size in bits of the value of '{op}' in a constant expression",
            value=need)


def _div(a, b):
    if b == 0:
        raise _Refused("division by zero")
    if isinstance(a, float) or isinstance(b, float):
        return a / b
    q = abs(a) // abs(b)
    return q if (a >= 0) == (b >= 0) else -q


def _mod(a, b):
    if b == 0:
        raise _Refused("modulo by zero")
    if isinstance(a, float) or isinstance(b, float):
        return math.fmod(a, b)
    r = abs(a) % abs(b)
    return r if a >= 0 else -r


def _pow(a, b):
    if isinstance(a, float) or isinstance(b, float):
        if a < 0 and not float(b).is_integer():
            raise _Refused("a negative value raised to a fractional power")
        if a == 0 and b < 0:
            raise _Refused("zero raised to a negative power")
        return float(a) ** float(b)
    if b >= 0:
        return a ** b
    if a == 0:
        raise _Refused("zero raised to a negative power")
    if a == 1:
        return 1
    if a == -1:
        return 1 if b % 2 == 0 else -1
    return 0


def _shl(a, b):
    if isinstance(a, float) or isinstance(b, float):
        raise _Refused("a shift of a real value")
    return a << b


def _shr(a, b):
    if isinstance(a, float) or isinstance(b, float):
        raise _Refused("a shift of a real value")
    return a >> b


def _bitwise(fn):
    def op(a, b):
        if isinstance(a, float) or isinstance(b, float):
            raise _Refused("a bitwise operator on a real value")
        return fn(a, b)
    return op


_BINOPS: dict[str, Callable] = {
    "+": lambda a, b: a + b, "-": lambda a, b: a - b, "*": lambda a, b: a * b,
    "/": _div, "%": _mod, "**": _pow,
    "<<": _shl, ">>": _shr, "<<<": _shl, ">>>": _shr,
    "==": lambda a, b: int(a == b), "!=": lambda a, b: int(a != b),
    "===": lambda a, b: int(a == b), "!==": lambda a, b: int(a != b),
    "<": lambda a, b: int(a < b), "<=": lambda a, b: int(a <= b),
    ">": lambda a, b: int(a > b), ">=": lambda a, b: int(a >= b),
    "&&": lambda a, b: int(bool(a) and bool(b)), "||": lambda a, b: int(bool(a) or bool(b)),
    "&": _bitwise(lambda a, b: a & b), "|": _bitwise(lambda a, b: a | b),
    "^": _bitwise(lambda a, b: a ^ b),
    "~^": _bitwise(lambda a, b: ~(a ^ b)), "^~": _bitwise(lambda a, b: ~(a ^ b)),
}
