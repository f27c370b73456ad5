"""Gate structures that operators and statements become: reductions, multiplexers, ripple-carry
adders, array multipliers, restoring dividers, comparators, barrel shifters, word selectors.

A mixin of :class:`hazlint.elaborate.elaborator.Elaborator`: every structure is built from ``self.gate``
(a decomposed gate of the default delay, constants folded). Bit lists are LSB first. These
are the textbook structures a synthesis tool maps such operators to before optimisation
(ripple-carry addition, shift-and-add multiplication, restoring division: e.g. Hennessy and
Patterson, *Computer Organization and Design*, chapter 3); their timing is what a designer
reads in the gate graph.
"""
from __future__ import annotations

from .common import C0, C1, shift


class GateBuilder:
    """Gate structures over signals (``self.gate`` creates one gate, folding constants)."""

    def reduce(self, scope, op: str, bits: list[str], loc) -> str:
        if len(bits) == 1:
            return bits[0]
        return self.gate(scope, op, bits, loc)

    def logic_not(self, scope, x: str, loc) -> str:
        return self.gate(scope, "not", [x], loc)

    def xor2(self, scope, a: str, b: str, loc) -> str:
        """a ^ b without gates on constant inputs (x ^ 0 = x, x ^ 1 = ~x)."""
        if b in (C0, C1):
            a, b = b, a
        if a == C0:
            return b
        if a == C1:
            return self.logic_not(scope, b, loc)
        return self.gate(scope, "xor", [a, b], loc)

    def xnor2(self, scope, a: str, b: str, loc) -> str:
        """~(a ^ b) without gates on constant inputs."""
        if b in (C0, C1):
            a, b = b, a
        if a == C1:
            return b
        if a == C0:
            return self.logic_not(scope, b, loc)
        return self.gate(scope, "xnor", [a, b], loc)

    def mux_bits(self, scope, c: str, a: list[str], b: list[str], loc) -> list[str]:
        """``c ? a : b`` bit by bit: an atomic mux node per bit, or one AND/OR gate (and one
        inverter for the select) where a data input is constant, which has the same ternary
        extension as the mux with that constant."""
        if c == C1:
            return list(a)
        if c == C0:
            return list(b)
        nc = None
        out = []
        for x, y in zip(a, b):
            if x == y:
                out.append(x)
            elif x == C1 and y == C0:
                out.append(c)
            elif x == C1 or y == C0:            # c | y, c & x
                out.append(self.gate(scope, "or" if x == C1 else "and", [c, y if x == C1 else x],
                                     loc))
            else:
                if nc is None:
                    nc = self.logic_not(scope, c, loc)
                if x == C0 or y == C1:          # ~c & y, ~c | x
                    out.append(self.gate(scope, "and" if x == C0 else "or",
                                         [nc, y if x == C0 else x], loc))
                    continue
                # one atomic mux node (see hazlint.analysis.cellmodel): `?:`, if/else and a mux
                # cell get the same verdict
                out.append(self.gate(scope, "mux", [c, x, y], loc))
        return out

    # ---------------------------------------------------------------- arithmetic
    def adder(self, scope, a, b, loc, subtract=False, carry_in=None):
        """Ripple-carry adder (a + b, or a - b as a + ~b + 1): returns (sum bits, carry out)."""
        carry = carry_in if carry_in is not None else (C1 if subtract else C0)
        out = []
        for x, y in zip(a, b):
            if subtract:
                y = self.logic_not(scope, y, loc)
            p = self.xor2(scope, x, y, loc)
            out.append(self.xor2(scope, p, carry, loc))
            g1 = self.gate(scope, "and", [x, y], loc)
            g2 = self.gate(scope, "and", [p, carry], loc)
            carry = self.gate(scope, "or", [g1, g2], loc)
        return out, carry

    def negate(self, scope, a, loc) -> list[str]:
        return self.adder(scope, [C0] * len(a), a, loc, subtract=True)[0]

    def multiplier(self, scope, a, b, W, loc):
        """Array multiplier truncated to W bits: shift-and-add of partial products. With both
        operands extended to W bits the low W bits are right for signed and unsigned."""
        acc = [C0] * W
        for j, bj in enumerate(b[:W]):
            if bj == C0:
                continue
            pp = [C0] * j + [self.gate(scope, "and", [ai, bj], loc) for ai in a[:W - j]]
            acc = self.adder(scope, acc, pp, loc)[0]
        return acc

    def divider(self, scope, a, b, loc, signed=False):
        """Restoring division of W-bit operands: (quotient, remainder). Signed operands are
        divided as magnitudes; the quotient is negated when the signs differ and the remainder
        takes the sign of the dividend (IEEE 1364-2005 5.1.6). Division by zero gives what the
        structure gives (Verilog says x: a don't-care for analysis)."""
        W = len(a)
        if signed and W:
            sa, sb = a[-1], b[-1]
            a = self.mux_bits(scope, sa, self.negate(scope, a, loc), a, loc)
            b = self.mux_bits(scope, sb, self.negate(scope, b, loc), b, loc)
        rem = [C0] * (W + 1)
        bx = list(b) + [C0]
        quot = [C0] * W
        for i in reversed(range(W)):
            rem = [a[i]] + rem[:W]
            diff, carry = self.adder(scope, rem, bx, loc, subtract=True)
            quot[i] = carry                   # no borrow: rem >= b
            rem = self.mux_bits(scope, carry, diff, rem, loc)
        rem = rem[:W]
        if signed and W:
            qneg = self.xor2(scope, sa, sb, loc)
            quot = self.mux_bits(scope, qneg, self.negate(scope, quot, loc), quot, loc)
            rem = self.mux_bits(scope, sa, self.negate(scope, rem, loc), rem, loc)
        return quot, rem

    def compare(self, scope, op, a, b, loc, signed=False) -> str:
        """Equality, or magnitude by the borrow of a - b (signed: most significant bits
        inverted, which maps two's complement order onto unsigned order)."""
        if op in ("==", "===", "!=", "!=="):
            eqs = [self.xnor2(scope, x, y, loc) for x, y in zip(a, b)]
            eq = self.reduce(scope, "and", eqs, loc) if eqs else C1
            return eq if op in ("==", "===") else self.logic_not(scope, eq, loc)
        if signed and a:
            a = a[:-1] + [self.logic_not(scope, a[-1], loc)]
            b = b[:-1] + [self.logic_not(scope, b[-1], loc)]
        if op in (">", "<="):
            a, b = b, a          # a > b  <=>  b < a
        # a < b  <=>  borrow out of a - b
        _, carry = self.adder(scope, a, b, loc, subtract=True)
        lt = self.logic_not(scope, carry, loc)
        return lt if op in ("<", ">") else self.logic_not(scope, lt, loc)

    def barrel(self, scope, a, amt, left, loc, fill: str = C0):
        """Logarithmic shifter: stage k shifts by 2**k when amount bit k is set; ``fill``
        enters on the right shift (the sign bit for ``>>>`` on a signed operand)."""
        cur = list(a)
        W = len(cur)
        big = []
        for k, s in enumerate(amt):
            if s == C0:
                continue
            if (1 << k) >= W:
                big.append(s)           # any of these shifts everything out
                continue
            cur = self.mux_bits(scope, s, shift(cur, 1 << k, left, fill), cur, loc)
        if big:
            out = self.reduce(scope, "or", big, loc)
            cur = self.mux_bits(scope, out, [fill if not left else C0] * W, cur, loc)
        return cur

    # ---------------------------------------------------------------- selection
    def select_words(self, scope, words: list[list[str]], sel: list[str], loc,
                     pad: list[str] | None = None) -> list[str]:
        """``words[sel]`` for a variable ``sel`` (unsigned, LSB first) as a tree of
        multiplexers over the select bits; positions past the end read ``pad`` (zeros)."""
        if not words:
            return list(pad or [])
        width = len(words[0])
        pad = pad if pad is not None else [C0] * width
        level = [list(w) for w in words]
        for s in sel:
            if len(level) == 1:
                # remaining select bits must be 0 to stay inside the array
                level = [self.mux_bits(scope, s, pad, level[0], loc)]
                continue
            nxt = []
            for i in range(0, len(level), 2):
                lo = level[i]
                hi = level[i + 1] if i + 1 < len(level) else pad
                nxt.append(self.mux_bits(scope, s, hi, lo, loc))
            level = nxt
        return level[0]

    def select_mux(self, scope, whole: list[str], sel: list[str], loc) -> str:
        """``whole[sel]`` for one-bit entries (positions past the end read 0)."""
        return self.select_words(scope, [[b] for b in whole], sel, loc, [C0])[0]

    def equals_const(self, scope, bits: list[str], value: int, loc) -> str:
        """``bits == value`` (a decoder term): C0 when the value does not fit."""
        if value < 0 or value >> len(bits):
            return C0
        terms = []
        for i, b in enumerate(bits):
            want = (value >> i) & 1
            if b in (C0, C1):
                if (b == C1) != bool(want):
                    return C0
                continue
            terms.append(b if want else self.logic_not(scope, b, loc))
        return self.reduce(scope, "and", terms, loc) if terms else C1
