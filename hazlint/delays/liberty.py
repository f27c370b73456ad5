"""A small reader for Liberty (.lib) cell libraries.

Liberty is a nested text format of *groups* ``name(args) { ... }``, *simple attributes*
``name : value ;`` and *complex attributes* ``name(args) ;`` with ``/* */`` comments and ``\\``
line continuations. This module reads it in three steps:

1. :func:`tokenize` - one regular expression over the whole text, with line numbers;
2. :func:`parse_liberty` - the group/attribute tree (:class:`Group`), no semantics;
3. :func:`read_liberty` - the semantics hazlint needs, as a :class:`hazlint.netlist.library.Library`:
   pins and directions, output ``function`` and ``three_state``, ``ff``/``latch`` groups, and one
   :class:`~hazlint.netlist.library.Delay` per timing arc from the NLDM ``cell_rise``/``cell_fall`` tables
   at a chosen input slew and output load.

Delays are read from the look-up tables by multilinear interpolation over the table's breakpoints
(bilinear for the usual two-dimensional table), extrapolating linearly beyond the first and last
breakpoints (common practice for NLDM tables). Several ``timing`` groups for the same
(related pin, output pin), e.g. state-dependent ``when`` arcs, fold into one Delay: the minimum and
maximum across them. Constraint arcs (setup, hold, recovery, removal, pulse width, ...) are not
delays and are skipped.

Why our own reader: the Liberty parser on PyPI is GPL-3.0-or-later, which does not fit an
Apache-2.0 tool as a required dependency; the subset needed here is small (see DEVELOPERS.md).
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from ..errors import ParseError
from ..netlist.library import (CellDef, Delay, FunctionSyntaxError, Library, SequentialSpec,
                               expr_vars, parse_function)
from .liberty_syntax import Group, Table, Template, floats, parse_liberty, read_table, read_template

_DELAY_TIMING_TYPES = frozenset({
    "combinational", "combinational_rise", "combinational_fall",
    "rising_edge", "falling_edge", "clear", "preset",
    "three_state_enable", "three_state_disable",
    "three_state_enable_rise", "three_state_enable_fall",
    "three_state_disable_rise", "three_state_disable_fall",
})

_UNITS = {"s": 1.0, "ms": 1e-3, "us": 1e-6, "ns": 1e-9, "ps": 1e-12, "fs": 1e-15}


def parse_time_unit(text: str) -> float | None:
    """``"1ns"`` -> 1e-9 seconds; ``"10ps"`` -> 1e-11. None if it is not a time."""
    m = re.fullmatch(r"\s*([0-9.eE+-]*)\s*([munpf]?s)\s*", text or "")
    if not m:
        return None
    num = float(m.group(1)) if m.group(1) else 1.0
    return num * _UNITS[m.group(2)]


@dataclass
class ArcInfo:
    """One Liberty timing group, kept for inspection (the Delay in ``CellDef.arcs`` folds them)."""

    related_pin: str
    pin: str
    timing_type: str
    timing_sense: str | None
    rise: float | None
    fall: float | None
    line: int


class LibertyLibrary(Library):
    """A :class:`~hazlint.netlist.library.Library` read from a Liberty file, with what the file said
    besides the cells: its name, units, the slew/load the delays were read at, the cells that
    could not be modelled (``skipped``: name -> reason) and every timing group (``timing``)."""

    def __init__(self, cells=None, *, name: str = "", path: str = "",
                 time_unit: float | None = None, capacitive_load_unit: tuple[float, str] | None
                 = None, input_slew: float | None = None, output_load: float | None = None):
        super().__init__(cells)
        self.name = name
        self.path = path
        self.time_unit = time_unit                # seconds per library time unit (None: unknown)
        self.capacitive_load_unit = capacitive_load_unit
        self.input_slew = input_slew
        self.output_load = output_load
        self.skipped: dict[str, str] = {}
        self.timing: dict[str, list[ArcInfo]] = {}


def read_liberty(path: str, *, input_slew: float | None = None,
                 output_load: float | None = None, text: str | None = None) -> LibertyLibrary:
    """Read a Liberty file into a Library of :class:`~hazlint.netlist.library.CellDef`.

    ``input_slew`` and ``output_load`` are in the library's own time and capacitance units; when
    not given, each table is read at its first breakpoint in that variable. Delays stay in the
    library's time unit (``LibertyLibrary.time_unit`` seconds). Cells that cannot be modelled
    (state tables, bus pins, outputs mixing state and inputs) are left out and listed in
    ``skipped``, so the flattener treats their instances as black boxes.

    Raises :class:`~hazlint.errors.ParseError` with file:line for malformed input.
    """
    if text is None:
        try:
            with open(path, encoding="utf-8", errors="replace") as fh:
                text = fh.read()
        except OSError as exc:
            raise ParseError(f"cannot read Liberty file: {exc.strerror}", path=path) from None
    top = parse_liberty(text, path)
    cl = top.attr("capacitive_load_unit")
    cap_unit = None
    if isinstance(cl, list) and len(cl) == 2:
        try:
            cap_unit = (float(cl[0]), cl[1])
        except ValueError:
            cap_unit = None
    tu = top.attr("time_unit")
    lib = LibertyLibrary(name=top.name, path=path,
                         time_unit=parse_time_unit(tu) if tu else None,
                         capacitive_load_unit=cap_unit, input_slew=input_slew,
                         output_load=output_load)
    templates: dict[str, Template] = {}
    for kind in ("lu_table_template", "power_lut_template", "output_current_template"):
        for g in top.subgroups(kind):
            templates[g.name] = read_template(g, path)
    for g in top.subgroups("cell"):
        if not g.args:
            raise ParseError("Liberty: cell group without a name", path=path, line=g.line,
                             construct="cell")
        cell, reason = _read_cell(g, templates, lib, path)
        if cell is None:
            lib.skipped[g.name] = reason
        else:
            lib.add(cell)
    return lib


def _fn(text: str, what: str, path: str, line: int):
    try:
        return parse_function(text)
    except FunctionSyntaxError as exc:
        raise ParseError(f"Liberty: {what}: {exc}", path=path, line=line,
                         construct=text) from None


def _rename(e, mapping: dict[str, str]):
    if e[0] == "var":
        return ("var", mapping.get(e[1], e[1]))
    if e[0] == "const":
        return e
    return (e[0], *(_rename(x, mapping) for x in e[1:]))


def _read_cell(g: Group, templates: dict[str, Template], lib: LibertyLibrary,
               path: str) -> tuple[CellDef | None, str]:
    name = g.name
    for unsupported in ("statetable", "ff_bank", "latch_bank", "bus", "bundle"):
        sub = next(g.subgroups(unsupported), None)
        if sub is not None:
            return None, f"'{unsupported}' group (line {sub.line}) is not modelled"
    inputs: list[str] = []
    outputs: list[str] = []
    inouts: list[str] = []
    pin_groups: list[tuple[str, Group]] = []
    for p in g.subgroups("pin"):
        if not p.args:
            raise ParseError(f"Liberty: cell '{name}': pin group without a name", path=path,
                             line=p.line, construct="pin")
        direction = str(p.attr("direction", "")).strip()
        if direction not in ("input", "output", "inout", "internal"):
            raise ParseError(f"Liberty: cell '{name}' pin '{p.name}': direction must be input, "
                             f"output, inout or internal, not '{direction or 'missing'}'",
                             path=path, line=p.attr_line("direction"), construct=p.name)
        for pname in p.args:
            if direction == "input":
                inputs.append(pname)
            elif direction == "output":
                outputs.append(pname)
            elif direction == "inout":
                inouts.append(pname)
            pin_groups.append((pname, p))
    cell = CellDef(name=name, inputs=inputs, outputs=outputs, inouts=inouts, source=path,
                   line=g.line, time_unit=lib.time_unit)
    seq_groups = [s for s in g.groups if s.kind in ("ff", "latch")]
    if len(seq_groups) > 1:
        return None, "more than one ff/latch group"
    state_vars: dict[str, str] = {}
    if seq_groups:
        s = seq_groups[0]
        if len(s.args) != 2:
            raise ParseError(f"Liberty: cell '{name}': {s.kind} group needs two state variable "
                             f"names, e.g. {s.kind}(IQ, IQN)", path=path, line=s.line,
                             construct=s.kind)
        state_vars = {s.args[0]: "IQ", s.args[1]: "IQN"}

        def sfn(key):
            v = s.attr(key)
            if v is None:
                return None
            return _rename(_fn(str(v), f"cell '{name}' {s.kind} {key}", path, s.attr_line(key)),
                           state_vars)
        spec = SequentialSpec(kind=s.kind, clocked_on=sfn("clocked_on"),
                              next_state=sfn("next_state"), enable=sfn("enable"),
                              data_in=sfn("data_in"), clear=sfn("clear"), preset=sfn("preset"),
                              clear_preset_var1=s.attr("clear_preset_var1"),
                              clear_preset_var2=s.attr("clear_preset_var2"))
        if s.kind == "ff" and (spec.clocked_on is None or spec.next_state is None):
            raise ParseError(f"Liberty: cell '{name}': ff group needs clocked_on and next_state",
                             path=path, line=s.line, construct="ff")
        if s.kind == "latch" and (spec.enable is None) != (spec.data_in is None):
            raise ParseError(f"Liberty: cell '{name}': latch group needs both enable and "
                             f"data_in", path=path, line=s.line, construct="latch")
        if s.kind == "latch" and spec.enable is None and spec.clear is None and \
                spec.preset is None:
            return None, "latch group with neither enable nor clear/preset"
        cell.sequential = spec
    known = set(inputs) | set(inouts)
    for pname, p in pin_groups:
        if pname not in outputs and pname not in inouts:
            continue
        fn = p.attr("function")
        if fn is not None:
            line = p.attr_line("function")
            e = _rename(_fn(str(fn), f"cell '{name}' pin '{pname}' function", path, line),
                        state_vars)
            used = expr_vars(e)
            uses_state = any(v in ("IQ", "IQN") for v in used)
            if uses_state:
                if cell.sequential is None:
                    raise ParseError(f"Liberty: cell '{name}' pin '{pname}': function uses "
                                     f"state variable without an ff or latch group", path=path,
                                     line=line, construct=str(fn))
                if e in (("var", "IQ"), ("not", ("var", "IQN"))):
                    cell.sequential.state_outputs[pname] = "Q"
                elif e in (("var", "IQN"), ("not", ("var", "IQ"))):
                    cell.sequential.state_outputs[pname] = "QN"
                else:
                    return None, (f"output '{pname}' mixes the state with inputs "
                                  f"('{fn}'), which is not modelled")
            else:
                for v in used:
                    if v not in known:
                        raise ParseError(f"Liberty: cell '{name}' pin '{pname}': function uses "
                                         f"unknown pin '{v}'", path=path, line=line,
                                         construct=str(fn))
                cell.functions[pname] = e
        ts = p.attr("three_state")
        if ts is not None:
            line = p.attr_line("three_state")
            te = _fn(str(ts), f"cell '{name}' pin '{pname}' three_state", path, line)
            for v in expr_vars(te):
                if v not in known:
                    raise ParseError(f"Liberty: cell '{name}' pin '{pname}': three_state uses "
                                     f"unknown pin '{v}'", path=path, line=line, construct=str(ts))
            cell.three_state[pname] = te
    if cell.sequential is not None:
        for v in _seq_vars(cell.sequential):
            if v not in known and v not in ("IQ", "IQN"):
                raise ParseError(f"Liberty: cell '{name}': {cell.sequential.kind} group uses "
                                 f"unknown pin '{v}'", path=path, line=seq_groups[0].line,
                                 construct=v)
    # timing arcs
    infos: list[ArcInfo] = []
    acc: dict[tuple[str, str], list[tuple[float | None, float | None]]] = {}
    for pname, p in pin_groups:
        for t in p.subgroups("timing"):
            ttype = str(t.attr("timing_type", "combinational"))
            if ttype not in _DELAY_TIMING_TYPES:
                continue
            rel = t.attr("related_pin")
            if rel is None:
                raise ParseError(f"Liberty: cell '{name}' pin '{pname}': timing group without "
                                 f"related_pin", path=path, line=t.line, construct="timing")
            rise = _arc_value(t, "rise", templates, lib, path)
            fall = _arc_value(t, "fall", templates, lib, path)
            if ttype in ("combinational_rise", "three_state_enable_rise",
                         "three_state_disable_rise"):
                fall = None
            elif ttype in ("combinational_fall", "three_state_enable_fall",
                           "three_state_disable_fall"):
                rise = None
            for rp in str(rel).split():
                if rp not in known and rp not in outputs:
                    raise ParseError(f"Liberty: cell '{name}' pin '{pname}': related_pin "
                                     f"'{rp}' is not a pin of the cell", path=path,
                                     line=t.attr_line("related_pin"), construct=rp)
                infos.append(ArcInfo(rp, pname, ttype, t.attr("timing_sense"), rise, fall,
                                     t.line))
                if rise is not None or fall is not None:
                    acc.setdefault((rp, pname), []).append((rise, fall))
    for arc, vals in acc.items():
        rises = [r for r, _ in vals if r is not None]
        falls = [f for _, f in vals if f is not None]
        rises = rises or falls
        falls = falls or rises
        cell.arcs[arc] = Delay(min(rises), max(rises), min(falls), max(falls))
    lib.timing[name] = infos
    return cell, ""


def _seq_vars(spec: SequentialSpec) -> list[str]:
    out: list[str] = []
    for e in (spec.clocked_on, spec.next_state, spec.enable, spec.data_in, spec.clear,
              spec.preset):
        if e is not None:
            out.extend(expr_vars(e))
    return out


def _arc_value(t: Group, edge: str, templates: dict[str, Template], lib: LibertyLibrary,
               path: str) -> float | None:
    """Delay of one output transition of a timing group: the NLDM table ``cell_<edge>`` at the
    configured point, else the linear model ``intrinsic_<edge> + <edge>_resistance * load``.
    Negative values (from extrapolation) are clamped at zero."""
    tab = next(t.subgroups(f"cell_{edge}"), None)
    if tab is not None:
        v = read_table(tab, templates, path).at(lib.input_slew, lib.output_load)
        return max(v, 0.0)
    intrinsic = t.attr(f"intrinsic_{edge}")
    if intrinsic is not None:
        line = t.attr_line(f"intrinsic_{edge}")
        base = floats(str(intrinsic), f"intrinsic_{edge}", path, line)[0]
        res = t.attr(f"{edge}_resistance")
        r = floats(str(res), f"{edge}_resistance", path, t.attr_line(f"{edge}_resistance"))[0] \
            if res is not None else 0.0
        return max(base + r * (lib.output_load or 0.0), 0.0)
    return None


def table_of(lib_path: str, cell: str, pin: str, related_pin: str, edge: str = "rise",
             text: str | None = None) -> list[Table]:
    """The ``cell_<edge>`` tables of one arc, as read (for inspection and tests)."""
    if text is None:
        with open(lib_path, encoding="utf-8", errors="replace") as fh:
            text = fh.read()
    top = parse_liberty(text, lib_path)
    templates = {g.name: read_template(g, lib_path) for g in top.subgroups("lu_table_template")}
    out = []
    for c in top.subgroups("cell"):
        if c.name != cell:
            continue
        for p in c.subgroups("pin"):
            if pin not in p.args:
                continue
            for t in p.subgroups("timing"):
                if related_pin in str(t.attr("related_pin", "")).split():
                    for tab in t.subgroups(f"cell_{edge}"):
                        out.append(read_table(tab, templates, lib_path))
    return out


# ---------------------------------------------------------------------------------------------
# Verilog simulation models of a library's cells

def _vexpr(e) -> str:
    tag = e[0]
    if tag == "var":
        return _vname(e[1])
    if tag == "const":
        return "1'b1" if e[1] else "1'b0"
    if tag == "not":
        return f"~({_vexpr(e[1])})"
    op = {"and": " & ", "or": " | ", "xor": " ^ "}[tag]
    return "(" + op.join(_vexpr(x) for x in e[1:]) + ")"


def _vname(name: str) -> str:
    if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_$]*", name):
        return name
    return "\\" + name + " "


def _edge(e, what: str, cell: str) -> tuple[str, str]:
    """(edge keyword, pin) for a control expression that is a pin or its inversion."""
    if e[0] == "var":
        return "posedge", e[1]
    if e[0] == "not" and e[1][0] == "var":
        return "negedge", e[1][1]
    raise ValueError(f"cell '{cell}': {what} '{e}' is not a plain pin; no model written")


def verilog_models(library: Library, *, specify: bool = False, cells=None) -> str:
    """Verilog modules that behave as the library's cells (for simulating a mapped netlist).

    Ports are outputs first, then inputs (the order the flattener assumes for positional
    connections). With ``specify``, every combinational arc gets a specify path
    ``(in => out) = (0, 0);`` for an SDF annotator to fill. Flip-flops use the clock edge and the
    asynchronous clear/preset levels of their ``ff`` group (clear wins over preset); latches are
    level-sensitive ``always @*`` blocks.
    """
    out: list[str] = []
    for name in (cells or sorted(library.cells)):
        c = library.cells[name]
        ports = c.outputs + c.inputs + c.inouts
        body = [f"module {_vname(name)}({', '.join(_vname(p) for p in ports)});"]
        body += [f"  output {_vname(p)};" for p in c.outputs]
        body += [f"  input {_vname(p)};" for p in c.inputs]
        body += [f"  inout {_vname(p)};" for p in c.inouts]
        for o in c.outputs:
            if o in c.functions:
                f = _vexpr(c.functions[o])
                ts = c.three_state.get(o)
                body.append(f"  assign {_vname(o)} = {f'({_vexpr(ts)}) ? 1bz : ' if ts else ''}"
                            .replace("1bz", "1'bz") + f"{f};")
        s = c.sequential
        if s is not None:
            body.append("  reg IQ;")
            for o, which in s.state_outputs.items():
                body.append(f"  assign {_vname(o)} = {'IQ' if which == 'Q' else '~IQ'};")
            if s.kind == "ff":
                sens = [_edge(s.clocked_on, "clocked_on", name)]
                for key in ("clear", "preset"):
                    e = getattr(s, key)
                    if e is not None:
                        sens.append(_edge(e, key, name))
                lines = []
                if s.clear is not None:
                    lines.append(f"if ({_vexpr(s.clear)}) IQ <= 1'b0;")
                if s.preset is not None:
                    lines.append(f"{'else ' if lines else ''}if ({_vexpr(s.preset)}) IQ <= 1'b1;")
                lines.append(f"{'else ' if lines else ''}IQ <= {_vexpr(s.next_state)};")
                body.append(f"  always @({' or '.join(f'{k} {_vname(p)}' for k, p in sens)})")
                body += [f"    {x}" for x in lines]
            else:
                lines = []
                if s.clear is not None:
                    lines.append(f"if ({_vexpr(s.clear)}) IQ = 1'b0;")
                if s.preset is not None:
                    lines.append(f"{'else ' if lines else ''}if ({_vexpr(s.preset)}) IQ = 1'b1;")
                if s.enable is not None:
                    lines.append(f"{'else ' if lines else ''}if ({_vexpr(s.enable)}) "
                                 f"IQ = {_vexpr(s.data_in)};")
                body.append("  always @*")
                body += [f"    {x}" for x in lines]
        if specify:
            paths = [(i, o) for (i, o) in c.arcs if o in c.functions and i in c.inputs]
            if paths:
                body.append("  specify")
                body += [f"    ({_vname(i)} => {_vname(o)}) = (0, 0);" for i, o in paths]
                body.append("  endspecify")
        body.append("endmodule")
        out.append("\n".join(body))
    return "\n\n".join(out) + "\n"
