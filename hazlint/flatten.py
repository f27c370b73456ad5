"""Flattener: IR modules -> one bit-level gate graph (see :mod:`hazlint.graph` for the schema).

Elaboration walks the hierarchy from the top module(s), evaluates parameters and generate
constructs, bit-blasts vectors, decomposes continuous assigns (and combinational always blocks)
into gates, turns the usual flip-flop and latch templates into registers whose pins are sinks and
whose outputs are sources, and resolves every instance against the gate primitives, the user's
modules, UDPs and the cell library. Port connections and plain ``assign a = b;`` are zero-delay
connections: their nets are merged (union-find) and the merged net is named after its most
meaningful member (a top-level port, else the shallowest user-declared name).

Delay model: a gate primitive, UDP or cell gets the delay its source or library gives, and unit
delay otherwise (``default_delay``). An ``assign`` without a delay becomes gates of unit delay each
(the structural reading a synthesised netlist would have); with ``assign #d`` the expression is
zero-delay and ``d`` applies at its output, as Verilog specifies.
"""
from __future__ import annotations

import fnmatch
import re
from dataclasses import dataclass, field
from typing import Any, Iterable, Mapping, Sequence

import networkx as nx

from . import library as lib
from .consteval import NotConstant, const_value
from .design import BlackBox, Design, Register
from .diagnostics import Diagnostic, Location, Severity
from .errors import ElaborationError
from .frontend import ir
from .library import UNIT_DELAY, ZERO_DELAY, CellDef, Delay, Library

C0 = "1'b0"
C1 = "1'b1"
HOLD = ("hold",)        # the value a variable keeps when a path through a block assigns nothing


class _BlackBoxModule(Exception):
    def __init__(self, reason: str, loc: ir.Loc | None):
        super().__init__(reason)
        self.reason = reason
        self.loc = loc


@dataclass
class NetInfo:
    base: str              # hierarchical name without bit index
    indices: list | None   # declared indices LSB first, None for a scalar
    kind: str = "wire"
    signed: bool = False

    def bit(self, i: int | None) -> str:
        if self.indices is None:
            return self.base
        return f"{self.base}[{i}]"

    def bits(self) -> list[str]:
        if self.indices is None:
            return [self.base]
        return [f"{self.base}[{i}]" for i in self.indices]


@dataclass
class Scope:
    prefix: str                                # net-name prefix, "" at top, "u1." inside u1
    instance: str                              # hierarchical instance path, "top.u1"
    module: ir.Module
    params: dict = field(default_factory=dict)
    nets: dict = field(default_factory=dict)   # local name -> NetInfo
    parent: "Scope | None" = None
    genblk: list = field(default_factory=lambda: [0])

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


