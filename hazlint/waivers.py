"""Waivers: accepted findings, each with a reason.

Inline, in the Verilog source, on the reported line or on the line above it::

    nand g1 (q, s_n, qb);   // hazlint accept(combinational-loop): set/reset storage pair by design
    // hazlint accept(unregistered-async, unbalanced-reconvergence): reset released by sync stage

The reason after the colon is required; a comment without one is itself reported. ``/* ... */``
works the same way.

In a waiver file (TOML, configuration key ``accept_file``), one table per accepted finding, with
the rule (or ``"*"``), an instance-path glob and the reason; ``path`` (a glob relative to the
waiver file) is optional::

    [[accept]]
    rule = "combinational-loop"
    instance = "press_top.u_latch.*"
    reason = "cross-coupled storage element reviewed"

A glitching net's finding (one finding for the pins one net drives) is accepted when the
acceptance names the net's own finding (the driver's line or instance) or every one of its
pins; an acceptance of some of its pins leaves the net reported, with a note.

A waiver that matches no finding of the rules that ran is reported (kind ``unused-acceptance``), so
stale waivers do not pile up.
"""
from __future__ import annotations

import fnmatch
import os
import re
import sys
from dataclasses import dataclass, field, replace
from typing import Iterable, Mapping, Sequence

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

from .diagnostics import Diagnostic, Location, Severity, pin_problems
from .errors import ConfigError
from .findings.evidence import AcceptanceEvidence
from .findings.names import rule_id

UNUSED_RULE = "unused-acceptance"
UNUSED_KIND = "unused-acceptance"
_INLINE = re.compile(
    r"(?://|/\*)\s*hazlint\s+accept\s*\(\s*([^)]*?)\s*\)\s*(?::\s*(.*?))?\s*(?:\*/.*)?$")
_FILE_KEYS = {"rule", "instance", "reason", "path"}


@dataclass
class Waiver:
    rules: tuple[str, ...]            # rule ids, "*" for any
    reason: str
    location: Location                # where the waiver is written
    origin: str                       # "inline" or "file"
    instance: str | None = None       # glob over the finding's instance path (file waivers)
    path_glob: str | None = None      # glob over the finding's path (file waivers)
    used: int = 0
    problems: list[str] = field(default_factory=list)

    def matches(self, d: Diagnostic, norm) -> bool:
        """Whether this acceptance covers ``d``, or one of the findings folded into it
        (:mod:`hazlint.findings.fold`: an acceptance written for any rule's report of a
        problem accepts the problem). A glitching net's finding
        (:mod:`hazlint.findings.netgroup`) is covered when the acceptance names the net's
        own finding, or every one of its pins (an acceptance of some pins leaves the others
        reported: see :meth:`pins_covered`)."""
        pins = pin_problems(d)
        if pins:
            own = self._matches_one(d.rule, d.location.path, d.location.line, d.instance, norm)
            return own or self.pins_covered(d, norm) == len(pins)
        return any(self._matches_one(rule, path, line, inst, norm)
                   for rule, path, line, inst in _members(d))

    def pins_covered(self, d: Diagnostic, norm) -> int:
        """How many pins of a glitching net's finding this acceptance covers (a pin is
        covered when the acceptance matches any finding folded into it)."""
        return sum(1 for _, members in pin_problems(d)
                   if any(self._matches_one(rule, path, line, inst, norm)
                          for rule, path, line, inst in members))

    def _matches_one(self, rule, path, line, instance, norm) -> bool:
        if "*" not in self.rules and rule not in self.rules:
            return False
        if self.origin == "inline":
            return (norm(path) == norm(self.location.path)
                    and line in (self.location.line, self.location.line + 1))
        if self.instance is not None and not fnmatch.fnmatchcase(instance, self.instance):
            return False
        if self.path_glob is not None:
            if not fnmatch.fnmatchcase(norm(path), self.path_glob):
                return False
        return True


def _members(d: Diagnostic):
    """(rule, path, line, instance) of ``d`` and of each finding folded into it."""
    yield d.rule, d.location.path, d.location.line, d.instance
    ev = d.evidence if isinstance(d.evidence, Mapping) else {}
    for m in ev.get("also") or ():
        if isinstance(m, Mapping):
            yield (m.get("rule", ""), m.get("path", ""), m.get("line", 0),
                   m.get("instance", ""))


def _norm(path: str) -> str:
    return os.path.normcase(os.path.abspath(path)) if path else ""


def scan_text(path: str, text: str) -> list[Waiver]:
    """Inline waivers in one source text."""
    if "hazlint" not in text:
        return []
    out = []
    for i, line in enumerate(text.splitlines(), 1):
        if "hazlint" not in line:
            continue
        m = _INLINE.search(line)
        if not m:
            continue
        rules = tuple(rule_id(r.strip(), f"{os.path.basename(path)}:{i}")
                      for r in m.group(1).split(",") if r.strip())
        reason = (m.group(2) or "").strip()
        w = Waiver(rules=rules, reason=reason, location=Location(path, i, m.start() + 1),
                   origin="inline")
        if not rules:
            w.problems.append("names no rule")
        if not reason:
            w.problems.append("gives no reason")
        out.append(w)
    return out


def scan_sources(paths: Iterable[str], texts: Mapping[str, str] | None = None) -> list[Waiver]:
    texts = {_norm(k): v for k, v in (texts or {}).items()}
    out: list[Waiver] = []
    seen = set()
    for p in paths:
        key = _norm(p)
        if key in seen:
            continue
        seen.add(key)
        if key in texts:
            text = texts[key]
        else:
            try:
                with open(p, encoding="utf-8", errors="replace") as fh:
                    text = fh.read()
            except OSError:
                continue
        out.extend(scan_text(p, text))
    return out


