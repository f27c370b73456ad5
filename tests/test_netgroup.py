"""One finding per glitching net (hazlint.findings.netgroup), and the per-pin identities it
keeps for baselines and acceptances written before pins were folded.

Fixture ``fixtures/rules/reset_fanout.v``: eight history registers whose asynchronous reset
is ``estop_n & maint_n`` (logic), and a fault flag whose reset is that net OR'ed with
``guard_closed`` (another net, another verdict). ``reset_fanout.baseline.json`` beside it was
written by hazlint at main 3f87c23 (before this change: one finding per pin) with
``hazlint check reset_fanout.v --write-baseline reset_fanout.baseline.json``.
"""
from __future__ import annotations

import json
import re
import shutil
from pathlib import Path

import networkx as nx
import pytest

from hazlint.api import lint
from hazlint.baseline import load_baseline
from hazlint.config import load_config
from hazlint.diagnostics import Diagnostic, Location, Severity
from hazlint.findings.evidence import AsyncSinkEvidence, Verdict, with_verdict
from hazlint.findings.fold import fold
from hazlint.findings.netgroup import SinkNets
from support import yosys

ROOT = Path(__file__).resolve().parent.parent
FIXTURE = ROOT / "fixtures" / "rules" / "reset_fanout.v"
OLD_BASELINE = ROOT / "fixtures" / "rules" / "reset_fanout.baseline.json"


@pytest.fixture(scope="module")
def project(tmp_path_factory):
    d = tmp_path_factory.mktemp("netgroup")
    shutil.copy(FIXTURE, d / "reset_fanout.v")
    shutil.copy(OLD_BASELINE, d / "old.json")
    return d


@pytest.fixture(scope="module")
def rtl_result(project):
    return lint([str(project / "reset_fanout.v")], use_cache=False)


def _net_finding(result):
    nets = [d for d in result.diagnostics if str(d.evidence.get("problem", "")).startswith("net:")]
    assert len(nets) == 1, [d.message for d in result.diagnostics]
    return nets[0]


@pytest.mark.slow
def test_yosys_synthesised_reset_net_is_one_finding_listing_every_flip_flop(tmp_path):
    shutil.copy(FIXTURE, tmp_path / "reset_fanout.v")
    log = yosys.run("read_verilog reset_fanout.v; synth -top reset_fanout; "
                    "select -count t:*DFF*; select -count w:clear_n %co:+[R] t:*DFF* %i; "
                    "write_verilog -noexpr synth.v", tmp_path)
    # yosys' own count: every flip-flop, and those whose reset pin R is net clear_n
    flops, on_net = [int(x) for x in re.findall(r"^(\d+) objects\.", log, re.M)]
    assert (flops, on_net) == (9, 8)
    r = lint([str(tmp_path / "synth.v")], use_cache=False)
    net = _net_finding(r)
    ev = net.evidence
    assert ev["net"] == "clear_n" and ev["pin_count"] == on_net
    assert ev["pin_roles"] == {"reset": on_net}
    assert net.message.startswith(f"static-0 hazard at net clear_n ({on_net} asynchronous resets)")
    # the place to edit is the net's driver: the $_AND_ cell yosys wrote for clear_n
    text = (tmp_path / "synth.v").read_text().splitlines()
    assert ".Y(clear_n)" in "\n".join(text[net.location.line - 1:net.location.line + 4])
    # every pin is kept: the lead pin plus the others in `also`, and as related locations
    pins = {m["pin"] for m in ev["also"] if "pin" in m}
    assert len(pins) == on_net - 1 and len(net.related) == on_net
    # the fault flag's reset is another net (clear_n OR guard_closed): its own finding
    rest = [d for d in r.diagnostics if d is not net]
    assert [d.evidence["problem"] for d in rest] == ["hazard:fault.reset"]
    assert len(r.diagnostics) == flops - on_net + 1


