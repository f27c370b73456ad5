"""Cold versus warm runs through the caches (parse, design, findings, report), for ISCAS c7552 and EPFL sin.v.

The netlists are the ones shipped in the PyPI package circuitgraph==0.2.1 (read in place through
importlib.resources). Each measurement runs in a fresh interpreter, as a rerun of the command
would: the cold run starts with an empty cache folder, the warm run reuses it. Inside the child
we time ``hazlint.pipeline.load`` and the whole ``check`` command in CPU seconds of the child (the
machine may be shared), and the whole process wall time from outside; separately, the parse
cache alone (``read_sources`` cold versus warm).

    python bench/bench_cache.py            # writes bench/RESULTS-cache.md
    python bench/bench_cache.py --repeat 5
"""
from __future__ import annotations

import argparse
import importlib.resources
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
NETLISTS = {"ISCAS c7552": "netlists/c7552.v", "EPFL sin": "netlists/sin.v"}

CHILD = r"""
import json, os, sys, time
t0 = time.perf_counter()
import hazlint.pipeline as pipeline
from hazlint.cli import main
t_import = time.perf_counter() - t0
path, cache_dir, mode, fmt = sys.argv[1], sys.argv[2], sys.argv[3], sys.argv[4]
# instrumentation only: the real pipeline.load runs, its CPU time is added up
real_load = pipeline.load
spent = [0.0]
def timed_load(*a, **k):
    t = time.process_time()
    try:
        return real_load(*a, **k)
    finally:
        spent[0] += time.process_time() - t
pipeline.load = timed_load
real_lint = pipeline.lint
spent_lint = [0.0]
def timed_lint(*a, **k):
    t = time.process_time()
    try:
        return real_lint(*a, **k)
    finally:
        spent_lint[0] += time.process_time() - t
pipeline.lint = timed_lint
from hazlint.store.design import DesignCache
from hazlint.store.result import ResultCache
# CPU time of this process: the machine may be busy with other work, wall time would be noisy
t1 = time.process_time()
code = main(["check", *(["--no-prove"] if mode == "no-prove" else []), "--format", fmt,
             "-o", os.devnull, "--cache-dir", cache_dir, path])
t2 = time.process_time()
def count(ns):
    return sum(len(fs) for _, _, fs in os.walk(os.path.join(cache_dir, ns)))
def size(ns):
    return sum(os.path.getsize(os.path.join(d, f)) for d, _, fs in os.walk(os.path.join(cache_dir, ns))
               for f in fs)
print(json.dumps({"import": t_import, "load": spent[0], "lint": spent_lint[0],
                  "command": t2 - t1, "code": code,
                  "design_bytes": size("design"), "parse_bytes": size("parse"),
                  "result_bytes": size("result"), "report_bytes": size("report")}))
"""

# the parse cache alone (read_sources), as in the first round: cold parse versus warm read of
# the compact IR entries
CHILD_READ = r"""
import json, sys, time
from hazlint.store.parse import ParseCache
from hazlint.frontends.verilog.reader import read_sources
path, cache_dir = sys.argv[1], sys.argv[2]
cache = ParseCache(cache_dir)
t1 = time.process_time()
read_sources([path], cache=cache)
t2 = time.process_time()
print(json.dumps({"read": t2 - t1, "hits": cache.hits, "stores": cache.stores}))
"""


def run_child(code: str, path: str, cache_dir: str, mode: str = "prove",
              fmt: str = "text") -> dict:
    t0 = time.perf_counter()
    out = subprocess.run([sys.executable, "-c", code, path, cache_dir, mode, fmt],
                         capture_output=True, text=True, check=False)
    wall = time.perf_counter() - t0
    if out.returncode != 0:
        raise SystemExit(f"child failed on {path}:\n{out.stderr}")
    data = json.loads(out.stdout.strip().splitlines()[-1])
    data["wall"] = wall
    return data