def read_waiver_file(path: str) -> list[Waiver]:
    try:
        with open(path, encoding="utf-8") as fh:
            text = fh.read()
        data = tomllib.loads(text)
    except OSError as exc:
        raise ConfigError(f"cannot read waiver file: {exc.strerror}", path=path) from None
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise ConfigError(f"invalid TOML in waiver file: {exc}", path=path,
                          line=int(m.group(1)) if m else None) from None
    unknown_top = set(data) - {"accept"}
    if unknown_top:
        k = sorted(unknown_top)[0]
        raise ConfigError(f"unknown key '{k}' in waiver file (expected [[accept]] tables)",
                          path=path, line=_line_of(text, k), construct=k)
    entries = data.get("accept", [])
    if not isinstance(entries, list):
        raise ConfigError("'accept' must be an array of tables ([[accept]])", path=path)
    header_lines = [i for i, ln in enumerate(text.splitlines(), 1)
                    if re.match(r"^\s*\[\[\s*accept\s*\]\]", ln)]
    base = os.path.dirname(os.path.abspath(path))
    out = []
    for k, e in enumerate(entries):
        line = header_lines[k] if k < len(header_lines) else 0
        if not isinstance(e, dict):
            raise ConfigError("each [[accept]] entry must be a table", path=path, line=line)
        bad = set(e) - _FILE_KEYS
        if bad:
            b = sorted(bad)[0]
            raise ConfigError(f"unknown key '{b}' in [[accept]] (known: "
                              f"{', '.join(sorted(_FILE_KEYS))})", path=path, line=line,
                              construct=b)
        rule = e.get("rule")
        rules = (rule,) if isinstance(rule, str) else tuple(rule or ())
        if not rules or not all(isinstance(r, str) for r in rules):
            raise ConfigError("[[accept]] needs 'rule' (a rule id, a list of them, or \"*\")",
                              path=path, line=line)
        rules = tuple(rule_id(r, f"{os.path.basename(path)}:{line}") for r in rules)
        reason = e.get("reason")
        if not isinstance(reason, str) or not reason.strip():
            raise ConfigError("[[accept]] needs a non-empty 'reason'", path=path, line=line)
        inst = e.get("instance")
        pglob = e.get("path")
        if inst is None and pglob is None:
            raise ConfigError("[[accept]] needs 'instance' (a glob over instance paths) or "
                              "'path'", path=path, line=line)
        for key, v in (("instance", inst), ("path", pglob)):
            if v is not None and not isinstance(v, str):
                raise ConfigError(f"[[accept]] '{key}' must be a string", path=path, line=line)
        out.append(Waiver(rules=rules, reason=reason.strip(), location=Location(path, line, 1),
                          origin="file", instance=inst,
                          path_glob=_norm(os.path.join(base, pglob)) if pglob else None))
    return out


def _line_of(text: str, key: str) -> int | None:
    for i, ln in enumerate(text.splitlines(), 1):
        if re.match(rf"^\s*\[*\s*{re.escape(key)}\b", ln):
            return i
    return None


def apply_waivers(diagnostics: Sequence[Diagnostic], waivers: Sequence[Waiver],
                  rules_run: Iterable[str], known_rules: Iterable[str] = ()
                  ) -> tuple[list[Diagnostic], list[Diagnostic], list[Diagnostic]]:
    """(kept, waived, waiver problems). A waiver counts as used when it matches a finding;
    waivers for rules that did not run are neither used nor reported."""
    run = set(rules_run)
    known = set(known_rules) | run
    valid = [w for w in waivers if not w.problems]
    kept: list[Diagnostic] = []
    waived: list[Diagnostic] = []
    for d in diagnostics:
        hit = None
        partial = []
        for w in valid:
            if w.matches(d, _norm):
                w.used += 1
                hit = hit or w
            elif pin_problems(d):
                k = w.pins_covered(d, _norm)
                if k:
                    w.used += 1         # it accepts pins that are still there: not stale
                    partial.append((w, k))
        if hit is not None:
            waived.append(d.with_waiver(hit.reason))
        elif partial:
            n = len(pin_problems(d))
            kept.append(replace(d, notes=tuple(d.notes) + tuple(
                f"accepted for {k} of its {n} pins by the acceptance at "
                f"{os.path.basename(w.location.path)}:{w.location.line} ({w.reason}); the "
                f"net is reported for the other pins" for w, k in partial)))
        else:
            kept.append(d)
    problems = []
    for w in waivers:
        names = ", ".join(w.rules) or "?"
        if w.problems:
            msg = f"acceptance of {names} {' and '.join(w.problems)}; it is ignored"
        elif w.used:
            continue
        else:
            unknown = [r for r in w.rules if r != "*" and r not in known]
            if unknown:
                msg = f"acceptance names unknown rule '{unknown[0]}'"
            elif "*" not in w.rules and not (set(w.rules) & run):
                continue          # its rules were not run this time: no verdict
            else:
                what = (f"instance '{w.instance}'" if w.instance else
                        f"path '{w.path_glob}'" if w.path_glob else "this line or the next")
                msg = f"acceptance of {names} matches no finding ({what})"
        problems.append(Diagnostic(
            rule=UNUSED_RULE, kind=UNUSED_KIND, severity=Severity.WARNING, location=w.location,
            instance="", message=msg,
            evidence=AcceptanceEvidence(
                rules=list(w.rules), origin=w.origin, reason=w.reason,
                key=f"waiver:{w.origin}:{','.join(w.rules)}:{w.instance or ''}"),
            fix="remove the acceptance, or correct its rule id or pattern"))
    return kept, waived, problems
