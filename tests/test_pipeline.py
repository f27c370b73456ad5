"""The run request and the pipeline: one resolution of command line + configuration, the
configuration never changed by a run, the cache keys computed once per run, ``prove
--transition`` and ``summary`` loading through the same request as ``check``, and the typed
options (prover, delays, scalar keys) checked in one place."""
from __future__ import annotations

import contextlib
import dataclasses
import io
import os
from pathlib import Path

import pytest

from hazlint.config import load_config
from hazlint.errors import ConfigError
from hazlint.request import resolve

ROOT = Path(__file__).resolve().parent.parent
SDF_FIX = ROOT / "fixtures" / "sdf"
PRESS_LIB = ROOT / "fixtures" / "liberty" / "press_cells.lib"

# y = a&b | ~a&c: the textbook static-1 hazard (a changes while b = c = 1; the consensus term
# b&c removes it); common practice, e.g. any logic-design handbook's chapter on hazards
CONSENSUS = """\
module press_sel(input a, input b, input c, output y);
  wire an, p, q, r;
  not g_an (an, a);
  and g_p (p, a, b);
  and g_q (q, an, c);
`ifdef WITH_CONSENSUS
  and g_r (r, b, c);
  or  g_y (y, p, q, r);
`else
  or  g_y (y, p, q);
`endif
endmodule
"""


def _cli(args, cwd):
    from hazlint.cli import main
    out, err = io.StringIO(), io.StringIO()
    old = os.getcwd()
    os.chdir(cwd)
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main(args)
    finally:
        os.chdir(old)
    return code, out.getvalue(), err.getvalue()


def _project(tmp_path, extra=""):
    (tmp_path / "sel.v").write_text(CONSENSUS)
    (tmp_path / "hazlint.toml").write_text(
        f'files = ["sel.v"]\ncache_dir = "{tmp_path / "cache"}"\n{extra}')
    return load_config(path=str(tmp_path / "hazlint.toml"))


def test_request_is_frozen_and_leaves_the_configuration_as_read(tmp_path):
    cfg = _project(tmp_path, 'jobs = 2\n[prove]\nmax_findings = 20\n')
    before = dataclasses.asdict(cfg)
    req = resolve(None, config=cfg, cwd=str(tmp_path), jobs=1, frontend="pyverilog",
                  cache_dir=str(tmp_path / "other"), prove_options={"show_proven_absent": True},
                  defines={"WITH_CONSENSUS": "1"})
    assert dataclasses.asdict(cfg) == before            # the run options live on the request
    assert req.jobs == 1 and req.design.frontend == "pyverilog"
    assert req.cache_dir == str(tmp_path / "other")
    assert req.prove_options == {"max_findings": 20, "show_proven_absent": True}
    assert req.design.defines == {"WITH_CONSENSUS": "1"}
    assert req.design.paths == (str(tmp_path / "sel.v"),)
    with pytest.raises(dataclasses.FrozenInstanceError):
        req.prove = False
    # the command line's prover options are checked like the configuration's
    with pytest.raises(ConfigError, match="prove.max_finding"):
        resolve(None, config=cfg, cwd=str(tmp_path), prove_options={"max_finding": 1})


def test_no_prove_check_computes_the_design_and_result_keys_once(tmp_path, monkeypatch):
    import hazlint.store.design as store_design
    import hazlint.store.result as store_result
    calls = {"design": 0, "result": 0}

    def counting(name, real):
        def f(*a, **k):
            calls[name] += 1
            return real(*a, **k)
        return f
    monkeypatch.setattr(store_design, "design_key",
                        counting("design", store_design.design_key))
    monkeypatch.setattr(store_result, "result_key",
                        counting("result", store_result.result_key))
    _project(tmp_path)
    code, out, _ = _cli(["check", "--no-prove", "--scope", "outputs"], tmp_path)
    assert code == 1 and "sel.v" in out                   # the hazard into output y
    assert calls == {"design": 1, "result": 1}            # report key and lint share them
    # a rerun is answered by the report cache: the keys once more, no lint
    assert _cli(["check", "--no-prove", "--scope", "outputs"], tmp_path)[:2] == (code, out)
    assert calls == {"design": 2, "result": 2}


def test_prove_transition_uses_the_configuration(tmp_path):
    # without a configuration y is a plain output: a proven hazard there is a warning
    (tmp_path / "sel.v").write_text(CONSENSUS)
    args = ["prove", "sel.v", "--no-cache", "--transition", "a-,b=1,c=1", "--target", "y"]
    code, out, err = _cli(args, tmp_path)
    assert "y for a-,b=1,c=1: warning: static-1-hazard" in out, out + err
    # async_outputs in the configuration makes y glitch-sensitive, as for `check`
    _project(tmp_path, 'async_outputs = ["y"]\n')
    code, out, err = _cli(args, tmp_path)
    assert code == 1 and "y for a-,b=1,c=1: error: static-1-hazard" in out, out + err
    # configured macros reach the reader: the consensus term removes the hazard
    _project(tmp_path, 'async_outputs = ["y"]\ndefines = { WITH_CONSENSUS = "1" }\n')
    code, out, err = _cli(args, tmp_path)
    assert code == 0 and "y: hazard-free for a-,b=1,c=1" in out, out + err
    # and -D on the command line does the same
    _project(tmp_path, 'async_outputs = ["y"]\n')
    code, out, _ = _cli(args + ["-D", "WITH_CONSENSUS"], tmp_path)
    assert code == 0 and "hazard-free" in out


