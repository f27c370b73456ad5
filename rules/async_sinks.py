"""Glitch-sensitive pins driven by logic instead of a register.

What it finds
    Glitch-sensitive sinks whose driving cone, traced back to registers and primary inputs, is not
    a plain buffer/inverter chain from a single source. Glitch-sensitive sinks are asynchronous
    set/reset pins of registers and latches, clock pins, latch enables, three-state enables, and
    output ports marked asynchronous (configuration ``async_outputs`` or the Verilog attribute
    ``(* hazlint_async *)`` on the port). The evidence lists the cone's sources and every
    reconvergent stem inside it. Static inputs (quasi-static: they do not change while the
    circuit runs; configuration ``static_inputs``, or ``(* hazlint_static *)`` on the port) and
    constants do not count as sources of glitches.

    The hazard prover then decides each such pin over every transition its sources can make
    (the change model): inputs change at any time, so several can change together; register
    outputs of one clock change together at its edge; quasi-static sources never change; a
    one-at-a-time group (``one_at_a_time``, ``(* hazlint_one_at_a_time *)``) changes one member
    per transition; a one-hot group (``one_hot``, ``(* hazlint_one_hot *)``) is one-hot before
    and after. A finding is dropped only when every allowed transition is proven hazard-free;
    otherwise it shows the smallest witness, whether it is a function hazard (no logic removes
    it) or a logic hazard, and the model that was proven. The pins of one net with the same
    verdict are reported once, at the net's driver, with the pins counted by role and listed.

Why it matters
    These pins act on every pulse, however short. Logic between registers and such a pin can
    glitch when two of its inputs change together (or one input reaches it along two paths), and
    the glitch resets a register, clocks it, opens a latch or pulses an output.

Example
    ::

        module fault_latch(input clk, input estop_n, input maint_key, input d, output reg q);
          wire clr_n = estop_n & ~maint_key;      // logic in front of the reset
          always @(posedge clk or negedge clr_n)  // reported at the register
            if (!clr_n) q <= 1'b0; else q <= d;
        endmodule

How to fix
    Drive the pin from a register output (for a reset: assert asynchronously, release through a
    reset synchroniser), use a clock-gating cell for clocks, or declare what the circuit
    guarantees: an input quasi-static when it cannot change during operation, a group
    one-at-a-time when its members never change together (a gray-coded pointer).
"""
from __future__ import annotations

from hazlint.diagnostics import Diagnostic, Severity
from hazlint.findings.evidence import AsyncSinkEvidence
from hazlint.findings.requests import HazardAtSink
from hazlint.findings.words import count
from hazlint.plugins import Option

from ._common import name_list, stable_key

ID = "unregistered-async"
SUMMARY = "asynchronous pin, clock, enable or asynchronous output driven by combinational logic"
KINDS = ("unregistered-async",)
SEVERITY = "error"
OPTIONS = (
    Option("roles", list, ["clock", "enable", "set", "reset", "tristate_enable", "output"],
           "sink roles to check (output: only ports declared asynchronous)"),
)
_ROLE_WORDS = {"clock": "clock", "enable": "latch enable", "set": "asynchronous set",
               "reset": "asynchronous reset", "tristate_enable": "three-state enable",
               "output": "asynchronous output"}


def cone_report(context, sink: str):
    """(gates, toggling sources, quiet sources, reconvergent stems) of a sink's fan-in cone.

    A stem inside a single sink's cone always reconverges (all its branches end at the sink), so
    a node read two or more times by the cone's gates is a reconvergent stem.
    """
    g = context.graph
    gates, sources = context.fanin_cone(sink)
    quiet = {s for s in sources
             if s in context.quiet_sources or g.nodes[s]["kind"] == "const"}
    toggling = sources - quiet
    members = gates | sources
    reads: dict[str, int] = {}
    for v in gates:
        for u in g.nodes[v].get("inputs") or ():
            if u in members:
                reads[u] = reads.get(u, 0) + 1
    stems = {u for u, k in reads.items() if k >= 2 and u not in quiet}
    return gates, toggling, quiet, stems


