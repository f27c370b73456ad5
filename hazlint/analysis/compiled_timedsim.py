"""The timed simulator on its compiled event loop (``hazlint.analysis._timedloop``).

:func:`build` turns a gate graph into integer-indexed arrays once (kept per cone by
:mod:`.timedsim`): node kinds and gate op codes, each node's input pins (a pin is a position in
``in_src``), per corner the rise and fall delay of every pin and the wire delay in front of
every pin a net feeds. :func:`run` patches a delay assignment onto copies of the delay arrays,
calls the C loop and reads the waveforms back. The loop has the semantics of the Python loop in
:mod:`.timedsim`, which stays the reference and the fallback. Cell functions (``expr`` gates)
are compiled to a postfix code the C side evaluates; a graph with a gate it cannot evaluate
exactly as the Python loop would (an unknown op, too few inputs, a malformed expression) gets
None from :func:`build` and runs in Python. ``HAZLINT_KERNEL=python`` (:mod:`.compiled`) turns the
compiled loop off; tests/test_timedsim_compiled.py holds both loops to identical traces.
"""
from __future__ import annotations

import struct
from array import array
from typing import Any, Callable, Mapping, Sequence

import networkx as nx

from ..delays.model import GRAPH_DELAYS
from . import compiled

# the C side's codes (enums at the top of _timedloop.c)
KINDS = {"input": 0, "state": 0, "blackbox": 0, "gate": 1, "sink": 2, "const": 3}
OPS = {"and": 1, "or": 2, "nand": 3, "nor": 4, "xor": 5, "xnor": 6, "not": 7, "buf": 8,
       "const0": 9, "const1": 10, "bufif1": 11, "bufif0": 12, "notif1": 13, "notif0": 14,
       "mux": 15}
EXPR = 16
_MIN_INPUTS = {"not": 1, "buf": 1, "xor": 1, "xnor": 1, "bufif1": 2, "bufif0": 2, "notif1": 2,
               "notif0": 2, "mux": 3}
_REC = struct.Struct("dii")          # one change: time, node, value (the C side's Rec)

STOPPED, OUT_OF_EVENTS = 1, 2        # run statuses besides 0 (ran out of events to apply)


def loop():
    """The compiled event loop module, or None (not built, or turned off)."""
    if compiled.mode() == "python":
        return None
    return compiled.timed_loop()


class ConeArrays:
    """One gate graph as the C loop reads it (see the module docstring)."""

    __slots__ = ("names", "index", "kind", "op", "in_ptr", "in_src", "ex_ptr", "ex_code",
                 "rd_ptr", "rd_pin", "rd_node", "rd_local", "order", "sources", "corners",
                 "graph", "wire_keys")

    def wire_index(self) -> tuple[dict, dict]:
        """The reader entries a wire delay key names: ``(u, v) -> [entry]`` (every pin of
        ``v`` fed by ``u``) and ``(u, v, pin) -> entry``."""
        if self.wire_keys is None:
            pairs: dict = {}
            triples: dict = {}
            names = self.names
            for u in range(len(names)):
                for r in range(self.rd_ptr[u], self.rd_ptr[u + 1]):
                    v = names[self.rd_node[r]]
                    pairs.setdefault((names[u], v), []).append(r)
                    triples[(names[u], v, self.rd_local[r])] = r
            self.wire_keys = (pairs, triples)
        return self.wire_keys

    def corner(self, corner: str) -> tuple[array, array]:
        """(pin delays: rise, fall per pin; wire delays per reader entry) at ``corner``, read
        from the graph as timedsim's ``_delay_tables`` reads them."""
        hit = self.corners.get(corner)
        if hit is None:
            g, names = self.graph, self.names
            low = corner == "min"
            dly = array("d", bytes(16 * len(self.in_src)))
            for i, n in enumerate(names):
                if self.kind[i] == 1:
                    d = g.nodes[n]
                    base = self.in_ptr[i]
                    for p in range(self.in_ptr[i + 1] - base):
                        dl = GRAPH_DELAYS.pin(d, p)     # as timedsim.pin_delay reads it
                        dly[2 * (base + p)] = dl.rise_min if low else dl.rise_max
                        dly[2 * (base + p) + 1] = dl.fall_min if low else dl.fall_max
            wire = array("d", bytes(8 * len(self.rd_pin)))
            has_edge, edges = g.has_edge, g.edges
            for r, (v, p) in enumerate(zip(self.rd_node, self.rd_local)):
                u = self.in_src[self.in_ptr[v] + p]
                wd = GRAPH_DELAYS.wire(edges[names[u], names[v]]
                                       if has_edge(names[u], names[v]) else {})
                if wd is not None:
                    wire[r] = wd.rise_min if low else wd.rise_max
            hit = self.corners[corner] = (dly, wire)
        return hit


