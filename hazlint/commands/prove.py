"""``hazlint prove FILES``: ``check`` with more detail.

Without ``--transition`` it is ``check`` (the same configuration discovery, options, findings,
headlines, severities and formats) with proven-absent findings on request
(``--show-proven-absent``) and the witnesses written as waveform files (``--vcd``, ``--svg``).
``--transition`` checks a change given by the user instead, e.g.
``--transition "two_hand_left+,two_hand_right+,guard_closed=1"`` (``+`` rises, ``-`` falls,
``=v`` holds), at every output and glitch-sensitive sink (or ``--target``), and tells a function
hazard from a logic hazard. Both load the design through the same run request as ``check``
(configuration, -I, -D, cells, Liberty, SDF, cell model); with ``--transition`` the configured
glitch-sensitive outputs decide the severity and a change the configured change model excludes
(a static input, a one-at-a-time group changing together) is checked with a note. ``--vcd``
writes the waveforms of each proven hazard (the first to the name given, further ones with
``-2``, ``-3``... before the extension), ``--svg`` one image with a panel per proven hazard;
times are in the design's unit.
"""
from __future__ import annotations

import argparse
import os
import sys
from typing import Any

from ..diagnostics import Severity
from ..errors import EXIT_CLEAN, HazlintError
from ..findings.words import TimeUnit


def add_arguments(p: argparse.ArgumentParser) -> None:
    # everything `check` takes (configuration discovery, --config, -I, -D, --format, --select,
    # --scope, --fail-on, --ascii, ...), then what only `prove` does
    from .check import add_arguments as check_arguments
    check_arguments(p)
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


def run(args) -> int:
    if args.no_prove:
        raise HazlintError("prove: --no-prove leaves nothing to prove (use check)")
    from .check import request_from_args
    extra = {"prove_options": {"show_proven_absent": True}} if args.show_proven_absent else {}
    request = request_from_args(args, **extra)
    if request is None:
        return EXIT_CLEAN
    if not args.transition:
        return _run_lint(args, request)
    from .. import pipeline
    with pipeline.bounds(request):
        return _run(args, request)


def _run_lint(args, request) -> int:
    """``check`` with the prover's options (``--show-proven-absent``) and the waveform files:
    the same findings, headlines, severities and formats."""
    from . import check
    from .. import pipeline
    renderer = check._renderer(check.format_name(args, request.config))
    result = pipeline.lint(request)
    code = check.report(args, result, renderer, check.report_options(args, renderer))
    from ..analysis import prove as P
    from ..findings.evidence import Evidence
    from ..plugins import rule_for
    from ..findings.requests import request_of
    g = result.design.graph
    shown = []
    for d in result.diagnostics:
        ev = d.evidence
        verdict = ev.verdict if isinstance(ev, Evidence) else None
        c = P.classification_of(g, verdict, ev.sink) if verdict is not None else None
        if c is not None and c.proven:
            shown.append((d.message, g, c, verdict.waveform_nets or P.waveform_nets(
                g, c, request_of(rule_for(d), d, ev))))
    _write_waves(args, shown)
    return code


def _run(args, request) -> int:
    """The changes given by ``--transition`` at the targets, on the design as ``check`` loads
    it (configuration, -I, -D, cells, Liberty, SDF), with the run's change-model declarations
    and glitch-sensitive outputs (the analysis context of a lint run)."""
    from .. import pipeline
    from ..analysis import prove as P
    opts: dict[str, Any] = dict(request.prove_options)
    out = sys.stdout
    shown = []          # (title, graph, classification, nets)
    worst = None
    design, context = pipeline.context_for(request, pipeline.load(request))
    g = design.graph
    for spec in args.transition:
        changes, fixed = parse_transition(design, spec)
        for note in outside_model(g, context.change_model, changes):
            out.write(f"note: {note}; checked as given\n")
        targets = _targets(design, args.target)
        for t in targets:
            c = P.classify(g, t, changes, fixed, options=opts)
            if c.classification == "hazard-free" and not args.show_proven_absent:
                out.write(f"{P.net_label(g, t)}: hazard-free for {spec} ({c.reason})\n")
                continue
            sev = _severity_of(g, c, context)
            worst = sev if worst is None or sev > worst else worst
            nets = P.waveform_nets(g, c, None) + _moving_nets(g, c)
            _print(out, g, c, f"{P.net_label(g, t)} for {spec}", nets, args.ascii, sev)
            if c.proven:
                shown.append((f"{P.net_label(g, t)}: {c.classification}", g, c, nets))
    _write_waves(args, shown)
    return pipeline.exit_code(worst, args.fail_on or request.config.fail_on)


