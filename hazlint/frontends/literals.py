"""Verilog literals, attribute values and short IR text: what every front end writes the same way.

Both readers (pyverilog's and pyslang's) turn literal and attribute text into IR through these
functions, so the two front ends cannot disagree on a number's width, value, x/z mask or sign.
"""
from __future__ import annotations

import re

# built-in gate primitives (IEEE 1364 gate types): a positional #(...) on these is a delay
GATE_PRIMITIVES = frozenset((
    "and", "nand", "or", "nor", "xor", "xnor", "buf", "not", "bufif0", "bufif1", "notif0",
    "notif1", "nmos", "pmos", "rnmos", "rpmos", "cmos", "rcmos", "tran", "rtran", "tranif0",
    "tranif1", "rtranif0", "rtranif1", "pullup", "pulldown"))

_NUMBER = re.compile(r"(\d*)\s*'([sS]?)([bBoOdDhH])\s*([0-9a-fA-FxXzZ?_]+)$")
_BITS = {"b": 1, "o": 3, "h": 4}


def parse_number(text: str):
    """Verilog integer literal -> ``("num", width, value, xz, signed)`` (see ir.py)."""
    t = text.replace("_", "")
    if t.isdigit():
        return ("num", None, int(t), 0, True)
    m = _NUMBER.match(t)
    if not m:
        raise ValueError(text)
    size, signed, base, digits = m.group(1), bool(m.group(2)), m.group(3).lower(), m.group(4)
    width = int(size) if size else None
    value = xz = 0
    if base == "d":
        low = digits.lower()
        if low in ("x", "z", "?"):
            w = width or 32
            xz = (1 << w) - 1
            value = 0 if low == "x" else xz
        else:
            value = int(digits)
    else:
        bits = _BITS[base]
        full = (1 << bits) - 1
        for ch in digits.lower():
            value <<= bits
            xz <<= bits
            if ch == "x":
                xz |= full
            elif ch in "z?":
                xz |= full
                value |= full
            else:
                value |= int(ch, 16)
        nbits = bits * len(digits)
        first = digits[0].lower()
        if width is not None and width > nbits and first in "xz?":
            ext = ((1 << width) - 1) ^ ((1 << nbits) - 1)   # extend with x / z
            xz |= ext
            if first != "x":
                value |= ext
    if width is not None:
        mask = (1 << width) - 1
        value &= mask
        xz &= mask
    return ("num", width, value, xz, signed)


def attr_value(text):
    """Attribute value text -> Python value: None (bare flag), int, or str."""
    if text is None:
        return None
    t = text.strip()
    if len(t) >= 2 and t[0] == '"' and t[-1] == '"':
        return t[1:-1]
    try:
        n = parse_number(t)
        if n[3] == 0:
            return n[2]
    except ValueError:
        pass
    return t


def udp_level(e):
    """A UDP initial value expression -> "0", "1", "x" or None."""
    if e is None or e[0] != "num":
        return None
    if e[3]:
        return "x" if e[2] == 0 else None
    return {0: "0", 1: "1"}.get(e[2])


def expr_text(e) -> str:
    """Short readable text of an IR expression (for hierarchical names)."""
    k = e[0]
    if k == "id":
        return e[1]
    if k == "num":
        return str(e[2])
    if k == "binop":
        return f"{expr_text(e[2])}{e[1]}{expr_text(e[3])}"
    return k