def build(g: nx.DiGraph, order: Sequence[str] | None) -> ConeArrays | None:
    """The arrays of ``g`` (``order``: its topological order, None when it has a loop), or None
    when the C loop cannot run it exactly as the Python loop would."""
    names = list(g.nodes)
    index = {n: i for i, n in enumerate(names)}
    kind, op = bytearray(len(names)), bytearray(len(names))
    in_ptr, in_src = array("q", [0]), array("q")
    ex_ptr, ex_code = array("q", [0]), array("q")
    sources = []
    for i, (n, d) in enumerate(g.nodes(data=True)):
        k = KINDS.get(d["kind"])
        if k is None:
            return None
        ins = d.get("inputs") or []
        if k == 1 and d.get("op") == "expr":
            if not _postfix(d.get("expr"), len(ins), ex_code):
                return None
            op[i] = EXPR
        elif k == 1:
            code = OPS.get(d.get("op"))
            if code is None or len(ins) < _MIN_INPUTS.get(d.get("op"), 0):
                return None
            op[i] = code
        elif k == 3:
            op[i] = OPS["const1"] if d.get("op") == "const1" else OPS["const0"]
        elif k == 0:
            sources.append((i, n))
            if ins:
                return None
        kind[i] = k
        for u in ins:
            j = index.get(u)
            if j is None:
                return None
            in_src.append(j)
        in_ptr.append(len(in_src))
        ex_ptr.append(len(ex_code))
    # readers in the Python loop's order: by reading node, then pin
    per: list[list[int]] = [[] for _ in names]
    for v in range(len(names)):
        for pin in range(in_ptr[v], in_ptr[v + 1]):
            per[in_src[pin]].append(pin)
    rd_ptr, rd_pin, rd_node, rd_local = array("q", [0]), array("q"), array("q"), array("q")
    pin_node = array("q", bytes(8 * len(in_src)))
    for v in range(len(names)):
        for pin in range(in_ptr[v], in_ptr[v + 1]):
            pin_node[pin] = v
    for u in range(len(names)):
        for pin in per[u]:
            rd_pin.append(pin)
            rd_node.append(pin_node[pin])
            rd_local.append(pin - in_ptr[pin_node[pin]])
        rd_ptr.append(len(rd_pin))
    c = ConeArrays()
    c.names, c.index, c.kind, c.op, c.in_ptr, c.in_src = names, index, kind, op, in_ptr, in_src
    c.ex_ptr, c.ex_code = ex_ptr, ex_code
    c.rd_ptr, c.rd_pin, c.rd_node, c.rd_local = rd_ptr, rd_pin, rd_node, rd_local
    c.order = None if order is None else array("q", (index[n] for n in order))
    c.sources, c.corners, c.graph, c.wire_keys = sources, {}, g, None
    return c