class Elaborator:
    def __init__(self, sources: Sequence[ir.SourceFile], library: Library,
                 default_delay: Delay = UNIT_DELAY, max_depth: int = 200):
        self.sources = list(sources)
        self.library = library
        self.default_delay = default_delay
        self.max_depth = max_depth
        self.modules: dict[str, ir.Module] = {}
        self.primitives: dict[str, ir.Primitive] = {}
        for sf in self.sources:
            for m in sf.modules:
                if m.name in self.modules:
                    prev = self.modules[m.name].loc
                    raise ElaborationError(
                        f"module '{m.name}' is defined twice (first at "
                        f"{prev.path}:{prev.line})" if prev else f"module '{m.name}' defined twice",
                        *_where(m.loc), construct=m.name)
                self.modules[m.name] = m
            for p in sf.primitives:
                self.primitives[p.name] = p
        # the time unit of the design: the finest unit of any module that declares one
        units = [m.timescale[0] for m in self.modules.values() if m.timescale]
        units += [p.timescale[0] for p in self.primitives.values() if p.timescale]
        self.time_unit = min(units) if units else None
        self.precision = min((m.timescale[1] for m in self.modules.values() if m.timescale),
                             default=None)
        # union-find over net bit names
        self.parent: dict[str, str] = {}
        self.net_delay: dict[str, Delay] = {}     # declared net bit -> its net delay
        self.drivers: list[dict] = []          # driver records (see _add_driver)
        self.sinks: list[dict] = []
        self.registers: list[Register] = []
        self.blackboxes: list[BlackBox] = []
        self.notes: list[Diagnostic] = []
        self.declared: set[str] = set()        # user-declared net bit names
        self.port_bits_top: dict[str, str] = {}
        self.port_attrs: dict[str, dict] = {}
        self.latch_paths: list[tuple[str, str, str]] = []
        self.blackbox_cells_warned: set[str] = set()
        self.blackbox_pins: set[str] = set()    # net bits connected to black-box pins
        self.bb_owner: dict[str, tuple] = {}    # such a net bit -> (instance, cell, loc, reason)
        self.sink_ids: set[str] = set()
        self.sink_by_port: dict[str, str] = {}
        self._members: dict[str, list[str]] = {}
        self._n = 0
        self._noted: set[tuple] = set()

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

    # ---------------------------------------------------------------- notes --------------------
    def note(self, message: str, loc: ir.Loc | None, instance: str = "", key=None,
             severity: Severity = Severity.INFO) -> None:
        k = key if key is not None else (message, loc.path if loc else "", loc.line if loc else 0)
        if k in self._noted:
            return
        self._noted.add(k)
        self.notes.append(Diagnostic(
            rule="front-end", kind="design-note", severity=severity,
            location=Location(loc.path if loc else "", loc.line if loc else 0,
                              loc.col if loc else 1),
            instance=instance, message=message))

    # ---------------------------------------------------------------- drivers ------------------
    def fresh(self, scope: Scope, hint: str = "n") -> str:
        self._n += 1
        return f"{scope.prefix}${hint}{self._n}"

    def _add_driver(self, kind: str, out: str, *, op: str = "buf", inputs=(), pins=None,
                    delays=None, cell: str = "", instance: str = "", loc: ir.Loc | None = None,
                    expr=None, attrs=None, **extra) -> None:
        inputs = list(inputs)
        if kind == "gate" and out in self.net_delay:
            # a net delay adds to the delay of every gate and assign that drives the net
            nd = self.net_delay[out]
            delays = [_sum_delay(d, nd) for d in
                      (delays if delays is not None else [self.default_delay] * len(inputs))]
        rec = {"kind": kind, "out": out, "op": op, "inputs": inputs,
               "pins": pins if pins is not None else [str(i + 1) for i in range(len(inputs))],
               "delays": delays if delays is not None else [self.default_delay] * len(inputs),
               "cell": cell or op, "instance": instance, "loc": loc, "expr": expr,
               "attrs": attrs or {}}
        rec.update(extra)
        self.drivers.append(rec)
        self.parent.setdefault(out, out)

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
        return sid

    # ---------------------------------------------------------------- top ----------------------
    def choose_tops(self, top) -> list[str]:
        if top:
            tops = [top] if isinstance(top, str) else list(top)
            for t in tops:
                if t not in self.modules:
                    known = ", ".join(sorted(self.modules)[:10])
                    raise ElaborationError(f"unknown top module '{t}' (modules: {known})",
                                           construct=t)
            return tops
        used: set[str] = set()
        for m in self.modules.values():
            for it in _walk_items(m.items):
                if isinstance(it, ir.Instance):
                    used.add(it.cell)
        tops = [n for n in self.modules if n not in used and not self.modules[n].celldefine]
        if not tops:
            tops = [n for n in self.modules if n not in used]
        if not tops:
            if not self.modules:
                raise ElaborationError("no module found in the input files")
            raise ElaborationError("cannot find a top module (every module is instantiated); "
                                   "name one with --top")
        return tops

    def elaborate(self, top=None) -> Design:
        tops = self.choose_tops(top)
        multi = len(tops) > 1
        inputs: list[str] = []
        outputs: list[str] = []
        for t in tops:
            m = self.modules[t]
            scope = Scope(prefix=f"{t}." if multi else "", instance=t, module=m)
            self.elab_module(scope, m, overrides=[], depth=0, is_top=True)
            for pname in m.port_order:
                port = m.ports.get(pname)
                if port is None:
                    continue
                info = scope.nets[pname]
                for b in info.bits():
                    self.port_bits_top[b] = port.direction
                    if port.attrs:
                        self.port_attrs[b] = dict(port.attrs)
                    if port.direction == "input":
                        inputs.append(b)
                    elif port.direction == "output":
                        outputs.append(b)
                    else:
                        inputs.append(b)
                        outputs.append(b)
                        self.note(f"inout port '{pname}' is treated as both an input and an "
                                  f"output", port.loc, t)
        for b in inputs:
            self._add_driver("input", b, op="buf", inputs=(), instance=tops[0] if not multi
                             else b.split(".")[0], loc=self._port_loc(b, tops, multi), port=b)
        for b in outputs:
            self.add_sink(b, "output", b, self._port_loc(b, tops, multi),
                          tops[0] if not multi else b.split(".")[0], port=b)
        return self.build_graph(tops, inputs, outputs)

    def _port_loc(self, bit: str, tops, multi) -> ir.Loc | None:
        name = bit.split("[")[0]
        if multi:
            t, _, name = name.partition(".")
        else:
            t = tops[0]
        p = self.modules[t].ports.get(name)
        return p.loc if p is not None and p.loc else self.modules[t].loc

    # ---------------------------------------------------------------- modules ------------------
    def elab_module(self, scope: Scope, m: ir.Module, overrides, depth: int,
                    is_top: bool = False) -> None:
        if depth > self.max_depth:
            raise ElaborationError(f"hierarchy deeper than {self.max_depth} levels (recursive "
                                   f"instantiation of '{m.name}'?)", *_where(m.loc),
                                   construct=m.name)
        # parameters: header, then body, with overrides
        named = {n: v for n, v in overrides if n is not None}
        positional = [v for n, v in overrides if n is None]
        header = list(m.params)
        body_params = [it for it in m.items if isinstance(it, ir.Param)]
        overridable = [p for p in header + body_params if not p.local]
        for i, v in enumerate(positional):
            if i < len(overridable):
                named.setdefault(overridable[i].name, v)
        for p in header:
            self._set_param(scope, p, named)
        # ports and declarations first (Verilog allows use before declaration of ports)
        for pname in m.port_order:
            port = m.ports.get(pname)
            if port is None:
                continue
        for it in m.items:
            if isinstance(it, ir.Param):
                self._set_param(scope, it, named)
        for pname, port in m.ports.items():
            self.declare(scope, pname, port.width, port.net_type, port.signed, port.loc)
        self.elab_items(scope, m.items, depth, declare_only_params=False)

    def _set_param(self, scope: Scope, p: ir.Param, named: Mapping[str, Any]) -> None:
        expr = named.get(p.name) if not p.local else None
        try:
            if expr is not None:
                # overrides are evaluated in the parent's scope by the caller
                v = expr[1] if isinstance(expr, tuple) and expr and expr[0] == "_value" else expr
            else:
                v = const_value(p.value, scope.all_params(), _where(p.loc))
        except NotConstant as exc:
            raise ElaborationError(f"parameter '{p.name}' is not a constant expression "
                                   f"(uses '{exc}')", *_where(p.loc), construct=p.name) from None
        scope.params[p.name] = v

    def declare(self, scope: Scope, name: str, width, kind: str, signed: bool, loc) -> NetInfo:
        info = scope.nets.get(name)
        indices = None
        if width is not None:
            msb = self.const(width[0], scope, loc)
            lsb = self.const(width[1], scope, loc)
            step = 1 if msb >= lsb else -1
            indices = list(range(lsb, msb + step, step))
        if info is not None:
            if indices is not None and info.indices is None:
                info.indices = indices
            if kind in ("reg", "supply0", "supply1", "wand", "wor", "tri0", "tri1"):
                info.kind = kind
            return info
        info = NetInfo(base=f"{scope.prefix}{name}", indices=indices, kind=kind, signed=signed)
        scope.nets[name] = info
        for b in info.bits():
            self.parent.setdefault(b, b)
            self.declared.add(b)
        if kind in ("supply0", "supply1"):
            for b in info.bits():
                self._add_driver("const", b, op="const1" if kind == "supply1" else "const0",
                                 instance=scope.instance, loc=loc)
        return info

    def const(self, e, scope: Scope, loc) -> int:
        try:
            v = const_value(e, scope.all_params(), _where(loc))
        except NotConstant as exc:
            raise ElaborationError(f"expected a constant expression (it uses '{exc}')",
                                   *_where(loc), construct=_expr_text(e)) from None
        return int(v)

    def elab_items(self, scope: Scope, items, depth: int, declare_only_params=False) -> None:
        # declarations first so that nets may be used before their declaration in the text
        mark = len(self.drivers)
        paths = [it for it in items if isinstance(it, ir.SpecifyPath)]
        for it in items:
            if isinstance(it, ir.Net):
                self.declare(scope, it.name, it.width, it.kind, it.signed, it.loc)
                if it.kind == "trireg":
                    self.note(f"trireg '{it.name}': charge storage is not modelled, the net is "
                              "treated as a wire", it.loc, scope.instance)
                if it.delay:
                    nd = self.delay(it.delay, scope, it.loc)
                    for b in scope.nets[it.name].bits():
                        self.net_delay[b] = nd
                if it.attrs:
                    for b in scope.nets[it.name].bits():
                        self.port_attrs.setdefault(b, {}).update(it.attrs)
            elif isinstance(it, ir.Param) and scope.parent is not None:
                self._set_param(scope, it, {})
        for it in items:
            try:
                self.elab_item(scope, it, depth)
            except RecursionError:
                loc = getattr(it, "loc", None)
                raise ElaborationError("expression or statement nested too deeply to elaborate",
                                       *_where(loc)) from None
        if paths:
            self.apply_specify(scope, paths, self.drivers[mark:])

    def apply_specify(self, scope: Scope, paths, drivers) -> None:
        """Module path delays (``specify``) onto the gates of this module instance.

        A path ``(A => Y)`` sets the delay of the pin fed by ``A`` on the gate that drives
        ``Y``, when that gate reads ``A`` directly: the single-gate cells of a Verilog cell
        library, the common case. A primitive written with its own delay keeps the larger of
        the two; one written without a delay (zero in Verilog, one unit here by default) takes
        the path delay. Conditional paths of one pin pair fold to their min and max. Paths
        through more than one gate and edge-sensitive paths (clock to output) are reported
        and not applied; SDF or a Liberty library gives those arcs."""
        by_out: dict[str, dict] = {}
        for rec in drivers:
            if rec["kind"] == "gate":
                by_out.setdefault(self.find(rec["out"]), rec)
        arcs: dict[tuple[int, int], Delay] = {}        # (driver id, pin) -> folded delay
        recs: dict[int, dict] = {}
        skipped = []
        for path in paths:
            if path.edge is not None or not path.delay:
                skipped.append((path, "edge-sensitive path" if path.edge else "no delay"))
                continue
            d = self.delay(path.delay, scope, path.loc)
            srcs = [b for e in path.sources for b in (self.conn_bits(scope, e, path.loc) or [])]
            dsts = [b for e in path.destinations
                    for b in (self.conn_bits(scope, e, path.loc) or [])]
            pairs = list(zip(srcs, dsts)) if not path.full and len(srcs) == len(dsts) else \
                [(a, b) for a in srcs for b in dsts]
            missed = False
            for a, b in pairs:
                rec = by_out.get(self.find(b))
                pins = [i for i, u in enumerate(rec["inputs"]) if self.find(u) == self.find(a)] \
                    if rec is not None else []
                if not pins:
                    missed = True
                    continue
                recs[id(rec)] = rec
                for pin in pins:
                    old = arcs.get((id(rec), pin))
                    arcs[(id(rec), pin)] = d if old is None else Delay(
                        min(old.rise_min, d.rise_min), max(old.rise_max, d.rise_max),
                        min(old.fall_min, d.fall_min), max(old.fall_max, d.fall_max))
            if missed:
                skipped.append((path, "the path runs through more than one gate"))
        for (rid, pin), d in arcs.items():
            rec = recs[rid]
            delays = list(rec["delays"])
            if rec.get("explicit_delay"):
                own = delays[pin]
                d = Delay(max(own.rise_min, d.rise_min), max(own.rise_max, d.rise_max),
                          max(own.fall_min, d.fall_min), max(own.fall_max, d.fall_max))
            if rec["out"] in self.net_delay:
                d = _sum_delay(d, self.net_delay[rec["out"]])
            delays[pin] = d
            rec["delays"] = delays
            rec["path_delay"] = True
        for path, why in skipped:
            self.note(f"specify path delay not applied ({why}); gate delays, SDF or the "
                      f"library give that arc", path.loc, scope.instance,
                      key=("specify", scope.module.name, why))

    def elab_item(self, scope: Scope, it, depth: int) -> None:
        if isinstance(it, (ir.Net, ir.Param)):
            return
        if isinstance(it, ir.Assign):
            self.elab_assign(scope, it)
        elif isinstance(it, ir.Instance):
            self.elab_instance(scope, it, depth)
        elif isinstance(it, ir.Always):
            self.elab_always(scope, it)
        elif isinstance(it, ir.Initial):
            self.note("initial block ignored (simulation only)", it.loc, scope.instance,
                      key=("initial", scope.module.name))
        elif isinstance(it, ir.GenFor):
            self.elab_genfor(scope, it, depth)
        elif isinstance(it, ir.GenIf):
            cond = self.const(it.cond, scope, it.loc)
            items, name = (it.then_items, it.name) if cond else (it.else_items, it.else_name)
            if items:
                self.elab_items(scope.child(name), items, depth)
        elif isinstance(it, ir.GenCase):
            sel = self.const(it.expr, scope, it.loc)
            chosen = None
            for labels, name, items in it.cases:
                if labels is None:
                    if chosen is None:
                        chosen = (name, items, True)
                    continue
                if any(self.const(lb, scope, it.loc) == sel for lb in labels):
                    chosen = (name, items, False)
                    break
            if chosen:
                self.elab_items(scope.child(chosen[0]), chosen[1], depth)
        elif isinstance(it, ir.GenBlock):
            self.elab_items(scope.child(it.name), it.items, depth)
        elif isinstance(it, ir.SpecifyPath):
            pass                       # applied by apply_specify once the module's gates exist
        elif isinstance(it, ir.Unsupported):
            raise _BlackBoxModule(it.what, it.loc)

    def elab_genfor(self, scope: Scope, g: ir.GenFor, depth: int) -> None:
        params = scope.all_params()
        v = self.const(g.init, scope, g.loc)
        count = 0
        while True:
            params[g.var] = v
            try:
                ok = const_value(g.cond, params)
            except NotConstant as exc:
                raise ElaborationError(f"generate loop condition is not constant ('{exc}')",
                                       *_where(g.loc)) from None
            if not ok:
                break
            count += 1
            if count > 100000:
                raise ElaborationError("generate loop does not terminate within 100000 "
                                       "iterations", *_where(g.loc))
            name = f"{g.name or 'genblk'}[{v}]"
            sub = Scope(prefix=f"{scope.prefix}{name}.", instance=f"{scope.instance}.{name}",
                        module=scope.module, params={g.var: v}, nets={}, parent=scope)
            self.elab_items(sub, g.items, depth)
            v = const_value(g.step, params)

    # ---------------------------------------------------------------- expressions --------------
    def net_bits(self, scope: Scope, name: str, loc, implicit: bool = False) -> list[str]:
        info = scope.lookup(name)
        if info is None:
            try:
                v = scope.param(name)
                return self.const_bits(int(v if not isinstance(v, tuple) else v[0]), 32)
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

    @staticmethod
    def const_bits(value: int, width: int) -> list[str]:
        return [C1 if (value >> i) & 1 else C0 for i in range(width)]

    def width(self, e, scope: Scope, loc) -> int:
        tag = e[0]
        if tag == "num":
            return e[1] if e[1] else 32
        if tag == "id":
            info = scope.lookup(e[1])
            if info is not None:
                return 1 if info.indices is None else len(info.indices)
            return 32
        if tag == "bit":
            return 1
        if tag == "part":
            return abs(self.const(e[2], scope, loc) - self.const(e[3], scope, loc)) + 1
        if tag == "ipart":
            return self.const(e[3], scope, loc)
        if tag == "concat":
            return sum(self.width(x, scope, loc) for x in e[1])
        if tag == "repl":
            return self.const(e[1], scope, loc) * sum(self.width(x, scope, loc) for x in e[2])
        if tag == "unop":
            if e[1] in ("~", "-", "+"):
                return self.width(e[2], scope, loc)
            return 1
        if tag == "binop":
            op = e[1]
            if op in ("+", "-", "*", "/", "%", "&", "|", "^", "~^", "^~"):
                return max(self.width(e[2], scope, loc), self.width(e[3], scope, loc))
            if op in ("<<", ">>", "<<<", ">>>", "**"):
                return self.width(e[2], scope, loc)
            return 1
        if tag == "cond":
            return max(self.width(e[2], scope, loc), self.width(e[3], scope, loc))
        if tag == "call" and e[1] in ("$signed", "$unsigned"):
            return self.width(e[2][0], scope, loc)
        return 32

    def bits(self, e, scope: Scope, loc, W: int | None = None, env=None) -> list[str]:
        """Bit-blast expression ``e`` to ``W`` signals (LSB first), creating gates as needed.
        ``env`` maps net bits to values for statements inside always blocks."""
        if W is None:
            W = self.width(e, scope, loc)
        tag = e[0]
        if tag == "num":
            _, width, value, xz, _s = e
            if xz:
                self.note("x/z bits in a constant are taken as 0 for analysis", loc,
                          scope.instance)
                value &= ~xz
            return self.const_bits(value, W)
        if tag in ("id", "bit", "part", "ipart", "concat", "repl"):
            sig = self.lvalue_bits(e, scope, loc, reading=True, env=env)
            return _extend(sig, W)
        if tag == "unop":
            op = e[1]
            if op == "~":
                return [self.gate(scope, "not", [b], loc) for b in self.bits(e[2], scope, loc, W,
                                                                               env)]
            if op == "+":
                return self.bits(e[2], scope, loc, W, env)
            if op == "-":
                a = self.bits(e[2], scope, loc, W, env)
                return self.adder(scope, [C0] * W, a, loc, subtract=True)[0]
            if op == "!":
                r = self.reduce(scope, "or", self.bits(e[2], scope, loc, None, env), loc)
                return _extend([self.gate(scope, "not", [r], loc)], W)
            red = {"&": ("and", False), "|": ("or", False), "^": ("xor", False),
                   "~&": ("and", True), "~|": ("or", True), "~^": ("xor", True),
                   "^~": ("xor", True)}
            if op in red:
                g, inv = red[op]
                a = self.bits(e[2], scope, loc, None, env)
                r = self.reduce(scope, g, a, loc)
                if inv:
                    r = self.gate(scope, "not", [r], loc)
                return _extend([r], W)
            raise self._unsupported(f"operator '{op}'", e, loc)
        if tag == "binop":
            op = e[1]
            if op in ("&", "|", "^", "~^", "^~"):
                a = self.bits(e[2], scope, loc, W, env)
                b = self.bits(e[3], scope, loc, W, env)
                g = {"&": "and", "|": "or", "^": "xor", "~^": "xnor", "^~": "xnor"}[op]
                return [self.gate(scope, g, [x, y], loc) for x, y in zip(a, b)]
            if op in ("&&", "||"):
                a = self.reduce(scope, "or", self.bits(e[2], scope, loc, None, env), loc)
                b = self.reduce(scope, "or", self.bits(e[3], scope, loc, None, env), loc)
                return _extend([self.gate(scope, "and" if op == "&&" else "or", [a, b], loc)], W)
            if op in ("+", "-"):
                a = self.bits(e[2], scope, loc, W, env)
                b = self.bits(e[3], scope, loc, W, env)
                return self.adder(scope, a, b, loc, subtract=(op == "-"))[0]
            if op == "*":
                a = self.bits(e[2], scope, loc, W, env)
                b = self.bits(e[3], scope, loc, W, env)
                return self.multiplier(scope, a, b, W, loc)
            if op in ("==", "!=", "===", "!==", "<", "<=", ">", ">="):
                w = max(self.width(e[2], scope, loc), self.width(e[3], scope, loc))
                a = self.bits(e[2], scope, loc, w, env)
                b = self.bits(e[3], scope, loc, w, env)
                return _extend([self.compare(scope, op, a, b, loc)], W)
            if op in ("<<", ">>", "<<<", ">>>"):
                a = self.bits(e[2], scope, loc, W, env)
                try:
                    n = const_value(e[3], scope.all_params())
                    return _shift(a, int(n), op in ("<<", "<<<"))
                except NotConstant:
                    amt = self.bits(e[3], scope, loc, None, env)
                    return self.barrel(scope, a, amt, op in ("<<", "<<<"), loc)
            raise self._unsupported(f"operator '{op}'", e, loc)
        if tag == "cond":
            c = self.reduce(scope, "or", self.bits(e[1], scope, loc, None, env), loc)
            a = self.bits(e[2], scope, loc, W, env)
            b = self.bits(e[3], scope, loc, W, env)
            return self.mux_bits(scope, c, a, b, loc)
        if tag == "call":
            if e[1] in ("$signed", "$unsigned"):
                return self.bits(e[2][0], scope, loc, W, env)
            raise self._unsupported(f"function call '{e[1]}'", e, loc)
        if tag == "real":
            raise self._unsupported("real constant", e, loc)
        if tag == "str":
            raise self._unsupported("string", e, loc)
        raise self._unsupported(f"expression '{tag}'", e, loc)

    def _unsupported(self, what: str, e, loc) -> ElaborationError:
        return ElaborationError(f"{what} cannot be turned into gates (in '{_expr_text(e)}')",
                                *_where(loc), construct=_expr_text(e))

    def lvalue_bits(self, e, scope: Scope, loc, reading: bool = False, env=None) -> list[str]:
        tag = e[0]
        if tag == "id":
            bits = self.net_bits(scope, e[1], loc, implicit=not reading)
            if env is not None and reading:
                return [env.get(b, b) if not isinstance(env.get(b, b), tuple) else
                        self.realize(scope, env[b], b, loc) for b in bits]
            return bits
        if tag == "bit":
            base = e[1]
            if base[0] != "id":
                raise self._unsupported("bit select of an expression", e, loc)
            info = scope.lookup(base[1])
            if info is None:
                try:
                    v = scope.param(base[1])
                    idx = self.const(e[2], scope, loc)
                    return [C1 if (int(v) >> idx) & 1 else C0]
                except KeyError:
                    raise ElaborationError(f"undeclared identifier '{base[1]}'", *_where(loc),
                                           construct=base[1]) from None
            try:
                idx = const_value(e[2], scope.all_params())
            except NotConstant:
                if not reading:
                    raise self._unsupported("assignment to a variable bit index", e, loc)
                whole = self.lvalue_bits(base, scope, loc, True, env)
                sel = self.bits(e[2], scope, loc, None, env)
                return [self.select_mux(scope, whole, sel, loc)]
            if info.indices is None:
                if idx == 0:
                    b = info.base
                else:
                    raise ElaborationError(f"bit select [{idx}] of scalar '{base[1]}'",
                                           *_where(loc), construct=_expr_text(e))
            else:
                if idx not in info.indices:
                    raise ElaborationError(f"bit [{idx}] is out of the range of '{base[1]}'",
                                           *_where(loc), construct=_expr_text(e))
                b = info.bit(idx)
            if env is not None and reading and b in env:
                v = env[b]
                return [v if not isinstance(v, tuple) else self.realize(scope, v, b, loc)]
            return [b]
        if tag in ("part", "ipart"):
            base = e[1]
            if base[0] != "id":
                raise self._unsupported("part select of an expression", e, loc)
            info = scope.lookup(base[1])
            if tag == "part":
                msb = self.const(e[2], scope, loc)
                lsb = self.const(e[3], scope, loc)
            else:
                try:
                    start = const_value(e[2], scope.all_params())
                except NotConstant:
                    raise self._unsupported("indexed part select with a variable base", e, loc)
                w = self.const(e[3], scope, loc)
                if e[4] == "+":
                    lsb, msb = int(start), int(start) + w - 1
                else:
                    msb, lsb = int(start), int(start) - w + 1
                if info is not None and info.indices and info.indices[0] > info.indices[-1]:
                    msb, lsb = lsb, msb
            if info is None:
                try:
                    v = int(scope.param(base[1]))
                except KeyError:
                    raise ElaborationError(f"undeclared identifier '{base[1]}'", *_where(loc),
                                           construct=base[1]) from None
                lo, hi = min(msb, lsb), max(msb, lsb)
                return [C1 if (v >> i) & 1 else C0 for i in range(lo, hi + 1)]
            step = 1 if msb >= lsb else -1
            out = []
            for i in range(lsb, msb + step, step):
                if info.indices is None or i not in info.indices:
                    raise ElaborationError(f"part select [{msb}:{lsb}] is out of the range of "
                                           f"'{base[1]}'", *_where(loc), construct=_expr_text(e))
                b = info.bit(i)
                if env is not None and reading and b in env:
                    v = env[b]
                    b = v if not isinstance(v, tuple) else self.realize(scope, v, b, loc)
                out.append(b)
            return out
        if tag == "concat":
            out: list[str] = []
            for x in reversed(e[1]):
                out.extend(self.lvalue_bits(x, scope, loc, reading, env) if not reading else
                           self.bits(x, scope, loc, None, env))
            return out
        if tag == "repl":
            n = self.const(e[1], scope, loc)
            one: list[str] = []
            for x in reversed(e[2]):
                one.extend(self.bits(x, scope, loc, None, env))
            return one * n
        if reading:
            return self.bits(e, scope, loc, None, env)
        raise ElaborationError(f"'{_expr_text(e)}' cannot be assigned to", *_where(loc),
                               construct=_expr_text(e))

    # ------------------------------------------------------------- gate structures -------------
    def reduce(self, scope, op: str, bits: list[str], loc) -> str:
        if len(bits) == 1:
            return bits[0]
        return self.gate(scope, op, bits, loc)

    def mux_bits(self, scope, c: str, a: list[str], b: list[str], loc) -> list[str]:
        if c == C1:
            return a
        if c == C0:
            return b
        nc = self.gate(scope, "not", [c], loc)
        out = []
        for x, y in zip(a, b):
            if x == y:
                out.append(x)
                continue
            t = self.gate(scope, "and", [c, x], loc)
            f = self.gate(scope, "and", [nc, y], loc)
            out.append(self.gate(scope, "or", [t, f], loc))
        return out

    def adder(self, scope, a, b, loc, subtract=False):
        """Ripple-carry adder (a + b, or a - b as a + ~b + 1): returns (sum bits, carry out)."""
        carry = C1 if subtract else C0
        out = []
        for x, y in zip(a, b):
            if subtract:
                y = self.gate(scope, "not", [y], loc)
            p = self.gate(scope, "xor", [x, y], loc)
            out.append(self.gate(scope, "xor", [p, carry], loc))
            g1 = self.gate(scope, "and", [x, y], loc)
            g2 = self.gate(scope, "and", [p, carry], loc)
            carry = self.gate(scope, "or", [g1, g2], loc)
        return out, carry

    def multiplier(self, scope, a, b, W, loc):
        """Array multiplier truncated to W bits: shift-and-add of partial products."""
        acc = [C0] * W
        for j, bj in enumerate(b[:W]):
            pp = [C0] * j + [self.gate(scope, "and", [ai, bj], loc) for ai in a[:W - j]]
            acc = self.adder(scope, acc, pp, loc)[0]
        return acc

    def compare(self, scope, op, a, b, loc) -> str:
        if op in ("==", "===", "!=", "!=="):
            eqs = [self.gate(scope, "xnor", [x, y], loc) for x, y in zip(a, b)]
            eq = self.reduce(scope, "and", eqs, loc) if eqs else C1
            return eq if op in ("==", "===") else self.gate(scope, "not", [eq], loc)
        if op in (">", "<="):
            a, b = b, a          # a > b  <=>  b < a
        # a < b  <=>  borrow out of a - b
        _, carry = self.adder(scope, a, b, loc, subtract=True)
        lt = self.gate(scope, "not", [carry], loc)
        return lt if op in ("<", ">") else self.gate(scope, "not", [lt], loc)

    def barrel(self, scope, a, amt, left, loc):
        cur = list(a)
        for k, s in enumerate(amt):
            n = 1 << k
            if n >= len(cur) * 2 and s not in (C0,):
                shifted = [C0] * len(cur)
            else:
                shifted = _shift(cur, n, left)
            cur = self.mux_bits(scope, s, shifted, cur, loc)
        return cur

    def select_mux(self, scope, whole: list[str], sel: list[str], loc) -> str:
        """whole[sel] for a variable index, as a mux tree over the select bits."""
        level = list(whole)
        for s in sel:
            nxt = []
            for i in range(0, len(level), 2):
                lo = level[i]
                hi = level[i + 1] if i + 1 < len(level) else C0
                nxt.append(self.mux_bits(scope, s, [hi], [lo], loc)[0])
            level = nxt
            if len(level) == 1:
                break
        return level[0] if level else C0

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
                    d = _sum_delay(delay, self.net_delay[dst]) if dst in self.net_delay \
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

    def delay(self, d, scope: Scope, loc) -> Delay:
        """An IR delay (list of (min, typ, max) expressions: rise, fall, turn-off) as a Delay in
        design time units."""
        params = scope.all_params()
        vals = []
        for mtm in d[:2]:
            try:
                mn, _typ, mx = (float(const_value(x, params)) for x in mtm)
            except NotConstant as exc:
                raise ElaborationError(f"delay is not a constant expression ('{exc}')",
                                       *_where(loc)) from None
            vals.append((mn, mx))
        if len(vals) == 1:
            vals.append(vals[0])
        f = self.unit_factor(scope.module.timescale)
        (rmin, rmax), (fmin, fmax) = vals
        return Delay(rmin * f, rmax * f, fmin * f, fmax * f)

    def unit_factor(self, timescale) -> float:
        if not timescale or not self.time_unit:
            return 1.0
        return timescale[0] / self.time_unit

    # ---------------------------------------------------------------- instances ----------------
    def elab_instance(self, scope: Scope, inst: ir.Instance, depth: int) -> None:
        if inst.array is not None:
            msb = self.const(inst.array[0], scope, inst.loc)
            lsb = self.const(inst.array[1], scope, inst.loc)
            step = 1 if msb >= lsb else -1
            idxs = list(range(lsb, msb + step, step))
            n = len(idxs)
            conns = []
            for pname, e in inst.connections:
                if e is None:
                    conns.append((pname, None))
                    continue
                conns.append((pname, self.lvalue_bits(e, scope, inst.loc, reading=True)))
            for k, i in enumerate(idxs):
                sub = []
                for pname, bits in conns:
                    if bits is None:
                        sub.append((pname, None))
                    elif len(bits) % n == 0 and len(bits) >= n and len(bits) > 1:
                        w = len(bits) // n
                        sub.append((pname, ("_bits", bits[k * w:(k + 1) * w])))
                    else:
                        sub.append((pname, ("_bits", bits)))
                one = ir.Instance(cell=inst.cell, name=f"{inst.name}[{i}]", connections=sub,
                                  params=inst.params, delay=inst.delay, loc=inst.loc,
                                  attrs=inst.attrs)
                self.elab_instance(scope, one, depth)
            return
        cell = inst.cell
        if cell in lib.PRIMITIVES:
            self.elab_primitive(scope, inst)
        elif cell in lib.SWITCH_PRIMITIVES:
            self.blackbox(scope, inst, f"switch-level primitive '{cell}' is not modelled")
        elif cell in self.modules:
            self.elab_submodule(scope, inst, depth)
        elif cell in self.primitives:
            self.elab_udp(scope, inst, self.primitives[cell])
        elif cell in self.library:
            self.elab_cell(scope, inst, self.library.get(cell))
        else:
            if cell not in self.blackbox_cells_warned:
                self.blackbox_cells_warned.add(cell)
                self.note(f"unknown cell type '{cell}' is treated as a black box (declare it in "
                          f"the configuration or give a Liberty library)", inst.loc,
                          f"{scope.instance}.{inst.name}", severity=Severity.WARNING)
            self.blackbox(scope, inst, f"unknown cell '{cell}'", note=False)

    def conn_bits(self, scope, e, loc) -> list[str] | None:
        if e is None:
            return None
        if isinstance(e, tuple) and e and e[0] == "_bits":
            return list(e[1])
        return self.lvalue_bits(e, scope, loc, reading=True)

    def elab_primitive(self, scope: Scope, inst: ir.Instance) -> None:
        cell = inst.cell
        path = f"{scope.instance}.{inst.name}" if inst.name else f"{scope.instance}.{cell}"
        if any(p is not None for p, _ in inst.connections):
            raise ElaborationError(f"gate primitive '{cell}' takes positional terminals only",
                                   *_where(inst.loc), construct=inst.name or cell)
        terms = [self.conn_bits(scope, e, inst.loc) for _, e in inst.connections]
        if any(t is None for t in terms):
            raise ElaborationError(f"gate primitive '{cell}' has an empty terminal",
                                   *_where(inst.loc), construct=inst.name or cell)
        dspec = inst.delay
        if dspec is None and inst.params:
            dspec = [(v, v, v) for _, v in inst.params]
        delay = self.delay(dspec, scope, inst.loc) if dspec else self.default_delay
        if cell in lib.PULL_GATES:
            for t in terms:
                for b in t:
                    self._add_driver("const", b, op="const1" if cell == "pullup" else "const0",
                                     instance=path, loc=inst.loc, weak=True)
            return
        if cell in lib.N_INPUT_GATES:
            if len(terms) < 2:
                raise ElaborationError(f"'{cell}' needs an output and at least one input",
                                       *_where(inst.loc), construct=inst.name or cell)
            outs, ins = [terms[0]], terms[1:]
            op = cell
        elif cell in lib.N_OUTPUT_GATES:
            if len(terms) < 2:
                raise ElaborationError(f"'{cell}' needs at least one output and an input",
                                       *_where(inst.loc), construct=inst.name or cell)
            outs, ins = terms[:-1], [terms[-1]]
            op = cell
        else:  # three-state
            if len(terms) != 3:
                raise ElaborationError(f"'{cell}' takes (output, data, enable)",
                                       *_where(inst.loc), construct=inst.name or cell)
            outs, ins = [terms[0]], terms[1:]
            op = cell
        in_sigs = [t[0] if len(t) == 1 else t[0] for t in ins]
        for t in ins + outs:
            if len(t) != 1:
                self.note(f"vector connected to a terminal of gate '{inst.name or cell}': "
                          f"only its least significant bit is used", inst.loc, path)
        for o in outs:
            self._add_driver("gate", o[0], op=op, inputs=in_sigs, delays=[delay] * len(in_sigs),
                             cell=cell, instance=path, loc=inst.loc, attrs=inst.attrs,
                             tri=cell in lib.TRISTATE_GATES, explicit_delay=bool(dspec))
        if cell in lib.TRISTATE_GATES:
            self.add_sink(in_sigs[1], "tristate_enable",
                          f"{self.rel(scope, inst.name or cell)}.enable", inst.loc, path,
                          active=1 if cell.endswith("1") else 0)

    def rel(self, scope: Scope, name: str) -> str:
        """Instance-relative readable name below the top: "u1.q_reg"."""
        return f"{scope.prefix}{name}"

    def blackbox(self, scope: Scope, inst: ir.Instance, reason: str, note: bool = True) -> None:
        path = f"{scope.instance}.{inst.name}"
        self.blackboxes.append(BlackBox(name=path, cell=inst.cell,
                                        path=inst.loc.path if inst.loc else "",
                                        line=inst.loc.line if inst.loc else 0, reason=reason))
        if note:
            self.note(f"{reason}: instance '{inst.name}' is treated as a black box", inst.loc,
                      path)
        mod = self.modules.get(inst.cell)
        for i, (pname, e) in enumerate(inst.connections):
            bits = self.conn_bits(scope, e, inst.loc)
            if not bits:
                continue
            direction = None
            if mod is not None:
                pn = pname if pname is not None else (mod.port_order[i] if i < len(mod.port_order)
                                                     else None)
                p = mod.ports.get(pn) if pn else None
                direction = p.direction if p else None
            for b in bits:
                if b in (C0, C1):
                    continue
                if direction in ("output", "inout"):
                    self._add_driver("blackbox", b, op="buf", instance=path, loc=inst.loc,
                                     cell=inst.cell, reason=reason)
                elif direction is None:
                    self.blackbox_pins.add(b)
                    self.bb_owner.setdefault(b, (path, inst.cell, inst.loc, reason))

    def elab_submodule(self, scope: Scope, inst: ir.Instance, depth: int) -> None:
        m = self.modules[inst.cell]
        child = Scope(prefix=f"{scope.prefix}{inst.name}.", instance=f"{scope.instance}."
                      f"{inst.name}", module=m)
        overrides = []
        params_src = inst.params
        if not params_src and inst.delay:
            params_src = [(None, mtm[1]) for mtm in inst.delay]
        for pname, e in params_src:
            try:
                v = const_value(e, scope.all_params())
            except NotConstant as exc:
                raise ElaborationError(f"parameter override for '{inst.name}' is not constant "
                                       f"('{exc}')", *_where(inst.loc)) from None
            overrides.append((pname, ("_value", v)))
        # connections are bit-blasted in the parent's scope first
        conns: dict[str, list[str] | None] = {}
        for i, (pname, e) in enumerate(inst.connections):
            if pname is None:
                if i >= len(m.port_order):
                    raise ElaborationError(f"instance '{inst.name}' of '{m.name}' has more "
                                           f"connections than ports", *_where(inst.loc),
                                           construct=inst.name)
                pname = m.port_order[i]
            elif pname not in m.ports:
                raise ElaborationError(f"module '{m.name}' has no port '{pname}'",
                                       *_where(inst.loc), construct=f".{pname}")
            conns[pname] = e
        try:
            mark = (len(self.drivers), len(self.sinks), len(self.registers))
            self.elab_module(child, m, overrides, depth + 1)
        except _BlackBoxModule as bb:
            del self.drivers[mark[0]:]
            del self.sinks[mark[1]:]
            del self.registers[mark[2]:]
            where = f" at {bb.loc.path}:{bb.loc.line}" if bb.loc else ""
            self.note(f"module '{m.name}' has behavioural code that hazlint does not model "
                      f"({bb.reason}{where}); its instances are black boxes", bb.loc,
                      child.instance, key=("bbmod", m.name))
            self.blackbox(scope, inst, f"behavioural module '{m.name}'", note=False)
            return
        for pname in m.port_order:
            port = m.ports.get(pname)
            if port is None:
                continue
            inner = child.nets[pname].bits()
            e = conns.get(pname)
            if e is None:
                if port.direction == "input":
                    for b in inner:
                        self._add_driver("blackbox", b, op="buf", instance=child.instance,
                                         loc=inst.loc, cell="unconnected",
                                         reason=f"unconnected input port '{pname}'")
                    self.note(f"input port '{pname}' of '{inst.name}' is unconnected; it is a "
                              f"free input for analysis", inst.loc, child.instance)
                continue
            if port.direction == "input":
                outer = self.conn_bits(scope, e, inst.loc)
            else:
                outer = (list(e[1]) if isinstance(e, tuple) and e and e[0] == "_bits"
                         else self.lvalue_bits(e, scope, inst.loc))
            if len(outer) != len(inner):
                self.note(f"port '{pname}' of '{inst.name}' is {len(inner)} bits wide but "
                          f"connected to {len(outer)} bits", inst.loc, child.instance,
                          severity=Severity.WARNING)
            if port.direction == "input":
                for dst, src in zip(inner, _extend(outer, len(inner))):
                    self.connect(scope, dst, src, inst.loc, instance=child.instance)
            else:
                for src, dst in zip(inner, outer):
                    if dst in (C0, C1):
                        continue
                    if dst in self.net_delay:
                        # a net with a delay driven from a child's output: a delayed buffer
                        self.connect(scope, dst, src, inst.loc, instance=child.instance)
                    else:
                        self.union(dst, src)

    # ---------------------------------------------------------------- library cells ------------
    def _cell_pins(self, scope, inst, pins: list[str]) -> dict[str, list[str] | None]:
        out: dict[str, list[str] | None] = {}
        for i, (pname, e) in enumerate(inst.connections):
            if pname is None:
                if i >= len(pins):
                    raise ElaborationError(f"instance '{inst.name}' of '{inst.cell}' has more "
                                           f"connections than the cell has pins",
                                           *_where(inst.loc), construct=inst.name)
                pname = pins[i]
            out[pname] = self.conn_bits(scope, e, inst.loc) if e is not None else None
        return out

    def elab_cell(self, scope: Scope, inst: ir.Instance, cell: CellDef) -> None:
        path = f"{scope.instance}.{inst.name}"
        positional = any(p is None for p, _ in inst.connections)
        order = list(getattr(cell, "pin_order", None) or (cell.outputs + cell.inputs))
        if positional and not getattr(cell, "pin_order", None):
            self.note(f"positional connections to cell '{cell.name}' are taken in the order "
                      f"outputs then inputs ({', '.join(order)})", inst.loc, path,
                      key=("cellpos", cell.name))
        conns = self._cell_pins(scope, inst, order)
        for p in conns:
            if cell.pin_direction(p) is None:
                raise ElaborationError(f"cell '{cell.name}' has no pin '{p}'", *_where(inst.loc),
                                       construct=f".{p}")

        def pin_sig(p: str) -> str:
            bits = conns.get(p)
            if not bits:
                if p not in self._unconn_noted.setdefault(path, set()):
                    self._unconn_noted[path].add(p)
                    self.note(f"input pin '{p}' of '{inst.name}' is unconnected; taken as 0",
                              inst.loc, path)
                return C0
            return bits[0]

        self._unconn_noted = getattr(self, "_unconn_noted", {})
        if cell.sequential is not None:
            self.elab_seq_cell(scope, inst, cell, conns, pin_sig, path)
            return
        for out in cell.outputs:
            bits = conns.get(out)
            if not bits:
                continue
            fn = cell.functions.get(out)
            if fn is None:
                self._add_driver("blackbox", bits[0], op="buf", instance=path, loc=inst.loc,
                                 cell=cell.name, reason=f"output '{out}' has no function")
                continue
            used = [p for p in cell.inputs + cell.inouts if p in lib.expr_vars(fn)]
            op, expr = _function_op(fn, used)
            ins = [pin_sig(p) for p in used]
            delays = [cell.arcs.get((p, out)) or cell.default_delay or self.default_delay
                      for p in used]
            en = cell.three_state.get(out)
            if en is not None:
                data = self.fresh(scope, "tri")
                self._add_driver("gate", data, op=op, inputs=ins, pins=used, delays=delays,
                                 cell=cell.name, instance=path, loc=inst.loc, expr=expr)
                en_used = [p for p in cell.inputs if p in lib.expr_vars(en)]
                en_op, en_expr = _function_op(en, en_used)
                en_sig = self.fresh(scope, "en")
                self._add_driver("gate", en_sig, op=en_op,
                                 inputs=[pin_sig(p) for p in en_used], pins=en_used,
                                 delays=[ZERO_DELAY] * len(en_used), cell=cell.name,
                                 instance=path, loc=inst.loc, expr=en_expr)
                self._add_driver("gate", bits[0], op="bufif0", inputs=[data, en_sig],
                                 pins=[out, "three_state"], delays=[ZERO_DELAY, ZERO_DELAY],
                                 cell=cell.name, instance=path, loc=inst.loc, tri=True,
                                 out_pin=out)
                self.add_sink(en_sig, "tristate_enable", f"{self.rel(scope, inst.name)}.{out}.en",
                              inst.loc, path, active=0)
            else:
                self._add_driver("gate", bits[0], op=op, inputs=ins, pins=used, delays=delays,
                                 cell=cell.name, instance=path, loc=inst.loc, expr=expr,
                                 attrs=inst.attrs, out_pin=out)

    def _expr_signal(self, scope, e, pin_sig, loc) -> tuple[str, int]:
        """Signal and active level for a control expression over pins: a plain pin or its
        inversion gives (pin net, 1|0) with no gate; anything else becomes gates (level 1)."""
        if e[0] == "var":
            return pin_sig(e[1]), 1
        if e[0] == "not" and e[1][0] == "var":
            return pin_sig(e[1][1]), 0
        return self._expr_gates(scope, e, pin_sig, loc), 1

    @staticmethod
    def _pin_of(e) -> dict:
        """``{"pin": name}`` when a control expression is one cell pin (or its inversion)."""
        if e is not None and e[0] == "var":
            return {"pin": e[1]}
        if e is not None and e[0] == "not" and e[1][0] == "var":
            return {"pin": e[1][1]}
        return {}

    def _expr_gates(self, scope, e, pin_sig, loc) -> str:
        tag = e[0]
        if tag == "var":
            return pin_sig(e[1])
        if tag == "const":
            return C1 if e[1] else C0
        if tag == "not":
            return self.gate(scope, "not", [self._expr_gates(scope, e[1], pin_sig, loc)], loc,
                             delay=ZERO_DELAY)
        return self.gate(scope, tag, [self._expr_gates(scope, x, pin_sig, loc) for x in e[1:]],
                         loc, delay=ZERO_DELAY)

    def elab_seq_cell(self, scope, inst, cell: CellDef, conns, pin_sig, path) -> None:
        seq = cell.sequential
        name = self.rel(scope, inst.name)
        reg = Register(name=name, kind=seq.kind, cell=cell.name, instance=path,
                       path=inst.loc.path if inst.loc else "", line=inst.loc.line if inst.loc
                       else 0)
        loc = inst.loc

        def iq(p):  # next_state may read the state itself (IQ)
            if p in ("IQ", "IQN"):
                return HOLD
            return pin_sig(p)
        if seq.kind == "ff":
            if seq.clocked_on is None or seq.next_state is None:
                raise ElaborationError(f"flip-flop cell '{cell.name}' needs clocked_on and "
                                       f"next_state", *_where(loc))
            clk, level = self._expr_signal(scope, seq.clocked_on, pin_sig, loc)
            reg.clock_edge = "posedge" if level == 1 else "negedge"
            reg.pins["clock"] = self.add_sink(clk, "clock", f"{name}.clock", loc, path,
                                              register=name, active=reg.clock_edge,
                                              **self._pin_of(seq.clocked_on))
            data_e = seq.next_state
        else:
            if seq.enable is None or seq.data_in is None:
                raise ElaborationError(f"latch cell '{cell.name}' needs enable and data_in",
                                       *_where(loc))
            en, level = self._expr_signal(scope, seq.enable, pin_sig, loc)
            reg.active["enable"] = level
            reg.pins["enable"] = self.add_sink(en, "enable", f"{name}.enable", loc, path,
                                               register=name, active=level,
                                               **self._pin_of(seq.enable))
            data_e = seq.data_in
        q_net = None
        for out, which in seq.state_outputs.items():
            bits = conns.get(out)
            if bits:
                self._add_driver("state", bits[0], op="buf", instance=path, loc=loc,
                                 cell=cell.name, register=name, state=which, out_pin=out)
                reg.outputs[which] = bits[0]
                q_net = q_net or (bits[0] if which == "Q" else None)
        for out, fn in cell.functions.items():   # outputs that are functions of the state
            bits = conns.get(out)
            if bits and set(lib.expr_vars(fn)) <= {"IQ", "IQN"}:
                which = "QN" if fn in (("var", "IQN"), ("not", ("var", "IQ"))) else "Q"
                self._add_driver("state", bits[0], op="buf", instance=path, loc=loc,
                                 cell=cell.name, register=name, state=which, out_pin=out)
                reg.outputs[which] = bits[0]
        if not reg.outputs:
            hidden = self.fresh(scope, "q")
            self._add_driver("state", hidden, op="buf", instance=path, loc=loc, cell=cell.name,
                             register=name, state="Q")
            reg.outputs["Q"] = hidden
        qsig = reg.outputs.get("Q")

        def data_pin(p):
            if p == "IQ":
                return qsig or C0
            if p == "IQN":
                return reg.outputs.get("QN") or C0
            return pin_sig(p)
        d = self._expr_gates(scope, data_e, data_pin, loc)
        reg.pins["data"] = self.add_sink(d, "data", f"{name}.data", loc, path, register=name,
                                         **self._pin_of(data_e))
        for role, e in (("reset", seq.clear), ("set", seq.preset)):
            if e is None:
                continue
            sig, level = self._expr_signal(scope, e, pin_sig, loc)
            if sig in (C0, C1):
                continue
            reg.active[role] = level
            reg.pins[role] = self.add_sink(sig, role, f"{name}.{role}", loc, path,
                                           register=name, active=level, **self._pin_of(e))
        self.registers.append(reg)
        if seq.kind == "latch":
            self.latch_paths.append((reg.pins["data"], reg.pins["enable"],
                                     reg.outputs.get("Q") or next(iter(reg.outputs.values()))))

    # ---------------------------------------------------------------- UDPs ---------------------
    def elab_udp(self, scope: Scope, inst: ir.Instance, udp: ir.Primitive) -> None:
        path = f"{scope.instance}.{inst.name}"
        terms = [self.conn_bits(scope, e, inst.loc) for _, e in inst.connections]
        if len(terms) != 1 + len(udp.inputs) or any(t is None for t in terms):
            raise ElaborationError(f"UDP '{udp.name}' takes {1 + len(udp.inputs)} terminals",
                                   *_where(inst.loc), construct=inst.name)
        out = terms[0][0]
        ins = [t[0] for t in terms[1:]]
        dspec = inst.delay
        if dspec is None and inst.params:
            dspec = [(v, v, v) for _, v in inst.params]
        delay = self.delay(dspec, scope, inst.loc) if dspec else self.default_delay
        if not udp.sequential:
            expr = _udp_comb_expr(udp)
            self._add_driver("gate", out, op="expr", inputs=ins, pins=list(udp.inputs),
                             delays=[delay] * len(ins), cell=udp.name, instance=path,
                             loc=inst.loc, expr=expr)
            return
        roles = _udp_seq_roles(udp)
        name = self.rel(scope, inst.name)
        kind = "ff" if roles["clock"] is not None else "latch"
        reg = Register(name=name, kind=kind, cell=udp.name, instance=path,
                       path=inst.loc.path if inst.loc else "",
                       line=inst.loc.line if inst.loc else 0)
        self._add_driver("state", out, op="buf", instance=path, loc=inst.loc, cell=udp.name,
                         register=name, state="Q")
        reg.outputs["Q"] = out
        for i, pin in enumerate(udp.inputs):
            role = roles["pins"][i]
            active = roles["active"].get(i)
            kw = {"register": name}
            if role == "clock":
                reg.clock_edge = active
                kw["active"] = active
            elif active is not None:
                reg.active[role] = active
                kw["active"] = active
            sid = self.add_sink(ins[i], role, f"{name}.{pin}", inst.loc, path, pin=pin, **kw)
            reg.pins.setdefault(role, sid)
        self.registers.append(reg)
        if kind == "latch" and "enable" in reg.pins and "data" in reg.pins:
            self.latch_paths.append((reg.pins["data"], reg.pins["enable"], out))

    # ---------------------------------------------------------------- always blocks ------------
    def elab_always(self, scope: Scope, al: ir.Always) -> None:
        edges = [(edge, e) for edge, e in al.sens if edge in ("posedge", "negedge")]
        body = al.body
        if body is None:
            return
        if edges:
            self.elab_clocked(scope, al, edges)
        else:
            self.elab_level(scope, al)

    def _assigned(self, stmt, scope, loc, out: list) -> None:
        """Collect the net bits a statement assigns (in order)."""
        if stmt is None:
            return
        tag = stmt[0]
        if tag == "block":
            for s in stmt[1]:
                self._assigned(s, scope, loc, out)
        elif tag == "if":
            self._assigned(stmt[2], scope, loc, out)
            self._assigned(stmt[3], scope, loc, out)
        elif tag == "case":
            for _labels, s in stmt[3]:
                self._assigned(s, scope, loc, out)
        elif tag == "assign":
            for b in self.lvalue_bits(stmt[2], scope, _line(loc, stmt[4])):
                if b not in out:
                    out.append(b)
        elif tag == "other":
            raise _BlackBoxModule(stmt[1], _line(loc, stmt[2]))

    def exec_stmt(self, stmt, scope, loc, env: dict, blocking_env: dict) -> None:
        """Symbolic execution: ``env`` maps assigned net bits to value trees
        (signal | HOLD | ("mux", cond_signal, then_tree, else_tree))."""
        if stmt is None:
            return
        tag = stmt[0]
        if tag == "block":
            for s in stmt[1]:
                self.exec_stmt(s, scope, loc, env, blocking_env)
        elif tag == "assign":
            kind, lhs, rhs, line = stmt[1], stmt[2], stmt[3], stmt[4]
            sl = _line(loc, line)
            dst = self.lvalue_bits(lhs, scope, sl)
            src = self.bits(rhs, scope, sl, len(dst), env=blocking_env)
            for d, s in zip(dst, src):
                env[d] = s
                if kind == "=":
                    blocking_env[d] = s
        elif tag == "if":
            c = self.reduce(scope, "or", self.bits(stmt[1], scope, loc, None, env=blocking_env),
                            loc)
            e_then, e_else = dict(env), dict(env)
            b_then, b_else = dict(blocking_env), dict(blocking_env)
            self.exec_stmt(stmt[2], scope, loc, e_then, b_then)
            self.exec_stmt(stmt[3], scope, loc, e_else, b_else)
            self._merge(scope, loc, c, env, e_then, e_else, blocking_env, b_then, b_else)
        elif tag == "case":
            kind, sel, arms = stmt[1], stmt[2], stmt[3]
            w = self.width(sel, scope, loc)
            s_bits = self.bits(sel, scope, loc, None, env=blocking_env)
            default = None
            conds = []
            for labels, s in arms:
                if labels is None:
                    default = s
                    continue
                terms = []
                for lb in labels:
                    terms.append(self._case_match(scope, kind, s_bits, lb, w, loc,
                                                  blocking_env))
                conds.append((self.reduce(scope, "or", terms, loc), s))
            # build from the last arm backwards: if (c1) s1 else if (c2) s2 ... else default
            chain = default
            for c, s in reversed(conds):
                chain = ("if_sig", c, s, chain)
            self._exec_chain(chain, scope, loc, env, blocking_env)
        elif tag == "if_sig":
            self._exec_chain(stmt, scope, loc, env, blocking_env)
        elif tag == "other":
            raise _BlackBoxModule(stmt[1], _line(loc, stmt[2]))

    def _exec_chain(self, chain, scope, loc, env, blocking_env):
        if chain is None:
            return
        if chain[0] != "if_sig":
            self.exec_stmt(chain, scope, loc, env, blocking_env)
            return
        _, c, s, rest = chain
        e_then, e_else = dict(env), dict(env)
        b_then, b_else = dict(blocking_env), dict(blocking_env)
        self.exec_stmt(s, scope, loc, e_then, b_then)
        self._exec_chain(rest, scope, loc, e_else, b_else)
        self._merge(scope, loc, c, env, e_then, e_else, blocking_env, b_then, b_else)

    def _merge(self, scope, loc, c, env, e_then, e_else, benv, b_then, b_else):
        for k in set(e_then) | set(e_else):
            a = e_then.get(k, env.get(k, HOLD))
            b = e_else.get(k, env.get(k, HOLD))
            env[k] = a if a == b else ("mux", c, a, b)
        for k in set(b_then) | set(b_else):
            a = b_then.get(k, benv.get(k, k))
            b = b_else.get(k, benv.get(k, k))
            if a == b:
                benv[k] = a
            else:
                benv[k] = self.realize(scope, ("mux", c, a, b), k, loc)

    def _case_match(self, scope, kind, s_bits, label, w, loc, env) -> str:
        if label[0] == "num" and kind in ("casez", "casex") and label[3]:
            _, _lw, value, xz, _ = label
            terms = []
            for i, sb in enumerate(s_bits):
                if (xz >> i) & 1:
                    continue
                bit = C1 if (value >> i) & 1 else C0
                terms.append(sb if bit == C1 else self.gate(scope, "not", [sb], loc))
            return self.reduce(scope, "and", terms, loc) if terms else C1
        lb = self.bits(label, scope, loc, len(s_bits), env=env)
        return self.compare(scope, "==", s_bits, lb, loc)

    def realize(self, scope, tree, hold: str, loc) -> str:
        """Turn a value tree into gates; HOLD stands for ``hold`` (the variable's own value)."""
        if tree == HOLD:
            return hold
        if isinstance(tree, str):
            return tree
        _, c, a, b = tree
        ra = self.realize(scope, a, hold, loc)
        rb = self.realize(scope, b, hold, loc)
        if ra == rb:
            return ra
        return self.mux_bits(scope, c, [ra], [rb], loc)[0]

    @staticmethod
    def _has_hold(tree) -> bool:
        if tree == HOLD:
            return True
        if isinstance(tree, str):
            return False
        return Elaborator._has_hold(tree[2]) or Elaborator._has_hold(tree[3])

    def _enable_of(self, scope, tree, loc) -> str:
        """Condition under which a value tree does not hold (latch enable)."""
        if tree == HOLD:
            return C0
        if isinstance(tree, str):
            return C1
        _, c, a, b = tree
        ea = self._enable_of(scope, a, loc)
        eb = self._enable_of(scope, b, loc)
        if ea == eb:
            return ea
        if ea == C1 and eb == C0:
            return c
        if ea == C0 and eb == C1:
            return self.gate(scope, "not", [c], loc)
        return self.mux_bits(scope, c, [ea], [eb], loc)[0]

    def _data_of(self, tree):
        """The value tree with held branches pruned (latch data)."""
        if isinstance(tree, str) or tree == HOLD:
            return tree
        _, c, a, b = tree
        a, b = self._data_of(a), self._data_of(b)
        if a == HOLD:
            return b
        if b == HOLD:
            return a
        return ("mux", c, a, b)

    def elab_level(self, scope: Scope, al: ir.Always) -> None:
        loc = al.loc
        assigned: list[str] = []
        self._assigned(al.body, scope, loc, assigned)
        env: dict = {}
        self.exec_stmt(al.body, scope, loc, env, {})
        for b in assigned:
            tree = env.get(b, HOLD)
            if not self._has_hold(tree):
                self.connect(scope, b, self.realize(scope, tree, b, loc), loc)
                continue
            if al.kind == "always_comb":
                self.note(f"'{b}' is not assigned on every path of an always_comb block: "
                          f"modelled as a latch", loc, scope.instance)
            en = self._enable_of(scope, tree, loc)
            data = self.realize(scope, self._data_of(tree), C0, loc)
            self._make_register(scope, al, b, "latch", enable=(en, 1), data=data)

    def _make_register(self, scope, al, bit, kind, *, clock=None, enable=None, data=None,
                       sets=(), resets=()) -> Register:
        loc = al.loc
        name = bit
        path = f"{scope.instance}.{bit[len(scope.prefix):]}" if bit.startswith(scope.prefix) \
            else f"{scope.instance}.{bit}"
        reg = Register(name=name, kind=kind, cell="always", instance=path,
                       path=loc.path if loc else "", line=loc.line if loc else 0)
        self._add_driver("state", bit, op="buf", instance=path, loc=loc, cell="always",
                         register=name, state="Q")
        reg.outputs["Q"] = bit
        if clock is not None:
            sig, edge = clock
            reg.clock_edge = edge
            reg.pins["clock"] = self.add_sink(sig, "clock", f"{name}.clock", loc, path,
                                              register=name, active=edge)
        if enable is not None:
            sig, level = enable
            reg.active["enable"] = level
            reg.pins["enable"] = self.add_sink(sig, "enable", f"{name}.enable", loc, path,
                                               register=name, active=level)
        reg.pins["data"] = self.add_sink(data, "data", f"{name}.data", loc, path, register=name)
        for role, items in (("set", sets), ("reset", resets)):
            for k, (sig, level, sloc) in enumerate(items):
                pin_name = f"{name}.{role}" if k == 0 else f"{name}.{role}{k}"
                sid = self.add_sink(sig, role, pin_name, sloc or loc, path, register=name,
                                    active=level)
                reg.pins.setdefault(role, sid)
                reg.active.setdefault(role, level)
        self.registers.append(reg)
        if kind == "latch":
            self.latch_paths.append((reg.pins["data"], reg.pins["enable"], bit))
        return reg

    def elab_clocked(self, scope: Scope, al: ir.Always, edges) -> None:
        loc = al.loc
        body = al.body
        while body and body[0] == "block" and len(body[1]) == 1:
            body = body[1][0]
        edge_names = {}
        for edge, e in edges:
            if e[0] != "id":
                raise _BlackBoxModule("edge on an expression in a sensitivity list", loc)
            edge_names[e[1]] = edge
        # peel asynchronous branches: if (<async cond>) ... else if ... else <clocked>
        asyncs = []
        stmt = body
        while (stmt is not None and stmt[0] == "if" and len(edge_names) > 1
               and _ids(stmt[1]) and _ids(stmt[1]) <= set(edge_names)
               and len(asyncs) < len(edge_names) - 1):
            asyncs.append((stmt[1], stmt[2]))
            stmt = stmt[3]
            while stmt is not None and stmt[0] == "block" and len(stmt[1]) == 1:
                stmt = stmt[1][0]
        used = set().union(*(_ids(c) for c, _ in asyncs)) if asyncs else set()
        clocks = [n for n in edge_names if n not in used]
        if len(clocks) != 1:
            raise _BlackBoxModule("always block whose clock cannot be identified (sensitivity "
                                  f"list {', '.join(edge_names)})", loc)
        clk = clocks[0]
        clk_sig = self.net_bits(scope, clk, loc)[0]
        # the clocked part
        assigned: list[str] = []
        self._assigned(stmt, scope, loc, assigned)
        env: dict = {}
        self.exec_stmt(stmt, scope, loc, env, {})
        # asynchronous controls per assigned bit
        async_of: dict[str, list] = {}
        for cond, branch in asyncs:
            sig, level = self._cond_signal(scope, cond, loc)
            benv: dict = {}
            self.exec_stmt(branch, scope, loc, benv, {})
            b_assigned: list[str] = []
            self._assigned(branch, scope, loc, b_assigned)
            for b in b_assigned:
                v = benv.get(b)
                if b not in assigned:
                    assigned.append(b)
                if v == C0:
                    async_of.setdefault(b, []).append(("reset", sig, level))
                elif v == C1:
                    async_of.setdefault(b, []).append(("set", sig, level))
                else:
                    self.note(f"asynchronous load of a non-constant value into '{b}' is "
                              f"modelled as both set and reset pins", loc, scope.instance)
                    async_of.setdefault(b, []).append(("set", sig, level))
                    async_of.setdefault(b, []).append(("reset", sig, level))
        for b in assigned:
            tree = env.get(b, HOLD)
            data = self.realize(scope, tree, b, loc)
            sets = [(s, lv, loc) for role, s, lv in async_of.get(b, []) if role == "set"]
            resets = [(s, lv, loc) for role, s, lv in async_of.get(b, []) if role == "reset"]
            self._make_register(scope, al, b, "ff", clock=(clk_sig, edge_names[clk]), data=data,
                                sets=sets, resets=resets)

    def _cond_signal(self, scope, cond, loc) -> tuple[str, int]:
        """An asynchronous condition as (net, active level); plain forms use no gate."""
        c = cond
        if c[0] == "id":
            return self.net_bits(scope, c[1], loc)[0], 1
        if c[0] == "unop" and c[1] in ("!", "~") and c[2][0] == "id":
            return self.net_bits(scope, c[2][1], loc)[0], 0
        if c[0] == "binop" and c[1] in ("==", "===") and c[2][0] == "id" and c[3][0] == "num":
            return self.net_bits(scope, c[2][1], loc)[0], 1 if c[3][2] else 0
        s = self.reduce(scope, "or", self.bits(cond, scope, loc, None), loc)
        return s, 1

    # ---------------------------------------------------------------- graph --------------------
    def build_graph(self, tops, inputs, outputs) -> Design:
        find = self.find
        g = nx.DiGraph()
        # choose one name per merged net
        members: dict[str, list[str]] = {}
        for name in list(self.parent):
            members.setdefault(find(name), []).append(name)
        self._members = members
        port_set = set(inputs) | set(outputs)

        def rank(n: str):
            return (0 if n in port_set else 1, "$" in n, n.count("."), len(n), n)
        rep = {r: ms[0] if len(ms) == 1 else min(ms, key=rank) for r, ms in members.items()}
        # drivers per merged net
        drv_of: dict[str, list[dict]] = {}
        for d in self.drivers:
            drv_of.setdefault(find(d["out"]), []).append(d)

        def node_of(sig: str) -> str:
            if sig in (C0, C1):
                if sig not in g:
                    g.add_node(sig, kind="const", name=sig, op="const1" if sig == C1 else
                               "const0", inputs=[], pins=[], delays=[], cell="constant",
                               instance="", path="", line=0, column=1)
                return sig
            return rep[find(sig)]

        for r, ds in drv_of.items():
            nid = rep[r]
            strong = [d for d in ds if not d.get("weak")]
            ds_use = strong or ds
            if len(ds_use) > 1:
                tri = [d for d in ds_use if d.get("tri")]
                if len(tri) == len(ds_use):
                    # a three-state bus: the enabled driver wins; resolve with an OR of drivers
                    outs = []
                    for k, d in enumerate(tri):
                        dn = f"{nid}$drv{k}"
                        self._emit(g, dn, d, node_of)
                        outs.append(dn)
                    first = tri[0]
                    g.add_node(nid, kind="gate", name=nid, op="or", inputs=outs,
                               pins=[f"drv{k}" for k in range(len(outs))],
                               delays=[ZERO_DELAY] * len(outs), cell="tribus",
                               instance=first["instance"], **_locattrs(first["loc"]))
                    continue
                kinds = sorted({d["kind"] for d in ds_use})
                locs = ", ".join(f"{d['loc'].path}:{d['loc'].line}" for d in ds_use[:3]
                                 if d["loc"])
                self.note(f"net '{nid}' has {len(ds_use)} drivers ({', '.join(kinds)}; {locs}); "
                          f"the first is used", ds_use[1]["loc"], ds_use[1]["instance"],
                          severity=Severity.WARNING)
            self._emit(g, nid, ds_use[0], node_of)
        # sinks
        for s in self.sinks:
            src = node_of(s["input"])
            attrs = {k: v for k, v in s.items() if k not in ("id", "input", "loc")}
            g.add_node(s["id"], kind="sink", inputs=[src], pins=["in"],
                       delays=[ZERO_DELAY], **_locattrs(s["loc"]), **attrs)
        # edges (and undriven-net sources), gathered first and added in one call: the same
        # edges in the same order, without networkx's per-edge checks
        edges: dict[tuple[str, str], list[int]] = {}
        nodes = g.nodes
        for n in list(nodes):
            for i, src in enumerate(nodes[n]["inputs"]):
                if src not in g:
                    self._undriven(g, src)
                pins = edges.get((src, n))
                if pins is None:
                    edges[(src, n)] = [i]
                else:
                    pins.append(i)
        g.add_edges_from((u, v, {"pins": pins}) for (u, v), pins in edges.items())
        design = Design(
            graph=g, top=tops[0] if len(tops) == 1 else ",".join(tops),
            inputs=inputs, outputs=outputs, registers=self.registers,
            blackboxes=self.blackboxes, notes=self.notes,
            files=[sf.path for sf in self.sources],
            includes=list(dict.fromkeys(p for sf in self.sources
                                        for p in getattr(sf, "includes", ()) or ())),
            timescale=(self.time_unit, self.precision) if self.time_unit else None,
            input_node={b: node_of(b) for b in inputs},
            output_node={s["port"]: s["id"] for s in self.sinks if s["role"] == "output"},
            latch_paths=self.latch_paths,
            port_attrs={b: a for b, a in self.port_attrs.items() if b in port_set},
        )
        # registers refer to sink ids (stable) and state node ids (merged-net names)
        for r in self.registers:
            r.outputs = {k: node_of(v) for k, v in r.outputs.items()}
        design.latch_paths = [(d_, e_, node_of(q)) for d_, e_, q in self.latch_paths]
        return design

    def _emit(self, g, nid, d, node_of) -> None:
        attrs = dict(kind=d["kind"], name=nid, op=d["op"],
                     inputs=[node_of(s) for s in d["inputs"]], pins=list(d["pins"]),
                     delays=list(d["delays"]), cell=d["cell"], instance=d["instance"],
                     **_locattrs(d["loc"]))
        if d.get("expr") is not None:
            attrs["expr"] = d["expr"]
        if d.get("attrs"):
            attrs["attrs"] = d["attrs"]
        for k in ("register", "state", "port", "reason", "out_pin", "tri"):
            if k in d:
                attrs[k] = d[k]
        if d["kind"] == "const":
            attrs["op"] = d["op"]
        g.add_node(nid, **attrs)

    def _undriven(self, g, nid) -> None:
        owner = self.bb_owner
        for m in self._members.get(self.find(nid), [nid]):
            if m in owner:
                path, cell, loc, reason = owner[m]
                g.add_node(nid, kind="blackbox", name=nid, op="buf", inputs=[], pins=[],
                           delays=[], cell=cell, instance=path, reason=reason, **_locattrs(loc))
                return
        g.add_node(nid, kind="blackbox", name=nid, op="buf", inputs=[], pins=[], delays=[],
                   cell="undriven", instance="", reason="undriven net", path="", line=0,
                   column=1)
        self.note(f"net '{nid}' is read but never driven; it is a free input for analysis",
                  None, "", key=("undriven", nid), severity=Severity.WARNING)


