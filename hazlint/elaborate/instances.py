"""Instances: gate primitives, submodules, library cells (combinational and
sequential), black boxes and registers. A mixin of
:class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

from .. import budget as _budget
from .. import ir
from ..netlist import library as lib
from .. import limits as _limits
from ..netlist.design import BlackBox, Register
from ..diagnostics import Severity
from ..errors import ElaborationError
from ..netlist.library import ZERO_DELAY, CellDef
from . import cells_yosys_words as yosys_cells
from .common import C0, C1, named_connections
from .common import BlackBoxModule as _BlackBoxModule
from .common import extend as _extend
from .common import where as _where
from .consteval import NotConstant, const_value
from .scope import Scope


class InstanceElaborator:
    """Primitive, module and cell instances."""

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
        if isinstance(e, tuple) and e:
            tag = e[0]
            if tag == "id":
                # a declared scalar, as select_bits reads it (the common netlist connection)
                info = scope.lookup(e[1])
                if info is not None and info.indices is None and not info.dims:
                    return [info.base]
            elif tag == "_bits":
                return list(e[1])
        return self.lvalue_bits(e, scope, loc, reading=True)

    def elab_primitive(self, scope: Scope, inst: ir.Instance) -> None:
        cell = inst.cell
        path = f"{scope.instance}.{inst.name}" if inst.name else f"{scope.instance}.{cell}"
        conn_bits = self.conn_bits
        terms = []
        for pname, e in inst.connections:
            if pname is not None:
                raise ElaborationError(f"gate primitive '{cell}' takes positional terminals "
                                       "only", *_where(inst.loc), construct=inst.name or cell)
        for _, e in inst.connections:
            terms.append(conn_bits(scope, e, inst.loc))
        if None in terms:
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
        in_sigs = [t[0] for t in ins]
        for t in ins + outs:
            if len(t) != 1:
                self.note(f"vector connected to a terminal of gate '{inst.name or cell}': "
                          f"only its least significant bit is used", inst.loc, path)
        tri = cell in lib.TRISTATE_GATES
        for o in outs:
            self._add_driver("gate", o[0], op=op, inputs=in_sigs, delays=[delay] * len(in_sigs),
                             cell=cell, instance=path, loc=inst.loc, attrs=inst.attrs,
                             tri=tri, explicit_delay=bool(dspec))
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
        for pname, e in named_connections(inst, pins):
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
            if cell.arcs or cell.default_delay:
                self.cell_delays_given(cell, delays)
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
