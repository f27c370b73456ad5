"""Name scopes of elaboration: a module instance, a generate block, a named block or a
function call, each mapping local names to nets (:class:`NetInfo`) and parameters."""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from .. import ir


def index_range(msb: int, lsb: int) -> range:
    """The indices of ``[msb:lsb]`` LSB first, as a range (O(1) membership and position)."""
    step = 1 if msb >= lsb else -1
    return range(lsb, msb + step, step)


def span(r: range) -> tuple[int, int]:
    return (r[0], r[-1]) if r[0] <= r[-1] else (r[-1], r[0])


@dataclass
class NetInfo:
    """A declared net or variable: ``base`` is its hierarchical name, ``indices`` the packed
    indices LSB first (None for a scalar). An array has ``dims`` (the index values of each
    unpacked dimension, left to right): its words are nets of their own (:meth:`word`), or,
    for a memory kept whole, ``memory`` is its record (:mod:`hazlint.elaborate.memory`)."""

    base: str              # hierarchical name without bit index
    indices: range | None  # declared indices LSB first, None for a scalar
    kind: str = "wire"
    signed: bool = False
    dims: list | None = None
    memory: Any = None

    def bit(self, i: int | None) -> str:
        if self.indices is None:
            return self.base
        return f"{self.base}[{i}]"

    def bits(self) -> list[str]:
        if self.indices is None:
            return [self.base]
        return [f"{self.base}[{i}]" for i in self.indices]

    def span(self) -> tuple[int, int]:
        """(lowest, highest) declared index (0, 0 for a scalar)."""
        return span(self.indices) if self.indices is not None else (0, 0)

    def word(self, idx: list[int]) -> "NetInfo":
        """The word ``base[i][j]...`` of an array."""
        return NetInfo(base=self.base + "".join(f"[{i}]" for i in idx), indices=self.indices,
                       kind=self.kind, signed=self.signed)

    def words(self) -> list["NetInfo"]:
        out: list[list[int]] = [[]]
        for dim in self.dims or ():
            out = [p + [i] for p in out for i in dim]
        return [self.word(p) for p in out]


@dataclass
class Scope:
    prefix: str                                # net-name prefix, "" at top, "u1." inside u1
    instance: str                              # hierarchical instance path, "top.u1"
    module: ir.Module
    params: dict = field(default_factory=dict)
    nets: dict = field(default_factory=dict)   # local name -> NetInfo
    parent: "Scope | None" = None
    genblk: list = field(default_factory=lambda: [0])
    ptypes: dict = field(default_factory=dict)     # parameter -> (width, signed)
    functions: dict = field(default_factory=dict)  # name -> ir.Function declared here
    tasks: dict = field(default_factory=dict)      # name -> ir.Task declared here

    def lookup(self, name: str) -> NetInfo | None:
        s: Scope | None = self
        while s is not None:
            n = s.nets.get(name)
            if n is not None:
                return n
            s = s.parent
        return None

    def param(self, name: str):
        s: Scope | None = self
        while s is not None:
            if name in s.params:
                return s.params[name]
            s = s.parent
        raise KeyError(name)

    def all_params(self) -> dict:
        chain = []
        s: Scope | None = self
        while s is not None:
            chain.append(s.params)
            s = s.parent
        out: dict = {}
        for p in reversed(chain):
            out.update(p)
        return out

    def child(self, name: str | None) -> "Scope":
        if name is None:
            self.genblk[0] += 1
            name = f"genblk{self.genblk[0]}"
        return Scope(prefix=f"{self.prefix}{name}.", instance=f"{self.instance}.{name}",
                     module=self.module, params={}, nets={}, parent=self, genblk=[0])
