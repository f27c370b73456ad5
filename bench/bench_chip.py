"""A chip-sized netlist: load, rules and the default check, cold and warm, and a one-module commit.

The chip is generated at bench time by bench/chipgen.py (tiles around the EPFL circuits of the
PyPI package circuitgraph==0.2.1, with register banks, asynchronous resets and gated clocks)
into a work folder (default: a temporary folder, removed afterwards); nothing generated is
committed. Every step runs in a fresh interpreter; wall time, CPU time and the peak resident
memory of that process (``ru_maxrss`` from ``wait4``) are recorded:

1. ``load``: read and elaborate (``hazlint.api.load``, no cache);
2. ``rules``: load, then the three rules with their default options on one shared context,
   then every finding's deferred text and evidence built (``rules`` and ``findings built``
   are timed inside the child);
   ``prove`` (only when asked in ``--steps``): load and rules, then the prover's refinement
   of their findings in one process, timed alone in CPU seconds, with a digest of the
   refined findings;
3. ``check cold``: ``hazlint check`` (prover on, the default) with an empty cache folder;
4. ``check warm``: the same command again (caches filled);
5. ``--changed``: one tile module's file is edited (a comment line added, so its digest
   changes) and ``hazlint check --changed FILE`` runs against the configured design with the
   warm caches of step 4 (the pre-commit hook's run).

    python bench/bench_chip.py                       # 1M gates, writes bench/RESULTS-chip.md
    python bench/bench_chip.py --gates 250000 1000000
    python bench/bench_chip.py --cores sin.v,max.v,sin.v,max.v,sin.v,max.v --print  # quick
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import chipgen  # noqa: E402

LOAD = r"""
import json, sys, time
t = time.perf_counter()
from hazlint.api import load
from hazlint.config import Config
cfg = Config(top=[sys.argv[2]])
d = load(json.loads(sys.argv[1]), cfg, use_cache=False)
print(json.dumps({"load": time.perf_counter() - t, "nodes": d.graph.number_of_nodes(),
                  "gates": sum(1 for _, k in d.graph.nodes(data="kind") if k == "gate"),
                  "registers": len(d.registers)}))
"""

RULES = r"""
import json, sys, time
from hazlint.api import load
from hazlint.config import Config
from hazlint.analysis.context import AnalysisContext
from hazlint.plugins import all_rules
clock = time.process_time      # CPU seconds: the machine may be shared
t = clock()
design = load(json.loads(sys.argv[1]), Config(top=[sys.argv[2]]), use_cache=False)
t_load = clock() - t
rules = all_rules()
ctx = AnalysisContext(design, None, {r.id: r.resolve_options({}) for r in rules})
t = clock()
found = [d for r in rules for d in r.check(design, ctx)]
t_rules = clock() - t
t = clock()
for d in found:
    d.flows
print(json.dumps({"load": t_load, "rules": t_rules, "built": clock() - t,
                  "findings": len(found), "nodes": design.graph.number_of_nodes(),
                  "gates": sum(1 for _, k in design.graph.nodes(data="kind") if k == "gate")}))
"""

PROVE = r"""
import hashlib, json, sys, time
from hazlint.api import load
from hazlint.config import Config
from hazlint.analysis import workers
from hazlint.analysis.context import AnalysisContext
from hazlint.analysis.refine import refine
from hazlint.plugins import all_rules
clock = time.process_time
design = load(json.loads(sys.argv[1]), Config(top=[sys.argv[2]]), use_cache=False)
rules = all_rules()
ctx = AnalysisContext(design, None, {r.id: r.resolve_options({}) for r in rules})
found = [d for r in rules for d in r.check(design, ctx)]
t = clock()
with workers.configured(1, None):
    out = refine(design, found, ctx, {})
t_prove = clock() - t
digest = hashlib.sha256(json.dumps([d.to_json() for d in out], sort_keys=True,
                                   default=repr).encode()).hexdigest()[:16]
print(json.dumps({"prove": t_prove, "findings": len(found), "refined": len(out),
                  "digest": digest, "nodes": design.graph.number_of_nodes()}))
