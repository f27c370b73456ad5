"""Words a designer reads: gate types as nouns, counts with their plural.

    >>> gate_words("or", "g_clear")
    'OR gate g_clear'
    >>> gate_words("NAND2X1", "u7")
    'NAND2X1 cell u7'
    >>> count(2, "gate"), count(1, "source")
    ('2 gates', '1 source')
"""
from __future__ import annotations

# Verilog gate primitives and the operators the elaborator builds (IEEE 1364-2005 7.2-7.4)
_PRIMITIVES = {
    "and": "AND gate", "or": "OR gate", "nand": "NAND gate", "nor": "NOR gate",
    "xor": "XOR gate", "xnor": "XNOR gate", "not": "inverter", "buf": "buffer",
    "mux": "multiplexer", "bufif0": "three-state buffer", "bufif1": "three-state buffer",
    "notif0": "three-state inverter", "notif1": "three-state inverter",
}


def gate_words(cell: str, name: str) -> str:
    """"OR gate g_clear" for a primitive or operator, "<cell> cell <name>" for a library, yosys
    or user cell."""
    kind = _PRIMITIVES.get((cell or "").lower()) if cell and cell.islower() else None
    if kind:
        return f"{kind} {name}".strip()
    return f"{cell} cell {name}".strip() if cell else name


def count(n: int, word: str, plural: str | None = None) -> str:
    """"1 gate", "2 gates"."""
    return f"{n} {word if n == 1 else (plural or word + 's')}"
