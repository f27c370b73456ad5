"""``hazlint check FILES``: lint a design and report the findings.

Exit codes: 0 clean, 1 findings at or above ``--fail-on`` (configuration ``fail_on``, default
``warning``), 2 usage or input error.
"""
from __future__ import annotations

import argparse
import os
import sys

from ..errors import EXIT_CLEAN, HazlintError
from ..findings.names import RECONVERGENCE_RULE
from ..report.registry import FormatNames, ReportOptions, get_format


def _csv(values):
    out = []
    for v in values or ():
        out.extend(x.strip() for x in v.split(",") if x.strip())
    return out


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("files", nargs="*", metavar="FILE",
                   help="Verilog files (default: the configured 'files')")
    p.add_argument("--config", metavar="PATH",
                   help="configuration file (default: hazlint.toml or pyproject.toml upward)")
    p.add_argument("--top", action="append", metavar="MODULE", help="top module (repeatable)")
    p.add_argument("-I", "--include-dir", action="append", metavar="DIR", dest="include_dirs",
                   help="`include search directory (repeatable)")
    p.add_argument("-D", "--define", action="append", metavar="NAME[=VALUE]", dest="defines",
                   help="preprocessor macro; NAME alone is defined as 1, as with "
                        "iverilog -D (repeatable)")
    p.add_argument("--select", action="append", metavar="RULES",
                   help="run only these rules (comma-separated, repeatable)")
    p.add_argument("--ignore", action="append", metavar="RULES",
                   help="skip these rules (comma-separated, repeatable)")
    p.add_argument("--format", choices=FormatNames(), metavar="FORMAT",
                   help="report format (configuration 'format'; default text; `hazlint "
                        "formats` lists the registered ones)")
    p.add_argument("-o", "--output", metavar="FILE", help="write the report to FILE")
    p.add_argument("--fail-on", choices=("error", "warning", "info", "never"),
                   help="lowest severity that makes the exit code 1")
    p.add_argument("--scope", choices=("async", "outputs", "all"),
                   help="where reconvergent fanout is listed: async (glitch-sensitive sinks, "
                        "the default), outputs (and every primary output), all (and register "
                        "data pins); configuration [rules.unbalanced-reconvergence] scope")
    p.add_argument("--no-prove", action="store_true",
                   help="skip the hazard prover's refinement of the findings")
    p.add_argument("--changed", action="store_true",
                   help="FILES are the changed files: lint the configured design (or FILES when "
                        "none is configured) and keep findings in or running through FILES")
    p.add_argument("--baseline", metavar="FILE",
                   help="hide findings recorded in this baseline file")
    p.add_argument("--write-baseline", metavar="FILE",
                   help="record the current findings in FILE and exit 0")
    p.add_argument("-j", "--jobs", type=int, metavar="N",
                   help="worker processes for the hazard prover and the reader "
                        "(configuration 'jobs'; default: every core for the prover, one "
                        "process for the reader; 1: no worker processes)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="run the prover's work on a Dask cluster, e.g. tcp://host:8786 "
                        "(configuration 'scheduler'; needs the 'cluster' extra)")
    add_frontend_argument(p)
    p.add_argument("--cache-dir", metavar="DIR",
                   help="parse cache folder (configuration 'cache_dir'; default: per-user "
                        "cache folder, or the HAZLINT_CACHE_DIR environment variable)")
    p.add_argument("--no-cache", action="store_true", help="neither read nor write the cache")
    p.add_argument("--color", choices=("auto", "always", "never"), default="auto",
                   help="colour the text output (auto: only on a terminal, not with NO_COLOR)")
    p.add_argument("--brief", action="store_true", help="text: no evidence lines")
    p.add_argument("--ascii", action="store_true",
                   help="text: ASCII only (timing diagrams drawn with - _ / \\ r f)")
    add_bound_arguments(p)


