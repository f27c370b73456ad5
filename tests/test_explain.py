"""``hazlint explain`` read as a user reads it: every rule, each option once under its current
name with its default in TOML form (TOML 1.0: true/false, integers, floats, strings, arrays),
no reStructuredText markup; ``explain`` without a rule lists the rules."""
from __future__ import annotations

import re
import tomllib

import pytest

from hazlint.cli import main
from hazlint.findings.names import take_note
from hazlint.plugins import PSEUDO_RULES, all_rules


@pytest.fixture
def explain(capsys):
    def run(*args):
        code = main(["explain", *args])
        return code, capsys.readouterr().out
    return run


def test_explain_without_a_rule_lists_every_rule(explain):
    code, out = explain()
    assert code == 0
    ids = [r.id for r in all_rules()] + sorted(PSEUDO_RULES)
    listed = re.findall(r"^  (\S+)  +(?:error|warning|info) ", out, re.M)
    assert listed == ids
    assert "hazlint explain RULE" in out


def test_each_rule_reads_as_plain_text_with_toml_defaults(explain):
    for r in all_rules():
        code, out = explain(r.id)
        assert code == 0
        assert "``" not in out and "::" not in out and "**" not in out     # no markup
        opts = re.findall(r"^  (\w+) = (.*?)  \((.*)\)$", out, re.M)
        names = [n for n, _, _ in opts]
        assert len(names) == len(set(names))                             # each option once
        current = {o.name for o in r.options if not o.old_name_of}
        assert set(names) == current                                     # old names not listed
        for name, default, _type in opts:
            # the default is a TOML value: the standard library's TOML reader takes it back
            want = next(o.default for o in r.options if o.name == name)
            assert tomllib.loads(f"x = {default}")["x"] == want
    code, out = explain("front-end")
    assert code == 0 and "No options" in out


def test_old_option_name_still_works_with_one_note(tmp_path, capsys):
    # the old name of element_severity is read, named beside the new one in explain, and
    # makes the run print the deprecation note
    assert main(["explain", "combinational-loop"]) == 0
    out = capsys.readouterr().out
    assert "element_severity = \"info\"" in out and "old name storage_pair_severity" in out
    from hazlint.plugins import get_rule
    take_note()
    opts = get_rule("combinational-loop").resolve_options(
        {"storage_pair_severity": "error"}, "hazlint.toml: ")
    assert opts["element_severity"] == "error"
    note = take_note()
    assert note and "storage_pair_severity" in note and "element_severity" in note
