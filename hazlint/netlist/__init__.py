"""The netlist: what elaboration produces and every analysis reads.

:mod:`.design` (the :class:`~.design.Design`: gate graph, ports, registers, evaluation; no
loading, see :mod:`hazlint.loader`), :mod:`.graph` (the graph schema and its kind and role
names), :mod:`.walks` (the one set of cone, reach, stem and loop walks), :mod:`.logic`
(operators and bit-parallel evaluation), :mod:`.library` (cells, pins, functions, delays).
"""
