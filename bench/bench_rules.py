"""Time of the three built-in rules next to the load time, per benchmark circuit.

Circuits: the ISCAS-85 netlists and the EPFL netlists shipped in the PyPI package
circuitgraph==0.2.1 (read in place through importlib.resources). Each circuit runs in a fresh
interpreter: load (read + elaborate) is timed, then each rule on a fresh shared-analysis context
(so the first rule that needs the timing graph pays for it), then all three on one context, then
every finding's deferred text and evidence is built and dropped, one at a time (``built``: what
a streaming report then costs on top, before formatting). The reconvergence rule runs with its widest scope (``scope = "all"``). Times
are CPU seconds of the child process (the machine may be shared; wall time would be noisy);
``peak`` is the child's peak resident memory. Goal: all three rules together take no more than
the load itself.

``HAZLINT_KERNEL`` chooses the reconvergence solver (``auto``: the compiled kernel when built;
``python``: the pure numpy/Python solvers; ``numba``: the numba twin); ``--kernels c,python``
runs each circuit once per choice and prints the ratios side by side (same run, same machine
state) instead of writing the results file.

    python bench/bench_rules.py                  # writes bench/RESULTS-rules.md
    python bench/bench_rules.py c6288.v c17.v    # selected circuits, printed only
    python bench/bench_rules.py --kernels c,python c6288.v sin.v
"""
from __future__ import annotations

import argparse
import importlib.resources
import json
import os
import platform
import subprocess
import sys
import time

ISCAS85 = ["c17.v", "c432.v", "c499.v", "c880.v", "c1355.v", "c1908.v", "c2670.v", "c3540.v",
           "c5315.v", "c6288.v", "c7552.v"]
EPFL = ["adder.v", "arbiter.v", "bar.v", "cavlc.v", "ctrl.v", "dec.v", "div.v", "i2c.v",
        "int2float.v", "log2.v", "max.v", "memctrl.v", "multiplier.v", "priority_ckt.v",
        "router.v", "sin.v", "sqrt.v", "square.v", "voter.v"]

CHILD = r"""
import json, resource, sys, time
from hazlint.loader import load_design
from hazlint.analysis.context import AnalysisContext
from hazlint.plugins import all_rules
clock = time.process_time
t0 = clock()
design = load_design(sys.argv[1])
t_load = clock() - t0
rules = all_rules()
opts = {x.id: x.resolve_options({"scope": "all"} if x.id == "unbalanced-reconvergence" else {})
        for x in rules}
out = {"load": t_load, "gates": design.summary()["gates"], "rules": {}}
for r in sorted(rules, key=lambda r: r.id != "unbalanced-reconvergence"):
    ctx = AnalysisContext(design, None, opts)
    t = clock()
    n = sum(1 for _ in r.check(design, ctx))
    out["rules"][r.id] = [clock() - t, n]
ctx = AnalysisContext(design, None, opts)
t = clock()
found = [d for r in rules for d in r.check(design, ctx)]
out["all"] = clock() - t
t = clock()
found.reverse()
while found:          # each finding built and dropped, as a streaming report writer does
    found.pop().flows
out["built"] = clock() - t
out["peak_mb"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(json.dumps(out))
"""


def run(path: str, timeout: float, kernel: str = "auto") -> dict:
    t0 = time.perf_counter()
    try:
        p = subprocess.run([sys.executable, "-c", CHILD, path], capture_output=True, text=True,
                           timeout=timeout, check=False,
                           env=dict(os.environ, HAZLINT_KERNEL=kernel))
    except subprocess.TimeoutExpired:
        return {"error": f"timeout after {timeout:.0f}s"}
    if p.returncode != 0:
        return {"error": (p.stderr.strip().splitlines() or ["failed"])[-1][:120]}
    d = json.loads(p.stdout.strip().splitlines()[-1])
    d["wall"] = time.perf_counter() - t0
    return d