"""


def run(cmd: list[str], cwd: str | None = None, env=None, timeout: float = 3600) -> dict:
    """Run ``cmd``; wall and CPU seconds and peak RSS (MB) of that process, its last stdout
    line parsed as JSON when it is JSON, the exit code."""
    load_before = load_average()
    t0 = time.perf_counter()
    with tempfile.TemporaryFile("w+") as out, tempfile.TemporaryFile("w+") as err:
        p = subprocess.Popen(cmd, cwd=cwd, env=env, stdout=out, stderr=err, text=True)
        deadline = t0 + timeout
        while True:
            pid, status, ru = os.wait4(p.pid, os.WNOHANG)
            if pid:
                break
            if time.perf_counter() > deadline:
                p.kill()
                pid, status, ru = os.wait4(p.pid, 0)
                return {"error": f"timeout after {timeout:.0f}s", "load_avg": load_before}
            time.sleep(0.05)
        p.returncode = os.waitstatus_to_exitcode(status)
        out.seek(0)
        err.seek(0)
        text, etext = out.read(), err.read()
    r = {"wall": time.perf_counter() - t0, "cpu": ru.ru_utime + ru.ru_stime,
         "peak_mb": ru.ru_maxrss / 1024, "code": p.returncode, "load_avg": load_before}
    lines = text.strip().splitlines()
    if lines:
        try:
            r.update(json.loads(lines[-1]))
        except ValueError:
            r["last"] = lines[-1]
    if p.returncode not in (0, 1):
        r["error"] = (etext.strip().splitlines() or ["failed"])[-1][:160]
    return r


def load_average() -> str:
    """The 1, 5 and 15 minute load averages (as ``uptime`` prints them) when a step starts:
    the machine may be shared, and a step's wall time means little when the load exceeds
    the cores."""
    try:
        return " ".join(Path("/proc/loadavg").read_text().split()[:3])
    except OSError:
        return "?"


def bench(gates: int, work: Path, timeout: float, cores=None, load_step=True,
          check_args=(), memory_mb: int = 0, steps=("rules", "check")) -> dict:
    folder = work / f"chip-{gates}"
    info = chipgen.generate(folder, gates, cores)
    files = info["files"]
    (folder / "hazlint.toml").write_text(
        "files = [" + ", ".join(json.dumps(f) for f in files) + "]\n"
        f'top = "{info["top"]}"\ncache_dir = "cache"\n')
    py = sys.executable
    if memory_mb:
        # a cap on each step's address space: on a shared machine a step that needs more
        # fails with MemoryError instead of calling the kernel's out-of-memory killer
        py = ["/bin/sh", "-c", f'ulimit -v {memory_mb * 1024}; exec "$0" "$@"', py]
    else:
        py = [py]
    out = {"tiles": info["tiles"], "cores": info["cores"], "check_args": list(check_args)}
    if load_step:
        out["load"] = run([*py, "-c", LOAD, json.dumps(files), info["top"]], timeout=timeout)
        print(f"  load: {out['load']}", flush=True)
    if "rules" in steps:
        out["rules"] = run([*py, "-c", RULES, json.dumps(files), info["top"]],
                           timeout=timeout)
        print(f"  rules: {out['rules']}", flush=True)
    if "prove" in steps:
        # the prover's refinement alone, one process, default options: CPU seconds and a
        # digest of the refined findings (the same digest for the same findings)
        out["prove"] = run([*py, "-c", PROVE, json.dumps(files), info["top"]],
                           timeout=timeout)
        print(f"  prove: {out['prove']}", flush=True)
    if "check" not in steps:
        return out
    hz = [*py, "-m", "hazlint", "check", "--brief", "-o", str(folder / "report.txt"),
          *check_args]
    out["cold"] = run(hz, cwd=str(folder), timeout=timeout)
    print(f"  check cold: {out['cold']}", flush=True)
    if "wall" not in out["cold"]:
        # a cold check that did not finish left no cache: warm and --changed would repeat it
        out["warm"] = out["changed"] = {"error": "not run: the cold check did not finish",
                                        "load_avg": ""}
        return out
    out["warm"] = run(hz, cwd=str(folder), timeout=timeout)
    print(f"  check warm: {out['warm']}", flush=True)
    out["summary"] = _summary(folder / "report.txt")
    edited = Path(files[1])             # the first tile module's file
    edited.write_text(edited.read_text() + "// edited by the benchmark: a one-module commit\n")
    out["changed"] = run(hz + ["--changed", str(edited)], cwd=str(folder), timeout=timeout)
    out["changed_file"] = edited.name
    out["changed_summary"] = _summary(folder / "report.txt")
    print(f"  --changed {edited.name}: {out['changed']}", flush=True)
    return out


def _summary(p: Path) -> str:
    try:
        lines = [x for x in p.read_text().splitlines() if x.startswith("hazlint: ")]
    except OSError:
        return ""
    return lines[-1][len("hazlint: "):] if lines else ""


def _cell(r: dict, key: str = "wall") -> str:
    if "error" in r and key not in r:
        return r["error"]
    return f"{r[key]:.1f}"


def write(results: list[tuple[int, dict]], path: Path, note: str) -> None:
    lines = ["# Chip-sized benchmark", "",
             f"Recorded {time.strftime('%Y-%m-%d')} on {platform.machine()}, "
             f"{os.cpu_count()} cores, Python {platform.python_version()}, by "
             "`python bench/bench_chip.py` (chip generated by bench/chipgen.py from the EPFL "
             "netlists of circuitgraph 0.2.1). Each step is one fresh process: wall seconds, "
             "CPU seconds in parentheses, peak resident memory of that process; the rules "
             "step times its own load and rules in CPU seconds.", ""]
    if note:
        lines += [note, ""]
    lines += ["| gates | tiles | nodes | step | wall s (CPU s) | peak MB | load avg | result |",
              "|---:|---:|---:|---|---:|---:|---|---|"]
    for gates, r in results:
        load = r.get("load", {})
        rules = r.get("rules", {})
        nodes = load.get("nodes") or rules.get("nodes") or r.get("prove", {}).get("nodes", "")
        real = load.get("gates") or rules.get("gates", gates)
        steps = [("load", load, f"{load.get('registers', '')} registers")] if load else []
        if rules:
            steps.append(("rules (default options)", rules,
                          f"CPU: load {rules.get('load', 0):.1f} s, rules "
                          f"{rules.get('rules', 0):.1f} s, findings built "
                          f"{rules.get('built', 0):.1f} s, {rules.get('findings', '')} "
                          "findings" if "rules" in rules else rules.get("error", "")))
        if "prove" in r:
            pr = r["prove"]
            steps.append(("prover's refinement alone (-j 1)", pr,
                          f"CPU: refinement {pr.get('prove', 0):.1f} s, {pr.get('findings', '')}"
                          f" findings in, {pr.get('refined', '')} out, digest "
                          f"{pr.get('digest', '')}" if "prove" in pr else pr.get("error", "")))
        if "cold" in r:
            args = "".join(f" {x}" for x in r.get("check_args", []))
            steps += [(f"check{args}, cold", r["cold"], r.get("summary", "")),
                      (f"check{args}, warm", r["warm"], r.get("summary", "")),
                      (f"check{args} --changed {r.get('changed_file', '')}, warm",
                       r["changed"], r.get("changed_summary", ""))]
        for k, (name, s, res) in enumerate(steps):
            head = f"| {real} | {r['tiles']} | {nodes} |" if k == 0 else "| | | |"
            if "wall" not in s:
                lines.append(f"{head} {name} | {s.get('error', '')} | | "
                             f"{s.get('load_avg', '')} | |")
                continue
            if s.get("error"):
                res = f"exit {s.get('code')}: {s['error']}"
            lines.append(f"{head} {name} | {s['wall']:.1f} ({s['cpu']:.1f}) | "
                         f"{s['peak_mb']:.0f} | {s.get('load_avg', '')} | {res} |")
    path.write_text("\n".join(lines) + "\n")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--gates", type=int, nargs="+", default=[1_000_000])
    ap.add_argument("--work", help="work folder (default: a temporary folder, removed)")
    ap.add_argument("--timeout", type=float, default=3600.0, help="per step, seconds")
    ap.add_argument("--note", default="", help="a sentence for the results file")
    ap.add_argument("--print", action="store_true", help="print only, write no results file")
    ap.add_argument("--no-load-step", action="store_true",
                    help="skip the load-only step (the rules step times the load too)")
    ap.add_argument("--cores", help="comma-separated EPFL files for the tiles (quick checks)")
    ap.add_argument("--out", default=str(HERE / "RESULTS-chip.md"))
    ap.add_argument("--check-args", default="",
                    help="extra arguments of the check steps, e.g. '-j 2 --time-budget 0'")
    ap.add_argument("--memory-mb", type=int, default=0,
                    help="cap each step's address space at this many MB (0: none)")
    ap.add_argument("--steps", default="load,rules,check",
                    help="which steps to run: load, rules, prove (the prover's refinement "
                         "alone, -j 1), check (cold, warm, --changed)")
    a = ap.parse_args()
    tmp = None
    if a.work:
        work = Path(a.work)
    else:
        tmp = tempfile.TemporaryDirectory(prefix="hazlint-chip-")
        work = Path(tmp.name)
    results = []
    try:
        for g in a.gates:
            print(f"chip of about {g} gates in {work}", flush=True)
            results.append((g, bench(g, work, a.timeout,
                                     a.cores.split(",") if a.cores else None,
                                     not a.no_load_step and "load" in a.steps,
                                     a.check_args.split(), a.memory_mb,
                                     a.steps.split(","))))
            if not a.print:         # after each size: a long run keeps what it measured
                write(results, Path(a.out), a.note)
                print(f"wrote {a.out}", flush=True)
    finally:
        if tmp is not None:
            tmp.cleanup()


if __name__ == "__main__":
    main()
