"""Configuration discovery, keys, paths and errors."""
from __future__ import annotations

import pytest

from hazlint.config import find_config, load_config
from hazlint.errors import ConfigError


def test_pyproject_table_found_upward_and_paths_relative_to_it(tmp_path):
    (tmp_path / "pyproject.toml").write_text(
        '[project]\nname = "x"\n\n[tool.hazlint]\nfiles = ["rtl/*.v"]\ntop = "press_top"\n'
        'include_dirs = ["inc"]\nasync_outputs = ["valve_enable"]\nfail_on = "error"\n'
        '[tool.hazlint.rules.unbalanced-reconvergence]\nmin_skew = 2\n')
    (tmp_path / "rtl").mkdir()
    (tmp_path / "rtl" / "a.v").write_text("module a; endmodule\n")
    sub = tmp_path / "rtl" / "deep"
    sub.mkdir()
    cfg = load_config(cwd=sub)
    assert cfg.path == str(tmp_path / "pyproject.toml") and cfg.root == str(tmp_path)
    assert cfg.files == [str(tmp_path / "rtl" / "a.v")]
    assert cfg.top == ["press_top"] and cfg.include_dirs == [str(tmp_path / "inc")]
    assert cfg.rules == {"unbalanced-reconvergence": {"min_skew": 2}} and cfg.fail_on == "error"


def test_hazlint_toml_wins_and_pyproject_without_table_is_skipped(tmp_path):
    (tmp_path / "pyproject.toml").write_text('[project]\nname = "x"\n')
    assert find_config(tmp_path) is None
    (tmp_path / "hazlint.toml").write_text('static_inputs = ["maint_key"]\n')
    cfg = load_config(cwd=tmp_path)
    assert cfg.static_inputs == ["maint_key"] and cfg.path.endswith("hazlint.toml")


def test_no_config_gives_defaults_rooted_at_cwd(tmp_path):
    cfg = load_config(cwd=tmp_path)
    assert cfg.path is None and cfg.root == str(tmp_path) and cfg.fail_on == "warning"


def test_unknown_key_names_key_and_line(tmp_path):
    (tmp_path / "hazlint.toml").write_text('top = "t"\n\nasync_output = ["v"]\n')
    with pytest.raises(ConfigError) as ei:
        load_config(cwd=tmp_path)
    e = ei.value
    assert "async_output" in e.message and e.line == 3 and e.path.endswith("hazlint.toml")
    (tmp_path / "hazlint.toml").unlink()
    (tmp_path / "pyproject.toml").write_text('[tool.hazlint]\ntop = "t"\n[tool.hazlint.bogus]\nx=1\n')
    with pytest.raises(ConfigError) as ei:
        load_config(cwd=tmp_path)
    assert "bogus" in str(ei.value) and ei.value.line == 3


@pytest.mark.parametrize("text, word", [
    ('fail_on = "sometimes"\n', "fail_on"),
    ('severity = { combinational-loop = "fatal" }\n', "severity"),
    ('jobs = "two"\n', "jobs"),
    ('files = ["nothing/*.v"]\n', "match nothing"),
    ('top = [\n', "invalid TOML"),
    ('prove = { max_finding = 10 }\n', "prove.max_finding"),
    ('prove = { max_findings = "all" }\n', "must be int"),
])
def test_bad_values(tmp_path, text, word):
    (tmp_path / "hazlint.toml").write_text(text)
    with pytest.raises(ConfigError) as ei:
        load_config(cwd=tmp_path)
    assert word in str(ei.value)


def test_cells_become_a_library(tmp_path):
    (tmp_path / "hazlint.toml").write_text(
        '[cells.ff]\ninputs = ["CK", "D"]\noutputs = { Q = "IQ" }\n'
        'ff = { clocked_on = "CK", next_state = "D" }\n')
    lib = load_config(cwd=tmp_path).library()
    assert lib.get("ff").sequential.kind == "ff"


def test_prover_options_are_checked_and_kept(tmp_path):
    (tmp_path / "hazlint.toml").write_text(
        '[prove]\nmax_findings = 20\ncheck_time = 1\nwaveforms = false\n')
    cfg = load_config(cwd=tmp_path)
    assert cfg.prove == {"max_findings": 20, "check_time": 1, "waveforms": False}
