"""Event-driven timed simulation of the gate graph, inertial and transport.

Delay model (the gate graph's, :mod:`hazlint.netlist.graph`): every gate input pin has a
:class:`~hazlint.netlist.library.Delay` (pin-to-output, split by output rise/fall, each a (min, max)
pair); an edge may carry a ``wire`` delay in front of the pin. The simulator takes one number per
arc and direction from a *corner* (``"max"``, ``"min"``) or from an explicit
:class:`DelayAssignment`.

Semantics, per time step (delta cycles at equal time):

1. apply every value change that matures at time *t* (source changes, gate output events, wire
   events), then
2. re-evaluate each gate whose pins changed, once, with all of them applied. When the gate's
   zero-delay value changes to *v* the output event is scheduled at ``t + d``, with ``d`` the
   smallest delay (for *v*'s direction) of the pins that changed.

*Inertial* mode: a gate holds at most one pending output event; when its zero-delay value returns
to the current output value before the event matures, the event is cancelled, so a pulse
narrower than the gate delay is swallowed. This is what Icarus Verilog does for gate primitives
with ``#(rise, fall)`` delays (checked against iverilog in ``tests/test_iverilog_timing.py``,
including the tie rule in step 1). *Transport* mode: every change is delayed; a new event
deletes the pending ones scheduled at or after its own time (the transport rule of VHDL, IEEE
1076), so unequal rise and fall delays cannot reorder a waveform. Wire delays are transport.
"""
from __future__ import annotations

import collections
import heapq
import weakref
from dataclasses import dataclass, field
from typing import Any, Iterable, Mapping

import networkx as nx

from ..delays.model import GRAPH_DELAYS, DelayModel
from ..findings.words import TimeUnit
from ..netlist.walks import fanin, ordered_copy
from . import compiled_timedsim
from .ternary import IntAlgebra, bool_gate, ternary_fixpoint

INF = float("inf")


@dataclass
class DelayAssignment:
    """Delays for one simulation: per gate pin ``(node, pin) -> (rise, fall)``, extra wire
    delays ``(u, v) -> delay`` (transport, in front of every pin of ``v`` fed by ``u``) or
    ``(u, v, pin) -> delay`` (that pin only), and the corner for everything not listed.
    ``offsets`` delays the change of a source in a replayed transition (the skew between
    sources that change together). JSON-able through :meth:`to_json`."""

    corner: str = "max"
    pins: dict[tuple[str, int], tuple[float, float]] = field(default_factory=dict)
    wires: dict[tuple[str, str], float] = field(default_factory=dict)
    mode: str = "inertial"
    offsets: dict[str, float] = field(default_factory=dict)

    def to_json(self) -> dict[str, Any]:
        out = {"corner": self.corner, "mode": self.mode,
               "pins": [{"node": n, "pin": p, "rise": r, "fall": f}
                        for (n, p), (r, f) in sorted(self.pins.items())],
               "wires": [dict({"from": k[0], "to": k[1], "delay": w},
                              **({"pin": k[2]} if len(k) > 2 else {}))
                         for k, w in sorted(self.wires.items())]}
        if self.offsets:
            out["offsets"] = dict(sorted(self.offsets.items()))
        return out

    @classmethod
    def from_json(cls, d: Mapping[str, Any]) -> "DelayAssignment":
        return cls(corner=d.get("corner", "max"), mode=d.get("mode", "inertial"),
                   pins={(p["node"], p["pin"]): (p["rise"], p["fall"]) for p in d.get("pins", [])},
                   wires={((w["from"], w["to"], w["pin"]) if "pin" in w else
                           (w["from"], w["to"])): w["delay"] for w in d.get("wires", [])},
                   offsets=dict(d.get("offsets") or {}))

    def describe(self, graph: nx.DiGraph | None = None) -> list[str]:
        def nm(n):
            if graph is None or n not in graph:
                return n
            return graph.nodes[n].get("instance") or graph.nodes[n].get("name") or n
        t_ = TimeUnit.of(graph).words           # times in the design's unit
        out = [f"{self.mode} delays, {self.corner} corner elsewhere"]
        for n, t in sorted(self.offsets.items(), key=lambda x: (x[1], x[0])):
            if t:
                src = graph.nodes[n] if graph is not None and n in graph else {}
                out.append(f"{src.get('port') or src.get('name') or n} changes {t_(t)} after "
                           "the first change")
        for (n, p), (r, f) in sorted(self.pins.items()):
            out.append(f"pin {p} of {nm(n)}: rise {t_(r)}, fall {t_(f)}")
        for k, w in sorted(self.wires.items()):
            pin = f" pin {k[2]}" if len(k) > 2 else ""
            out.append(f"extra delay {t_(w)} on the wire {nm(k[0])} -> {nm(k[1])}{pin}")
        return out


