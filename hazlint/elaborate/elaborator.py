"""The elaborator: IR modules -> one bit-level gate graph (see :mod:`hazlint.netlist.graph` for the schema).

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

:class:`Elaborator` holds the state (nets, drivers, sinks, registers, notes) and the run
(:meth:`Elaborator.elaborate`); each step is a mixin in its own module: :mod:`.hierarchy`,
:mod:`.nets`, :mod:`.source_delays`, :mod:`.instances`, :mod:`.udp`, :mod:`.expressions`,
:mod:`.selects`, :mod:`.gates`, :mod:`.behaviour`, :mod:`.subprograms`, :mod:`.memory`, :mod:`.coverage`, :mod:`.build_graph`.
The stage's entry is :func:`hazlint.elaborate.elaborate`.
"""
from __future__ import annotations

from typing import Sequence

from .. import ir
from ..netlist import library as lib
from .. import limits as _limits
from ..netlist.design import BlackBox, Design, Register
from ..diagnostics import Diagnostic, Location, Severity
from ..errors import ElaborationError
from ..netlist.library import UNIT_DELAY, Delay, Library
from . import flat, initial_values
from .behaviour import BehaviourElaborator
from .build_graph import GraphEmitter
from .common import BlackBoxModule as _BlackBoxModule
from .common import where as _where
from .coverage import CoverageTracker
from .expressions import ExpressionElaborator
from .gates import GateBuilder
from .hierarchy import HierarchyElaborator
from .instances import InstanceElaborator
from .memory import DEFAULT_MAX_BITS, MemoryElaborator
from .nets import NetElaborator
from .scope import Scope
from .selects import SelectElaborator
from .source_delays import SourceDelays
from .subprograms import SubprogramElaborator
from .udp import UdpElaborator


class Elaborator(HierarchyElaborator, NetElaborator, InstanceElaborator, UdpElaborator,
                 SourceDelays, GraphEmitter, GateBuilder, ExpressionElaborator,
                 SelectElaborator, BehaviourElaborator, SubprogramElaborator,
                 MemoryElaborator, CoverageTracker):
    """One elaboration run over parsed sources (see the module docstring)."""

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
        # delays given (source_delays.settle_time_unit): any `#`/specify delay, and the delay
        # lists cells gave with their unit
        self.source_delays = False
        self.cell_delays: list[tuple[float | None, list]] = []
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
        design = flat.try_elaborate(self, tops)
        if design is not None:
            return design
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
