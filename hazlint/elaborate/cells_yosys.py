"""yosys' internal gate-level cells, built in: a synthesised netlist reads with no configuration.

``synth`` followed by ``write_verilog -noexpr`` instantiates yosys' own fine-grained cells
(``$_AND_``, ``$_MUX_``, ``$_DFF_PN0_``, ...). Their behaviour is defined by the simulation
models Debian's yosys installs as ``/usr/share/yosys/simcells.v``; this module states the same
behaviour as :class:`~hazlint.netlist.library.CellDef` objects (Liberty function syntax, Liberty-style
``ff``/``latch`` groups), generated from one table per cell family and every polarity letter, so
that ``$_DFFE_PN1P_`` and its 15 siblings come from one line. ``tests/test_cells_yosys.py``
simulates each cell's simcells.v model in Icarus Verilog against hazlint's model.

Naming (yosys' convention): after the family name, one letter per control pin in the cell's own
order: ``P``/``N`` for an active-high/low pin (for the clock: rising/falling edge) and ``0``/``1``
for the value a reset pin loads. Synchronous resets and clock enables (``$_SDFF*``, ``$_DFFE*``)
are part of the data-pin function, not control pins: only the clock and the asynchronous pins are
glitch-sensitive.

The elaborator consults these cells after the user's modules, primitives, UDPs, configured cells
and Liberty cells, so a user definition of the same name always wins. Word-level cells
(``$and``, ``$add``, ``$dff`` ...) are bit-blasted by :mod:`hazlint.elaborate.cells_yosys_words`.
"""
from __future__ import annotations

import itertools

from ..netlist.library import CellDef, SequentialSpec, parse_function

# combinational cells: name -> (pins in the model's port order without Y, function of Y in
# Liberty syntax; "mux:DATA:SELECT" is the select tree DATA[SELECT], select LSB first)
_COMBINATIONAL: dict[str, tuple[str, str]] = {
    "$_BUF_": ("A", "A"),
    "$_NOT_": ("A", "!A"),
    "$_AND_": ("A B", "A & B"),
    "$_NAND_": ("A B", "!(A & B)"),
    "$_OR_": ("A B", "A | B"),
    "$_NOR_": ("A B", "!(A | B)"),
    "$_XOR_": ("A B", "A ^ B"),
    "$_XNOR_": ("A B", "!(A ^ B)"),
    "$_ANDNOT_": ("A B", "A & !B"),
    "$_ORNOT_": ("A B", "A | !B"),
    "$_MUX_": ("A B S", "(A & !S) | (B & S)"),
    "$_NMUX_": ("A B S", "!((A & !S) | (B & S))"),
    "$_MUX4_": ("A B C D S T", "mux:A B C D:S T"),
    "$_MUX8_": ("A B C D E F G H S T U", "mux:A B C D E F G H:S T U"),
    "$_MUX16_": ("A B C D E F G H I J K L M N O P S T U V",
                 "mux:A B C D E F G H I J K L M N O P:S T U V"),
    "$_AOI3_": ("A B C", "!((A & B) | C)"),
    "$_OAI3_": ("A B C", "!((A | B) & C)"),
    "$_AOI4_": ("A B C D", "!((A & B) | (C & D))"),
    "$_OAI4_": ("A B C D", "!((A | B) & (C | D))"),
}


def _mux_tree(data: list[str], sel: list[str]) -> str:
    """``data[sel]`` (sel LSB first) as a nested select in Liberty syntax."""
    level = list(data)
    for s in sel:
        level = [f"(({s} & {level[i + 1]}) | (!{s} & {level[i]}))"
                 for i in range(0, len(level), 2)]
    return level[0]


def _function(text: str):
    if text.startswith("mux:"):
        _, data, sel = text.split(":")
        text = _mux_tree(data.split(), sel.split())
    return parse_function(text)


# ------------------------------------------------------------------------------------------------
# flip-flops and latches: family -> (control letters, port order, builder)
#   letters: "C" clock edge, "E" enable level, "R"/"S"/"L" asynchronous level, "V" reset value
#   (for the families with a synchronous reset the R letter is that reset's level)

