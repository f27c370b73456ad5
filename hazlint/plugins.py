"""Rule plugins: discovery through the ``hazlint.rules`` entry-point group, typed options.

A rule is a module (or any object) with these attributes:

``ID``        rule id, lowercase words joined by hyphens (``"combinational-loop"``)
``SUMMARY``   one line
``KINDS``     the kinds of finding the rule emits: names from :data:`hazlint.diagnostics.KINDS`,
              or :class:`~hazlint.diagnostics.Kind` values that declare a new kind with its
              default severity and description
``SEVERITY``  default severity name (``"error"``, ``"warning"``, ``"info"``)
``OPTIONS``   tuple of :class:`~hazlint.options.Option`
``check(design, context)``  generator of :class:`~hazlint.diagnostics.Diagnostic`
``prove(diagnostic, evidence)``  optional proof hook: the
              :class:`~hazlint.findings.requests.ProofRequest` that says how a finding of this
              rule is proven, or None when it claims nothing to prove. Findings of a rule
              without the hook are reported as not proven (their evidence says so)
``__doc__``   the documentation ``hazlint explain`` prints (what it finds, why it matters, an
              example, how to fix)

The built-in rules in ``rules/`` (import name ``hazlint_rules``) are registered in
``pyproject.toml`` under ``[project.entry-points."hazlint.rules"]`` exactly like a third-party
package would register its own, so there is one plugin mechanism.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from importlib import metadata
from typing import Any, Callable, Iterable, Mapping

from .diagnostics import BUILTIN_KINDS, KINDS, Kind, Severity
from .errors import ConfigError, HazlintError
from .options import Option

ENTRY_POINT_GROUP = "hazlint.rules"
_ID_RE = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")


@dataclass(frozen=True)
class Rule:
    """A loaded rule."""

    id: str
    summary: str
    doc: str
    severity: Severity
    kinds: tuple[str, ...]
    options: tuple[Option, ...]
    check: Callable
    origin: str = ""            # "module (distribution)"
    prove: Callable | None = None   # the proof hook (see the module docstring)
    new_kinds: tuple[Kind, ...] = ()    # kinds this rule declares beyond diagnostics.KINDS

    def option(self, name: str) -> Option:
        for o in self.options:
            if o.name == name:
                return o
        raise KeyError(name)

    def resolve_options(self, given: Mapping[str, Any] | None, where: str = "") -> dict[str, Any]:
        """Defaults overlaid with the user's table; unknown names and bad types are errors."""
        out = {o.name: o.default for o in self.options}
        known = {o.name for o in self.options}
        for k, v in (given or {}).items():
            if k not in known:
                raise ConfigError(f"{where}rule '{self.id}' has no option '{k}' (options: "
                                  f"{', '.join(sorted(known)) or 'none'})")
            out[k] = self.option(k).coerce(v, f"{where}rule '{self.id}': ")
        return out


def rule_from_object(obj: Any, origin: str = "") -> Rule:
    """Validate a rule module/object and wrap it. Raises HazlintError naming what is missing."""
    missing = [a for a in ("ID", "SUMMARY", "SEVERITY", "check") if not hasattr(obj, a)]
    if missing:
        raise HazlintError(f"rule plugin {origin or obj!r} lacks {', '.join(missing)}")
    rid = obj.ID
    if not isinstance(rid, str) or not _ID_RE.match(rid):
        raise HazlintError(f"rule plugin {origin}: bad rule id {rid!r} (lowercase words "
                           f"joined by hyphens)")
    declared = tuple(getattr(obj, "KINDS", ()))
    new_kinds = tuple(k for k in declared if isinstance(k, Kind))
    kinds = tuple(k.name if isinstance(k, Kind) else k for k in declared)
    bad = [k for k in declared if not isinstance(k, Kind) and k not in KINDS]
    if bad:
        raise HazlintError(f"rule '{rid}' declares unknown kind '{bad[0]}' (a new kind is "
                           f"declared as hazlint.diagnostics.Kind(name, severity, "
                           f"description))")
    for k in new_kinds:
        if not _ID_RE.match(k.name) or k.name in KINDS:
            raise HazlintError(f"rule '{rid}' declares kind '{k.name}': a new kind is "
                               f"lowercase words joined by hyphens, not one of hazlint's own")
    hook = getattr(obj, "prove", None)
    if hook is not None and not callable(hook):
        raise HazlintError(f"rule '{rid}': its proof hook 'prove' is not callable")
    try:
        sev = Severity.parse(obj.SEVERITY) if isinstance(obj.SEVERITY, str) else Severity(obj.SEVERITY)
    except ValueError as exc:
        raise HazlintError(f"rule '{rid}': {exc}") from None
    doc = (getattr(obj, "__doc__", None) or "").strip()
    return Rule(id=rid, summary=str(obj.SUMMARY), doc=doc, severity=sev, kinds=kinds,
                options=tuple(getattr(obj, "OPTIONS", ())), check=obj.check, origin=origin,
                prove=hook, new_kinds=new_kinds)


