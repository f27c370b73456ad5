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

import re
from dataclasses import dataclass, field
from typing import Any, Iterable

from .errors import ParseError
from .netlist.library import Delay

CORNERS = ("min", "typ", "max", "minmax")

# ---------------------------------------------------------------------------------------------
# S-expression reading

_TOK = re.compile(r"""
    (?P<ws>[ \t\r\f]+)
  | (?P<nl>\n)
  | (?P<comment>//[^\n]*|/\*.*?\*/)
  | (?P<badcomment>/\*)
  | (?P<lp>\()
  | (?P<rp>\))
  | (?P<string>"(?:[^"\\\n]|\\.)*")
  | (?P<badstring>")
  | (?P<atom>(?:\\.|[^\s()"\\])+)
""", re.VERBOSE | re.DOTALL)


@dataclass
class Atom:
    text: str
    line: int
    quoted: bool = False


@dataclass
class Form:
    """``( head item ... )``; ``head`` upper-cased when it is a keyword."""

    head: str
    items: list[Any]          # Atom | Form
    line: int
    raw: str = ""             # the head as written

    def forms(self, head: str | None = None) -> list["Form"]:
        return [x for x in self.items if isinstance(x, Form) and (head is None or x.head == head)]

    def atoms(self) -> list[Atom]:
        return [x for x in self.items if isinstance(x, Atom)]


def _read_forms(text: str, path: str) -> Form:
    stack: list[Form] = []
    top: Form | None = None
    line = 1
    pos = 0
    n = len(text)
    pending_open: int | None = None       # line of '(' awaiting its head
    while pos < n:
        m = _TOK.match(text, pos)
        kind = m.lastgroup if m else None
        if kind in (None, "badcomment", "badstring"):
            frag = text[pos:pos + 20].split("\n")[0]
            what = {"badcomment": "unterminated comment",
                    "badstring": "unterminated string"}.get(kind, f"unexpected {frag!r}")
            raise ParseError(f"SDF: {what}", path=path, line=line, construct=frag)
        tok = m.group(kind)
        pos = m.end()
        if kind == "lp":
            if pending_open is not None:        # "((" : a form without a head
                f = Form("", [], pending_open)
                if stack:
                    stack[-1].items.append(f)
                stack.append(f)
            pending_open = line
        elif kind == "rp":
            if pending_open is not None:        # "()" : an empty rvalue
                f = Form("", [], pending_open)
                if not stack:
                    raise ParseError("SDF: '()' outside DELAYFILE", path=path, line=line,
                                     construct="()")
                stack[-1].items.append(f)
                pending_open = None
            elif not stack:
                raise ParseError("SDF: unbalanced ')'", path=path, line=line, construct=")")
            else:
                f = stack.pop()
                if not stack:
                    if top is not None:
                        raise ParseError("SDF: more than one top-level form", path=path,
                                         line=f.line, construct=f.head)
                    top = f
        elif kind in ("atom", "string"):
            a = Atom(tok[1:-1] if kind == "string" else tok, line, kind == "string")
            if pending_open is not None:
                head = a.text.upper() if not a.quoted and _KEYWORD.fullmatch(a.text) else ""
                f = Form(head, [] if head else [a], pending_open, a.text)
                if stack:
                    stack[-1].items.append(f)
                elif top is not None:
                    raise ParseError("SDF: text after the end of DELAYFILE", path=path, line=line,
                                     construct=a.text)
                stack.append(f)
                pending_open = None
            elif stack:
                stack[-1].items.append(a)
            else:
                raise ParseError("SDF: text outside DELAYFILE", path=path, line=line,
                                 construct=a.text)
        line += tok.count("\n")
    if pending_open is not None or stack:
        f = stack[0] if stack else None
        raise ParseError(f"SDF: '(' at line {f.line if f else pending_open} is never closed",
                         path=path, line=line, construct=f.head if f else "(")
    if top is None:
        raise ParseError("SDF: empty file", path=path, line=1)
    return top


_KEYWORD = re.compile(r"[A-Za-z_][A-Za-z_0-9]*")

# ---------------------------------------------------------------------------------------------
# SDF data

Triple = tuple  # (min, typ, max), each float or None


@dataclass
class IOPath:
    instance: tuple[str, ...]          # hierarchical instance path (components)
    from_pin: str
    to_pin: str
    values: list[Triple | None]        # rvalues in order (01, 10, ...); None for "()"
    from_edge: str | None = None       # posedge / negedge / 01 / ...
    cond: bool = False
    increment: bool = False
    line: int = 0


