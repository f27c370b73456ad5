"""Baseline files: record findings, then only new ones count."""
from __future__ import annotations

import json

import pytest

from hazlint.baseline import fingerprint, load_baseline, write_baseline
from hazlint.diagnostics import Diagnostic, Hop, Location, Severity
from hazlint.errors import ConfigError


def diag(instance="press_top.g3", line=10, nets=("a", "b"), rule="reconvergent-hazard",
         path="rtl/press.v"):
    flow = tuple(Hop(net=n, location=Location(path, line)) for n in nets)
    return Diagnostic(rule=rule, kind="static-1-hazard", severity=Severity.ERROR,
                      location=Location(path, line, 1), instance=instance,
                      message=f"hazard at {instance}", flows=(flow,))


def test_round_trip_and_matching(tmp_path):
    f = tmp_path / "hazlint-baseline.json"
    old = [diag(), diag("press_top.g7", 30), diag(rule="comb-loop", nets=("l1", "l2"))]
    assert write_baseline(f, old, root=str(tmp_path)) == 3
    doc = json.loads(f.read_text())
    assert len(doc["findings"]) == 3 and "line" in doc["findings"][0]
    b = load_baseline(f)
    # same findings after an unrelated edit moved every line: all known
    moved = [diag(line=14), diag("press_top.g7", 35), diag(rule="comb-loop", nets=("l1", "l2"),
                                                          line=2)]
    new, known = b.split(moved)
    assert new == [] and len(known) == 3
    # one new finding, one fixed
    now = [diag(line=14), diag("press_top.g9", 50), diag(rule="comb-loop", nets=("l1", "l2"))]
    new, known = b.split(now)
    assert [d.instance for d in new] == ["press_top.g9"]
    assert [e["instance"] for e in b.fixed(now)] == ["press_top.g7"]


def test_changed_evidence_is_new_and_multiplicity_counts(tmp_path):
    f = tmp_path / "b.json"
    write_baseline(f, [diag()], root=str(tmp_path))
    b = load_baseline(f)
    new, _ = b.split([diag(nets=("a", "c"))])   # the circuit along the path changed
    assert len(new) == 1
    new, known = b.split([diag(), diag(line=99)])   # twice the same fingerprint, recorded once
    assert len(known) == 1 and len(new) == 1


def test_waived_findings_not_recorded(tmp_path):
    f = tmp_path / "b.json"
    assert write_baseline(f, [diag().with_waiver("ok"), diag("x")]) == 1


def test_fingerprint_ignores_location():
    assert fingerprint(diag(line=1, path="a.v")) == fingerprint(diag(line=2, path="b.v"))
    assert fingerprint(diag()) != fingerprint(diag(instance="press_top.g4"))


@pytest.mark.parametrize("text,what", [
    ("{not json", "not valid JSON"),
    ('{"findings": []}', "not a hazlint baseline"),
    ('{"hazlint-baseline": 1, "findings": [{"rule": "x"}]}', "fingerprint"),
])
def test_bad_baseline_is_a_clear_error(tmp_path, text, what):
    f = tmp_path / "b.json"
    f.write_text(text)
    with pytest.raises(ConfigError) as e:
        load_baseline(f)
    assert what in str(e.value) and str(f) in str(e.value)
    with pytest.raises(ConfigError):
        load_baseline(tmp_path / "missing.json")
