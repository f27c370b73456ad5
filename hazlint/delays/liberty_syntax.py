"""Liberty (.lib) syntax: tokens, the group/attribute tree and look-up tables, no semantics
(see :mod:`hazlint.delays.liberty`, which reads cells from the tree).
"""
from __future__ import annotations

import bisect
import re
from dataclasses import dataclass, field
from typing import Any, Iterator, Sequence

from ..errors import ParseError

# ---------------------------------------------------------------------------------------------
# 1. Tokens

_TOKENS = re.compile(r"""
    (?P<ws>[ \t\r\f]+|\\[ \t]*\r?\n)           # blanks; backslash-newline continues a line
  | (?P<nl>\n)
  | (?P<comment>/\*.*?\*/|//[^\n]*)
  | (?P<badcomment>/\*)
  | (?P<string>"(?:[^"\\]|\\.)*")
  | (?P<badstring>")
  | (?P<punct>[(){};:,])
  | (?P<word>[^\s(){};:,"]+)
""", re.VERBOSE | re.DOTALL)


@dataclass
class Token:
    kind: str          # "string" | "punct" | "word" | "nl" | "end"
    text: str
    line: int


def tokenize(text: str, path: str = "<liberty>") -> list[Token]:
    """Split Liberty text into tokens. Newlines are kept (a simple attribute may omit ``;``)."""
    out: list[Token] = []
    line = 1
    pos = 0
    n = len(text)
    match = _TOKENS.match
    while pos < n:
        m = match(text, pos)
        kind = m.lastgroup if m else None
        if kind in (None, "badcomment", "badstring"):
            frag = text[pos:pos + 20].split("\n")[0]
            what = {"badcomment": "unterminated comment", "badstring": "unterminated string"}.get(
                kind, f"unexpected character {frag!r}")
            raise ParseError(f"Liberty: {what}", path=path, line=line, construct=frag)
        tok = m.group(kind)
        if kind == "nl":
            out.append(Token("nl", "\n", line))
        elif kind in ("string", "punct", "word"):
            out.append(Token(kind, tok, line))
        line += tok.count("\n")
        pos = m.end()
    out.append(Token("end", "", line))
    return out


# ---------------------------------------------------------------------------------------------
# 2. Group / attribute tree

@dataclass
class Attribute:
    name: str
    value: Any          # simple attribute: str; complex attribute: list[str]
    line: int
    complex: bool = False


@dataclass
class Group:
    kind: str                       # "library", "cell", "pin", "timing", "cell_rise", ...
    args: list[str]
    line: int
    attrs: list[Attribute] = field(default_factory=list)
    groups: list["Group"] = field(default_factory=list)

    @property
    def name(self) -> str:
        return self.args[0] if self.args else ""

    def attr(self, name: str, default: Any = None) -> Any:
        """The last simple or complex attribute of that name (Liberty: a later one wins)."""
        for a in reversed(self.attrs):
            if a.name == name:
                return a.value
        return default

    def attr_line(self, name: str) -> int:
        for a in reversed(self.attrs):
            if a.name == name:
                return a.line
        return self.line

    def subgroups(self, kind: str) -> Iterator["Group"]:
        return (g for g in self.groups if g.kind == kind)


def _unquote(s: str) -> str:
    if len(s) >= 2 and s[0] == '"' and s[-1] == '"':
        return s[1:-1].replace('\\"', '"')
    return s


