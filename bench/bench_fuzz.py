"""The long fuzzing run: ten thousand hostile inputs, the figures in bench/RESULTS-fuzz.md.

The inputs and the check are those of the CI slice (tests/test_fuzz.py, tests/support/fuzz.py):
generated structural netlists (a quarter) and byte-, token- and line-level mutants of every
fixture (the rest, fixtures in turn). Each input runs through ``hazlint.cli.main`` in-process
with the fuzzing limits and a time budget of ``fuzz.BUDGET`` seconds; every ``--every``-th
also through a real process. Recorded: inputs tried, exit codes, crashes (exit 3, a traceback,
anything escaping ``main``), hangs (a run still going ``fuzz.HANG`` seconds after it started),
exit-2 messages without ``file:line``, runs that hit the time budget, and the slowest runs;
the first failing inputs are kept under bench/fuzz-failures/ to reproduce them.

    python bench/bench_fuzz.py                      # 10,000 inputs, writes bench/RESULTS-fuzz.md
    python bench/bench_fuzz.py -n 500 --minutes 5   # fewer, or as many as fit in the time
"""
from __future__ import annotations

import argparse
import collections
import os
import platform
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
sys.path.insert(0, str(HERE.parent / "tests"))

from hypothesis import HealthCheck, Phase, given, seed, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

from support import fuzz  # noqa: E402


class _TimeUp(BaseException):
    """Raised inside the property to end the run when the time cap is reached."""


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("-n", type=int, default=10_000, help="inputs to try (default 10000)")
    ap.add_argument("--minutes", type=float, default=0.0,
                    help="stop after this long even if fewer inputs were tried (0: no cap)")
    ap.add_argument("--every", type=int, default=50,
                    help="run every N-th input through a real process too (default 50)")
    ap.add_argument("--seed", type=int, default=20261203)
    ap.add_argument("--out", default=str(HERE / "RESULTS-fuzz.md"))
    args = ap.parse_args()

    base = Path(tempfile.mkdtemp(prefix="hazlint-fuzz-"))
    keep = HERE / "fuzz-failures"
    stats = collections.Counter()
    codes = collections.Counter()
    by_source = collections.defaultdict(collections.Counter)
    failures: list[tuple[str, str, str]] = []
    slowest: list[tuple[float, str]] = []
    t0 = time.monotonic()
    cap = args.minutes * 60 if args.minutes else float("inf")
    fixtures = fuzz.FIXTURES

    cases = st.one_of(
        fuzz.netlists().map(lambda t: ("generated", None, t.encode())),
        st.integers(0, len(fixtures) - 1).flatmap(
            lambda i: fuzz.mutants(fixtures[i]).map(lambda m: (m[0], fixtures[i], m[1]))),
        st.integers(0, len(fixtures) - 1).flatmap(
            lambda i: fuzz.mutants(fixtures[i]).map(lambda m: (m[0], fixtures[i], m[1]))),
        st.integers(0, len(fixtures) - 1).flatmap(
            lambda i: fuzz.mutants(fixtures[i]).map(lambda m: (m[0], fixtures[i], m[1]))))

    @seed(args.seed)
    @settings(max_examples=args.n, deadline=None, database=None,
              suppress_health_check=list(HealthCheck), phases=[Phase.generate])
    @given(cases)
    def one(case):
        if time.monotonic() - t0 > cap:
            raise _TimeUp()
        source, fixture, data = case
        if fixture is None:
            path = base / "generated.v"
            path.write_bytes(data)
            name = "generated netlist"
        else:
            path = fuzz.place(base, fixture, data)
            name = f"{source} mutant of {fixture.relative_to(fuzz.FIXTURES_DIR)}"
        try:
            runs = [("in-process", fuzz.run_in_process(path))]
            if stats["tried"] % args.every == 0:
                runs.append(("process", fuzz.run_subprocess(path)))
        finally:
            if fixture is not None:
                fuzz.restore(base, fixture)
        stats["tried"] += 1
        for how, o in runs:
            stats[f"runs {how}"] += 1
            codes[o.code] += 1
            by_source[source][o.code] += 1
            if "time budget" in o.stderr + o.stdout:
                stats["hit the time budget"] += 1
            slowest.append((o.seconds, name))
            slowest.sort(reverse=True)
            del slowest[5:]
            for p in fuzz.problems(o):
                stats[p] += 1
                if len(failures) < 20:
                    keep.mkdir(exist_ok=True)
                    kept = keep / f"{len(failures):02d}-{p}{path.suffix}"
                    kept.write_bytes(data)
                    failures.append((p, f"{name} ({how})", str(kept.relative_to(HERE.parent))))
        if stats["tried"] % 500 == 0:
            print(f"{stats['tried']} inputs, {time.monotonic() - t0:.0f} s, "
                  f"{sum(stats[k] for k in ('crash', 'hang', 'no-location'))} problems",
                  file=sys.stderr, flush=True)

    try:
        one()
    except _TimeUp:
        pass
    elapsed = time.monotonic() - t0
    write(args, stats, codes, by_source, failures, slowest, elapsed)
    print(f"wrote {args.out}: {stats['tried']} inputs in {elapsed:.0f} s", file=sys.stderr)
    return 1 if any(stats[k] for k in ("crash", "hang", "no-location")) else 0


