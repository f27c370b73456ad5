"""The prover's integration: refine() on rule findings, the prove command, and the promise that
every reported hazard is reproduced by the timed simulator under the reported delays."""
from __future__ import annotations

import json
import os
import random
import subprocess
import sys

import pytest

from hazlint.analysis.prove import classify, classify_outputs, loop_behaviour
from hazlint.analysis.refine import refine
from hazlint.analysis.ternary import HAZARD_KINDS, classify_explicit, cone, free_sources
from hazlint.analysis.circuits import build_graph, random_circuit
from hazlint.analysis.timedsim import DelayAssignment, replay
from hazlint.diagnostics import Diagnostic, Location, Severity
from hazlint.netlist.library import Delay

FIX = os.path.join(os.path.dirname(__file__), "..", "fixtures", "hazards")


def _sop(role="output"):
    g = build_graph(["A", "B", "C"], [("nb", "not", ["B"], 2), ("t1", "and", ["A", "nb"], 1),
                                      ("t2", "and", ["B", "C"], 1), ("F", "or", ["t1", "t2"], 1)],
                    ["F"])
    g.nodes["<sink>F"]["role"] = role
    return g


class _Design:
    def __init__(self, g):
        self.graph = g


def _finding(stem, gate, sinks):
    return Diagnostic(rule="reconvergence", kind="unbalanced-reconvergence",
                      severity=Severity.WARNING, location=Location("x.v", 1), instance="g",
                      message="fanout reconverges",
                      evidence={"stem_node": stem, "reconvergence_node": gate,
                                "sink_nodes": sinks, "skew": 2,
                                "fast_path": [stem, "t2", gate],
                                "slow_path": [stem, "nb", "t1", gate]})


def test_refine_proves_the_textbook_hazard_and_offers_the_consensus_term():
    g = _sop(role="reset")             # a glitch-sensitive sink: proven hazard is an error
    out = refine(_Design(g), [_finding("B", "F", ["<sink>F"])], None, {})
    assert len(out) == 1
    d = out[0]
    assert d.kind == "static-1-hazard" and d.severity == Severity.ERROR
    w = d.evidence["witness"]
    # common practice: the hazard needs A = C = 1 while B changes
    assert w["inputs"] == {"A": 1, "C": 1} and list(w["transition"]) == ["B"]
    assert d.evidence["glitch"]["occurs"] and d.evidence["glitch"]["how"] == "nominal"
    assert "A & C" in d.fix and "checked" in d.fix
    assert any("\u203e" in line for line in d.notes)     # the timing diagram is in the notes


def test_refine_severity_absent_and_inconclusive():
    g = _sop()
    d = refine(_Design(g), [_finding("B", "F", ["<sink>F"])], None, {})[0]
    assert d.severity == Severity.WARNING      # proven, but not at a glitch-sensitive sink
    # the fixed circuit: proven absent is dropped, kept as info with show_proven_absent
    h = build_graph(["A", "B", "C"], [("nb", "not", ["B"], 2), ("t1", "and", ["A", "nb"], 1),
                                      ("t2", "and", ["B", "C"], 1), ("t3", "and", ["A", "C"], 1),
                                      ("F", "or", ["t1", "t2", "t3"], 1)], ["F"])
    f = _finding("B", "F", ["<sink>F"])
    assert refine(_Design(h), [f], None, {}) == []
    kept = refine(_Design(h), [f], None, {"show_proven_absent": True})
    assert kept[0].evidence["classification"] == "hazard-free"
    # budgets of nothing: no random vectors, no BDD nodes, no SAT time -> inconclusive
    rng = random.Random(3)
    big = random_circuit(rng, 10, 60, 1, ops=("xor", "and", "or", "nand"))
    sink = next(n for n, x in big.nodes(data=True) if x["kind"] == "sink")
    from hazlint.analysis.prove import path_count
    order = cone(big, [sink])
    src = next(s for s in free_sources(big, order) if path_count(big, order, s, sink) > 1)
    c = classify(big, sink, {src: (0, 1)}, options={"sim_vectors": 1, "node_budget": 1,
                                                    "check_time": 0.0, "conflict_budget": 0})
    if c.classification != "inconclusive":
        # one random vector may hit a hazard; then it must be a real one
        assert c.proven and classify_explicit(big, sink, c.before, c.after) == c.classification
    else:
        assert "budget" in c.reason


def test_refine_same_whether_the_design_is_known_acyclic_or_walked():
    # a design that carries its topological order (known acyclic) skips the loop walk; the
    # verdict is the textbook one either way (common practice: A = C = 1, B changing)
    known = _Design(_sop(role="reset"))
    known.topo_order = list(known.graph)
    walked = _Design(_sop(role="reset"))
    got = [refine(d, [_finding("B", "F", ["<sink>F"])], None, {})[0] for d in (known, walked)]
    assert got[0] == got[1] and got[0].kind == "static-1-hazard"
    assert got[0].evidence["witness"]["inputs"] == {"A": 1, "C": 1}


