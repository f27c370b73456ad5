"""The change model: which sources of a glitch-sensitive sink's fan-in cone can change together.

A glitch needs transitions, so every verdict at a sink is a proof over the transitions this model
allows, and says which:

* a primary input changes on its own, at any time, so any two (or more) inputs can change at
  about the same moment; a black-box output likewise;
* register and latch outputs change at their clock's edge (a latch while its enable is open):
  those of one clock net and edge change *together* at every edge, and registers of different
  clocks, and inputs, can change at that moment too. Under the arbitrary gate and wire delays the
  proofs assume, the order in which the sources change does not bound what arrives at a gate, so
  every set of changing sources is a transition to check;
* a source declared **quasi-static** never changes while the circuit works (configuration
  ``static_inputs``, attribute ``(* hazlint_static *)`` (old spelling ``hazlint_sync``) on an input port
  or a register): it holds some value, which the proofs leave free. A net whose fan-in cone
  holds only quasi-static sources and constants is *quiet*: no finding starts there;
* a declared **one-at-a-time** group (a gray-coded pointer, a unit-distance counter) changes at
  most one member per transition (configuration ``one_at_a_time = { NAME = [signals] }``, or
  ``(* hazlint_one_at_a_time *)`` on the declaration; the attribute's value, when given, names
  the group so several declarations can share it);
* a declared **one-hot** group (a one-hot state register) holds at most one member at 1 before
  and after every transition (``one_hot = { NAME = [signals] }``, ``(* hazlint_one_hot *)``);
  its members still change together (the hot bit moves).

Signals in these declarations are input port bits or register/latch outputs, by name (hierarchy
with dots below the top, ``name[3]`` for a bit, ``name`` for every bit, shell globs allowed). A
name that matches none, an attribute on a net driven by logic and an unknown ``hazlint_*``
attribute are input errors naming the configuration line or the source line.
"""
from __future__ import annotations

import fnmatch
import re
from dataclasses import dataclass, field
from typing import Any, Iterable, Mapping, Sequence

from ..errors import ConfigError, ElaborationError
from ..findings.names import ATTRIBUTE_RENAMES, deprecated
from ..netlist.graph import SOURCE_KINDS
from ..paths import relpath

QUIET_ATTRS = ("hazlint_static", "hazlint_sync")     # hazlint_sync: the old spelling
ASYNC_ATTR = "hazlint_async"
GROUP_ATTRS = {"hazlint_one_at_a_time": "one-at-a-time", "hazlint_one_hot": "one-hot"}
GROUP_KEYS = {"one_at_a_time": "one-at-a-time", "one_hot": "one-hot"}
KNOWN_ATTRS = frozenset(QUIET_ATTRS) | {ASYNC_ATTR} | set(GROUP_ATTRS)


def _base(name: str) -> str:
    return re.sub(r"\[\d+\]$", "", name)


def matches(name: str, patterns: Iterable[str]) -> bool:
    """``name`` (a port bit or register name) matches one of the globs, or its vector does."""
    return any(fnmatch.fnmatchcase(name, p) or fnmatch.fnmatchcase(_base(name), p)
               for p in patterns)


def truthy_attr(attrs: Mapping[str, Any] | None, name: str) -> bool:
    if not attrs or name not in attrs:
        return False
    return attrs[name] not in (0, "0", False, "false")


@dataclass(frozen=True)
class Group:
    """A declared group of sources: ``kind`` "one-at-a-time" or "one-hot"."""

    name: str
    kind: str
    members: tuple[str, ...]          # source node ids
    where: str = ""                   # "file:line" of the declaration


