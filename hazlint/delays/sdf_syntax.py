"""SDF (IEEE 1497) syntax: the file as plain data (:class:`SdfFile`) and its delay values
(triples, corners); :mod:`hazlint.delays.sdf` annotates a design with it.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Iterable

from ..errors import ParseError
from ..netlist.library import Delay

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


def envelope(a: Delay | None, b: Delay) -> Delay:
    if a is None:
        return b
    return Delay(min(a.rise_min, b.rise_min), max(a.rise_max, b.rise_max),
                 min(a.fall_min, b.fall_min), max(a.fall_max, b.fall_max))


def add_delay(a: Delay | None, b: Delay) -> Delay:
    if a is None:
        return b
    return Delay(a.rise_min + b.rise_min, a.rise_max + b.rise_max,
                 a.fall_min + b.fall_min, a.fall_max + b.fall_max)
