"""Whole checks of this tree against another tree, in the same run: the prover's shown-only
replays (refine decides every finding, then replays, draws and fixes only the findings the
report shows) against a tree without them.

Each row runs ``hazlint check --no-cache --time-budget 0 --format json`` (ISCAS-85 netlists
of the PyPI package circuitgraph==0.2.1, read in place, at ``--scope outputs``) or a cold
``hazlint check --time-budget 0`` of a generated chip (bench/chipgen.py, an empty cache
folder) in a fresh interpreter, once with ``--base`` (a source tree put first on
``PYTHONPATH``, e.g. an export of main with its built C kernel copied in) and once with this
tree, alternately, so both see the same machine load. Recorded per run: wall seconds, CPU seconds of the process and its
pool workers and peak resident memory (``wait4``), a digest of the report, the load average.

    python bench/bench_shown.py --base /tmp/main-tree                   # ISCAS-85 at -j 2
    python bench/bench_shown.py --base /tmp/main-tree --jobs 1 --netlists "c3540 c6288"
    python bench/bench_shown.py --base /tmp/main-tree --netlists c17 --jobs 1     # quick
    python bench/bench_shown.py --base /tmp/main-tree --netlists '' --chip 250000
"""
from __future__ import annotations

import argparse
import hashlib
import json
import os
import shutil
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import chipgen  # noqa: E402
from bench_chip import run  # noqa: E402

ISCAS = "c17 c432 c499 c880 c1355 c1908 c2670 c3540 c5315 c6288 c7552"


def _env(tree: str | None) -> dict:
    env = dict(os.environ)
    if tree:
        env["PYTHONPATH"] = tree + os.pathsep + env.get("PYTHONPATH", "")
    return env


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()[:12] if path.exists() else "-"


def iscas(name: str, jobs: int, tree: str | None, work: Path, timeout: float) -> dict:
    import importlib.resources as ir
    folder = str(ir.files("circuitgraph") / "netlists")
    out = work / f"{name}.j{jobs}.{'base' if tree else 'this'}.json"
    cmd = [sys.executable, "-m", "hazlint", "check", "--no-cache", "--time-budget", "0",
           "--scope", "outputs", "-j", str(jobs), "--format", "json", "-o", str(out),
           f"{name}.v"]
    r = run(cmd, cwd=folder, env=_env(tree), timeout=timeout)
    r["digest"] = _digest(out)
    return r


def chip(gates: int, tree: str | None, work: Path, timeout: float, extra=()) -> dict:
    folder = work / f"chip-{gates}"
    if not (folder / "hazlint.toml").exists():
        info = chipgen.generate(folder, gates, None)
        (folder / "hazlint.toml").write_text(
            "files = [" + ", ".join(json.dumps(f) for f in info["files"]) + "]\n"
            f'top = "{info["top"]}"\ncache_dir = "cache"\n')
    shutil.rmtree(folder / "cache", ignore_errors=True)       # cold: an empty cache
    report = folder / f"report.{'base' if tree else 'this'}.txt"
    cmd = [sys.executable, "-m", "hazlint", "check", "--brief", "-o", str(report), *extra]
    r = run(cmd, cwd=str(folder), env=_env(tree), timeout=timeout)
    r["digest"] = _digest(report)
    lines = [x for x in report.read_text().splitlines() if x.startswith("hazlint: ")] \
        if report.exists() else []
    r["summary"] = lines[-1] if lines else ""
    return r


def _row(label: str, base: dict, this: dict) -> str:
    def cell(r):
        if "error" in r:
            return r["error"], "", ""
        return f"{r['wall']:.1f}", f"{r['cpu']:.1f}", f"{r['peak_mb']:.0f}"
    b, t = cell(base), cell(this)
    ratio = (f"{base['cpu'] / this['cpu']:.2f}x" if "cpu" in base and "cpu" in this
             and this["cpu"] else "")
    same = "same" if base.get("digest") == this.get("digest") else "differ"
    return (f"| {label} | {b[0]} / {t[0]} | {b[1]} / {t[1]} | {ratio} | {b[2]} / {t[2]} | "
            f"{same} | {base.get('load_avg', '')} |")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--base", required=True, help="the other tree (put first on PYTHONPATH)")
    ap.add_argument("--netlists", default=ISCAS, help="ISCAS-85 names, space-separated")
    ap.add_argument("--jobs", default="2", help="comma-separated -j values")
    ap.add_argument("--chip", type=int, nargs="*", default=[], help="chip sizes in gates")
    ap.add_argument("--check-args", default="--time-budget 0",
                    help="more arguments of the chip's check (default: no time budget)")
    ap.add_argument("--work", help="work folder (default: a temporary folder, removed)")
    ap.add_argument("--timeout", type=float, default=3600.0)
    a = ap.parse_args()
    work = Path(a.work) if a.work else Path(tempfile.mkdtemp(prefix="hazlint-shown-"))
    work.mkdir(parents=True, exist_ok=True)
    print("| run | wall s base / this | CPU s base / this | CPU ratio | peak MB base / this "
          "| report | load avg at start |")
    print("|---|---|---|---:|---|---|---|")
    try:
        for j in [int(x) for x in a.jobs.split(",") if x]:
            for name in a.netlists.split():
                b = iscas(name, j, a.base, work, a.timeout)
                t = iscas(name, j, None, work, a.timeout)
                print(_row(f"{name} -j {j}", b, t), flush=True)
        for g in a.chip:
            b = chip(g, a.base, work, a.timeout, a.check_args.split())
            t = chip(g, None, work, a.timeout, a.check_args.split())
            print(_row(f"chip {g} gates, cold check", b, t), flush=True)
            print(f"<!-- base: {b.get('summary')} / this: {t.get('summary')} -->", flush=True)
    finally:
        if not a.work:
            shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    main()
