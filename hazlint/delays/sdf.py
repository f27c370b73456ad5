"""SDF (IEEE 1497 Standard Delay Format) reading and back-annotation onto the gate graph.

:func:`parse_sdf` reads the file into plain data (:class:`SdfFile`); :func:`annotate` writes its
delays onto a :class:`~hazlint.netlist.design.Design`:

* ``IOPATH in out`` of an instance replaces the ``delays[i]`` of the gate node that instance
  drives on pin ``out``, for every input ``i`` whose pin is ``in``. Several IOPATHs for the same
  pin pair (conditional ``COND`` ones, edge-qualified ones) fold into one Delay, the envelope
  (minimum and maximum) across them. Clock-to-output IOPATHs of a register go onto its state
  node as ``arc_delays`` (pin -> Delay), since a state node has no input pins.
* ``INTERCONNECT src dst`` (and ``PORT dst``) becomes the edge attribute ``wire`` (a Delay) on the
  graph edge into ``dst``'s pin.
* ``INCREMENT`` blocks add to what is there; ``ABSOLUTE`` blocks replace it.

Delay values are ``rvalue``\\ s ``(min:typ:max)``; a list of one gives both transitions, of two or
more gives rise (01) then fall (10) and the rest (transitions to and from Z) are not used. The
``corner`` picks the value: ``"min"``, ``"typ"`` or ``"max"`` use that one number for both bounds
of the Delay; ``"minmax"`` puts the min value in ``rise_min``/``fall_min`` and the max value in
``rise_max``/``fall_max`` (the natural choice for hazard analysis: it keeps the spread). A triple
with the chosen value left empty (``(::1.2)``) falls back to the nearest value given.

Why our own reader: the PyPI ``sdf-timing`` package (Apache-2.0) rejects the comment lines and the
``PERIOD`` check in the SDF that Debian's OpenSTA package ships as its example and reports errors
without the file name; the subset needed here is small. ``sdf-timing`` is used in the tests only,
as a cross-check of the values read (see DEVELOPERS.md).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..findings.words import TimeUnit
from ..netlist.library import Delay

from .sdf_syntax import CORNERS, add_delay, delay_of, envelope, parse_sdf


@dataclass
class AnnotationReport:
    """What :func:`annotate` did, and what in the SDF did not fit the design.

    ``missing_instances``: SDF instances the design lacks, as (SDF path, CELLTYPE, line).
    ``arcs_missing``: IOPATHs naming a pin pair the design's cell instance does not have, as
    (instance, cell, from pin, to pin, line, reason). ``instances_without_iopath``: cell instances
    of the design that the SDF gives no IOPATH (they keep their library delays), as
    (instance, cell). Instances are relative to the top module, with "." separators.
    """

    sdf_path: str
    corner: str
    sdf_design: str = ""
    scale: float = 1.0                 # factor applied to SDF numbers
    time_unit: float | None = None     # seconds per unit of the annotated values
    annotated_instances: list[str] = field(default_factory=list)
    iopaths_applied: int = 0
    interconnects_applied: int = 0
    missing_instances: list[tuple[str, str, int]] = field(default_factory=list)
    arcs_missing: list[tuple[str, str, str, str, int, str]] = field(default_factory=list)
    instances_without_iopath: list[tuple[str, str]] = field(default_factory=list)
    unmatched_interconnects: list[tuple[str, str, int, str]] = field(default_factory=list)
    celltype_mismatches: list[tuple[str, str, str, int]] = field(default_factory=list)
    ignored: dict[str, int] = field(default_factory=dict)

    @property
    def complete(self) -> bool:
        """Every SDF entry found its place in the design."""
        return not (self.missing_instances or self.arcs_missing or self.unmatched_interconnects
                    or self.celltype_mismatches)

    def to_json(self) -> dict[str, Any]:
        return {
            "sdf": self.sdf_path, "corner": self.corner, "sdf_design": self.sdf_design,
            "scale": self.scale, "time_unit": self.time_unit,
            "annotated_instances": list(self.annotated_instances),
            "iopaths_applied": self.iopaths_applied,
            "interconnects_applied": self.interconnects_applied,
            "missing_instances": [list(x) for x in self.missing_instances],
            "arcs_missing": [list(x) for x in self.arcs_missing],
            "instances_without_iopath": [list(x) for x in self.instances_without_iopath],
            "unmatched_interconnects": [list(x) for x in self.unmatched_interconnects],
            "celltype_mismatches": [list(x) for x in self.celltype_mismatches],
            "ignored": dict(self.ignored),
        }

    def lines(self) -> list[str]:
        """Readable summary, one finding a line (for the CLI and notes)."""
        out = [f"{self.sdf_path}: {self.iopaths_applied} IOPATH and {self.interconnects_applied} "
               f"interconnect delays applied to {len(self.annotated_instances)} instances "
               f"(corner {self.corner})"]
        for p, ct, line in self.missing_instances:
            out.append(f"{self.sdf_path}:{line}: instance '{p}' ({ct}) is not in the design")
        for inst, cell, a, b, line, why in self.arcs_missing:
            out.append(f"{self.sdf_path}:{line}: no arc {a} -> {b} on '{inst}' ({cell}): {why}")
        for s, d, line, why in self.unmatched_interconnects:
            out.append(f"{self.sdf_path}:{line}: interconnect {s or '(port)'} -> {d} not "
                       f"applied: {why}")
        for inst, want, got, line in self.celltype_mismatches:
            out.append(f"{self.sdf_path}:{line}: instance '{inst}' is a {got} in the design, "
                       f"the SDF says {want}")
        for inst, cell in self.instances_without_iopath:
            out.append(f"instance '{inst}' ({cell}) has no IOPATH in the SDF; library delays "
                       f"kept")
        return out


class _Index:
    """Design lookups by instance path relative to the top."""

    def __init__(self, design, library):
        g = design.graph
        self.design = design
        self.library = library
        self.tops = [t for t in (design.top or "").split(",") if t]
        self.gates: dict[str, list[str]] = {}
        self.cell_of: dict[str, str] = {}
        for n, d in g.nodes(data=True):
            if d.get("kind") != "gate" or not d.get("instance"):
                continue
            cell = d.get("cell") or ""
            if cell == d.get("op") or cell in ("tribus", "constant"):
                continue         # decomposed expression gates and bus resolution, not cells
            rel = self.rel(d["instance"])
            self.gates.setdefault(rel, []).append(n)
            self.cell_of[rel] = cell
        self.registers = {}
        for r in design.registers:
            rel = self.rel(r.instance)
            self.registers[rel] = r
            self.cell_of[rel] = r.cell
        # every instance path and its prefixes (hierarchy levels that exist)
        self.scopes: set[str] = {""}
        for rel in self.cell_of:
            parts = rel.split(".")
            for k in range(1, len(parts)):
                self.scopes.add(".".join(parts[:k]))
        for n, d in g.nodes(data=True):
            inst = d.get("instance")
            if inst:
                parts = self.rel(inst).split(".")
                for k in range(1, len(parts)):
                    self.scopes.add(".".join(parts[:k]))

    def rel(self, inst: str) -> str:
        for t in self.tops:
            if inst == t:
                return ""
            if inst.startswith(t + "."):
                return inst[len(t) + 1:]
        return inst

    def find(self, parts: tuple[str, ...], sdf_design: str) -> str | None:
        """Design instance (relative path) for an SDF instance path, or None."""
        cands = [".".join(parts)]
        if parts and (parts[0] == sdf_design or parts[0] in self.tops):
            cands.append(".".join(parts[1:]))
        for c in cands:
            if c in self.cell_of or c in self.scopes:
                return c
        return None

    # pins of a register cell: SDF pin name -> roles, from the library's SequentialSpec
    def register_pin_roles(self, r, pin: str) -> list[str] | None:
        cell = self.library.get(r.cell) if self.library is not None else None
        if cell is None or cell.sequential is None:
            return None
        from ..netlist.library import expr_vars
        s = cell.sequential
        roles = []
        for role, e in (("clock", s.clocked_on), ("data", s.next_state), ("enable", s.enable),
                        ("data", s.data_in), ("reset", s.clear), ("set", s.preset)):
            if e is not None and pin in expr_vars(e) and role not in roles:
                roles.append(role)
        return roles

    def register_output(self, r, pin: str) -> str | None:
        """State node ("Q"/"QN" output) behind an output pin of a register cell."""
        cell = self.library.get(r.cell) if self.library is not None else None
        if cell is not None and cell.sequential is not None:
            which = cell.sequential.state_outputs.get(pin)
            if which is None:
                f = cell.functions.get(pin)
                if f in (("var", "IQ"), ("not", ("var", "IQN"))):
                    which = "Q"
                elif f in (("var", "IQN"), ("not", ("var", "IQ"))):
                    which = "QN"
            if which is not None:
                return r.outputs.get(which)
            return None
        if pin in r.outputs:
            return r.outputs[pin]
        if len(r.outputs) == 1:
            return next(iter(r.outputs.values()))
        return None

    def gate_nodes_for_output(self, rel: str, out_pin: str) -> tuple[list[str], str]:
        """The gate nodes of an instance that make output ``out_pin``; reason when none."""
        g = self.design.graph
        nodes = self.gates.get(rel, [])
        if not nodes:
            return [], "no combinational output"
        tagged = [n for n in nodes if g.nodes[n].get("out_pin") is not None]
        if tagged:
            sel = [n for n in nodes if g.nodes[n].get("out_pin") in (out_pin, None)]
            if not any(g.nodes[n].get("out_pin") == out_pin for n in sel):
                return [], f"the cell has no output pin '{out_pin}'"
            return sel, ""
        tri = [n for n in nodes if list(g.nodes[n].get("pins", []))[-1:] == ["three_state"]]
        if len(tri) == 1 and len(nodes) <= 3:
            if g.nodes[tri[0]]["pins"][0] != out_pin:
                return [], f"the cell's output is '{g.nodes[tri[0]]['pins'][0]}'"
            return nodes, ""
        if len(nodes) == 1:
            cell = self.library.get(self.cell_of.get(rel, "")) if self.library else None
            if cell is not None and out_pin not in cell.outputs:
                return [], f"the cell has no output pin '{out_pin}'"
            return nodes, ""
        # several outputs and no pin tag: tell them apart by their Boolean functions
        cell = self.library.get(self.cell_of.get(rel, "")) if self.library else None
        if cell is None or out_pin not in cell.functions:
            return [], ("the instance has several outputs and the graph does not say which is "
                        "which" + ("" if cell else " (give the cell library)"))
        want = [n for n in nodes if _same_function(g.nodes[n], cell.functions[out_pin])]
        others = [o for o, f in cell.functions.items() if o != out_pin and any(
            _same_function(g.nodes[n], f) for n in want)]
        if len(want) == 1 and not others:
            return want, ""
        return [], f"cannot tell output '{out_pin}' from the cell's other outputs"


def _same_function(d, fn, max_pins: int = 12) -> bool:
    """Whether a gate node computes the Liberty function ``fn`` of its pins (truth tables,
    bit-parallel over all 2^k input combinations)."""
    from ..netlist.library import bind_expr, expr_vars
    from ..netlist.logic import eval_expr, eval_op
    pins = list(d.get("pins") or [])
    if not set(expr_vars(fn)) <= set(pins) or len(pins) > max_pins or len(set(pins)) != len(pins):
        return False
    width = 1 << len(pins)
    mask = (1 << width) - 1
    ins = [sum(1 << v for v in range(width) if (v >> k) & 1) for k in range(len(pins))]
    try:
        mine = eval_op(d["op"], ins, mask, d.get("expr"))
    except (ValueError, IndexError, KeyError):
        return False
    return mine == eval_expr(bind_expr(fn, {p: k for k, p in enumerate(pins)}), ins, mask)


def annotate(design, sdf_path: str, *, corner: str = "max", library=None,
             time_unit: float | None = None, text: str | None = None) -> AnnotationReport:
    """Back-annotate a design with the delays of an SDF file (see the module docstring).

    ``corner`` is ``"min"``, ``"typ"``, ``"max"`` or ``"minmax"``. ``library`` (the
    :class:`~hazlint.netlist.library.Library` the design was built with) is needed to tell which pin of
    a register cell is its clock, data, set or reset and which output is Q or QN. Values are
    converted to ``time_unit`` seconds, else to the unit of the delays the design already has
    (its ``timescale`` or Liberty unit), else to the design's ``timescale`` unit when it has
    one, else kept in the SDF's own unit; the graph records that unit (origin "SDF").
    """
    if corner not in CORNERS:
        from ..errors import ConfigError
        raise ConfigError(f"SDF corner must be one of {', '.join(CORNERS)}, not '{corner}'",
                          construct=corner)
    if library is None:
        library = getattr(design, "library", None)
    sdf = parse_sdf(sdf_path, text)
    given = TimeUnit.of(design.graph).seconds
    target = time_unit or given or (design.timescale[0] if design.timescale else None)
    scale = sdf.timescale / target if target else 1.0
    rep = AnnotationReport(sdf_path, corner, sdf.design, scale, target or sdf.timescale,
                           ignored=dict(sdf.ignored))
    TimeUnit(rep.time_unit, "SDF").record(design.graph)
    idx = _Index(design, library)
    g = design.graph
    seen_missing: set[str] = set()
    annotated: set[str] = set()
    # pending per (node, pin index) or (state node, pin): envelope over entries
    gate_new: dict[tuple[str, int], Delay] = {}
    gate_inc: dict[tuple[str, int], Delay] = {}
    state_new: dict[tuple[str, str], Delay] = {}

    for c in sdf.cells:
        if c.instance is None:
            continue
        rel = idx.find(c.instance, sdf.design)
        if rel is None:
            key = ".".join(c.instance)
            if key not in seen_missing:
                seen_missing.add(key)
                rep.missing_instances.append((sdf.divider.join(c.instance), c.celltype, c.line))
        elif rel in idx.cell_of and idx.cell_of[rel] != c.celltype:
            rep.celltype_mismatches.append((rel, c.celltype, idx.cell_of[rel], c.line))

    iopaths = [(p, None) for p in sdf.iopaths]
    for celltype, p in sdf.wildcard_iopaths:      # INSTANCE *: every instance of that cell type
        for rel, cell in idx.cell_of.items():
            if cell == celltype:
                iopaths.append((p, rel))
    for p, rel in iopaths:
        if rel is None:
            rel = idx.find(p.instance, sdf.design)
            if rel is None:
                continue          # reported once per CELL above
        cell = idx.cell_of.get(rel, "")
        d = delay_of(p.values, corner, scale)
        if d is None:
            continue
        if rel in idx.registers and rel not in idx.gates:
            r = idx.registers[rel]
            st = idx.register_output(r, p.to_pin)
            if st is None:
                rep.arcs_missing.append((rel, cell, p.from_pin, p.to_pin, p.line,
                                         f"no state output for pin '{p.to_pin}'"
                                         + ("" if library is not None else
                                            " (give the cell library)")))
                continue
            key = (st, p.from_pin)
            (gate_inc if p.increment else state_new)[key] = envelope(
                (gate_inc if p.increment else state_new).get(key), d)
            annotated.add(rel)
            rep.iopaths_applied += 1
            continue
        nodes, why = idx.gate_nodes_for_output(rel, p.to_pin)
        hits = [(n, i) for n in nodes for i, pin in enumerate(g.nodes[n].get("pins", []))
                if pin == p.from_pin]
        if not hits:
            rep.arcs_missing.append((rel, cell, p.from_pin, p.to_pin, p.line,
                                     why or f"the output does not depend on pin "
                                            f"'{p.from_pin}'"))
            continue
        for key in hits:
            tgt = gate_inc if p.increment else gate_new
            tgt[key] = envelope(tgt.get(key), d)
        annotated.add(rel)
        rep.iopaths_applied += 1

    for (n, i), d in gate_new.items():
        ds = list(g.nodes[n]["delays"])
        ds[i] = d
        g.nodes[n]["delays"] = ds
    for (n, pin), d in state_new.items():
        arcs = dict(g.nodes[n].get("arc_delays") or {})
        arcs[pin] = d
        g.nodes[n]["arc_delays"] = arcs
    for key, d in gate_inc.items():
        n, i = key
        if isinstance(i, int) and g.nodes[n].get("kind") == "gate":
            ds = list(g.nodes[n]["delays"])
            ds[i] = add_delay(ds[i], d)
            g.nodes[n]["delays"] = ds
        else:
            arcs = dict(g.nodes[n].get("arc_delays") or {})
            arcs[i] = add_delay(arcs.get(i), d)
            g.nodes[n]["arc_delays"] = arcs

    # interconnects
    wire_new: dict[tuple[str, str], Delay] = {}
    wire_inc: dict[tuple[str, str], Delay] = {}
    for ic in sdf.interconnects:
        d = delay_of(ic.values, corner, scale)
        shown_src = sdf.divider.join(ic.source) if ic.source else ""
        shown_dst = sdf.divider.join(ic.dest)
        if d is None:
            continue
        edges, why = _edges_into(idx, ic.dest, sdf.design)
        if not edges:
            rep.unmatched_interconnects.append((shown_src, shown_dst, ic.line, why))
            continue
        if ic.source is not None:
            bad = [e for e in edges if not _drives(idx, e[0], ic.source, sdf.design)]
            if bad:
                rep.unmatched_interconnects.append(
                    (shown_src, shown_dst, ic.line,
                     f"in the design '{shown_dst}' is driven by '{g.nodes[bad[0][0]]['name']}'"))
                continue
        tgt = wire_inc if ic.increment else wire_new
        for e in edges:
            tgt[e] = envelope(tgt.get(e), d)
        rep.interconnects_applied += 1
    for e, d in wire_new.items():
        g.edges[e]["wire"] = d
    for e, d in wire_inc.items():
        g.edges[e]["wire"] = add_delay(g.edges[e].get("wire"), d)

    rep.annotated_instances = sorted(annotated)
    rep.instances_without_iopath = sorted((rel, cell) for rel, cell in idx.cell_of.items()
                                          if rel not in annotated)
    return rep


def _edges_into(idx: _Index, dest: tuple[str, ...], sdf_design: str):
    """Graph edges (driver, reader) of the net arriving at an SDF port path."""
    design = idx.design
    g = design.graph
    if len(dest) == 1 or (len(dest) == 2 and dest[0] in (sdf_design, *idx.tops)
                          and dest[1] in design.output_node):
        port = dest[-1]
        s = design.output_node.get(port)
        if s is None:
            if port in design.input_node:
                return [], f"'{port}' is an input port"
            return [], f"no output port '{port}'"
        return [(g.nodes[s]["inputs"][0], s)], ""
    rel = idx.find(dest[:-1], sdf_design)
    pin = dest[-1]
    if rel is None:
        return [], f"instance '{'.'.join(dest[:-1])}' is not in the design"
    edges = []
    for n in idx.gates.get(rel, []):
        d = g.nodes[n]
        for i, p in enumerate(d.get("pins", [])):
            if p == pin:
                edges.append((d["inputs"][i], n))
    if rel in idx.registers:
        r = idx.registers[rel]
        sinks = [s for s in r.pins.values() if g.nodes[s].get("pin") == pin]
        if not sinks:
            roles = idx.register_pin_roles(r, pin)
            if roles is None and not edges:
                return [], (f"cannot tell which pin of register '{rel}' is '{pin}' "
                            f"(give the cell library)")
            for role in roles or []:
                s = r.pins.get(role)
                if s is None:
                    continue
                src = g.nodes[s]["inputs"][0]
                # only when the sink reads the pin's net itself (a plain pin expression)
                cell = idx.library.get(r.cell)
                e = _seq_expr(cell.sequential, role)
                if e in (("var", pin), ("not", ("var", pin))):
                    edges.append((src, s))
                else:
                    return [], (f"pin '{pin}' of '{rel}' feeds its {role} through logic "
                                f"('{role}' is a function of several pins)")
        else:
            edges.extend((g.nodes[s]["inputs"][0], s) for s in sinks)
    edges = sorted(set(edges))
    if not edges:
        return [], f"no pin '{pin}' read on instance '{rel}'"
    return edges, ""


def _seq_expr(s, role):
    return {"clock": s.clocked_on, "enable": s.enable, "reset": s.clear,
            "set": s.preset, "data": s.next_state if s.kind == "ff" else s.data_in}[role]


def _drives(idx: _Index, node: str, source: tuple[str, ...], sdf_design: str) -> bool:
    """Whether graph node ``node`` is the driver an SDF source port path names."""
    design = idx.design
    d = design.graph.nodes[node]
    if len(source) == 1 or (len(source) == 2 and source[0] in (sdf_design, *idx.tops)
                            and source[1] in design.input_node):
        port = source[-1]
        return design.input_node.get(port) == node
    rel = idx.find(source[:-1], sdf_design)
    if rel is None or idx.rel(d.get("instance") or "") != rel:
        return False
    pin = source[-1]
    if d.get("kind") == "state" and rel in idx.registers:
        st = idx.register_output(idx.registers[rel], pin)
        return st is None or st == node       # unknown pin mapping: the instance must do
    if d.get("kind") == "gate":
        nodes, why = idx.gate_nodes_for_output(rel, pin)
        if nodes:
            return node in nodes
        return "output pin" not in why and "output is" not in why   # ambiguous: trust the SDF
    return True
