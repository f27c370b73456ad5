#!/usr/bin/env python3
"""Gather the benchmark results into bench/RESULTS.md.

Each bench script writes its own file (RESULTS-load.md, RESULTS-rules.md, RESULTS-hazards.md,
RESULTS-hazards-giants.md, RESULTS-multichange.md, RESULTS-cache.md, RESULTS-frontends.md,
RESULTS-chip.md, RESULTS-lsp.md, RESULTS-fuzz.md) so that one can be rerun without the others;
this script puts them together, in that order, under one title with the goal of each, demoting
their headings one level.

    python bench/collect.py
"""
from __future__ import annotations

import re
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
PARTS = [
    ("RESULTS-load.md", "bench_load.py",
     "hazlint's load of EPFL multiplier.v no slower than stock pyverilog's bare parse; peak "
     "memory under 1 GB."),
    ("RESULTS-rules.md", "bench_rules.py",
     "all three rules together add no more than the load time on every ISCAS-85 and EPFL "
     "circuit."),
    ("RESULTS-hazards.md", "bench_hazards.py",
     "hazard classification of every output of all ISCAS-85 circuits within 60 s on 2 cores, "
     "c6288 included, with at most 5% of checks inconclusive; the EPFL netlists measured too."),
    ("RESULTS-hazards-giants.md", "bench_hazards.py --giants",
     "none set; the EPFL arithmetic and memory giants measured under the same budgets, to show "
     "that the analysis stays bounded and says inconclusive where the budgets run out."),
    ("RESULTS-multichange.md", "bench_multichange.py",
     "hazard classification of every output and glitch-sensitive sink of all ISCAS-85 "
     "circuits over the change model (every transition, multi-input changes included) within "
     "60 s on 2 cores with at most 5% of questions inconclusive; ISCAS-89 at its outputs with "
     "the register outputs of one clock changing together."),
    ("RESULTS-cache.md", "bench_cache.py",
     "a warm rerun on unchanged files costs at most 10% of the cold run, for ISCAS c7552 and "
     "EPFL sin.v."),
    ("RESULTS-frontends.md", "bench_frontends.py",
     "hazlint's load of EPFL multiplier.v with the slang front end (parse + flatten + graph) "
     "within 3x pyslang's own parse and elaboration of the same file, measured in the same run."),
    ("RESULTS-chip.md", "bench_chip.py",
     "a netlist of one million gates loads within 60 s and 4 GB peak memory, the default "
     "check takes at most 120 s, a one-module `--changed` run at most 15 s warm."),
    ("RESULTS-lsp.md", "bench_lsp.py",
     "the diagnostics of a megabyte netlist within seconds of opening it in the editor."),
    ("RESULTS-fuzz.md", "bench_fuzz.py",
     "ten thousand hostile inputs: no crash, no hang, every exit 2 with `file:line`."),
]


def demote(text: str) -> str:
    return re.sub(r"^(#+) ", lambda m: "#" + m.group(1) + " ", text, flags=re.M)


def main() -> int:
    out = ["# Benchmark results", "",
           "Collected by `python bench/collect.py` from the files each bench script writes. "
           "Speed and memory goals live here, never as timed assertions in the tests. Times "
           "depend on the machine; each section says how and when it was measured.", ""]
    missing = []
    for name, script, goal in PARTS:
        p = HERE / name
        if not p.exists():
            missing.append(name)
            continue
        out += [f"<!-- from {name}, written by bench/{script} -->", "",
                demote(p.read_text().strip()), "", f"Goal: {goal}", ""]
    if missing:
        print("missing: " + ", ".join(missing) + " (run the bench scripts first)",
              file=sys.stderr)
        return 2
    (HERE / "RESULTS.md").write_text("\n".join(out))
    print(f"wrote {HERE / 'RESULTS.md'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