def check(design, context):
    g = design.graph
    roles = set(context.options(ID)["roles"])
    for sink, role in context.sensitive_sinks.items():
        if role not in roles:
            continue
        rank = context.source_rank
        gates, toggling, quiet, stems = cone_report(context, sink)
        # clean: a buffer/inverter chain from one source, or logic whose other inputs are
        # constant or quasi-static and where the one toggling source does not reconverge
        if not toggling or (len(toggling) == 1 and not stems):
            continue
        d = g.nodes[sink]
        what = _ROLE_WORDS.get(role, role)
        reg = d.get("register")
        target = (f"{what} of {reg}" if reg and role != "output"
                  else f"output {d.get('port') or context.describe(sink)}")
        src_names = sorted((context.describe(s) for s in toggling))
        stem_names = sorted(context.describe(s) for s in stems)
        reason = (f"{count(len(gates), 'gate')} combine {count(len(toggling), 'source')}"
                  if len(toggling) > 1 else
                  f"{count(len(gates), 'gate')} with reconvergent fanout of {src_names[0]}")
        msg = (f"{target} is driven by combinational logic ({reason}: "
               f"{name_list(src_names, 4)}); a glitch here acts immediately")
        notes = [f"sources: {name_list(src_names, 12)}"]
        if quiet:
            notes.append("static (static inputs and constants never change): "
                         + name_list(sorted(context.describe(s) for s in quiet), 8))
        if stems:
            notes.append("reconvergent stems in the cone: " + name_list(stem_names, 8))
        first_gates = sorted(gates, key=lambda n: rank[n])[:3]
        if first_gates:
            notes.append("logic starts at: " + "; ".join(
                context.hop_text(context.hop(n)) for n in first_gates))
        flows = tuple(tuple(context.hop(n) for n in path)
                      for path in _paths_to_sink(g, sink, toggling, gates, rank, limit=8))
        yield Diagnostic(
            rule=ID, kind="unregistered-async", severity=Severity.parse(SEVERITY),
            location=context.location(sink), instance=d.get("instance", "") or (reg or ""),
            message=msg,
            evidence=AsyncSinkEvidence(
                sink_node=sink, role=role,
                source_nodes=sorted(toggling, key=lambda n: rank[n]),
                quiet_nodes=sorted(quiet, key=lambda n: rank[n]),
                stems=sorted(stems, key=lambda n: rank[n]), cone_gates=len(gates),
                key=stable_key("async", sink)),
            notes=tuple(notes), flows=flows,
            fix=_FIXES.get(role, _FIXES["reset"]))


# the usual remedy per pin (common practice in synchronous design)
_FIXES = {
    "reset": "drive the reset from a register: assert it asynchronously if needed, release it "
             "through a reset synchroniser",
    "set": "drive the set from a register: assert it asynchronously if needed, release it "
           "through a synchroniser",
    "clock": "gate the clock with a clock-gating cell (a latch-held enable), not with logic, "
             "or use the register's enable instead",
    "enable": "drive the latch enable from a register, or use a flip-flop instead of the latch",
    "tristate_enable": "drive the three-state enable from a register, so it changes once per "
                       "clock edge",
    "output": "register the output (a flip-flop in front of the port), so it changes once per "
              "clock edge",
}


def _paths_to_sink(g, sink, sources, gates, rank, limit):
    """One shortest path from each of (up to ``limit``) sources to the sink, from a single
    breadth-first search backwards through the cone (no path enumeration)."""
    from collections import deque
    toward: dict[str, str | None] = {sink: None}
    q = deque([sink])
    while q:
        v = q.popleft()
        for u in sorted(g.predecessors(v)):
            if u not in toward and (u in gates or u in sources):
                toward[u] = v
                if u in gates:
                    q.append(u)
    out = []
    for s in sorted(sources, key=lambda n: rank[n])[:limit]:
        if s not in toward:
            continue
        path = [s]
        while toward[path[-1]] is not None and toward[path[-1]] != sink:
            path.append(toward[path[-1]])
        out.append(path)
    return out


def prove(diagnostic, evidence):
    """The proof hook: the pin's finding is decided over every change the change model allows
    at that pin."""
    sink = evidence.get("sink_node")
    if not sink:
        return None
    return HazardAtSink(sink=sink, quiet=tuple(evidence.get("quiet_nodes") or ()))