def pin_delay(d: Mapping[str, Any], pin: int, corner: str,
              delays: DelayModel = GRAPH_DELAYS) -> tuple[float, float]:
    """(rise, fall) delay of input ``pin`` of gate ``d`` at ``corner`` ("min" or "max")."""
    dl = delays.pin(d, pin)
    if corner == "min":
        return dl.rise_min, dl.fall_min
    return dl.rise_max, dl.fall_max


@dataclass
class Trace:
    """Waveforms: node -> [(time, value), ...], the first entry the initial value at ``start``."""

    waves: dict[str, list[tuple[float, int]]]
    start: float = 0.0
    end: float = 0.0
    truncated: bool = False        # stopped at ``until`` with events pending (oscillation)
    events: int = 0                # events applied (the cost of the run)

    def changes(self, node: str, after: float = -INF) -> list[tuple[float, int]]:
        return [(t, v) for t, v in self.waves[node][1:] if t >= after]

    def value_at(self, node: str, t: float) -> int:
        v = self.waves[node][0][1]
        for tt, vv in self.waves[node][1:]:
            if tt > t:
                break
            v = vv
        return v

    def final(self, node: str) -> int:
        return self.waves[node][-1][1]


@dataclass
class Glitch:
    """What the timed simulation shows at one net for one transition."""

    occurs: bool
    changes: list[tuple[float, int]]
    time: float | None = None          # start of the first spurious pulse
    width: float | None = None
    mode: str = "inertial"

    def to_json(self) -> dict[str, Any]:
        return {"occurs": self.occurs, "time": self.time, "width": self.width, "mode": self.mode,
                "changes": [[t, v] for t, v in self.changes]}


def simulate(graph: nx.DiGraph, initial: Mapping[str, int],
             events: Iterable[tuple[float, str, int]], *, mode: str = "inertial",
             assignment: DelayAssignment | None = None, until: float | None = None,
             watch: Iterable[str] | None = None, max_events: int = 1_000_000,
             prep: dict | None = None) -> Trace:
    """Simulate from the steady state of ``initial`` (source node -> 0/1; missing free sources
    are 0) through the source ``events`` ``(time, node, value)``.

    ``watch`` limits the recorded waveforms (all nodes by default). Loops are allowed: the initial
    state is Eichelberger's ternary fixpoint, X nets start at 0, and ``until`` bounds the run.
    ``prep`` (a dict the caller keeps while the graph does not change, e.g. for the trials of
    one delay search) keeps the steady state and the nominal delay tables between calls, so
    that a trial costs the events it simulates rather than a sweep of the whole cone.

    The event loop runs compiled (:mod:`.compiled_timedsim`) unless the extension is missing,
    ``HAZLINT_KERNEL=python`` turns it off or the graph holds a gate it cannot evaluate; the
    Python loop below is the reference, with the same traces and event counts.
    """
    asg = assignment or DelayAssignment(mode=mode)
    mode = asg.mode if assignment is not None else mode
    if mode not in ("inertial", "transport"):
        raise ValueError(f"unknown delay mode {mode!r}")
    events = list(events)
    fast = _compiled_arrays(graph, prep)
    if fast is not None and all(n in fast.index for _, n, _ in events):
        return _simulate_compiled(fast, graph, initial, events, asg, mode, until, watch,
                                  max_events, prep)
    return _simulate_python(graph, initial, events, asg, mode, until, watch, max_events, prep)