def _lvl(pin: str, pol: str) -> str:
    """The condition "pin is active" for polarity letter P/N."""
    return pin if pol == "P" else f"!{pin}"


def _not(cond: str) -> str:
    """The negation of a pin condition made by :func:`_lvl`."""
    return cond[1:] if cond.startswith("!") else f"!{cond}"


def _enabled(en: str, data: str) -> str:
    return f"({en} & ({data})) | ({_not(en)} & IQ)"


def _sync_reset(r: str, value: str, data: str) -> str:
    return f"{r} | ({data})" if value == "1" else f"{_not(r)} & ({data})"


def _ff(clock, data="D", clear=None, preset=None, var1=None) -> SequentialSpec:
    return SequentialSpec(kind="ff", clocked_on=clock, next_state=data, clear=clear,
                          preset=preset, clear_preset_var1=var1)


def _async(r: str, value: str):
    """(clear, preset) for a reset pin that loads ``value``."""
    return (r, None) if value == "0" else (None, r)


def _build_dff(p):
    return _ff(_lvl("C", p["C"]))


def _build_dffe(p):
    return _ff(_lvl("C", p["C"]), _enabled(_lvl("E", p["E"]), "D"))


def _build_adff(p):
    clear, preset = _async(_lvl("R", p["R"]), p["V"])
    return _ff(_lvl("C", p["C"]), clear=clear, preset=preset)


def _build_adffe(p):
    clear, preset = _async(_lvl("R", p["R"]), p["V"])
    return _ff(_lvl("C", p["C"]), _enabled(_lvl("E", p["E"]), "D"), clear, preset)


def _build_aldff(p, enable=False):
    load = _lvl("L", p["L"])
    data = _enabled(_lvl("E", p["E"]), "D") if enable else "D"
    return _ff(_lvl("C", p["C"]), data, clear=f"{load} & !AD", preset=f"{load} & AD")


def _build_dffsr(p, enable=False):
    data = _enabled(_lvl("E", p["E"]), "D") if enable else "D"
    # simcells.v tests R first: with both active the reset wins (Liberty clear_preset_var1 L)
    return _ff(_lvl("C", p["C"]), data, clear=_lvl("R", p["R"]), preset=_lvl("S", p["S"]),
               var1="L")


def _build_sdff(p):
    return _ff(_lvl("C", p["C"]), _sync_reset(_lvl("R", p["R"]), p["V"], "D"))


def _build_sdffe(p):
    # reset over enable: if (R) Q <= V; else if (E) Q <= D
    return _ff(_lvl("C", p["C"]),
               _sync_reset(_lvl("R", p["R"]), p["V"], _enabled(_lvl("E", p["E"]), "D")))


def _build_sdffce(p):
    # enable over reset: if (E) begin if (R) Q <= V; else Q <= D; end
    return _ff(_lvl("C", p["C"]),
               _enabled(_lvl("E", p["E"]), _sync_reset(_lvl("R", p["R"]), p["V"], "D")))


def _latch(enable, clear=None, preset=None, var1=None) -> SequentialSpec:
    return SequentialSpec(kind="latch", enable=enable, data_in="D" if enable else None,
                          clear=clear, preset=preset, clear_preset_var1=var1)


def _build_dlatch(p):
    return _latch(_lvl("E", p["E"]))


def _build_adlatch(p):
    clear, preset = _async(_lvl("R", p["R"]), p["V"])
    return _latch(_lvl("E", p["E"]), clear, preset)


def _build_dlatchsr(p):
    return _latch(_lvl("E", p["E"]), _lvl("R", p["R"]), _lvl("S", p["S"]), "L")


def _build_sr(p):
    return _latch(None, _lvl("R", p["R"]), _lvl("S", p["S"]), "L")


