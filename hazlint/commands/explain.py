"""``hazlint explain RULE``: a rule's documentation, kinds, default severity and options."""
from __future__ import annotations

import textwrap


def add_arguments(p) -> None:
    p.add_argument("rule", help="rule id (see `hazlint rules`)")


def run(args) -> int:
    from ..plugins import get_rule
    r = get_rule(args.rule)
    out = [f"{r.id}: {r.summary}", "",
           f"default severity: {r.severity}",
           f"kinds: {', '.join(r.kinds)}",
           f"provided by: {r.origin}", ""]
    out.append(textwrap.dedent(r.doc).strip() if r.doc else "(no documentation)")
    if r.options:
        out += ["", "Options (configuration table [rules.%s]):" % r.id]
        for o in r.options:
            choice = f"; one of {', '.join(map(str, o.choices))}" if o.choices else ""
            out.append(f"  {o.name} ({o.type_name}, default {o.default!r}{choice})")
            out.append(textwrap.indent(textwrap.fill(o.help, 88), "      "))
    print("\n".join(out))
    return 0
