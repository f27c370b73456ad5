"""Findings as plain data.

A :class:`Diagnostic` is a frozen value. Rules create them; waivers, baselines and the reporters
only read them. Everything a designer needs to act is inside: where to edit (``path:line:column``),
which instance (``instance``), what was found (``kind``, ``message``), the evidence (paths with
their delays, the witness vector, the loop) and how to fix it (``fix``).
"""
from __future__ import annotations

import enum
import json
from dataclasses import dataclass, field, replace
from typing import Any, Iterable, Mapping

from .findings.public import public_evidence
from .findings.words import UNIT_DELAYS, TimeUnit, gate_words


class Severity(enum.IntEnum):
    """Ordered severities; a run fails on findings at or above ``--fail-on``."""

    INFO = 0
    WARNING = 1
    ERROR = 2

    @classmethod
    def parse(cls, text: str) -> "Severity":
        try:
            return cls[text.strip().upper()]
        except KeyError:
            raise ValueError(f"unknown severity '{text}' (expected info, warning or error)") from None

    def __str__(self) -> str:  # "warning", as printed
        return self.name.lower()


@dataclass(frozen=True)
class Kind:
    """A kind of finding: its name (what scripts match on), the severity it usually has and
    one line on what it means. Rules declare the kinds they emit (``KINDS`` of a rule); a
    third-party rule declares a new kind with one of these."""

    name: str
    severity: str = "warning"
    description: str = ""


# The trade's vocabulary for what was found; scripts may rely on these strings.
BUILTIN_KINDS = (
    Kind("combinational-loop", "error", "a path from a gate's output back to its own input"),
    Kind("unbalanced-reconvergence", "warning",
         "a fanout stem whose branches meet again with different delays"),
    Kind("unregistered-async", "error",
         "a glitch-sensitive pin driven by combinational logic"),
    Kind("static-1-hazard", "error", "a proven glitch to 0 on a signal that should stay 1"),
    Kind("static-0-hazard", "error", "a proven glitch to 1 on a signal that should stay 0"),
    Kind("dynamic-hazard", "error", "a proven extra change on a signal that changes once"),
    Kind("function-hazard", "error",
         "a glitch no logic implementation avoids for a change of several inputs"),
    Kind("oscillation", "error", "a loop with no stable state for some input values"),
    Kind("unused-acceptance", "warning", "an acceptance that matched no finding"),
    Kind("design-note", "info", "what reading the design noted"),
    Kind("analysis-incomplete", "warning",
         "a rule stopped at its work budget: part of the design unchecked"),
)
KINDS = tuple(k.name for k in BUILTIN_KINDS)
#: the kinds the prover gives a finding whose hazard it proved (the finding's rule stays)
PROVEN_HAZARD_KINDS = ("static-1-hazard", "static-0-hazard", "dynamic-hazard")


@dataclass(frozen=True)
class Location:
    """A place in a source file. ``path`` is as given to the loader (absolute or relative)."""

    path: str
    line: int
    column: int = 1

    def __str__(self) -> str:
        return f"{self.path}:{self.line}:{self.column}"


@dataclass(frozen=True)
class Hop:
    """One step along a path of evidence: the net, the gate that drives it, where that gate is."""

    net: str
    gate: str = ""            # instance name of the driving gate/cell ("" for a port)
    cell: str = ""            # gate primitive or cell type
    location: Location | None = None
    instance: str = ""        # hierarchical instance path of the gate
    delay: float | None = None     # delay of this hop (pin-to-output), time units
    arrival: float | None = None   # cumulative arrival time at the hop's net

    def to_json(self) -> dict[str, Any]:
        d: dict[str, Any] = {"net": self.net, "gate": self.gate, "cell": self.cell,
                             "instance": self.instance}
        if self.location is not None:
            d["path"] = self.location.path
            d["line"] = self.location.line
        if self.delay is not None:
            d["delay"] = self.delay
        if self.arrival is not None:
            d["arrival"] = self.arrival
        return d

    def describe(self, unit: TimeUnit = UNIT_DELAYS) -> str:
        """``net @arrival via <gate> (file:line)``, the arrival a number in ``unit``."""
        where = f" ({self.location.path}:{self.location.line})" if self.location else ""
        via = f" {gate_words(self.cell, self.gate)}" if self.gate else ""
        t = f" @{unit.number(self.arrival)}" if self.arrival is not None else ""
        return f"{self.net}{t} via{via}{where}" if via else f"{self.net}{t}{where}"

    @classmethod
    def fast(cls, net, gate, cell, location, instance, delay, arrival) -> "Hop":
        """The same value as ``Hop(net=..., ...)``, built without the frozen dataclass's
        per-field ``object.__setattr__`` calls: evidence paths of large netlists hold millions
        of hops, and this is about three times quicker. Every field must be given."""
        h = object.__new__(cls)
        h.__dict__.update(net=net, gate=gate, cell=cell, location=location, instance=instance,
                          delay=delay, arrival=arrival)
        return h


@dataclass(frozen=True)
class Related:
    """A secondary location with a message (SARIF relatedLocations, LSP relatedInformation)."""

    location: Location
    message: str


