"""Verdicts at glitch-sensitive sinks over the change model, and loops by their behaviour.

Each fixture (fixtures/changes, fixtures/loops) has its exact expected findings. The hazards
are textbook facts (from memory, Unger 1969): NAND(0,1) = NAND(1,0) = 1 but NAND(1,1) = 0, so
two inputs changing together give a static-1 function hazard; AND(0,1) = AND(1,0) = 0 but
AND(1,1) = 1, a static-0 function hazard; a gray-coded pair changes one bit per step (common
practice), so one gate decoding it sees single changes only. The loop behaviours are the
trade's definitions (common practice): a ring of an odd number of inversions has no stable
state; cross-coupled NANDs hold when both inputs are 1; a C-element holds while its inputs
disagree.
"""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from hazlint.api import lint
from hazlint.config import Config, config_from_table
from hazlint.diagnostics import Severity
from hazlint.errors import HazlintError

ROOT = Path(__file__).resolve().parent.parent
CHANGES = ROOT / "fixtures" / "changes"
LOOPS = ROOT / "fixtures" / "loops"


def run(path: Path, prove: bool = True, config: Config | None = None, **kw):
    cfg = config or Config(root=str(path.parent))
    return lint([str(path)], config=cfg, cwd=str(path.parent), prove=prove, use_cache=False,
                **kw)


def summary(result):
    return sorted((os.path.basename(d.path), d.line, d.rule, d.kind, str(d.severity))
                  for d in result.diagnostics)


def moved(d):
    return sorted(d.evidence["witness"]["transition"])


EXPECTED = {
    "reset_two_inputs.v": [("reset_two_inputs.v", 10, "unregistered-async", "static-1-hazard",
                            "error")],
    "reset_decoded_counter.v": [("reset_decoded_counter.v", 12, "unregistered-async",
                                 "static-1-hazard", "error")],
    "clock_and_gate.v": [("clock_and_gate.v", 9, "unregistered-async", "static-0-hazard",
                          "error")],
    "tristate_enable.v": [("tristate_enable.v", 7, "unregistered-async", "static-0-hazard",
                           "error")],
    "tristate_assign.v": [("tristate_assign.v", 9, "unregistered-async", "static-0-hazard",
                           "error")],
    "quiet_cone.v": [],
    "gray_pointer.v": [],
}
WITNESS = {   # the smallest change set of each hazard: the two sources changing together
    "reset_two_inputs.v": ["ack", "door_n"],
    "reset_decoded_counter.v": ["count_q[0]", "count_q[1]"],
    "clock_and_gate.v": ["clk", "run"],
    "tristate_enable.v": ["cs_i", "rd_i"],
    "tristate_assign.v": ["cs_i", "rd_i"],
}


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_sensitive_sink_fixture(name):
    r = run(CHANGES / name)
    assert summary(r) == EXPECTED[name]
    for d in r.diagnostics:
        assert moved(d) == WITNESS[name]
        assert d.evidence["function_hazard"] is True
        # the evidence says which model was proven and under which cell model
        cm = d.evidence["change_model"]
        assert cm["covered"] == "single changes of both sources and changes of both together"
        assert d.evidence["cell_model"] == "atomic"
        assert any(n.startswith("change model: ") for n in d.notes)
        # the timed replay skews the two changes and shows the pulse
        gl = d.evidence["glitch"]
        assert gl["occurs"] and gl["how"] in ("skewed", "nominal")
        assert "one_at_a_time" in d.fix


def test_quiet_cone_starts_no_finding_even_without_the_prover(tmp_path):
    r = run(CHANGES / "quiet_cone.v", prove=False)
    assert summary(r) == []
    # without the declaration the clear logic is a finding, and strap_a a reconvergent stem
    text = (CHANGES / "quiet_cone.v").read_text().replace("(* hazlint_static *) ", "")
    p = tmp_path / "quiet_cone.v"
    p.write_text(text)
    # (one problem at the clear, reported by both rules: one finding with both rules' evidence)
    (d,) = run(p, prove=False).diagnostics
    assert d.rule == "unregistered-async"
    assert d.evidence["rules"] == ["unbalanced-reconvergence", "unregistered-async"]


def test_gray_pointer_is_proven_clean_over_its_declared_group():
    assert [x[2] for x in summary(run(CHANGES / "gray_pointer.v", prove=False))] == [
        "unregistered-async"]
    cfg = Config(root=str(CHANGES), prove={"show_proven_absent": True})
    (d,) = run(CHANGES / "gray_pointer.v", config=cfg).diagnostics
    assert d.severity == Severity.INFO and d.evidence["classification"] == "hazard-free"
    cm = d.evidence["change_model"]
    assert cm["max_changes"] == 1 and cm["covered"].startswith("single changes of both")
    assert "group phase_q, gray_pointer.v:8" in cm["constraints"][0]


def test_same_groups_from_configuration(tmp_path):
    src = (CHANGES / "gray_pointer.v").read_text().replace("(* hazlint_one_at_a_time *) ", "")
    (tmp_path / "g.v").write_text(src)
    toml = 'files = ["g.v"]\n\n[one_at_a_time]\nphase = ["phase_q"]\n'
    (tmp_path / "hazlint.toml").write_text(toml)
    from hazlint.config import load_config
    cfg = load_config(path=str(tmp_path / "hazlint.toml"))
    r = lint(config=cfg, cwd=str(tmp_path), use_cache=False)
    assert summary(r) == []
    # without it the two register bits change together: a function hazard
    r = lint(config=Config(root=str(tmp_path), files=[str(tmp_path / "g.v")]),
             cwd=str(tmp_path), use_cache=False)
    assert [x[3] for x in summary(r)] == ["static-1-hazard"]


