"""The lint command end to end, as a user runs it (real subprocess, real front end)."""
from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
FIX = HERE.parent / "fixtures"
LINE = re.compile(r"^(?P<path>[^\s:][^:]*):(?P<line>\d+):(?P<col>\d+): "
                  r"(?P<sev>error|warning|info): (?P<msg>.*) \[(?P<rule>[a-z0-9-]+)\]$")


def hazlint(*args, cwd, env=None):
    e = dict(os.environ)
    e.pop("NO_COLOR", None)
    e.update(env or {})
    return subprocess.run([sys.executable, "-m", "hazlint.cli", *args], cwd=cwd, env=e,
                          capture_output=True, text=True, timeout=300)


@pytest.fixture
def demo(tmp_path):
    d = tmp_path / "demo"
    shutil.copytree(FIX / "demo", d)
    return d


def test_demo_text_output_exit_code_and_caution(demo):
    p = hazlint("--no-prove", cwd=demo)
    assert p.returncode == 1, p.stderr
    heads = [m.groupdict() for m in map(LINE.match, p.stdout.splitlines()) if m]
    # two hazards (each reported by both rules, folded into one finding) and one loop
    assert [(h["path"], h["line"], h["rule"]) for h in heads] == [
        ("fault_latch.v", "15", "unregistered-async"),
        ("press_top.v", "6", "unregistered-async"),
        ("press_top.v", "28", "combinational-loop")]
    lines = p.stdout.splitlines()
    # evidence lines are indented under their finding; the summary and caution close the output
    assert lines[1].startswith("    ")
    # the lamp feedback is a set/reset latch by its state table: a storage loop, info
    assert lines[-2].startswith("hazlint: 3 findings (2 errors, 1 info)")
    assert "does not make a machine safe" in lines[-1]
    assert "\033[" not in p.stdout          # not a terminal: no colour


def test_corrected_demo_exits_clean(demo):
    p = hazlint("--no-prove", cwd=demo / "fixed")
    assert p.returncode == 0, p.stdout + p.stderr
    assert p.stdout.splitlines()[0].startswith("hazlint: 0 findings")


def test_json_is_deterministic_and_relative(demo):
    a = hazlint("--no-prove", "--format", "json", cwd=demo)
    b = hazlint("--no-prove", "--format", "json", cwd=demo / "fixed" / "..")
    assert a.returncode == 1 and a.stdout == b.stdout
    rows = json.loads(a.stdout)
    assert {r["path"] for r in rows} == {"press_top.v", "fault_latch.v"}
    for r in rows:
        assert set(r) >= {"rule", "kind", "severity", "path", "line", "column", "instance",
                          "message", "evidence", "fix"}
        assert "key" in r["evidence"]


def test_fail_on_select_and_ignore(demo):
    assert hazlint("--no-prove", "--fail-on", "never", cwd=demo).returncode == 0
    p = hazlint("--no-prove", "--select", "unbalanced-reconvergence", "--fail-on", "error", cwd=demo)
    assert p.returncode == 0 and "[unbalanced-reconvergence]" in p.stdout
    p = hazlint("--no-prove", "--ignore", "combinational-loop,unregistered-async", "--format", "json",
                cwd=demo)
    assert [r["rule"] for r in json.loads(p.stdout)] == ["unbalanced-reconvergence"] * 2


def test_files_on_the_command_line_without_configuration(tmp_path):
    shutil.copy(FIX / "rules" / "clock_gated.v", tmp_path)
    p = hazlint("--no-prove", "clock_gated.v", cwd=tmp_path)
    assert p.returncode == 1
    assert p.stdout.startswith("clock_gated.v:8:")


def test_input_errors_exit_2_without_traceback(tmp_path, demo):
    (demo / "hazlint.toml").write_text((demo / "hazlint.toml").read_text()
                                       + "\nasync_ports = [\"x\"]\n")
    p = hazlint(cwd=demo)
    assert p.returncode == 2 and "async_ports" in p.stderr and "hazlint.toml:" in p.stderr
    assert "Traceback" not in p.stderr
    (tmp_path / "bad.v").write_text("module m(a); input a; wire ; endmodule\n")
    p = hazlint("bad.v", cwd=tmp_path)
    assert p.returncode == 2 and "bad.v:1" in p.stderr and "Traceback" not in p.stderr
    p = hazlint("missing.v", cwd=tmp_path)
    assert p.returncode == 2 and "missing.v" in p.stderr


def test_rule_option_error_and_unknown_rule(demo):
    cfg = demo / "hazlint.toml"
    cfg.write_text(cfg.read_text() + '\n[rules.unbalanced-reconvergence]\nscope = "sometimes"\n')
    p = hazlint(cwd=demo)
    assert p.returncode == 2 and "scope" in p.stderr
    p = hazlint("--select", "no-such-rule", cwd=demo / "fixed")
    assert p.returncode == 2 and "no-such-rule" in p.stderr


