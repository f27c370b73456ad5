"""Small netlists: build a gate graph directly, and write it as Verilog for iverilog (tests,
benchmarks and the brute-force references)."""
from __future__ import annotations

import random
from typing import Sequence

import networkx as nx

from ..netlist.library import Delay
from ..findings.words import number
from .timedsim import pin_delay


def build_graph(inputs: Sequence[str], gates: Sequence[tuple], outputs: Sequence[str] = (),
                path: str = "", async_outputs: Sequence[str] = ()) -> nx.DiGraph:
    """A gate graph following :mod:`hazlint.netlist.graph` from a gate list
    ``(name, op, [input nets], delay)`` where ``delay`` is a number, ``(rise, fall)``, or a
    :class:`~hazlint.netlist.library.Delay` (the same for every pin). Outputs become sinks
    ``"<sink>name"`` with role "output"."""
    g = nx.DiGraph()
    for i, n in enumerate(inputs):
        g.add_node(n, kind="input", name=n, port=n, path=path, line=i + 1, column=1)
    for k, (name, op, ins, delay) in enumerate(gates):
        if isinstance(delay, Delay):
            dl = delay
        elif isinstance(delay, (tuple, list)):
            dl = Delay(delay[0], delay[0], delay[1], delay[1])
        else:
            dl = Delay.fixed(float(delay))
        g.add_node(name, kind="gate", name=name, op=op, inputs=list(ins),
                   pins=[str(p + 1) for p in range(len(ins))], delays=[dl] * len(ins), cell=op,
                   instance=f"g_{name}", path=path, line=len(inputs) + k + 1, column=1)
        for p, u in enumerate(ins):
            if g.has_edge(u, name):
                g.edges[u, name]["pins"].append(p)
            else:
                g.add_edge(u, name, pins=[p])
    for o in outputs:
        s = f"<sink>{o}"
        g.add_node(s, kind="sink", name=o, port=o, role="output", inputs=[o], pins=["D"],
                   path=path, line=0, column=1, asynchronous=o in async_outputs)
        g.add_edge(o, s, pins=[0])
    return g


def graph_to_verilog(module: str, graph: nx.DiGraph, corner: str = "max") -> str:
    """Write a gate graph of primitives (one delay per gate) as a Verilog module with
    ``#(rise, fall)`` gate delays; nets are renamed ``n<k>`` and ports keep their names."""
    ins = [n for n, d in graph.nodes(data=True) if d["kind"] == "input"]
    outs = [(d["name"], d["inputs"][0]) for n, d in graph.nodes(data=True)
            if d["kind"] == "sink" and d.get("role") == "output"]
    ident = {n: f"i{k}" for k, n in enumerate(ins)}
    gl = [n for n in nx.topological_sort(graph) if graph.nodes[n]["kind"] == "gate"]
    for k, n in enumerate(gl):
        ident[n] = f"n{k}"
    ports = [ident[n] for n in ins] + [f"o{k}" for k in range(len(outs))]
    lines = [f"module {module}({', '.join(ports)});"]
    lines += [f"  input {ident[n]};" for n in ins]
    lines += [f"  output o{k};" for k in range(len(outs))]
    if gl:
        lines.append(f"  wire {', '.join(ident[n] for n in gl)};")
    for n in gl:
        d = graph.nodes[n]
        r, f = pin_delay(d, 0, corner)
        lines.append(f"  {d['op']} #({number(r)}, {number(f)}) g{ident[n]}({ident[n]}, "
                     f"{', '.join(ident[i] for i in d['inputs'])});")
    for k, (_, drv) in enumerate(outs):
        lines.append(f"  assign o{k} = {ident[drv]};")
    lines.append("endmodule")
    return "\n".join(lines) + "\n"


def random_circuit(rng: random.Random, n_inputs: int = 4, n_gates: int = 8, n_outputs: int = 2,
                   max_delay: int = 9, ops: Sequence[str] = ("and", "or", "nand", "nor", "xor",
                                                            "xnor", "not", "buf"),
                   prefix: str = "") -> nx.DiGraph:
    """A random acyclic circuit of primitives with random integer (rise, fall) gate delays, for
    cross-checks against iverilog and between the analyses. Fan-in prefers recent nets, which
    gives depth and reconvergent fanout."""
    nets = [f"{prefix}i{k}" for k in range(n_inputs)]
    gates = []
    for k in range(n_gates):
        op = rng.choice(ops)
        arity = 1 if op in ("not", "buf") else rng.choice((2, 2, 2, 3))
        pool = nets[-6:] + nets if len(nets) > 6 else nets
        ins = [rng.choice(pool) for _ in range(arity)]
        name = f"{prefix}g{k}"
        gates.append((name, op, ins, (rng.randint(1, max_delay), rng.randint(1, max_delay))))
        nets.append(name)
    gate_names = [g[0] for g in gates]
    outs = list(dict.fromkeys(gate_names[-1:] + rng.sample(gate_names, min(len(gate_names),
                                                                            n_outputs - 1))))
    return build_graph(nets[:n_inputs], gates, outs)