@dataclass
class ChangeModel:
    """The change model of a design (see the module docstring)."""

    quiet: frozenset[str] = frozenset()
    groups: tuple[Group, ...] = ()
    labels: dict[str, str] = field(default_factory=dict)   # source node -> how it changes

    def for_sources(self, sources: Iterable[str]) -> "SinkModel":
        """The model restricted to the free sources of one cone (in the given order)."""
        srcs = list(sources)
        changing = tuple(n for n in srcs if n not in self.quiet)
        quiet = tuple(n for n in srcs if n in self.quiet)
        index = {n: i for i, n in enumerate(changing)}
        groups = []
        for gr in self.groups:
            ids = tuple(index[m] for m in gr.members if m in index)
            if gr.kind == "one-at-a-time" and len(ids) >= 2:
                groups.append((gr, ids))
            elif gr.kind == "one-hot" and len(ids) >= 2:
                groups.append((gr, ids))
        return SinkModel(changing, quiet, tuple(groups), self.labels)


@dataclass
class SinkModel:
    """The change model over one cone: ``sources`` may change (indices used by ``groups``),
    ``quiet`` never do."""

    sources: tuple[str, ...]
    quiet: tuple[str, ...]
    groups: tuple[tuple[Group, tuple[int, ...]], ...] = ()
    labels: Mapping[str, str] = field(default_factory=dict)

    @property
    def max_changes(self) -> int:
        """The largest number of sources one allowed transition changes."""
        n = len(self.sources)
        for gr, ids in self.groups:
            if gr.kind == "one-at-a-time":
                n -= len(ids) - 1
            elif gr.kind == "one-hot":
                n -= max(0, len(ids) - 2)
        return max(0, n)

    def allows(self, before: Mapping[str, int], after: Mapping[str, int]) -> bool:
        """Is the transition ``before -> after`` (source values) one the model allows?"""
        for n in self.quiet:
            if before.get(n, 0) != after.get(n, before.get(n, 0)):
                return False
        for gr, ids in self.groups:
            names = [self.sources[i] for i in ids]
            if gr.kind == "one-at-a-time":
                if sum(before.get(n, 0) != after.get(n, 0) for n in names) > 1:
                    return False
            elif sum(before.get(n, 0) for n in names) > 1 or \
                    sum(after.get(n, 0) for n in names) > 1:
                return False
        return True

    def constraint_text(self, label) -> list[str]:
        out = []
        for gr, ids in self.groups:
            names = ", ".join(label(self.sources[i]) for i in ids)
            if gr.kind == "one-at-a-time":
                out.append(f"at most one of {names} changes at a time (group {gr.name}"
                           f"{', ' + gr.where if gr.where else ''})")
            else:
                out.append(f"at most one of {names} is 1 (one-hot group {gr.name}"
                           f"{', ' + gr.where if gr.where else ''})")
        if self.quiet:
            out.append("held (static inputs): " + ", ".join(sorted(label(n) for n in self.quiet)))
        return out

    def proven_text(self, label, bound: int | None = None) -> str:
        """What a proof over this model covers, in words: "single changes of all 3 sources and
        changes of every pair" (``bound``: the largest change set examined; None: all)."""
        n = len(self.sources)
        top = self.max_changes if bound is None else min(bound, self.max_changes)
        if n == 0:
            return "no source of the cone can change (all static inputs or constants)"
        if n == 1:
            text = f"changes of its only source {label(self.sources[0])}"
        elif n == 2:
            text = "single changes of both sources" + (
                " and changes of both together" if top >= 2 else "")
        else:
            text = f"single changes of all {n} sources"
            if top == 2:
                text += " and changes of every pair"
            elif top == n:
                text += (", changes of every pair and of all 3 together" if n == 3 else
                         ", changes of every pair and of every larger set")
            elif top > 2:
                text += f", changes of every pair and of every set of up to {top}"
        if self.groups:
            text += " the model allows"
        if bound is not None and bound < self.max_changes:
            text += (f"; transitions of more than {bound} sources were not examined (option "
                     "max_changes)")
        return text

    def sources_text(self, label) -> str:
        """The sources grouped by how they change: "inputs a, b (any time); registers q0, q1
        (at the edges of posedge clk)"."""
        by: dict[str, list[str]] = {}
        for n in self.sources:
            by.setdefault(self.labels.get(n, "any time"), []).append(label(n))
        return "; ".join(f"{', '.join(sorted(v))} ({k})" for k, v in sorted(by.items()))


