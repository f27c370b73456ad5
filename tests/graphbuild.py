"""A tiny builder of gate graphs following the schema in hazlint/graph.py, for unit tests that
must not depend on the Verilog front end."""
from __future__ import annotations

import networkx as nx

from hazlint.netlist.design import Design, Register
from hazlint.netlist.library import Delay


class GraphBuilder:
    def __init__(self, top: str = "t", path: str = "t.v"):
        self.g = nx.DiGraph()
        self.top = top
        self.path = path
        self.inputs: list[str] = []
        self.outputs: list[str] = []
        self.input_node: dict[str, str] = {}
        self.output_node: dict[str, str] = {}
        self.registers: list[Register] = []
        self.latch_paths: list[tuple[str, str, str]] = []
        self.port_attrs: dict[str, dict] = {}
        self._line = 1
        self._regs: dict[str, Register] = {}

    def _next_line(self, line):
        if line is None:
            self._line += 1
            return self._line
        return line

    def input(self, name: str, attrs: dict | None = None, line: int | None = None) -> str:
        self.g.add_node(name, kind="input", name=name, port=name, path=self.path,
                        line=self._next_line(line), column=1, instance=self.top,
                        attrs=dict(attrs or {}))
        self.inputs.append(name)
        self.input_node[name] = name
        if attrs:
            self.port_attrs[name] = dict(attrs)
        return name

    def const(self, name: str, value: int) -> str:
        self.g.add_node(name, kind="const", name=name, op=f"const{value}", inputs=[], pins=[])
        return name

    def gate(self, name: str, op: str, inputs: list[str], delay: float | Delay | list = 1.0,
             line: int | None = None, cell: str | None = None) -> str:
        if isinstance(delay, list):
            delays = [d if isinstance(d, Delay) else Delay.fixed(d) for d in delay]
        else:
            d = delay if isinstance(delay, Delay) else Delay.fixed(delay)
            delays = [d] * len(inputs)
        self.g.add_node(name, kind="gate", name=name, op=op, inputs=list(inputs),
                        pins=[chr(ord("A") + i) for i in range(len(inputs))], delays=delays,
                        cell=cell or op, instance=f"{self.top}.g_{name}", path=self.path,
                        line=self._next_line(line), column=3)
        self._connect(name, inputs)
        return name

    def _connect(self, v, inputs):
        for i, u in enumerate(inputs):
            if self.g.has_edge(u, v):
                self.g.edges[u, v]["pins"].append(i)
            else:
                self.g.add_edge(u, v, pins=[i])

    def output(self, port: str, driver: str, attrs: dict | None = None,
               line: int | None = None) -> str:
        n = f"<sink>{port}"
        self.g.add_node(n, kind="sink", role="output", name=port, port=port, inputs=[driver],
                        pins=["I"], path=self.path, line=self._next_line(line), column=1,
                        instance=self.top, attrs=dict(attrs or {}))
        self._connect(n, [driver])
        self.outputs.append(port)
        self.output_node[port] = n
        if attrs:
            self.port_attrs[port] = dict(attrs)
        return n

    def register(self, name: str, pins: dict[str, str] | None = None, kind: str = "ff",
                 line: int | None = None, active: dict | None = None) -> str:
        """Create a register/latch; ``pins`` maps role -> driver node (more via :meth:`pin`).
        Returns the Q state node."""
        line = self._next_line(line)
        reg = Register(name=f"{self.top}.{name}", kind=kind, cell=kind,
                       instance=f"{self.top}.{name}", path=self.path, line=line,
                       clock_edge="posedge" if kind == "ff" else None, active=dict(active or {}))
        q = f"{name}.q"
        self.g.add_node(q, kind="state", name=q, register=reg.name, state="Q", path=self.path,
                        line=line, column=3, instance=reg.instance, cell=kind)
        reg.outputs["Q"] = q
        self.registers.append(reg)
        self._regs[name] = reg
        for role, drv in (pins or {}).items():
            self.pin(name, role, drv)
        return q

    def pin(self, name: str, role: str, driver: str) -> str:
        reg = self._regs[name]
        s = f"<sink>{name}.{role}"
        self.g.add_node(s, kind="sink", role=role, name=f"{name}.{role}", inputs=[driver],
                        pins=["I"], register=reg.name, path=self.path, line=reg.line, column=3,
                        instance=reg.instance,
                        active=reg.active.get(role, "posedge" if role == "clock" else 1))
        self._connect(s, [driver])
        reg.pins[role] = s
        if reg.kind == "latch" and "data" in reg.pins and "enable" in reg.pins \
                and not any(t[2] == reg.outputs["Q"] for t in self.latch_paths):
            self.latch_paths.append((reg.pins["data"], reg.pins["enable"], reg.outputs["Q"]))
        return s

    def design(self) -> Design:
        return Design(graph=self.g, top=self.top, inputs=list(self.inputs),
                      outputs=list(self.outputs), registers=list(self.registers),
                      files=[self.path], input_node=dict(self.input_node),
                      output_node=dict(self.output_node), latch_paths=list(self.latch_paths),
                      port_attrs=dict(self.port_attrs))