def measure(path: str, repeat: int, warmup: bool = True, mode: str = "prove",
            fmt: str = "text") -> dict:
    cold, warm, rcold, rwarm = [], [], [], []
    if warmup:
        with tempfile.TemporaryDirectory(prefix="hazlint-bench-") as d:
            # discarded: lets the parser generator write its tables once
            run_child(CHILD, path, d, "no-prove", fmt)
    while len(cold) < repeat:
        with tempfile.TemporaryDirectory(prefix="hazlint-bench-") as d:
            c = run_child(CHILD, path, d, mode, fmt)
            w = run_child(CHILD, path, d, mode, fmt)
        assert c["code"] == w["code"], (c, w)
        cold.append(c)
        warm.append(w)
        with tempfile.TemporaryDirectory(prefix="hazlint-bench-") as d:
            rc = run_child(CHILD_READ, path, d)
            rw = run_child(CHILD_READ, path, d)
        assert rc["stores"] == 1 and rw["hits"] == 1, (rc, rw)
        rcold.append(rc)
        rwarm.append(rw)
    med = lambda rows, k: statistics.median(r[k] for r in rows)
    keys = ("load", "lint", "command", "import", "wall", "design_bytes", "parse_bytes",
            "result_bytes", "report_bytes")
    return {"cold": {k: med(cold, k) for k in keys}, "warm": {k: med(warm, k) for k in keys},
            "read_cold": med(rcold, "read"), "read_warm": med(rwarm, "read"),
            "bytes": os.path.getsize(path), "repeat": repeat, "mode": mode, "format": fmt}


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--out", default=str(HERE / "RESULTS-cache.md"))
    ap.add_argument("--only", action="append", help="measure only this netlist (repeatable)")
    ap.add_argument("--rows", help="JSON file of rows measured earlier, kept for the others")
    ap.add_argument("--mode", action="append", choices=("prove", "no-prove"),
                    help="with the hazard prover (the default command) and/or without; "
                         "both when not given")
    ap.add_argument("--save-rows", help="write the measured rows to this JSON file")
    ap.add_argument("--format", action="append", choices=("text", "json", "sarif"),
                    dest="formats", help="report format of the command (repeatable; default "
                                         "text, what the pre-commit hook prints)")
    args = ap.parse_args(argv)
    modes = args.mode or ["prove", "no-prove"]
    rows = json.loads(Path(args.rows).read_text()) if args.rows else {}
    base = importlib.resources.files("circuitgraph")
    for name, rel in NETLISTS.items():
        if args.only and name not in args.only:
            continue
        for mode in modes:
            for fmt in args.formats or ["text"]:
                key = f"{name}, {mode}, {fmt}"
                with importlib.resources.as_file(base.joinpath(rel)) as p:
                    rows[key] = measure(str(p), args.repeat, mode=mode, fmt=fmt)
                    print(key, json.dumps(rows[key]), file=sys.stderr)
                if args.save_rows:
                    Path(args.save_rows).write_text(json.dumps(rows, indent=1))
    rows = {k: rows[k] for n in NETLISTS for m in ("prove", "no-prove")
            for f in ("text", "json", "sarif") for k in [f"{n}, {m}, {f}"] if k in rows}
    write_report(rows, args.out, args.repeat)
    print(Path(args.out).read_text())
    return 0


