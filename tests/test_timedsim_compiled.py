"""The compiled event loop (hazlint/analysis/_timedloop.c) against the Python loop of
hazlint.analysis.timedsim, the reference semantics (held to Icarus Verilog by
tests/test_iverilog_timing.py, which runs every simulation on both loops): identical traces
(every waveform, start and end time, the stop at ``until``, the event count) and the same
event budget overrun, on

* seeded random circuits (Python's ``random``, fixed seeds) of every op the C side evaluates,
  zero delays (delta cycles at one time) and repeated inputs among them;
* random transitions of fan-in cones of the ISCAS-85 circuits c432, c880 and c6288 (netlists of
  the PyPI package circuitgraph==0.2.1, read in place);
* every fixture design with delays (hazards, demo, rules, loops, SDF-annotated ones...),
  oscillating loops cut by ``until`` and by the event budget;

inertial and transport, with random pin delays and wire delays per edge and per pin.
"""
from __future__ import annotations

import glob
import importlib.resources
import os
import random
from array import array

import networkx as nx
import pytest

import hazlint
from hazlint.analysis import compiled, compiled_timedsim, timedsim
from hazlint.analysis.circuits import build_graph
from hazlint.analysis.timedsim import DelayAssignment, EventBudget, fanin_cone, replay, simulate

HERE = os.path.dirname(__file__)
FIX = os.path.join(HERE, "..", "fixtures")

needs_c = pytest.mark.skipif(compiled.timed_loop() is None,
                             reason="the compiled event loop was not built (needs a C compiler "
                                    "when hazlint is installed)")
pytestmark = needs_c


def _netlist(name: str) -> str:
    return str(importlib.resources.files("circuitgraph") / "netlists" / name)


def _outcome(graph, *args, **kw):
    try:
        tr = simulate(graph, *args, **kw)
    except EventBudget as exc:
        return ("out of events", str(exc))
    return ("trace", tr)


def _both(monkeypatch, graph, *args, **kw):
    """(Python loop, compiled loop) outcomes of one simulation; each with a fresh ``prep`` so
    that neither reuses the other's set-up."""
    got = []
    for kernel in ("python", "c"):
        monkeypatch.setenv(compiled.ENV, kernel)
        got.append(_outcome(graph, *args, **dict(kw, prep={})))
    return got


def _compiles(graph) -> bool:
    return compiled_timedsim.build(graph, timedsim._topological(graph)) is not None


def _random_assignment(rng, graph):
    gates = [n for n, d in graph.nodes(data=True) if d["kind"] == "gate"]
    edges = [(u, v, p) for v in gates for p, u in enumerate(graph.nodes[v]["inputs"])]
    pins, wires = {}, {}
    if gates and rng.random() < 0.5:
        for n in rng.sample(gates, min(len(gates), rng.randint(1, 12))):
            for p in range(len(graph.nodes[n]["inputs"])):
                if rng.random() < 0.7:
                    pins[(n, p)] = (rng.choice((0.0, 0.5, 1.0, 2.0, 3.5)),
                                    rng.choice((0.0, 1.0, 1.5, 4.0)))
    if edges and rng.random() < 0.6:
        for u, v, p in rng.sample(edges, min(len(edges), rng.randint(1, 40))):
            key = (u, v, p) if rng.random() < 0.5 else (u, v)
            wires[key] = float(rng.choice((0, 0.5, 1, 2, 3, 7, 12)))
            if rng.random() < 0.3:     # both forms on one wire: the pin's wins
                wires[(u, v, p) if len(key) == 2 else (u, v)] = float(rng.randint(0, 9))
    return DelayAssignment(rng.choice(("min", "max")), pins=pins, wires=wires,
                           mode=rng.choice(("inertial", "transport")))


def _random_run(rng, graph, budget=(50, 5000, 1_000_000), changes=(1, 8)):
    """Random (initial, events, keyword arguments) for one simulation of ``graph``."""
    srcs = sorted(n for n, d in graph.nodes(data=True) if d["kind"] in ("input", "state"))
    initial = {n: rng.randint(0, 1) for n in srcs}
    events = []
    for _ in range(rng.randint(*changes)):
        # equal times on purpose: the tie rule and the order of equal-time events
        events.append((float(rng.choice((0, 0, 1, 2, 2.5, 4, 9))), rng.choice(srcs),
                       rng.randint(0, 1)))
    nodes = list(graph.nodes)
    kw = {"assignment": _random_assignment(rng, graph), "max_events": rng.choice(budget)}
    if rng.random() < 0.6:
        kw["watch"] = rng.sample(nodes, min(len(nodes), rng.randint(1, 6)))
    if rng.random() < 0.4:
        kw["until"] = float(rng.randint(0, 30))
    return initial, events, kw


