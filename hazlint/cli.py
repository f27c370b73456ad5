"""The ``hazlint`` command line.

``hazlint [check] FILES...`` lints (the default command); other commands are named first:
``hazlint summary``, ``hazlint rules``, ``hazlint formats``, ``hazlint explain RULE``, ... Each
command lives in its own module under :mod:`hazlint.commands` with ``add_arguments(parser)`` and
``run(args) -> int``, and is listed in :data:`COMMANDS`. Errors in the user's input end with exit code 2 and one
``file:line: error: ...`` line on stderr, never a traceback.
"""
from __future__ import annotations

import argparse
import importlib
import os
import sys

from . import __version__
from .errors import EXIT_INPUT_ERROR, EXIT_INTERNAL_ERROR, HazlintError

# command name -> (module under hazlint.commands, one-line help)
COMMANDS: dict[str, tuple[str, str]] = {
    "check": ("check", "lint Verilog files for glitch hazards (the default command)"),
    "summary": ("summary", "summarise a design: ports, gates by type, registers, depth"),
    "rules": ("rules_cmd", "list the rules"),
    "formats": ("formats_cmd", "list the report formats"),
    "explain": ("explain", "print one rule's documentation"),
    "prove": ("prove", "classify hazards with ternary simulation and show the witness waveform"),
    "lsp": ("lsp_cmd", "run the language server over stdio"),
}


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="hazlint",
        description="Find where structural and gate-level Verilog can glitch.")
    parser.add_argument("--version", action="version", version=f"hazlint {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, (modname, help_text) in COMMANDS.items():
        try:
            mod = importlib.import_module(f"hazlint.commands.{modname}")
        except ModuleNotFoundError as exc:
            if exc.name == f"hazlint.commands.{modname}":
                continue   # command not built yet
            raise
        p = sub.add_parser(name, help=help_text, description=help_text)
        mod.add_arguments(p)
        p.set_defaults(_run=mod.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = bool(os.environ.get("HAZLINT_DEBUG"))   # read now: under memory pressure, not later
    if debug:
        import logging
        logging.basicConfig(level=logging.DEBUG, stream=sys.stderr,
                            format="hazlint: debug: %(name)s: %(message)s")
    parser = build_parser()
    if not argv or (argv[0] not in COMMANDS and argv[0] not in ("-h", "--help", "--version")):
        argv = ["check", *argv]
    try:
        args = parser.parse_args(argv)
        if not hasattr(args, "_run"):
            parser.print_help()
            return EXIT_INPUT_ERROR
        try:
            return int(args._run(args) or 0)
        finally:
            _deprecation_note()
    except HazlintError as exc:
        print(str(exc), file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("hazlint: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0
    except RecursionError:
        print(f"{_first_file(argv)}error: input nested too deeply to analyse (expression or "
              "hierarchy depth)", file=sys.stderr)
        return EXIT_INPUT_ERROR
    except MemoryError:
        # the big allocations are gone with the unwound stack; print without building much
        sys.stderr.write(f"{_first_file(argv)}error: out of memory while reading or analysing "
                         "the design; lower the size limits (--limit, e.g. gates=N) or give "
                         "the run more memory\n")
        return EXIT_INPUT_ERROR
    except Exception as exc:  # a bug in hazlint, not in the user's input
        if debug:
            raise
        print(f"hazlint: internal error: {type(exc).__name__}: {exc} (this is a bug in hazlint; "
              f"rerun with HAZLINT_DEBUG=1 for the details to report)", file=sys.stderr)
        return EXIT_INTERNAL_ERROR


def _deprecation_note() -> None:
    """One line on stderr naming every old spelling this run met (configuration keys, rule
    ids in options, acceptances and attributes); see :mod:`hazlint.findings.names`."""
    from .findings.names import take_note
    note = take_note()
    if note:
        print(note, file=sys.stderr)


def _first_file(argv) -> str:
    """``FILE: `` for the first argument that names an existing file, else nothing."""
    for a in argv[1:]:
        if not a.startswith("-") and os.path.isfile(a):
            return f"{a}: "
    return ""


if __name__ == "__main__":
    sys.exit(main())
