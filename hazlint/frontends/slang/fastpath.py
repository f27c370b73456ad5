"""The bulk of a gate-level netlist read from slang's token text instead of node by node.

A synthesised netlist is hundreds of thousands of statements of four shapes: a gate or cell
instance with plain connections, a ``wire`` / ``input`` / ``output`` list of names, and
``assign a = b;``. Asking pyslang for every node and token of each costs a few microseconds
per Python call; printing a member (``str(node)``: its tokens as slang lexed them, with their
trivia) costs one call, and a regular expression over that text finds the same names.

It is used only where it cannot disagree with the syntax walk:

* the member kinds are slang's (this reads only what slang already parsed as an instance,
  a net or port declaration, a continuous assignment);
* the members' text, joined, equals the source buffer from the first member on (so no macro
  expansion, ```include`` or other directive changed any token), the buffer is ASCII and has
  no ```line`` directive (so a text offset gives the original line and column);
* the statement has nothing but names, constant bit selects and literals (any attribute,
  parameter, delay, strength, expression or comment between tokens falls back).

Everything else goes through :class:`~hazlint.frontends.slang.build.Builder`; the tests hold the
two paths equal on every fixture and benchmark netlist.
"""
from __future__ import annotations

import re
from bisect import bisect_right

from pyslang import syntax

from ... import ir
from ..literals import parse_number

SK = syntax.SyntaxKind

_LEAD = r"(?:\s+|//[^\n]*|/\*(?:[^*]|\*(?!/))*\*/)*"
_ID = r"(?:[A-Za-z_][A-Za-z0-9_$]*|\\\S+(?=\s))"
_NUM = r"\d*'[sS]?[bBoOdDhH][0-9a-fA-FxXzZ?_]+|\d+"
_SIG = rf"(?:(?P<id>{_ID})(?:\s*\[\s*(?P<bit>\d+)\s*\])?|(?P<num>{_NUM}))"
_RANGE = r"(?:\[\s*(?P<msb>\d+)\s*:\s*(?P<lsb>\d+)\s*\]\s*)?"
_NAMES = rf"(?P<names>{_ID}(?:\s*,\s*{_ID})*)"

_INST = re.compile(rf"{_LEAD}(?P<cell>{_ID})\s+(?P<name>{_ID})\s*\((?P<body>.*)\)\s*;", re.S)
_NET = re.compile(rf"{_LEAD}(?P<kind>wire|tri|tri0|tri1|wand|triand|wor|trior|trireg|uwire|"
                  rf"supply0|supply1)\s+{_RANGE}{_NAMES}\s*;")
_PORT = re.compile(rf"{_LEAD}(?P<dir>input|output|inout)\s+(?:(?P<wire>wire)\s+)?{_RANGE}"
                   rf"{_NAMES}\s*;")
_ASSIGN = re.compile(rf"{_LEAD}(?P<kw>assign)\s+{_SIG}\s*=\s*"
                     rf"(?:(?P<rid>{_ID})(?:\s*\[\s*(?P<rbit>\d+)\s*\])?|(?P<rnum>{_NUM}))\s*;")
# connection lists: checked whole by the first pattern, then read item by item by the second
_S = rf"(?:{_ID}(?:\s*\[\s*\d+\s*\])?|{_NUM})"
_S3 = rf"(?:({_ID})(?:\s*\[\s*(\d+)\s*\])?|({_NUM}))"
_ORDERED_ALL = re.compile(rf"\s*{_S}\s*(?:,\s*{_S}\s*)*")
_ORDERED_ITEM = re.compile(_S3)
_NAMED_ALL = re.compile(rf"\s*\.\s*{_ID}\s*\(\s*{_S}?\s*\)\s*(?:,\s*\.\s*{_ID}\s*\(\s*{_S}?\s*\)"
                        rf"\s*)*")
_NAMED_ITEM = re.compile(rf"\.\s*({_ID})\s*\(\s*(?:{_S3})?\s*\)")
_ONE_ID = re.compile(r"[A-Za-z_][A-Za-z0-9_$]*|\\\S+")      # inside a matched name list


def _name(text: str) -> str:
    return text[1:] if text[0] == "\\" else text


def _sig(m, id_group="id", bit_group="bit", num_group="num"):
    ident = m.group(id_group)
    if ident is not None:
        e = ("id", _name(ident))
        bit = m.group(bit_group)
        return e if bit is None else ("bit", e, ("num", None, int(bit), 0, True))
    return parse_number(m.group(num_group))


def _width(m):
    msb = m.group("msb")
    if msb is None:
        return None
    return (("num", None, int(msb), 0, True), ("num", None, int(m.group("lsb")), 0, True))


