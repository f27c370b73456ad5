"""The cell library: Verilog gate primitives plus user-declared and Liberty cells.

A :class:`CellDef` tells the flattener the direction of every pin, the Boolean function of every
output (in Liberty's ``function`` syntax, parsed here) and, for sequential cells, the role of each
pin. Delays per timing arc live in ``arcs`` (filled from Liberty or configuration).

Liberty function syntax (Liberty reference manual, "function" attribute; precedence from memory):
``!A`` or ``A'`` invert; ``^`` XOR; ``&``, ``*`` or juxtaposition AND; ``|`` or ``+`` OR;
parentheses; ``0``/``1`` constants. Highest to lowest: invert, XOR, AND, OR.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Mapping

from ..errors import ConfigError

# ---------------------------------------------------------------------------------------------
# Expressions over named variables: ("var", name) | ("const", b) | ("not", e) | (and|or|xor, ...)


_TOKEN = re.compile(r"\s*(?:(\()|(\))|(!)|(')|(\^)|(&|\*)|(\||\+)|([01])(?![A-Za-z0-9_\[])|"
                    r"(\\\S+|[A-Za-z_][A-Za-z0-9_\[\]\.]*))")


class FunctionSyntaxError(ValueError):
    pass


def parse_function(text: str):
    """Parse a Liberty ``function`` string into an expression tree over ``("var", name)``.

    >>> parse_function("!(A & B) | C'")
    ('or', ('not', ('and', ('var', 'A'), ('var', 'B'))), ('not', ('var', 'C')))
    """
    toks: list[tuple[str, str]] = []
    pos = 0
    s = text.strip().strip('"')
    while pos < len(s):
        if s[pos].isspace():
            pos += 1
            continue
        m = _TOKEN.match(s, pos)
        if not m or m.end() == pos:
            raise FunctionSyntaxError(f"unexpected character {s[pos]!r} in function {text!r}")
        pos = m.end()
        kinds = ("(", ")", "!", "'", "^", "&", "|", "const", "var")
        for k, g in zip(kinds, m.groups()):
            if g is not None:
                toks.append((k, g))
                break
    toks.append(("end", ""))
    i = 0

    def peek():
        return toks[i][0]

    def take(kind=None):
        nonlocal i
        k, v = toks[i]
        if kind and k != kind:
            raise FunctionSyntaxError(f"expected {kind!r} but found {v or 'end'!r} in {text!r}")
        i += 1
        return v

    def parse_or():
        terms = [parse_and()]
        while peek() == "|":
            take()
            terms.append(parse_and())
        return terms[0] if len(terms) == 1 else ("or", *terms)

    def parse_and():
        terms = [parse_xor()]
        while peek() in ("&", "(", "!", "var", "const"):
            if peek() == "&":
                take()
            terms.append(parse_xor())
        return terms[0] if len(terms) == 1 else ("and", *terms)

    def parse_xor():
        terms = [parse_unary()]
        while peek() == "^":
            take()
            terms.append(parse_unary())
        return terms[0] if len(terms) == 1 else ("xor", *terms)

    def parse_unary():
        if peek() == "!":
            take()
            return ("not", parse_unary())
        e = parse_atom()
        while peek() == "'":
            take()
            e = ("not", e)
        return e

    def parse_atom():
        k = peek()
        if k == "(":
            take()
            e = parse_or()
            take(")")
            return e
        if k == "const":
            return ("const", int(take()))
        if k == "var":
            name = take()
            return ("var", name[1:] if name.startswith("\\") else name)
        raise FunctionSyntaxError(f"unexpected {toks[i][1] or 'end'!r} in function {text!r}")

    e = parse_or()
    if peek() != "end":
        raise FunctionSyntaxError(f"unexpected {toks[i][1]!r} in function {text!r}")
    return e


def expr_vars(e) -> list[str]:
    out: list[str] = []

    def walk(x):
        if x[0] == "var":
            if x[1] not in out:
                out.append(x[1])
        elif x[0] != "const":
            for y in x[1:]:
                walk(y)
    walk(e)
    return out


def bind_expr(e, index: Mapping[str, int]):
    """Replace ``("var", name)`` by ``("in", index[name])``."""
    if e[0] == "var":
        return ("in", index[e[1]])
    if e[0] == "const":
        return e
    return (e[0], *(bind_expr(x, index) for x in e[1:]))


# ---------------------------------------------------------------------------------------------
# Cells

@dataclass(frozen=True)
class Delay:
    """Pin-to-output delay of one timing arc, split by output transition, as (min, max) each."""

    rise_min: float = 1.0
    rise_max: float = 1.0
    fall_min: float = 1.0
    fall_max: float = 1.0

    @property
    def min(self) -> float:
        return min(self.rise_min, self.fall_min)

    @property
    def max(self) -> float:
        return max(self.rise_max, self.fall_max)

    @classmethod
    def unit(cls) -> "Delay":
        return UNIT_DELAY

    @classmethod
    def fixed(cls, d: float) -> "Delay":
        return cls(d, d, d, d)

    def to_json(self) -> dict[str, float]:
        return {"rise": [self.rise_min, self.rise_max], "fall": [self.fall_min, self.fall_max]}


UNIT_DELAY = Delay(1.0, 1.0, 1.0, 1.0)
ZERO_DELAY = Delay(0.0, 0.0, 0.0, 0.0)


@dataclass
class SequentialSpec:
    """What makes a cell a register or a latch, in the terms of Liberty's ff/latch groups.

    ``clocked_on``/``enable`` and ``clear``/``preset`` are expressions over pin names (so an
    active-low reset is ``("not", ("var", "RN"))``); ``next_state``/``data_in`` likewise.
    ``state_outputs`` maps output pin -> "Q" or "QN" (Liberty's IQ/IQN variables).
    """

    kind: str                     # "ff" or "latch"
    clocked_on: Any = None        # ff: clock expression (rising edge of its value)
    next_state: Any = None        # ff: data expression
    enable: Any = None            # latch: enable expression (transparent while 1)
    data_in: Any = None           # latch: data expression
    clear: Any = None
    preset: Any = None
    clear_preset_var1: str | None = None
    clear_preset_var2: str | None = None
    state_outputs: dict[str, str] = field(default_factory=dict)


@dataclass
class CellDef:
    """A cell type: pins, output functions, optional sequential behaviour, delays per arc."""

    name: str
    inputs: list[str]
    outputs: list[str]
    functions: dict[str, Any] = field(default_factory=dict)     # output -> expr over ("var", pin)
    three_state: dict[str, Any] = field(default_factory=dict)   # output -> enable expr (Z when true)
    sequential: SequentialSpec | None = None
    inouts: list[str] = field(default_factory=list)
    # (input pin, output pin) -> Delay; missing arcs use ``default_delay``
    arcs: dict[tuple[str, str], Delay] = field(default_factory=dict)
    default_delay: Delay | None = None
    time_unit: float | None = None      # seconds per unit of ``arcs`` (Liberty time_unit)
    source: str = ""           # where the definition came from ("config", a .lib path, ...)
    line: int = 0

    def pin_direction(self, pin: str) -> str | None:
        if pin in self.inputs:
            return "input"
        if pin in self.outputs:
            return "output"
        if pin in self.inouts:
            return "inout"
        return None


# Verilog gate primitives (IEEE 1364-2005 section 7): n-input gates take (out, in...);
# buf/not take (out..., in); bufif/notif take (out, data, enable).
N_INPUT_GATES = ("and", "nand", "or", "nor", "xor", "xnor")
N_OUTPUT_GATES = ("buf", "not")
TRISTATE_GATES = ("bufif0", "bufif1", "notif0", "notif1")
PULL_GATES = ("pullup", "pulldown")
SWITCH_PRIMITIVES = ("nmos", "pmos", "rnmos", "rpmos", "cmos", "rcmos", "tran", "rtran",
                     "tranif0", "tranif1", "rtranif0", "rtranif1")
PRIMITIVES = frozenset(N_INPUT_GATES + N_OUTPUT_GATES + TRISTATE_GATES + PULL_GATES)


class Library:
    """Cell definitions by name. Primitives are built in and not stored here."""

    def __init__(self, cells: Mapping[str, CellDef] | None = None):
        self.cells: dict[str, CellDef] = dict(cells or {})

    def __contains__(self, name: str) -> bool:
        return name in self.cells

    def get(self, name: str) -> CellDef | None:
        return self.cells.get(name)

    def add(self, cell: CellDef) -> None:
        self.cells[cell.name] = cell

    def merge(self, other: "Library") -> "Library":
        merged = Library(self.cells)
        merged.cells.update(other.cells)
        # what the readers could not use (e.g. Liberty cells skipped with a reason) stays known
        merged.skipped = {**getattr(self, "skipped", {}), **getattr(other, "skipped", {})}
        return merged


def cell_from_config(name: str, spec: Mapping[str, Any], source: str = "config") -> CellDef:
    """Build a cell from a configuration table, e.g. (TOML)::

        [tool.hazlint.cells.AOI21]
        inputs = ["A1", "A2", "B"]
        outputs = { ZN = "!((A1 & A2) | B)" }
        delay = 1.5                       # or { rise = [1, 2], fall = [1, 1.5] }

        [tool.hazlint.cells.ff]
        inputs = ["CK", "D"]
        outputs = { Q = "IQ" }
        ff = { clocked_on = "CK", next_state = "D" }      # optional clear / preset
        # latch = { enable = "G", data_in = "D" }

    Output values that are ``IQ``/``IQN`` name the state variable (Liberty's convention).
    """
    allowed = {"inputs", "outputs", "ff", "latch", "delay", "three_state", "inouts"}
    unknown = set(spec) - allowed
    if unknown:
        raise ConfigError(f"cell '{name}': unknown key '{sorted(unknown)[0]}' "
                          f"(allowed: {', '.join(sorted(allowed))})", path=source)
    inputs = list(spec.get("inputs", []))
    outs = spec.get("outputs", {})
    if isinstance(outs, list):
        raise ConfigError(f"cell '{name}': outputs must map each output pin to its function",
                          path=source)
    cell = CellDef(name=name, inputs=inputs, outputs=list(outs), inouts=list(spec.get("inouts", [])),
                   source=source)
    seq_kind = "ff" if "ff" in spec else "latch" if "latch" in spec else None
    try:
        if seq_kind:
            g = spec[seq_kind]
            p = lambda k: parse_function(g[k]) if k in g else None  # noqa: E731
            cell.sequential = SequentialSpec(
                kind=seq_kind, clocked_on=p("clocked_on"), next_state=p("next_state"),
                enable=p("enable"), data_in=p("data_in"), clear=p("clear"), preset=p("preset"),
                clear_preset_var1=g.get("clear_preset_var1"),
                clear_preset_var2=g.get("clear_preset_var2"))
        for out, fn in outs.items():
            f = parse_function(str(fn))
            if seq_kind and f in (("var", "IQ"), ("not", ("var", "IQN")), ("var", "IQN"),
                                  ("not", ("var", "IQ"))):
                cell.sequential.state_outputs[out] = (
                    "Q" if f in (("var", "IQ"), ("not", ("var", "IQN"))) else "QN")
            else:
                cell.functions[out] = f
        for out, en in dict(spec.get("three_state", {})).items():
            cell.three_state[out] = parse_function(str(en))
    except FunctionSyntaxError as exc:
        raise ConfigError(f"cell '{name}': {exc}", path=source) from None
    d = spec.get("delay")
    if d is not None:
        cell.default_delay = delay_from_config(d, f"cell '{name}'", source)
    for out, f in cell.functions.items():
        for v in expr_vars(f):
            if v not in inputs and v not in cell.inouts and v not in ("IQ", "IQN"):
                raise ConfigError(f"cell '{name}': function of '{out}' uses unknown pin '{v}'",
                                  path=source)
    return cell


def delay_from_config(d: Any, what: str, source: str) -> Delay:
    if isinstance(d, (int, float)):
        return Delay.fixed(float(d))
    if isinstance(d, Mapping):
        def pair(x):
            if isinstance(x, (int, float)):
                return float(x), float(x)
            if isinstance(x, (list, tuple)) and len(x) == 2:
                return float(x[0]), float(x[1])
            raise ConfigError(f"{what}: delay must be a number or [min, max]", path=source)
        r = pair(d.get("rise", d.get("fall", 1.0)))
        f = pair(d.get("fall", d.get("rise", 1.0)))
        return Delay(r[0], r[1], f[0], f[1])
    raise ConfigError(f"{what}: delay must be a number or a table with rise/fall", path=source)
