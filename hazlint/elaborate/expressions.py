"""Verilog expressions to gates, with the sizing and signedness rules of IEEE 1364-2005.

* 5.4.1 (expression bit lengths): each operator's result width (table 5-22); operands of
  context-determined operators are first extended to the width of the whole expression, which
  for an assignment is the larger of the left- and right-hand sides (5.4.2); shift amounts,
  conditions, reduction and logical operands, concatenation members and index expressions are
  self-determined.
* 5.5 (signed expressions): an expression is signed only when every context-determined operand
  is signed; bit and part selects and concatenations are unsigned; ``$signed`` / ``$unsigned``
  change the type; a signed operand is sign-extended, an unsigned one zero-extended (5.5.2);
  ``>>>`` fills with the sign bit of a signed operand (5.1.12); ``<`` ... compare signed values
  when both operands are signed.
* 4.9.3 / 5.2 (arrays): ``ram[i]`` selects a word of a memory or multi-dimensional array, with
  further ``[...]`` selecting bits of the word; a variable index reads through a multiplexer
  tree and writes through decoded conditions (see :mod:`.behaviour`).

A mixin of :class:`hazlint.elaborate.elaborator.Elaborator` (it uses ``net_bits``, ``const``, ``note``,
``gate`` and the structures of :class:`~.gates.GateBuilder`).
"""
from __future__ import annotations

import math

from .consteval import NotConstant, const_value
from .. import limits as _limits
from ..errors import ElaborationError
from .common import C0, C1, BlackBoxModule, const_bits, expr_text, extend, shift, where
from .selects import index_chain

_ARITH = frozenset(("+", "-", "*", "/", "%", "&", "|", "^", "~^", "^~"))
_SHIFTS = frozenset(("<<", ">>", "<<<", ">>>", "**"))
_COMPARE = frozenset(("==", "!=", "===", "!==", "<", "<=", ">", ">="))
_BITWISE = {"&": "and", "|": "or", "^": "xor", "~^": "xnor", "^~": "xnor"}
_REDUCE = {"&": ("and", False), "|": ("or", False), "^": ("xor", False),
           "~&": ("and", True), "~|": ("or", True), "~^": ("xor", True), "^~": ("xor", True)}


def bits_value(bits: list[str], signed: bool = False) -> int | None:
    """The integer a list of constant bits stands for; None when a bit is not constant."""
    v = 0
    for i, b in enumerate(bits):
        if b == C1:
            v |= 1 << i
        elif b != C0:
            return None
    if signed and bits and bits[-1] == C1:
        v -= 1 << len(bits)
    return v