@pytest.mark.parametrize("text,line,what", [
    ('files = ["g.v"]\nsync_inputs = ["no_such_input"]\n', 2, "no_such_input"),
    ('files = ["g.v"]\n\n[one_hot]\nstate = ["nowhere_q"]\n', 3, "nowhere_q"),
    ('files = ["g.v"]\none_at_a_time = { p = ["clk"] }\n', 2, None),
])
def test_unknown_names_in_declarations_are_input_errors(tmp_path, text, line, what):
    (tmp_path / "g.v").write_text((CHANGES / "gray_pointer.v").read_text())
    (tmp_path / "hazlint.toml").write_text(text)
    r = subprocess.run([sys.executable, "-m", "hazlint", "--no-cache"], cwd=tmp_path,
                       capture_output=True, text=True)
    if what is None:        # a real input is a fine member
        assert r.returncode in (0, 1), r.stderr
        return
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert f"hazlint.toml:{line}: error:" in r.stderr and what in r.stderr


@pytest.mark.parametrize("decl,what", [
    ("(* hazlint_one_at_a_tme *) reg [1:0] phase_q;", "unknown attribute 'hazlint_one_at_a_tme'"),
    ("(* hazlint_one_hot *) wire [1:0] sel;", "driven by logic"),
])
def test_bad_attributes_are_input_errors(tmp_path, decl, what):
    src = (CHANGES / "gray_pointer.v").read_text()
    src = src.replace("(* hazlint_one_at_a_time *) reg [1:0] phase_q;",
                      "reg [1:0] phase_q;" if "sel" in decl else decl)
    if "sel" in decl:
        src = src.replace("  wire   clr_n;", f"  wire   clr_n;\n  {decl}\n"
                          "  assign sel = phase_q ^ 2'b01;")
    p = tmp_path / "g.v"
    p.write_text(src)
    line = next(i for i, t in enumerate(src.splitlines(), 1) if decl in t)
    r = subprocess.run([sys.executable, "-m", "hazlint", "--no-cache", "g.v"], cwd=tmp_path,
                       capture_output=True, text=True)
    assert r.returncode == 2 and "Traceback" not in r.stderr, r.stderr
    assert f"g.v:{line}: error:" in r.stderr and what in r.stderr


def test_bad_group_table_in_configuration():
    with pytest.raises(HazlintError, match="one_hot.s must be a list"):
        config_from_table({"one_hot": {"s": 3}}, None)
    with pytest.raises(HazlintError, match="cell_model must be one of"):
        config_from_table({"cell_model": "transistor"}, None)


# ---------------------------------------------------------------------------------------------
# Loops

LOOP_EXPECTED = {
    "c_element.v": ("combinational-loop", "info", "storage", "C-element"),
    "sr_latch.v": ("combinational-loop", "info", "storage", "set/reset latch"),
    "mutex.v": ("combinational-loop", "info", "storage", "mutex"),
    "ring_oscillator.v": ("oscillation", "error", "oscillation", None),
}


@pytest.mark.parametrize("name", sorted(LOOP_EXPECTED))
def test_loop_fixture(name):
    (d,) = run(LOOPS / name).diagnostics
    kind, sev, behaviour, element = LOOP_EXPECTED[name]
    assert (d.rule, d.kind, str(d.severity)) == ("combinational-loop", kind, sev)
    assert d.evidence["behaviour"] == behaviour and d.evidence["storage_element"] == element
    if name == "ring_oscillator.v":
        assert d.evidence["loop"]["witness"] == {"inputs": {"test_en": 1}}
        assert any("still changing" in n for n in d.notes)         # the waveform
    if name == "sr_latch.v":
        # releasing set and reset together from both active leaves it undetermined
        # (Eichelberger's procedure B; common practice: the forbidden input)
        race = d.evidence["loop"]["race"]
        assert race["from"] == {"reset_n": 0, "set_n": 0}
        assert race["to"] == {"reset_n": 1, "set_n": 1}
    if name == "c_element.v":
        assert "hazard-free" in d.fix and "break the feedback" not in d.fix


def test_the_same_latch_in_every_spelling_gets_the_same_verdict(tmp_path):
    spellings = {
        "prim": "nand g1 (q, s_n, qn);\n  nand g2 (qn, r_n, q);",
        "assign": "assign q = ~(s_n & qn);\n  assign qn = ~(r_n & q);",
        "mixed": "wire t;\n  and g1 (t, s_n, qn);\n  not g2 (q, t);\n  assign qn = ~(r_n & q);",
    }
    got = set()
    for tag, body in spellings.items():
        p = tmp_path / f"{tag}.v"
        p.write_text(f"module l(input s_n, input r_n, output q, output qn);\n  {body}\nendmodule\n")
        (d,) = run(p).diagnostics
        got.add((d.kind, str(d.severity), d.evidence["storage_element"],
                 tuple(sorted(d.evidence["loop"]["hold"][0].items()))))
    assert len(got) == 1, got