def test_changed_keeps_findings_in_or_through_the_changed_files(demo):
    p = hazlint("--no-prove", "--changed", "status_lamp.v", "--format", "json", cwd=demo)
    rows = json.loads(p.stdout)
    # the loop is reported in press_top.v but its evidence runs through status_lamp.v
    # (a set/reset latch by its state table: info, which does not fail the run)
    assert [r["rule"] for r in rows] == ["combinational-loop"] and p.returncode == 0
    p = hazlint("--no-prove", "--changed", "two_hand.v", "--format", "json", cwd=demo)
    assert "combinational-loop" not in [r["rule"] for r in json.loads(p.stdout)]


def test_rules_and_explain_commands(tmp_path):
    p = hazlint("rules", cwd=tmp_path)
    assert p.returncode == 0
    ids = [ln.split()[0] for ln in p.stdout.splitlines()[:3]]
    assert ids == ["combinational-loop", "unbalanced-reconvergence", "unregistered-async"]
    p = hazlint("explain", "unbalanced-reconvergence", cwd=tmp_path)
    assert p.returncode == 0
    for section in ("What it finds", "Why it matters", "Example", "How to fix", "min_skew"):
        assert section in p.stdout
    p = hazlint("explain", "nope", cwd=tmp_path)
    assert p.returncode == 2 and "unknown rule" in p.stderr


def _run_on_pty(args, cwd, env):
    """Run hazlint with stdout on a real pseudo-terminal; returns what it printed."""
    import pty
    master, slave = pty.openpty()
    try:
        p = subprocess.Popen([sys.executable, "-m", "hazlint.cli", *args], cwd=cwd, env=env,
                             stdout=slave, stderr=subprocess.PIPE)
        os.close(slave)
        chunks = []
        while True:
            try:
                data = os.read(master, 65536)
            except OSError:
                break
            if not data:
                break
            chunks.append(data)
        p.wait(timeout=300)
    finally:
        os.close(master)
    return b"".join(chunks).decode("utf-8", "replace")


def test_colour_only_on_a_terminal_and_not_with_no_color(demo):
    env = dict(os.environ)
    env.pop("NO_COLOR", None)
    assert "\033[" in _run_on_pty(["--no-prove"], demo, env)
    env["NO_COLOR"] = "1"
    out = _run_on_pty(["--no-prove"], demo, env)
    assert "\033[" not in out and "[combinational-loop]" in out
    assert "\033[" in hazlint("--no-prove", "--color", "always", cwd=demo).stdout


def test_baseline_round_trip_and_waiver_file(demo):
    p = hazlint("--no-prove", "--write-baseline", "base.json", cwd=demo)
    assert p.returncode == 0 and "recorded 3" in p.stderr
    p = hazlint("--no-prove", "--baseline", "base.json", cwd=demo)
    assert p.returncode == 0 and "3 in baseline" in p.stdout
    # a waiver file entry by instance pattern, and one that matches nothing
    (demo / "accepted.toml").write_text(
        '[[accept]]\nrule = "combinational-loop"\ninstance = "press_top.g_lamp*"\n'
        'reason = "lamp hold term, reviewed"\n\n'
        '[[accept]]\nrule = "combinational-loop"\ninstance = "press_top.nowhere.*"\nreason = "stale"\n')
    cfg = demo / "hazlint.toml"
    cfg.write_text('accept_file = "accepted.toml"\n' + cfg.read_text())
    p = hazlint("--no-prove", "--format", "json", cwd=demo)
    rows = json.loads(p.stdout)
    assert "combinational-loop" not in [r["rule"] for r in rows]
    stale = [r for r in rows if r["rule"] == "unused-acceptance"]
    assert [(r["path"], r["line"], r["kind"]) for r in stale] == [
        ("accepted.toml", 6, "unused-acceptance")]
    assert "1 accepted" in hazlint("--no-prove", cwd=demo).stdout


def test_output_file_is_replaced_whole_or_left_as_it_was(tmp_path):
    # -o FILE is written to a temporary file beside it and renamed (POSIX rename(2) replaces
    # the old file in one step): a report that fails halfway leaves the previous report intact
    # and no temporary file behind; a symbolic link keeps pointing at the new report
    from types import SimpleNamespace
    from hazlint.commands.check import _emit
    out = tmp_path / "report.txt"
    out.write_text("previous report\n")

    def half(stream):
        stream.write("half a rep")
        raise RuntimeError("format failed")

    with pytest.raises(RuntimeError):
        _emit(SimpleNamespace(output=str(out)), half)
    assert out.read_text() == "previous report\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.txt"]
    link = tmp_path / "latest.txt"
    link.symlink_to(out)
    _emit(SimpleNamespace(output=str(link)), lambda s: s.write("new report\n"))
    assert link.is_symlink() and out.read_text() == "new report\n"
    # a character device is written in place (never replaced by a rename)
    _emit(SimpleNamespace(output=os.devnull), lambda s: s.write("discarded\n"))
    assert os.path.exists(os.devnull) and not os.path.isfile(os.devnull)
