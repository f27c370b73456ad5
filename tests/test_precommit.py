"""hazlint as a hook of the real ``pre-commit`` tool, in a throw-away git repository.

pre-commit clones the hook repository at a commit, so the test snapshots this checkout (the
working tree as it is, committed into a temporary repository) and points a project's
``.pre-commit-config.yaml`` at it. pre-commit then builds its own virtual environment with
hazlint and its dependencies from the package index, which makes this test slow.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
SKIP = shutil.ignore_patterns(".git", "*.egg-info", "__pycache__", ".pytest_cache", "build",
                              "dist", ".hazlint-cache", "*.pyc", ".venv")

VALVE_HAZARD = """\
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire n_guard, run, bypass;
  not g_inv (n_guard, guard_closed);
  and g_run (run, two_hand, guard_closed);
  and g_byp (bypass, maint_key, n_guard);
  or  g_out (valve_enable, run, bypass);
endmodule
"""
# the reconvergence rule reports at the reconvergence gate: g_out, line 6 of rtl/valve.v
HAZARD_AT = "rtl/valve.v:6:"

VALVE_FIXED = """\
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire run;
  and g_run (run, two_hand, guard_closed);
  and g_out (valve_enable, run, maint_key);
endmodule
"""

TOP = """\
module press_top(input guard_closed, input two_hand_left, input two_hand_right,
                 input maint_key, output valve_enable);
  wire both_hands;
  and g_hands (both_hands, two_hand_left, two_hand_right);
  press_valve u_valve (.guard_closed(guard_closed), .two_hand(both_hands),
                       .maint_key(maint_key), .valve_enable(valve_enable));
endmodule
"""

TOP_EDITED = TOP.replace("wire both_hands;", "wire both_hands;   // both hands on the buttons")


def git(cwd, *args, check=True, env=None):
    return subprocess.run(["git", *args], cwd=cwd, capture_output=True, text=True, check=check,
                          env=env)


@pytest.fixture(scope="module")
def hook_repo(tmp_path_factory):
    """This checkout's working tree committed into a fresh repository (pre-commit clones it)."""
    dst = tmp_path_factory.mktemp("hook") / "hazlint"
    shutil.copytree(REPO, dst, ignore=SKIP)
    git(dst, "init", "-q")
    git(dst, "add", "-A")
    git(dst, "-c", "user.name=t", "-c", "user.email=t@example.invalid", "commit", "-qm",
        "snapshot")
    sha = git(dst, "rev-parse", "HEAD").stdout.strip()
    return dst, sha


@pytest.mark.slow
def test_hook_fails_on_hazard_and_passes_clean(tmp_path, hook_repo):
    repo, sha = hook_repo
    proj = tmp_path / "press"
    (proj / "rtl").mkdir(parents=True)
    env = dict(os.environ, PRE_COMMIT_HOME=str(tmp_path / "pre-commit-home"),
               HAZLINT_CACHE_DIR=str(tmp_path / "cache"),
               GIT_AUTHOR_NAME="t", GIT_AUTHOR_EMAIL="t@example.invalid",
               GIT_COMMITTER_NAME="t", GIT_COMMITTER_EMAIL="t@example.invalid",
               PIP_DISABLE_PIP_VERSION_CHECK="1", NO_COLOR="1")
    env.pop("VIRTUAL_ENV", None)
    git(proj, "init", "-q", env=env)
    (proj / ".pre-commit-config.yaml").write_text(
        f"repos:\n  - repo: {repo}\n    rev: {sha}\n    hooks:\n      - id: hazlint\n")
    # the design, as the project configures it: the hook loads it whatever files are staged
    # (the valve drives a plain output: listed at the wider scope)
    (proj / "hazlint.toml").write_text('files = ["rtl/*.v"]\ntop = "press_top"\n\n'
                                       '[rules.unbalanced-reconvergence]\nscope = "outputs"\n')
    (proj / "rtl" / "press_top.v").write_text(TOP)
    (proj / "rtl" / "valve.v").write_text(VALVE_HAZARD)
    pc = [sys.executable, "-m", "pre_commit"]
    inst = subprocess.run([*pc, "install"], cwd=proj, capture_output=True, text=True, env=env)
    assert inst.returncode == 0, inst.stdout + inst.stderr
    # build the hook's environment once, up front, so a failure here reads as what it is
    env_build = subprocess.run([*pc, "install-hooks"], cwd=proj, capture_output=True, text=True,
                               env=env)
    assert env_build.returncode == 0, env_build.stdout + env_build.stderr

    # 1. a commit with a hazard: the hook fails and prints the file:line diagnostic
    git(proj, "add", "-A", env=env)
    bad = git(proj, "commit", "-m", "press valve with a bypass path", check=False, env=env)
    out = bad.stdout + bad.stderr
    assert bad.returncode != 0, out
    assert HAZARD_AT in out and "unbalanced-reconvergence" in out, out
    assert git(proj, "rev-list", "--all", check=False, env=env).stdout.strip() == ""

    # 2. the corrected valve: the commit passes
    (proj / "rtl" / "valve.v").write_text(VALVE_FIXED)
    git(proj, "add", "-A", env=env)
    good = git(proj, "commit", "-m", "press valve without the bypass", check=False, env=env)
    assert good.returncode == 0, good.stdout + good.stderr
    assert "hazlint" in good.stdout + good.stderr       # the hook ran (and passed)

    # 3. a hazard is a property of the design: bring it back in valve.v (committed with
    # --no-verify), then change only press_top.v. The finding's evidence runs through the
    # instance in press_top.v, so the hook still judges it.
    (proj / "rtl" / "valve.v").write_text(VALVE_HAZARD)
    git(proj, "add", "-A", env=env)
    git(proj, "commit", "-qm", "reintroduce (skipping hooks)", "--no-verify", env=env)
    (proj / "rtl" / "press_top.v").write_text(TOP_EDITED)
    git(proj, "add", "-A", env=env)
    top_only = git(proj, "commit", "-m", "comment in press_top", check=False, env=env)
    out = top_only.stdout + top_only.stderr
    assert top_only.returncode != 0, out
    assert HAZARD_AT in out, out
