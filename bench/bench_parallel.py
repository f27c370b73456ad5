"""The prover's share of a default check on one process, a local pool and a Dask cluster.

For each netlist (default EPFL sin.v of the PyPI package circuitgraph==0.2.1, read in place)
and each mode, one fresh interpreter loads the design, runs the rules (not timed), then times
the prover's refinement of their findings (``hazlint.analysis.prove.refine``, the default
options, no time budget):

* ``-j 1``: every work item in that process, no pool;
* ``-j 2``: a local process pool of two workers;
* ``cluster``: a Dask ``LocalCluster`` of two worker processes (one thread each) on loopback,
  started before the clock runs (its start-up is recorded apart); shipping the design to the
  workers is part of the timed share.

Recorded per row: wall seconds of the prover's share, CPU seconds of the process and its
pool workers (``RUSAGE_SELF`` + ``RUSAGE_CHILDREN``; a cluster's workers are not children and
are not counted), peak resident memory of the process, a digest of the refined findings (all
modes must agree), and ``uptime``'s load averages before and after (the machine may be
shared: a ratio means little when the load exceeds the cores).

    python bench/bench_parallel.py                  # sin.v, writes bench/RESULTS-parallel.md
    python bench/bench_parallel.py --netlists c432.v --print     # quick
    python bench/bench_parallel.py --scope outputs --modes 1,2 --prove '{"batch_time": 0}'
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent

CHILD = r"""
import hashlib, json, os, resource, sys, time
import importlib.resources as ir
from hazlint import budget
from hazlint.analysis import workers
from hazlint.analysis.context import AnalysisContext
from hazlint.analysis.refine import refine
from hazlint.api import load, run_rules
from hazlint.config import Config
from hazlint.plugins import all_rules
name, mode, scope, popts = sys.argv[1], sys.argv[2], sys.argv[3], json.loads(sys.argv[4])
path = str(ir.files("circuitgraph") / "netlists" / name)
config = Config()
design = load([path], config, use_cache=False)
rules = all_rules()
given = {"unbalanced-reconvergence": {"scope": scope}} if scope else {}
ctx = AnalysisContext(design, config, {r.id: r.resolve_options(given.get(r.id, {}))
                                       for r in rules})
found = run_rules(design, rules, ctx)
cluster, start = None, 0.0
if mode == "cluster":
    from distributed import LocalCluster
    t = time.perf_counter()
    cluster = LocalCluster(n_workers=2, processes=True, threads_per_worker=1,
                           host="127.0.0.1", dashboard_address=None)
    start = time.perf_counter() - t
    settings = dict(scheduler=cluster.scheduler_address)
else:
    settings = dict(jobs=int(mode))
def cpu():
    s, c = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return s.ru_utime + s.ru_stime + c.ru_utime + c.ru_stime
with budget.using(0), workers.configured(**settings):
    c0, t0 = cpu(), time.perf_counter()
    out = refine(design, found, ctx, popts)
    wall, used = time.perf_counter() - t0, cpu() - c0
if cluster is not None:
    cluster.close()
digest = hashlib.sha256(json.dumps([[d.rule, d.kind, str(d.severity), d.message, d.evidence,
                                     list(d.notes), d.fix] for d in out], sort_keys=True,
                                   default=repr).encode()).hexdigest()[:16]
print(json.dumps({"wall": wall, "cpu": used, "findings_in": len(found),
                  "findings_out": len(out), "digest": digest, "cluster_start": start,
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                  "nodes": design.graph.number_of_nodes()}))
"""


def uptime() -> str:
    """The 1, 5 and 15 minute load averages, as ``uptime`` shows them."""
    try:
        return " ".join(Path("/proc/loadavg").read_text().split()[:3])
    except OSError:
        return "?"


def run(name: str, mode: str, timeout: float, scope: str = "", prove: str = "{}") -> dict:
    before = uptime()
    try:
        p = subprocess.run([sys.executable, "-c", CHILD, name, mode, scope, prove],
                           capture_output=True,
                           text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return {"error": f"timeout after {timeout:.0f} s", "load_before": before,
                "load_after": uptime()}
    r = {"load_before": before, "load_after": uptime()}
    try:
        r.update(json.loads(p.stdout.strip().splitlines()[-1]))
    except (ValueError, IndexError):
        r["error"] = (p.stderr.strip().splitlines() or ["failed"])[-1][:200]
    return r


def write(rows: list[tuple[str, str, dict]], path: Path, note: str) -> None:
    lines = ["# The prover's share on one process, a local pool and a Dask cluster", "",
             f"Recorded {time.strftime('%Y-%m-%d %H:%M')} UTC on {platform.machine()}, "
             f"{os.cpu_count()} cores, Python {platform.python_version()}, by "
             "`python bench/bench_parallel.py` (netlists of circuitgraph 0.2.1; rules "
             "with default options, then `prove.refine` with default options and no time "
             "budget, timed alone; one fresh process per row).", ""]
    if note:
        lines += [note, ""]
    lines += ["| netlist | mode | prover wall s | CPU s (process + pool) | peak MB | findings "
              "in -> out | digest | load avg before / after |",
              "|---|---|---:|---:|---:|---|---|---|"]
    base: dict[str, float] = {}
    for name, mode, r in rows:
        label = {"1": "-j 1", "2": "-j 2"}.get(mode, "LocalCluster 2x1")
        if "error" in r:
            lines.append(f"| {name} | {label} | {r['error']} | | | | | "
                         f"{r['load_before']} / {r['load_after']} |")
            continue
        extra = ""
        if mode == "1":
            base[name] = r["wall"]
        elif name in base:
            extra = f" ({base[name] / r['wall']:.2f}x of -j 1)"
        if mode == "cluster":
            extra += f", cluster start {r['cluster_start']:.1f} s"
        lines.append(f"| {name} | {label} | {r['wall']:.1f}{extra} | {r['cpu']:.1f} | "
                     f"{r['peak_mb']:.0f} | {r['findings_in']} -> {r['findings_out']} | "
                     f"{r['digest']} | {r['load_before']} / {r['load_after']} |")
    path.write_text("\n".join(lines) + "\n")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--netlists", default="sin.v", help="comma-separated circuitgraph files")
    ap.add_argument("--modes", default="1,2,cluster")
    ap.add_argument("--scope", default="", help="the reconvergence rule's scope (default: its "
                    "default; 'outputs' lists every output bit, as sin.v needs to have findings)")
    ap.add_argument("--timeout", type=float, default=3600.0)
    ap.add_argument("--prove", default="{}", help="prover options as JSON, e.g. "
                    "'{\"batch_time\": 0}' (no wall-clock end of the batched SAT part, so "
                    "that every -j decides the same pairs on a loaded machine)")
    ap.add_argument("--note", default="")
    ap.add_argument("--print", action="store_true", help="print only, write no results file")
    ap.add_argument("--out", default=str(HERE / "RESULTS-parallel.md"))
    a = ap.parse_args()
    rows = []
    for name in a.netlists.split(","):
        for mode in a.modes.split(","):
            r = run(name, mode, a.timeout, a.scope, a.prove)
            print(name, mode, json.dumps(r), flush=True)
            rows.append((name, mode, r))
            if not a.print:
                write(rows, Path(a.out), a.note)
    if not a.print:
        print(f"wrote {a.out}")


if __name__ == "__main__":
    main()
