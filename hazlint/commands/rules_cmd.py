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
    print("\n".join(listing()))
    print("\n`hazlint explain RULE` prints a rule's documentation and options.")
    return 0


def listing(indent: str = "") -> list[str]:
    """One line per rule: id, default severity, summary; the built-in pseudo rules last."""
    from ..plugins import PSEUDO_RULES, all_rules, pseudo_rule
    rules = all_rules()
    built_in = [pseudo_rule(r) for r in sorted(PSEUDO_RULES)]
    width = max(len(r.id) for r in rules + built_in)
    return [f"{indent}{r.id:<{width}}  {str(r.severity):<7}  {r.summary}"
            + (" (built in)" if r in built_in else "") for r in rules + built_in]