@dataclass
class Interconnect:
    source: tuple[str, ...] | None     # port path components, last one the pin; None for PORT
    dest: tuple[str, ...]
    values: list[Triple | None]
    increment: bool = False
    line: int = 0
    kind: str = "INTERCONNECT"         # or "PORT"


@dataclass
class SdfCell:
    celltype: str
    instance: tuple[str, ...] | None   # None: the wildcard "*"; () the top
    line: int


@dataclass
class SdfFile:
    path: str
    version: str = ""
    design: str = ""
    divider: str = "."
    timescale: float = 1e-9            # seconds per SDF time unit (IEEE 1497 default 1ns)
    cells: list[SdfCell] = field(default_factory=list)
    iopaths: list[IOPath] = field(default_factory=list)
    interconnects: list[Interconnect] = field(default_factory=list)
    # IOPATHs under an INSTANCE *: (celltype, IOPath with instance ())
    wildcard_iopaths: list[tuple[str, IOPath]] = field(default_factory=list)
    ignored: dict[str, int] = field(default_factory=dict)   # construct -> count (NETDELAY, ...)


_TS = re.compile(r"\s*([0-9.]+)?\s*(s|ms|us|ns|ps|fs)\s*", re.IGNORECASE)
_TS_UNITS = {"s": 1.0, "ms": 1e-3, "us": 1e-6, "ns": 1e-9, "ps": 1e-12, "fs": 1e-15}


def _number(a: Atom, path: str) -> float:
    try:
        return float(a.text)
    except ValueError:
        raise ParseError(f"SDF: '{a.text}' is not a number", path=path, line=a.line,
                         construct=a.text) from None


def _triple(f: Form, path: str) -> Triple | None:
    """An rvalue ``( )``, ``(v)`` or ``(min:typ:max)``; blanks around ':' are tolerated."""
    if f.head:
        raise ParseError(f"SDF: expected a delay value such as (1.0:1.2:1.5), found "
                         f"'({f.raw} ...'", path=path, line=f.line, construct=f.raw)
    text = "".join(a.text for a in f.atoms())
    if f.forms():
        raise ParseError("SDF: nested list inside a delay value", path=path, line=f.line,
                         construct=text or "(")
    if not text:
        return None
    parts = text.split(":")
    if len(parts) not in (1, 3):
        raise ParseError(f"SDF: delay value '{text}' must be one number or min:typ:max",
                         path=path, line=f.line, construct=text)
    vals = []
    for p in parts:
        if p == "":
            vals.append(None)
            continue
        try:
            vals.append(float(p))
        except ValueError:
            raise ParseError(f"SDF: '{p}' in delay value '{text}' is not a number", path=path,
                             line=f.line, construct=text) from None
    if len(vals) == 1:
        return (vals[0], vals[0], vals[0])
    if all(v is None for v in vals):
        return None
    return tuple(vals)


def _split_path(text: str, divider: str) -> tuple[str, ...]:
    """Split a hierarchical SDF identifier at unescaped dividers and drop escapes."""
    parts: list[str] = []
    cur = []
    i = 0
    while i < len(text):
        c = text[i]
        if c == "\\" and i + 1 < len(text):
            cur.append(text[i + 1])
            i += 2
            continue
        if c == divider:
            parts.append("".join(cur))
            cur = []
        else:
            cur.append(c)
        i += 1
    parts.append("".join(cur))
    return tuple(p for p in parts if p != "")


def _unescape(text: str) -> str:
    return re.sub(r"\\(.)", r"\1", text)


def parse_sdf(path: str, text: str | None = None) -> SdfFile:
    """Read an SDF file. Raises :class:`~hazlint.errors.ParseError` with file:line."""
    if text is None:
        try:
            with open(path, encoding="utf-8", errors="replace") as fh:
                text = fh.read()
        except OSError as exc:
            raise ParseError(f"cannot read SDF file: {exc.strerror}", path=path) from None
    top = _read_forms(text, path)
    if top.head != "DELAYFILE":
        raise ParseError("SDF: the file must start with (DELAYFILE", path=path, line=top.line,
                         construct=top.head or "(")
    out = SdfFile(path)
    for f in top.forms():
        a = f.atoms()
        if f.head == "SDFVERSION" and a:
            out.version = a[0].text
        elif f.head == "DESIGN" and a:
            out.design = a[0].text
        elif f.head == "DIVIDER":
            if len(a) != 1 or a[0].text not in ("/", "."):
                raise ParseError("SDF: DIVIDER must be '/' or '.'", path=path, line=f.line,
                                 construct="DIVIDER")
            out.divider = a[0].text
        elif f.head == "TIMESCALE":
            text_ts = " ".join(x.text for x in a)
            m = _TS.fullmatch(text_ts)
            if not m:
                raise ParseError(f"SDF: TIMESCALE '{text_ts}' is not a time unit such as 1ns",
                                 path=path, line=f.line, construct=text_ts)
            num = float(m.group(1)) if m.group(1) else 1.0
            if num not in (1.0, 10.0, 100.0):
                raise ParseError(f"SDF: TIMESCALE number must be 1, 10 or 100, not {num:g}",
                                 path=path, line=f.line, construct=text_ts)
            out.timescale = num * _TS_UNITS[m.group(2).lower()]
        elif f.head == "CELL":
            _read_cell(f, out, path)
        elif f.head == "":
            raise ParseError("SDF: expected a keyword after '('", path=path, line=f.line,
                             construct=a[0].text if a else "(")
    return out


