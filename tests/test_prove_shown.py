"""The prover spends its timed replays on the findings the report shows: it decides every
finding without replay, picks the shown ones with the fold's own grouping and ranking
(:func:`hazlint.findings.fold.primaries`), and replays, draws and fixes only those. The final
fold must show exactly the findings chosen, and a deferred finding that is not shown is never
built."""
from __future__ import annotations

import importlib.resources
import os
import shutil

import pytest

from hazlint import api
from hazlint.analysis import refine as R
from hazlint.analysis.ternary import classify_explicit
from hazlint.diagnostics import PROVEN_HAZARD_KINDS, Diagnostic, Location, Severity
from hazlint.findings import fold as F
from hazlint.findings.netgroup import SinkNets

FIX = os.path.join(os.path.dirname(__file__), "..", "fixtures")


def _place(d):
    ev = F.placing_evidence(d)
    return (d.rule, d.location.path, d.location.line, d.location.column, d.instance,
            ev.get("stem_node"), ev.get("sink_node"))


def _spied_lint(monkeypatch, files, **options):
    """Lint with the pipeline's prover call observed: the findings it received, which it
    chose to show, what it returned; and the folded result."""
    seen: dict = {}
    real = R.refine

    def spy(design, diags, context, opts, shown=None):
        assert shown is not None, "the pipeline hands the prover the fold's choice"

        def choose(stand_ins):
            got = list(shown(stand_ins))
            seen["chosen"] = sorted(_place(stand_ins[k]) for k in got)
            return got
        seen["in"] = list(diags)
        seen["deferred"] = [d for d in diags if "_build" in d.__dict__]
        seen["out"] = real(design, diags, context, opts, shown=choose)
        seen["context"] = context
        return seen["out"]
    monkeypatch.setattr(R, "refine", spy)
    seen["result"] = api.lint(files, use_cache=False, time_budget=0, jobs=1, **options)
    return seen


def _check_shown(seen, limit=200):
    ctx = seen["context"]
    out = seen["out"]
    # the fold, run on what the prover returned, shows the findings the prover chose
    shown = F.primaries(out, ctx.sensitive_sinks, ctx.describe, SinkNets.of(ctx))
    assert sorted(_place(out[k]) for k in shown) == seen["chosen"]
    # those that are proven hazards got the full treatment (within the limit of the run)
    proven = [out[k] for k in shown if out[k].kind in PROVEN_HAZARD_KINDS]
    assert proven and len(proven) <= limit
    for d in proven:
        assert d.evidence["glitch"]["how"], d.message      # replayed (or searched)
        assert "waveform_nets" in d.evidence, d.message
        assert not any("left out" in n for n in d.notes), d.message
    # and the report's findings are those
    folded = [d for d in seen["result"].diagnostics if d.kind in PROVEN_HAZARD_KINDS]
    assert sorted(_place(d)[:5] for d in folded) == sorted(_place(d)[:5] for d in proven)
    return shown


@pytest.mark.slow
@pytest.mark.parametrize("name", ["c432.v", "c880.v"])
def test_iscas_outputs_the_prover_shows_what_the_fold_shows(monkeypatch, name):
    # ISCAS-85 (Brglez & Fujiwara 1985; netlists of the PyPI package circuitgraph)
    path = str(importlib.resources.files("circuitgraph") / "netlists" / name)
    seen = _spied_lint(monkeypatch, [path],
                       rule_options={"unbalanced-reconvergence": {"scope": "outputs"}})
    shown = _check_shown(seen)
    out, ctx = seen["out"], seen["context"]
    graph = seen["result"].design.graph
    keep = {id(out[k]) for k in shown}
    # findings that are not shown: the verdict stands, no replay; a deferred one was not built
    # by the prover (its text is made when read) and reads as a finding with its verdict
    left = [d for d in out if id(d) not in keep]
    assert left and all(d.kind in PROVEN_HAZARD_KINDS for d in left)
    assert seen["deferred"], "the compiled reconvergence path yields deferred findings"
    unbuilt = [d for d in seen["deferred"] if "_build" in d.__dict__]
    assert len(unbuilt) >= len(seen["deferred"]) - len(shown)
    for d in left[:: max(1, len(left) // 25)]:
        assert "_build" in d.__dict__
        assert d.evidence["glitch"] == {"how": "", "occurs": False}
        assert any(n.startswith("timed replay, delay search and waveform left out: the report "
                                "shows another finding") for n in d.notes)
        w = d.evidence["witness"]
        before, after = dict(w["before_nodes"]), dict(w["after_nodes"])
        # brute force: Eichelberger's ternary simulation of the witness transition, explicit
        # (every input given), shows the hazard the finding names
        assert classify_explicit(graph, d.evidence["sink_node"], before, after) == d.kind
    assert ctx is not None


def test_demo_the_prover_shows_what_the_fold_shows(monkeypatch, tmp_path):
    # the demo (our own press controller): two hazards at glitch-sensitive sinks, each found
    # by both hazard rules (the fold's two-rule groups), and a loop
    demo = tmp_path / "demo"
    shutil.copytree(os.path.join(FIX, "demo"), demo, ignore=shutil.ignore_patterns("fixed"))
    seen = _spied_lint(monkeypatch, None, cwd=str(demo))
    shown = _check_shown(seen)
    out = seen["out"]
    kinds = {out[k].rule for k in shown}
    assert {"unbalanced-reconvergence", "combinational-loop"} <= kinds
    # the other rule's finding at a shown problem: its verdict over the change model is
    # there (the fold quotes its notes and fix tail) without a replay of its own
    pins = [d for d in out if d.rule == "unregistered-async"]
    assert pins and all(any(n.startswith("change model:") for n in d.notes) for d in pins)


def _finding(rule, kind, sev, line, ev):
    return Diagnostic(rule=rule, kind=kind, severity=sev, location=Location("x.v", line),
                      instance=f"top.g{line}", message="m", evidence=ev)


def test_primaries_are_the_findings_fold_keeps():
    # four findings of one problem (a hazard at sink S) and one of none: the fold shows the
    # proven one at the glitch-sensitive sink (most severe first), and the lone note
    ev = lambda stem, skew: {"stem_node": stem, "sink_nodes": ["S"], "skew": skew}  # noqa: E731
    ds = [_finding("unbalanced-reconvergence", "unbalanced-reconvergence", Severity.WARNING,
                   1, ev("a", 5.0)),
          _finding("unbalanced-reconvergence", "static-1-hazard", Severity.WARNING, 2,
                   ev("b", 1.0)),
          _finding("unbalanced-reconvergence", "static-1-hazard", Severity.ERROR, 3,
                   ev("c", 2.0)),
          _finding("note", "analysis-incomplete", Severity.WARNING, 4, {}),
          _finding("unbalanced-reconvergence", "static-1-hazard", Severity.ERROR, 5,
                   ev("d", 3.0))]
    got = F.primaries(ds, {"S"}, str)
    assert got == [3, 4]
    folded = F.fold(ds, {"S"}, str)
    assert sorted(d.location.line for d in folded) == [ds[k].location.line for k in got]
