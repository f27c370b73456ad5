#!/usr/bin/env python3
"""Where a load spends its CPU time: pyslang's own parse + elaboration against hazlint's read,
elaboration and gate graph, in CPU seconds of fresh processes (the machine may be shared:
CPU seconds and ratios of the same run compare, wall times do not).

    python bench/profile_load.py multiplier.v sin.v           # EPFL/ISCAS netlists
    python bench/profile_load.py --chip 1000000               # bench/chipgen.py's chip
    python bench/profile_load.py --tree /path/to/other/checkout multiplier.v   # before/after

Each netlist row is the least CPU time of ``--repeat`` fresh processes per measurement (the
least disturbed by other jobs). A row splits hazlint's load into *read* (front end: files ->
IR), *elaborate* (IR -> driver and sink records) and *graph* (records -> the networkx gate
graph, :mod:`hazlint.elaborate.build_graph`). The chip row is one process of
``hazlint.api.load`` (both front-end choices: ``auto`` reads ``.v`` through pyverilog) with
its peak resident memory. ``--tree`` runs another checkout's code (a ``hazlint`` package
folder's parent) in the same run, for a before/after ratio.

Netlists: the circuitgraph==0.2.1 package (EPFL combinational suite, Amaru, Gaillardon,
De Micheli, IWLS 2015; ISCAS-85/89).
"""
from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent

PYSLANG = r"""
import json, resource, sys, time
from pyslang import ast, syntax
c = time.process_time
t0 = c()
tree = syntax.SyntaxTree.fromFile(sys.argv[1])
comp = ast.Compilation()
comp.addSyntaxTree(tree)
comp.getAllDiagnostics()            # elaborates every instance
print(json.dumps({"cpu": c() - t0,
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

NETLIST = r"""
import gc, json, resource, sys, time
import hazlint
from hazlint.elaborate import elaborate
from hazlint.elaborate import build_graph as bg
from hazlint.frontends.registry import read_sources
import hazlint.frontends.slang.reader, hazlint.frontends.verilog.reader   # imports not timed
import hazlint.elaborate.elaborator
c = time.process_time
spent = {}
inner = bg.GraphEmitter.build_graph
def timed(self, *a):
    t = c(); r = inner(self, *a); spent["graph"] = c() - t; return r
bg.GraphEmitter.build_graph = timed
cells = {"fflopd": {"inputs": ["CK", "D"], "outputs": {"Q": "IQ"},
                    "ff": {"clocked_on": "CK", "next_state": "D"}}}
gc.disable()                        # as hazlint.load_design and pipeline.load do
t0 = c()
sources = read_sources([sys.argv[1]], frontend=sys.argv[2], tolerant=True)
t1 = c()
d = elaborate(sources, library=cells)
t2 = c()
flat = sys.modules.get("hazlint.elaborate.flat")     # the compiled pass (absent in older code)
graph = spent.get("graph", 0.0)     # none: the compiled pass built the graph (in elaborate)
print(json.dumps({"code": hazlint.__file__, "read": t1 - t0, "elaborate": t2 - t1 - graph,
                  "graph": graph, "cpu": t2 - t0, "compiled": getattr(flat, "taken", 0) > 0,
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                  "nodes": d.graph.number_of_nodes()}))
"""

CHIP = r"""
import json, resource, sys, time
from hazlint.api import load
from hazlint.config import Config
import hazlint.frontends.slang.reader, hazlint.frontends.verilog.reader, hazlint.elaborate
cfg = Config(top=[sys.argv[2]])
cfg.frontend = sys.argv[3]
t = time.process_time()
d = load(json.loads(sys.argv[1]), cfg, use_cache=False)
print(json.dumps({"cpu": time.process_time() - t, "nodes": d.graph.number_of_nodes(),
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""


def run(code: str, *args: str, tree: str | None = None) -> dict:
    env = dict(os.environ)
    cmd = [sys.executable]
    if tree:
        # without the site module, so that no editable install's import hook can reach
        # past the tree: the tree first, then the installed packages' folders
        import site
        env["PYTHONPATH"] = os.pathsep.join([tree, *site.getsitepackages()])
        cmd.append("-S")
    # from a neutral folder: "-c" puts the working folder first on the import path
    r = subprocess.run([*cmd, "-c", code, *args], capture_output=True, text=True,
                       timeout=7200, env=env, cwd=tempfile.gettempdir())
    if r.returncode != 0:
        raise SystemExit(f"benchmark child failed:\n{r.stderr}")
    return json.loads(r.stdout.strip().splitlines()[-1])


def least(n: int, code: str, *args: str, tree: str | None = None) -> dict:
    return min((run(code, *args, tree=tree) for _ in range(n)), key=lambda r: r["cpu"])


def load_average() -> str:
    try:
        return " ".join(Path("/proc/loadavg").read_text().split()[:3])
    except OSError:
        return "?"


def netlist_rows(names, repeat, trees, frontends):
    import importlib.resources
    base = importlib.resources.files("circuitgraph") / "netlists"
    print("| netlist | code | front end | pyslang CPU s | read | elaborate | graph | load CPU s "
          "| load / pyslang | peak MB | nodes | load avg |")
    print("|---|---|---|---:|---:|---:|---:|---:|---:|---:|---:|---|")
    for name in names:
        path = str(base / name)
        for label, tree in trees:
            for fe in frontends:
                ps = least(repeat, PYSLANG, path)
                r = least(repeat, NETLIST, path, fe, tree=tree)
                assert tree is None or r["code"].startswith(tree), r["code"]
                print(f"| {name} | {label} | {fe} | {ps['cpu']:.3f} | {r['read']:.3f} | "
                      f"{r['elaborate']:.3f} | "
                      f"{'compiled' if r.get('compiled') else format(r['graph'], '.3f')} | "
                      f"{r['cpu']:.3f} | "
                      f"{r['cpu'] / ps['cpu']:.1f} | {r['peak_mb']:.0f} | {r['nodes']} | "
                      f"{load_average()} |", flush=True)


def chip_rows(gates, trees, frontends, work):
    sys.path.insert(0, str(HERE))
    import chipgen
    print("| gates | tiles | code | front end | load CPU s | peak MB | nodes | load avg |")
    print("|---:|---:|---|---|---:|---:|---:|---|")
    for n in gates:
        info = chipgen.generate(Path(work) / f"chip-{n}", n)
        for label, tree in trees:
            for fe in frontends:
                avg = load_average()
                r = run(CHIP, json.dumps(info["files"]), info["top"], fe, tree=tree)
                print(f"| {info['gates']} | {info['tiles']} | {label} | {fe} | {r['cpu']:.1f} | "
                      f"{r['peak_mb']:.0f} | {r['nodes']} | {avg} |", flush=True)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("names", nargs="*", default=["multiplier.v"])
    ap.add_argument("--repeat", type=int, default=3, help="fresh processes per measurement")
    ap.add_argument("--tree", action="append", default=[],
                    help="another checkout to measure in the same run (repeatable)")
    ap.add_argument("--frontend", action="append", default=[],
                    help="slang, pyverilog (netlists; default slang), auto (chip default)")
    ap.add_argument("--chip", type=int, nargs="+", help="gates of bench/chipgen.py chips")
    a = ap.parse_args()
    trees = [("this", None)] + [(Path(t).name, str(Path(t).resolve())) for t in a.tree]
    if a.chip:
        with tempfile.TemporaryDirectory() as work:
            chip_rows(a.chip, trees, a.frontend or ["auto"], work)
    else:
        netlist_rows(a.names, a.repeat, trees, a.frontend or ["slang"])


if __name__ == "__main__":
    main()