def parse_liberty(text: str, path: str = "<liberty>") -> Group:
    """Parse Liberty text into its top ``library`` group (syntax only)."""
    toks = tokenize(text, path)
    i = 0

    def err(msg: str, tok: Token):
        raise ParseError(f"Liberty: {msg}", path=path, line=tok.line,
                         construct=tok.text or "end of file")

    def skip_nl():
        nonlocal i
        while toks[i].kind == "nl":
            i += 1

    def parse_args() -> list[str]:
        """After '(' up to the matching ')': comma- or blank-separated values."""
        nonlocal i
        args: list[str] = []
        while True:
            skip_nl()
            t = toks[i]
            if t.kind == "punct" and t.text == ")":
                i += 1
                return args
            if t.kind == "punct" and t.text == ",":
                i += 1
                continue
            if t.kind in ("word", "string"):
                args.append(_unquote(t.text))
                i += 1
                continue
            if t.kind == "punct" and t.text == ":":   # e.g. a bus range written a:b
                if args:
                    args[-1] += ":"
                i += 1
                if toks[i].kind == "word":
                    args[-1] += toks[i].text
                    i += 1
                continue
            err("expected ')' to close the argument list" if t.kind == "end"
                else f"unexpected '{t.text}' in an argument list", t)

    def parse_body(group: Group):
        """Statements until '}' (or end of file for the top level, reported by the caller)."""
        nonlocal i
        while True:
            skip_nl()
            t = toks[i]
            if t.kind == "punct" and t.text == "}":
                i += 1
                return
            if t.kind == "punct" and t.text == ";":      # stray empty statement
                i += 1
                continue
            if t.kind == "end":
                err(f"group '{group.kind}' opened at line {group.line} is not closed", t)
            if t.kind not in ("word", "string"):
                err(f"expected an attribute or group name, found '{t.text}'", t)
            name = _unquote(t.text)
            line = t.line
            i += 1
            nxt = toks[i]
            if nxt.kind == "punct" and nxt.text == ":":
                i += 1
                parts: list[str] = []
                while True:
                    v = toks[i]
                    if v.kind == "word" or v.kind == "string":
                        parts.append(_unquote(v.text))
                        i += 1
                    elif v.kind == "punct" and v.text == ":" and parts:   # e.g. a:b inside a value
                        parts[-1] += ":"
                        i += 1
                    else:
                        break
                if not parts:
                    err(f"attribute '{name}' has no value", toks[i])
                v = toks[i]
                if v.kind == "punct" and v.text == ";":
                    i += 1
                elif not (v.kind == "nl" or (v.kind == "punct" and v.text == "}")):
                    err(f"expected ';' after the value of attribute '{name}'", v)
                group.attrs.append(Attribute(name, " ".join(parts), line))
            elif nxt.kind == "punct" and nxt.text == "(":
                i += 1
                args = parse_args()
                skip_nl_after = i
                while toks[skip_nl_after].kind == "nl":
                    skip_nl_after += 1
                after = toks[skip_nl_after]
                if after.kind == "punct" and after.text == "{":
                    i = skip_nl_after + 1
                    sub = Group(name, args, line)
                    parse_body(sub)
                    group.groups.append(sub)
                else:
                    if toks[i].kind == "punct" and toks[i].text == ";":
                        i += 1
                    elif not (toks[i].kind == "nl" or toks[i].kind == "end"
                              or (toks[i].kind == "punct" and toks[i].text == "}")):
                        err(f"expected ';' after attribute '{name}(...)'", toks[i])
                    group.attrs.append(Attribute(name, args, line, complex=True))
            else:
                err(f"expected ':' or '(' after '{name}'", nxt)

    skip_nl()
    t = toks[i]
    if t.kind != "word" or t.text not in ("library",):
        err("a Liberty file starts with 'library (name) {'", t)
    i += 1
    if not (toks[i].kind == "punct" and toks[i].text == "("):
        err("expected '(' after 'library'", toks[i])
    i += 1
    top = Group("library", parse_args(), t.line)
    skip_nl()
    if not (toks[i].kind == "punct" and toks[i].text == "{"):
        err("expected '{' to open the library group", toks[i])
    i += 1
    parse_body(top)
    skip_nl()
    while toks[i].kind == "punct" and toks[i].text == ";":
        i += 1
        skip_nl()
    if toks[i].kind != "end":
        err("text after the end of the library group", toks[i])
    return top


# ---------------------------------------------------------------------------------------------
# 3a. NLDM tables

@dataclass
class Table:
    """A look-up table: breakpoints per variable and values in row-major order.

    ``variables`` are Liberty variable names (``input_net_transition``,
    ``total_output_net_capacitance``, ...); ``indices[k]`` the breakpoints of variable *k*;
    ``values`` a flat list, the last variable varying fastest. A scalar table has no variables.
    """

    variables: list[str]
    indices: list[list[float]]
    values: list[float]
    line: int = 0

    def lookup(self, point: Sequence[float]) -> float:
        """Multilinear interpolation at ``point`` (one coordinate per variable), extrapolating
        linearly outside the breakpoints (common practice for NLDM tables)."""
        if not self.variables:
            return self.values[0]
        return _interp(self.indices, self.values, list(point))

    def at(self, slew: float | None, load: float | None) -> float:
        """Value at an input slew and output load; a variable not given (``None``) or not one of
        those two is taken at its first breakpoint (the smallest characterised point)."""
        pt = []
        for var, idx in zip(self.variables, self.indices):
            if var in _SLEW_VARS and slew is not None:
                pt.append(slew)
            elif var in _LOAD_VARS and load is not None:
                pt.append(load)
            else:
                pt.append(idx[0])
        return self.lookup(pt)


_SLEW_VARS = frozenset({"input_net_transition", "input_transition_time",
                        "related_pin_transition"})
_LOAD_VARS = frozenset({"total_output_net_capacitance", "output_net_pin_cap",
                        "output_net_wire_cap"})


