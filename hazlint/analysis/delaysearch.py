"""The delay search: delays (within the corners, then extra wire delays) under which a
transition glitches at a net, by repeated timed simulation (:mod:`.timedsim`), bounded in
trials and in simulation events."""
from __future__ import annotations

import random
from typing import Mapping, Sequence

import networkx as nx

from .skews import skew_offsets
from .timedsim import DelayAssignment, EventBudget, Glitch, pin_delay, replay


def search_assignment(graph: nx.DiGraph, target: str, before: Mapping[str, int],
                      after: Mapping[str, int], order: Sequence[str], *, trials: int = 200,
                      seed: int = 0, want_dynamic: bool = False, event_budget: int = 0
                      ) -> tuple[DelayAssignment | None, Glitch | None, str]:
    """Look for delays under which the transition glitches at ``target``.

    Tries, in order: the nominal (max) delays, inertial then transport; the min corner; random
    mixes of min/max per pin (within the given bounds); then arbitrary extra transport delays on
    the wires of the changing cone (the "arbitrary delays" model the proof uses). Bounded by
    ``trials``, and by ``event_budget`` simulation events over all trials (0: no bound): on
    deep cones one transport trial with random wire delays can cost millions of events, and the
    count, unlike a clock, gives the same answer on every machine. Returns (assignment,
    glitch, how) or (None, None, reason).
    """
    try:
        return _search(graph, target, before, after, order, trials, seed, want_dynamic,
                       event_budget)
    except _OutOfEvents as stop:
        return None, None, (f"no glitching delay assignment found: the delay search stopped at "
                            f"its budget of {event_budget} simulation events (option "
                            f"search_events) after {stop.args[0]} of {trials} trials")


class _OutOfEvents(Exception):
    pass


def _search(graph, target, before, after, order, trials, seed, want_dynamic, event_budget):
    need = 3 if want_dynamic else 2
    cone_nodes = set(order)
    changing = {n for n in after if (before.get(n, 0) & 1) != (after[n] & 1)}
    # nets that can move: the fan-out of the changing sources inside the cone
    moving: set[str] = set()
    stack = list(changing)
    while stack:
        n = stack.pop()
        for s in graph.successors(n):
            if s in cone_nodes and s not in moving:
                moving.add(s)
                stack.append(s)
    # (replay keeps the cone's steady states and nominal delays for every trial, and for the
    # later replays of the same cone)
    sub = graph.subgraph(cone_nodes)
    spent = [0, 0]          # events, trials

    def run(asg):
        left = event_budget - spent[0] if event_budget else 1_000_000
        if left <= 0:
            raise _OutOfEvents(spent[1])
        try:
            gl, tr = replay(sub, target, before, after, asg, watch=[target], max_events=left)
        except EventBudget:
            if not event_budget:
                raise
            raise _OutOfEvents(spent[1]) from None
        spent[0] += tr.events
        spent[1] += 1
        ok = gl.occurs and len(gl.changes) >= need
        return gl if ok else None

    tried = 0
    gates = [n for n in order if n in moving and graph.nodes[n]["kind"] == "gate"]
    tries = [(DelayAssignment("max", mode="inertial"), "nominal")]
    if len(changing) >= 2:
        # sources that change together do so a little apart: the nominal (inertial) delays
        # with a skew between them, each order of the sources, the skew growing
        depth = max(1, _depth(graph, order, moving))
        tries += [(DelayAssignment("max", mode="inertial", offsets=off), "skewed")
                  for off in skew_offsets(sorted(changing), depth * _max_delay(graph, gates),
                                          max(1, trials // 3))]
    tries += [(DelayAssignment("max", mode="transport"), "nominal"),
              (DelayAssignment("min", mode="inertial"), "min-corner"),
              (DelayAssignment("min", mode="transport"), "min-corner")]
    for asg, how in tries:
        tried += 1
        gl = run(asg)
        if gl:
            return asg, gl, how
    rng = random.Random(seed)
    bounded = [(n, p) for n in gates for p in range(len(graph.nodes[n]["inputs"]))
               if _has_range(graph.nodes[n], p)]
    budget = max(0, trials - tried)
    n_bounded = budget // 4 if bounded else 0
    for _ in range(n_bounded):
        pins = {}
        for n, p in bounded:
            c = "min" if rng.random() < 0.5 else "max"
            pins[(n, p)] = pin_delay(graph.nodes[n], p, c)
        asg = DelayAssignment("max", pins=pins, mode="inertial")
        gl = run(asg)
        if gl:
            return asg, gl, "within-bounds"
    edges = [(u, v, p) for v in gates for p, u in enumerate(graph.nodes[v]["inputs"])
             if u in moving or u in changing]
    scale = 2.0 * max(1.0, _depth(graph, order, moving)) * _max_delay(graph, gates)
    for k in range(budget - n_bounded):
        wires = {}
        # alternate dense random skews and sparse big skews on a few wires
        if k % 2 == 0:
            for e in edges:
                wires[e] = float(rng.randint(0, int(scale)))
        else:
            for e in rng.sample(edges, min(len(edges), rng.randint(1, 3))):
                wires[e] = float(rng.randint(1, int(scale) * 2))
        wires = {e: w for e, w in wires.items() if w > 0}
        asg = DelayAssignment("max", wires=wires, mode="transport")
        if len(changing) >= 2 and k % 4 >= 2:
            # changes of several sources: skewed too, with inertial gates
            asg = DelayAssignment("max", wires=wires, mode="inertial", offsets={
                n: float(rng.randint(0, int(scale))) for n in sorted(changing)})
        gl = run(asg)
        if gl:
            try:
                small = _shrink(asg, run)
                return small, run(small), "arbitrary"
            except _OutOfEvents:
                return asg, gl, "arbitrary"     # found; no budget left to make it smaller
    return None, None, f"no glitching delay assignment found in {trials} trials"


def _shrink(asg: DelayAssignment, run) -> DelayAssignment:
    """Drop the extra wire delays the glitch does not need, then lower each remaining one to the
    smallest integer that still glitches (bisection): a short report with the delay difference
    that matters."""
    wires = dict(asg.wires)

    def ok(w):
        return run(DelayAssignment(asg.corner, dict(asg.pins), w, asg.mode,
                                   dict(asg.offsets))) is not None
    for e in sorted(wires, key=lambda e: wires[e]):
        trial = dict(wires)
        del trial[e]
        if ok(trial):
            wires = trial
    for e in sorted(wires):
        lo, hi = 0, int(wires[e])          # hi glitches; find the least that does
        while hi - lo > 1:
            mid = (lo + hi) // 2
            if ok({**wires, e: float(mid)}):
                hi = mid
            else:
                lo = mid
        wires[e] = float(hi)
    return DelayAssignment(asg.corner, dict(asg.pins), wires, asg.mode, dict(asg.offsets))


def _has_range(d, p) -> bool:
    delays = d.get("delays") or []
    if p >= len(delays) or delays[p] is None:
        return False
    dl = delays[p]
    return dl.rise_min != dl.rise_max or dl.fall_min != dl.fall_max


def _depth(graph, order, moving) -> int:
    depth: dict[str, int] = {}
    best = 1
    for n in order:
        if n in moving:
            depth[n] = 1 + max((depth.get(p, 0) for p in graph.predecessors(n)), default=0)
            best = max(best, depth[n])
    return best


def _max_delay(graph, gates) -> float:
    m = 1.0
    for n in gates:
        for dl in graph.nodes[n].get("delays") or []:
            if dl is not None:
                m = max(m, dl.max)
    return m
