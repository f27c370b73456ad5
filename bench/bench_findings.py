"""Findings and report sizes per benchmark netlist, default scope and wider scope.

For each netlist (ISCAS-85 and EPFL from circuitgraph==0.2.1, read in place) one fresh process
per configuration runs ``hazlint check`` as a user would and records the number of findings, the
size of the JSON and text reports, the places the default scope leaves out (summary line) and
the CPU seconds. The wider scope runs with ``--scope outputs --no-prove`` (the prover's batched
pass on tens of thousands of reconvergences is measured in bench_hazards.py).

    python bench/bench_findings.py                 # the small netlists (under 200 kB)
    python bench/bench_findings.py --all           # every ISCAS-85 and EPFL netlist
    python bench/bench_findings.py sin.v log2.v    # these
    python bench/bench_findings.py --write bench/RESULTS-findings.md

Goal (issue 15): sin.v's JSON report under 5 MB at either scope. Run on a quiet machine for the
times; counts and sizes do not depend on the load.
"""
from __future__ import annotations

import argparse
import importlib.resources
import json
import os
import platform
import re
import resource
import subprocess
import sys
import tempfile
import time

NETLISTS = importlib.resources.files("circuitgraph") / "netlists"
EPFL = ["adder.v", "arbiter.v", "bar.v", "cavlc.v", "ctrl.v", "dec.v", "div.v", "i2c.v",
        "int2float.v", "log2.v", "max.v", "memctrl.v", "multiplier.v", "priority_ckt.v",
        "router.v", "sin.v", "sqrt.v", "square.v", "voter.v"]
ISCAS85 = ["c17.v", "c432.v", "c499.v", "c880.v", "c1355.v", "c1908.v", "c2670.v", "c3540.v",
           "c5315.v", "c6288.v", "c7552.v"]
SMALL = 200_000


def run(path, args, fmt, cache):
    """(findings, report bytes, summary line, CPU seconds) of one fresh ``hazlint`` process."""
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "report")
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        t = time.perf_counter()
        p = subprocess.run([sys.executable, "-m", "hazlint", "check", path, "--format", fmt,
                            "-o", out, "--cache-dir", cache, *args],
                           capture_output=True, text=True, cwd=tmp)
        wall = time.perf_counter() - t
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        if p.returncode not in (0, 1):
            raise SystemExit(f"{path}: exit {p.returncode}: {p.stderr[-2000:]}")
        size = os.path.getsize(out)
        with open(out, encoding="utf-8") as fh:
            if fmt == "json":
                n = sum(1 for line in fh if line.startswith("{"))
                summary = ""
            else:
                lines = fh.read().splitlines()
                summary = next((ln for ln in reversed(lines) if ln.startswith("hazlint: ")), "")
                n = int(re.match(r"hazlint: (\d+) finding", summary).group(1))
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return n, size, summary, cpu, wall


def _mb(n):
    return f"{n / 1e6:.2f}" if n >= 10_000 else f"{n / 1e6:.3f}"


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("names", nargs="*")
    ap.add_argument("--all", action="store_true", help="every ISCAS-85 and EPFL netlist")
    ap.add_argument("--write", metavar="FILE", help="write the table as Markdown")
    a = ap.parse_args(argv)
    names = a.names or [n for n in ISCAS85 + EPFL
                        if a.all or (NETLISTS / n).stat().st_size < SMALL]
    rows = []
    with tempfile.TemporaryDirectory() as cache:
        for name in names:
            path = str(NETLISTS / name)
            kb = (NETLISTS / name).stat().st_size / 1000
            d_n, _, d_sum, d_cpu, _ = run(path, ["--no-cache"], "text", cache)
            _, d_json, _, _, _ = run(path, [], "json", cache)
            w_n, w_text, _, w_cpu, _ = run(path, ["--scope", "outputs", "--no-prove",
                                                  "--no-cache"], "text", cache)
            _, w_json, _, _, _ = run(path, ["--scope", "outputs", "--no-prove"], "json", cache)
            unlisted = re.search(r"not listed: (.*)$", d_sum)
            rows.append((name, f"{kb:.0f}", d_n, _mb(d_json), f"{d_cpu:.2f}", w_n, _mb(w_text),
                         _mb(w_json), f"{w_cpu:.2f}",
                         unlisted.group(1).split(" (")[0].replace("reconvergent fanout into ",
                                                                  "") if unlisted else "-"))
            print(" | ".join(map(str, rows[-1])), flush=True)
    head = ("| netlist | kB | default: findings | JSON MB | CPU s | wider: findings | text MB "
            "| JSON MB | CPU s | not listed by default |\n"
            "|---|---:|---:|---:|---:|---:|---:|---:|---:|---|\n")
    table = head + "".join("| " + " | ".join(map(str, r)) + " |\n" for r in rows)
    if a.write:
        with open(a.write, "w", encoding="utf-8") as fh:
            fh.write("# Findings per netlist\n\n"
                     f"Recorded {time.strftime('%Y-%m-%d')} on {platform.machine()}, "
                     f"{os.cpu_count()} cores, Python {platform.python_version()}, by "
                     f"`python bench/bench_findings.py {' '.join(argv or sys.argv[1:])}`. "
                     "One fresh process per cell; default = the default configuration (with "
                     "the prover), wider = `--scope outputs --no-prove`. CPU seconds of the "
                     "text run without cache (the JSON run reuses the design cache).\n\n"
                     + table)
    else:
        print(table)


if __name__ == "__main__":
    main()
