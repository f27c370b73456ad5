"""``hazlint formats``: list the registered report formats (built-in and third-party)."""
from __future__ import annotations

import json
import sys

from ..errors import EXIT_CLEAN, EXIT_INPUT_ERROR


def add_arguments(p) -> None:
    p.add_argument("--format", choices=("text", "json"), default="text",
                   help="how to print the list")


def run(args) -> int:
    from ..report.registry import all_formats
    formats, broken = all_formats()
    if args.format == "json":
        rows = [{"name": f.name, "summary": f.summary, "origin": f.origin,
                 "builtin": f.builtin} for f in formats]
        print(json.dumps(rows, indent=2, sort_keys=True))
    else:
        width = max((len(f.name) for f in formats), default=0)
        for f in formats:
            print(f"{f.name:<{width}}  {f.summary}" + ("" if f.builtin else f"  [{f.origin}]"))
        print("\n`hazlint check --format NAME` (or `format = \"NAME\"` in the configuration) "
              "chooses one.")
    for exc in broken:      # listed last, each once; the run then ends as an input error
        print(str(exc), file=sys.stderr)
    return EXIT_INPUT_ERROR if broken else EXIT_CLEAN