# ------------------------------------------------------------------------------------------------
def _where(loc) -> tuple:
    if loc is None:
        return ()
    return (loc.path, loc.line, loc.col)


def _line(loc, line):
    if loc is None or not line:
        return loc
    return ir.Loc(loc.path, line, 1)


def _locattrs(loc) -> dict:
    if loc is None:
        return {"path": "", "line": 0, "column": 1}
    return {"path": loc.path, "line": loc.line, "column": loc.col or 1}


def _extend(bits: list[str], W: int) -> list[str]:
    if len(bits) >= W:
        return bits[:W]
    return bits + [C0] * (W - len(bits))


def _shift(a: list[str], n: int, left: bool) -> list[str]:
    W = len(a)
    if n >= W:
        return [C0] * W
    if left:
        return [C0] * n + a[:W - n]
    return a[n:] + [C0] * n


def _fold(op: str, ins: list[str]) -> str | None:
    """Constant folding for decomposed gates: returns the result signal, or None to build."""
    if op == "not":
        x = ins[0]
        return C1 if x == C0 else C0 if x == C1 else None
    if op in ("and", "or"):
        ctrl, ident = (C0, C1) if op == "and" else (C1, C0)
        if ctrl in ins:
            return ctrl
        rest = [x for x in ins if x != ident]
        if not rest:
            return ident
        if len(rest) == 1:
            return rest[0]
        if len(rest) != len(ins):
            return None  # caller builds with all inputs; identities are harmless
        return None
    if op in ("xor", "xnor") and all(x in (C0, C1) for x in ins):
        v = sum(1 for x in ins if x == C1) & 1
        if op == "xnor":
            v ^= 1
        return C1 if v else C0
    return None


