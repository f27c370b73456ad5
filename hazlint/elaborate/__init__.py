"""Elaboration pieces that live beside the flattener (:mod:`hazlint.flatten`).

:mod:`.common` small shared values and helpers; :mod:`.gates` gate structures (adders,
comparators, shifters, multiplexers, dividers); :mod:`.expressions` Verilog expressions with
their sizes and signedness (IEEE 1364-2005 5.4, 5.5); :mod:`.behaviour` always blocks,
functions and tasks; :mod:`.memory` arrays and memories; :mod:`.coverage` what was left out.
Each piece is a mixin of :class:`hazlint.flatten.Elaborator` and reads only its attributes.
"""
