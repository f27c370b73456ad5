"""The rule for glitch-sensitive pins driven by logic, on gate graphs built directly."""
from __future__ import annotations

from graphbuild import GraphBuilder
from hazlint.analysis.context import AnalysisContext
from hazlint.config import Config
from hazlint.plugins import get_rule

RULE = get_rule("unregistered-async")


def run(design, config=None):
    ctx = AnalysisContext(design, config, {RULE.id: RULE.resolve_options({})})
    return list(RULE.check(design, ctx))


def test_registered_reset_through_buffers_is_clean():
    b = GraphBuilder()
    clk, rst_n, d = b.input("clk"), b.input("rst_n"), b.input("d")
    sync = b.register("rst_sync", {"clock": clk, "data": rst_n})
    b.gate("rb", "buf", [sync])
    b.gate("rn", "not", ["rb"])
    q = b.register("q", {"clock": clk, "data": d, "reset": "rn"})
    b.output("y", q)
    assert run(b.design()) == []


def test_reset_from_logic_is_reported_at_the_register():
    b = GraphBuilder()
    clk, estop_n, key, d = b.input("clk"), b.input("estop_n"), b.input("maint_key"), b.input("d")
    b.gate("kn", "not", [key])
    b.gate("clr_n", "and", [estop_n, "kn"])
    q = b.register("fault", {"clock": clk, "data": d, "reset": "clr_n"}, line=30)
    b.output("y", q)
    (f,) = run(b.design())
    assert f.kind == "unregistered-async" and f.line == 30
    assert f.evidence["sink_node"] == "<sink>fault.reset"
    assert f.evidence["source_nodes"] == ["estop_n", "maint_key"]
    # declaring the maintenance key quasi-static leaves one toggling source without reconvergence
    assert run(b.design(), Config(static_inputs=["maint_key"])) == []


def test_clock_gated_by_logic_and_by_a_static_enable():
    b = GraphBuilder()
    clk, en, d = b.input("clk"), b.input("en"), b.input("d")
    b.gate("gclk", "and", [clk, en])
    b.register("q", {"clock": "gclk", "data": d})
    (f,) = run(b.design())
    assert f.evidence["role"] == "clock" and "clock of t.q" in f.message
    b = GraphBuilder()
    clk, en, d = b.input("clk"), b.input("en", attrs={"hazlint_static": 1}), b.input("d")
    b.gate("gclk", "and", [clk, en])
    b.register("q", {"clock": "gclk", "data": d})
    assert run(b.design()) == []


def test_single_source_reconverging_inside_the_cone_is_reported():
    b = GraphBuilder()
    clk, d = b.input("clk"), b.input("d")
    b.gate("cn", "not", [clk])
    b.gate("pulse", "and", [clk, "cn"])       # a pulse generator: clk and its delayed inverse
    b.register("q", {"clock": "pulse", "data": d})
    (f,) = run(b.design())
    assert f.evidence["stems"] == ["clk"] and f.evidence["source_nodes"] == ["clk"]


def test_asynchronous_output_by_attribute_or_configuration():
    def build(attrs=None):
        b = GraphBuilder()
        a, c = b.input("guard_closed"), b.input("two_hand")
        b.gate("v", "and", [a, c])
        b.output("valve_enable", "v", attrs=attrs)
        b.output("lamp", "v")
        return b.design()
    assert run(build()) == []                       # plain outputs are not checked
    (f,) = run(build({"hazlint_async": 1}))
    assert f.evidence["sink_node"] == "<sink>valve_enable" and f.evidence["role"] == "output"
    (f,) = run(build(), Config(async_outputs=["valve_*"]))
    assert f.evidence["sink_node"] == "<sink>valve_enable"