def _ids(e) -> set[str]:
    tag = e[0]
    if tag == "id":
        return {e[1]}
    if tag in ("num", "real", "str"):
        return set()
    out: set[str] = set()
    for x in e[1:]:
        if isinstance(x, tuple) and x and isinstance(x[0], str):
            out |= _ids(x)
        elif isinstance(x, (list, tuple)):
            for y in x:
                if isinstance(y, tuple) and y and isinstance(y[0], str):
                    out |= _ids(y)
    return out


def _walk_items(items):
    for it in items:
        yield it
        if isinstance(it, (ir.GenFor, ir.GenBlock)):
            yield from _walk_items(it.items)
        elif isinstance(it, ir.GenIf):
            yield from _walk_items(it.then_items)
            yield from _walk_items(it.else_items)
        elif isinstance(it, ir.GenCase):
            for _l, _n, sub in it.cases:
                yield from _walk_items(sub)


_SIMPLE = {"and": "and", "or": "or", "xor": "xor"}


def _function_op(fn, used: list[str]):
    """A cell function as (op, expr): a primitive op when the function is one, else "expr"."""
    index = {p: i for i, p in enumerate(used)}
    vars_in_order = lambda xs: [x[1] for x in xs] == used  # noqa: E731
    if fn[0] == "var" and len(used) == 1:
        return "buf", None
    if fn[0] == "not" and fn[1][0] == "var" and len(used) == 1:
        return "not", None
    if fn[0] in _SIMPLE and all(x[0] == "var" for x in fn[1:]) and vars_in_order(fn[1:]):
        return _SIMPLE[fn[0]], None
    if (fn[0] == "not" and fn[1][0] in _SIMPLE and all(x[0] == "var" for x in fn[1][1:])
            and vars_in_order(fn[1][1:])):
        return {"and": "nand", "or": "nor", "xor": "xnor"}[fn[1][0]], None
    return "expr", lib.bind_expr(fn, index)


