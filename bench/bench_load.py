#!/usr/bin/env python3
"""Load benchmark: hazlint's whole load (preprocess, parse, IR, flatten, graph) against stock
pyverilog's bare parse of the same file, each in a fresh process, wall time and peak memory.

    python bench/bench_load.py [--out bench/RESULTS-load.md] [names...]

Netlists come from the circuitgraph==0.2.1 package (EPFL and ISCAS benchmarks). Goal (issue):
hazlint's load of multiplier.v takes no longer than stock pyverilog's bare parse, and peak
memory stays under 1 GB.
"""
from __future__ import annotations

import argparse
import importlib.resources
import os
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from fresh import recorded, run  # noqa: E402

DEFAULT = ["multiplier.v", "sin.v", "c6288.v", "c7552.v", "s38417.v", "voter.v"]

STOCK = r"""
import json, resource, sys, time, tempfile
from pyverilog.vparser.parser import VerilogParser
tab = sys.argv[2]
p = VerilogParser(outputdir=tab, debug=False)       # tables built before timing starts
text = open(sys.argv[1]).read()
t = time.perf_counter()
ast = p.parse(text, debug=0)
dt = time.perf_counter() - t
print(json.dumps({"seconds": dt, "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

OURS = r"""
import json, resource, sys, time
t = time.perf_counter()
import hazlint
cells = {"fflopd": {"inputs": ["CK", "D"], "outputs": {"Q": "IQ"},
                    "ff": {"clocked_on": "CK", "next_state": "D"}}}
d = hazlint.load_design(sys.argv[1], library=cells)
dt = time.perf_counter() - t
print(json.dumps({"seconds": dt, "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                  "nodes": d.graph.number_of_nodes(), "edges": d.graph.number_of_edges()}))
"""


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("names", nargs="*", default=DEFAULT)
    ap.add_argument("--out", default=os.path.join(os.path.dirname(__file__), "RESULTS-load.md"))
    args = ap.parse_args()
    base = importlib.resources.files("circuitgraph") / "netlists"
    # warm hazlint's parser-table cache once, so the timed runs measure loading, not set-up
    run(OURS, str(base / "c17.v"))
    rows = []
    with tempfile.TemporaryDirectory() as tab:
        run(STOCK, str(base / "c17.v"), tab)
        for name in args.names:
            path = str(base / name)
            stock = run(STOCK, path, tab)
            ours = run(OURS, path)
            rows.append((name, os.path.getsize(path), stock, ours))
            print(f"{name}: stock parse {stock['seconds']:.2f}s {stock['peak_mb']:.0f}MB; "
                  f"hazlint load {ours['seconds']:.2f}s {ours['peak_mb']:.0f}MB "
                  f"({ours['nodes']} nodes)", flush=True)
    with open(args.out, "w") as f:
        f.write("# Load benchmark\n\n")
        f.write(recorded("python bench/bench_load.py") + " Each figure is one fresh "
                "process.\n\n")
        f.write("| netlist | size | stock pyverilog parse (s) | peak (MB) | hazlint load (s) "
                "| peak (MB) | graph nodes | ratio |\n|---|---:|---:|---:|---:|---:|---:|---:|\n")
        for name, size, s, o in rows:
            f.write(f"| {name} | {size / 1e6:.2f} MB | {s['seconds']:.2f} | {s['peak_mb']:.0f} | "
                    f"{o['seconds']:.2f} | {o['peak_mb']:.0f} | {o['nodes']} | "
                    f"{o['seconds'] / s['seconds']:.2f} |\n")
        f.write("\nhazlint's load includes preprocessing, parsing, IR, flattening and the "
                "networkx graph; stock is `VerilogParser.parse` alone (tables prebuilt).\n")


if __name__ == "__main__":
    main()