def add_bound_arguments(p: argparse.ArgumentParser) -> None:
    """``--time-budget`` and ``--limit``: the bounds of a run (shared by the commands that load
    a design)."""
    p.add_argument("--time-budget", type=float, metavar="SECONDS",
                   help="time for the whole run; past it unfinished analyses are reported as "
                        "incomplete (configuration 'time_budget'; default 60; 0: none)")
    p.add_argument("--limit", action="append", metavar="NAME=VALUE", dest="limits",
                   help="raise or lower a size limit, e.g. vector_width=4194304 (repeatable; "
                        "configuration 'limits'; see the limits table in the README)")


def add_frontend_argument(p) -> None:
    from ..frontends.registry import CHOICES
    p.add_argument("--frontend", choices=CHOICES,
                   help="reader of the Verilog files (configuration 'frontend'; default auto: "
                        ".sv files through slang when pyslang is installed, others through "
                        "pyverilog)")


def parse_defines(items):
    out = {}
    for item in items or ():
        k, eq, v = item.partition("=")
        if not k:
            raise HazlintError(f"bad --define '{item}' (expected NAME or NAME=VALUE)")
        out[k] = v if eq else "1"      # NAME alone: 1 (iverilog -D and C compilers do the same)
    return out


def _renderer(fmt: str):
    """The registered format ``fmt`` (:mod:`hazlint.report.registry`), loaded."""
    return get_format(fmt)


def report_options(args, renderer) -> ReportOptions:
    """The report options the command line asks for (colour only for text on a terminal)."""
    color = renderer.name == "text" and not args.output and use_color(args.color, sys.stdout)
    return ReportOptions(color=color, evidence=not args.brief, ascii_only=bool(args.ascii))


def format_name(args, config) -> str:
    """``--format``, else the configuration's ``format`` key (default text)."""
    return getattr(args, "format", None) or config.format


def use_color(choice: str, stream) -> bool:
    if choice == "always":
        return True
    if choice == "never" or os.environ.get("NO_COLOR"):
        return False
    return hasattr(stream, "isatty") and stream.isatty() and not os.environ.get("NO_COLOR")


def request_from_args(args, **extra):
    """The :class:`~hazlint.request.RunRequest` of the arguments ``check``, ``prove`` and
    ``summary`` share (configuration discovery, ``--config``, files, -I, -D, ``--top``,
    selection, ``--scope``, caches, workers, bounds), with ``extra`` keywords of
    :func:`hazlint.request.resolve` over them; None when ``--changed`` has nothing to do."""
    from ..config import load_config
    from ..limits import DEFAULT as LIMITS, parse_assignments
    from ..request import resolve
    cwd = os.getcwd()
    config = load_config(cwd, getattr(args, "config", None))
    limits = parse_assignments(getattr(args, "limits", None))
    LIMITS.with_values(limits, where="--limit: ")
    time_budget = getattr(args, "time_budget", None)
    if time_budget is not None and not time_budget >= 0:
        raise HazlintError(f"--time-budget must be a number of seconds, 0 or more (0: none), "
                           f"got {time_budget}")
    files = list(args.files)
    changed = None
    if getattr(args, "changed", False):
        changed = files
        files = [] if config.files else files
        if not config.files and not changed:
            return None              # nothing staged and no design configured
    jobs = getattr(args, "jobs", None)
    if jobs is not None and jobs < 1:
        raise HazlintError(f"--jobs must be at least 1, got {jobs}")
    scope = getattr(args, "scope", None)
    options = dict(
        config=config, cwd=cwd, changed=changed,
        select=_csv(getattr(args, "select", None)) or None,
        ignore=_csv(getattr(args, "ignore", None)), prove=not getattr(args, "no_prove", False),
        top=args.top, include_dirs=([os.path.abspath(d) for d in args.include_dirs]
                                    if args.include_dirs else None),
        defines=parse_defines(args.defines), baseline=getattr(args, "baseline", None),
        rule_options={RECONVERGENCE_RULE: {"scope": scope}} if scope else None,
        use_cache=not getattr(args, "no_cache", False),
        cache_dir=getattr(args, "cache_dir", None), jobs=jobs,
        scheduler=getattr(args, "scheduler", None) or None,
        frontend=getattr(args, "frontend", None) or None, time_budget=time_budget,
        limits=limits)
    options.update(extra)
    return resolve(files or None, **options)