class ExpressionElaborator:
    """Expression typing (:meth:`expr_type`), evaluation to gates (:meth:`bits`) and targets
    of assignments (:meth:`targets`)."""

    const_bits = staticmethod(const_bits)

    _tmemo: dict | None = None

    # ---------------------------------------------------------------- types
    def param_type(self, scope, name: str):
        s = scope
        while s is not None:
            if name in s.params:
                t = s.ptypes.get(name)
                if t is not None:
                    return t
                v = s.params[name]
                v = v[0] if isinstance(v, tuple) else v
                return (max(32, int(v).bit_length() + 1) if isinstance(v, int) else 32, True)
            s = s.parent
        return None

    def expr_type(self, e, scope, loc) -> tuple[int, bool]:
        """Self-determined (width, signed) of ``e`` (IEEE 1364-2005 table 5-22, 5.5.1)."""
        memo = self._tmemo            # open while one expression is being evaluated
        if memo is None:
            return self._expr_type(e, scope, loc)
        key = (id(e), id(scope))
        hit = memo.get(key)
        if hit is not None and hit[0] is e and hit[1] is scope:
            return hit[2]
        t = self._expr_type(e, scope, loc)
        memo[key] = (e, scope, t)
        return t

    def _expr_type(self, e, scope, loc):
        tag = e[0]
        if tag == "num":
            w = e[1]
            return (w if w else max(32, e[2].bit_length()), bool(e[4]))
        if tag == "id":
            info = scope.lookup(e[1])
            if info is not None:
                if info.dims:
                    raise ElaborationError(f"array '{e[1]}' is used without an index",
                                           *where(loc), construct=e[1])
                return (1 if info.indices is None else len(info.indices), info.signed)
            t = self.param_type(scope, e[1])
            return t if t is not None else (1, False)
        if tag == "bit":
            base, idxs = index_chain(e)
            info = scope.lookup(base[1]) if base[0] == "id" else None
            if info is not None and info.dims and len(idxs) == len(info.dims):
                return (1 if info.indices is None else len(info.indices), info.signed)
            return (1, False)
        if tag == "part":
            return (abs(self.const(e[2], scope, loc) - self.const(e[3], scope, loc)) + 1, False)
        if tag == "ipart":
            return (self.const(e[3], scope, loc), False)
        if tag == "concat":
            return (sum(self.expr_type(x, scope, loc)[0] for x in e[1]), False)
        if tag == "repl":
            return (self.const(e[1], scope, loc) *
                    sum(self.expr_type(x, scope, loc)[0] for x in e[2]), False)
        if tag == "unop":
            if e[1] in ("~", "-", "+"):
                return self.expr_type(e[2], scope, loc)
            return (1, False)
        if tag == "binop":
            op = e[1]
            if op in _ARITH:
                a = self.expr_type(e[2], scope, loc)
                b = self.expr_type(e[3], scope, loc)
                return (max(a[0], b[0]), a[1] and b[1])
            if op in _SHIFTS:
                return self.expr_type(e[2], scope, loc)
            return (1, False)
        if tag == "cond":
            a = self.expr_type(e[2], scope, loc)
            b = self.expr_type(e[3], scope, loc)
            return (max(a[0], b[0]), a[1] and b[1])
        if tag == "call":
            name = e[1]
            if name in ("$signed", "$unsigned"):
                return (self.expr_type(e[2][0], scope, loc)[0], name == "$signed")
            if name.startswith("$"):
                return (32, True)
            fn = self.find_function(scope, name)
            if fn is None:
                raise ElaborationError(f"unknown function '{name}'", *where(loc),
                                       construct=name)
            return self.function_type(fn[0], fn[1], loc)
        if tag == "str":
            return (max(8, 8 * len(e[1])), False)
        raise self._unsupported(f"expression '{tag}'", e, loc)

    def width(self, e, scope, loc) -> int:
        return self.expr_type(e, scope, loc)[0]

    # ---------------------------------------------------------------- evaluation
    def bits(self, e, scope, loc, W: int | None = None, env=None) -> list[str]:
        """Bit-blast ``e`` to ``W`` signals (LSB first), creating gates as needed. The
        expression is evaluated at the larger of ``W`` and its own width with its own
        signedness (assignment semantics, 5.4.2), then truncated to ``W``. ``env`` maps net
        bits to their current values inside a procedural block."""
        top = self._tmemo is None
        if top:
            self._tmemo = {}
        try:
            w, signed = self.expr_type(e, scope, loc)
            if W is None:
                W = w
            if max(W, w) > self._max_width:
                _limits.check("vector_width", max(W, w), f"the width of '{expr_text(e)[:60]}'",
                              where(loc))
            return self.eval_bits(e, scope, loc, max(W, w), signed, env)[:W]
        finally:
            if top:
                self._tmemo = None

    def self_bits(self, e, scope, loc, env=None) -> list[str]:
        """``e`` at its self-determined width and signedness."""
        return self.bits(e, scope, loc, None, env)

    def truth(self, e, scope, loc, env=None) -> str:
        """A condition: the OR of the bits of ``e`` (true when any bit is 1)."""
        return self.reduce(scope, "or", self.bits(e, scope, loc, None, env), loc)

    def eval_bits(self, e, scope, loc, W: int, signed: bool, env) -> list[str]:
        """``e`` at context width ``W`` and expression type ``signed`` (5.4.1, 5.5.2)."""
        tag = e[0]
        if tag == "num":
            _, width, value, xz, lit_signed = e
            if xz:
                self.note("x/z bits in a constant are taken as 0 for analysis", loc,
                          scope.instance)
                value &= ~xz
            w = width or max(32, value.bit_length())
            if signed and lit_signed and (value >> (w - 1)) & 1:
                value -= 1 << w
            return const_bits(value & ((1 << W) - 1), W)
        if tag == "str":
            value = int.from_bytes(e[1].encode("latin-1", "replace"), "big")
            return const_bits(value, W)
        if tag in ("id", "bit", "part", "ipart", "concat", "repl"):
            return extend(self.select_bits(e, scope, loc, env), W, signed)
        if tag == "unop":
            op = e[1]
            if op == "~":
                return [self.logic_not(scope, b, loc)
                        for b in self.eval_bits(e[2], scope, loc, W, signed, env)]
            if op == "+":
                return self.eval_bits(e[2], scope, loc, W, signed, env)
            if op == "-":
                return self.negate(scope, self.eval_bits(e[2], scope, loc, W, signed, env), loc)
            if op == "!":
                r = self.truth(e[2], scope, loc, env)
                return extend([self.logic_not(scope, r, loc)], W)
            if op in _REDUCE:
                g, inv = _REDUCE[op]
                r = self.reduce(scope, g, self.self_bits(e[2], scope, loc, env), loc)
                return extend([self.logic_not(scope, r, loc) if inv else r], W)
            raise self._unsupported(f"operator '{op}'", e, loc)
        if tag == "binop":
            return self._binop(e, scope, loc, W, signed, env)
        if tag == "cond":
            c = self.truth(e[1], scope, loc, env)
            if c == C1:
                return self.eval_bits(e[2], scope, loc, W, signed, env)
            if c == C0:
                return self.eval_bits(e[3], scope, loc, W, signed, env)
            a = self.eval_bits(e[2], scope, loc, W, signed, env)
            b = self.eval_bits(e[3], scope, loc, W, signed, env)
            return self.mux_bits(scope, c, a, b, loc)
        if tag == "call":
            name = e[1]
            if name in ("$signed", "$unsigned"):
                return extend(self.self_bits(e[2][0], scope, loc, env), W, signed)
            if name.startswith("$"):
                try:
                    v = self.const_expr(e, scope, loc)
                except NotConstant:
                    raise self._unsupported(f"system function '{name}' of a signal", e,
                                            loc) from None
                return const_bits(int(v) & ((1 << W) - 1), W)
            return extend(self.call_function(scope, name, e[2], loc, env), W, signed)
        if tag == "real":
            raise self._unsupported("real constant", e, loc)
        raise self._unsupported(f"expression '{tag}'", e, loc)

    def _binop(self, e, scope, loc, W, signed, env):
        op = e[1]
        if op in _BITWISE:
            a = self.eval_bits(e[2], scope, loc, W, signed, env)
            b = self.eval_bits(e[3], scope, loc, W, signed, env)
            g = _BITWISE[op]
            return [self.gate(scope, g, [x, y], loc) for x, y in zip(a, b)]
        if op in ("&&", "||"):
            a = self.truth(e[2], scope, loc, env)
            if (op == "&&" and a == C0) or (op == "||" and a == C1):
                return extend([a], W)
            b = self.truth(e[3], scope, loc, env)
            return extend([self.gate(scope, "and" if op == "&&" else "or", [a, b], loc)], W)
        if op in ("+", "-"):
            a = self.eval_bits(e[2], scope, loc, W, signed, env)
            b = self.eval_bits(e[3], scope, loc, W, signed, env)
            return self.adder(scope, a, b, loc, subtract=(op == "-"))[0]
        if op == "*":
            a = self.eval_bits(e[2], scope, loc, W, signed, env)
            b = self.eval_bits(e[3], scope, loc, W, signed, env)
            return self.multiplier(scope, a, b, W, loc)
        if op in ("/", "%"):
            a = self.eval_bits(e[2], scope, loc, W, signed, env)
            b = self.eval_bits(e[3], scope, loc, W, signed, env)
            q, r = self.divider(scope, a, b, loc, signed)
            return q if op == "/" else r
        if op in _COMPARE:
            ta = self.expr_type(e[2], scope, loc)
            tb = self.expr_type(e[3], scope, loc)
            w, sg = max(ta[0], tb[0]), ta[1] and tb[1]
            a = self.eval_bits(e[2], scope, loc, w, sg, env)
            b = self.eval_bits(e[3], scope, loc, w, sg, env)
            return extend([self.compare(scope, op, a, b, loc, signed=sg)], W)
        if op in ("<<", ">>", "<<<", ">>>"):
            a = self.eval_bits(e[2], scope, loc, W, signed, env)
            left = op in ("<<", "<<<")
            fill = a[-1] if (op == ">>>" and signed and a) else C0
            amt = self.self_bits(e[3], scope, loc, env)       # always unsigned (5.1.12)
            n = bits_value(amt)
            if n is not None:
                return shift(a, n, left, fill)
            return self.barrel(scope, a, amt, left, loc, fill)
        if op == "**":
            try:
                return const_bits(int(self.const_expr(e, scope, loc)) & ((1 << W) - 1), W)
            except NotConstant:
                pass
            base = self.const_try(e[2], scope, loc, env)
            if base == 2:
                one = const_bits(1, W)
                amt = self.self_bits(e[3], scope, loc, env)
                return self.barrel(scope, one, amt, True, loc)
            raise self._unsupported("operator '**' on signals (other than 2 ** n)", e, loc)
        raise self._unsupported(f"operator '{op}'", e, loc)

    # ---------------------------------------------------------------- constants
    def const_expr(self, e, scope, loc):
        """Value of a constant expression (parameters, constant functions, constant system
        functions); raises NotConstant."""
        return const_value(e, scope.all_params(), where(loc),
                           call=lambda name, args: self.const_call(scope, name, args, loc))

    def const_try(self, e, scope, loc, env=None) -> int | None:
        """``e`` as an integer when it is constant here (parameters, or variables that hold
        constants, such as loop indices); None otherwise."""
        try:
            v = self.const_expr(e, scope, loc)
            return int(v)
        except NotConstant:
            pass
        if env is None:
            return None
        w, sg = self.expr_type(e, scope, loc)
        return bits_value(self.eval_bits(e, scope, loc, w, sg, env), sg)

    def const_call(self, scope, name: str, args: list, loc):
        """A call in a constant expression: a constant system function or a constant user
        function (IEEE 1364-2005 10.4.5), run on constant arguments."""
        if name.startswith("$"):
            return _system_function(name, args)
        fn = self.find_function(scope, name)
        if fn is None:
            raise NotConstant(name)
        fdef, fscope = fn
        argexprs = [("num", None, int(a), 0, True) if isinstance(a, int) else None for a in args]
        if any(a is None for a in argexprs):
            raise NotConstant(name)
        out = self.call_function(scope, name, argexprs, loc, None)
        v = bits_value(out, self.function_type(fdef, fscope, loc)[1])
        if v is None:
            raise NotConstant(name)
        return v

    def _unsupported(self, what: str, e, loc) -> BlackBoxModule:
        return BlackBoxModule(f"{what} cannot be turned into gates (in '{expr_text(e)}')", loc)


def _system_function(name: str, args: list):
    """The constant system functions of IEEE 1364-2005 17.11 ($clog2, math) and 17.8
    (conversions)."""
    a = [float(x) if isinstance(x, float) else x for x in args]
    if name == "$clog2":
        v = int(a[0])
        return 0 if v <= 1 else (v - 1).bit_length()
    if name == "$rtoi":
        return int(a[0])
    if name == "$itor":
        return float(a[0])
    one = {"$ln": math.log, "$log10": math.log10, "$exp": math.exp, "$sqrt": math.sqrt,
           "$floor": math.floor, "$ceil": math.ceil, "$sin": math.sin, "$cos": math.cos,
           "$tan": math.tan, "$asin": math.asin, "$acos": math.acos, "$atan": math.atan,
           "$sinh": math.sinh, "$cosh": math.cosh, "$tanh": math.tanh, "$asinh": math.asinh,
           "$acosh": math.acosh, "$atanh": math.atanh}
    if name in one:
        r = one[name](a[0])
        return float(r)
    two = {"$pow": math.pow, "$atan2": math.atan2, "$hypot": math.hypot}
    if name in two:
        return float(two[name](a[0], a[1]))
    raise NotConstant(name)
