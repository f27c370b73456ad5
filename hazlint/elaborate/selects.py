"""Bit and part selects, array words read through a multiplexer tree, and assignment targets
(variable indices as decoded alternatives, memory write ports). A mixin of
:class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

from .. import limits as _limits
from ..errors import ElaborationError
from ..findings.words import number
from .common import C0, C1, const_bits, expr_text, extend, where
from .scope import span


class Dyn:
    """A procedural assignment target: alternatives ``(condition, [net bits])`` of which the
    one whose condition holds is written (a variable index); one alternative with condition
    ``C1`` for a plain target."""

    __slots__ = ("width", "alts")

    def __init__(self, width: int, alts: list):
        self.width, self.alts = width, alts


class MemWrite:
    """A write into a memory kept as a memory node: word address bits and the word bit
    positions written."""

    __slots__ = ("memory", "addr", "positions", "width")

    def __init__(self, memory, addr, positions):
        self.memory, self.addr, self.positions = memory, addr, positions
        self.width = len(positions)


class SelectElaborator:
    """Selects and assignment targets."""

    # ---------------------------------------------------------------- selects (reading)
    def select_bits(self, e, scope, loc, env=None) -> list[str]:
        """Raw bits of a name, select, concatenation or replication (LSB first), read
        through ``env``."""
        tag = e[0]
        if tag == "id":
            info = scope.lookup(e[1])
            if info is None:
                return self.net_bits(scope, e[1], loc, implicit=False)
            if info.dims:
                raise ElaborationError(f"array '{e[1]}' is used without an index",
                                       *where(loc), construct=e[1])
            if env is None:
                return info.bits()
            return [self.read_bit(b, env) for b in info.bits()]
        if tag == "concat":
            out: list[str] = []
            for x in reversed(e[1]):
                out.extend(self.self_bits(x, scope, loc, env))
            return out
        if tag == "repl":
            n = self.const(e[1], scope, loc)
            one: list[str] = []
            for x in reversed(e[2]):
                one.extend(self.self_bits(x, scope, loc, env))
            _limits.check("vector_width", len(one) * max(n, 0),
                          f"the replication '{expr_text(e)[:60]}'", where(loc))
            return one * n
        if tag in ("bit", "part", "ipart"):
            return self._select(e, scope, loc, env)
        return self.self_bits(e, scope, loc, env)

    def _select(self, e, scope, loc, env):
        base, idxs, final = split_select(e)
        if base[0] != "id":
            raise self._unsupported("select of an expression", e, loc)
        name = base[1]
        info = scope.lookup(name)
        if info is None:
            return self._param_select(scope, name, idxs, final, e, loc)
        nd = len(info.dims or ())
        if len(idxs) < nd or len(idxs) > nd + 1 or (final is not None and len(idxs) != nd):
            raise ElaborationError(f"'{expr_text(e)}' does not select a word or bits of "
                                   f"'{name}' ({nd} array dimension(s))", *where(loc),
                                   construct=expr_text(e))
        rest = idxs[nd] if len(idxs) > nd else None

        def pick(word):
            if rest is not None:
                return self._vector_bit(word, rest, scope, loc, env, e)
            if final is not None:
                return self._vector_part(word, final, scope, loc, env)
            return [self.read_bit(b, env) for b in word.bits()]
        if not nd:
            return pick(info)
        if info.memory is not None:
            return self.memory_read(scope, info, idxs[:nd], pick, loc, env)
        return self._array_read(info, idxs[:nd], pick, scope, loc, env, [])

    def _array_read(self, info, idxs, pick, scope, loc, env, prefix):
        d = len(prefix)
        if d == len(idxs):
            return pick(info.word(prefix))
        dim = info.dims[d]
        k = self.const_try(idxs[d], scope, loc, env)
        if k is not None:
            if k not in dim:
                self.note(f"constant index {k} is outside the array '{info.base}': read as 0",
                          loc, scope.instance)
                return [C0] * len(pick(info.word([dm[0] for dm in info.dims])))
            return self._array_read(info, idxs, pick, scope, loc, env, prefix + [k])
        lo, hi = span(dim)
        words = [self._array_read(info, idxs, pick, scope, loc, env, prefix + [j])
                 for j in range(lo, hi + 1)]
        return self.select_words(scope, words, self._offset_index(idxs[d], lo, scope, loc, env),
                                 loc)

    def _offset_index(self, idx_e, lo: int, scope, loc, env) -> list[str]:
        """Bits of ``idx - lo`` (an index relative to the lowest declared index)."""
        sel = self.self_bits(idx_e, scope, loc, env)
        if lo:
            w = max(len(sel), lo.bit_length() + 1)
            sel = self.adder(scope, extend(sel, w), const_bits(lo & ((1 << w) - 1), w), loc,
                             subtract=True)[0]
        return sel

    def bit_name(self, info, k: int, scope, loc, env, e, writing=False) -> str | None:
        """Net bit ``info[k]``. Out of range: an error in a continuous assignment or port
        connection; inside a procedural block (``env`` given) Verilog reads x and ignores the
        write, so the read is 0 and the write dropped, with a note (None)."""
        if info.indices is None:
            if k == 0:
                return info.base
            what = f"bit select [{number(k)}] of scalar '{info.base}'"
        elif k in info.indices:
            return info.bit(k)
        else:
            what = f"bit [{number(k)}] is out of the range of '{info.base}'"
        if env is None:
            raise ElaborationError(what, *where(loc), construct=expr_text(e))
        effect = "the write is ignored" if writing else "read as 0"
        self.note(f"{what} in '{expr_text(e)}': {effect}", loc, scope.instance)
        return None

    def _vector_bit(self, info, idx_e, scope, loc, env, e):
        k = self.const_try(idx_e, scope, loc, env)
        if k is not None:
            b = self.bit_name(info, k, scope, loc, env, e)
            return [C0 if b is None else self.read_bit(b, env)]
        if info.indices is None:
            return [self.read_bit(info.base, env)]
        lo, hi = info.span()
        ordered = [[self.read_bit(info.bit(i), env)] for i in range(lo, hi + 1)]
        return self.select_words(scope, ordered, self._offset_index(idx_e, lo, scope, loc, env),
                                 loc)

    def _part_range(self, info, e, scope, loc, env):
        """(lsb index, msb index, width, variable base bits or None) of a part select."""
        if e[0] == "part":
            return self.const(e[3], scope, loc), self.const(e[2], scope, loc), None
        w = self.const(e[3], scope, loc)
        start = self.const_try(e[2], scope, loc, env)
        if start is None:
            return None, w, e
        lo, hi = (start, start + w - 1) if e[4] == "+" else (start - w + 1, start)
        big_endian = info.indices is not None and len(info.indices) > 1 and \
            info.indices[0] > info.indices[-1]
        return (hi, lo, None) if big_endian else (lo, hi, None)

    def _vector_part(self, info, e, scope, loc, env):
        a, b, var = self._part_range(info, e, scope, loc, env)
        if var is not None:
            return self._variable_part(info, var, b, scope, loc, env)
        return [C0 if n is None else self.read_bit(n, env)
                for n in self._part_names(info, a, b, scope, loc, env, e)]

    def _part_names(self, info, a, b, scope, loc, env, e, writing=False):
        _limits.check("vector_width", abs(b - a) + 1, f"the part select '{expr_text(e)[:60]}'",
                      where(loc))
        step = 1 if b >= a else -1
        return [self.bit_name(info, i, scope, loc, env, e, writing)
                for i in range(a, b + step, step)]

    def _variable_part(self, info, e, w, scope, loc, env):
        """``v[base +: w]`` / ``v[base -: w]`` with a variable base: a barrel shift of the
        bits ordered by index, then the low ``w`` bits."""
        idxs = info.indices or [0]
        lo, hi = info.span()
        ordered = [self.read_bit(info.bit(i) if info.indices else info.base, env)
                   for i in range(lo, hi + 1)]
        sel = self._offset_index(e[2], lo + (0 if e[4] == "+" else w - 1), scope, loc, env)
        out = self.barrel(scope, ordered + [C0] * w, sel, False, loc)[:w]
        if len(idxs) > 1 and idxs[0] > idxs[-1]:
            out.reverse()               # [0:7] vectors: the lowest index is the MSB
        return out

    def _param_select(self, scope, name, idxs, final, e, loc):
        try:
            v = scope.param(name)
        except KeyError:
            if scope.module.default_nettype == "none":
                raise ElaborationError(f"undeclared identifier '{name}'", *where(loc),
                                       construct=name) from None
            raise ElaborationError(f"undeclared identifier '{name}'", *where(loc),
                                   construct=name) from None
        v = int(v[0] if isinstance(v, tuple) else v)
        if final is not None:
            if final[0] == "part":
                lo, hi = sorted((self.const(final[3], scope, loc),
                                 self.const(final[2], scope, loc)))
            else:
                start = self.const(final[2], scope, loc)
                w = self.const(final[3], scope, loc)
                lo, hi = (start, start + w - 1) if final[4] == "+" else (start - w + 1, start)
            _limits.check("vector_width", hi - lo + 1, f"the part select of '{name[:60]}'",
                          where(loc))
            return [C1 if (v >> i) & 1 else C0 for i in range(lo, hi + 1)]
        if len(idxs) != 1:
            raise ElaborationError(f"'{expr_text(e)}' selects from a parameter", *where(loc),
                                   construct=expr_text(e))
        idx = self.const(idxs[0], scope, loc)
        return [C1 if (v >> idx) & 1 else C0]

    # ---------------------------------------------------------------- targets (writing)
    def targets(self, e, scope, loc, env=None, implicit=True) -> list:
        """Pieces of an assignment target, LSB first: :class:`Dyn` (net bits, possibly chosen
        by a variable index) or :class:`MemWrite` (a memory node's write port)."""
        tag = e[0]
        if tag == "id":
            info = scope.lookup(e[1])
            if info is not None and info.dims:
                raise ElaborationError(f"array '{e[1]}' is assigned without an index",
                                       *where(loc), construct=e[1])
            bits = self.net_bits(scope, e[1], loc, implicit=implicit)
            return [Dyn(len(bits), [(C1, bits)])]
        if tag == "concat":
            out: list = []
            for x in reversed(e[1]):
                out.extend(self.targets(x, scope, loc, env, implicit))
            return out
        if tag not in ("bit", "part", "ipart"):
            raise ElaborationError(f"'{expr_text(e)}' cannot be assigned to", *where(loc),
                                   construct=expr_text(e))
        base, idxs, final = split_select(e)
        if base[0] != "id":
            raise self._unsupported("assignment to a select of an expression", e, loc)
        info = scope.lookup(base[1])
        if info is None:
            self.net_bits(scope, base[1], loc, implicit=implicit)
            info = scope.lookup(base[1])
        nd = len(info.dims or ())
        if len(idxs) < nd or len(idxs) > nd + 1 or (final is not None and len(idxs) != nd):
            raise ElaborationError(f"'{expr_text(e)}' does not select a word or bits of "
                                   f"'{base[1]}'", *where(loc), construct=expr_text(e))
        rest = idxs[nd] if len(idxs) > nd else None
        if info.memory is not None:
            return [self.memory_target(scope, info, idxs[:nd], rest, final, loc, env)]
        words = self._word_alts(info, idxs[:nd], scope, loc, env, [], C1, e)
        alts = []
        for cond, word in words:
            for c2, bits in self._bit_alts(word, rest, final, scope, loc, env, e):
                c = cond if c2 == C1 else c2 if cond == C1 else self.gate(scope, "and",
                                                                         [cond, c2], loc)
                alts.append((c, bits))
        return [Dyn(self.expr_type(e, scope, loc)[0], alts)]

    def _word_alts(self, info, idxs, scope, loc, env, prefix, cond, e):
        d = len(prefix)
        if d == len(idxs):
            return [(cond, info.word(prefix) if idxs else info)]
        dim = info.dims[d]
        k = self.const_try(idxs[d], scope, loc, env)
        if k is not None:
            if k not in dim:
                what = f"index {k} is outside the array '{info.base}'"
                if env is None:
                    raise ElaborationError(what, *where(loc), construct=expr_text(idxs[d]))
                self.note(f"{what} in '{expr_text(e)}': the write is ignored", loc,
                          scope.instance)
                return []
            return self._word_alts(info, idxs, scope, loc, env, prefix + [k], cond, e)
        sel = self.self_bits(idxs[d], scope, loc, env)
        out = []
        for j in dim:
            c = self.equals_const(scope, sel, j, loc)
            if c == C0:
                continue
            c = c if cond == C1 else self.gate(scope, "and", [cond, c], loc)
            out.extend(self._word_alts(info, idxs, scope, loc, env, prefix + [j], c, e))
        return out

    def _bit_alts(self, info, rest, final, scope, loc, env, e):
        """Alternatives (condition, net bits) a bit or part select of ``info`` writes; a bit
        out of range is None (the write ignores it)."""
        if rest is None and final is None:
            return [(C1, info.bits())]
        if rest is not None:
            k = self.const_try(rest, scope, loc, env)
            if k is not None:
                return [(C1, [self.bit_name(info, k, scope, loc, env, e, True)])]
            if info.indices is None:
                return [(C1, [info.base])]
            sel = self.self_bits(rest, scope, loc, env)
            return [(c, [info.bit(i)]) for i in info.indices
                    if (c := self.equals_const(scope, sel, i, loc)) != C0]
        a, b, var = self._part_range(info, final, scope, loc, env)
        if var is None:
            return [(C1, self._part_names(info, a, b, scope, loc, env, e, True))]
        w = b
        sel = self.self_bits(final[2], scope, loc, env)
        out = []
        idxs = info.indices or range(1)
        first, last = info.span()
        for start in range(first - w + 1, last + w):
            lo, hi = (start, start + w - 1) if final[4] == "+" else (start - w + 1, start)
            c = self.equals_const(scope, sel, start, loc)
            if c == C0:
                continue
            span = [info.bit(i) if first <= i <= last else None for i in range(lo, hi + 1)]
            if idxs[0] > idxs[-1]:
                span.reverse()
            out.append((c, span))
        return out

    def lvalue_bits(self, e, scope, loc, reading: bool = False, env=None) -> list[str]:
        """Net bits named by ``e``: its value when ``reading``, else the bits a continuous
        assignment or port connection drives (constant selects only)."""
        if reading:
            return self.select_bits(e, scope, loc, env)
        out: list[str] = []
        for piece in self.targets(e, scope, loc, env):
            if not isinstance(piece, Dyn) or len(piece.alts) != 1 or piece.alts[0][0] != C1:
                # Verilog allows a variable index only in procedural assignments
                raise ElaborationError(f"'{expr_text(e)}' selects with a variable index or "
                                       "writes a memory outside an always block", *where(loc),
                                       construct=expr_text(e))
            out.extend(piece.alts[0][1])
        return out


def index_chain(e):
    """``a[i][j]`` -> (``a``, [i, j])."""
    idxs = []
    while e[0] == "bit":
        idxs.append(e[2])
        e = e[1]
    idxs.reverse()
    return e, idxs


def split_select(e):
    """(base, [bit indices], final part select or None) of a bit or part select ``e``: the
    chain of ``[i]`` selects under a trailing part select, if any.

    >>> split_select(("part", ("bit", ("id", "mem"), ("num", None, 3, 0, False)), 7, 0))
    (('id', 'mem'), [('num', None, 3, 0, False)], ('part', ('bit', ('id', 'mem'), ('num', None, 3, 0, False)), 7, 0))
    """
    if e[0] == "bit":
        base, idxs = index_chain(e)
        return base, idxs, None
    base, idxs = index_chain(e[1])
    return base, idxs, e