class Members:
    """The fast path over one list of module members (see the module docstring); ``try_item``
    builds member ``i``'s IR and returns True, or returns False for the syntax walk."""

    def __init__(self, builder, texts, start, src, line_starts, path):
        self.b = builder
        self.texts = texts
        self.path = path
        self.line_starts = line_starts
        offsets = []
        o = start
        for t in texts:
            offsets.append(o)
            o += len(t)
        self.offsets = offsets
        self.exprs: dict = builder.conn_exprs

    @classmethod
    def plan(cls, builder, members):
        """A :class:`Members` for ``members``, or None where the text cannot be trusted."""
        if not members:
            return None
        tok0 = members[0].getFirstToken()
        loc = tok0.location
        at = builder.at
        if loc.buffer.id != at.main_id or at.sm.isMacroLoc(loc):
            return None
        src, line_starts = builder.buffer_text(loc.buffer)
        if src is None:
            return None
        lead = sum(len(t.getRawText()) for t in tok0.trivia)
        start = loc.offset - lead
        texts = [str(n) for n in members]
        if start < 0 or not src.startswith("".join(texts), start):
            return None
        return cls(builder, texts, start, src, line_starts, at.main_path)

    def loc(self, offset: int) -> ir.Loc:
        ls = self.line_starts
        line = bisect_right(ls, offset)
        return ir.Loc(self.path, line, offset - ls[line - 1] + 1)

    def try_item(self, i, n, out, mod) -> bool:
        k = n.kind
        if k is SK.PrimitiveInstantiation or k is SK.HierarchyInstantiation:
            return self._instance(i, out)
        if k is SK.NetDeclaration:
            return self._net(i, out, mod)
        if k is SK.PortDeclaration:
            return self._port(i, mod)
        if k is SK.ContinuousAssign:
            return self._assign(i, out)
        return False

    def _instance(self, i, out) -> bool:
        text = self.texts[i]
        m = _INST.fullmatch(text)
        if m is None:
            return False
        conns = _connections(m.group("body"), self.exprs)
        if conns is None:
            return False
        cell = m.group("cell")
        out.append(ir.Instance(cell=_name(cell), name=_name(m.group("name")), connections=conns,
                               loc=self.loc(self.offsets[i] + m.start("name"))))
        return True

    def _names(self, i, m):
        base = self.offsets[i] + m.start("names")
        for nm in _ONE_ID.finditer(m.group("names")):
            yield _name(nm.group()), base + nm.start()

    def _net(self, i, out, mod) -> bool:
        m = _NET.fullmatch(self.texts[i])
        if m is None:
            return False
        kind, width = m.group("kind"), _width(m)
        for name, off in self._names(i, m):
            if not self.b.update_port(name, kind, width, False, {}, mod):
                out.append(ir.Net(name=name, kind=kind, width=width, loc=self.loc(off)))
        return True

    def _port(self, i, mod) -> bool:
        m = _PORT.fullmatch(self.texts[i])
        if m is None:
            return False
        direction, width = m.group("dir"), _width(m)
        explicit = m.group("wire") is not None
        for name, off in self._names(i, m):
            self.b.declare_port(name, direction, width, False, explicit, "wire", {},
                                self.loc(off), mod)
        return True

    def _assign(self, i, out) -> bool:
        m = _ASSIGN.fullmatch(self.texts[i])
        if m is None:
            return False
        out.append(ir.Assign(lhs=_sig(m), rhs=_sig(m, "rid", "rbit", "rnum"),
                             loc=self.loc(self.offsets[i] + m.start("kw"))))
        return True


def _connections(body: str, exprs: dict):
    """Ordered or named plain connections -> ``[(pin or None, expr or None)]``, or None.
    ``exprs`` keeps one tuple per distinct connection text (a net is connected many times)."""
    if _ORDERED_ALL.fullmatch(body):
        out = []
        for item in _ORDERED_ITEM.findall(body):
            e = exprs.get(item)
            if e is None:
                e = exprs[item] = _expr(*item)
            out.append((None, e))
        return out
    if _NAMED_ALL.fullmatch(body):
        out = []
        for pin, *item in _NAMED_ITEM.findall(body):
            item = tuple(item)
            e = exprs.get(item)
            if e is None:
                e = exprs[item] = _expr(*item)
            out.append((_name(pin), e))
        return out
    if not body.strip():
        return []
    return None


def _expr(ident, bit, num):
    if ident:
        e = ("id", _name(ident))
        return ("bit", e, ("num", None, int(bit), 0, True)) if bit else e
    if num:
        return parse_number(num)
    return None                         # ".pin()": unconnected


def line_starts(src: str) -> list[int]:
    out = [0]
    find = src.find
    i = find("\n")
    while i >= 0:
        out.append(i + 1)
        i = find("\n", i + 1)
    return out