def test_oscillation_finding_for_a_ring():
    g = build_graph(["en"], [], [])
    for name, op, ins in [("n1", "nand", ["en", "n3"]), ("n2", "not", ["n1"]),
                          ("n3", "not", ["n2"])]:
        g.add_node(name, kind="gate", op=op, inputs=ins, pins=["A", "B"][:len(ins)],
                   delays=[Delay.unit()] * len(ins), name=name, instance=name)
        for p, u in enumerate(ins):
            g.add_edge(u, name, pins=[p])
    loop = Diagnostic(rule="loop", kind="combinational-loop", severity=Severity.WARNING,
                      location=Location("x.v", 1), instance="n1", message="loop",
                      evidence={"cycle": ["n1", "n2", "n3"], "scc": ["n1", "n2", "n3"]})
    out = refine(_Design(g), [loop], None, {})
    assert [d.kind for d in out] == ["combinational-loop", "oscillation"]
    assert out[1].evidence["inputs"] == {"en": 1}
    # and the timed simulator, run from en = 0 to en = 1, does oscillate (common practice)
    from hazlint.analysis.timedsim import simulate
    tr = simulate(g, {"en": 0}, [(0, "en", 1)], until=40)
    assert tr.truncated and len(tr.changes("n1")) >= 5


def test_every_reported_hazard_replays_under_its_delay_assignment():
    rng = random.Random(17)
    reported = replayed = 0
    for _ in range(40):
        g = random_circuit(rng, rng.randint(2, 6), rng.randint(4, 14), 1)
        sink = next(n for n, x in g.nodes(data=True) if x["kind"] == "sink")
        order = cone(g, [sink])
        for src in free_sources(g, order)[:3]:
            c = classify(g, sink, {src: (0, 1)}, order=order, options={"search_trials": 120})
            if not c.proven:
                continue
            reported += 1
            if c.assignment is None:
                continue
            need = 3 if c.classification == "dynamic-hazard" else 2
            # replay from the JSON form the report carries
            asg = DelayAssignment.from_json(c.assignment.to_json())
            gl, _ = replay(g, sink, c.before, c.after, asg)
            assert gl.occurs and len(gl.changes) >= need
            replayed += 1
    assert reported > 20
    # the search found a glitching assignment for every proven hazard here (when it cannot,
    # the report says "not reproduced" and carries no assignment)
    assert replayed == reported, (replayed, reported)


def test_classify_outputs_agrees_with_single_checks():
    rng = random.Random(23)
    for _ in range(6):
        g = random_circuit(rng, 6, 16, 3)
        res = classify_outputs(g, options={"seed": 1})
        for (t, x), proofs in list(res.items())[:8]:
            single = classify(g, t, {x: (0, 1)}, replay_glitch=False).proofs
            for k in HAZARD_KINDS:
                assert proofs[k].status == single[k].status, (t, x, k)


def _cli(*args):
    return subprocess.run([sys.executable, "-m", "hazlint", *args], capture_output=True,
                          text=True, timeout=300)