PN, V01 = "NP", "01"
# family prefix, letters (name: choices), port order as in simcells.v, builder
_SEQUENTIAL = [
    ("$_DFF_", (("C", PN),), "D C", _build_dff),
    ("$_DFFE_", (("C", PN), ("E", PN)), "D C E", _build_dffe),
    ("$_DFF_", (("C", PN), ("R", PN), ("V", V01)), "D C R", _build_adff),
    ("$_DFFE_", (("C", PN), ("R", PN), ("V", V01), ("E", PN)), "D C R E", _build_adffe),
    ("$_ALDFF_", (("C", PN), ("L", PN)), "D C L AD", _build_aldff),
    ("$_ALDFFE_", (("C", PN), ("L", PN), ("E", PN)), "D C L AD E",
     lambda p: _build_aldff(p, enable=True)),
    ("$_DFFSR_", (("C", PN), ("S", PN), ("R", PN)), "C S R D", _build_dffsr),
    ("$_DFFSRE_", (("C", PN), ("S", PN), ("R", PN), ("E", PN)), "C S R E D",
     lambda p: _build_dffsr(p, enable=True)),
    ("$_SDFF_", (("C", PN), ("R", PN), ("V", V01)), "D C R", _build_sdff),
    ("$_SDFFE_", (("C", PN), ("R", PN), ("V", V01), ("E", PN)), "D C R E", _build_sdffe),
    ("$_SDFFCE_", (("C", PN), ("R", PN), ("V", V01), ("E", PN)), "D C R E", _build_sdffce),
    ("$_DLATCH_", (("E", PN),), "E D", _build_dlatch),
    ("$_DLATCH_", (("E", PN), ("R", PN), ("V", V01)), "E R D", _build_adlatch),
    ("$_DLATCHSR_", (("E", PN), ("S", PN), ("R", PN)), "E S R D", _build_dlatchsr),
    ("$_SR_", (("S", PN), ("R", PN)), "S R", _build_sr),
]

# cells yosys defines that hazlint cannot model, with the reason given to the user
UNMODELLED = {
    "$_FF_": "a flip-flop on the formal global clock has no clock pin to analyse",
}


def _spec_to_cell(name: str, pins: list[str], seq: SequentialSpec) -> CellDef:
    parse = lambda t: parse_function(t) if isinstance(t, str) else t  # noqa: E731
    for attr in ("clocked_on", "next_state", "enable", "data_in", "clear", "preset"):
        setattr(seq, attr, parse(getattr(seq, attr)))
    seq.state_outputs = {"Q": "Q"}
    cell = CellDef(name=name, inputs=list(pins), outputs=["Q"], sequential=seq,
                   source="built-in (yosys simcells.v)")
    cell.pin_order = list(pins) + ["Q"]
    return cell


def _build_library() -> dict[str, CellDef]:
    cells: dict[str, CellDef] = {}
    for name, (pins, fn) in _COMBINATIONAL.items():
        p = pins.split()
        c = CellDef(name=name, inputs=p, outputs=["Y"], functions={"Y": _function(fn)},
                    source="built-in (yosys simcells.v)")
        c.pin_order = p + ["Y"]
        cells[name] = c
    tbuf = CellDef(name="$_TBUF_", inputs=["A", "E"], outputs=["Y"],
                   functions={"Y": parse_function("A")},
                   three_state={"Y": parse_function("!E")},     # Z while E is low
                   source="built-in (yosys simcells.v)")
    tbuf.pin_order = ["A", "E", "Y"]
    cells["$_TBUF_"] = tbuf
    for prefix, letters, pins, build in _SEQUENTIAL:
        names = [k for k, _ in letters]
        for choice in itertools.product(*(v for _, v in letters)):
            p = dict(zip(names, choice))
            name = f"{prefix}{''.join(choice)}_"
            cells[name] = _spec_to_cell(name, pins.split(), build(p))
    return cells


_CELLS: dict[str, CellDef] | None = None


def gate_cells() -> dict[str, CellDef]:
    """Every built-in gate-level cell by name (built once)."""
    global _CELLS
    if _CELLS is None:
        _CELLS = _build_library()
    return _CELLS


def lookup(name: str) -> CellDef | None:
    """The built-in definition of yosys cell ``name``, or None."""
    if not name.startswith("$_"):
        return None
    return gate_cells().get(name)
