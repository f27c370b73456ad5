"""The event-driven simulator's delay semantics on small hand-checked cases."""
from __future__ import annotations

from hazlint.analysis.circuits import build_graph
from hazlint.analysis.timedsim import DelayAssignment, simulate


def _buf(rise, fall):
    return build_graph(["a"], [("y", "buf", ["a"], (rise, fall))], ["y"])


def test_inertial_swallows_short_pulses_transport_keeps_them():
    g = _buf(3, 3)
    ev = [(10, "a", 1), (12, "a", 0), (20, "a", 1), (25, "a", 0)]
    inert = simulate(g, {"a": 0}, ev, mode="inertial")
    trans = simulate(g, {"a": 0}, ev, mode="transport")
    # a 2-wide pulse through a 3-delay gate: gone (inertial), delayed (transport)
    assert inert.changes("y") == [(23, 1), (28, 0)]
    assert trans.changes("y") == [(13, 1), (15, 0), (23, 1), (28, 0)]


def test_unequal_rise_fall_and_transport_deletion_rule():
    g = _buf(5, 1)
    # a 2-wide pulse: rise scheduled at 15, fall at 13 -> the later rise is deleted (VHDL rule)
    tr = simulate(g, {"a": 0}, [(10, "a", 1), (12, "a", 0)], mode="transport")
    assert tr.changes("y") == []
    tr = simulate(g, {"a": 0}, [(10, "a", 1), (17, "a", 0)], mode="transport")
    assert tr.changes("y") == [(15, 1), (18, 0)]


def test_wire_delays_per_pin_make_a_gate_glitch():
    # y = a xor a never changes with equal pins; an extra delay on one pin makes a pulse
    g = build_graph(["a"], [("y", "xor", ["a", "a"], 1)], ["y"])
    assert simulate(g, {"a": 0}, [(0, "a", 1)]).changes("y") == []
    asg = DelayAssignment(wires={("a", "y", 1): 4.0}, mode="transport")
    assert simulate(g, {"a": 0}, [(0, "a", 1)], assignment=asg).changes("y") == [(1, 1), (5, 0)]
    back = DelayAssignment.from_json(asg.to_json())
    assert back == asg


def test_kept_tables_give_the_same_traces_as_a_fresh_simulation():
    # the delay search keeps the steady state and delay tables between trials (``prep``): every
    # trial must see exactly what a fresh simulation computes, whatever pin and wire delays
    # the trial assigns and in whatever order the trials come
    import random
    from hazlint.analysis.circuits import random_circuit
    rng = random.Random(11)
    for _ in range(40):
        g = random_circuit(rng, rng.randint(2, 6), rng.randint(3, 14), rng.randint(1, 3))
        ins = [n for n, d in g.nodes(data=True) if d["kind"] == "input"]
        gates = [n for n, d in g.nodes(data=True) if d["kind"] == "gate"]
        edges = [(u, v, p) for v in gates for p, u in enumerate(g.nodes[v]["inputs"])]
        prep = {}
        for _trial in range(6):
            initial = {n: rng.randint(0, 1) for n in ins}
            events = [(float(rng.randint(0, 6)), rng.choice(ins), rng.randint(0, 1))
                      for _ in range(3)]
            pins = {(n, p): (float(rng.randint(1, 4)), float(rng.randint(1, 4)))
                    for n in rng.sample(gates, min(2, len(gates)))
                    for p in range(len(g.nodes[n]["inputs"]))}
            wires = {e: float(rng.randint(0, 3)) for e in rng.sample(edges, min(3, len(edges)))}
            asg = DelayAssignment(rng.choice(["min", "max"]), pins=pins, wires=wires,
                                  mode=rng.choice(["inertial", "transport"]))
            fresh = simulate(g, initial, events, assignment=asg)
            kept = simulate(g, initial, events, assignment=asg, prep=prep)
            plain = simulate(g, initial, events, assignment=DelayAssignment(asg.corner,
                                                                            mode=asg.mode))
            again = simulate(g, initial, events, assignment=DelayAssignment(asg.corner,
                                                                            mode=asg.mode),
                             prep=prep)
            assert fresh.waves == kept.waves and plain.waves == again.waves


def test_delay_search_is_bounded_by_its_event_budget():
    # F = A.B' + B.C (the textbook static-1 case, common practice) with both branches of B
    # equally slow: no glitch at the nominal delays, one under unequal wire delays
    from hazlint.analysis.ternary import cone
    from hazlint.analysis.delaysearch import search_assignment
    g = build_graph(["A", "B", "C"], [("nb", "not", ["B"], 1), ("t1", "and", ["A", "nb"], 1),
                                      ("t2", "and", ["B", "C"], 2), ("F", "or", ["t1", "t2"], 1)],
                    ["F"])
    t = "<sink>F"
    order = cone(g, [t])
    before, after = {"A": 1, "B": 1, "C": 1}, {"A": 1, "B": 0, "C": 1}
    asg, gl, how = search_assignment(g, t, before, after, order, trials=150)
    assert asg is not None and gl.occurs and how == "arbitrary"
    # the budget counts simulation events over all trials; spent, the search says so
    asg, gl, how = search_assignment(g, t, before, after, order, trials=150, event_budget=12)
    assert asg is None and gl is None
    assert "budget of 12 simulation events" in how and "search_events" in how
    assert " of 150 trials" in how
