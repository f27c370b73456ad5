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
from typing import Any, Iterable, Mapping, Sequence

import networkx as nx

from . import budget as _budget
from . import cells_yosys_words as yosys_cells
from . import initial_values
from . import library as lib
from . import limits as _limits
from .consteval import NotConstant, const_value
from .design import BlackBox, Design, Register
from .diagnostics import Diagnostic, Location, Severity
from .elaborate.behaviour import BehaviourElaborator
from .elaborate.common import C0, C1, walk_items
from .elaborate.common import fold as _fold
from .elaborate.common import BlackBoxModule as _BlackBoxModule
from .elaborate.common import expr_text as _expr_text
from .elaborate.common import extend as _extend
from .elaborate.common import where as _where
from .elaborate.coverage import CoverageTracker
from .elaborate.expressions import ExpressionElaborator, const_bits
from .elaborate.gates import GateBuilder
from .elaborate.memory import DEFAULT_MAX_BITS, MemoryElaborator
from .elaborate.scope import NetInfo, Scope, index_range
from .errors import ElaborationError, number_text
from . import ir
from .library import UNIT_DELAY, ZERO_DELAY, CellDef, Delay, Library



class Elaborator(GateBuilder, ExpressionElaborator, BehaviourElaborator, MemoryElaborator,
                 CoverageTracker):
    def __init__(self, sources: Sequence[ir.SourceFile], library: Library,
                 default_delay: Delay = UNIT_DELAY, max_depth: int = 100,
                 memory_max_bits: int = DEFAULT_MAX_BITS):
        self.memory_max_bits = memory_max_bits
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
        # declarations carrying hazlint_* attributes: (name, bits, attributes, location)
        self.attr_decls: list[tuple[str, list[str], dict, ir.Loc | None]] = []
        self.latch_paths: list[tuple[str, str, str]] = []
        self.init_values: initial_values.InitValues = {}    # net bit -> power-up value
        self.blackbox_cells_warned: set[str] = set()
        self.blackbox_pins: set[str] = set()    # net bits connected to black-box pins
        self.bb_owner: dict[str, tuple] = {}    # such a net bit -> (instance, cell, loc, reason)
        self.sink_ids: set[str] = set()
        self.sink_by_port: dict[str, str] = {}
        self._members: dict[str, list[str]] = {}
        self._n = 0
        self._noted: set[tuple] = set()
        self._max_gates = _limits.current().gates
        self._max_width = _limits.current().vector_width
        self._max_net_bits = _limits.current().net_bits
        self._net_bits = 0
        self._instances = 0
        for sf in self.sources:         # what the readers noted about the text, at its line
            for loc, message in sf.notes:
                self.note(message, loc)

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
             severity: Severity = Severity.INFO, kind: str = "design-note") -> None:
        k = key if key is not None else (message, loc.path if loc else "", loc.line if loc else 0)
        if k in self._noted:
            return
        self._noted.add(k)
        self.notes.append(Diagnostic(
            rule="front-end", kind=kind, severity=severity,
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
        if len(self.drivers) > self._max_gates:
            _limits.check("gates", len(self.drivers), "the number of gates", _where(loc))
        if not len(self.drivers) & 8191:
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
            for it in walk_items(m.items):
                if isinstance(it, ir.Instance):
                    used.add(it.cell)
        tops = [n for n in self.modules if n not in used and not self.modules[n].celldefine]
        if not tops:
            tops = [n for n in self.modules if n not in used]
        if not tops:
            if not self.modules:
                first = self.sources[0].path if self.sources else None
                raise ElaborationError("no module found in the input files",
                                       path=first, line=1 if first else None)
            raise _instantiation_cycle(self.modules)
        return tops

    def cell_known(self, name: str) -> bool:
        return (name in self.modules or name in self.primitives or name in self.library
                or name in lib.PRIMITIVES or name in lib.SWITCH_PRIMITIVES)

    def checkpoint(self) -> tuple:
        return (len(self.drivers), len(self.sinks), len(self.registers), len(self.latch_paths),
                len(self.__dict__.get("_deferred", ())), len(self.__dict__.get("memories", ())))

    def rollback(self, mark: tuple) -> None:
        """Forget what a module left out of the analysis had built."""
        del self.drivers[mark[0]:]
        del self.sinks[mark[1]:]
        del self.registers[mark[2]:]
        del self.latch_paths[mark[3]:]
        del self.__dict__.setdefault("_deferred", [])[mark[4]:]
        del self.__dict__.setdefault("memories", [])[mark[5]:]

    def elaborate(self, top=None) -> Design:
        requested = [top] if isinstance(top, str) else list(top or [])
        self.check_unread_files(requested, self.cell_known)
        tops = self.choose_tops(top)
        self.check_unread_files(tops, self.cell_known)
        multi = len(tops) > 1
        inputs: list[str] = []
        outputs: list[str] = []
        for t in tops:
            m = self.modules[t]
            scope = Scope(prefix=f"{t}." if multi else "", instance=t, module=m)
            mark = self.checkpoint()
            left_out = None
            try:
                self.elab_module(scope, m, overrides=[], depth=0, is_top=True)
            except _BlackBoxModule as bb:
                self.rollback(mark)
                self.module_not_analysed(m, bb.reason, bb.loc, t)
                left_out = f"module '{t}' not analysed"
                for pname, port in m.ports.items():
                    self.declare(scope, pname, port.width, port.net_type, port.signed, port.loc)
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
                        if left_out:
                            self._add_driver("blackbox", b, op="buf", instance=t, loc=port.loc,
                                             cell=m.name, reason=left_out)
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
        self.resolve_deferred(inputs)
        modules, left = self.coverage_report()
        design = self.build_graph(tops, inputs, outputs)
        design.modules = modules
        design.not_analysed = left
        design.memories = self.memory_records(lambda n: self._rep.get(self.find(n), n))
        self.check_memory_reads(design)
        return design

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
        self.module_seen(m.name)
        self.register_subprograms(scope, m.items)
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
        for it in m.items:
            if isinstance(it, ir.Param):
                self._set_param(scope, it, named)
        for pname, port in m.ports.items():
            self.declare(scope, pname, port.width, port.net_type, port.signed, port.loc)
            if port.attrs and is_top:
                self._note_attrs(scope, pname, port.attrs, port.loc)
            if "init" in port.attrs:
                initial_values.record_attribute(self, scope, port)
        self.elab_items(scope, m.items, depth, declare_only_params=False)

    def _note_attrs(self, scope: Scope, name: str, attrs: dict, loc) -> None:
        if any(str(k).startswith("hazlint_") for k in attrs):
            self.attr_decls.append((self.rel(scope, name), scope.nets[name].bits(), dict(attrs),
                                    loc))

    def _set_param(self, scope: Scope, p: ir.Param, named: Mapping[str, Any]) -> None:
        expr = named.get(p.name) if not p.local else None
        try:
            if expr is not None:
                # overrides are evaluated in the parent's scope by the caller
                v = expr[1] if isinstance(expr, tuple) and expr and expr[0] == "_value" else expr
            else:
                v = self.const_expr(p.value, scope, p.loc)
        except NotConstant as exc:
            raise ElaborationError(f"parameter '{p.name}' is not a constant expression "
                                   f"(uses '{exc}')", *_where(p.loc), construct=p.name) from None
        # its type (IEEE 1364-2005 12.2): the declared range and sign, else the value's
        if p.width is not None:
            w = abs(self.const(p.width[0], scope, p.loc) - self.const(p.width[1], scope, p.loc)) + 1
            if isinstance(v, int):
                v &= (1 << w) - 1
                if p.signed and (v >> (w - 1)) & 1:
                    v -= 1 << w
            scope.ptypes[p.name] = (w, p.signed)
        elif expr is None and isinstance(v, int):
            try:
                w, sg = self.expr_type(p.value, scope, p.loc)
            except (ElaborationError, _BlackBoxModule):
                w, sg = 32, True
            scope.ptypes[p.name] = (max(w, v.bit_length() + (1 if v < 0 else 0)),
                                    sg or p.signed)
        scope.params[p.name] = v

    def declare(self, scope: Scope, name: str, width, kind: str, signed: bool, loc,
                array=None) -> NetInfo:
        info = scope.nets.get(name)
        indices = None
        if width is not None:
            msb = self.const(width[0], scope, loc)
            lsb = self.const(width[1], scope, loc)
            _limits.check("vector_width", abs(msb - lsb) + 1, f"the width of '{name[:60]}'",
                          _where(loc))
            if max(abs(msb), abs(lsb)) >= 1 << 62:
                raise ElaborationError(f"the range of '{name[:60]}' ([{number_text(msb)}:"
                                       f"{number_text(lsb)}]) is beyond 2**62", *_where(loc))
            self._net_bits += abs(msb - lsb) + 1
            if abs(msb - lsb) > 8191:
                _budget.check_loading("elaborating the design", *_where(loc)[:2])
            if self._net_bits > self._max_net_bits:
                _limits.check("net_bits", self._net_bits, "the number of net bits declared",
                              _where(loc))
            indices = index_range(msb, lsb)
        if info is not None:
            if indices is not None and info.indices is None:
                info.indices = indices
            if kind in ("reg", "supply0", "supply1", "wand", "wor", "tri0", "tri1"):
                info.kind = kind
            return info
        info = NetInfo(base=f"{scope.prefix}{name}", indices=indices, kind=kind, signed=signed)
        scope.nets[name] = info
        if array:
            info.dims = self.array_dims(scope, array, loc)
            self.declare_array(scope, info, kind, loc)
            return info
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
            v = self.const_expr(e, scope, loc)
        except NotConstant as exc:
            raise ElaborationError(f"expected a constant expression (it uses '{exc}')",
                                   *_where(loc), construct=_expr_text(e)) from None
        if isinstance(v, float) and not -float("inf") < v < float("inf"):
            raise ElaborationError("expected a finite constant", *_where(loc),
                                   construct=_expr_text(e))
        return int(v)

    def elab_items(self, scope: Scope, items, depth: int, declare_only_params=False) -> None:
        # declarations first so that nets may be used before their declaration in the text
        mark = len(self.drivers)
        paths = [it for it in items if isinstance(it, ir.SpecifyPath)]
        if scope.parent is not None:
            self.register_subprograms(scope, items)
        for it in items:
            if isinstance(it, ir.Net):
                if it.kind == "real":
                    raise _BlackBoxModule(f"real variable '{it.name}'", it.loc)
                self.declare(scope, it.name, it.width, it.kind, it.signed, it.loc,
                             array=it.array)
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
                    self._note_attrs(scope, it.name, it.attrs, it.loc)
                    if "init" in it.attrs:
                        initial_values.record_attribute(self, scope, it)
            elif isinstance(it, ir.Param) and scope.parent is not None:
                self._set_param(scope, it, {})
        for it in items:
            try:
                self.elab_item(scope, it, depth)
            except RecursionError:
                loc = getattr(it, "loc", None)
                what = (f"instance '{it.name}': the hierarchy is nested too deeply to elaborate "
                        "(recursive instantiation?)" if isinstance(it, ir.Instance) else
                        "expression or statement nested too deeply to elaborate")
                raise ElaborationError(what, *_where(loc)) from None
            except ValueError as exc:
                if "integer string conversion" not in str(exc):
                    raise
                # a constant of thousands of digits in a name or a message
                raise ElaborationError("a constant too large to print (more than 4300 digits) "
                                       "in an index or a name", *_where(getattr(it, "loc",
                                                                               None))) from None
            except ElaborationError as exc:
                if not exc.path and getattr(it, "loc", None) is not None:
                    exc.path, exc.line = it.loc.path, it.loc.line    # an error without a place
                raise
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
            initial_values.record_block(self, scope, it)
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
        elif isinstance(it, (ir.SpecifyPath, ir.Function, ir.Task)):
            pass        # specify paths: applied once the module's gates exist; functions and
            #             tasks: registered with the scope, inlined where they are called
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

    def delay(self, d, scope: Scope, loc) -> Delay:
        """An IR delay (list of (min, typ, max) expressions: rise, fall, turn-off) as a Delay in
        design time units."""
        params = scope.all_params()
        vals = []
        for mtm in d[:2]:
            try:
                mn, _typ, mx = (float(const_value(x, params, _where(loc))) for x in mtm)
            except NotConstant as exc:
                raise ElaborationError(f"delay is not a constant expression ('{exc}')",
                                       *_where(loc)) from None
            except OverflowError:
                _limits.check("delay", float("inf"), "a delay too large to represent",
                              _where(loc))
            for v in (mn, mx):
                if not v >= 0:
                    raise ElaborationError(f"delay {v:g} is not a non-negative number",
                                           *_where(loc))
                _limits.check("delay", v, "the delay", _where(loc))
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
            _limits.check("instances", self._instances + abs(msb - lsb) + 1,
                          f"the number of instances (array '{inst.name[:60]}')", _where(inst.loc))
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
        self._instances += 1
        if self._instances & 1023 == 0:
            _limits.check("instances", self._instances, "the number of instances",
                          _where(inst.loc))
            _budget.check_loading("elaborating the design", *_where(inst.loc)[:2])
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
            cdef = self.library.get(cell)
            self.elab_cell(scope, inst, cdef, yosys_cells.register_name(self, scope, inst, cdef))
        elif cell.startswith("$") and yosys_cells.elaborate_cell(self, scope, inst):
            pass                # a yosys cell, built in after the user's and Liberty cells
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
        if depth + 1 > self.max_depth:
            raise ElaborationError(f"instance '{inst.name}' of '{m.name}' nests the hierarchy "
                                   f"deeper than {self.max_depth} levels (recursive "
                                   "instantiation?)", *_where(inst.loc), construct=inst.name)
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
        mark = self.checkpoint()
        try:
            self.elab_module(child, m, overrides, depth + 1)
        except _BlackBoxModule as bb:
            self.rollback(mark)
            self.module_not_analysed(m, bb.reason, bb.loc, child.instance)
            self.blackbox(scope, inst, f"module '{m.name}' not analysed", note=False)
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

    def elab_cell(self, scope: Scope, inst: ir.Instance, cell: CellDef,
                  reg_name: str | None = None) -> None:
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
            self.elab_seq_cell(scope, inst, cell, conns, pin_sig, path, reg_name)
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

    def elab_seq_cell(self, scope, inst, cell: CellDef, conns, pin_sig, path,
                      reg_name: str | None = None) -> None:
        seq = cell.sequential
        name = self.rel(scope, reg_name or inst.name)
        reg = Register(name=name, kind=seq.kind, cell=cell.name, instance=path,
                       path=inst.loc.path if inst.loc else "", line=inst.loc.line if inst.loc
                       else 0)
        loc = inst.loc
        mark = len(self.drivers)
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
        elif seq.enable is None and seq.data_in is None and (seq.clear or seq.preset):
            data_e = None           # a set/reset latch: only its asynchronous pins
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
        if data_e is not None:
            d = self._expr_gates(scope, data_e, data_pin, loc)
            reg.pins["data"] = self.add_sink(d, "data", f"{name}.data", loc, path,
                                             register=name, **self._pin_of(data_e))
        for role, e in (("reset", seq.clear), ("set", seq.preset)):
            if e is None:
                continue
            sig, level = self._expr_signal(scope, e, pin_sig, loc)
            if sig in (C0, C1):
                continue
            reg.active[role] = level
            reg.pins[role] = self.add_sink(sig, role, f"{name}.{role}", loc, path,
                                           register=name, active=level, **self._pin_of(e))
        for rec in self.drivers[mark:]:
            if rec["kind"] == "gate":
                rec["register"] = name      # the cell's own next-state and control logic
        self.registers.append(reg)
        if seq.kind == "latch" and "enable" in reg.pins:
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
        inits = initial_values.by_net(self.init_values, find)
        driven = {find(d["out"]) for d in self.drivers}
        for root, (bit, v, loc, inst) in inits.items():
            if root not in driven:      # a variable nothing assigns keeps its initial value
                self._add_driver("const", bit, op=f"const{v}", instance=inst, loc=loc)

        def rank(n: str):
            return (0 if n in port_set else 1, "$" in n, n.count("."), len(n), n)
        rep = self._rep = {r: ms[0] if len(ms) == 1 else min(ms, key=rank)
                           for r, ms in members.items()}
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

        for k, (r, ds) in enumerate(drv_of.items()):
            if not k & 8191:
                _budget.check_loading("building the gate graph", *_where(ds[0]["loc"])[:2])
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
            attr_decls=[{"name": name, "nodes": [rep.get(find(b)) for b in bits], "attrs": attrs,
                         "path": loc.path if loc else "", "line": loc.line if loc else 0}
                        for name, bits, attrs, loc in self.attr_decls],
        )
        # registers refer to sink ids (stable) and state node ids (merged-net names)
        for r in self.registers:
            r.outputs = {k: node_of(v) for k, v in r.outputs.items()}
        initial_values.apply_to_graph(g, inits, rep, self.registers)
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
        for k in ("register", "state", "port", "reason", "out_pin", "tri", "memory"):
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
        if any(self.undriven_word(m) for m in self._members.get(self.find(nid), [nid])):
            return                      # one warning per array (hazlint.elaborate.memory)
        self.note(f"net '{nid}' is read but never driven; it is a free input for analysis",
                  None, "", key=("undriven", nid), severity=Severity.WARNING)


# ------------------------------------------------------------------------------------------------
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


def _instantiation_cycle(modules: Mapping[str, ir.Module]) -> ElaborationError:
    """The error for a design whose every module is instantiated: the instantiation that
    closes a cycle (a module that contains itself), at its line."""
    first: dict[str, dict[str, ir.Instance]] = {}
    for name in sorted(modules):
        uses: dict[str, ir.Instance] = {}
        for it in walk_items(modules[name].items):
            if isinstance(it, ir.Instance) and it.cell in modules:
                uses.setdefault(it.cell, it)
        first[name] = uses
    state: dict[str, int] = {}
    for start in sorted(modules):
        stack = [(start, iter(first[start].items()))]
        state[start] = 1
        path = [start]
        while stack:
            mod, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                state[mod] = 2
                stack.pop()
                path.pop()
                continue
            cell, inst = nxt
            if state.get(cell) == 1:
                loop = " -> ".join(path[path.index(cell):] + [cell])
                how = ("itself" if cell == mod else
                       f"'{cell}', which contains '{mod}' again ({loop})")
                return ElaborationError(
                    f"module '{mod}' instantiates {how} through instance '{inst.name}': the "
                    "hierarchy never ends, so there is no top module", *_where(inst.loc),
                    construct=inst.name)
            if state.get(cell) is None:
                state[cell] = 1
                path.append(cell)
                stack.append((cell, iter(first[cell].items())))
    return ElaborationError("cannot find a top module (every module is instantiated); name "
                            "one with --top")


def _locattrs(loc) -> dict:
    if loc is None:
        return {"path": "", "line": 0, "column": 1}
    return {"path": loc.path, "line": loc.line, "column": loc.col or 1}


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
              default_delay: float | Delay | None = None, memory_max_bits: int | None = None,
              **_ignored) -> Design:
    """Elaborate parsed sources into a :class:`~hazlint.design.Design`. Arrays of variables
    with more than ``memory_max_bits`` bits are kept as memory nodes
    (:mod:`hazlint.elaborate.memory`)."""
    lib_ = resolve_library(library)
    if default_delay is None:
        dd = UNIT_DELAY
    elif isinstance(default_delay, Delay):
        dd = default_delay
    else:
        dd = Delay.fixed(float(default_delay))
    el = Elaborator(sources, lib_, default_delay=dd,
                    memory_max_bits=DEFAULT_MAX_BITS if memory_max_bits is None
                    else int(memory_max_bits))
    return el.elaborate(top)


def glob_match(name: str, patterns: Iterable[str]) -> bool:
    return any(fnmatch.fnmatchcase(name, p) for p in patterns)




def _sum_delay(a: Delay, b: Delay) -> Delay:
    return Delay(a.rise_min + b.rise_min, a.rise_max + b.rise_max,
                 a.fall_min + b.fall_min, a.fall_max + b.fall_max)