def write_report(rows: dict, out: str, repeat: int) -> None:
    import platform
    pct = lambda w, c: 100 * w / c if c else float("nan")     # noqa: E731
    lines = ["# Caches: cold versus warm run", "",
             f"Generated by `python bench/bench_cache.py` (median of the runs given per "
             f"netlist; each run a fresh interpreter; Python "
             f"{platform.python_version()}, {os.cpu_count()} CPUs).", "",
             "Netlists from the PyPI package circuitgraph==0.2.1. A run is "
             "`hazlint check --format FORMAT -o /dev/null` on the netlist (\"prove\": the "
             "default command, hazard prover included; \"no-prove\": `--no-prove`, the "
             "structural rules only), in-process through `hazlint.cli.main`; cold starts with "
             "an empty cache folder, warm reuses it. Goal: the warm run costs at most 10% of "
             "the cold run.", "",
             "| netlist, run, format | size | load cold | load warm | lint cold | lint warm | "
             "command cold | command warm | warm/cold | process cold | process warm | "
             "warm/cold | imports | report kept |",
             "|---|---|---|---|---|---|---|---|---|---|---|---|---|---|"]
    notes = []
    for name, r in rows.items():
        c, w = r["cold"], r["warm"]
        kept = c.get("report_bytes", 0)
        lines.append(
            f"| {name} ({r.get('repeat', repeat)} runs) | {r['bytes'] // 1024} KiB | "
            f"{c['load']:.3f} | {w['load']:.3f} | {c['lint']:.3f} | {w['lint']:.3f} | "
            f"{c['command']:.3f} | {w['command']:.3f} | "
            f"{pct(w['command'], c['command']):.1f}% | {c['wall']:.3f} | {w['wall']:.3f} | "
            f"{pct(w['wall'], c['wall']):.1f}% | {w['import']:.3f} | "
            f"{kept / 1e6:.2f} MB |" if kept else
            f"| {name} ({r.get('repeat', repeat)} runs) | {r['bytes'] // 1024} KiB | "
            f"{c['load']:.3f} | {w['load']:.3f} | {c['lint']:.3f} | {w['lint']:.3f} | "
            f"{c['command']:.3f} | {w['command']:.3f} | "
            f"{pct(w['command'], c['command']):.1f}% | {c['wall']:.3f} | {w['wall']:.3f} | "
            f"{pct(w['wall'], c['wall']):.1f}% | {w['import']:.3f} | no |")
        verdict = "meets" if w["command"] <= 0.10 * c["command"] else "misses"
        how = ("the report came from the report cache (no design or findings decoded)" if kept
               and not w["lint"] else
               "the report was too large to keep (over a quarter of the cache size limit), "
               "so the warm run decoded the findings and rendered it again" if not kept else
               "the warm run linted")
        notes.append(
            f"* {name}: whole command warm/cold {pct(w['command'], c['command']):.1f}% in CPU "
            f"time ({verdict} 10%); {how}. Process wall time warm/cold "
            f"{pct(w['wall'], c['wall']):.1f}%, of which interpreter start and imports are "
            f"{w['import']:.3f} s. Entries: design {c['design_bytes'] / 1e6:.2f} MB, parsed "
            f"IR {c['parse_bytes'] / 1e6:.2f} MB, findings {c['result_bytes'] / 1e6:.2f} MB, "
            f"report {kept / 1e6:.2f} MB. Parse cache alone (`read_sources`): cold "
            f"{r['read_cold']:.3f} s, warm {r['read_warm']:.3f} s "
            f"({pct(r['read_warm'], r['read_cold']):.1f}%).")
    lines += ["", "CPU seconds in the process for \"load\" (`hazlint.pipeline.load`: read, "
              "elaborate, SDF; on a warm run from the design cache, 0 when the report cache "
              "answered), \"lint\" (`hazlint.pipeline.lint`: load, rules or the "
              "result cache, prover, waivers, baseline; 0 when the report cache answered) and "
              "\"command\" (the whole `check` command, writing the report included); wall "
              "seconds for \"process\" (the whole child process, interpreter start "
              "included); \"imports\" is the wall time of importing hazlint in the warm "
              "child. \"report kept\": size of the report entry the cold run left.", "",
              "## Reading the numbers", "", *notes, "",
              "What a warm run does when the report cache answers: start the interpreter, "
              "read the configuration, hash the input files, resolve the rules and their "
              "options, compute the report key, check the include files the entry depends "
              "on, and copy the kept report to the output. It does not import networkx or the "
              "reader, decode the design or the findings, or render anything. When an input "
              "changed, the design cache (unchanged design, other options) and the result "
              "cache (same findings, new waivers or baseline) still spare the parts that did "
              "not change."]
    Path(out).write_text("\n".join(lines) + "\n")


if __name__ == "__main__":
    sys.exit(main())
