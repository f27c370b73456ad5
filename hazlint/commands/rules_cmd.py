"""``hazlint rules``: list the registered rules (built-in and third-party)."""
from __future__ import annotations

import json


def add_arguments(p) -> None:
    p.add_argument("--format", choices=("text", "json"), default="text")


def run(args) -> int:
    from ..plugins import PSEUDO_RULES, all_rules, pseudo_rule
    rules = all_rules()
    if args.format == "json":
        # every id a report can print, the built-in pseudo rules included
        rules = sorted(rules + [pseudo_rule(r) for r in PSEUDO_RULES], key=lambda r: r.id)
        rows = [{"id": r.id, "summary": r.summary, "severity": str(r.severity),
                 "kinds": list(r.kinds), "origin": r.origin,
                 "options": [{"name": o.name, "type": o.type_name, "default": o.default,
                              "help": o.help, **({"choices": list(o.choices)} if o.choices
                                                 else {})} for o in r.options]}
                for r in rules]
        print(json.dumps(rows, indent=2, sort_keys=True))
        return 0
    width = max(len(r.id) for r in rules)
    for r in rules:
        print(f"{r.id:<{width}}  {str(r.severity):<7}  {r.summary}")
    for rid, text in sorted(PSEUDO_RULES.items()):
        print(f"{rid:<{width}}  {'warning':<7}  {text} (built in)")
    print("\n`hazlint explain RULE` prints a rule's documentation and options.")
    return 0