def _simulate_compiled(fast, g, initial, events, asg, mode, until, watch, max_events, prep):
    """:func:`simulate` on the compiled event loop (:mod:`.compiled_timedsim`)."""
    val0 = _kept(prep, g, ("csteady", _initial_key(initial)),
                 lambda: compiled_timedsim.steady(fast, initial, lambda: _steady_state(g, initial)))
    watch_set = set(watch) if watch is not None else None
    start = min((float(t) for t, _, _ in events), default=INF)
    status, count, end, waves = compiled_timedsim.run(
        fast, val0, events, asg, mode == "transport", until, watch_set, max_events)
    if status == compiled_timedsim.OUT_OF_EVENTS:
        raise EventBudget("timed simulation exceeded its event budget")
    return Trace(waves=waves, start=0.0 if start == INF else start, end=end,
                 truncated=status == compiled_timedsim.STOPPED, events=count)


def _compiled_arrays(g, prep):
    """The compiled loop's arrays of ``g`` (kept in ``prep``), or None: the loop is not built
    or turned off, or ``g`` has a gate only the Python loop evaluates."""
    if compiled_timedsim.loop() is None:
        return None
    return _kept(prep, g, ("carrays",), lambda: compiled_timedsim.build(g, _topological(g)))


def _simulate_python(g, initial, events, asg, mode, until, watch, max_events, prep):
    """:func:`simulate` in Python: the reference semantics, and the fallback."""
    steady, pins0 = _steady_state_kept(g, initial, prep)
    val = dict(steady)
    readers, gdelay = _delay_tables(g, asg, prep)
    kinds = _node_kinds(g, prep)
    # per gate/sink the values at its input pins, and per gate its zero-delay output: both
    # start from the steady state and are copied from it only where events touch them
    pinval = _CopyOnRead(pins0, list)
    undelayed = _CopyOnRead(steady, None)
    watch_set = set(watch) if watch is not None else None
    waves = {n: [(0.0, val[n])] for n in (watch_set if watch_set is not None else g.nodes)}
    heap: list = []
    seq = 0
    live: set[int] = set()
    pending: dict[str, list[tuple[float, int, int]]] = {}   # node -> [(time, value, token)]
    wire_pending: dict[tuple[str, int], list[tuple[float, int, int]]] = {}

    def push(t, kind, target, v, pend):
        nonlocal seq
        seq += 1
        # transport rule: drop pending events at or after t; inertial keeps one at most
        keep = []
        for ev in pend:
            if ev[0] >= t:
                live.discard(ev[2])
            else:
                keep.append(ev)
        pend[:] = keep
        pend.append((t, v, seq))
        live.add(seq)
        heapq.heappush(heap, (t, seq, kind, target, v))

    start = INF
    for t, n, v in events:
        seq += 1
        live.add(seq)
        heapq.heappush(heap, (float(t), seq, "src", n, v & 1))
        start = min(start, float(t))
    count = 0
    now = 0.0
    truncated = False
    while heap:
        t = heap[0][0]
        if until is not None and t > until:
            truncated = True
            break
        now = t
        # phase 1: apply everything that matures at t
        changed_pins: dict[str, set[int]] = {}
        while heap and heap[0][0] == t:
            _, token, kind, target, v = heapq.heappop(heap)
            if token not in live:
                continue
            live.discard(token)
            count += 1
            if count > max_events:
                raise EventBudget("timed simulation exceeded its event budget")
            if kind == "pin":
                node, p = target
                pl = wire_pending.get(target)
                if pl:
                    pl[:] = [e for e in pl if e[2] != token]
                if pinval[node][p] != v:
                    pinval[node][p] = v
                    changed_pins.setdefault(node, set()).add(p)
                continue
            if kind == "out":
                pl = pending.get(target)
                if pl:
                    pl[:] = [e for e in pl if e[2] != token]
            if val[target] == v:
                continue
            val[target] = v
            if target in waves:
                waves[target].append((t, v))
            for r, p, w in readers.get(target, ()):
                if w > 0:
                    push(t + w, "pin", (r, p), v, wire_pending.setdefault((r, p), []))
                else:
                    if pinval[r][p] != v:
                        pinval[r][p] = v
                        changed_pins.setdefault(r, set()).add(p)
        # phase 2: evaluate each touched gate once
        for n, pins in changed_pins.items():
            kind, op, expr = kinds[n]
            if kind == "sink":
                v = pinval[n][0]
                if val[n] != v:
                    val[n] = v
                    if n in waves:
                        waves[n].append((t, v))
                continue
            if kind != "gate":
                continue
            v = bool_gate(_BIT, op, pinval[n], expr)
            if v == undelayed[n]:
                continue
            undelayed[n] = v
            pl = pending.setdefault(n, [])
            if mode == "inertial" and pl:
                # the zero-delay value went back to the output's value: swallow the pulse
                for ev in pl:
                    live.discard(ev[2])
                pl.clear()
                if v == val[n]:
                    continue
            row = gdelay[n]
            edge = 0 if v else 1
            dl = min(row[p][edge] for p in pins) if len(pins) > 1 else row[next(iter(pins))][edge]
            push(t + dl, "out", n, v, pl)
    return Trace(waves=waves, start=0.0 if start == INF else start, end=now, truncated=truncated,
                 events=count)