def run(args) -> int:
    from .. import pipeline
    request = request_from_args(args)
    if request is None:
        return EXIT_CLEAN
    # a missing format fails before the slow work
    renderer = _renderer(format_name(args, request.config))
    options = report_options(args, renderer)
    render_opts = {"format": renderer.name, **options.key()}
    slot = None
    # a plugin format's report is not kept: the cache's code stamp does not cover its code
    if request.use_cache and not args.write_baseline and renderer.builtin:
        # a rerun on unchanged inputs prints the finished report of the last such run: no
        # decoding of the design or the findings, no waivers, no rendering
        slot = pipeline.ReportSlot(request, render_opts)
        hit = slot.load()
        if hit is not None:
            src, worst = hit
            with src:
                _emit(args, _copy_from(src))
            return pipeline.exit_code(worst, args.fail_on or request.config.fail_on)
    from ..progress import terminal_progress
    progress = terminal_progress()
    try:
        result = pipeline.lint(request, progress=progress)
    finally:
        if progress is not None:
            progress.close()
    return report(args, result, renderer, options, slot)


def _copy_from(src):
    """A writer that copies the open file ``src`` (a report kept in the cache)."""
    import shutil
    return lambda stream: shutil.copyfileobj(src, stream, 1 << 20)


def _regular_or_new(path: str) -> bool:
    """Whether ``path`` is a regular file or does not exist yet (not a device or a pipe)."""
    import stat
    try:
        return stat.S_ISREG(os.stat(path).st_mode)
    except FileNotFoundError:
        return True
    except OSError:
        return False


def write_user_file(path: str, write, what: str = "report") -> None:
    """Write a file the user asked for (``-o``, ``--vcd``, ``--svg``) with ``write(stream)``:
    into a temporary file beside it, then a rename, so a run that fails halfway (a format
    plugin that raises, a full disk) never leaves half a file; a terminal, a pipe or
    /dev/stdout is written as it is. An error names the file (exit 2)."""
    try:
        if _regular_or_new(path):
            from pathlib import Path
            from ..store.files import atomic_write
            # through a symbolic link: the file it points to is replaced, not the link
            atomic_write(Path(os.path.realpath(path)), write, private=False)
        else:
            with open(path, "w", encoding="utf-8", newline="") as fh:
                write(fh)
    except OSError as exc:
        raise HazlintError(f"cannot write {what}: {exc.strerror}", path=path) from None


def _emit(args, write) -> None:
    """Run ``write(stream)`` on ``--output`` or stdout."""
    if args.output:
        write_user_file(args.output, write)
    else:
        write(sys.stdout)
        sys.stdout.flush()


def report(args, result, renderer, options: ReportOptions, slot=None) -> int:
    """Write the report of ``result`` as the arguments ask (or the baseline file), through
    the report cache when ``slot`` (a :class:`hazlint.pipeline.ReportSlot`) is given; the exit
    code."""
    if args.write_baseline:
        from ..baseline import write_baseline
        # everything found now, including what an existing baseline already accounted for
        n = write_baseline(args.write_baseline, result.diagnostics + result.baselined,
                           result.root)
        print(f"hazlint: recorded {n} finding(s) in {args.write_baseline}", file=sys.stderr)
        return EXIT_CLEAN
    def write(stream):
        renderer.write(result, stream, options)
    # the report is written once, into the cache, and copied from there
    kept = slot.store(result, write) if slot is not None else None
    if kept is None:
        _emit(args, write)
        return result.exit_code(args.fail_on)
    path, keep = kept
    try:
        with open(path, encoding="utf-8", newline="") as src:
            _emit(args, _copy_from(src))
    finally:
        if not keep:
            try:
                os.unlink(path)
            except OSError:
                pass
    return result.exit_code(args.fail_on)