def test_prove_command_on_fixtures(tmp_path):
    pytest.importorskip("hazlint.frontends.verilog.reader")
    vcd, svg = tmp_path / "w.vcd", tmp_path / "w.svg"
    # F is a plain output: listed at the wider scope, as check lists it (prove is check with
    # more detail: same options, same headline layout)
    r = _cli("prove", os.path.join(FIX, "static1_sop.v"), "--vcd", str(vcd), "--svg", str(svg),
             "--fail-on", "warning", "--scope", "outputs", "--no-cache")
    assert r.returncode == 1, r.stderr
    assert "static1_sop.v:9:" in r.stdout and "static-1 hazard at F" in r.stdout
    assert "[unbalanced-reconvergence]" in r.stdout and "A & C" in r.stdout
    assert "$enddefinitions" in vcd.read_text() and "<polyline" in svg.read_text()
    c = _cli("check", os.path.join(FIX, "static1_sop.v"), "--scope", "outputs", "--no-cache")
    assert c.stdout.splitlines()[0] == r.stdout.splitlines()[0]
    a = _cli("prove", os.path.join(FIX, "static1_sop.v"), "--scope", "outputs", "--no-cache",
             "--ascii", "--format", "text")
    assert a.stdout.isascii() and "static-1 hazard at F" in a.stdout
    j = _cli("prove", os.path.join(FIX, "static1_sop.v"), "--scope", "outputs", "--no-cache",
             "--format", "json")
    assert [row["kind"] for row in json.loads(j.stdout)] == ["static-1-hazard"]
    r = _cli("prove", os.path.join(FIX, "consensus_fixed.v"), "--fail-on", "warning",
             "--scope", "outputs", "--no-cache")
    assert r.returncode == 0 and "hazlint: 0 findings" in r.stdout
    # a user-given double change: two hands released together is a function hazard for an AND
    r = _cli("prove", os.path.join(FIX, "press_valve.v"), "--transition",
             "two_hand_left-,two_hand_right-,guard_closed=1,maint_key=0",
             "--target", "valve_enable")
    assert r.returncode == 0, r.stderr
    r = _cli("prove", os.path.join(FIX, "press_valve.v"), "--transition",
             "two_hand_left+,two_hand_right-,guard_closed=1,maint_key=0",
             "--target", "valve_enable")
    assert "function hazard" in r.stdout, r.stdout
    # the sink and the net driving it are one wire: one row of the waveform
    rows = [line for line in r.stdout.splitlines()
            if line.split()[:1] == ["valve_enable"] and ("\u2191" in line or "\u2193" in line)]
    assert len(rows) == 1, r.stdout
    r = _cli("prove", os.path.join(FIX, "press_valve.v"), "--transition", "nosuch+")
    assert r.returncode == 2 and "nosuch" in r.stderr and "Traceback" not in r.stderr


def test_classify_outputs_on_chosen_sources_and_pairs_agrees_with_single_checks():
    # the restricted, chunked batch (what refine uses) decides exactly what one check per
    # (target, source) decides
    rng = random.Random(29)
    for _ in range(5):
        g = random_circuit(rng, 7, 18, 3)
        sinks = [n for n, x in g.nodes(data=True) if x["kind"] == "sink"]
        srcs = free_sources(g, cone(g, sinks))
        chosen = set(rng.sample(srcs, max(1, len(srcs) // 2)))
        wanted = {(t, x) for t in sinks for x in chosen if rng.random() < 0.7}
        res = classify_outputs(g, sinks, options={"seed": 2}, changing=chosen, wanted=wanted,
                               chunk=2)
        assert set(res) <= wanted
        for (t, x), proofs in res.items():
            single = classify(g, t, {x: (0, 1)}, replay_glitch=False).proofs
            for k in HAZARD_KINDS:
                assert proofs[k].status == single[k].status, (t, x, k)


def test_refine_batch_and_finding_limit_on_iscas_c432(monkeypatch):
    # ISCAS-85 c432 (Brglez & Fujiwara 1985; netlist of the PyPI package circuitgraph==0.2.1)
    import importlib.resources
    from hazlint import api
    from hazlint.analysis import prove as P
    from hazlint.analysis import refine as R
    path = str(importlib.resources.files("circuitgraph") / "netlists" / "c432.v")
    # the reconvergence rule's own findings at the outputs (what refine receives; grouping
    # them per problem comes after the prover)
    monkeypatch.setattr("hazlint.findings.fold.fold", lambda diags, *a, **k: list(diags))
    res = api.lint([path], prove=False, use_cache=False,
                   rule_options={"unbalanced-reconvergence": {"scope": "outputs"}})
    diags = res.diagnostics[:40]
    out = refine(res.design, diags, res.context, {"max_findings": 4,
                                                  "show_proven_absent": True})
    assert len(out) == len(diags)
    full = [d for d in out if "glitch" in d.evidence and "how" in d.evidence["glitch"]
            and (d.evidence["glitch"]["occurs"] or d.evidence["glitch"]["how"])]
    left = [d for d in out if any("left out" in n for n in d.notes)]
    # the limit bounds the replays computed: a finding past it may show the replay of the same
    # change at the same sink done for one of the first four, never a new one
    replays = {json.dumps([d.evidence["witness"], d.evidence["glitch"]], sort_keys=True)
               for d in full}
    assert len(replays) <= 4 and left, (len(replays), len(left))
    assert all("waveform_nets" not in d.evidence for d in left)
    # the batched verdict equals the one-by-one proof (no batch, no known proofs)
    opts = P.options_with_defaults({})
    for d, o in list(zip(diags, out))[:12]:
        plan = R._plan(res.design.graph, d, res.context, opts)
        per_sink = [P.combine(P.classify_sources(res.design.graph, s, xs, opts,
                                                 replay_glitch=False)) for s, xs in plan[1]]
        one = P.combine([c for c in per_sink if c is not None])
        assert o.evidence["classification"] == one.classification, d.message
    kinds = {d.evidence["classification"] for d in out}
    assert "static-1-hazard" in kinds or "static-0-hazard" in kinds
