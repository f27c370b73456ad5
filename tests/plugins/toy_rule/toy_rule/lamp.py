"""A status lamp output driven by logic (a rule with no proof hook).

What it finds
    Every plain output whose driver is a logic gate. Kind ``lamp-driver-note``.

How it is proven
    It is not: the rule declares no proof hook, so hazlint reports its findings as not
    proven and says so in their evidence.
"""
from types import SimpleNamespace

from hazlint.diagnostics import Diagnostic, Kind, Severity

KIND = Kind("lamp-driver-note", "info", "a plain output driven by a logic gate")


def check(design, context):
    g = design.graph
    for n, d in sorted(g.nodes(data=True)):
        drivers = d.get("inputs") or []
        if d.get("kind") != "sink" or d.get("role") != "output" or n in context.sensitive_sinks:
            continue
        if not drivers or g.nodes[drivers[0]].get("kind") != "gate":
            continue
        yield Diagnostic(
            rule="lamp-driver", kind=KIND.name, severity=Severity.INFO,
            location=context.location(drivers[0]), instance=d.get("instance", "") or "",
            message=f"output {context.describe(n)} is driven by a gate",
            evidence={"output": n})


RULE = SimpleNamespace(ID="lamp-driver", SUMMARY="plain output driven by a gate",
                       SEVERITY="info", KINDS=(KIND,), OPTIONS=(), check=check, __doc__=__doc__)
