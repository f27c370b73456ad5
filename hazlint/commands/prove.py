"""``hazlint prove FILES``: classify the hazards and show each witness as a timing diagram.

Without ``--transition`` it lints the design and prints, for every reconvergence and
asynchronous-sink finding, its classification (static-1, static-0, dynamic hazard, hazard-free
with ``--show-proven-absent``, or inconclusive), the witness, the timed-simulation result and a
terminal timing diagram. ``--transition`` checks a change given by the user instead, e.g.
``--transition "two_hand_left+,two_hand_right+,guard_closed=1"`` (``+`` rises, ``-`` falls,
``=v`` holds), at every output and glitch-sensitive sink (or ``--target``), and tells a function
hazard from a logic hazard. ``--vcd``/``--svg`` write the waveforms of the first proven hazard
(further ones get ``-2``, ``-3``... before the extension).
"""
from __future__ import annotations

import argparse
import os
import sys
from typing import Any

from ..diagnostics import Severity
from ..errors import EXIT_CLEAN, EXIT_FINDINGS, HazlintError
from .check import add_frontend_argument


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("files", nargs="+", metavar="FILE", help="Verilog files")
    p.add_argument("--top", action="append", metavar="MODULE", help="top module")
    p.add_argument("--transition", action="append", metavar="SPEC",
                   help="input change to check: comma-separated NAME+ (rises), NAME- (falls), "
                        "NAME=0|1 (held); repeatable")
    p.add_argument("--target", action="append", metavar="NET",
                   help="with --transition: the output or net to check (default: all outputs "
                        "and glitch-sensitive sinks)")
    p.add_argument("--vcd", metavar="OUT", help="write the witness waveforms as VCD")
    p.add_argument("--svg", metavar="OUT", help="write the witness waveforms as an SVG image")
    p.add_argument("--show-proven-absent", action="store_true",
                   help="also list findings proven hazard-free")
    p.add_argument("--ascii", action="store_true", help="ASCII-only timing diagrams")
    p.add_argument("--fail-on", choices=("error", "warning", "never"), default="error",
                   help="lowest severity that makes the exit code 1 (default: error)")
    from .check import add_bound_arguments
    add_bound_arguments(p)
    add_frontend_argument(p)


def run(args) -> int:
    from ..budget import bounded
    from ..config import load_config
    from ..limits import parse_assignments
    with bounded(load_config(os.getcwd()), args.time_budget, parse_assignments(args.limits)):
        return _run(args)


def _run(args) -> int:
    from ..analysis import prove as P
    files = [os.path.abspath(f) for f in args.files]
    for f in files:
        if not os.path.isfile(f):
            raise HazlintError("is a directory, not a Verilog file" if os.path.isdir(f)
                               else f"file not found: {f}", path=f)
    top = args.top[0] if args.top and len(args.top) == 1 else args.top
    opts: dict[str, Any] = {"show_proven_absent": args.show_proven_absent}
    out = sys.stdout
    shown = []          # (title, graph, classification, nets)
    worst = None
    if args.transition:
        design = _load(files, top, args.frontend or "auto")
        g = design.graph
        for spec in args.transition:
            changes, fixed = parse_transition(design, spec)
            targets = _targets(design, args.target)
            for t in targets:
                c = P.classify(g, t, changes, fixed, options=opts)
                if c.classification == "hazard-free" and not args.show_proven_absent:
                    out.write(f"{P.net_label(g, t)}: hazard-free for {spec} ({c.reason})\n")
                    continue
                sev = _severity_of(g, c, None)
                worst = sev if worst is None or sev > worst else worst
                nets = P.waveform_nets(g, c, None) + _moving_nets(g, c)
                _print(out, g, c, f"{P.net_label(g, t)} for {spec}", nets, args.ascii, sev)
                if c.proven:
                    shown.append((f"{P.net_label(g, t)}: {c.classification}", g, c, nets))
    else:
        result = _lint(files, top, opts, args.frontend)
        design = result.design
        g = design.graph
        for d in result.diagnostics:
            ev = d.evidence if isinstance(d.evidence, dict) else {}
            cls = ev.get("classification")
            if cls is None and d.kind not in ("oscillation",):
                continue
            worst = d.severity if worst is None or d.severity > worst else worst
            out.write(f"{result.relpath(d.path)}:{d.line}:{d.column}: {d.severity}: "
                      f"[{d.kind}] {d.message}\n")
            for line in d.notes:
                out.write(f"    {line}\n")
            if d.fix:
                out.write(f"    fix: {d.fix}\n")
            c = classification_from_evidence(g, ev)
            if c is not None:
                shown.append((d.message, g, c, ev.get("waveform_nets") or
                              P.waveform_nets(g, c, ev)))
        if not result.diagnostics:
            out.write("no findings\n")
    for k, (title, g, c, nets) in enumerate(shown):
        _write_waves(args, k, title, g, c, nets)
    if worst is None or args.fail_on == "never":
        return EXIT_CLEAN
    return EXIT_FINDINGS if worst >= Severity.parse(args.fail_on) else EXIT_CLEAN


def _load(files, top, frontend):
    from ..loader import load_design
    return load_design(files, top=top, frontend=frontend)


def _lint(files, top, opts, frontend=None):
    from ..api import lint
    from ..config import load_config
    cfg = load_config(os.getcwd())
    if frontend:
        cfg.frontend = frontend
    cfg.prove = dict(cfg.prove or {}, **opts)
    return lint(files, config=cfg, top=top)