_BIT = IntAlgebra(1)


class EventBudget(RuntimeError):
    """A simulation ran past its ``max_events``."""


class _CopyOnRead(dict):
    """A dict over a read-only ``base``: a missing key is taken from the base (through
    ``copy`` and stored, when given, so the caller may change it in place)."""

    __slots__ = ("base", "copy")

    def __init__(self, base, copy):
        super().__init__()
        self.base, self.copy = base, copy

    def __missing__(self, k):
        v = self.base[k]
        if self.copy is None:
            return v
        v = self[k] = self.copy(v)
        return v


def _kept(prep, g, key: tuple, build):
    """``build()``, kept in ``prep`` under ``key`` for graph ``g`` (None: not kept). The graph
    itself is stored beside the value, so a new graph that reuses an old one's id misses."""
    if prep is None:
        return build()
    k = (id(g),) + key
    hit = prep.get(k)
    if hit is None or hit[0] is not g:
        hit = prep[k] = (g, build())
        if key[0] in _PER_VECTOR and isinstance(prep, _ConePrep):
            prep.note(k)
    return hit[1]


_PER_VECTOR = ("steady", "csteady")     # keys of prep entries kept per initial vector
_STEADY_PER_CONE = 4


class _ConePrep(dict):
    """The set-up :func:`replay` keeps per cone graph for the run (a ``prep``, see
    :func:`simulate`): node kinds, the delay tables per corner, the compiled loop's arrays, and
    the steady states of the last :data:`_STEADY_PER_CONE` initial vectors."""

    __slots__ = ("vectors",)

    def __init__(self):
        super().__init__()
        self.vectors: collections.deque = collections.deque()

    def note(self, k) -> None:
        self.vectors.append(k)
        if len(self.vectors) > _STEADY_PER_CONE:
            self.pop(self.vectors.popleft(), None)


def _initial_key(initial: Mapping[str, int]) -> tuple:
    return tuple(sorted((n, v & 1) for n, v in initial.items()))


def _node_kinds(g, prep) -> dict[str, tuple]:
    """node -> (kind, op, expr): what the event loop asks of a node it evaluates, read once."""
    return _kept(prep, g, ("kinds",), lambda: {
        n: (d["kind"], d.get("op"), d.get("expr")) for n, d in g.nodes(data=True)})


def _steady_state_kept(g, initial, prep):
    """(:func:`_steady_state`, per gate and sink its input pins' values), both read-only, kept
    in ``prep`` per graph and initial values."""
    def build():
        val = _steady_state(g, initial)
        pins = {n: [val[u] for u in (d.get("inputs") or [])]
                for n, d in g.nodes(data=True) if d["kind"] in ("gate", "sink")}
        return val, pins
    return _kept(prep, g, ("steady", _initial_key(initial)), build)


def _delay_tables(g, asg: "DelayAssignment", prep):
    """(readers: net -> [(reader, pin, wire delay)], gate delays: gate -> [(rise, fall)] per
    pin) under ``asg``. The tables of the corner alone are kept in ``prep``; the assignment's
    own pin and wire delays are patched onto copies of the entries they touch."""
    def build():
        readers: dict[str, list[tuple[str, int, float]]] = {}
        gdelay: dict[str, list[tuple[float, float]]] = {}
        for n, d in g.nodes(data=True):
            ins = d.get("inputs") or []
            if d["kind"] == "gate":
                gdelay[n] = [pin_delay(d, p, asg.corner) for p in range(len(ins))]
            for p, u in enumerate(ins):
                e = g.edges[u, n] if g.has_edge(u, n) else {}
                wd = GRAPH_DELAYS.wire(e)
                w = (wd.rise_min if asg.corner == "min" else wd.rise_max) if wd is not None else 0.0
                readers.setdefault(u, []).append((n, p, float(w)))
        return readers, gdelay
    readers, gdelay = _kept(prep, g, ("delays", asg.corner), build)
    if asg.pins:
        gdelay = dict(gdelay)
        for (n, p), dl in asg.pins.items():
            if dl and n in gdelay and 0 <= p < len(gdelay[n]):
                row = list(gdelay[n])
                row[p] = dl
                gdelay[n] = row
    if asg.wires:
        readers = dict(readers)
        wires = asg.wires
        for u in {k[0] for k in wires}:
            if u in readers:
                row = []
                for n, p, w0 in readers[u]:
                    w = wires.get((u, n, p))
                    if w is None:
                        w = wires.get((u, n))
                    row.append((n, p, w0 if w is None else float(w)))
                readers[u] = row
    return readers, gdelay


