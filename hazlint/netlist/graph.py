"""The gate graph: the single source of truth after flattening.

One ``networkx.DiGraph``. Every node is a net driver or a sink; the edge ``u -> v`` means the net
driven by ``u`` feeds ``v``. Node ids are strings (hierarchical net names for drivers, e.g.
``"u_guard.n5"``; sinks get a ``"<sink>"``-prefixed id). Node attributes:

=============  ============================================================================
``kind``       ``"input"``  primary input port bit (a source)
               ``"const"``  constant 0/1 driver (a source; ``op`` is const0/const1)
               ``"gate"``   combinational gate or cell output
               ``"state"``  output of a register or latch (a source: Q or QN)
               ``"blackbox"`` output pin of an unknown cell or behavioural module (a source)
               ``"sink"``   a pin that consumes a net: primary output, register/latch pin
``name``       the net name (drivers) or a readable pin name (sinks), e.g. ``"q_reg.CK"``
``op``         gate: see :data:`hazlint.netlist.logic.OPS`; ``expr`` holds the tree when op == "expr"
``inputs``     ordered list of predecessor node ids, one per input pin (repeats allowed)
``pins``       input pin names, parallel to ``inputs`` (``"A"``, ``"B"``..., or ``"1"``, ``"2"``)
``delays``     list of :class:`hazlint.netlist.library.Delay`, parallel to ``inputs`` (pin-to-output)
``cell``       primitive or cell type name; ``instance`` hierarchical instance path
               (``"press_top.u_guard.g3"``); ``path``, ``line``, ``column`` where to edit
``role``       sinks: ``"output"`` | ``"clock"`` | ``"data"`` | ``"enable"`` | ``"set"`` |
               ``"reset"`` | ``"tristate_enable"``;
               ``register`` the register's name; ``active`` 1/0 level (set/reset/enable) or
               ``"posedge"``/``"negedge"`` (clock)
``port``       primary input/output port bit name (``"a[3]"``), for kind input and output sinks
``register``   state nodes: the register name; ``state`` "Q" or "QN"; ``init`` the node's
               power-up value (0/1) when the source gives one. Gates that belong to a
               register cell (the enable mux of a ``$_DFFE_``, the reset logic of a Liberty
               flip-flop) carry it too; ``Design.summary`` does not count them as gates
``attrs``      Verilog attributes on the construct, as a dict (``(* name = value *)``)
=============  ============================================================================

Edge attributes: ``pins`` (list of input-pin indices of ``v`` fed by ``u``) and, when SDF gives
one, ``wire`` (a :class:`~hazlint.netlist.library.Delay` for the interconnect).

Graph attribute ``time_unit`` (``graph.graph["time_unit"]``): what one delay number means,
``{"seconds": float | None, "origin": "timescale" | "Liberty" | "SDF" | "source" | "unit"}``
(seconds None: no unit named; origin "unit": no delays given, every gate one unit delay).
Written when the graph is built and by SDF annotation; read through
:class:`hazlint.findings.words.TimeUnit`.

Loops are cut at registers: a register's pins are sinks and its outputs are sources, so the graph is
acyclic unless the design has a real combinational loop. Transparent latches are cut the same way;
``Design.latch_paths`` lists (data sink, enable sink, state node) so the loop rule can see through
them.
"""
from __future__ import annotations

SOURCE_KINDS = frozenset({"input", "const", "state", "blackbox"})
DRIVER_KINDS = SOURCE_KINDS | {"gate"}
SINK_ROLES = ("output", "clock", "data", "enable", "set", "reset", "tristate_enable")
# pins where a glitch does harm (rule scope and hazard analysis); "output" only when the port
# is declared asynchronous
ASYNC_ROLES = frozenset({"clock", "enable", "set", "reset", "tristate_enable"})
