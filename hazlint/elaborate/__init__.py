"""Elaboration: IR + cell library -> :class:`~hazlint.netlist.design.Design` (the gate graph).

:func:`elaborate` is the stage's one entry; :func:`resolve_library` turns what a caller may
give as a library into one :class:`~hazlint.netlist.library.Library`. Both import the elaborator only
when called, so ``import hazlint.elaborate`` stays cheap.

Modules: :mod:`.elaborator` (the state and the run), :mod:`.hierarchy` (tops, modules,
parameters, declarations, generate), :mod:`.nets` (union-find, drivers, sinks, assigns),
:mod:`.source_delays` (``#`` delays, specify paths), :mod:`.instances` (primitives,
submodules, library cells, registers), :mod:`.udp`, :mod:`.expressions` and
:mod:`.selects` (Verilog expressions, IEEE 1364-2005 5.4, 5.5), :mod:`.gates` (adders,
comparators, shifters, multiplexers, dividers), :mod:`.behaviour` and :mod:`.subprograms`
(always blocks, functions, tasks), :mod:`.memory` (arrays and memories), :mod:`.coverage`
(what was left out), :mod:`.build_graph` (records -> graph), :mod:`.initial_values`
(power-up values), :mod:`.consteval` (constant expressions), :mod:`.cells_yosys` and
:mod:`.cells_yosys_words` (yosys' gate-level and word-level cells); :mod:`.common` and
:mod:`.scope` hold small shared values and the name scopes.
"""
from __future__ import annotations

from typing import Iterable, Mapping, Sequence


def resolve_library(library):
    """``None``, a Library, a mapping of cell tables, a .lib path, or a list of these, as one
    :class:`~hazlint.netlist.library.Library`."""
    from ..netlist.library import CellDef, Library, cell_from_config
    if library is None:
        return Library()
    if isinstance(library, Library):
        return library
    if isinstance(library, (str, bytes)) or hasattr(library, "__fspath__"):
        from ..delays.liberty import read_liberty
        return read_liberty(str(library))
    if isinstance(library, Mapping):
        out = Library()
        for name, spec in library.items():
            out.add(spec if isinstance(spec, CellDef) else cell_from_config(name, spec))
        return out
    if isinstance(library, Iterable):
        out = Library()
        for item in library:
            out = out.merge(resolve_library(item))
        return out
    raise TypeError(f"cannot use {type(library).__name__} as a cell library")


def elaborate(sources: Sequence, top=None, library=None, default_delay=None,
              memory_max_bits: int | None = None, **_ignored):
    """Elaborate parsed sources (``[ir.SourceFile]``) into a :class:`~hazlint.netlist.design.Design`.
    ``default_delay`` (a number or a :class:`~hazlint.netlist.library.Delay`; unit delay when None) is
    the delay of a gate its source and library give none. Arrays of variables with more than
    ``memory_max_bits`` bits are kept as memory nodes (:mod:`hazlint.elaborate.memory`)."""
    from ..netlist.library import UNIT_DELAY, Delay
    from .elaborator import Elaborator
    from .memory import DEFAULT_MAX_BITS
    lib_ = resolve_library(library)
    if default_delay is None:
        dd = UNIT_DELAY
    elif isinstance(default_delay, Delay):
        dd = default_delay
    else:
        dd = Delay.fixed(float(default_delay))
    el = Elaborator(sources, lib_, default_delay=dd,
                    memory_max_bits=DEFAULT_MAX_BITS if memory_max_bits is None
                    else int(memory_max_bits))
    return el.elaborate(top)
