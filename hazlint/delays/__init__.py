"""Delays: the :class:`~.model.DelayModel` every analysis asks (:mod:`.model`), and the readers
of the delay sources that annotate the gate graph: Liberty cell libraries (:mod:`.liberty`,
syntax in :mod:`.liberty_syntax`) and SDF back-annotation (:mod:`.sdf`, syntax in
:mod:`.sdf_syntax`). Delays written in the Verilog source are elaborated with the design
(:mod:`hazlint.elaborate.source_delays`).
"""