def _targets(design, names):
    g = design.graph
    if names:
        out = []
        for n in names:
            if n in design.output_node:
                out.append(design.output_node[n])
            else:
                try:
                    out.append(design.net_node(n))
                except KeyError:
                    raise HazlintError(f"--target: no net or output named '{n}'",
                                       construct=n) from None
        return out
    from ..netlist.graph import ASYNC_ROLES
    return [n for n, d in g.nodes(data=True) if d["kind"] == "sink"
            and (d.get("role") == "output" or d.get("role") in ASYNC_ROLES)]


def parse_transition(design, spec: str):
    """``"a+,b-,c=1"`` -> (changes {node: (before, after)}, fixed {node: value})."""
    changes, fixed = {}, {}
    for item in (x.strip() for x in spec.split(",")):
        if not item:
            continue
        if "=" in item:
            name, _, v = item.partition("=")
            if v.strip() not in ("0", "1"):
                raise HazlintError(f"--transition: value of '{name}' must be 0 or 1",
                                   construct=item)
            fixed[_node(design, name.strip(), item)] = int(v)
        elif item[-1] in "+-":
            n = _node(design, item[:-1].strip(), item)
            changes[n] = (0, 1) if item[-1] == "+" else (1, 0)
        else:
            raise HazlintError("--transition: write NAME+ (rises), NAME- (falls) or NAME=0|1",
                               construct=item)
    if not changes:
        raise HazlintError("--transition: no changing input given", construct=spec)
    return changes, fixed


def _node(design, name, item):
    if name in design.input_node:
        return design.input_node[name]
    try:
        n = design.net_node(name)
    except KeyError:
        raise HazlintError(f"--transition: no input named '{name}'", construct=item) from None
    from ..netlist.graph import SOURCE_KINDS
    if design.graph.nodes[n]["kind"] not in SOURCE_KINDS:
        raise HazlintError(f"--transition: '{name}' is not an input or register output",
                           construct=item)
    return n


def classification_from_evidence(g, ev):
    """Rebuild the witness of a refined finding (enough to replay and draw it)."""
    from ..analysis.prove import Classification
    from ..analysis.timedsim import DelayAssignment
    w = ev.get("witness")
    if not w or "before_nodes" not in w:
        return None
    before, after = dict(w["before_nodes"]), dict(w["after_nodes"])
    changes = {n: (before[n], after[n]) for n in before if before[n] != after.get(n)}
    target = None
    for key in ("sink_node",):
        target = ev.get(key)
    if target is None:
        sinks = ev.get("sink_nodes") or []
        nets = ev.get("waveform_nets") or []
        target = nets[-1] if nets else (sinks[0] if sinks else None)
    if target is None or target not in g:
        return None
    c = Classification(target, ev.get("classification", ""), changes, before, after)
    gl = ev.get("glitch") or {}
    if gl.get("delays"):
        c.assignment = DelayAssignment.from_json(gl["delays"])
    if gl.get("occurs"):
        from ..analysis.timedsim import Glitch
        c.glitch = Glitch(True, [tuple(x) for x in gl.get("changes", [])], gl.get("time"),
                          gl.get("width"), gl.get("mode", "inertial"))
        c.how = gl.get("how", "")
    return c


def _moving_nets(g, c, limit=6):
    from ..analysis.prove import witness_trace
    if not c.before:
        return []
    tr = witness_trace(g, c, None)
    moving = [n for n, w in tr.waves.items() if len(w) > 1 and g.nodes[n]["kind"] == "gate"]
    return [n for n in moving if n != c.target][:limit]


def _severity_of(g, c, context):
    from ..analysis.prove import _sensitive
    if c.proven:
        return Severity.ERROR if _sensitive(g, context, c.target) else Severity.WARNING
    if c.classification == "inconclusive":
        return Severity.WARNING
    return Severity.INFO


def _print(out, g, c, title, nets, ascii_only, sev):
    from ..analysis import prove as P
    nets = list(dict.fromkeys(n for n in nets if n in g))
    if c.target in nets:
        nets.remove(c.target)
        nets.append(c.target)
    label = c.classification
    if c.proven and c.function_hazard:
        label += " (function hazard: no implementation avoids it)"
    elif c.proven and c.function_hazard is False:
        label += " (logic hazard: fixable in the logic)"
    out.write(f"{title}: {sev}: {label}\n")
    if c.proven:
        out.write(f"    witness: {P.witness_text(g, c)}\n")
        out.write(f"    proof: {c.reason}\n")
        gt = P.glitch_text(c)
        if gt:
            out.write(f"    timed simulation: {gt}\n")
        if c.assignment is not None and c.how != "nominal":
            for line in c.assignment.describe(g)[1:]:
                out.write(f"      {line}\n")
        for line in P.diagram_lines(g, c, nets, ascii_only):
            out.write(f"    {line}\n")
        out.write(f"    fix: {P.fix_for(g, c, None, g.nodes[c.target].get('role'))}\n")
    else:
        out.write(f"    {c.reason}\n")


def _write_waves(args, k, title, g, c, nets):
    from ..analysis import prove as P
    from ..analysis import waves
    if not (args.vcd or args.svg):
        return
    nets = list(dict.fromkeys(n for n in nets if n in g))
    tr = P.witness_trace(g, c, nets)
    names = {n: P.net_label(g, n) for n in nets}

    def name(path):
        if k == 0:
            return path
        base, ext = os.path.splitext(path)
        return f"{base}-{k + 1}{ext}"
    if args.vcd:
        with open(name(args.vcd), "w") as fh:
            waves.write_vcd(tr, nets, names, fh)
    if args.svg:
        hl = None
        if c.glitch is not None and c.glitch.time is not None:
            lead = P.witness_lead(c)
            hl = (lead + c.glitch.time, lead + c.glitch.time + (c.glitch.width or 0))
        with open(name(args.svg), "w") as fh:
            fh.write(waves.svg(tr, nets, names, title=title, highlight=hl))
