"""Report formats as plugins: the registry (``hazlint.report.registry``) and a package of its
own (``tests/plugins/toy_format``) installed by pip and found through its entry points.

External parts: pip and setuptools build and install the test package (its
``entry_points.txt``), :mod:`importlib.metadata` finds it, ``hazlint`` runs as a subprocess.
"""
from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path
from types import SimpleNamespace

import pytest

from hazlint.errors import HazlintError
from hazlint.report.registry import ReportOptions, format_from_object, format_names, get_format
from support.plugin_install import install_plugin, plugin_env

HERE = Path(__file__).resolve().parent
DEMO = HERE.parent / "fixtures" / "demo"


@pytest.fixture(scope="module")
def toy(tmp_path_factory):
    """(environment seeing the toy format package, a copy of the press demo, a cache dir)."""
    work = tmp_path_factory.mktemp("toy-format")
    site = install_plugin("toy_format", work)
    demo = work / "demo"
    shutil.copytree(DEMO, demo)
    return plugin_env(site), demo, work / "cache"


def hazlint(*args, cwd, env):
    return subprocess.run([sys.executable, "-m", "hazlint.cli", *args], cwd=cwd, env=env,
                          capture_output=True, text=True, timeout=300)


@pytest.mark.slow
def test_toy_format_reports_the_demo_findings(toy):
    env, demo, cache = toy
    js = hazlint("--format", "json", "--cache-dir", str(cache), cwd=demo, env=env)
    assert js.returncode == 1, js.stderr        # the demo has findings (warnings and errors)
    findings = [json.loads(line.rstrip(",")) for line in js.stdout.splitlines()[1:-1]]
    assert findings
    runs = [hazlint("--format", "toy", "--cache-dir", str(cache), cwd=demo, env=env)
            for _ in range(2)]
    for p in runs:
        assert p.returncode == js.returncode, p.stderr
        assert "Traceback" not in p.stderr
    # the second run reads the findings from the cache; a plugin's report is never kept in the
    # report cache (its code is not in the cache's stamp), so it is written again: same bytes
    assert runs[0].stdout == runs[1].stdout
    lines = runs[0].stdout.splitlines()
    assert lines[-1] == f"# {len(findings)} findings"
    rows = [line.split("\t") for line in lines[:-1]]
    # the same findings in the same order as the built-in JSON report
    assert rows == [[f["rule"], f["severity"], f"{f['path']}:{f['line']}", f["instance"],
                     " ".join(f["message"].split())] for f in findings]
    assert all(not os.path.isabs(r[2]) for r in rows)      # paths relative to the demo root


@pytest.mark.slow
def test_configuration_key_chooses_the_plugin_format(toy, tmp_path):
    env, demo, cache = toy
    proj = tmp_path / "demo"
    shutil.copytree(demo, proj)
    with open(proj / "hazlint.toml", "a", encoding="utf-8") as fh:
        fh.write('format = "toy"\n')
    p = hazlint("--cache-dir", str(cache), "--no-prove", cwd=proj, env=env)
    assert p.returncode == 1, p.stderr
    assert p.stdout.splitlines()[-1].startswith("# ") and "\t" in p.stdout
    # --format wins over the configuration
    q = hazlint("--cache-dir", str(cache), "--no-prove", "--format", "annotations", cwd=proj,
                env=env)
    assert q.stdout.startswith("::") and "\t" not in q.stdout


@pytest.mark.slow
def test_formats_lists_plugins_and_names_the_broken_one(toy):
    env, demo, _ = toy
    p = hazlint("formats", cwd=demo, env=env)
    assert p.returncode == 2                    # a registered format cannot be loaded
    names = [line.split()[0] for line in p.stdout.splitlines()[:6]]
    assert names == ["annotations", "json", "lsp", "sarif", "text", "toy"]
    toy_line = p.stdout.splitlines()[5]
    assert "one tab-separated line per finding" in toy_line
    assert "[toy_format (hazlint-toy-format)]" in toy_line
    assert "toy-raises" in p.stdout             # it loads; it only fails when writing
    assert ("cannot load output format 'toy-missing' = toy_format.not_there: "
            "ModuleNotFoundError") in p.stderr
    assert "Traceback" not in p.stderr
    rows = json.loads(hazlint("formats", "--format", "json", cwd=demo, env=env).stdout)
    assert {r["name"]: r["builtin"] for r in rows} == {
        "annotations": True, "json": True, "lsp": True, "sarif": True, "text": True,
        "toy": False, "toy-raises": False}


@pytest.mark.slow
def test_a_plugin_that_raises_or_does_not_load_is_an_input_error(toy):
    env, demo, cache = toy
    p = hazlint("--cache-dir", str(cache), "--no-prove", "--format", "toy-raises", cwd=demo,
                env=env)
    assert p.returncode == 2
    assert p.stderr.strip() == ("error: output format 'toy-raises' (toy_format.raises "
                                "(hazlint-toy-format)) failed: ValueError: toy plugin bug")
    q = hazlint("--cache-dir", str(cache), "--no-prove", "--format", "toy-missing", cwd=demo,
                env=env)
    assert q.returncode == 2
    assert "cannot load output format 'toy-missing'" in q.stderr and "Traceback" not in q.stderr
    # the broken ones stop only the runs that ask for them
    r = hazlint("--cache-dir", str(cache), "--no-prove", "--format", "text", cwd=demo,
                env=env)
    assert r.returncode == 1 and "valve_enable" in r.stdout, r.stderr


# in process: the registry's checks (no plugin installed here)

def test_unknown_format_names_the_known_ones():
    with pytest.raises(HazlintError) as e:
        get_format("pdf")
    assert e.value.exit_code == 2
    assert "unknown output format 'pdf' (known: annotations, json, lsp, sarif, text" in \
        str(e.value)


@pytest.mark.parametrize("obj, words", [
    (SimpleNamespace(NAME="x", write=print), "lacks SUMMARY"),
    (SimpleNamespace(NAME="Bad Name", SUMMARY="s", write=print), "bad format name"),
    (SimpleNamespace(NAME="x", SUMMARY="s", write="no"), "'write' is not callable"),
])
def test_format_objects_are_checked(obj, words):
    with pytest.raises(HazlintError) as e:
        format_from_object(obj, "pkg.mod (pkg)")
    assert words in str(e.value)


def test_builtins_are_registered_through_entry_points():
    assert set(format_names()) >= {"annotations", "json", "lsp", "sarif", "text"}
    for name in ("annotations", "json", "lsp", "sarif", "text"):
        fmt = get_format(name)
        assert fmt.builtin and fmt.origin == f"hazlint.report.{name} (hazlint)"
    empty = SimpleNamespace(diagnostics=[], waived=[], root=str(DEMO), relpath=lambda p: p,
                            counts={}, incomplete=False, design=None, rules={})
    assert get_format("json").render(empty) == "[]\n"
    text = get_format("text").render(empty, ReportOptions(caution=False))
    assert "note:" not in text and text.endswith("\n")


def test_configuration_key_names_a_registered_format(tmp_path):
    from hazlint.config import load_config
    from hazlint.errors import ConfigError
    cfg = tmp_path / "hazlint.toml"
    cfg.write_text('top = "press_top"\nformat = "sarif"\n')
    assert load_config(str(tmp_path)).format == "sarif"
    cfg.write_text('top = "press_top"\nformat = "pdf"\n')
    with pytest.raises(ConfigError) as e:
        load_config(str(tmp_path))
    assert str(e.value).startswith(f"{cfg}:2: error: unknown output format 'pdf' (known: ")
