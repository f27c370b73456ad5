"""CI annotation lines (one workflow command per finding)."""
from __future__ import annotations

import os
from types import SimpleNamespace

from hazlint.diagnostics import Diagnostic, Location, Severity
from hazlint.report import annotations


def diag(root, severity=Severity.WARNING, message="valve_enable can pulse", notes=(), line=7):
    return Diagnostic(rule="reconvergent-hazard", kind="static-1-hazard", severity=severity,
                      location=Location(os.path.join(root, "rtl", "press.v"), line, 3),
                      instance="press_top.g1", message=message, notes=notes,
                      fix="register the output")


def parse(line):
    """Split a workflow command the way the runner does (format from memory of its docs)."""
    assert line.startswith("::")
    head, _, data = line[2:].partition("::")
    level, _, props = head.partition(" ")
    unesc = lambda s: s.replace("%0A", "\n").replace("%0D", "\r").replace("%3A", ":") \
        .replace("%2C", ",").replace("%25", "%")
    fields = dict(p.split("=", 1) for p in props.split(","))
    return level, {k: unesc(v) for k, v in fields.items()}, unesc(data)


def test_line_format_and_escaping(tmp_path):
    root = str(tmp_path)
    d = diag(root, message="100% sure: a, b\nsecond", notes=("path 1: a -> g1 (3)",))
    line = annotations.annotation_line(d, root)
    assert "\n" not in line
    level, props, text = parse(line)
    assert level == "warning"
    assert props["file"] == "rtl/press.v" and props["line"] == "7" and props["col"] == "3"
    assert props["title"] == "hazlint reconvergent-hazard (press_top.g1)"
    # headline and fix only: the evidence lines stay in the full report
    assert text.splitlines() == ["100% sure: a, b", "second", "fix: register the output"]


def test_levels_and_waived_are_left_out(tmp_path):
    root = str(tmp_path)
    ds = [diag(root, Severity.ERROR, line=9), diag(root, Severity.INFO, line=8),
          diag(root, line=1).with_waiver("reviewed")]
    out = annotations.render(SimpleNamespace(diagnostics=ds, root=root))
    assert [parse(x)[0] for x in out.splitlines()] == ["notice", "error"]   # sorted by line


def test_path_outside_root_kept(tmp_path):
    d = diag(str(tmp_path / "other"))
    _, props, _ = parse(annotations.annotation_line(d, str(tmp_path / "proj")))
    assert props["file"].endswith("other/rtl/press.v")
