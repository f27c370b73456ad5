"""Nets of the elaboration: union-find over net bits (port connections and plain
``assign a = b;`` merge nets), drivers and sinks as records, continuous assignments.
A mixin of :class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

from .. import budget as _budget
from .. import ir
from .. import limits as _limits
from ..errors import ElaborationError
from ..netlist.library import ZERO_DELAY, Delay
from .common import C0, C1
from .common import expr_text as _expr_text
from .common import fold as _fold
from .common import where as _where
from .common import const_bits
from .scope import Scope
from .source_delays import sum_delay


# the default names of a gate's input pins ("1", "2", ...), by number of inputs
_PIN_NAMES = tuple(tuple(str(i + 1) for i in range(n)) for n in range(17))


class NetElaborator:
    """Net bits, drivers, sinks and continuous assignments."""

    # ---------------------------------------------------------------- union-find ---------------
    def find(self, a: str) -> str:
        p = self.parent
        root = a
        while True:
            q = p.get(root)
            if q is None or q == root:
                break
            root = q
        while a != root:
            q = p.get(a, root)
            p[a] = root
            a = q
        return root

    def union(self, a: str, b: str) -> None:
        ra, rb = self.find(a), self.find(b)
        if ra != rb:
            self.parent[ra] = rb
            self.parent.setdefault(rb, rb)

    # ---------------------------------------------------------------- drivers ------------------
    def fresh(self, scope: Scope, hint: str = "n") -> str:
        self._n += 1
        return f"{scope.prefix}${hint}{self._n}"

    def _add_driver(self, kind: str, out: str, *, op: str = "buf", inputs=(), pins=None,
                    delays=None, cell: str = "", instance: str = "", loc: ir.Loc | None = None,
                    expr=None, attrs=None, **extra) -> None:
        inputs = list(inputs)
        n = len(inputs)
        if kind == "gate" and self.net_delay and out in self.net_delay:
            # a net delay adds to the delay of every gate and assign that drives the net
            nd = self.net_delay[out]
            delays = [sum_delay(d, nd) for d in
                      (delays if delays is not None else [self.default_delay] * n)]
        rec = {"kind": kind, "out": out, "op": op, "inputs": inputs,
               "pins": pins if pins is not None else
               (list(_PIN_NAMES[n]) if n < len(_PIN_NAMES) else [str(i + 1) for i in range(n)]),
               "delays": delays if delays is not None else [self.default_delay] * n,
               "cell": cell or op, "instance": instance, "loc": loc, "expr": expr,
               "attrs": attrs or {}}
        if extra:
            rec.update(extra)
        drivers = self.drivers
        drivers.append(rec)
        self.parent.setdefault(out, out)
        count = len(drivers)
        if count > self._max_gates:
            _limits.check("gates", count, "the number of gates", _where(loc))
        if not count & 8191:
            _budget.check_loading("elaborating the design", *_where(loc)[:2])

    def gate(self, scope: Scope, op: str, ins: list[str], loc, delay: Delay | None = None,
             fold: bool = True) -> str:
        """A decomposed-expression gate; returns its output signal. Folds constant inputs."""
        if fold:
            folded = _fold(op, ins)
            if folded is not None:
                return folded
        out = self.fresh(scope)
        d = self.default_delay if delay is None else delay
        self._add_driver("gate", out, op=op, inputs=ins, delays=[d] * len(ins),
                         cell=op, instance=f"{scope.instance}.{out[len(scope.prefix):]}",
                         loc=loc, decomposed=True)
        return out

    def add_sink(self, sig: str, role: str, name: str, loc, instance: str, **attrs) -> str:
        sid = f"@{name}"
        if sid in self.sink_ids:
            sid = f"@{name}#{len(self.sinks)}"
        self.sink_ids.add(sid)
        self.sinks.append({"id": sid, "input": sig, "role": role, "name": name, "loc": loc,
                           "instance": instance, **attrs})
        if not len(self.sinks) & 8191:
            _budget.check_loading("elaborating the design", *_where(loc)[:2])
        return sid

    # ---------------------------------------------------------------- expressions --------------
    def net_bits(self, scope: Scope, name: str, loc, implicit: bool = False) -> list[str]:
        info = scope.lookup(name)
        if info is None:
            try:
                v = scope.param(name)
                return const_bits(int(v if not isinstance(v, tuple) else v[0]), 32)
            except KeyError:
                pass
            if scope.module.default_nettype == "none":
                raise ElaborationError(f"undeclared identifier '{name}' (`default_nettype none)",
                                       *_where(loc), construct=name)
            if not implicit:
                # implicit wire: legal in port connections; elsewhere Verilog would reject it,
                # but netlist writers rely on it, so declare it and say so once
                self.note(f"implicit 1-bit nets are declared for undeclared names (first: "
                          f"'{name}')", loc, scope.instance,
                          key=("implicit", scope.module.name))
            info = self.declare(scope, name, None, "wire", False, loc)
        return info.bits()

    # ------------------------------------------------------------- gate structures -------------
    # ---------------------------------------------------------------- assigns ------------------
    def connect(self, scope, dst: str, src: str, loc, delay: Delay | None = None,
                instance: str = "") -> None:
        """Make net bit ``dst`` carry ``src``: merge the nets, or add a driver for a constant
        or a delayed connection."""
        if src in (C0, C1):
            self._add_driver("const", dst, op="const1" if src == C1 else "const0",
                             instance=instance or scope.instance, loc=loc)
            return
        if delay is None and dst in self.net_delay:
            delay = ZERO_DELAY         # the net's own delay is added by _add_driver
        if delay is not None:
            self._add_driver("gate", dst, op="buf", inputs=[src], delays=[delay], cell="assign",
                             instance=instance or scope.instance, loc=loc)
            return
        self.union(dst, src)

    def elab_assign(self, scope: Scope, a: ir.Assign) -> None:
        lhs = self.lvalue_bits(a.lhs, scope, a.loc)
        delay = self.delay(a.delay, scope, a.loc) if a.delay else None
        tri = _three_state(a.rhs)
        if tri is not None:
            self._assign_three_state(scope, a, lhs, delay, *tri)
            return
        if delay is not None:
            saved = self.default_delay
            self.default_delay = ZERO_DELAY
            mark = len(self.drivers)
            try:
                rhs = self.bits(a.rhs, scope, a.loc, len(lhs))
            finally:
                self.default_delay = saved
            # the assign's delay goes on the gate at the root of each bit, when that gate is
            # new and used only here; otherwise a delayed buffer stands in for it
            fresh = self.drivers[mark:]
            read = {i for d in fresh for i in d["inputs"]}
            fresh_roots = {d["out"]: d for d in fresh
                           if d.get("decomposed") and d["out"] not in read}
            seen: set[str] = set()
            for dst, src in zip(lhs, rhs):
                rec = fresh_roots.get(src)
                if rec is not None and src not in seen:
                    seen.add(src)
                    d = sum_delay(delay, self.net_delay[dst]) if dst in self.net_delay \
                        else delay
                    rec["delays"] = [d] * len(rec["inputs"])
                    rec["loc"] = a.loc
                    self.union(dst, src)
                else:
                    self.connect(scope, dst, src, a.loc, delay)
        else:
            rhs = self.bits(a.rhs, scope, a.loc, len(lhs))
            for dst, src in zip(lhs, rhs):
                self.connect(scope, dst, src, a.loc)

    def _assign_three_state(self, scope: Scope, a: ir.Assign, lhs: list[str], delay,
                            cond, data, active: int) -> None:
        """``assign y = en ? d : 'bz;`` (or ``en ? 'bz : d``): a three-state driver per bit,
        as ``bufif1``/``bufif0`` would build it (its enable is a glitch-sensitive sink), so
        the common RTL spelling of a bus driver gets the same verdict as the primitive."""
        en = self.reduce(scope, "or", self.bits(cond, scope, a.loc, None), a.loc)
        src = self.bits(data, scope, a.loc, len(lhs))
        d = delay if delay is not None else self.default_delay
        name = self.rel(scope, _expr_text(a.lhs)[:80])
        op = "bufif1" if active else "bufif0"
        for dst, s in zip(lhs, src):
            self._add_driver("gate", dst, op=op, inputs=[s, en], delays=[d, d], cell=op,
                             instance=f"{scope.instance}.{name}", loc=a.loc, tri=True)
        self.add_sink(en, "tristate_enable", f"{name}.enable", a.loc,
                      f"{scope.instance}.{name}", active=active)


def _all_z(e) -> bool:
    """A literal whose every bit is z (``'bz``, ``8'hzz``; z bits have value 1 in the IR)."""
    if not e or e[0] != "num":
        return False
    _, width, value, xz, _s = e
    return bool(xz) and value == xz and (width is None or xz == (1 << width) - 1)

def _three_state(e):
    """(condition, data, active level) of ``c ? d : 'bz`` / ``c ? 'bz : d``, else None."""
    if not e or e[0] != "cond":
        return None
    if _all_z(e[3]) and not _all_z(e[2]):
        return e[1], e[2], 1
    if _all_z(e[2]) and not _all_z(e[3]):
        return e[1], e[3], 0
    return None