def test_sarif_has_one_result_per_net_with_the_pins_as_related_locations(rtl_result):
    from hazlint.report.sarif import build_sarif
    log = build_sarif(rtl_result.diagnostics, root=str(FIXTURE.parent))
    results = log["runs"][0]["results"]
    assert len(results) == 2
    net = next(x for x in results if "relatedLocations" in x)
    assert [x["message"]["text"].split(" (")[0] for x in net["relatedLocations"]] == \
        [f"asynchronous reset hist[{i}].reset" for i in range(8)]


def test_baseline_written_per_pin_by_the_previous_version_still_matches(project, rtl_result):
    old = load_baseline(project / "old.json")
    assert len(old) == 9                               # 8 history pins + the fault flag
    new, known = old.split(rtl_result.diagnostics)
    assert new == [] and len(known) == 2
    assert old.fixed(rtl_result.diagnostics) == []
    # a pin the baseline does not hold (a register added to the net since) makes it new
    doc = json.loads((project / "old.json").read_text())
    doc["findings"] = [e for e in doc["findings"] if "hist[3]" not in e["message"]]
    (project / "partial.json").write_text(json.dumps(doc))
    new, known = load_baseline(project / "partial.json").split(rtl_result.diagnostics)
    assert [d.evidence["problem"] for d in new] == ["net:clear_n"]


def _accept(project, glob, name):
    (project / name).write_text(f'[[accept]]\nrule = "unregistered-async"\n'
                                f'instance = "{glob}"\nreason = "history cleared by software"\n')
    (project / "hazlint.toml").write_text(f'files = ["reset_fanout.v"]\naccept_file = "{name}"\n')
    return lint(config=load_config(path=str(project / "hazlint.toml")), use_cache=False)


def test_acceptance_of_one_pin_leaves_the_net_reported_for_the_others(project):
    r = _accept(project, "reset_fanout.hist[[]3]", "one.toml")
    assert not any(d.rule == "unused-acceptance" for d in r.diagnostics)   # it matched a pin
    net = _net_finding(r)
    assert any("accepted for 1 of its 8 pins" in n for n in net.notes)
    r = _accept(project, "reset_fanout.hist*", "all.toml")
    assert [d.evidence["problem"] for d in r.waived] == ["net:clear_n"]
    assert [d.evidence["problem"] for d in r.diagnostics] == ["hazard:fault.reset"]


# -- the fold itself, on a small graph: pins of one driver fold only with the same verdict ----

def _graph():
    g = nx.DiGraph()
    g.add_node("a", kind="input", name="a")
    g.add_node("b", kind="input", name="b")
    g.add_node("n", kind="gate", op="and", inputs=["a", "b"], name="n", instance="t.g_n",
               path="t.v", line=3)
    g.add_node("nb", kind="gate", op="buf", inputs=["n"], name="nb", instance="t.g_nb",
               path="t.v", line=4)
    for s, drv in (("<sink>q1.reset", "n"), ("<sink>q2.reset", "n"), ("<sink>q3.reset", "nb")):
        g.add_node(s, kind="sink", role="reset", inputs=[drv], name=s[6:], path="t.v", line=9,
                   instance="t." + s[6:8])
    return g


def _pin_finding(sink, transition):
    ev = AsyncSinkEvidence(sink_node=sink, role="reset", source_nodes=["a", "b"],
                           quiet_nodes=[], stems=[], cone_gates=1, key=f"async:{sink}")
    v = Verdict(classification="static-0-hazard", witness={"inputs": {},
                                                          "transition": transition})
    return Diagnostic(rule="unregistered-async", kind="static-0-hazard",
                      severity=Severity.ERROR, location=Location("t.v", 9, 1),
                      instance="t." + sink[6:8], message=f"static-0 hazard at {sink[6:]}: w",
                      evidence=with_verdict(ev, v))