def _udp_comb_expr(udp: ir.Primitive):
    """Sum of products of the table rows whose output is 1 (x rows contribute nothing)."""
    terms = []
    for row in udp.rows:
        if row["output"] != "1":
            continue
        lits = []
        for i, v in enumerate(row["inputs"]):
            v = v.lower()
            if v == "1":
                lits.append(("in", i))
            elif v == "0":
                lits.append(("not", ("in", i)))
            elif v in ("?", "b", "x"):
                if v == "x":
                    lits = None
                    break
        if lits is None:
            continue
        terms.append(("and", *lits) if len(lits) > 1 else lits[0] if lits else ("const", 1))
    if not terms:
        return ("const", 0)
    return ("or", *terms) if len(terms) > 1 else terms[0]


_EDGE = re.compile(r"^\(..\)$|^[rfpn*]$", re.I)


def _udp_seq_roles(udp: ir.Primitive) -> dict:
    """Pin roles of a sequential UDP from its table.

    An input that takes an edge entry on a row whose output changes is the clock; an input that
    forces the output to a constant at one level while every other input is don't-care is an
    asynchronous set or reset; a level-sensitive table with no clock makes a latch whose enable is
    the input that, at one level, makes every row hold ('-'). The rest are data.
    """
    n = len(udp.inputs)
    roles = ["data"] * n
    active: dict[int, Any] = {}
    clock = None
    for row in udp.rows:
        if row["output"] == "-":
            continue
        for i, v in enumerate(row["inputs"]):
            if _EDGE.match(v) and clock is None:
                rising = v.lower() in ("r", "p", "(01)", "(0x)", "(x1)")
                falling = v.lower() in ("f", "n", "(10)", "(1x)", "(x0)")
                if rising or falling:
                    clock = i
                    active[i] = "posedge" if rising else "negedge"
    if clock is not None:
        roles[clock] = "clock"
    for i in range(n):
        if i == clock:
            continue
        for row in udp.rows:
            vals = row["inputs"]
            if row["output"] in ("0", "1") and vals[i] in ("0", "1") and all(
                    v in ("?", "b", "*") or (j == clock and _EDGE.match(v))
                    for j, v in enumerate(vals) if j != i) and \
                    all(v in ("?", "b") for j, v in enumerate(vals) if j != i and j != clock):
                roles[i] = "reset" if row["output"] == "0" else "set"
                active[i] = int(vals[i])
                break
    if clock is None:
        # latch: the enable is the input whose one level makes the table hold
        for i in range(n):
            for level in ("0", "1"):
                rows = [r for r in udp.rows if r["inputs"][i] in (level, "?", "b")]
                if rows and all(r["output"] == "-" for r in udp.rows if r["inputs"][i] == level) \
                        and any(r["inputs"][i] == level for r in udp.rows) \
                        and roles[i] == "data":
                    roles[i] = "enable"
                    active[i] = 1 - int(level)
                    break
            if "enable" in roles:
                break
    return {"clock": clock, "pins": roles, "active": active}


