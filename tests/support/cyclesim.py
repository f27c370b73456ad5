"""Clocked simulation of a hazlint Design (zero delay), to compare with Icarus Verilog.

Each step sets the primary inputs, lets the combinational logic, transparent latches and
asynchronous set/reset settle, and clocks every flip-flop whose clock pin sees its active edge
(the data pins are read before the edge). Register state starts at 0; memory-node read data
and black-box outputs are 0.
"""
from __future__ import annotations


class CycleSim:
    def __init__(self, design):
        self.d = design
        g = design.graph
        self.state = {r.name: 0 for r in design.registers}
        self.ffs = [r for r in design.registers if r.kind == "ff"]
        self.latches = [r for r in design.registers if r.kind == "latch"]
        self.g = g
        self.values: dict = {}

    def _eval(self, inputs: dict) -> dict:
        vals = dict(inputs)
        vals.update(self.state)
        return self.d.evaluate(vals, 1, nets=True)

    def _pin(self, net, r, role):
        sid = r.pins.get(role)
        return None if sid is None else net[sid] & 1

    def _active(self, r, role, v):
        return v is not None and v == r.active.get(role, 1)

    def settle(self, inputs: dict) -> dict:
        for _ in range(64):
            net = self._eval(inputs)
            changed = False
            for r in self.latches:
                if self._active(r, "enable", self._pin(net, r, "enable")):
                    v = self._pin(net, r, "data")
                    if self.state[r.name] != v:
                        self.state[r.name] = v
                        changed = True
            for r in self.d.registers:
                v = None
                if self._active(r, "reset", self._pin(net, r, "reset")):
                    v = 0
                elif self._active(r, "set", self._pin(net, r, "set")):
                    v = 1
                if v is not None and self.state[r.name] != v:
                    self.state[r.name] = v
                    changed = True
            if not changed:
                self.values = net
                return net
        raise AssertionError("the design does not settle (oscillating latches?)")

    def step(self, before: dict, after: dict) -> dict:
        """Inputs ``before`` (clock low), then ``after`` (clock high): flip-flops take their
        data at the edge between them. Returns the settled net values after the edge."""
        pre = self.settle(before)
        post_comb = self._eval(after)
        updates = {}
        for r in self.ffs:
            sid = r.pins.get("clock")
            if sid is None:
                continue
            a, b = pre[sid] & 1, post_comb[sid] & 1
            if (r.clock_edge == "posedge" and (a, b) == (0, 1)) or \
                    (r.clock_edge == "negedge" and (a, b) == (1, 0)):
                updates[r.name] = pre[r.pins["data"]] & 1
        self.state.update(updates)
        return self.settle(after)


def port_value(design, net: dict, name: str, width: int) -> int:
    if width == 1 and name in design.output_node:
        return net[design.output_node[name]] & 1
    v = 0
    for i in range(width):
        v |= (net[design.output_node[f"{name}[{i}]"]] & 1) << i
    return v


def input_bits(design, name: str, width: int, value: int) -> dict:
    if width == 1 and name in design.input_node:
        return {name: value & 1}
    return {f"{name}[{i}]": (value >> i) & 1 for i in range(width)}