@dataclass(frozen=True)
class Diagnostic:
    """One finding."""

    rule: str
    kind: str
    severity: Severity
    location: Location
    instance: str
    message: str
    evidence: Mapping[str, Any] = field(default_factory=dict)   # JSON-able, structured
    # (defaults by factory, so the class has no attribute of these names: a deferred
    # diagnostic's __getattr__ must see the access; see Diagnostic.deferred)
    notes: tuple[str, ...] = field(default_factory=tuple)   # human-readable evidence lines
    related: tuple[Related, ...] = field(default_factory=tuple)
    flows: tuple[tuple[Hop, ...], ...] = field(default_factory=tuple)  # paths (SARIF codeFlows)
    fix: str = field(default_factory=str)
    waived: str | None = None                # reason, when a waiver matched

    # ---- deferred findings ---------------------------------------------------------------------
    @classmethod
    def deferred(cls, rule: str, kind: str, severity: Severity, location: Location,
                 instance: str, build) -> "Diagnostic":
        """A diagnostic whose ``message``, ``evidence``, ``notes``, ``related``, ``flows`` and
        ``fix`` are made by ``build()`` (a dict of those fields) on first access. A rule with
        tens of thousands of findings yields these at the cost of a small record each; what a
        reader then sees is exactly the diagnostic ``Diagnostic(..., **build())`` (equality,
        hashing, ``replace``, pickling and every report read the fields as usual)."""
        d = object.__new__(cls)
        d.__dict__.update(rule=rule, kind=kind, severity=severity, location=location,
                          instance=instance, waived=None, _build=build)
        return d

    def __getattr__(self, name: str):
        # called only for attributes missing from __dict__: the fields a deferred diagnostic
        # has not built yet
        build = self.__dict__.get("_build")
        if build is None or name not in _DEFERRED:
            raise AttributeError(name)
        made = build()      # two threads racing here both build the same values
        self.__dict__.update((f, made[f] if f in made else _DEFAULTS[f]()) for f in _DEFERRED)
        self.__dict__.pop("_build", None)
        return self.__dict__[name]

    def __getstate__(self):
        if "_build" in self.__dict__:
            self.message          # noqa: B018 - builds the deferred fields
        return dict(self.__dict__)

    # ---- convenience -------------------------------------------------------------------------
    @property
    def path(self) -> str:
        return self.location.path

    @property
    def line(self) -> int:
        return self.location.line

    @property
    def column(self) -> int:
        return self.location.column

    def with_severity(self, severity: Severity) -> "Diagnostic":
        return replace(self, severity=severity)

    def with_waiver(self, reason: str) -> "Diagnostic":
        return replace(self, waived=reason)

    def sort_key(self) -> tuple:
        return (self.location.path, self.location.line, self.location.column, self.rule,
                self.instance, self.message)

    def fingerprint_material(self) -> str:
        """What identifies this finding across unrelated edits: rule, kind, instance and the nets
        of its evidence, never line numbers. A finding folded from several
        (:mod:`hazlint.findings.fold`) is identified by its problem alone (the sink or the
        loop), so another stem or witness for the same problem keeps it."""
        problem = self.evidence.get("problem") if isinstance(self.evidence, Mapping) else None
        if problem:
            return problem_material(problem)
        nets = sorted({h.net for flow in self.flows for h in flow})
        key = self.evidence.get("key") if isinstance(self.evidence, Mapping) else None
        return json.dumps([self.rule, self.kind, self.instance, key, nets], sort_keys=True)

    def to_json(self, relpath=lambda p: p) -> dict[str, Any]:
        d: dict[str, Any] = {
            "rule": self.rule,
            "kind": self.kind,
            "severity": str(self.severity),
            "path": relpath(self.location.path),
            "line": self.location.line,
            "column": self.location.column,
            "instance": self.instance,
            "message": self.message,
            "evidence": _relativise(public_evidence(self.evidence), relpath),
            "fix": self.fix,
        }
        if self.flows:
            d["evidence"].setdefault("paths", [
                [dict(h.to_json(), **({"path": relpath(h.location.path)} if h.location else {}))
                 for h in flow] for flow in self.flows])
        if self.waived is not None:
            d["accepted"] = self.waived
        return d


def problem_material(problem: str) -> str:
    """The fingerprint material of a folded finding with problem key ``problem``."""
    return json.dumps(["problem", problem])


def pin_problems(d: "Diagnostic") -> list:
    """``[(problem, [[rule, path, line, instance], ...]), ...]`` of the pins folded into a
    glitching net's finding (:mod:`hazlint.findings.netgroup`); empty for any other."""
    folded = getattr(d.evidence, "folded", None)
    return [(k, ms) for k, ms in (getattr(folded, "pin_members", None) or ())]


_DEFERRED = ("message", "evidence", "notes", "related", "flows", "fix")
_DEFAULTS = {"message": str, "evidence": dict, "notes": tuple, "related": tuple,
             "flows": tuple, "fix": str}


def _relativise(obj: Any, relpath) -> Any:
    if isinstance(obj, dict):
        return {k: (relpath(v) if k == "path" and isinstance(v, str) else _relativise(v, relpath))
                for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_relativise(v, relpath) for v in obj]
    return obj


def sort_diagnostics(diags: Iterable[Diagnostic]) -> list[Diagnostic]:
    return sorted(diags, key=Diagnostic.sort_key)