def _read_cell(f: Form, out: SdfFile, path: str) -> None:
    ct = f.forms("CELLTYPE")
    if not ct or not ct[0].atoms():
        raise ParseError("SDF: CELL without CELLTYPE", path=path, line=f.line, construct="CELL")
    celltype = ct[0].atoms()[0].text
    inst_forms = f.forms("INSTANCE")
    if not inst_forms:
        raise ParseError(f"SDF: CELL '{celltype}' without INSTANCE", path=path, line=f.line,
                         construct=celltype)
    ia = inst_forms[0].atoms()
    wildcard = bool(ia) and ia[0].text == "*"
    inst: tuple[str, ...] | None = None if wildcard else \
        (_split_path(ia[0].text, out.divider) if ia else ())
    out.cells.append(SdfCell(celltype, inst, f.line))
    for d in f.forms():
        if d.head in ("CELLTYPE", "INSTANCE"):
            continue
        if d.head != "DELAY":
            out.ignored[d.head] = out.ignored.get(d.head, 0) + 1     # TIMINGCHECK, LABEL, ...
            continue
        for blk in d.forms():
            if blk.head not in ("ABSOLUTE", "INCREMENT"):
                out.ignored[blk.head] = out.ignored.get(blk.head, 0) + 1   # PATHPULSE ...
                continue
            inc = blk.head == "INCREMENT"
            for e in blk.forms():
                _read_delay_entry(e, celltype, inst, inc, out, path, cond=False)


def _rvalues(items: Iterable[Any], path: str) -> list[Triple | None]:
    """Delay values of an entry; RETAIN forms are skipped, any other keyword is an error."""
    return [_triple(x, path) for x in items if isinstance(x, Form) and x.head != "RETAIN"]


def _read_delay_entry(e: Form, celltype: str, inst, inc: bool, out: SdfFile, path: str,
                      cond: bool) -> None:
    if e.head in ("COND", "CONDELSE"):
        for sub in e.forms():
            if sub.head == "IOPATH":
                _read_delay_entry(sub, celltype, inst, inc, out, path, cond=True)
        return
    if e.head == "IOPATH":
        items = e.items
        ports: list[tuple[str, str | None]] = []
        k = 0
        while k < len(items) and len(ports) < 2:
            x = items[k]
            if isinstance(x, Atom):
                ports.append((x.text, None))
            elif isinstance(x, Form) and x.head and x.head.lower() in (
                    "posedge", "negedge") and x.atoms():
                ports.append((x.atoms()[0].text, x.head.lower()))
            elif isinstance(x, Form) and not x.head and len(x.atoms()) == 2 and \
                    re.fullmatch(r"[01xXzZ]{2}", x.atoms()[0].text):
                ports.append((x.atoms()[1].text, x.atoms()[0].text))
            else:
                break
            k += 1
        if len(ports) != 2:
            raise ParseError("SDF: IOPATH needs an input port and an output port", path=path,
                             line=e.line, construct="IOPATH")
        vals = _rvalues(items[k:], path)       # RETAIN forms have a head and are skipped
        if not vals:
            raise ParseError("SDF: IOPATH without delay values", path=path, line=e.line,
                             construct="IOPATH")
        (src, edge), (dst, _) = ports
        p = IOPath(inst or (), _unescape(src), _unescape(dst), vals, edge, cond, inc, e.line)
        if inst is None:
            out.wildcard_iopaths.append((celltype, p))
        else:
            out.iopaths.append(p)
        return
    if e.head in ("INTERCONNECT", "PORT"):
        a = e.atoms()
        need = 2 if e.head == "INTERCONNECT" else 1
        if len(a) < need:
            raise ParseError(f"SDF: {e.head} needs {need} port name{'s' if need > 1 else ''}",
                             path=path, line=e.line, construct=e.head)
        vals = _rvalues(e.items, path)
        if not vals:
            raise ParseError(f"SDF: {e.head} without delay values", path=path, line=e.line,
                             construct=e.head)
        base = inst or ()
        if e.head == "INTERCONNECT":
            src = base + _split_path(a[0].text, out.divider)
            dst = base + _split_path(a[1].text, out.divider)
        else:
            src = None
            dst = base + _split_path(a[0].text, out.divider)
        out.interconnects.append(Interconnect(src, dst, vals, inc, e.line, e.head))
        return
    out.ignored[e.head] = out.ignored.get(e.head, 0) + 1        # NETDELAY, DEVICE


