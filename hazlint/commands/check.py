"""``hazlint check FILES``: lint a design and report the findings.

Exit codes: 0 clean, 1 findings at or above ``--fail-on`` (configuration ``fail_on``, default
``warning``), 2 usage or input error.
"""
from __future__ import annotations

import argparse
import os
import sys

from ..errors import EXIT_CLEAN, EXIT_FINDINGS, HazlintError
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
                   help="preprocessor macro (repeatable)")
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
        k, _, v = item.partition("=")
        if not k:
            raise HazlintError(f"bad --define '{item}' (expected NAME or NAME=VALUE)")
        out[k] = v
    return out


def _renderer(fmt: str):
    """The registered format ``fmt`` (:mod:`hazlint.report.registry`), loaded."""
    return get_format(fmt)


def report_options(args, renderer) -> ReportOptions:
    """The report options the command line asks for (colour only for text on a terminal)."""
    color = renderer.name == "text" and not args.output and use_color(args.color, sys.stdout)
    return ReportOptions(color=color, evidence=not args.brief, ascii_only=bool(args.ascii))


def use_color(choice: str, stream) -> bool:
    if choice == "always":
        return True
    if choice == "never" or os.environ.get("NO_COLOR"):
        return False
    return hasattr(stream, "isatty") and stream.isatty() and not os.environ.get("NO_COLOR")


def prepare(args):
    """(config, files, changed, cwd) of a run from the arguments ``check`` and ``prove``
    share; None for ``changed`` when not ``--changed``, and None for the whole tuple when
    ``--changed`` has nothing to do."""
    from ..config import load_config
    cwd = os.getcwd()
    config = load_config(cwd, args.config)
    from ..limits import DEFAULT as LIMITS, parse_assignments
    LIMITS.with_values(parse_assignments(args.limits), where="--limit: ")
    if args.time_budget is not None and not args.time_budget >= 0:
        raise HazlintError(f"--time-budget must be a number of seconds, 0 or more (0: none), "
                           f"got {args.time_budget}")
    files = list(args.files)
    changed = None
    if args.changed:
        changed = files
        files = [] if config.files else files
        if not config.files and not changed:
            return None              # nothing staged and no design configured
    if args.jobs is not None:
        if args.jobs < 1:
            raise HazlintError(f"--jobs must be at least 1, got {args.jobs}")
        config.jobs = args.jobs
    if args.format:
        config.format = args.format
    if getattr(args, "scheduler", None):
        config.scheduler = args.scheduler
    if args.cache_dir:
        config.cache_dir = os.path.abspath(args.cache_dir)
    if args.frontend:
        from ..frontends.registry import check_choice
        check_choice(args.frontend)
        config.frontend = args.frontend
    return config, files, changed, cwd


def run(args) -> int:
    from ..api import lint
    prepared = prepare(args)
    if prepared is None:
        return EXIT_CLEAN
    config, files, changed, cwd = prepared
    renderer = _renderer(config.format)     # a missing format fails before the slow work
    options = report_options(args, renderer)
    render_opts = {"format": renderer.name, **options.key()}
    reports = key = None
    # a plugin format's report is not kept: the cache's code stamp does not cover its code
    if not args.no_cache and not args.write_baseline and renderer.builtin:
        # a rerun on unchanged inputs prints the finished report of the last such run: no
        # decoding of the design or the findings, no waivers, no rendering
        from ..api import report_key
        from ..store.report import open_report_cache
        key = report_key(files or None, render=render_opts,
                         **_run_options(args, files, config, cwd, changed))
        reports = open_report_cache(config.cache_dir, limit_mb=config.cache_limit_mb) \
            if key else None
        hit = reports.load(key) if reports is not None else None
        if hit is not None:
            src, worst = hit
            with src:
                _emit(args, _copy_from(src))
            return _exit_code(worst, args.fail_on or config.fail_on)
    from ..progress import terminal_progress
    progress = terminal_progress()
    try:
        result = lint_request(lint, args, files, config, cwd, changed, progress)
    finally:
        if progress is not None:
            progress.close()
    return _report(args, result, renderer, options, reports, key)


def _run_options(args, files, config, cwd, changed) -> dict:
    """What decides a run, as keyword arguments of ``api.lint`` and ``api.report_key``."""
    return dict(config=config, cwd=cwd, changed=changed,
                select=_csv(args.select) or None, ignore=_csv(args.ignore),
                prove=not args.no_prove, top=args.top,
                include_dirs=([os.path.abspath(d) for d in args.include_dirs]
                              if args.include_dirs else None),
                defines=parse_defines(args.defines), baseline=args.baseline,
                rule_options=scope_options(args))


def scope_options(args) -> dict | None:
    """``--scope`` as the reconvergence rule's option."""
    scope = getattr(args, "scope", None)
    if not scope:
        return None
    from ..findings.names import RECONVERGENCE_RULE
    return {RECONVERGENCE_RULE: {"scope": scope}}


def _exit_code(worst, level) -> int:
    from ..diagnostics import Severity
    if level == "never" or worst is None:
        return EXIT_CLEAN
    return EXIT_FINDINGS if worst >= Severity.parse(level) else EXIT_CLEAN


def _copy_from(src):
    """A writer that copies the open file ``src`` (a report kept in the cache)."""
    import shutil
    return lambda stream: shutil.copyfileobj(src, stream, 1 << 20)


def _emit(args, write) -> None:
    """Run ``write(stream)`` on ``--output`` or stdout."""
    if args.output:
        try:
            with open(args.output, "w", encoding="utf-8", newline="") as fh:
                write(fh)
        except OSError as exc:
            raise HazlintError(f"cannot write report: {exc.strerror}",
                               path=args.output) from None
    else:
        write(sys.stdout)
        sys.stdout.flush()


def lint_request(lint, args, files, config, cwd, changed, progress):
    """Call ``lint`` with everything the command line asked for (``check`` and ``prove``
    share it)."""
    from ..limits import parse_assignments
    return lint(files or None, use_cache=not args.no_cache, progress=progress,
                time_budget=args.time_budget, limits=parse_assignments(args.limits),
                **_run_options(args, files, config, cwd, changed))


def _report(args, result, renderer, options, reports=None, key=None) -> int:
    if args.write_baseline:
        from ..baseline import write_baseline
        # everything found now, including what an existing baseline already accounted for
        n = write_baseline(args.write_baseline, result.diagnostics + result.baselined,
                           result.root)
        print(f"hazlint: recorded {n} finding(s) in {args.write_baseline}", file=sys.stderr)
        return EXIT_CLEAN
    def write(stream):
        renderer.write(result, stream, options)
    kept = None
    if reports is not None and key and not result.incomplete:
        # the report is written once, into the cache, and copied from there
        # (the input files' contents are in the key; what they include is checked on a hit)
        worst = max((int(d.severity) for d in result.diagnostics), default=None)
        includes = [os.path.abspath(p) for p in getattr(result.design, "includes", None) or ()]
        kept = reports.store(key, write, worst, includes)
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