def write(args, stats, codes, by_source, failures, slowest, elapsed) -> None:
    n = stats["tried"]
    lines = [
        "# Fuzzing run", "",
        f"Recorded {time.strftime('%Y-%m-%d')} on {platform.machine()}, {os.cpu_count()} "
        f"cores, Python {platform.python_version()}, by `python bench/bench_fuzz.py"
        + (f" -n {args.n}" if args.n != 10_000 else "")
        + (f" --minutes {args.minutes:g}" if args.minutes else "") + "` (seed "
        f"{args.seed}). Inputs: generated structural netlists and byte-, token- and "
        "line-level mutants of every fixture (tests/support/fuzz.py); each run in-process "
        f"with a time budget of {fuzz.BUDGET:g} s and the fuzzing limits, every "
        f"{args.every}th also in a real process; a run still going after {fuzz.HANG:g} s "
        "counts as hung.", "",
        f"Inputs tried: **{n}**" + (f" of {args.n} asked (the time cap of {args.minutes:g} "
                                    "minutes ended the run)" if n < args.n else "")
        + f", in {elapsed / 60:.1f} minutes.", "",
        "| | count |", "|---|---:|",
        f"| runs in-process | {stats['runs in-process']} |",
        f"| runs in a real process | {stats['runs process']} |",
        f"| crashes (exit 3, traceback) | {stats['crash']} |",
        f"| hangs | {stats['hang']} |",
        f"| exit 2 without file:line | {stats['no-location']} |",
        f"| runs that hit the time budget | {stats['hit the time budget']} |", "",
        "Exit codes by kind of input:", "",
        "| input | exit 0 | exit 1 | exit 2 | other |", "|---|---:|---:|---:|---:|"]
    for source in sorted(by_source):
        c = by_source[source]
        other = sum(v for k, v in c.items() if k not in (0, 1, 2))
        lines.append(f"| {source} | {c[0]} | {c[1]} | {c[2]} | {other} |")
    lines += ["", "Slowest runs: " + "; ".join(f"{s:.1f} s ({what})" for s, what in slowest)
              + ".", ""]
    if failures:
        lines += ["Failing inputs (kept to reproduce):", ""]
        lines += [f"- {p}: {what}, `{where}`" for p, what, where in failures]
    else:
        lines.append("No input crashed, hung or ended in exit 2 without `file:line`.")
    Path(args.out).write_text("\n".join(lines) + "\n")


if __name__ == "__main__":
    sys.exit(main())
