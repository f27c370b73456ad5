"""A glitch-sensitive pin of the press interlock driven straight by a gate.

What it finds
    Every glitch-sensitive pin (asynchronous reset or set, clock, latch enable, three-state
    enable, output declared asynchronous) whose driver is a logic gate rather than a register
    or an input. Kind ``gated-interlock-pin``.

Why it matters
    A gate output can glitch while its inputs change; at such a pin a glitch acts at once.

How it is proven
    The proof hook asks the prover to decide a hazard at the pin over every change the
    change model allows, so a finding becomes a proven static or dynamic hazard, is dropped
    when proven absent, or stays a warning when the proof is inconclusive.

How to fix
    Drive the pin from a register.
"""
from types import SimpleNamespace

from hazlint.diagnostics import Diagnostic, Kind, Severity
from hazlint.findings.requests import HazardAtSink

KIND = Kind("gated-interlock-pin", "warning",
            "a glitch-sensitive pin whose driver is a logic gate")


def check(design, context):
    g = design.graph
    for sink in sorted(context.sensitive_sinks):
        drivers = g.nodes[sink].get("inputs") or []
        if not drivers or g.nodes[drivers[0]].get("kind") != "gate":
            continue
        yield Diagnostic(
            rule="interlock-pin", kind=KIND.name, severity=Severity.WARNING,
            location=context.location(drivers[0]),
            instance=g.nodes[drivers[0]].get("instance", "") or "",
            message=f"{context.describe(sink)} is driven by a gate",
            evidence={"pin": sink, "driver": drivers[0]},
            fix="drive the pin from a register")


def prove(diagnostic, evidence):
    """A hazard at the pin, over the change model."""
    return HazardAtSink(sink=evidence["pin"])


RULE = SimpleNamespace(ID="interlock-pin", SUMMARY="glitch-sensitive pin driven by a gate",
                       SEVERITY="warning", KINDS=(KIND,), OPTIONS=(), check=check,
                       prove=prove, __doc__=__doc__)