def _segment(idx: Sequence[float], x: float) -> tuple[int, float]:
    """Lower breakpoint number and the fraction ``t`` of x along that segment (t < 0 or t > 1
    extrapolates)."""
    if len(idx) == 1:
        return 0, 0.0
    k = bisect.bisect_right(idx, x) - 1
    k = min(max(k, 0), len(idx) - 2)
    x0, x1 = idx[k], idx[k + 1]
    return k, (x - x0) / (x1 - x0)


def _interp(indices: list[list[float]], values: list[float], point: list[float]) -> float:
    """Multilinear interpolation, one dimension at a time (no recursion on corners: 2^d terms)."""
    dims = len(indices)
    strides = [1] * dims
    for k in range(dims - 2, -1, -1):
        strides[k] = strides[k + 1] * len(indices[k + 1])
    segs = [_segment(indices[k], point[k]) for k in range(dims)]
    total = 0.0
    for corner in range(1 << dims):
        w = 1.0
        off = 0
        for k in range(dims):
            lo, t = segs[k]
            hi = (corner >> k) & 1
            if len(indices[k]) == 1:
                if hi:
                    w = 0.0
                    break
                off += lo * strides[k]
                continue
            w *= t if hi else (1.0 - t)
            off += (lo + hi) * strides[k]
        if w:
            total += w * values[off]
    return total


def floats(text: str, what: str, path: str, line: int) -> list[float]:
    out = []
    for part in re.split(r"[,\s]+", text.strip()):
        if not part:
            continue
        try:
            out.append(float(part))
        except ValueError:
            raise ParseError(f"Liberty: {what}: '{part}' is not a number", path=path, line=line,
                             construct=part) from None
    return out


@dataclass
class Template:
    name: str
    variables: list[str]
    indices: list[list[float]]


def read_template(g: Group, path: str) -> Template:
    variables = []
    for k in (1, 2, 3):
        v = g.attr(f"variable_{k}")
        if v is not None:
            variables.append(str(v))
    indices = []
    for k in range(1, len(variables) + 1):
        a = g.attr(f"index_{k}")
        indices.append(floats(" ".join(a), f"index_{k} of template '{g.name}'", path,
                               g.attr_line(f"index_{k}")) if a else [])
    return Template(g.name, variables, indices)


def read_table(g: Group, templates: dict[str, Template], path: str) -> Table:
    tname = g.name
    if tname in ("scalar", "") and tname not in templates:
        tpl = Template("scalar", [], [])
    elif tname in templates:
        tpl = templates[tname]
    else:
        raise ParseError(f"Liberty: table '{g.kind}' uses undefined template '{tname}'",
                         path=path, line=g.line, construct=tname)
    indices = []
    for k in range(1, len(tpl.variables) + 1):
        a = g.attr(f"index_{k}")
        idx = (floats(" ".join(a), f"{g.kind} index_{k}", path, g.attr_line(f"index_{k}"))
               if a is not None else list(tpl.indices[k - 1]))
        if not idx:
            raise ParseError(f"Liberty: {g.kind}: no breakpoints for '{tpl.variables[k - 1]}' "
                             f"(template '{tname}' has no index_{k})", path=path, line=g.line,
                             construct=g.kind)
        if any(b <= a_ for a_, b in zip(idx, idx[1:])):
            raise ParseError(f"Liberty: {g.kind} index_{k} must increase strictly",
                             path=path, line=g.attr_line(f"index_{k}"), construct=f"index_{k}")
        indices.append(idx)
    vals = g.attr("values")
    if vals is None:
        raise ParseError(f"Liberty: table '{g.kind}' has no values", path=path, line=g.line,
                         construct=g.kind)
    if not isinstance(vals, list):
        vals = [vals]
    line = g.attr_line("values")
    rows = [floats(r, f"{g.kind} values", path, line) for r in vals]
    flat = [v for r in rows for v in r]
    want = 1
    for idx in indices:
        want *= len(idx)
    if len(flat) != want:
        raise ParseError(f"Liberty: {g.kind} has {len(flat)} values but its breakpoints need "
                         f"{want} ({' x '.join(str(len(x)) for x in indices) or 'scalar'})",
                         path=path, line=line, construct="values")
    if len(indices) >= 2 and len(rows) > 1:
        inner = want // len(indices[0])
        if any(len(r) != inner for r in rows):
            raise ParseError(f"Liberty: {g.kind} rows must have {inner} values each "
                             f"(one row per index_1 breakpoint)", path=path, line=line,
                             construct="values")
    return Table(list(tpl.variables), indices, flat, g.line)
