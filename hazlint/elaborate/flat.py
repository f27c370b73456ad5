"""The compiled elaborator of a flat top module (:mod:`hazlint.elaborate._flatnet`).

When the design is one top module that the slang reader kept as member texts (a
``FlatModule``: port and ``wire`` declarations, gate primitives with plain terminals,
``assign name = name;``), :func:`try_elaborate` elaborates it in one compiled pass: net bits
and their union-find, one driver per gate, the name of each merged net, and the node and
edge lists of the gate graph, which networkx then takes in bulk. The result is the graph the
general elaborator builds, node for node and edge for edge in the same order, with the same
attributes (the tests compare both on every fixture and benchmark netlist).

Anything the compiled pass does not model, or has any doubt about - a net with two drivers, a
net read but never driven, a vector on a gate terminal, an undeclared name, a select out of
range, a module past a limit, ``inout`` ports, attributes, parameters, net types other than
``wire`` - makes it return None, and the general elaborator does the whole design (with its
warnings and errors). The extension is optional: without it this module always returns None.
"""
from __future__ import annotations

import importlib

import networkx as nx

from .. import budget as _budget
from .. import limits as _limits
from ..findings.words import TimeUnit
from ..netlist.design import Design
from ..netlist.library import ZERO_DELAY
from .scope import index_range



def _load():
    try:
        return importlib.import_module("hazlint.elaborate._flatnet")
    except ImportError:         # not built: the general path does everything
        return None


_flatnet = _load()

# False: never take the compiled path (tests compare both)
ENABLED = True
# designs the compiled path elaborated (tests check it was taken)
taken = 0


def extension():
    """The compiled module (``check`` and ``build``), or None when it is not built."""
    return _flatnet


def _index(e):
    """A range bound as the slang reader writes a plain decimal number, else None."""
    if type(e) is tuple and len(e) == 5 and e[0] == "num" and e[1] is None and e[3] == 0 \
            and type(e[2]) is int and 0 <= e[2] < 1 << 27:
        return e[2]
    return None


def _plain(g) -> bool:
    """Whether ``g`` keeps its nodes and adjacency in plain dictionaries (networkx's
    ``DiGraph`` without custom factories), which the compiled pass may then fill directly,
    as ``add_nodes_from`` and ``add_edges_from`` would."""
    return (type(g) is nx.DiGraph and g.node_dict_factory is dict
            and g.node_attr_dict_factory is dict and g.adjlist_outer_dict_factory is dict
            and g.adjlist_inner_dict_factory is dict and g.edge_attr_dict_factory is dict
            and type(getattr(g, "_node", None)) is dict and getattr(g, "_adj", None) is
            getattr(g, "_succ", 0) and type(getattr(g, "_pred", None)) is dict
            and hasattr(nx, "_clear_cache") and not g._node and not g._succ and not g._pred)


def try_elaborate(el, tops) -> Design | None:
    """The design of ``tops`` built by the compiled pass, or None (nothing changed)."""
    global taken
    if _flatnet is None or not ENABLED or len(tops) != 1:
        return None
    t = tops[0]
    m = el.modules[t]
    fl = getattr(m, "flat", None)
    if fl is None or m.params or el.net_delay or el.init_values:
        return None
    if len(set(m.port_order)) != len(m.port_order) or set(m.port_order) != set(m.ports):
        return None
    ports = []
    widths = {}
    vector_bits = 0
    for name, p in m.ports.items():
        if p.net_type != "wire" or p.attrs or p.direction not in ("input", "output"):
            return None
        if p.width is None:
            ports.append((name, None, None))
            continue
        msb, lsb = _index(p.width[0]), _index(p.width[1])
        if msb is None or lsb is None:
            return None
        ports.append((name, msb, lsb))
        widths[name] = (msb, lsb)
        vector_bits += abs(msb - lsb) + 1
    inputs: list[str] = []
    outputs: list[str] = []
    for name in m.port_order:
        r = widths.get(name)
        bits = [name] if r is None else [f"{name}[{i}]" for i in index_range(*r)]
        (inputs if m.ports[name].direction == "input" else outputs).extend(bits)
    port_set = set(inputs) | set(outputs)
    lim = _limits.current()
    if any(abs(a - b) + 1 > lim.vector_width for a, b in widths.values()) \
            or vector_bits > el._max_net_bits:
        return None                 # the general path reports the limit where it is hit
    _budget.check_loading("elaborating the design", fl.path, fl.line0)
    g = nx.DiGraph()
    direct = _plain(g)
    got = _flatnet.build(fl.texts, fl.kinds, fl.line0, fl.lstart0, ports, port_set, inputs,
                         outputs, fl.path, t, el.default_delay, lim.vector_width,
                         el._max_net_bits - vector_bits,
                         *((g._node, g._succ, g._pred) if direct else ()))
    if got is None:
        return None
    nodes, edges, in_nodes, out_nodes, drivers, _wire_bits, _widest = got
    if drivers > el._max_gates or drivers > lim.instances:
        return None
    taken += 1
    el.module_seen(t)
    for b in inputs:
        el.port_bits_top[b] = "input"
    for b in outputs:
        el.port_bits_top[b] = "output"
    modules, left = el.coverage_report()
    unit = TimeUnit(*el.settle_time_unit())
    locs = {}

    def loc_of(b):
        loc = locs.get(b)
        if loc is None:
            loc = el._port_loc(b, tops, False)
            loc = locs[b] = ("", 0, 1) if loc is None else (loc.path, loc.line, loc.col or 1)
        return loc

    if direct:
        nx._clear_cache(g)
        edges = []
    else:
        g.add_nodes_from(nodes)
        del nodes
    node_attrs = g._node if direct else g.nodes
    for nid, b in zip(in_nodes, inputs):
        a = node_attrs[nid]
        a["path"], a["line"], a["column"] = loc_of(b)
        a["port"] = b
    for b, src in zip(outputs, out_nodes):
        path, line, column = loc_of(b)
        g.add_node(f"@{b}", kind="sink", inputs=[src], pins=["in"], delays=[ZERO_DELAY],
                   path=path, line=line, column=column, role="output", name=b, instance=t,
                   port=b)
        edges.append((src, f"@{b}", {"pins": [0]}))
    g.add_edges_from(edges)
    del edges
    unit.record(g)
    design = Design(
        graph=g, top=t, inputs=inputs, outputs=outputs, registers=el.registers,
        blackboxes=el.blackboxes, notes=el.notes, files=[sf.path for sf in el.sources],
        includes=list(dict.fromkeys(p for sf in el.sources
                                    for p in getattr(sf, "includes", ()) or ())),
        timescale=(el.time_unit, el.precision) if el.time_unit else None,
        input_node=dict(zip(inputs, in_nodes)),
        output_node={b: f"@{b}" for b in outputs},
        latch_paths=[], port_attrs={}, attr_decls=[])
    design.modules = modules
    design.not_analysed = left
    design.memories = []
    _budget.check_loading("building the gate graph", fl.path, fl.line0)
    return design
