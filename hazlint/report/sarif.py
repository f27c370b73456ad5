"""SARIF 2.1.0 output (OASIS Static Analysis Results Interchange Format).

One run; the driver lists every rule that produced a result (or every registered rule, when the
registry is available) with its one-line summary and its documentation as help text. Each result
has:

* a physical location relative to the source root (``uriBaseId`` ``SRCROOT``, declared in
  ``originalUriBaseIds``; §3.4.3-3.4.4) for a file inside it, an absolute ``file:`` URI for a
  file outside it (:func:`hazlint.paths.inside_root` decides, as for every report), and a
  logical location for the hierarchical instance path;
* ``relatedLocations`` for the secondary places (the stem of a reconvergent fanout, the gates
  on a loop) taken from :attr:`Diagnostic.related`;
* one ``codeFlow`` per evidence path (:attr:`Diagnostic.flows`: the two reconvergent branches,
  the loop), each hop a ``threadFlowLocation`` with its delay and arrival time;
* ``partialFingerprints`` from :func:`hazlint.baseline.fingerprint` (rule, instance, evidence
  nets; no line numbers), so a code-scanning service tracks a finding across commits;
* waived findings are kept with a ``suppressions`` entry carrying the waiver's reason.

Section numbers below refer to the SARIF 2.1.0 OASIS standard.
"""
from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any, Iterable, Mapping
from urllib.parse import quote

from .. import __version__
from ..baseline import fingerprint
from ..findings.fold import describes_loop
from ..findings.public import public_evidence
from ..findings.words import UNIT_DELAYS, TimeUnit, evidence_unit
from ..diagnostics import Diagnostic, Hop, Location, Severity, sort_diagnostics
from ..paths import inside_root
from .registry import ReportOptions

NAME = "sarif"
SUMMARY = "SARIF 2.1.0 (OASIS): one run, rules, results with code flows and fingerprints"

SARIF_VERSION = "2.1.0"
SARIF_SCHEMA_URI = ("https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/"
                    "sarif-schema-2.1.0.json")
FINGERPRINT_NAME = "hazlintFinding/v1"
ROOT_ID = "SRCROOT"

_LEVEL = {Severity.ERROR: "error", Severity.WARNING: "warning", Severity.INFO: "note"}


# ---------------------------------------------------------------------------------------------
# rule metadata


def _rule_attr(rule: Any, *names: str, default: Any = None) -> Any:
    for n in names:
        v = rule.get(n) if isinstance(rule, Mapping) else getattr(rule, n, None)
        if v not in (None, ""):
            return v
    return default


def rule_descriptor(rule_id: str, rule: Any = None) -> dict:
    """reportingDescriptor (3.49) for one rule; ``rule`` is a rule object or mapping with
    ``summary``, ``doc``/``documentation`` and ``severity``/``default_severity``."""
    summary = _rule_attr(rule, "summary", "short", default=rule_id) if rule is not None else rule_id
    doc = _rule_attr(rule, "doc", "documentation", "help", default="") if rule is not None else ""
    sev = _rule_attr(rule, "default_severity", "severity") if rule is not None else None
    desc: dict[str, Any] = {
        "id": rule_id,
        "name": _camel(rule_id),
        "shortDescription": {"text": str(summary).strip() or rule_id},
    }
    if doc:
        doc = str(doc).strip()
        desc["fullDescription"] = {"text": doc.split("\n\n", 1)[0].strip()}
        desc["help"] = {"text": doc}
    else:
        desc["help"] = {"text": str(summary).strip() or rule_id}
    if sev is not None:
        try:
            level = _LEVEL[sev if isinstance(sev, Severity) else Severity.parse(str(sev))]
            desc["defaultConfiguration"] = {"level": level}
        except ValueError:
            pass
    kind = _rule_attr(rule, "kind") if rule is not None else None
    if kind:
        desc["properties"] = {"tags": [str(kind)]}
    return desc


def _camel(rule_id: str) -> str:
    parts = [p for p in rule_id.replace("_", "-").split("-") if p]
    return "".join(p[:1].upper() + p[1:] for p in parts) or rule_id


def registered_rules() -> dict[str, Any]:
    """The rule registry (:func:`hazlint.plugins.all_rules`); {} when it cannot be loaded."""
    try:
        from ..plugins import all_rules
        return {r.id: r for r in all_rules()}
    except Exception:       # a broken third-party plugin must not break the report
        return {}


