"""The timed simulator's share of a whole check: CPU seconds of the check and of its replays.

For each netlist (default ISCAS-85 c6288 and c3540 of the PyPI package circuitgraph==0.2.1, read
in place) one fresh process per variant runs

    hazlint check --no-cache --time-budget 0 --scope outputs -j 1 --format json NETLIST

and reports the process CPU seconds of the check, the CPU seconds spent inside
``timedsim.replay`` (every witness replay, delay-search trial and waveform) and their count, and
a digest of the JSON report (the variants must agree byte for byte). Variants, run one after the
other for each netlist so that they share the machine's load:

* ``compiled``: this checkout (compiled event loop, set-up kept per cone);
* ``python loop``: this checkout with the compiled event loop turned off (only that: the
  reconvergence rule's C kernel stays on), i.e. the kept set-up alone;
* ``before`` (``--before DIR``): another checkout, e.g. a worktree of an older commit with its
  own ``.venv`` (its Python is used when present).

Usage::

    python bench/bench_replay.py                         # writes its section of RESULTS-parallel.md
    python bench/bench_replay.py --before /path/to/old --netlists c432.v --out -
"""
from __future__ import annotations

import argparse
import datetime
import importlib.resources
import json
import os
import platform
import re
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
BEGIN, END = "<!-- bench_replay: begin -->", "<!-- bench_replay: end -->"

# runs inside the measured process: wraps replay where the prover calls it, runs the check
HARNESS = r"""
import contextlib, hashlib, io, json, os, sys, tempfile, time
from hazlint import cli
from hazlint.analysis import delaysearch, prove, timedsim
if sys.argv[2] == "python-loop":
    from hazlint.analysis import compiled
    compiled._LOOP = None
spent = [0.0, 0]
real = timedsim.replay
def timed(*a, **k):
    t = time.process_time()
    try:
        return real(*a, **k)
    finally:
        spent[0] += time.process_time() - t
        spent[1] += 1
for m in (prove, delaysearch, timedsim):
    m.replay = timed
fd, out = tempfile.mkstemp(suffix=".json")
os.close(fd)
t0 = time.process_time()
with contextlib.redirect_stdout(io.StringIO()):
    try:
        cli.main(["check", "--no-cache", "--time-budget", "0", "--scope", "outputs", "-j", "1",
                  "--format", "json", "-o", out, sys.argv[1]])
    except SystemExit:
        pass
cpu = time.process_time() - t0
data = open(out, "rb").read()
os.unlink(out)
print(json.dumps({"cpu": cpu, "replay_cpu": spent[0], "replays": spent[1],
                  "digest": hashlib.sha256(data).hexdigest()[:16]}))
"""


def _netlist(name: str) -> str:
    return str(importlib.resources.files("circuitgraph") / "netlists" / name)


def _load() -> str:
    try:
        return " ".join(f"{x:.2f}" for x in os.getloadavg())
    except OSError:
        return "?"


def _run(python: str, cwd: Path, netlist: str, variant: str) -> dict:
    env = dict(os.environ)
    env.pop("HAZLINT_KERNEL", None)
    before = _load()
    proc = subprocess.run([python, "-c", HARNESS, netlist, variant], cwd=cwd, env=env,
                          capture_output=True, text=True, check=True)
    row = json.loads(proc.stdout.strip().splitlines()[-1])
    row["load"] = f"{before} / {_load()}"
    return row


def _label(path: Path) -> str:
    try:
        rev = subprocess.run(["git", "-C", str(path), "rev-parse", "--short", "HEAD"],
                             capture_output=True, text=True, check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        rev = "?"
    return f"before ({path.name} at {rev})"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--netlists", default="c6288.v,c3540.v",
                    help="comma-separated circuitgraph netlists")
    ap.add_argument("--before", help="another checkout to measure as 'before'")
    ap.add_argument("--before-label", help="how to name it (default: its folder and commit)")
    ap.add_argument("--out", default=str(HERE / "RESULTS-parallel.md"),
                    help="results file whose bench_replay section is replaced ('-': stdout)")
    args = ap.parse_args(argv)
    variants = []
    if args.before:
        old = Path(args.before).resolve()
        py = old / ".venv" / "bin" / "python"
        variants.append((args.before_label or _label(old), str(py if py.exists() else sys.executable), old,
                         "compiled"))
    variants += [("python loop", sys.executable, ROOT, "python-loop"),
                 ("compiled", sys.executable, ROOT, "compiled")]
    lines = [BEGIN, "## The timed simulator's share of a whole check", "",
             f"Recorded {datetime.datetime.utcnow():%Y-%m-%d %H:%M} UTC on {platform.machine()}, "
             f"{os.cpu_count()} cores, Python {platform.python_version()}, by `python "
             f"bench/bench_replay.py{' --before DIR' if args.before else ''} "
             f"--netlists {args.netlists}` (netlists of circuitgraph 0.2.1; `hazlint check "
             "--no-cache --time-budget 0 --scope outputs -j 1 --format json`; one fresh process "
             "per row, the rows of a netlist one after the other; CPU seconds of the process).",
             "", "| netlist | variant | check CPU s | replays | replay CPU s | replay share | "
             "report digest | load avg before / after |", "|---|---|---:|---:|---:|---:|---|---|"]
    for name in args.netlists.split(","):
        for label, py, cwd, variant in variants:
            r = _run(py, cwd, _netlist(name), variant)
            lines.append(f"| {name} | {label} | {r['cpu']:.1f} | {r['replays']} | "
                         f"{r['replay_cpu']:.1f} | {100 * r['replay_cpu'] / r['cpu']:.0f} % | "
                         f"{r['digest']} | {r['load']} |")
            print(lines[-1], flush=True)
    lines.append(END)
    text = "\n".join(lines) + "\n"
    if args.out == "-":
        sys.stdout.write(text)
        return 0
    path = Path(args.out)
    old_text = path.read_text() if path.exists() else ""
    m = re.search(re.escape(BEGIN) + r".*?" + re.escape(END) + r"\n?", old_text, re.S)
    new = old_text[:m.start()] + text + old_text[m.end():] if m else \
        old_text.rstrip("\n") + ("\n\n" if old_text else "") + text
    path.write_text(new)
    return 0


if __name__ == "__main__":
    sys.exit(main())
