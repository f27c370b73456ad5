#!/usr/bin/env python3
"""Front-end benchmark: load time and peak memory of hazlint with each front end (pyverilog,
slang) on the EPFL netlists, and pyslang's own parse + elaboration of the same file, measured
in the same run. Every figure is one fresh process.

    python bench/bench_frontends.py [--repeat 3] [--out bench/RESULTS-frontends.md] [names...]

Netlists come from the circuitgraph==0.2.1 package (the EPFL combinational benchmark suite,
Amaru, Gaillardon, De Micheli, IWLS 2015). hazlint's load is split into reading (preprocess,
parse, IR) and elaboration (hazlint/flatten.py: hierarchy, bit-blasting, gates, networkx graph).
pyslang's is ``SyntaxTree.fromFile`` and ``Compilation.getAllDiagnostics()`` (which elaborates
the whole design). Each measurement is the fastest of ``--repeat`` fresh processes, in CPU
seconds of the process (the machine may be shared). Goal (issue 16): hazlint's slang load of multiplier.v within 3x pyslang's own
parse + elaboration.
"""
from __future__ import annotations

import argparse
import importlib.resources
import os
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from fresh import best, recorded, run  # noqa: E402

EPFL = ["adder.v", "arbiter.v", "bar.v", "cavlc.v", "ctrl.v", "dec.v", "div.v", "i2c.v",
        "int2float.v", "log2.v", "max.v", "memctrl.v", "multiplier.v", "priority_ckt.v",
        "router.v", "sin.v", "sqrt.v", "square.v", "voter.v"]

PYSLANG = r"""
import json, resource, sys, time
import pyslang
from pyslang import ast, syntax
t0 = time.process_time()
tree = syntax.SyntaxTree.fromFile(sys.argv[1])
t1 = time.process_time()
comp = ast.Compilation()
comp.addSyntaxTree(tree)
comp.getAllDiagnostics()            # forces elaboration of every instance
t2 = time.process_time()
print(json.dumps({"parse": t1 - t0, "elaborate": t2 - t1, "seconds": t2 - t0,
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

HAZLINT = r"""
import gc, json, resource, sys, time
t0 = time.process_time()
from hazlint.elaborate import elaborate
from hazlint.frontends.registry import read_sources
if sys.argv[2] == "slang":          # the front end's own imports are not load time
    import hazlint.frontends.slang.reader
else:
    import hazlint.frontends.verilog.reader
t1 = time.process_time()
gc.disable()                        # as hazlint.load_design does while loading
sources = read_sources([sys.argv[1]], frontend=sys.argv[2])
t2 = time.process_time()
d = elaborate(sources, library={"fflopd": {"inputs": ["CK", "D"], "outputs": {"Q": "IQ"},
                                           "ff": {"clocked_on": "CK", "next_state": "D"}}})
t3 = time.process_time()
print(json.dumps({"import": t1 - t0, "read": t2 - t1, "elaborate": t3 - t2, "seconds": t3 - t1,
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                  "nodes": d.graph.number_of_nodes()}))
"""


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("names", nargs="*", default=EPFL)
    ap.add_argument("--out", default=os.path.join(os.path.dirname(__file__),
                                                  "RESULTS-frontends.md"))
    ap.add_argument("--note", default="", help="a line written under the table")
    ap.add_argument("--repeat", type=int, default=3, help="fresh processes per measurement")
    args = ap.parse_args()
    base = importlib.resources.files("circuitgraph") / "netlists"
    # warm the pyverilog parser-table cache and the file cache once
    run(HAZLINT, str(base / "c17.v"), "pyverilog")
    rows = []
    for name in args.names:
        path = str(base / name)
        ps = best(args.repeat, PYSLANG, path)
        sl = best(args.repeat, HAZLINT, path, "slang")
        pv = best(args.repeat, HAZLINT, path, "pyverilog")
        rows.append((name, os.path.getsize(path), ps, sl, pv))
        print(f"{name}: pyslang {ps['seconds']:.2f}s; slang load {sl['seconds']:.2f}s "
              f"(read {sl['read']:.2f} + elaborate {sl['elaborate']:.2f}); pyverilog load "
              f"{pv['seconds']:.2f}s; ratio {sl['seconds'] / ps['seconds']:.1f}", flush=True)
    with open(args.out, "w") as f:
        f.write("# Front-end benchmark\n\n")
        f.write(recorded(f"python bench/bench_frontends.py --repeat {args.repeat}") + " "
                f"Each row is the fastest of {args.repeat} fresh processes per measurement; "
                "times in CPU seconds, peak resident memory in MB.\n\n")
        f.write("| netlist | size | pyslang parse | + elaborate | = total | peak | slang read "
                "| + hazlint elaborate | = slang load | peak | pyverilog read | + hazlint "
                "elaborate | = pyverilog load | peak | graph nodes | slang load / pyslang |\n")
        f.write("|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:"
                "|---:|\n")
        for name, size, ps, sl, pv in rows:
            f.write(f"| {name} | {size / 1e6:.2f} MB | {ps['parse']:.3f} | {ps['elaborate']:.3f}"
                    f" | {ps['seconds']:.3f} | {ps['peak_mb']:.0f} | {sl['read']:.2f} | "
                    f"{sl['elaborate']:.2f} | {sl['seconds']:.2f} | {sl['peak_mb']:.0f} | "
                    f"{pv['read']:.2f} | {pv['elaborate']:.2f} | {pv['seconds']:.2f} | "
                    f"{pv['peak_mb']:.0f} | {sl['nodes']} | "
                    f"{sl['seconds'] / ps['seconds']:.1f} |\n")
        f.write("\nA load is reading (preprocess, parse, IR) plus hazlint's elaboration "
                "(flatten.py and the networkx graph); imports are not counted. pyslang's total is "
                "its parse plus `Compilation.getAllDiagnostics()`.\n")
        if args.note:
            f.write(f"\n{args.note}\n")


if __name__ == "__main__":
    main()