# ---------------------------------------------------------------------------------------------
# locations


class _Locator:
    def __init__(self, root: str | None):
        self.root = os.path.abspath(root) if root else None
        self._seen: dict[str, dict] = {}     # a report names the same few files per hop

    def artifact(self, path: str) -> dict:
        """artifactLocation (3.4): relative to SRCROOT when inside the root, else a file URI."""
        got = self._seen.get(path)
        if got is None:
            got = self._seen[path] = self._artifact(path)
        return dict(got)

    def _artifact(self, path: str) -> dict:
        if not path:
            return {"uri": ""}
        rel = inside_root(path, self.root)
        if rel is not None:
            return {"uri": quote(rel), "uriBaseId": ROOT_ID}
        return {"uri": Path(os.path.abspath(path)).as_uri()}

    def physical(self, loc: Location) -> dict:
        phys: dict[str, Any] = {"artifactLocation": self.artifact(loc.path)}
        if loc.line and loc.line > 0:
            phys["region"] = {"startLine": int(loc.line),
                              "startColumn": max(1, int(loc.column or 1))}
        return phys

    def base_ids(self) -> dict:
        if not self.root:
            return {}
        uri = Path(self.root).as_uri()
        return {ROOT_ID: {"uri": uri if uri.endswith("/") else uri + "/"}}


def hop_message(h: Hop, unit: TimeUnit = UNIT_DELAYS) -> str:
    """The words of one evidence hop (net, gate and delay, times in ``unit``) as SARIF and the
    language server show them."""
    text = h.net
    if h.gate:
        text += f" driven by {h.cell} {h.gate}" if h.cell else f" driven by {h.gate}"
    extra = []
    if h.delay is not None:
        extra.append(f"delay {unit.words(h.delay)}")
    if h.arrival is not None:
        extra.append(f"arrives at {unit.words(h.arrival)}")
    if extra:
        text += " (" + ", ".join(extra) + ")"
    return text


def _flow_message(d: Diagnostic, i: int) -> str:
    n = len(d.flows)
    if describes_loop(d):
        return "loop" if n == 1 else f"loop {i + 1} of {n}"
    return f"path {i + 1} of {n}"


# ---------------------------------------------------------------------------------------------
# results


def result_object(d: Diagnostic, locator: _Locator, rule_index: int | None) -> dict:
    res: dict[str, Any] = {
        "ruleId": d.rule,
        "level": _LEVEL.get(d.severity, "warning"),
        "kind": "fail",
        "message": {"text": d.message},
        "locations": [_location(d, locator)],
        "partialFingerprints": {FINGERPRINT_NAME: fingerprint(d)},
    }
    if rule_index is not None:
        res["ruleIndex"] = rule_index
    related = []
    for i, r in enumerate(d.related):
        related.append({"id": i + 1, "physicalLocation": locator.physical(r.location),
                        "message": {"text": r.message}})
    if related:
        res["relatedLocations"] = related
    flows = []
    unit = evidence_unit(d.evidence) if d.flows else UNIT_DELAYS
    for i, flow in enumerate(d.flows):
        tfl = []
        for h in flow:
            loc: dict[str, Any] = {"message": {"text": hop_message(h, unit)}}
            if h.location is not None and h.location.path:
                loc["physicalLocation"] = locator.physical(h.location)
            if h.instance:
                loc["logicalLocations"] = [{"fullyQualifiedName": h.instance,
                                            "kind": "element"}]
            item: dict[str, Any] = {"location": loc}
            props = {k: v for k, v in (("net", h.net), ("delay", h.delay),
                                        ("arrival", h.arrival)) if v not in (None, "")}
            if props:
                item["properties"] = props
            tfl.append(item)
        if tfl:
            flows.append({"message": {"text": _flow_message(d, i)},
                          "threadFlows": [{"locations": tfl}]})
    if flows:
        res["codeFlows"] = flows
    props: dict[str, Any] = {"kind": d.kind}
    if d.instance:
        props["instance"] = d.instance
    if d.fix:
        props["fix"] = d.fix
    if d.notes:
        props["notes"] = list(d.notes)
    ev = _jsonable(public_evidence(d.evidence)) if d.evidence else None
    if ev:
        props["evidence"] = ev
    res["properties"] = props
    if d.waived is not None:
        res["suppressions"] = [{"kind": "inSource", "status": "accepted",
                                "justification": d.waived or "accepted"}]
    return res


