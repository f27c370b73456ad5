"""``hazlint summary``: what the design is made of (ports, gates by type, registers, depth)."""
from __future__ import annotations

import argparse
import json
import os

from .check import add_frontend_argument


def add_arguments(p) -> None:
    p.add_argument("files", nargs="*", help="Verilog files (default: the configured files)")
    p.add_argument("--top", action="append", help="top module (repeat for several)")
    p.add_argument("-I", "--include-dir", action="append", dest="include_dirs",
                   help="`include search directory (repeatable; replaces the configured ones)")
    p.add_argument("-D", "--define", action="append", dest="defines",
                   metavar="NAME[=VALUE]", help="preprocessor macro; NAME alone is defined as 1, as with "
                        "iverilog -D (repeatable)")
    p.add_argument("--liberty", action="append", default=[], dest="liberty",
                   help="Liberty (.lib) file with the cells the netlist uses (configuration "
                        "'liberty'; repeatable)")
    p.add_argument("--library", action="append", default=[], dest="old_library",
                   help=argparse.SUPPRESS)       # the old spelling of --liberty
    p.add_argument("--config", help="configuration file (default: found upward from here)")
    add_frontend_argument(p)
    p.add_argument("--format", choices=("text", "json"), default="text")
    from .check import add_bound_arguments
    add_bound_arguments(p)


def design_from_args(args):
    """The design named by the command-line arguments and the configuration, loaded as
    ``check`` loads it (the same request resolution: configuration discovery, -I, -D, cells,
    Liberty, SDF), within the run's time budget and size limits; no cache is read or written.
    Returns ``(design, config)``."""
    from .. import pipeline
    from .check import request_from_args
    liberty = list(getattr(args, "liberty", None) or [])
    if getattr(args, "old_library", None):
        from ..findings.names import deprecated
        deprecated("--library", "--liberty", "summary")
        liberty += args.old_library
    request = request_from_args(args, liberty=liberty, use_cache=False)
    with pipeline.bounds(request):
        return pipeline.load(request), request.config


def run(args) -> int:
    design, cfg = design_from_args(args)
    s = design.summary()
    root = cfg.root
    s["files"] = [os.path.relpath(f, root) for f in s["files"]]
    for b in s["blackboxes"]:
        if b["path"]:
            b["path"] = os.path.relpath(b["path"], root)
    s["notes"] = [f"{os.path.relpath(n.path, root) if n.path else '-'}:{n.line}: {n.message}"
                  for n in design.notes]
    if args.format == "json":
        print(json.dumps(s, indent=2, sort_keys=True))
        return 0
    print(f"design {s['top']}  ({len(s['files'])} file{'s' if len(s['files']) != 1 else ''})")
    print(f"  inputs      {s['inputs']}")
    print(f"  outputs     {s['outputs']}")
    print(f"  gates       {s['gates']}")
    for t, n in s["gates_by_type"].items():
        print(f"    {t:<12}{n}")
    print(f"  registers   {s['registers']}")
    print(f"  latches     {s['latches']}")
    depth = s["logic_depth"]
    print(f"  logic depth {depth if depth is not None else 'n/a (combinational loop)'}")
    if s["memories"]:
        print(f"  memories    {len(s['memories'])} (memory nodes)")
        for m in s["memories"][:20]:
            print(f"    {m['name']}: {m['words']} x {m['width']} bits, "
                  f"{m['write_ports']} write / {m['read_ports']} read ports")
    if s["not_analysed"]:
        print(f"  not analysed {len(s['not_analysed'])} of {s['modules']} modules")
        for r in s["not_analysed"][:20]:
            print(f"    {r['module']}: {r['reason']}")
    if s["blackboxes"]:
        print(f"  black boxes {len(s['blackboxes'])}")
        for b in s["blackboxes"][:20]:
            print(f"    {b['instance']} ({b['cell']}): {b['reason']}")
    for n in s["notes"][:50]:
        print(f"  note: {n}")
    return 0