def _steady_state(g: nx.DiGraph, initial: Mapping[str, int]) -> dict[str, int]:
    val: dict[str, int] = {}
    for n, d in g.nodes(data=True):
        if d["kind"] in ("input", "state", "blackbox"):
            val[n] = initial.get(n, 0) & 1
    order = _topological(g)
    if order is not None:
        for n in order:
            d = g.nodes[n]
            if n in val:
                continue
            if d["kind"] == "gate":
                val[n] = bool_gate(_BIT, d["op"], [val[i] for i in d["inputs"]], d.get("expr"))
            elif d["kind"] == "const":
                val[n] = 1 if d.get("op") == "const1" else 0
            elif d["kind"] == "sink":
                ins = d.get("inputs") or []
                val[n] = val[ins[0]] if ins else 0
        return val
    A = _BIT
    tv = {n: (1 - v, v) for n, v in val.items()}
    for n, d in g.nodes(data=True):
        if d["kind"] == "const":
            tv[n] = (0, 1) if d.get("op") == "const1" else (1, 0)
        elif n not in tv:
            tv[n] = (1, 1)
    tv = ternary_fixpoint(g, list(g.nodes), tv, A)
    return {n: (1 if c1 and not c0 else 0) for n, (c0, c1) in tv.items()}


# Per graph object: its topological order, and the fan-in cones replays were restricted to. A gate
# graph is not changed once loaded, so both stay valid while the graph lives (the node count is
# checked as a guard against a graph grown in place).
_TOPO: "weakref.WeakKeyDictionary[nx.DiGraph, tuple[int, list[str] | None]]" = \
    weakref.WeakKeyDictionary()
_CONES: "weakref.WeakKeyDictionary[nx.DiGraph, _Cones]" = weakref.WeakKeyDictionary()
_CONES_PER_GRAPH = 32


def _topological(g: nx.DiGraph) -> list[str] | None:
    """A topological order of ``g``, or None when it has a cycle."""
    hit = _TOPO.get(g)
    if hit is not None and hit[0] == len(g):
        return hit[1]
    try:
        order: list[str] | None = list(nx.topological_sort(g))
    except nx.NetworkXUnfeasible:
        order = None
    _TOPO[g] = (len(g), order)
    return order


class _Cone:
    """A fan-in cone (a copy of its nodes and edges) and the set-up kept for simulating it."""

    __slots__ = ("graph", "nodes", "roots", "prep")

    def __init__(self, graph: nx.DiGraph, nodes: frozenset, roots: frozenset):
        self.graph, self.nodes, self.roots, self.prep = graph, nodes, roots, _ConePrep()


class _Cones:
    """The cones of one graph: by the roots asked for, and by node set (so that watch sets
    with the same fan-in, such as a target and the nets drawn inside its cone, share one
    cone and its set-up); each the last :data:`_CONES_PER_GRAPH` used."""

    __slots__ = ("size", "by_roots", "by_nodes")

    def __init__(self, size: int):
        self.size = size
        self.by_roots: collections.OrderedDict = collections.OrderedDict()
        self.by_nodes: collections.OrderedDict = collections.OrderedDict()

    @staticmethod
    def of(graph: nx.DiGraph) -> "_Cones":
        per = _CONES.get(graph)
        if per is None or per.size != len(graph):
            per = _CONES[graph] = _Cones(len(graph))
        return per

    @staticmethod
    def put(table: collections.OrderedDict, key, cone: _Cone) -> None:
        table[key] = cone
        table.move_to_end(key)
        if len(table) > _CONES_PER_GRAPH:
            table.popitem(last=False)

    def covering(self, roots: frozenset) -> _Cone | None:
        """A kept cone whose roots are among ``roots`` and whose nodes hold all of them: the
        fan-in of ``roots`` is then exactly that cone."""
        for c in reversed(self.by_roots.values()):
            if c.roots <= roots and roots <= c.nodes:
                return c
        return None


