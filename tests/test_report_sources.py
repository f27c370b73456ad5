"""Where reports take their facts from: a loop path is labelled from the rule's proof request
(not from kind strings), node-id evidence keys from the evidence class's declaration (not
from key names), and the result cache's key leaves out the report-only configuration keys."""
from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

from hazlint.diagnostics import Diagnostic, Hop, Location, Severity
from hazlint.findings.evidence import (AsyncSinkEvidence, Evidence, LoopEvidence, RuleEvidence,
                                       Verdict, with_verdict)
from hazlint.findings.public import public_evidence
from hazlint.report.lsp import to_lsp
from hazlint.report.sarif import _flow_message

from test_pipeline import _cli, _project


def _loop(evidence) -> Diagnostic:
    here = Location("t.v", 3, 1)
    flow = (Hop("n1", "g1", "and", here), Hop("n2", "g2", "or", here))
    return Diagnostic(rule="combinational-loop", kind="combinational-loop",
                      severity=Severity.INFO, location=here, instance="t.g1",
                      message="loop", evidence=evidence, flows=(flow,))


@dataclass(frozen=True, eq=False, repr=False)
class _Probe(Evidence):
    probe: str
    seen: list
    note: str
    NODE_FIELDS: ClassVar[frozenset] = frozenset(("probe", "seen"))


def _related(d: Diagnostic) -> str:
    return to_lsp(d, "", "/", {}).related_information[0].message


def test_loop_path_label_comes_from_the_proof_request():
    loop = _loop(LoopEvidence(cycle=["n1", "n2"], scc=["n1", "n2"], storage_element=None))
    assert _flow_message(loop, 0) == "loop"
    assert _related(loop).startswith("loop: ")
    # the same kind, but evidence the rule's hook cannot read as a loop: a path, not a loop
    other = _loop(RuleEvidence(data={"note": "no component"}))
    assert _flow_message(other, 0) == "path 1 of 1"
    assert _related(other).startswith("path 1: ")


def test_node_id_fields_are_declared_by_the_evidence_class():
    ev = AsyncSinkEvidence(sink_node="<sink>u.q.reset#2", role="reset",
                           source_nodes=["@u.a", "b"], quiet_nodes=[], stems=["@u.a"],
                           cone_gates=1, key="async:@u.a")
    v = with_verdict(ev, Verdict(classification="inconclusive", waveform_nets=["@u.a"]))
    out = public_evidence(v)
    assert out["sink_node"] == "u.q.reset" and out["source_nodes"] == ["u.a", "b"]
    assert out["stems"] == ["u.a"] and out["waveform_nets"] == ["u.a"]
    assert out["key"] == "async:@u.a"                 # not a node-id field: as written
    # a new evidence class says which of its fields hold node ids, whatever their names
    assert public_evidence(_Probe(probe="@u.p", seen=["@u.p"], note="@u.p")) == \
        {"probe": "u.p", "seen": ["u.p"], "note": "@u.p"}
    # a plain dict from another package's rule: its *_node(s) keys are node ids
    plain = public_evidence({"probe_node": "@u.p", "trail": ["@u.p"]})
    assert plain == {"probe_node": "u.p", "trail": ["@u.p"]}


def test_changing_the_report_format_key_reuses_the_cached_findings(tmp_path, monkeypatch):
    import hazlint.pipeline as pipeline
    calls = []
    real = pipeline.findings
    monkeypatch.setattr(pipeline, "findings", lambda *a, **k: calls.append(1) or real(*a, **k))
    _project(tmp_path, 'format = "json"\n')
    code, out, _ = _cli(["check", "--no-prove", "--scope", "outputs"], tmp_path)
    assert code == 1 and out.lstrip().startswith("[") and calls == [1]
    # another format (and worker count): the same findings, from the result cache
    _project(tmp_path, 'format = "text"\njobs = 1\n')
    code, out, _ = _cli(["check", "--no-prove", "--scope", "outputs"], tmp_path)
    assert code == 1 and "sel.v" in out and not out.lstrip().startswith("[")
    assert calls == [1]
    # a key that changes the findings still misses
    _project(tmp_path, 'format = "text"\nasync_outputs = ["y"]\n')
    _cli(["check", "--no-prove", "--scope", "outputs"], tmp_path)
    assert calls == [1, 1]
