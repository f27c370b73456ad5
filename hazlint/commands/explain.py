"""``hazlint explain RULE``: a rule's documentation, kinds, default severity and options, as
plain text (the docstring's markup removed; each option once, its default written as in the
configuration file, an old spelling named beside the option it stands for). Without a rule:
the rules there are and how to read one."""
from __future__ import annotations

import re
import textwrap


def add_arguments(p) -> None:
    p.add_argument("rule", nargs="?", help="rule id (see `hazlint rules`; without one: the "
                                           "list of rules)")


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


def overview() -> list[str]:
    """What ``hazlint explain`` prints without a rule: every rule with its default severity
    and summary, then how to read one rule's documentation."""
    from .rules_cmd import listing
    out = ["Rules (hazlint explain RULE prints one rule's documentation, kinds and options):", ""]
    out += listing("  ")
    out += [""] + textwrap.wrap(
        "Options of a rule go in the configuration table [rules.RULE] of hazlint.toml (or "
        "[tool.hazlint.rules.RULE] of pyproject.toml); the keys severity, select and ignore "
        "and the options --select and --ignore take the same ids.", 96)
    return out


def run(args) -> int:
    from ..findings.names import rule_id
    from ..plugins import PSEUDO_RULES, get_rule
    if not args.rule:
        print("\n".join(overview()))
        return 0
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
        old = {o.old_name_of: o.name for o in r.options if o.old_name_of}
        for o in r.options:
            if o.old_name_of:
                continue            # listed with the option it stands for
            choice = f"; one of {', '.join(map(toml_value, o.choices))}" if o.choices else ""
            was = f"; old name {old[o.name]}" if o.name in old else ""
            out.append(f"  {o.name} = {toml_value(o.default)}  ({o.type_name}{choice}{was})")
            out.append(textwrap.indent(textwrap.fill(o.help, 88), "      "))
    elif r.id in PSEUDO_RULES:
        out += ["", "No options; select, ignore, accept and set its severity like any rule."]
    print("\n".join(out))
    return 0