# ---------------------------------------------------------------------------------------------
# Building the model from a design and its configuration


def source_labels(design) -> dict[str, str]:
    """How each source changes, for the evidence: "any time" for inputs, "edges of posedge
    clk" for registers (the clock's net), "while en is 1" for latches."""
    g = design.graph
    out: dict[str, str] = {}

    def net(sink: str) -> str:
        d = g.nodes[sink]
        drv = (d.get("inputs") or [None])[0]
        if drv is None or drv not in g:
            return "?"
        dd = g.nodes[drv]
        return dd.get("port") or dd.get("name") or drv
    for r in getattr(design, "registers", []) or []:
        if r.kind == "ff" and "clock" in r.pins:
            lab = f"registers, at the edges of {r.clock_edge or 'posedge'} {net(r.pins['clock'])}"
        elif r.kind == "latch" and "enable" in r.pins:
            lab = (f"latches, while {net(r.pins['enable'])} is "
                   f"{r.active.get('enable', 1)}")
        else:
            lab = "registers"
        for n in r.outputs.values():
            out[n] = lab
    for n, d in g.nodes(data=True):
        if d["kind"] == "input":
            out.setdefault(n, "inputs, any time")
        elif d["kind"] == "blackbox":
            out.setdefault(n, "black-box outputs, any time")
        elif d["kind"] == "state":
            out.setdefault(n, "registers")
    return out


def declared_quiet_inputs(design, patterns: Sequence[str]) -> frozenset[str]:
    """Input nodes declared quasi-static by attribute or by the ``static_inputs`` globs."""
    g = design.graph
    out = set()
    for port, n in design.input_node.items():
        attrs = dict(design.port_attrs.get(port, {}) or {})
        attrs.update(g.nodes[n].get("attrs") or {})
        if any(truthy_attr(attrs, a) for a in QUIET_ATTRS) or matches(port, patterns):
            out.add(n)
    return frozenset(out)


def _named_sources(design) -> dict[str, str]:
    """Name -> source node for every input port bit and register/latch output."""
    names: dict[str, str] = {}
    for port, n in design.input_node.items():
        names[port] = n
    for r in getattr(design, "registers", []) or []:
        for which, n in r.outputs.items():
            names.setdefault(r.name if which == "Q" else f"{r.name}.{which}", n)
            names.setdefault(n, n)
    return names


def _resolve(patterns: Sequence[str], names: Mapping[str, str], err) -> list[str]:
    nodes: list[str] = []
    for p in patterns:
        if not isinstance(p, str):
            raise err(f"'{p!r}' is not a signal name")
        hit = [n for name, n in names.items() if matches(name, [p])]
        if not hit:
            raise err(f"'{p}' names no input port or register output of the design")
        nodes += [n for n in hit if n not in nodes]
    return nodes