def outside_model(g, model, changes) -> list[str]:
    """What in the transition ``changes`` the run's change model excludes: a source declared
    static (``static_inputs``, ``hazlint_static``), two or more members of a one-at-a-time
    group changing together."""
    from ..analysis.prove import net_label
    notes = [f"{net_label(g, n)} is declared static (it never changes in the change model)"
             for n in changes if n in model.quiet]
    for gr in model.groups:
        moving = [m for m in gr.members if m in changes]
        if gr.kind == "one-at-a-time" and len(moving) > 1:
            where = f" ({gr.where})" if gr.where else ""
            notes.append(f"{', '.join(net_label(g, m) for m in moving)} change together, but "
                         f"group '{gr.name}'{where} changes one member at a time")
    return notes


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


def _moving_nets(g, c, limit=6):
    from ..analysis.prove import witness_trace
    if not c.before:
        return []
    tr = witness_trace(g, c, None)
    moving = [n for n, w in tr.waves.items() if len(w) > 1 and g.nodes[n]["kind"] == "gate"]
    return [n for n in moving if n != c.target][:limit]


def _severity_of(g, c, context):
    from ..analysis.refine import is_sensitive_sink
    if c.proven:
        return Severity.ERROR if is_sensitive_sink(g, context, c.target) else Severity.WARNING
    if c.classification == "inconclusive":
        return Severity.WARNING
    return Severity.INFO


def _print(out, g, c, title, nets, ascii_only, sev):
    from ..analysis import prove as P
    nets = list(dict.fromkeys(n for n in nets if n in g))
    if c.target in nets:
        nets.remove(c.target)
        nets.append(c.target)
    # a sink and the net that drives it are one wire with one name: drawn once, as the sink
    shown_as = P.net_label(g, c.target)
    nets = [n for n in nets if n == c.target or P.net_label(g, n) != shown_as]
    label = c.classification
    if c.proven and c.function_hazard:
        label += " (function hazard: no implementation avoids it)"
    elif c.proven and c.function_hazard is False:
        label += " (logic hazard: fixable in the logic)"
    out.write(f"{title}: {sev}: {label}\n")
    if c.proven:
        out.write(f"    witness: {P.witness_text(g, c)}\n")
        out.write(f"    proof: {c.reason}\n")
        gt = P.glitch_text(c, TimeUnit.of(g))
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


def _write_waves(args, shown):
    """The witnesses ``shown`` ((title, graph, classification, nets) each) as waveform files:
    one VCD per witness (``-2``, ``-3``... before the extension from the second on), one SVG
    with a panel per witness. Times are in the design's unit."""
    from ..analysis import prove as P
    from ..analysis import waves
    from .check import write_user_file
    if not (args.vcd or args.svg) or not shown:
        return
    panels = []
    for k, (title, g, c, nets) in enumerate(shown):
        nets = list(dict.fromkeys(n for n in nets if n in g))
        tr = P.witness_trace(g, c, nets)
        names = {n: P.net_label(g, n) for n in nets}
        if args.vcd:
            path = args.vcd
            if k:
                base, ext = os.path.splitext(path)
                path = f"{base}-{k + 1}{ext}"
            unit = TimeUnit.of(g)
            write_user_file(path, lambda fh: waves.write_vcd(tr, nets, names, fh, unit=unit),
                            "waveform")
        hl = None
        if c.glitch is not None and c.glitch.time is not None:
            lead = P.witness_lead(c)
            hl = (lead + c.glitch.time, lead + c.glitch.time + (c.glitch.width or 0))
        panels.append(waves.Panel(tr, nets, names, title, hl))
    if args.svg:
        image = waves.svg_panels(panels, TimeUnit.of(shown[0][1]))
        write_user_file(args.svg, lambda fh: fh.write(image), "waveform")