ALL_OPS = ("and", "or", "nand", "nor", "xor", "xnor", "not", "buf", "mux", "bufif0", "bufif1",
           "notif0", "notif1", "const0", "const1")


def _random_gates(rng):
    nets = [f"i{k}" for k in range(rng.randint(1, 5))]
    ins = list(nets)
    gates = []
    for k in range(rng.randint(2, 16)):
        op = rng.choice(ALL_OPS)
        arity = {"not": 1, "buf": 1, "mux": 3, "const0": 0, "const1": 0}.get(op)
        if op.startswith(("bufif", "notif")):
            arity = 2
        if arity is None:
            arity = rng.choice((1, 2, 2, 3, 4))
        # repeated inputs allowed: two pins of one gate on the same net
        fan = [rng.choice(nets[-5:] + nets) for _ in range(arity)]
        rise, fall = rng.choice((0, 0.5, 1, 2, 3)), rng.choice((0, 1, 1.5, 4))
        gates.append((f"g{k}", op, fan, (rise, fall)))
        nets.append(f"g{k}")
    outs = rng.sample([g[0] for g in gates], min(len(gates), rng.randint(1, 3)))
    return build_graph(ins, gates, outs)


@pytest.mark.parametrize("seed", range(6))
def test_random_circuits_of_every_op_give_identical_traces(seed, monkeypatch):
    rng = random.Random(seed)
    seen = {"trace": 0, "out of events": 0, "stopped": 0, "changes": 0}
    for _ in range(60):
        g = _random_gates(rng)
        assert _compiles(g)
        for _ in range(4):
            initial, events, kw = _random_run(rng, g, budget=(3, 20, 1_000_000))
            py, c = _both(monkeypatch, g, initial, events, **kw)
            assert py == c, (seed, kw)
            seen[py[0]] += 1
            if py[0] == "trace":
                seen["stopped"] += py[1].truncated
                seen["changes"] += sum(len(w) - 1 for w in py[1].waves.values())
    # the cases reach every outcome
    assert seen["trace"] and seen["out of events"] and seen["stopped"] and seen["changes"] > 100


@pytest.mark.parametrize("name,runs", [("c432.v", 30), ("c880.v", 30), ("c6288.v", 16)])
def test_benchmark_cones_give_identical_traces(name, runs, monkeypatch):
    design = hazlint.load_design(_netlist(name))
    g = design.graph
    rng = random.Random(name)
    sinks = sorted(n for n, d in g.nodes(data=True) if d["kind"] == "sink")
    events_seen = 0
    for _ in range(runs):
        cone = fanin_cone(g, [rng.choice(sinks)])
        assert _compiles(cone)
        initial, events, kw = _random_run(rng, cone, budget=(500, 20_000, 1_000_000),
                                          changes=(4, 24))
        py, c = _both(monkeypatch, cone, initial, events, **kw)
        assert py == c
        if py[0] == "trace":
            events_seen += py[1].events
    assert events_seen > 10 * runs


def _fixture_designs():
    out = []
    for sub in ("hazards", "demo", "changes", "rules", "loops", "units", "frontend", "initial"):
        for path in sorted(glob.glob(os.path.join(FIX, sub, "*.v"))):
            if os.path.basename(path) in ("specify_cells.v", "specify_top.v"):
                continue       # a two-file design: loaded together below
            out.append((os.path.relpath(path, FIX), lambda p=path: hazlint.load_design(p)))
    cells = os.path.join(FIX, "frontend", "specify_cells.v")
    top = os.path.join(FIX, "frontend", "specify_top.v")
    out.append(("frontend/specify_top.v",
                lambda: hazlint.load_design([cells, top], top="top")))
    return out


def test_fixture_designs_give_identical_traces(monkeypatch):
    rng = random.Random(17)
    compiled_designs, fallback, loops = 0, 0, 0
    for name, load in _fixture_designs():
        try:
            design = load()
        except Exception as exc:      # a fixture of a front-end error: not a circuit
            assert "error" in type(exc).__name__.lower() or isinstance(exc, ValueError), name
            continue
        g = design.graph
        if not any(d["kind"] in ("input", "state") for _, d in g.nodes(data=True)):
            continue
        if _compiles(g):
            compiled_designs += 1
        else:
            fallback += 1
        loops += timedsim._topological(g) is None
        for _ in range(6):
            initial, events, kw = _random_run(rng, g)
            if timedsim._topological(g) is None:
                kw["until"] = kw.get("until", 40.0)
            py, c = _both(monkeypatch, g, initial, events, **kw)
            assert py == c, name
    assert compiled_designs > 30 and loops >= 4 and fallback == 0


