"""Waiver comments and waiver files."""
from __future__ import annotations

import pytest

from hazlint.diagnostics import Diagnostic, Location, Severity
from hazlint.errors import ConfigError
from hazlint.waivers import apply_waivers, read_waiver_file, scan_text


def diag(path, line, rule="combinational-loop", instance="top.u_a.g1"):
    return Diagnostic(rule=rule, kind="combinational-loop", severity=Severity.ERROR,
                      location=Location(path, line, 3), instance=instance, message="m")


SRC = """module m;
  // hazlint accept(combinational-loop): storage pair by design
  nand g1 (q, s, qb);
  nand g2 (qb, r, q);   /* hazlint accept(combinational-loop, unregistered-async): reviewed */
  // hazlint accept(combinational-loop)
  // hazlint accept(combinational-loop): nothing here
endmodule
"""


def test_inline_syntax_and_reason_required():
    ws = scan_text("m.v", SRC)
    assert [(w.location.line, w.rules, w.reason) for w in ws] == [
        (2, ("combinational-loop",), "storage pair by design"),
        (4, ("combinational-loop", "unregistered-async"), "reviewed"),
        (5, ("combinational-loop",), ""),
        (6, ("combinational-loop",), "nothing here")]
    assert ws[2].problems == ["gives no reason"]


def test_line_or_line_above_and_unused_reported(tmp_path):
    p = tmp_path / "m.v"
    p.write_text(SRC)
    ws = scan_text(str(p), SRC)
    d3, d4, d9 = diag(str(p), 3), diag(str(p), 4), diag(str(p), 9)
    kept, waived, problems = apply_waivers([d3, d4, d9], ws, {"combinational-loop"})
    assert kept == [d9]
    assert [w.waived for w in waived] == ["storage pair by design", "reviewed"]
    msgs = sorted((p.location.line, p.kind, p.message) for p in problems)
    assert [m[:2] for m in msgs] == [(5, "unused-acceptance"), (6, "unused-acceptance")]
    assert "no reason" in msgs[0][2] and "matches no finding" in msgs[1][2]
    # when combinational-loop did not run, its waivers get no verdict (but a reasonless one is still bad)
    _, _, problems = apply_waivers([], ws, {"unregistered-async"}, {"combinational-loop"})
    assert [p.location.line for p in problems] == [5]


def test_waiver_file(tmp_path):
    f = tmp_path / "waivers.toml"
    f.write_text('[[accept]]\nrule = "combinational-loop"\ninstance = "top.u_a.*"\nreason = "latch"\n\n'
                 '[[accept]]\nrule = "*"\ninstance = "top.u_zz.*"\nreason = "old"\n')
    ws = read_waiver_file(str(f))
    kept, waived, problems = apply_waivers(
        [diag("x.v", 1), diag("x.v", 2, instance="top.u_b.g")], ws, {"combinational-loop"})
    assert len(waived) == 1 and waived[0].waived == "latch" and len(kept) == 1
    assert [(p.location.line, p.rule) for p in problems] == [(6, "unused-acceptance")]


@pytest.mark.parametrize("text, word", [
    ('[[accept]]\nrule = "combinational-loop"\ninstance = "*"\n', "reason"),
    ('[[accept]]\nrule = "combinational-loop"\nreason = "r"\n', "instance"),
    ('[[accept]]\nrule = "combinational-loop"\ninstance = "*"\nreason = "r"\nwhy = 1\n', "why"),
    ('[[waive]]\nrule = "x"\n', "waive"),
])
def test_waiver_file_errors(tmp_path, text, word):
    f = tmp_path / "w.toml"
    f.write_text(text)
    with pytest.raises(ConfigError) as ei:
        read_waiver_file(str(f))
    assert word in str(ei.value) and ei.value.path == str(f)