# ------------------------------------------------------------------------------------------------
def resolve_library(library) -> Library:
    """``None``, a Library, a mapping of cell tables, a .lib path, or a list of these."""
    if library is None:
        return Library()
    if isinstance(library, Library):
        return library
    if isinstance(library, (str, bytes)) or hasattr(library, "__fspath__"):
        from .liberty import read_liberty
        return read_liberty(str(library))
    if isinstance(library, Mapping):
        out = Library()
        for name, spec in library.items():
            out.add(spec if isinstance(spec, CellDef) else lib.cell_from_config(name, spec))
        return out
    if isinstance(library, Iterable):
        out = Library()
        for item in library:
            out = out.merge(resolve_library(item))
        return out
    raise TypeError(f"cannot use {type(library).__name__} as a cell library")


def elaborate(sources: Sequence[ir.SourceFile], top=None, library=None,
              default_delay: float | Delay | None = None, **_ignored) -> Design:
    """Elaborate parsed sources into a :class:`~hazlint.design.Design`."""
    lib_ = resolve_library(library)
    if default_delay is None:
        dd = UNIT_DELAY
    elif isinstance(default_delay, Delay):
        dd = default_delay
    else:
        dd = Delay.fixed(float(default_delay))
    el = Elaborator(sources, lib_, default_delay=dd)
    return el.elaborate(top)


