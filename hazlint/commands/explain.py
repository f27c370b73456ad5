"""``hazlint explain RULE``: a rule's documentation, kinds, default severity and options, as
plain text (the docstring's markup removed; each option once, its default written as in the
configuration file)."""
from __future__ import annotations

import re
import textwrap


def add_arguments(p) -> None:
    p.add_argument("rule", help="rule id (see `hazlint rules`)")


def toml_value(v) -> str:
    """``v`` as it is written in hazlint.toml: true, 1e9, "async", ["a", "b"]."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float):
        if v.is_integer() and abs(v) >= 1e6:
            return f"{v:.0e}".replace("e+0", "e").replace("e+", "e")
        return repr(v)
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    return str(v)


def plain_doc(doc: str) -> str:
    """The documentation without its own ``Options`` section (the generated list follows) and
    without markup: ````x```` is x, ``**x**`` is x, a paragraph ending in ``::`` ends in ``:``."""
    text = textwrap.dedent(doc).strip()
    text = re.sub(r"\n\s*Options\n(?:[ \t]+.*\n?|\s*\n)*", "\n", text + "\n").rstrip()
    text = re.sub(r"``([^`]+)``", r"\1", text)
    text = re.sub(r"\*\*([^*]+)\*\*", r"\1", text)
    text = re.sub(r"\n(\s*)::\n", "\n", text)
    text = re.sub(r"::\n", ":\n", text)
    return text


def run(args) -> int:
    from ..findings.names import rule_id
    from ..plugins import PSEUDO_RULES, get_rule
    r = get_rule(rule_id(args.rule, "explain"))
    out = [f"{r.id}: {r.summary}", "",
           f"default severity: {r.severity}",
           f"kinds: {', '.join(r.kinds)}"]
    out += [f"  {k.name} ({k.severity}): {k.description}" for k in r.new_kinds]
    if r.prove is None and r.id not in PSEUDO_RULES:
        out.append("proof: none (the rule declares no proof hook; its findings are reported "
                   "as not proven)")
    out += [f"provided by: {r.origin}", ""]
    out.append(plain_doc(r.doc) if r.doc else "(no documentation)")
    if r.options:
        out += ["", f"Options (configuration table [rules.{r.id}]):"]
        for o in r.options:
            choice = f"; one of {', '.join(map(toml_value, o.choices))}" if o.choices else ""
            out.append(f"  {o.name} = {toml_value(o.default)}  ({o.type_name}{choice})")
            out.append(textwrap.indent(textwrap.fill(o.help, 88), "      "))
    elif r.id in PSEUDO_RULES:
        out += ["", "No options; select, ignore, accept and set its severity like any rule."]
    print("\n".join(out))
    return 0
