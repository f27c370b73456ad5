"""Flat modules read without building their IR items (the compiled reader of
:mod:`hazlint.elaborate._flatnet`).

A module whose members are all port declarations, ``wire`` declarations, gate primitives with
plain terminals and ``assign name = name;`` (the shapes ``_flatnet.check`` accepts, a subset
of what :mod:`.fastpath` reads) becomes a :class:`FlatModule`: its ports are read as usual, and
its member texts are kept for :mod:`hazlint.elaborate.flat`, which turns them into the gate
graph in one compiled pass. Its ``items`` (for anything else that reads the IR: the general
elaborator when the module is not the single top, the IR cache, tests) are built from the same
texts by :mod:`.fastpath` on first use, so they are the items a read without this step gives.
"""
from __future__ import annotations

from bisect import bisect_right
from dataclasses import dataclass, fields

from pyslang import syntax

from ... import ir
from . import fastpath

from ...elaborate import flat as _compiled

# False: every module is read as items (tests compare both)
ENABLED = True

SK = syntax.SyntaxKind
_KINDS = {SK.PortDeclaration: 1, SK.NetDeclaration: 2, SK.PrimitiveInstantiation: 3,
          SK.ContinuousAssign: 4}


@dataclass
class FlatText:
    """What the compiled elaborator reads: the member texts, their kinds (1 port, 2 wire,
    3 gate, 4 assign), where they start (``line0``: the line of the first text's first
    character; ``lstart0``: that line's start, relative to the first text), the file, and per
    wire member the names that were a port's type (no net of their own)."""

    texts: list
    kinds: list
    start: int
    line_starts: list
    path: str
    port_updates: dict

    @property
    def line0(self) -> int:
        return bisect_right(self.line_starts, self.start)

    @property
    def lstart0(self) -> int:
        return self.line_starts[self.line0 - 1] - self.start


class FlatModule(ir.Module):
    """An :class:`~hazlint.ir.Module` whose items are built on first use from ``flat``."""

    encode_as = ir.Module           # the IR cache stores it as a plain module

    @property
    def items(self):
        got = self.__dict__.get("_items")
        if got is None:
            got = self.__dict__["_items"] = _items(self)
        return got

    @items.setter
    def items(self, value):
        self.__dict__["_items"] = value

    def __repr__(self) -> str:          # as the module it stands for
        return "Module" + ir.Module.__repr__(self)[len(type(self).__qualname__):]

    def __eq__(self, other) -> bool:
        if not isinstance(other, ir.Module):
            return NotImplemented
        return all(getattr(self, f.name) == getattr(other, f.name) for f in fields(ir.Module))

    __hash__ = None


class _Updates:
    """The builder calls :class:`.fastpath.Members` makes, replayed: a wire's name is a
    port's type where it was one when the module was read."""

    def __init__(self):
        self.conn_exprs: dict = {}
        self.current: frozenset = frozenset()

    def update_port(self, name, *_args) -> bool:
        return name in self.current


def _items(mod: FlatModule) -> list:
    fl = mod.flat
    b = _Updates()
    plan = fastpath.Members(b, fl.texts, fl.start, None, fl.line_starts, fl.path)
    out: list = []
    for i, k in enumerate(fl.kinds):
        t = fl.texts[i]
        if k == 2:
            b.current = fl.port_updates.get(i, frozenset())
            ok = plan._net(i, out, mod)
        elif k == 3:
            ok = plan._instance(i, out)
        elif k == 4:
            ok = plan._assign(i, out)
        else:
            ok = fastpath._PORT.fullmatch(t) is not None
        if not ok:                  # the compiled check accepts a subset of the fast path
            raise RuntimeError(f"flat module '{mod.name}': member {i} is not flat")
    return out


def try_module(builder, members, mod: ir.Module):
    """``mod`` as a :class:`FlatModule` with its ports read, or None (nothing changed) when
    a member is outside the flat subset."""
    ext = _compiled.extension()
    if ext is None or not ENABLED or not members:   # not built: the items are read as usual
        return None
    kinds = [_KINDS.get(n.kind, 0) for n in members]
    if 0 in kinds:
        return None
    plan = fastpath.Members.plan(builder, members)
    if plan is None:
        return None
    wires = ext.check(plan.texts, kinds)
    if wires is None:
        return None
    wires = dict(wires)
    # a dry run first: every port member must read on the fast path, and a wire's name must
    # not become a port later (the reader would then have declared it a net)
    declared = {}
    for i, k in enumerate(kinds):
        if k == 1:
            m = fastpath._PORT.fullmatch(plan.texts[i])
            if m is None:
                return None
            declared[i] = [fastpath._name(x.group()) for x in
                           fastpath._ONE_ID.finditer(m.group("names"))]
    later = set(mod.port_order).union(*declared.values())
    ports = set(mod.ports)
    for i, k in enumerate(kinds):
        if k == 1:
            ports.update(declared[i])
        elif k == 2:
            for name in wires[i]:
                if name in later and name not in ports:
                    return None
    updates: dict = {}
    scratch: list = []
    for i, k in enumerate(kinds):
        if k == 1:
            plan._port(i, mod)
        elif k == 2:
            hit = [n for n in wires[i] if n in mod.ports and n in mod.port_order]
            if hit:
                updates[i] = frozenset(hit)
                plan._net(i, scratch, mod)
    flat = FlatModule(**{f.name: getattr(mod, f.name) for f in fields(ir.Module)
                         if f.name != "items"})
    del flat.__dict__["_items"]         # built on first use
    flat.flat = FlatText(texts=plan.texts, kinds=kinds, start=plan.offsets[0],
                         line_starts=plan.line_starts, path=plan.path, port_updates=updates)
    return flat

