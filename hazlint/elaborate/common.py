"""Values and small helpers shared by the elaboration modules."""
from __future__ import annotations

from ..errors import ElaborationError
from ..findings.words import number
from .. import ir

C0 = "1'b0"
C1 = "1'b1"
HOLD = ("hold",)        # the value a variable keeps when a path through a block assigns nothing


class BlackBoxModule(Exception):
    """A module holds a construct that cannot be modelled: it is left out (reported)."""

    def __init__(self, reason: str, loc: ir.Loc | None):
        super().__init__(reason)
        self.reason = reason
        self.loc = loc


def where(loc) -> tuple:
    if loc is None:
        return ()
    return (loc.path, loc.line, loc.col)


def at_line(loc, line):
    """``loc`` moved to ``line`` of the same file (statements carry only their line)."""
    if loc is None or not line:
        return loc
    return ir.Loc(loc.path, line, 1)


def extend(bits: list[str], W: int, signed: bool = False) -> list[str]:
    """``bits`` (LSB first) truncated or extended to ``W``: sign extension when ``signed``."""
    n = len(bits)
    if n >= W:
        return bits[:W]
    fill = bits[-1] if signed and n else C0
    return bits + [fill] * (W - n)


def shift(a: list[str], n: int, left: bool, fill: str = C0) -> list[str]:
    W = len(a)
    if n >= W:
        return [fill] * W
    if left:
        return [C0] * n + a[:W - n]
    return a[n:] + [fill] * n


def fold(op: str, ins: list[str]) -> str | None:
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
        return None  # the caller builds with all inputs; identities are harmless
    if op in ("xor", "xnor") and all(x in (C0, C1) for x in ins):
        v = sum(1 for x in ins if x == C1) & 1
        if op == "xnor":
            v ^= 1
        return C1 if v else C0
    return None


_PREC = {"||": 1, "&&": 2, "|": 3, "^": 4, "~^": 4, "^~": 4, "&": 5, "==": 6, "!=": 6,
         "===": 6, "!==": 6, "<": 7, "<=": 7, ">": 7, ">=": 7, "<<": 8, ">>": 8, "<<<": 8,
         ">>>": 8, "+": 9, "-": 9, "*": 10, "/": 10, "%": 10, "**": 11}


def expr_text(e, parent: int = 0) -> str:
    """An IR expression as Verilog source text (for messages)."""
    try:
        tag = e[0]
        if tag == "id":
            return e[1]
        if tag == "num":
            _, w, v, xz, _s = e
            if abs(v) >= 10 ** 30:
                return number(v)
            return f"{w}'d{v}" if w and not xz else (str(v) if not w else f"{w}'b{v:b}")
        if tag == "real":
            return str(e[1])
        if tag == "str":
            return f'"{e[1]}"'
        if tag == "bit":
            return f"{expr_text(e[1], 12)}[{expr_text(e[2])}]"
        if tag == "part":
            return f"{expr_text(e[1], 12)}[{expr_text(e[2])}:{expr_text(e[3])}]"
        if tag == "ipart":
            return f"{expr_text(e[1], 12)}[{expr_text(e[2])}{e[4]}:{expr_text(e[3])}]"
        if tag == "concat":
            return "{" + ", ".join(expr_text(x) for x in e[1]) + "}"
        if tag == "repl":
            return "{" + expr_text(e[1]) + "{" + ", ".join(expr_text(x) for x in e[2]) + "}}"
        if tag == "unop":
            return f"{e[1]}{expr_text(e[2], 12)}"
        if tag == "binop":
            p = _PREC.get(e[1], 5)
            s = f"{expr_text(e[2], p)} {e[1]} {expr_text(e[3], p + 1)}"
            return f"({s})" if p < parent else s
        if tag == "cond":
            s = f"{expr_text(e[1], 1)} ? {expr_text(e[2])} : {expr_text(e[3])}"
            return f"({s})" if parent else s
        if tag == "call":
            return f"{e[1]}(" + ", ".join(expr_text(x) for x in e[2]) + ")"
    except (IndexError, TypeError):
        pass
    return str(e)


def walk_items(items):
    """Module items, with the items of every generate construct inside, in order."""
    for it in items:
        yield it
        if isinstance(it, (ir.GenFor, ir.GenBlock)):
            yield from walk_items(it.items)
        elif isinstance(it, ir.GenIf):
            yield from walk_items(it.then_items)
            yield from walk_items(it.else_items)
        elif isinstance(it, ir.GenCase):
            for _l, _n, sub in it.cases:
                yield from walk_items(sub)


def const_bits(value: int, width: int) -> list[str]:
    return [C1 if (value >> i) & 1 else C0 for i in range(width)]


def named_connections(inst, pins):
    """``(pin name, expression)`` per connection of the cell instance ``inst``, positional
    connections named by ``pins`` (the cell's pin order); more positional connections than
    pins is an error at the instance."""
    out = []
    for i, (pname, e) in enumerate(inst.connections):
        if pname is None:
            if i >= len(pins):
                raise ElaborationError(f"instance '{inst.name}' of '{inst.cell}' has more "
                                       f"connections than the cell has pins",
                                       *where(inst.loc), construct=inst.name)
            pname = pins[i]
        out.append((pname, e))
    return out
