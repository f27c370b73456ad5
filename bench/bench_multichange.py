"""Hazard classification over the change model: every output of ISCAS-85 and ISCAS-89.

For every primary output (and every glitch-sensitive sink) of a circuit, every transition the
change model allows is decided at once (hazlint.analysis.multichange.decide_sink): any hazard,
function hazard and logic hazard, for each kind (static-1, static-0, dynamic), each present
(with the smallest witness), absent (proven over every transition), or inconclusive past its
budget. ISCAS-85: every primary input changes independently. ISCAS-89: the flip-flops are the
configured cell ``ff`` of circuitgraph's netlists, clocked by ``clk``; their outputs change
together at the clock edge, the inputs at any time. Netlists from the PyPI package
circuitgraph==0.2.1, read in place through importlib.resources.

    python bench/bench_multichange.py                 # ISCAS-85 and ISCAS-89, writes
                                                      # bench/RESULTS-multichange.md
    python bench/bench_multichange.py c17 c432 s27    # chosen circuits, no results file
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

ISCAS85 = ["c17", "c432", "c499", "c880", "c1355", "c1908", "c2670", "c3540", "c5315", "c6288",
           "c7552"]
ISCAS89 = ["s27", "s13207", "s38417", "s38584"]
KINDS = ("static-1-hazard", "static-0-hazard", "dynamic-hazard")
FF_CELL = {"ff": {"inputs": ["CK", "D"], "outputs": {"Q": "IQ"},
                  "ff": {"clocked_on": "CK", "next_state": "D"}}}


def netlist(name: str) -> str:
    return str(importlib.resources.files("circuitgraph") / "netlists" / f"{name}.v")


def run_one(name: str, options: dict) -> dict:
    import hazlint
    from hazlint.analysis.context import AnalysisContext
    from hazlint.analysis.multichange import decide_sink
    t0 = time.perf_counter()
    design = hazlint.load_design(netlist(name), library=FF_CELL if name.startswith("s") else None)
    t1 = time.perf_counter()
    ctx = AnalysisContext(design)
    model = ctx.change_model
    g = design.graph
    sinks = sorted(set(design.output_node.values()) | set(ctx.sensitive_sinks))
    counts = collections.Counter()
    sizes = collections.Counter()
    status = collections.Counter()
    methods = collections.Counter()
    memo = {}
    for s in sinks:
        drv = g.nodes[s]["inputs"][0]
        v = memo.get(drv)
        if v is None:
            v = memo[drv] = decide_sink(g, s, model, options)
        status[v.status] += 1
        methods[v.method] += 1
        for k in KINDS:
            for q, f in v.kinds[k].items():
                counts[(k, q, f.status)] += 1
                if q == "any" and f.status == "present":
                    sizes[f.size] += 1
    t2 = time.perf_counter()
    questions = sum(counts.values())
    inconclusive = sum(n for (k, q, st), n in counts.items() if st == "inconclusive")
    return {"name": name, "gates": sum(1 for _, d in g.nodes(data=True) if d["kind"] == "gate"),
            "inputs": len(design.inputs), "registers": len(design.registers),
            "sinks": len(sinks), "counts": counts, "sizes": sizes, "status": status,
            "methods": methods, "questions": questions, "inconclusive": inconclusive,
            "load": t1 - t0, "analysis": t2 - t1}


def table(rows) -> list[str]:
    out = ["| circuit | gates | in | regs | sinks | hazard / free / inconclusive | "
           "static-1 fn / logic | static-0 fn / logic | dynamic fn / logic | smallest witness "
           "(sources: sinks) | engines | inconclusive questions | load s | analysis s |",
           "|---|---:|---:|---:|---:|---|---|---|---|---|---|---:|---:|---:|"]
    for r in rows:
        c = r["counts"]

        def pair(k):
            def one(q):
                p, i = c[(k, q, "present")], c[(k, q, "inconclusive")]
                return f"{p}" + (f" (+{i}?)" if i else "")
            return f"{one('function')} / {one('logic')}"
        st = r["status"]
        sz = ", ".join(f"{k}: {v}" for k, v in sorted(r["sizes"].items()))
        eng = ", ".join(f"{k} {v}" for k, v in sorted(r["methods"].items()))
        out.append(f"| {r['name']} | {r['gates']} | {r['inputs']} | {r['registers']} | "
                   f"{r['sinks']} | {st['hazard']} / {st['hazard-free']} / {st['inconclusive']} | "
                   f"{pair(KINDS[0])} | {pair(KINDS[1])} | {pair(KINDS[2])} | {sz} | {eng} | "
                   f"{r['inconclusive']} | {r['load']:.2f} | {r['analysis']:.2f} |")
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("circuits", nargs="*")
    ap.add_argument("--conflict-budget", type=int, default=None)
    ap.add_argument("--node-budget", type=int, default=None)
    ap.add_argument("--output", default=str(HERE / "RESULTS-multichange.md"))
    args = ap.parse_args(argv)
    from hazlint.analysis.prove import DEFAULTS
    options = {k: DEFAULTS[k] for k in ("node_budget", "conflict_budget", "max_changes",
                                        "engine_sources")}
    if args.conflict_budget is not None:
        options["conflict_budget"] = args.conflict_budget
    if args.node_budget is not None:
        options["node_budget"] = args.node_budget
    groups = [("ISCAS-85", [n for n in (args.circuits or ISCAS85) if n.startswith("c")]),
              ("ISCAS-89", [n for n in (args.circuits or ISCAS89) if n.startswith("s")])]
    done = []
    for title, names in groups:
        rows = []
        for n in names:
            r = run_one(n, options)
            rows.append(r)
            print(f"{n}: {r['sinks']} sinks, {r['inconclusive']} of {r['questions']} questions "
                  f"inconclusive, analysis {r['analysis']:.2f} s (load {r['load']:.2f} s)",
                  flush=True)
        if rows:
            done.append((title, rows))
    if args.circuits:
        for title, rows in done:
            print(f"\n{title}\n" + "\n".join(table(rows)))
        return 0
    from hazlint.analysis.symbolic import BACKEND
    lines = ["# Hazard classification over the change model", "",
             "Every primary output (and glitch-sensitive sink) of every circuit, decided over "
             "every transition the change model allows (single changes, pairs and every larger "
             "set at once): for each hazard kind, is there any hazard, a function hazard, a "
             "logic hazard (a *question* is one of these nine per sink). *fn / logic* count the "
             "sinks where one is present (+n? inconclusive); *smallest witness* counts the sinks "
             "by the number of sources the smallest hazardous transition changes. ISCAS-89 "
             "flip-flops are circuitgraph's cell `ff` on `clk`; their outputs change together "
             "at the clock edge. Netlists from the PyPI package circuitgraph==0.2.1. Generated "
             "by `python bench/bench_multichange.py`.", "",
             f"Machine: {platform.machine()}, {os.cpu_count()} cores, Python "
             f"{platform.python_version()}, BDD backend {BACKEND}, one process.",
             f"Budgets: BDD node budget {options['node_budget']} (cones of at most "
             f"{options['engine_sources']} sources), then SAT with a conflict budget of "
             f"{options['conflict_budget']} per query.", ""]
    for title, rows in done:
        total = sum(r["analysis"] for r in rows)
        q = sum(r["questions"] for r in rows)
        inc = sum(r["inconclusive"] for r in rows)
        lines += [f"## {title}", ""] + table(rows) + [
            "", f"{title} total: {sum(r['sinks'] for r in rows)} sinks, analysis {total:.1f} s"
                + (" (goal 60 s)" if title == "ISCAS-85" else "")
                + f", {inc} of {q} questions inconclusive ({100.0 * inc / max(1, q):.2f} %"
                + (", goal at most 5 %" if title == "ISCAS-85" else "") + ").", ""]
    Path(args.output).write_text("\n".join(lines) + "\n")
    print(f"wrote {args.output}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