def _location(d: Diagnostic, locator: _Locator) -> dict:
    loc: dict[str, Any] = {"physicalLocation": locator.physical(d.location)}
    if d.instance:
        loc["logicalLocations"] = [{"fullyQualifiedName": d.instance, "kind": "element"}]
    return loc


def _jsonable(obj: Any) -> Any:
    # evidence is meant to be JSON-able already; be defensive about tuples, sets, enums
    return json.loads(json.dumps(obj, default=str))


def _sarif_parts(diagnostics: Iterable[Diagnostic], *, root: str | None = None,
                 rules: Mapping[str, Any] | None = None, waived: Iterable[Diagnostic] = (),
                 all_rules: bool = False):
    """The log without its results (``runs[0]["results"]`` is empty) and an iterator over the
    result objects in order: a report of tens of thousands of findings is written one result
    at a time, never held as one document."""
    diags = sort_diagnostics(diagnostics)
    sup = [d if d.waived is not None else d.with_waiver("accepted") for d in waived]
    everything = diags + sort_diagnostics(sup)
    rules = dict(rules or {})
    ids = sorted(rules) if all_rules else []
    seen = set(ids)
    for d in everything:
        if d.rule not in seen:
            ids.append(d.rule)
            seen.add(d.rule)
    if not all_rules:
        ids.sort()
    index = {rid: i for i, rid in enumerate(ids)}
    locator = _Locator(root)
    run: dict[str, Any] = {
        "tool": {"driver": {
            "name": "hazlint",
            "version": __version__,
            "semanticVersion": __version__,
            "rules": [rule_descriptor(rid, rules.get(rid)) for rid in ids],
        }},
        "columnKind": "unicodeCodePoints",
        "results": [],
        "invocations": [{"executionSuccessful": True}],
    }
    bases = locator.base_ids()
    if bases:
        run["originalUriBaseIds"] = bases
    log = {"$schema": SARIF_SCHEMA_URI, "version": SARIF_VERSION, "runs": [run]}
    return log, (result_object(d, locator, index.get(d.rule)) for d in everything)


def build_sarif(diagnostics: Iterable[Diagnostic], *, root: str | None = None,
                rules: Mapping[str, Any] | None = None, waived: Iterable[Diagnostic] = (),
                all_rules: bool = False) -> dict:
    """The SARIF log (a dict) for findings ``diagnostics`` plus suppressed ``waived`` ones.

    ``rules`` maps rule id to rule object (metadata); rules without an entry get a minimal
    descriptor. ``all_rules`` lists every rule in ``rules``, not only those with results.
    """
    log, results = _sarif_parts(diagnostics, root=root, rules=rules, waived=waived,
                                all_rules=all_rules)
    log["runs"][0]["results"] = list(results)
    return log


_HOLE = "\0hazlint-results\0"      # stands in for the results array while the log is dumped


def write_log(log: dict, results: Iterable[dict], stream) -> None:
    """Write ``log`` (results empty) with ``results`` streamed into ``runs[0].results``: the
    metadata indented, one result per line (the C JSON encoder; same document as one dump)."""
    log["runs"][0]["results"] = _HOLE
    head, sep, tail = json.dumps(log, indent=2).partition(json.dumps(_HOLE))
    log["runs"][0]["results"] = []
    if not sep:
        raise AssertionError("results placeholder not found")
    stream.write(head)
    first = True
    for r in results:
        stream.write("[\n" if first else ",\n")
        stream.write(json.dumps(r))
        first = False
    stream.write("[]" if first else "\n]")
    stream.write(tail + "\n")


def write(result: Any, stream, options: ReportOptions | None = None) -> None:
    """Stream the SARIF text for a :class:`hazlint.api.LintResult` to ``stream``."""
    rules = getattr(result, "rules", None) or registered_rules()
    log, results = _sarif_parts(getattr(result, "diagnostics", ()) or (),
                                root=getattr(result, "root", None) or os.getcwd(),
                                rules=rules, waived=getattr(result, "waived", ()) or ())
    write_log(log, results, stream)


def render(result: Any, options: ReportOptions | None = None) -> str:
    """SARIF text for a :class:`hazlint.api.LintResult` (``diagnostics``, ``waived``, ``root``)."""
    import io
    buf = io.StringIO()
    write(result, buf, options)
    return buf.getvalue()
