"""Baseline files: record today's findings, then fail only on new ones.

A finding is matched by its *fingerprint*: a hash of the rule, the kind, the hierarchical
instance path, the rule's evidence key and the nets along its evidence paths
(:meth:`hazlint.diagnostics.Diagnostic.fingerprint_material`). Line and column numbers are not
part of it, so inserting a comment above a gate, reformatting a file or moving a module to
another file leaves the baseline valid; changing the circuit along a hazard's paths makes it a
new finding, which is the point. Matching counts multiplicity: two identical fingerprints in the
baseline absorb at most two findings.

File format (JSON, written sorted so it diffs well)::

    {"hazlint-baseline": 1, "tool": "hazlint 0.1.0",
     "findings": [{"fingerprint": "...", "rule": "...", "kind": "...", "instance": "...",
                   "path": "rtl/press.v", "line": 12, "message": "..."}, ...]}

Only ``fingerprint`` is used for matching; the other fields are there for the human reading the
diff in review. A glitching net's finding (:mod:`hazlint.findings.netgroup`) also matches a
baseline that holds the old fingerprint of every one of its pins.
"""
from __future__ import annotations

import hashlib
import json
import os
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterable, Sequence

from . import __version__
from .diagnostics import Diagnostic, pin_problems, problem_material, sort_diagnostics
from .errors import ConfigError
from .paths import relpath

FORMAT = 1
_MAGIC = "hazlint-baseline"


def fingerprint(d: Diagnostic) -> str:
    """Stable identity of a finding across unrelated edits (hex, 32 characters)."""
    return _digest(d.fingerprint_material())


def _digest(material: str) -> str:
    return hashlib.sha256(material.encode("utf-8")).hexdigest()[:32]


def pin_fingerprints(d: Diagnostic) -> list[str]:
    """The fingerprints the pins of a glitching net's finding had as findings of their own
    (:mod:`hazlint.findings.netgroup`); empty for any other finding."""
    return [_digest(problem_material(k)) for k, _ in pin_problems(d)]


@dataclass
class Baseline:
    path: str = ""
    counts: Counter = field(default_factory=Counter)     # fingerprint -> how many recorded
    entries: list = field(default_factory=list)

    def split(self, diagnostics: Iterable[Diagnostic]) -> tuple[list[Diagnostic], list[Diagnostic]]:
        """(new, known): ``known`` are findings the baseline accounts for."""
        left = Counter(self.counts)
        new: list[Diagnostic] = []
        known: list[Diagnostic] = []
        for d in sort_diagnostics(diagnostics):
            fp = fingerprint(d)
            if left[fp] > 0:
                left[fp] -= 1
                known.append(d)
                continue
            # a glitching net's finding is known when each of its pins was recorded as a
            # finding of its own (a baseline written before pins were folded per net); a pin
            # the baseline does not hold makes the finding new
            need = Counter(pin_fingerprints(d))
            if need and all(left[f] >= k for f, k in need.items()):
                left.subtract(need)
                known.append(d)
            else:
                new.append(d)
        return new, known

    def fixed(self, diagnostics: Iterable[Diagnostic]) -> list[dict]:
        """Baseline entries no current finding matches (fixed since, or changed beyond match)."""
        seen = Counter()
        for d in diagnostics:
            seen[fingerprint(d)] += 1
            seen.update(pin_fingerprints(d))
        out = []
        for e in self.entries:
            fp = e["fingerprint"]
            if seen[fp] > 0:
                seen[fp] -= 1
            else:
                out.append(e)
        return out

    def __len__(self) -> int:
        return sum(self.counts.values())


def baseline_entries(diagnostics: Iterable[Diagnostic], root: str | None = None) -> list[dict]:
    rows = []
    for d in sort_diagnostics(diagnostics):
        if d.waived is not None:
            continue
        rows.append({"fingerprint": fingerprint(d), "rule": d.rule, "kind": d.kind,
                     "instance": d.instance, "path": relpath(d.location.path, root),
                     "line": d.location.line, "message": d.message})
    rows.sort(key=lambda r: (r["path"], r["rule"], r["instance"], r["fingerprint"]))
    return rows


def write_baseline(path: str | os.PathLike, diagnostics: Sequence[Diagnostic],
                   root: str | None = None) -> int:
    """Write a baseline of the (unwaived) findings; returns the number recorded."""
    rows = baseline_entries(diagnostics, root)
    doc = {_MAGIC: FORMAT, "tool": f"hazlint {__version__}", "findings": rows}
    text = json.dumps(doc, indent=1, sort_keys=True) + "\n"
    from .store.files import atomic_write
    try:
        atomic_write(Path(path), lambda fh: fh.write(text), private=False)
    except OSError as exc:
        raise ConfigError(f"cannot write baseline: {exc.strerror}", path=os.fspath(path)) from None
    return len(rows)


def load_baseline(path: str | os.PathLike) -> Baseline:
    p = os.fspath(path)
    try:
        with open(p, encoding="utf-8") as fh:
            text = fh.read()
    except OSError as exc:
        raise ConfigError(f"cannot read baseline: {exc.strerror}", path=p) from None
    try:
        doc = json.loads(text)
    except ValueError as exc:
        line = getattr(exc, "lineno", None)
        raise ConfigError(f"baseline is not valid JSON: {getattr(exc, 'msg', exc)}",
                          path=p, line=line) from None
    if not isinstance(doc, dict) or doc.get(_MAGIC) != FORMAT:
        raise ConfigError(f"not a hazlint baseline (missing \"{_MAGIC}\": {FORMAT})", path=p,
                          line=1)
    rows = doc.get("findings")
    if not isinstance(rows, list):
        raise ConfigError("baseline has no \"findings\" list", path=p, line=1)
    counts: Counter = Counter()
    entries = []
    for i, r in enumerate(rows):
        if not isinstance(r, dict) or not isinstance(r.get("fingerprint"), str):
            raise ConfigError(f"baseline entry {i + 1} has no \"fingerprint\" string", path=p,
                              construct=json.dumps(r)[:60])
        counts[r["fingerprint"]] += 1
        entries.append(r)
    return Baseline(path=p, counts=counts, entries=entries)
