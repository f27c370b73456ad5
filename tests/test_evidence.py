"""Typed evidence: each built-in kind's finding carries its own dataclass, which serialises to
the dict the reports print, survives the result cache's codec and pickling (what the worker
processes ship) unchanged, and reads as that dict.

The design is the textbook sum of products a&~b | b&c (static-1 hazard when b changes with
a = c = 1: common practice, any switching-theory text) driving an asynchronous reset, so the
run has a reconvergence, a glitch-sensitive pin, a proof and a fold.
"""
from __future__ import annotations

import json
import pickle

from hazlint import api
from hazlint.findings.evidence import (AsyncSinkEvidence, Evidence, ReconvergenceEvidence,
                                       RuleEvidence, Verdict, with_verdict)
from hazlint.store.design import design_codec

SOP = """
module press_clear(input a, input b, input c, input clk, input d, output reg q);
  wire nb, t1, t2, clr_n;
  not g_nb (nb, b);
  and g_t1 (t1, a, nb);
  and g_t2 (t2, b, c);
  or  g_clr (clr_n, t1, t2);
  always @(posedge clk or negedge clr_n)
    if (!clr_n) q <= 1'b0; else q <= d;
endmodule
"""


def _lint(tmp_path, **kw):
    path = tmp_path / "press_clear.v"
    path.write_text(SOP)
    return api.lint([str(path)], cwd=str(tmp_path), use_cache=False, **kw)


def test_builtin_findings_carry_typed_evidence_that_round_trips(tmp_path):
    raw = _lint(tmp_path, prove=False).diagnostics
    kinds = {type(d.evidence) for d in raw}
    assert AsyncSinkEvidence in kinds, [(d.rule, type(d.evidence)) for d in raw]
    res = _lint(tmp_path)
    proven = [d for d in res.diagnostics if d.kind == "static-1-hazard"]
    assert proven, [(d.kind, d.message) for d in res.diagnostics]
    d = proven[0]
    ev = d.evidence
    assert isinstance(ev, Evidence) and isinstance(ev.verdict, Verdict)
    assert ev.verdict.classification == "static-1-hazard" and ev.folded is not None
    # common practice: the hazard needs a = c = 1 while b changes
    assert ev["witness"]["inputs"] == {"a": 1, "c": 1}
    assert list(ev["witness"]["transition"]) == ["b"]
    # the mapping view is exactly the serialised dict, keys in field order
    assert dict(ev) == ev.to_dict() and list(ev) == list(ev.to_dict())
    # the result cache's codec and pickling give back equal, still typed findings
    codec = design_codec()
    for back in (codec.decode(codec.encode(list(res.diagnostics))),
                 pickle.loads(pickle.dumps(list(res.diagnostics)))):
        assert back == list(res.diagnostics)
        assert [type(x.evidence) for x in back] == [type(x.evidence) for x in res.diagnostics]
        assert [json.dumps(x.to_json(), sort_keys=True) for x in back] == \
            [json.dumps(x.to_json(), sort_keys=True) for x in res.diagnostics]


def test_a_plain_dict_gains_a_verdict_in_place():
    ev = with_verdict({"pin": "@q.reset", "sink_node": "@q.reset"},
                      Verdict(classification="inconclusive", sink_node="@q.reset",
                              inconclusive_reason="budget"))
    assert isinstance(ev, RuleEvidence)
    # a key the rule gave keeps its place (dict.setdefault semantics), new keys follow
    assert list(ev) == ["pin", "sink_node", "classification", "inconclusive_reason"]
    assert ev.verdict.note() == "hazard proof inconclusive: budget"
    r = ReconvergenceEvidence(stem_node="b", reconvergence_node="f", sink_nodes=["s"],
                              skew=2, fast_path=["b", "f"], slow_path=["b", "n", "f"],
                              fast_arrival=1.0, slow_arrival=3.0, slow_pin="A", fast_pin="B",
                              key="k")
    assert r == dict(r) and r["skew"] == 2 and "verdict" not in r