@lru_cache(maxsize=1)
def _discover() -> tuple[Rule, ...]:
    eps = sorted(metadata.entry_points(group=ENTRY_POINT_GROUP), key=lambda e: e.name)
    rules: dict[str, Rule] = {}
    for ep in eps:
        dist = getattr(ep, "dist", None)
        origin = f"{ep.value} ({dist.name})" if dist is not None else ep.value
        try:
            obj = ep.load()
        except Exception as exc:  # a broken third-party plugin must not hide the others' output
            raise HazlintError(f"cannot load rule plugin '{ep.name}' = {ep.value}: {exc}") from None
        rule = rule_from_object(obj, origin)
        if rule.id != ep.name:
            raise HazlintError(f"rule plugin entry point '{ep.name}' defines rule id "
                               f"'{rule.id}'; they must match")
        if rule.id in rules and rules[rule.id].origin != origin:
            raise HazlintError(f"rule id '{rule.id}' registered twice: {rules[rule.id].origin} "
                               f"and {origin}")
        rules[rule.id] = rule
    owner: dict[str, str] = {}
    for rule in rules.values():
        for k in rule.new_kinds:
            if owner.setdefault(k.name, rule.id) != rule.id:
                raise HazlintError(f"kind '{k.name}' declared by two rules: "
                                   f"'{owner[k.name]}' and '{rule.id}'")
    if not rules:
        raise HazlintError("no rules registered under the 'hazlint.rules' entry-point group; "
                           "install hazlint (pip install -e .) so its rules are registered")
    return tuple(rules[k] for k in sorted(rules))


def all_rules() -> list[Rule]:
    """Every registered rule, sorted by id."""
    return list(_discover())


def rule_for(diagnostic) -> Rule | None:
    """The rule that owns a finding: the registered rule of its id, else the rule that
    declares its kind (a finding made outside a rule's run, e.g. in a test); None for the
    built-in pseudo rules and kinds no rule declares."""
    by_id, by_kind = _owners()
    return by_id.get(diagnostic.rule) or by_kind.get(diagnostic.kind)


@lru_cache(maxsize=1)
def _owners() -> tuple[dict, dict]:
    rules = _discover()
    by_kind: dict[str, Rule] = {}
    for r in rules:
        for k in r.kinds:
            by_kind.setdefault(k, r)
    return {r.id: r for r in rules}, by_kind


def known_kinds() -> dict[str, Kind]:
    """Every kind a finding may have: hazlint's own and those the rules declare."""
    out = {k.name: k for k in BUILTIN_KINDS}
    for r in _discover():
        for k in r.new_kinds:
            out.setdefault(k.name, k)
    return out


def get_rule(rule_id: str) -> Rule:
    for r in _discover():
        if r.id == rule_id:
            return r
    if rule_id in PSEUDO_RULES:
        return pseudo_rule(rule_id)
    raise HazlintError(f"unknown rule '{rule_id}' (known: "
                       f"{', '.join(r.id for r in _discover())})")


def select_rules(select: Iterable[str] | None = None, ignore: Iterable[str] = ()) -> list[Rule]:
    """Rules to run: ``select`` (None: all) minus ``ignore``. Unknown ids are errors."""
    known = {r.id: r for r in _discover()}
    for rid in list(select or ()) + list(ignore):
        if rid not in known and rid not in PSEUDO_RULES:
            raise ConfigError(f"unknown rule '{rid}' (known: "
                              f"{', '.join(sorted(list(known) + list(PSEUDO_RULES)))})")
    chosen = [r for r in known.values() if select is None or r.id in set(select)]
    return [r for r in chosen if r.id not in set(ignore)]


# Rule ids that hazlint itself emits outside the plugins: acceptance bookkeeping and what the
# readers and the elaborator note. They can be selected, ignored, given a severity and
# explained like any rule.
PSEUDO_RULES = {
    "unused-acceptance": "an accept comment or accept-file entry that matched no finding",
    "front-end": "what reading and elaborating the design noted: modules or files left out of "
                 "the analysis, constructs read in a particular way",
}
_PSEUDO_DOCS = {
    "unused-acceptance": (
        "warning", ("unused-acceptance",),
        """An acceptance that no longer matches anything.

What it finds
    An inline ``// hazlint accept(RULE): reason`` comment, or an ``[[accept]]`` table of the
    accept file, that matched no finding of the rules that ran; also an accept comment that
    names no rule or gives no reason (it is then ignored).

Why it matters
    Stale acceptances pile up and end up hiding a new finding on the same line.

How to fix
    Remove the acceptance, or correct its rule id or pattern."""),
    "front-end": (
        "warning", ("design-note", "not-analysed", "file-not-read"),
        """What reading and elaborating the design noted.

What it finds
    A module left out of the analysis because a construct in it cannot be logic (its instances
    become black boxes; kind ``not-analysed``, a warning at the construct's line), a file that
    does not parse and that no chosen top needs (kind ``file-not-read``), and notes of the
    readers about the text (kind ``design-note``, info), such as a port declared but missing
    from the port list.

Why it matters
    A design analysed only in part cannot be clean: these warnings keep a partial run from
    ending in a silent "0 findings", and ``--select`` never drops them.

How to fix
    Rewrite the construct as logic, or lint the module's parent with the module as a black
    box on purpose; fix or remove the file that does not parse."""),
}


def pseudo_rule(rule_id: str) -> Rule:
    """The :class:`Rule` view of a built-in pseudo rule (for ``explain`` and ``rules``)."""
    sev, kinds, doc = _PSEUDO_DOCS[rule_id]
    return Rule(id=rule_id, summary=PSEUDO_RULES[rule_id], doc=doc,
                severity=Severity.parse(sev), kinds=kinds, options=(),
                check=lambda design, context: iter(()), origin="hazlint (built in)")