def test_pins_fold_only_when_their_verdicts_agree():
    g = _graph()
    nets = SinkNets(g, lambda n: g.nodes[n]["name"],
                    lambda n: Location(g.nodes[n].get("path", ""), g.nodes[n].get("line", 0), 1))
    sens = {s: "reset" for s in g if s.startswith("<sink>")}
    same = {"a": [0, 1], "b": [1, 0]}
    out = fold([_pin_finding(s, same) for s in sens], sens, nets.name, nets)
    # q3 reads n through a buffer: the same net to the designer
    assert [d.evidence["problem"] for d in out] == ["net:n"]
    assert out[0].location.line == 3 and out[0].instance == "t.g_n"
    assert out[0].evidence["pin_count"] == 3
    # a pin whose shown verdict differs keeps its own finding
    other = [_pin_finding(s, same if s != "<sink>q2.reset" else {"a": [0, 1]}) for s in sens]
    out = fold(other, sens, nets.name, nets)
    assert sorted(d.evidence["problem"] for d in out) == ["hazard:q2.reset", "net:n"]
    assert next(d for d in out if d.evidence["problem"] == "net:n").evidence["pin_count"] == 2


def test_a_witness_and_its_reverse_are_one_verdict():
    # the kinds of hazard are the same for a change and its reverse (time reversal of the
    # transient algebra); the timed replay of the shown pin may turn its witness round, and
    # the other pins of the net, not replayed, keep the direction the proof found
    g = _graph()
    nets = SinkNets(g, lambda n: g.nodes[n]["name"],
                    lambda n: Location(g.nodes[n].get("path", ""), g.nodes[n].get("line", 0), 1))
    sens = {s: "reset" for s in g if s.startswith("<sink>")}
    fwd, back = {"a": [0, 1], "b": [1, 0]}, {"a": [1, 0], "b": [0, 1]}
    ds = [_pin_finding(s, back if s == "<sink>q1.reset" else fwd) for s in sens]
    out = fold(ds, sens, nets.name, nets)
    assert [d.evidence["problem"] for d in out] == ["net:n"]
    assert out[0].evidence["pin_count"] == 3
    # a different change (b rises too) is not its reverse: that pin stays apart
    ds[1] = _pin_finding("<sink>q2.reset", {"a": [0, 1], "b": [0, 1]})
    out = fold(ds, sens, nets.name, nets)
    assert sorted(d.evidence["problem"] for d in out) == ["hazard:q2.reset", "net:n"]


def test_changed_file_holding_only_pins_of_the_net_keeps_its_finding(tmp_path):
    # the reset logic is in the top's file, the registers in the bank's: a commit that
    # touches only the bank (e.g. adds a register on the net) must still see the net
    (tmp_path / "bank.v").write_text(
        "module bank (input clk, input rst_n, input [1:0] d, output reg [1:0] q);\n"
        "  always @(posedge clk or negedge rst_n)\n"
        "    if (!rst_n) q <= 2'b0; else q <= d;\n"
        "endmodule\n")
    (tmp_path / "top.v").write_text(
        "module top (input clk, input estop_n, input maint_n, input [1:0] d,"
        " output [1:0] q);\n"
        "  wire rst_n = estop_n & maint_n;\n"
        "  bank u_bank (.clk(clk), .rst_n(rst_n), .d(d), .q(q));\n"
        "endmodule\n")
    files = [str(tmp_path / "top.v"), str(tmp_path / "bank.v")]
    r = lint(files, top="top", use_cache=False, changed=[str(tmp_path / "bank.v")])
    net = _net_finding(r)
    assert net.location.path.endswith("top.v") and net.evidence["pin_count"] == 2


def test_the_pins_of_a_net_survive_the_result_cache(project, rtl_result, tmp_path):
    from hazlint.diagnostics import pin_problems
    files = [str(project / "reset_fanout.v")]
    lint(files, cache_dir=str(tmp_path))
    again = lint(files, cache_dir=str(tmp_path))         # from the result cache
    assert [d.to_json() for d in again.diagnostics] == \
        [d.to_json() for d in rtl_result.diagnostics]
    net = _net_finding(again)
    assert [k for k, _ in pin_problems(net)] == [f"hazard:hist[{i}].reset" for i in range(8)]
    assert load_baseline(project / "old.json").split(again.diagnostics)[0] == []
