"""The event-driven simulator's delay semantics on small hand-checked cases."""
from __future__ import annotations

from hazlint.analysis.timedsim import DelayAssignment, build_graph, simulate


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