def build_change_model(design, config=None) -> ChangeModel:
    """The design's change model from its attributes and the configuration; raises
    :class:`~hazlint.errors.ConfigError` / :class:`~hazlint.errors.ElaborationError` (exit 2)
    for names that match nothing and for misplaced or unknown ``hazlint_*`` attributes."""
    g = design.graph
    names = _named_sources(design)
    sync = list(getattr(config, "static_inputs", []) or [])
    cfg_path = getattr(config, "path", None)
    root = getattr(config, "root", None)

    def shown(path: str) -> str:
        """A declaration's path as reports print it (:func:`hazlint.paths.relpath`)."""
        return relpath(path, root) if path else ""
    lines = getattr(config, "key_lines", {}) or {}

    def cfg_err(key):
        def make(msg):
            return ConfigError(f"{key}: {msg}", path=cfg_path, line=lines.get(key), construct=key)
        return make
    for p in sync:
        if not any(matches(port, [p]) for port in design.input_node):
            raise cfg_err("static_inputs")(f"'{p}' names no input port of the design")
    quiet = set(declared_quiet_inputs(design, sync))
    groups: list[Group] = []
    by_attr: dict[tuple[str, str], list[str]] = {}
    attr_where: dict[tuple[str, str], str] = {}
    seen_decl = set()
    for decl in getattr(design, "attr_decls", []) or []:
        key = (decl["name"], decl["path"], decl["line"])
        if key in seen_decl:
            continue
        seen_decl.add(key)
        where = f"{shown(decl['path'])}:{decl['line']}" if decl.get("path") else ""

        def src_err(msg, decl=decl):
            return ElaborationError(msg, path=decl.get("path") or None,
                                    line=decl.get("line") or None, construct=decl["name"])
        for a, v in decl["attrs"].items():
            if not str(a).startswith("hazlint_"):
                continue
            if a not in KNOWN_ATTRS:
                raise src_err(f"unknown attribute '{a}' on '{decl['name']}' (known: "
                              + ", ".join(sorted(KNOWN_ATTRS)) + ")")
            if a == ASYNC_ATTR or not truthy_attr(decl["attrs"], a):
                continue
            nodes = [n for n in decl["nodes"] if n is not None]
            if nodes and all(n not in g for n in nodes):
                # the net's logic was left out of the analysis (a warning names what was
                # left out): the declaration has nothing to act on
                continue
            nodes = [n for n in nodes if n in g]
            bad = [n for n in nodes if g.nodes[n]["kind"] not in SOURCE_KINDS]
            if bad or not nodes:
                raise src_err(f"attribute '{a}' on '{decl['name']}': the net is driven by "
                              "logic; declare it on the input ports or registers that drive it")
            if a in QUIET_ATTRS:
                if a in ATTRIBUTE_RENAMES:
                    deprecated(a, ATTRIBUTE_RENAMES[a], where)
                quiet.update(nodes)
                continue
            gname = v if isinstance(v, str) and v not in ("1",) else decl["name"]
            gk = (GROUP_ATTRS[a], str(gname))
            by_attr.setdefault(gk, [])
            by_attr[gk] += [n for n in nodes if n not in by_attr[gk]]
            attr_where.setdefault(gk, where)
    for (kind, gname), members in sorted(by_attr.items()):
        groups.append(Group(gname, kind, tuple(members), attr_where.get((kind, gname), "")))
    for key, kind in GROUP_KEYS.items():
        table = getattr(config, key, None) or {}
        for gname, pats in sorted(table.items()):
            err = cfg_err(key)
            pats = [pats] if isinstance(pats, str) else list(pats)
            members = _resolve(pats, names, err)
            where = f"{shown(cfg_path)}:{lines.get(key)}" if cfg_path and lines.get(key) else ""
            groups.append(Group(str(gname), kind, tuple(members), where))
    return ChangeModel(quiet=frozenset(quiet), groups=tuple(groups),
                       labels=source_labels(design))


def quiet_nets(graph, quiet_sources: Iterable[str], order: Sequence[str] | None = None
               ) -> frozenset[str]:
    """Nets whose fan-in cone holds only quiet sources and constants (least fixpoint: nets on a
    combinational loop are never quiet, a loop can change by itself)."""
    quiet = set(quiet_sources)
    nodes = graph.nodes
    quiet |= {n for n, d in graph.nodes(data=True) if d["kind"] == "const"}
    work = [s for n in quiet for s in graph.successors(n)]
    while work:
        n = work.pop()
        if n in quiet:
            continue
        d = nodes[n]
        if d["kind"] not in ("gate", "sink"):
            continue
        ins = d.get("inputs") or list(graph.predecessors(n))
        if ins and all(i in quiet for i in ins):
            quiet.add(n)
            work.extend(graph.successors(n))
    return frozenset(quiet)