def glob_match(name: str, patterns: Iterable[str]) -> bool:
    return any(fnmatch.fnmatchcase(name, p) for p in patterns)


_PREC = {"||": 1, "&&": 2, "|": 3, "^": 4, "~^": 4, "^~": 4, "&": 5, "==": 6, "!=": 6,
         "===": 6, "!==": 6, "<": 7, "<=": 7, ">": 7, ">=": 7, "<<": 8, ">>": 8, "<<<": 8,
         ">>>": 8, "+": 9, "-": 9, "*": 10, "/": 10, "%": 10, "**": 11}


def _expr_text(e, parent: int = 0) -> str:
    """An IR expression as Verilog source text (for messages)."""
    try:
        tag = e[0]
        if tag == "id":
            return e[1]
        if tag == "num":
            _, w, v, xz, _s = e
            return f"{w}'d{v}" if w and not xz else (str(v) if not w else f"{w}'b{v:b}")
        if tag == "real":
            return str(e[1])
        if tag == "str":
            return f'"{e[1]}"'
        if tag == "bit":
            return f"{_expr_text(e[1], 12)}[{_expr_text(e[2])}]"
        if tag == "part":
            return f"{_expr_text(e[1], 12)}[{_expr_text(e[2])}:{_expr_text(e[3])}]"
        if tag == "ipart":
            return f"{_expr_text(e[1], 12)}[{_expr_text(e[2])}{e[4]}:{_expr_text(e[3])}]"
        if tag == "concat":
            return "{" + ", ".join(_expr_text(x) for x in e[1]) + "}"
        if tag == "repl":
            return "{" + _expr_text(e[1]) + "{" + ", ".join(_expr_text(x) for x in e[2]) + "}}"
        if tag == "unop":
            return f"{e[1]}{_expr_text(e[2], 12)}"
        if tag == "binop":
            p = _PREC.get(e[1], 5)
            s = f"{_expr_text(e[2], p)} {e[1]} {_expr_text(e[3], p + 1)}"
            return f"({s})" if p < parent else s
        if tag == "cond":
            s = f"{_expr_text(e[1], 1)} ? {_expr_text(e[2])} : {_expr_text(e[3])}"
            return f"({s})" if parent else s
        if tag == "call":
            return f"{e[1]}(" + ", ".join(_expr_text(x) for x in e[2]) + ")"
    except (IndexError, TypeError):
        pass
    return str(e)


def _sum_delay(a: Delay, b: Delay) -> Delay:
    return Delay(a.rise_min + b.rise_min, a.rise_max + b.rise_max,
                 a.fall_min + b.fall_min, a.fall_max + b.fall_max)
