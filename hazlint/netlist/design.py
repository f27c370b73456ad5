"""The elaborated design: gate graph plus the names users script against."""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, Mapping

import networkx as nx

from .logic import eval_op


@dataclass
class Register:
    """A flip-flop or latch after flattening.

    ``pins`` maps role ("clock", "data", "enable", "set", "reset") to the sink node id;
    ``outputs`` maps "Q"/"QN" to the state node id; ``clock_edge`` is "posedge"/"negedge" for
    flip-flops; ``active`` gives the active level per asynchronous pin ("set"/"reset"/"enable").
    """

    name: str
    kind: str                      # "ff" or "latch"
    cell: str
    instance: str
    path: str
    line: int
    pins: dict[str, str] = field(default_factory=dict)
    outputs: dict[str, str] = field(default_factory=dict)
    clock_edge: str | None = None
    active: dict[str, int] = field(default_factory=dict)
    init: int | None = None        # power-up value of Q (reg x = v, initial, init attribute)


@dataclass
class BlackBox:
    """A cell or module hazlint does not model; its outputs are free sources."""

    name: str            # instance path
    cell: str
    path: str
    line: int
    reason: str


@dataclass
class Design:
    graph: nx.DiGraph
    top: str
    inputs: list[str]                         # port bits, e.g. "a[3]"
    outputs: list[str]
    registers: list[Register] = field(default_factory=list)
    blackboxes: list[BlackBox] = field(default_factory=list)
    notes: list[Any] = field(default_factory=list)      # front-end notes (Diagnostic objects)
    files: list[str] = field(default_factory=list)
    includes: list[str] = field(default_factory=list)   # files read through `include
    timescale: tuple[float, float] | None = None        # (unit, precision) in seconds
    input_node: dict[str, str] = field(default_factory=dict)    # port bit -> node id
    output_node: dict[str, str] = field(default_factory=dict)   # port bit -> sink node id
    latch_paths: list[tuple[str, str, str]] = field(default_factory=list)
    port_attrs: dict[str, dict[str, Any]] = field(default_factory=dict)  # port bit -> attributes
    # declarations with hazlint_* attributes: {"name", "nodes" (driver node per bit), "attrs",
    # "path", "line"} (the change model reads them; see hazlint.analysis.changes)
    attr_decls: list[dict[str, Any]] = field(default_factory=list)
    line_maps: dict[str, Any] = field(default_factory=dict)
    modules: list[str] = field(default_factory=list)          # module names elaborated
    # modules left out of the analysis: {"module", "reason", "path", "line", "instances"}
    not_analysed: list[dict[str, Any]] = field(default_factory=list)
    # arrays kept as memory nodes: {"name", "words", "width", "path", "line", "write_ports",
    # "read_ports", "read_data": [state node ids]}
    memories: list[dict[str, Any]] = field(default_factory=list)

    # ------------------------------------------------------------------------------------------
    @cached_property
    def topo_order(self) -> list[str]:
        """Nodes in topological order; raises ``networkx.NetworkXUnfeasible`` on a loop."""
        return list(nx.topological_sort(self.graph))

    @cached_property
    def has_loop(self) -> bool:
        return not nx.is_directed_acyclic_graph(self.graph)

    @cached_property
    def register_by_state(self) -> dict[str, Register]:
        return {n: r for r in self.registers for n in r.outputs.values()}

    def node(self, n: str) -> Mapping[str, Any]:
        return self.graph.nodes[n]

    def net_node(self, net: str) -> str:
        """Node id of the driver of a (hierarchical) net name or port bit."""
        if net in self.input_node:
            return self.input_node[net]
        if net in self.output_node:
            return self.graph.nodes[self.output_node[net]]["inputs"][0]
        if net in self.graph:
            return net
        raise KeyError(net)

    # ------------------------------------------------------------------------------------------
    def evaluate(self, values: Mapping[str, int], width: int = 1, *,
                 nets: bool = False) -> dict[str, int]:
        """Zero-delay evaluation, bit-parallel.

        ``values`` maps primary input port bits (and, optionally, register names or state node
        ids for the current register contents) to ints carrying ``width`` independent vectors.
        Missing inputs are 0; a register not given holds its power-up value (``init``), else
        0. Returns the primary output port bits, and every driver node when ``nets`` is true.
        Combinational loops are evaluated in a fixed order once (no iteration); use the
        ternary analysis for their behaviour.
        """
        mask = (1 << width) - 1
        g = self.graph
        val: dict[str, int] = {}
        for port, n in self.input_node.items():
            val[n] = values.get(port, 0) & mask
        for r in self.registers:
            q = values.get(r.name, mask if r.init else 0) & mask
            for which, n in r.outputs.items():
                v = values.get(n, q if which == "Q" else ~q & mask)
                val[n] = v & mask
        order = self.topo_order if not self.has_loop else list(g.nodes)
        nodes = g.nodes
        for n in order:
            d = nodes[n]
            k = d["kind"]
            if k == "gate" or k == "const":
                ins = [val.get(i, 0) for i in d["inputs"]]
                val[n] = eval_op(d["op"], ins, mask, d.get("expr"))
            elif k == "blackbox" or k == "state":
                # black-box outputs and memory read data (registers were set above)
                val.setdefault(n, values.get(n, 0) & mask)
            elif k == "sink":
                val[n] = val.get(d["inputs"][0], 0) if d["inputs"] else 0
        out = {port: val[s] for port, s in self.output_node.items()}
        if nets:
            out.update(val)
        return out

    def summary(self) -> dict[str, Any]:
        from collections import Counter
        g = self.graph
        # gates inside a register cell (its enable mux, say) are part of that cell
        by_type = Counter(d.get("cell") or d["op"] for _, d in g.nodes(data=True)
                          if d["kind"] == "gate" and not d.get("register"))
        depth = logic_depth(self)
        return {
            "top": self.top,
            "files": list(self.files),
            "inputs": len(self.inputs),
            "outputs": len(self.outputs),
            "gates": sum(by_type.values()),
            "gates_by_type": dict(sorted(by_type.items())),
            "registers": len([r for r in self.registers if r.kind == "ff"]),
            "latches": len([r for r in self.registers if r.kind == "latch"]),
            "logic_depth": depth,
            "blackboxes": [{"instance": b.name, "cell": b.cell, "path": b.path, "line": b.line,
                            "reason": b.reason} for b in self.blackboxes],
            "combinational_loops": self.has_loop,
            "modules": len(self.modules),
            "not_analysed": [dict(r) for r in self.not_analysed],
            "memories": [{k: v for k, v in m.items() if k != "read_data"}
                         for m in self.memories],
        }


def logic_depth(design: Design) -> int | None:
    """Longest number of gates on any source-to-sink path (DP over a topological order)."""
    if design.has_loop:
        return None
    g = design.graph
    depth: dict[str, int] = {}
    best = 0
    for n in design.topo_order:
        d = g.nodes[n]
        base = max((depth[p] for p in g.predecessors(n)), default=0)
        depth[n] = base + (1 if d["kind"] == "gate" else 0)
        best = max(best, depth[n])
    return best