def compare(names, kernels, timeout) -> None:
    """Each circuit once per kernel choice, one after the other; ratios printed side by side.
    ``first``: the reconvergence rule alone on a fresh process's first context (so it pays
    any one-time import or compilation); ``all``: the three rules on a later context."""
    base = importlib.resources.files("circuitgraph") / "netlists"
    print("| circuit | " + " | ".join(f"{k}: load / first / all / built (CPU s) | {k}: all/load"
                                       for k in kernels) + " |")
    print("|---|" + "---:|---:|" * len(kernels))
    for name in names:
        cells = []
        for k in kernels:
            d = run(str(base / name), timeout, k)
            if "error" in d:
                cells += [d["error"], ""]
                continue
            first = d["rules"]["unbalanced-reconvergence"][0]
            cells += [f"{d['load']:.2f} / {first:.2f} / {d['all']:.2f} / {d['built']:.2f}",
                      f"{d['all'] / d['load']:.2f}"]
        print(f"| {name} | " + " | ".join(cells) + " |", flush=True)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("names", nargs="*")
    ap.add_argument("--timeout", type=float, default=900.0)
    ap.add_argument("--kernels", help="comma-separated HAZLINT_KERNEL values to compare")
    ap.add_argument("--note", default="", help="a sentence for the results file")
    ap.add_argument("--out", default=os.path.join(os.path.dirname(__file__), "RESULTS-rules.md"))
    args = ap.parse_args()
    base = importlib.resources.files("circuitgraph") / "netlists"
    names = args.names or ISCAS85 + EPFL
    if args.kernels:
        compare(names, args.kernels.split(","), args.timeout)
        return
    rows = []
    for name in names:
        d = run(str(base / name), args.timeout)
        rows.append((name, d))
        if "error" in d:
            print(f"{name}: {d['error']}", flush=True)
        else:
            per = ", ".join(f"{k} {v[0]:.2f}s ({v[1]})" for k, v in d["rules"].items())
            print(f"{name}: {d['gates']} gates, load {d['load']:.2f}s, all rules {d['all']:.2f}s "
                  f"[{per}], built {d['built']:.2f}s, peak {d['peak_mb']:.0f} MB", flush=True)
        if not args.names:          # after each circuit: a long run keeps what it measured
            write(args.out, rows, args.note)


def write(out: str, rows, note: str) -> None:
    ids = sorted({k for _, d in rows if "rules" in d for k in d["rules"]})
    with open(out, "w") as f:
        f.write("# Rule benchmark\n\n")
        f.write(f"Recorded {time.strftime('%Y-%m-%d')} on {platform.machine()}, "
                f"{os.cpu_count()} cores, Python {platform.python_version()}, by "
                f"`python bench/bench_rules.py` (netlists of circuitgraph 0.2.1), reconvergence "
                f"scope `all`, the compiled kernel when built. CPU seconds of the child "
                f"process; findings in parentheses; each rule timed on a fresh shared context; "
                f"`built`: every finding's deferred text and evidence made afterwards; peak: "
                f"the child's peak resident memory.\n\n")
        if note:
            f.write(note + "\n\n")
        f.write("| circuit | gates | load | " + " | ".join(ids) +
                " | all three | all / load | built | peak MB |\n|---|---:|---:|"
                + "---:|" * (len(ids) + 4) + "\n")
        for name, d in rows:
            if "error" in d:
                f.write(f"| {name} | | {d['error']} |" + " |" * (len(ids) + 4) + "\n")
                continue
            cells = " | ".join(f"{d['rules'][i][0]:.2f} ({d['rules'][i][1]})" for i in ids)
            f.write(f"| {name} | {d['gates']} | {d['load']:.2f} | {cells} | {d['all']:.2f} | "
                    f"{d['all'] / d['load']:.2f} | {d['built']:.2f} | {d['peak_mb']:.0f} |\n")


if __name__ == "__main__":
    main()
