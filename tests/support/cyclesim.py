"""A zero-delay event simulator of a hazlint Design, for comparing with Icarus Verilog.

Only the test set uses it: it reads what the elaborator recorded about each register (clock
sink and edge, data sink, enable, set and reset sinks with their active levels) and runs the
usual register semantics over :meth:`Design.evaluate`: at an active clock edge a flip-flop
takes the value its data pin had just before the edge; an active reset loads 0, an active set 1
(the stimuli never activate both); an open latch follows its data pin. Edges that registers
make on other registers' clocks, and latches feeding latches, are followed until nothing
changes.
"""
from __future__ import annotations


class CycleSim:
    def __init__(self, design, state: dict[str, int] | None = None,
                 inputs: dict[str, int] | None = None):
        self.design = design
        self.regs = list(design.registers)
        self.state = {r.name: getattr(r, "init", None) or 0 for r in self.regs}
        if state:
            self.state.update(state)
        self.inputs: dict[str, int] = dict(inputs or {})
        self.values = self._eval()

    def _eval(self) -> dict[str, int]:
        return self.design.evaluate({**self.inputs, **self.state}, nets=True)

    def apply(self, inputs: dict[str, int]) -> dict[str, int]:
        """Change primary input bits (others keep their values); return the node values."""
        self.inputs = {**self.inputs, **inputs}
        before = self.values
        for _ in range(4 * len(self.regs) + 4):
            now = self._eval()
            nxt = dict(self.state)
            for r in self.regs:
                if r.kind != "ff" or "clock" not in r.pins:
                    continue
                c = r.pins["clock"]
                edge = (before[c], now[c]) == ((0, 1) if r.clock_edge == "posedge" else (1, 0))
                if edge and "data" in r.pins:
                    nxt[r.name] = before[r.pins["data"]]
            nxt = self._levels(nxt)
            before = now
            if nxt == self.state:
                break
            self.state = nxt
        else:
            raise AssertionError("registers do not settle (oscillation through latches?)")
        self.values = self._eval()
        return self.values

    def _levels(self, state: dict[str, int]) -> dict[str, int]:
        """Asynchronous set/reset and open latches, to a fixed point."""
        for _ in range(4 * len(self.regs) + 4):
            vals = self.design.evaluate({**self.inputs, **state}, nets=True)
            nxt = dict(state)
            for r in self.regs:
                p, a = r.pins, r.active
                if "reset" in p and vals[p["reset"]] == a["reset"]:
                    nxt[r.name] = 0
                elif "set" in p and vals[p["set"]] == a["set"]:
                    nxt[r.name] = 1
                elif r.kind == "latch" and "enable" in p and vals[p["enable"]] == a["enable"]:
                    nxt[r.name] = vals[p["data"]]
            if nxt == state:
                return state
            state = nxt
        raise AssertionError("latches do not settle")

    def output(self, port_bit: str) -> int:
        return self.values[self.design.output_node[port_bit]]