def test_summary_loads_through_the_request(tmp_path):
    # -D and the configured top through the same resolution as `check`: the consensus gate
    # is one more AND gate (3 instead of 2)
    _project(tmp_path, 'top = "press_sel"\n')
    code, out, _ = _cli(["summary", "--format", "json"], tmp_path)
    import json
    assert code == 0 and json.loads(out)["gates_by_type"]["and"] == 2
    code, out, _ = _cli(["summary", "--format", "json", "-D", "WITH_CONSENSUS"], tmp_path)
    assert code == 0 and json.loads(out)["gates_by_type"]["and"] == 3


@pytest.mark.parametrize("corner, inv", [
    # (IOPATH A Y (1.5:2:2.5) (1.2:1.4:1.6)) of u_inv in fixtures/sdf/press_valve.sdf, read as
    # (min:typ:max) triples, rise then fall (OVI SDF 3.0, section on delay values)
    ("minmax", (1.5, 2.5, 1.2, 1.6)),
    ("max", (2.5, 2.5, 1.6, 1.6)),
    ("typ", (2.0, 2.0, 1.4, 1.4)),
])
def test_sdf_corner_from_the_configuration(tmp_path, corner, inv):
    from hazlint import pipeline
    corner_key = "" if corner == "minmax" else f'sdf_corner = "{corner}"\n'
    (tmp_path / "hazlint.toml").write_text(
        f'files = ["{SDF_FIX / "press_valve.v"}"]\nliberty = ["{PRESS_LIB}"]\n'
        f'sdf = "{SDF_FIX / "press_valve.sdf"}"\n{corner_key}')
    cfg = load_config(path=str(tmp_path / "hazlint.toml"))
    req = resolve(None, config=cfg, cwd=str(tmp_path), use_cache=False)
    assert req.design.sdf_corner == corner
    g = pipeline.load(req).graph
    node = next(n for n, d in g.nodes(data=True) if d.get("instance") == "press_valve.u_inv")
    got = g.nodes[node]["delays"][0]
    assert (got.rise_min, got.rise_max, got.fall_min, got.fall_max) == pytest.approx(inv)


@pytest.mark.parametrize("text, words", [
    ('sdf_corner = "fast"\n', "sdf_corner must be one of min, typ, max, minmax"),
    ('jobs = 0\n', "jobs must be at least 1"),
    ('time_budget = -1\n', "time_budget must be at least 0"),
    ('time_budget = nan\n', "time_budget must be at least 0"),
    ('cache_limit_mb = -5\n', "cache_limit_mb must be at least 0"),
    ('[prove]\nengine = "magic"\n', "prove.engine must be one of sat, bdd"),
    ('[prove]\nsim_vectors = -1\n', "prove.sim_vectors must be at least 0"),
    ('[prove]\nwaveforms = 1\n', "prove.waveforms must be bool"),
])
def test_option_values_are_checked_with_key_and_line(tmp_path, text, words):
    (tmp_path / "hazlint.toml").write_text('top = "t"\n' + text)
    with pytest.raises(ConfigError) as ei:
        load_config(cwd=tmp_path)
    assert words in ei.value.message and ei.value.line == 2


def test_sdf_corners_match_the_sdf_reader():
    from hazlint.delays.sdf_syntax import CORNERS
    from hazlint.options import SDF_CORNER, SDF_CORNERS
    assert SDF_CORNERS == CORNERS and SDF_CORNER in CORNERS


def test_prove_transition_names_changes_outside_the_change_model(tmp_path):
    # static_inputs and one_at_a_time of the configuration are the run's change model; a
    # transition the model excludes is still checked, with a note naming the declaration
    _project(tmp_path, 'static_inputs = ["c"]\none_at_a_time = { ab = ["a", "b"] }\n')
    args = ["prove", "--no-cache", "--transition", "a-,b+,c-", "--target", "y"]
    code, out, err = _cli(args, tmp_path)
    assert "note: c is declared static (it never changes in the change model)" in out, out + err
    assert "note: a, b change together, but group 'ab'" in out
    code, out, _ = _cli(["prove", "--no-cache", "--transition", "a-,b=1,c=1", "--target",
                         "y"], tmp_path)
    assert "note:" not in out and "static-1-hazard" in out


def test_define_without_value_is_one_as_in_iverilog(tmp_path):
    # Icarus Verilog (a reference simulator, not a lint product): `iverilog -DW` defines W as 1;
    # the same design through hazlint's -D W must read `W as 1 too (a & 1 is a wire, no gate),
    # and W=0 gives the constant 0 (no gate either), while W=a2 keeps the AND gate
    import json
    (tmp_path / "m.v").write_text("module m(input a, input a2, output y);\n"
                                  "  assign y = a & `W;\nendmodule\n")
    counts = {}
    for d in ("W", "W=0", "W=a2"):
        code, out, err = _cli(["summary", "--format", "json", "-D", d, "m.v"], tmp_path)
        assert code == 0, err
        counts[d] = json.loads(out)["gates"]
    assert counts == {"W": 0, "W=0": 0, "W=a2": 1}
