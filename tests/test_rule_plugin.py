"""A third-party rule package, installed for real, seen by ``hazlint`` like its own rules.

tests/plugins/toy_rule is a small package with its own pyproject.toml that registers two rules
through the ``hazlint.rules`` entry-point group: ``interlock-pin`` declares a new kind and a
proof hook (a hazard at the pin, over the change model), ``lamp-driver`` declares a new kind and
no hook. The test installs it with pip (``--target``, no index, no build isolation: nothing is
fetched) into a temporary folder, puts that on PYTHONPATH and runs ``hazlint`` on the press
demo. The oracle for the proven findings is hazlint's own unregistered-async rule on the same
pins: one prover, reached through two rules' hooks, must give the same witness.
"""
from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from hazlint.diagnostics import KINDS, Kind
from hazlint.errors import HazlintError
from hazlint.plugins import rule_from_object

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo"
PACKAGE = ROOT / "tests" / "plugins" / "toy_rule"


@pytest.fixture(scope="module")
def toy_path(tmp_path_factory):
    """The toy package installed into a fresh folder (its source copied first: a build
    leaves files beside the sources, and the test never writes into the repository)."""
    base = tmp_path_factory.mktemp("toy_rule")
    src, target = base / "src", base / "site"
    shutil.copytree(PACKAGE, src)
    subprocess.run([sys.executable, "-m", "pip", "install", "-q", "--no-deps", "--no-index",
                    "--no-build-isolation", "--disable-pip-version-check", "--target",
                    str(target), str(src)], check=True, capture_output=True, text=True)
    return str(target)


def _hazlint(toy_path, *args):
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        p for p in (toy_path, os.environ.get("PYTHONPATH", "")) if p))
    return subprocess.run([sys.executable, "-m", "hazlint", *args], cwd=DEMO, env=env,
                          capture_output=True, text=True, timeout=300)


def _findings(proc):
    assert proc.returncode in (0, 1), proc.stderr
    return json.loads(proc.stdout)


@pytest.mark.slow
def test_toy_rules_run_proven_as_their_hooks_say(toy_path):
    rows = _findings(_hazlint(toy_path, "--no-cache", "--format", "json", "--select",
                              "interlock-pin,lamp-driver"))
    pins = [r for r in rows if r["rule"] == "interlock-pin"]
    lamps = [r for r in rows if r["rule"] == "lamp-driver"]
    assert pins and lamps, rows
    # the hook asked for a hazard at the pin: proven, the new kind replaced by the hazard's
    for r in pins:
        assert r["kind"] in ("static-1-hazard", "static-0-hazard", "dynamic-hazard"), r
        assert r["evidence"]["classification"] == r["kind"]
    # oracle: the built-in rule on the same pins reaches the same prover, same verdict
    own = {r["evidence"]["sink_node"]: r for r in _findings(_hazlint(
        toy_path, "--no-cache", "--format", "json", "--select", "unregistered-async"))}
    both = [r for r in pins if r["evidence"]["sink_node"] in own]
    assert both, (pins, own)
    for r in both:
        theirs = own[r["evidence"]["sink_node"]]
        assert (r["kind"], r["evidence"]["witness"]) == (theirs["kind"],
                                                         theirs["evidence"]["witness"])
    # no hook: the finding stays as the rule made it, marked not proven
    for r in lamps:
        assert r["kind"] == "lamp-driver-note" and r["severity"] == "info"
        assert r["evidence"]["classification"] == "not-proven"
        assert "declares no proof hook" in r["evidence"]["not_proven_reason"]


@pytest.mark.slow
def test_toy_kinds_selectable_ignorable_and_explained(toy_path):
    # without the prover the new kinds reach the report unchanged
    rows = _findings(_hazlint(toy_path, "--no-cache", "--no-prove", "--format", "json",
                              "--select", "interlock-pin,lamp-driver"))
    assert {r["kind"] for r in rows} == {"gated-interlock-pin", "lamp-driver-note"}
    rows = _findings(_hazlint(toy_path, "--no-cache", "--format", "json",
                              "--ignore", "interlock-pin,lamp-driver"))
    assert rows and not any({"interlock-pin", "lamp-driver"} & set(r["evidence"].get("rules", [
        r["rule"]])) for r in rows)
    out = _hazlint(toy_path, "explain", "lamp-driver")
    assert out.returncode == 0, out.stderr
    assert "lamp-driver-note (info): a plain output driven by a logic gate" in out.stdout
    assert "no proof hook" in out.stdout and "(hazlint-toy-rule)" in out.stdout
    out = _hazlint(toy_path, "explain", "interlock-pin")
    assert "gated-interlock-pin (warning)" in out.stdout and "no proof hook" not in out.stdout


class _Rule:
    ID, SUMMARY, SEVERITY = "press-note", "a note", "info"

    @staticmethod
    def check(design, context):
        return iter(())


def test_kind_declarations_are_checked():
    new = Kind("press-note-kind", "info", "a note on the press")
    r = rule_from_object(type("R", (_Rule,), {"KINDS": (new, "design-note")}), "test")
    assert r.kinds == ("press-note-kind", "design-note") and r.new_kinds == (new,)
    assert r.prove is None
    with pytest.raises(HazlintError, match="unknown kind 'no-such-kind'"):
        rule_from_object(type("R", (_Rule,), {"KINDS": ("no-such-kind",)}), "test")
    # a new kind may not reuse one of hazlint's own names
    with pytest.raises(HazlintError, match="not one of hazlint's own"):
        rule_from_object(type("R", (_Rule,), {"KINDS": (Kind(KINDS[0]),)}), "test")
    with pytest.raises(HazlintError, match="not callable"):
        rule_from_object(type("R", (_Rule,), {"prove": 3}), "test")