def test_sdf_annotated_wire_delays_give_identical_traces(monkeypatch):
    # the press valve controller with the SDF's INTERCONNECT (wire) and IOPATH delays
    from hazlint.delays.liberty import read_liberty
    from hazlint.delays.sdf import annotate
    lib = read_liberty(os.path.join(FIX, "liberty", "press_cells.lib"))
    rng = random.Random(3)
    for corner in ("min", "max"):
        design = hazlint.load_design(os.path.join(FIX, "sdf", "press_valve.v"), library=lib)
        annotate(design, os.path.join(FIX, "sdf", "press_valve.sdf"), corner=corner,
                 library=lib)
        g = design.graph
        assert any("wire" in e for *_, e in g.edges(data=True))
        assert any(d.get("op") == "expr" for _, d in g.nodes(data=True))    # AOI21X1
        assert _compiles(g)
        for _ in range(20):
            initial, events, kw = _random_run(rng, g)
            kw["assignment"] = DelayAssignment(corner, mode=kw["assignment"].mode)
            py, c = _both(monkeypatch, g, initial, events, **kw)
            assert py == c


def _ring(n_bufs: int):
    # en -> nand -> buffers -> back into the nand: oscillates while en is 1
    gates = [("g0", "nand", ["en", f"g{n_bufs}"], (1, 2))]
    gates += [(f"g{k}", "buf", [f"g{k - 1}"], (2, 1)) for k in range(1, n_bufs + 1)]
    return build_graph(["en"], gates, ["g0"])


def test_oscillating_loops_stop_at_until_and_at_the_event_budget(monkeypatch):
    for n in (1, 2, 4):
        g = _ring(n)
        assert timedsim._topological(g) is None and _compiles(g)
        for mode in ("inertial", "transport"):
            py, c = _both(monkeypatch, g, {"en": 0}, [(5.0, "en", 1)], mode=mode, until=200.0)
            assert py == c and py[1].truncated
            assert len(py[1].changes("g0")) > 10      # it did oscillate
            py, c = _both(monkeypatch, g, {"en": 0}, [(5.0, "en", 1)], mode=mode,
                          max_events=150)
            assert py == c == ("out of events", "timed simulation exceeded its event budget")
            # stopping it again: the loop settles and the run ends by itself
            py, c = _both(monkeypatch, g, {"en": 0}, [(5.0, "en", 1), (60.0, "en", 0)],
                          mode=mode, until=500.0)
            assert py == c and not py[1].truncated


def test_the_default_path_is_the_compiled_loop_and_what_it_cannot_run_falls_back(monkeypatch):
    calls = []
    real = compiled_timedsim.run
    monkeypatch.setattr(compiled_timedsim, "run", lambda *a, **k: calls.append(1) or real(*a, **k))
    monkeypatch.delenv(compiled.ENV, raising=False)
    g = _ring(2)
    simulate(g, {"en": 0}, [(5.0, "en", 1)], until=50.0)
    assert calls == [1]
    # a UDP is a gate with an expression (a cell function): compiled as well
    design = hazlint.load_design(os.path.join(FIX, "frontend", "udp.v"))
    assert any(d.get("op") == "expr" for _, d in design.graph.nodes(data=True))
    src = next(n for n, d in design.graph.nodes(data=True) if d["kind"] == "input")
    simulate(design.graph, {}, [(1.0, src, 1)])
    assert calls == [1, 1]
    # an expression the C side does not read exactly as Python does (a pin counted from the
    # end) runs in Python, with the same trace
    g2 = build_graph(["a", "b"], [("y", "and", ["a", "b"], (1, 2))], ["y"])
    g2.nodes["y"].update(op="expr", expr=("xor", ("in", 0), ("in", -1)))
    assert not _compiles(g2)
    py, c = _both(monkeypatch, g2, {"a": 0, "b": 0}, [(1.0, "a", 1), (4.0, "b", 1)])
    assert py == c and py[1].changes("y") == [(2.0, 1), (6.0, 0)]
    monkeypatch.delenv(compiled.ENV)
    assert calls == [1, 1]
    # the switch and a missing extension turn it off too
    monkeypatch.setenv(compiled.ENV, "python")
    simulate(g, {"en": 0}, [(5.0, "en", 1)], until=50.0)
    monkeypatch.delenv(compiled.ENV)
    monkeypatch.setattr(compiled, "_LOOP", None)
    simulate(g, {"en": 0}, [(5.0, "en", 1)], until=50.0)
    assert calls == [1, 1]