def _viewed(graph: nx.DiGraph) -> nx.DiGraph | None:
    """The graph a node-induced sub-graph view shows part of (None for any other graph)."""
    base = getattr(graph, "_graph", None)
    if base is None or not nx.is_frozen(graph) or not isinstance(base, nx.DiGraph) or \
            getattr(graph, "_EDGE_OK", None) is not nx.filters.no_filter:
        return None
    return base


def _cone(graph: nx.DiGraph, roots: Iterable[str]) -> _Cone:
    key = frozenset(roots)
    per = _Cones.of(graph)
    hit = per.by_roots.get(key)
    if hit is not None:
        per.by_roots.move_to_end(key)
        return hit
    hit = per.covering(key)
    base = _viewed(graph)
    if hit is None and base is not None:
        # a view holding the viewed graph's whole cone (every edge into it, as the view is
        # node-induced) has that same cone: share the viewed graph's
        whole = _cone(base, key)
        if all(n in graph for n in whole.nodes):
            hit = whole
    if hit is None:
        seen = frozenset(fanin(graph, sorted(key)))
        hit = per.by_nodes.get(seen)
        if hit is None:
            # (a view, such as a sub-graph, is copied too: iterating a view costs a filter per
            # node)
            hit = _Cone(graph if len(seen) == len(graph) and not nx.is_frozen(graph)
                        else ordered_copy(graph, seen), seen, key)
        _Cones.put(per.by_nodes, seen, hit)
    _Cones.put(per.by_roots, key, hit)
    return hit


def fanin_cone(graph: nx.DiGraph, roots: Iterable[str]) -> nx.DiGraph:
    """The sub-graph of ``roots`` and everything they depend on (a copy, cached per graph and
    shared by every set of roots with the same fan-in): what a simulation must compute for the
    waveforms of ``roots`` and nothing more."""
    return _cone(graph, roots).graph


def glitch_at(trace: Trace, node: str, after: float, mode: str = "inertial") -> Glitch:
    """Spurious pulses at ``node`` after time ``after``: more changes than the net's start and
    end values require."""
    ch = trace.changes(node, after)
    v0 = trace.value_at(node, after - 1e-9) if after > 0 else trace.waves[node][0][1]
    v1 = trace.final(node)
    need = 0 if v0 == v1 else 1
    if len(ch) <= need:
        return Glitch(False, ch, mode=mode)
    # first spurious pulse: for static, the first two changes; for dynamic, the first two
    t0, t1 = ch[0][0], ch[1][0]
    return Glitch(True, ch, time=t0, width=t1 - t0, mode=mode)


def replay(graph: nx.DiGraph, target: str, before: Mapping[str, int], after: Mapping[str, int],
           assignment: DelayAssignment | None = None, mode: str = "inertial",
           settle: float = 0.0, watch: Iterable[str] | None = None,
           prep: dict | None = None, max_events: int = 1_000_000) -> tuple[Glitch, Trace]:
    """Apply the transition ``before -> after`` (source values) at time ``settle`` and report the
    glitch at ``target``. ``prep`` and ``max_events``: see :func:`simulate`; with ``watch``,
    the set-up kept with the watched nets' fan-in cone (:func:`fanin_cone`) is used instead of
    ``prep``, for every replay of the run on that cone."""
    asg = assignment or DelayAssignment(mode=mode)
    w = None if watch is None else set(watch) | {target}
    if w is not None:
        # only the watched nets are recorded, so only their fan-in cone needs simulating
        cone = _cone(graph, w)
        graph, prep = cone.graph, cone.prep
    evs = [(settle + asg.offsets.get(n, 0.0), n, v & 1) for n, v in after.items()
           if (before.get(n, 0) & 1) != (v & 1) and n in graph]
    tr = simulate(graph, before, evs, assignment=asg, watch=w, prep=prep, max_events=max_events)
    return glitch_at(tr, target, settle, asg.mode), tr
