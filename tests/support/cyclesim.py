"""A zero-delay event simulator of a hazlint Design, for comparing with Icarus Verilog.

Only the test set uses it: it reads what the elaborator recorded about each register (clock
sink and edge, data sink, enable, set and reset sinks with their active levels) and runs the
usual register semantics over :meth:`Design.evaluate`: at an active clock edge a flip-flop
takes the value its data pin had just before the edge, unless an asynchronous set or reset was
active just before it (a reset released by the same edge still holds the register); an active
reset loads 0, an active set 1 (the stimuli never activate both); an open latch follows its
data pin. Edges that registers
make on other registers' clocks, and latches feeding latches, are followed until nothing
changes.
"""
from __future__ import annotations


class CycleSim:
    def __init__(self, design, state: dict[str, int] | None = None,
                 inputs: dict[str, int] | None = None):
        self.design = design
        self.regs = list(design.registers)
        names = [r.name for r in self.regs]
        assert len(set(names)) == len(names), "register names must be unique"
        self.state = {r.name: getattr(r, "init", None) or 0 for r in self.regs}
        if state:
            self.state.update(state)
        self.inputs: dict[str, int] = dict(inputs or {})
        self.values = self._eval()

    def _eval(self, state=None) -> dict[str, int]:
        st = self.state if state is None else state
        return self.design.evaluate({**self.inputs, **st}, nets=True)

    def apply(self, inputs: dict[str, int]) -> dict[str, int]:
        """Change primary input bits (others keep their values); return the node values."""
        self.inputs = {**self.inputs, **inputs}
        before, now = self.values, self._eval()
        for _ in range(4 * len(self.regs) + 4):
            nxt = dict(self.state)
            for r in self.regs:
                if r.kind != "ff" or "clock" not in r.pins:
                    continue
                c = r.pins["clock"]
                edge = (before[c], now[c]) == ((0, 1) if r.clock_edge == "posedge" else (1, 0))
                if edge and "data" in r.pins and not self._forced(r, before):
                    nxt[r.name] = before[r.pins["data"]]
            nxt, vals = self._levels(nxt, now if nxt == self.state else None)
            if nxt == self.state:
                self.values = vals
                return vals
            self.state = nxt
            before, now = now, vals
        raise AssertionError("registers do not settle (oscillation through latches?)")

    @staticmethod
    def _forced(r, vals) -> bool:
        """An asynchronous set or reset is active: a clock edge loads nothing."""
        return any(role in r.pins and vals[r.pins[role]] == r.active[role]
                   for role in ("set", "reset"))

    def _levels(self, state: dict[str, int], vals=None):
        """Asynchronous set/reset and open latches, to a fixed point: (state, node values)."""
        for _ in range(4 * len(self.regs) + 4):
            if vals is None:
                vals = self._eval(state)
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
                return state, vals
            state, vals = nxt, None
        raise AssertionError("latches do not settle")

    def output(self, port_bit: str) -> int:
        return self.values[self.design.output_node[port_bit]]