def _postfix(e, n_inputs: int, out: array) -> bool:
    """Append the postfix code of the expression tree ``e`` (a cell function over ``n_inputs``
    pins, as :func:`hazlint.analysis.ternary.bool_gate` evaluates it) to ``out``; False when
    the C side cannot evaluate it exactly so."""
    if not isinstance(e, (tuple, list)) or not e:
        return False
    tag = e[0]
    if tag == "in":
        if not (isinstance(e[1], int) and 0 <= e[1] < n_inputs):
            return False
        out.extend((0, e[1]))
        return True
    if tag == "const":
        out.extend((1, 1 if e[1] else 0))
        return True
    code, args = OPS.get(tag), e[1:]
    if code is None or len(args) < _MIN_INPUTS.get(tag, 0):
        return False
    for x in args:
        if not _postfix(x, n_inputs, out):
            return False
    out.extend((2 + code, len(args)))
    return True


def steady(c: ConeArrays, initial: Mapping[str, int],
           fallback: Callable[[], Mapping[str, int]]) -> bytes:
    """The steady state of ``initial`` (source values, missing ones 0), one byte per node:
    settled in C along the topological order, or ``fallback()`` (the Python ternary fixpoint)
    for a graph with a loop."""
    if c.order is None:
        val = fallback()
        return bytes(val[n] for n in c.names)
    vals = bytearray(len(c.names))
    get = initial.get
    for i, n in c.sources:
        vals[i] = get(n, 0) & 1
    loop().settle(c.order, c.kind, c.op, c.in_ptr, c.in_src, c.ex_ptr, c.ex_code, vals)
    return bytes(vals)


def run(c: ConeArrays, val0: bytes, events: Sequence[tuple[float, str, int]], asg: Any,
        transport: bool, until: float | None, watch: set[str] | None, max_events: int
        ) -> tuple[int, int, float, dict[str, list[tuple[float, int]]]]:
    """One simulation: (status, events applied, end time, waveforms of the watched nodes)."""
    dly, wire = c.corner(asg.corner)
    names, index = c.names, c.index
    if asg.pins:
        dly = array("d", dly)
        kind, in_ptr = c.kind, c.in_ptr
        for (n, p), dl in asg.pins.items():
            i = index.get(n)
            if dl and i is not None and kind[i] == 1 and 0 <= p < in_ptr[i + 1] - in_ptr[i]:
                dly[2 * (in_ptr[i] + p)] = dl[0]
                dly[2 * (in_ptr[i] + p) + 1] = dl[1]
    if asg.wires:
        # a wire's (u, v, pin) delay, else its (u, v) delay, else the corner's (as timedsim's
        # _delay_tables patches them), set key by key rather than entry by entry
        wire = array("d", wire)
        pairs, triples = c.wire_index()
        for k, w in asg.wires.items():
            if w is not None and len(k) == 2:
                for r in pairs.get(k, ()):
                    wire[r] = float(w)
        for k, w in asg.wires.items():
            if w is not None and len(k) == 3:
                r = triples.get(k)
                if r is not None:
                    wire[r] = float(w)
    ev_t = array("d", (float(t) for t, _, _ in events))
    ev_node = array("q", (index[n] for _, n, _ in events))
    ev_val = bytes(v & 1 for _, _, v in events)
    mask = None
    if watch is not None:
        mask = bytearray(len(names))
        for n in watch:
            mask[index[n]] = 1
    status, count, end, recs = loop().run(
        c.kind, c.op, c.in_ptr, c.in_src, c.ex_ptr, c.ex_code, dly, c.rd_ptr, c.rd_pin, wire,
        val0, ev_t, ev_node, ev_val, mask, None if until is None else float(until), transport,
        int(min(max_events, 1 << 62)))
    if watch is not None:
        waves = {n: [(0.0, val0[index[n]])] for n in watch}
    else:
        waves = {n: [(0.0, val0[i])] for i, n in enumerate(names)}
    for t, i, v in _REC.iter_unpack(recs):
        waves[names[i]].append((t, v))
    return status, count, end, waves
