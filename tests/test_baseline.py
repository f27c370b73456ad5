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
    old = [diag(), diag("press_top.g7", 30), diag(rule="combinational-loop", nets=("l1", "l2"))]
    assert write_baseline(f, old, root=str(tmp_path)) == 3
    doc = json.loads(f.read_text())
    assert len(doc["findings"]) == 3 and "line" in doc["findings"][0]
    b = load_baseline(f)
    # same findings after an unrelated edit moved every line: all known
    moved = [diag(line=14), diag("press_top.g7", 35), diag(rule="combinational-loop", nets=("l1", "l2"),
                                                          line=2)]
    new, known = b.split(moved)
    assert new == [] and len(known) == 3
    # one new finding, one fixed
    now = [diag(line=14), diag("press_top.g9", 50), diag(rule="combinational-loop", nets=("l1", "l2"))]
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


# ---------------------------------------------------------------------------------------------
# through the command line: record, then fail only on new findings

VALVE = """\
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire n_guard, run, bypass;
  not g_inv (n_guard, guard_closed);
  and g_run (run, two_hand, guard_closed);
  and g_byp (bypass, maint_key, n_guard);
  or  g_out (valve_enable, run, bypass);
endmodule
"""
LOOP_GATES = """\
  wire l1, l2;
  nand g_l1 (l1, maint_key, l2);
  and  g_l2 (l2, l1, two_hand);
endmodule
"""


def cli(cwd, *args):
    import os
    import subprocess
    import sys
    # (the valve drives a plain output: listed at the wider scope)
    return subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-prove",
                           "--scope", "outputs", *args],
                          cwd=cwd, capture_output=True, text=True,
                          env=dict(os.environ, HAZLINT_CACHE_DIR=str(cwd / ".c")))


@pytest.mark.slow
def test_cli_baseline_survives_edits_and_catches_new_findings(tmp_path):
    v = tmp_path / "valve.v"
    v.write_text(VALVE)
    w = cli(tmp_path, "--write-baseline", "base.json", "valve.v")
    assert w.returncode == 0, w.stderr
    assert len(json.loads((tmp_path / "base.json").read_text())["findings"]) == 1
    assert cli(tmp_path, "valve.v").returncode == 1                 # without: it fails
    assert cli(tmp_path, "--baseline", "base.json", "valve.v").returncode == 0
    # an unrelated edit moves every line down: still the known finding
    v.write_text("// press valve, reviewed 2024\n\n" + VALVE)
    r = cli(tmp_path, "--baseline", "base.json", "--format", "json", "valve.v")
    assert r.returncode == 0 and json.loads(r.stdout) == [], r.stdout + r.stderr
    # a new hazard elsewhere: only that one is reported
    v.write_text("// press valve, reviewed 2024\n\n" + VALVE.replace("endmodule", LOOP_GATES))
    r = cli(tmp_path, "--baseline", "base.json", "--format", "json", "valve.v")
    assert r.returncode == 1, r.stderr
    assert {f["rule"] for f in json.loads(r.stdout)} == {"combinational-loop"}
    # a broken baseline file is an input error, exit 2, no traceback
    (tmp_path / "bad.json").write_text("{")
    r = cli(tmp_path, "--baseline", "bad.json", "valve.v")
    assert r.returncode == 2 and "bad.json" in r.stderr and "Traceback" not in r.stderr


def test_baseline_written_whole_with_ordinary_permissions(tmp_path):
    # a baseline is a file the team commits: written by rename (no half file, no temporary
    # left behind) and readable as any other file the user creates (0666 less the umask)
    import os
    import stat
    f = tmp_path / "hazlint-baseline.json"
    f.write_text("old contents")
    write_baseline(f, [diag(), diag("x")], root=str(tmp_path))
    assert load_baseline(f)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["hazlint-baseline.json"]
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE(f.stat().st_mode) == 0o666 & ~umask
    # a folder that does not exist is an input error naming the file, not a traceback
    with pytest.raises(ConfigError, match="cannot write baseline"):
        write_baseline(tmp_path / "no" / "such" / "base.json", [diag()])