# ---------------------------------------------------------------------------------------------
# Corners and Delays

def _pick(t: Triple, which: int) -> float:
    order = {0: (0, 1, 2), 1: (1, 0, 2), 2: (2, 1, 0)}[which]
    for k in order:
        if t[k] is not None:
            return t[k]
    raise ValueError("empty triple")


def corner_bounds(t: Triple, corner: str) -> tuple[float, float]:
    """(low, high) of one rvalue triple at a corner."""
    if corner == "minmax":
        return _pick(t, 0), _pick(t, 2)
    k = {"min": 0, "typ": 1, "max": 2}[corner]
    v = _pick(t, k)
    return v, v


def delay_of(values: list[Triple | None], corner: str, scale: float = 1.0,
             base: Delay | None = None) -> Delay | None:
    """The Delay of an rvalue list; transitions given as ``()`` keep ``base``'s value.
    Returns None if nothing is given at all."""
    rise_t = values[0] if values else None
    fall_t = values[1] if len(values) >= 2 else values[0] if values else None
    if rise_t is None and fall_t is None:
        return None
    b = base or Delay(0.0, 0.0, 0.0, 0.0)
    r = (corner_bounds(rise_t, corner) if rise_t is not None else None)
    f = (corner_bounds(fall_t, corner) if fall_t is not None else None)
    return Delay(r[0] * scale if r else b.rise_min, r[1] * scale if r else b.rise_max,
                 f[0] * scale if f else b.fall_min, f[1] * scale if f else b.fall_max)


def _envelope(a: Delay | None, b: Delay) -> Delay:
    if a is None:
        return b
    return Delay(min(a.rise_min, b.rise_min), max(a.rise_max, b.rise_max),
                 min(a.fall_min, b.fall_min), max(a.fall_max, b.fall_max))


def _add(a: Delay | None, b: Delay) -> Delay:
    if a is None:
        return b
    return Delay(a.rise_min + b.rise_min, a.rise_max + b.rise_max,
                 a.fall_min + b.fall_min, a.fall_max + b.fall_max)


# ---------------------------------------------------------------------------------------------
# Back-annotation

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
        from .netlist.library import expr_vars
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
    from .netlist.library import bind_expr, expr_vars
    from .netlist.logic import eval_expr, eval_op
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
    converted to ``time_unit`` seconds, else to the design's ``timescale`` unit when it has one,
    else kept in the SDF's own unit.
    """
    if corner not in CORNERS:
        from .errors import ConfigError
        raise ConfigError(f"SDF corner must be one of {', '.join(CORNERS)}, not '{corner}'",
                          construct=corner)
    if library is None:
        library = getattr(design, "library", None)
    sdf = parse_sdf(sdf_path, text)
    target = time_unit if time_unit else (design.timescale[0] if design.timescale else None)
    scale = sdf.timescale / target if target else 1.0
    rep = AnnotationReport(sdf_path, corner, sdf.design, scale, target or sdf.timescale,
                           ignored=dict(sdf.ignored))
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
            (gate_inc if p.increment else state_new)[key] = _envelope(
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
            tgt[key] = _envelope(tgt.get(key), d)
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
            ds[i] = _add(ds[i], d)
            g.nodes[n]["delays"] = ds
        else:
            arcs = dict(g.nodes[n].get("arc_delays") or {})
            arcs[i] = _add(arcs.get(i), d)
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
            tgt[e] = _envelope(tgt.get(e), d)
        rep.interconnects_applied += 1
    for e, d in wire_new.items():
        g.edges[e]["wire"] = d
    for e, d in wire_inc.items():
        g.edges[e]["wire"] = _add(g.edges[e].get("wire"), d)

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