def test_watch_sets_with_one_fan_in_share_the_cone_and_its_set_up():
    design = hazlint.load_design(_netlist("c880.v"))
    g = design.graph
    sinks = sorted((n for n, d in g.nodes(data=True) if d["kind"] == "sink"),
                   key=lambda s: -len(nx.ancestors(g, s)))
    s = sinks[0]
    cone = fanin_cone(g, [s])
    inside = sorted(n for n in cone if n != s)[:5]
    # the waveform's nets inside the target's cone: the same cone object
    assert fanin_cone(g, inside + [s]) is cone
    assert set(cone) == nx.ancestors(g, s) | {s}      # networkx's own ancestor walk
    # a sub-graph view holding the whole cone (the delay search's) shares it as well
    assert fanin_cone(g.subgraph(set(cone) | set(sinks[1:3])), [s]) is cone
    # a view without part of the cone has a smaller cone of its own
    part = g.subgraph(set(cone) - {inside[0]} | {s})
    small = fanin_cone(part, [s])
    assert small is not cone and set(small) == nx.ancestors(part, s) | {s}
    # replays of different transitions keep a few steady states with the cone, not all
    ins = sorted(n for n in cone if g.nodes[n]["kind"] == "input")
    rng = random.Random(1)
    for _ in range(10):
        before = {n: rng.randint(0, 1) for n in ins}
        after = dict(before, **{ins[0]: 1 - before[ins[0]]})
        replay(g, s, before, after, watch=[s])
    prep = timedsim._cone(g, [s]).prep
    assert 1 <= sum(1 for k in prep if k[1] in ("steady", "csteady")) <= 4


def test_replays_on_shared_cones_equal_fresh_simulations(monkeypatch):
    # the kept set-up never changes a trace: each replay against a simulation of a fresh copy
    # of the cone with nothing kept, by the Python loop
    design = hazlint.load_design(_netlist("c432.v"))
    g = design.graph
    rng = random.Random(8)
    sinks = sorted(n for n, d in g.nodes(data=True) if d["kind"] == "sink")
    for _ in range(25):
        s = rng.choice(sinks)
        cone_nodes = nx.ancestors(g, s) | {s}
        ins = sorted(n for n in cone_nodes if g.nodes[n]["kind"] == "input")
        before = {n: rng.randint(0, 1) for n in ins}
        after = {n: v ^ (rng.random() < 0.3) for n, v in before.items()}
        asg = _random_assignment(rng, g.subgraph(cone_nodes))
        nets = rng.sample(sorted(cone_nodes), 4)
        monkeypatch.delenv(compiled.ENV, raising=False)
        gl, tr = replay(g.subgraph(cone_nodes), s, before, after, asg, settle=10.0,
                        watch=nets)
        monkeypatch.setenv(compiled.ENV, "python")
        fresh = nx.DiGraph(g.subgraph(cone_nodes))
        evs = [(10.0 + asg.offsets.get(n, 0.0), n, v) for n, v in after.items()
               if before[n] != v]
        ref = simulate(fresh, before, evs, assignment=asg, watch=set(nets) | {s})
        assert tr == ref


def test_the_loop_rejects_arrays_that_do_not_fit():
    loop = compiled.timed_loop()
    q = lambda *xs: array("q", xs)            # noqa: E731
    d = lambda *xs: array("d", xs)            # noqa: E731
    kind, op = bytes([0, 1]), bytes([0, compiled_timedsim.OPS["not"]])
    good = (kind, op, q(0, 0, 1), q(0), q(0, 0, 0), q(), d(1.0, 1.0), q(0, 1, 1), q(0), d(0.0), bytes([0, 1]),
            d(1.0), q(0), bytes([1]), None, None, False, 100)
    status, count, end, recs = loop.run(*good)
    assert (status, count, end) == (0, 2, 2.0)
    with pytest.raises(ValueError):
        loop.run(*((kind, op, q(0, 0)) + good[3:]))              # in_ptr too short
    with pytest.raises(IndexError):
        loop.run(*(good[:12] + (q(5),) + good[13:]))             # event on no node
    with pytest.raises(ValueError):
        loop.run(*((kind, bytes([0, 0])) + good[2:]))            # a gate without an op
    expr = bytes([0, compiled_timedsim.EXPR])
    with pytest.raises(ValueError):                              # code reading pin 3 of 1
        loop.run(*((kind, expr, q(0, 0, 1), q(0), q(0, 0, 2), q(0, 3)) + good[6:]))
    with pytest.raises(ValueError):                              # code leaving no value
        loop.run(*((kind, expr, q(0, 0, 1), q(0), q(0, 0, 2), q(2 + 1, 2)) + good[6:]))
    with pytest.raises(IndexError):
        loop.settle(q(0, 7), kind, op, q(0, 0, 1), q(0), q(0, 0, 0), q(), bytearray(2))
