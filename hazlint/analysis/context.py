"""Analyses shared by all rules of one run, each computed once on first use.

A rule receives an :class:`AnalysisContext` next to the design. It offers the glitch-sensitive
sinks, quiet (synchronous or quasi-static) inputs, fanout stems, fan-in cones, reachability to
sinks, the integer-indexed timing graph and the per-stem arrival solver, the rule's resolved
options, and helpers that turn nodes into evidence hops.
"""
from __future__ import annotations

from functools import cached_property
from typing import Any, Mapping

import networkx as nx

from ..diagnostics import Hop, Location
from ..findings.words import TimeUnit, gate_words
from ..netlist.graph import ASYNC_ROLES, SOURCE_KINDS
from ..netlist.walks import fanin, fanout_stems
from .changes import (ASYNC_ATTR, ChangeModel, build_change_model, declared_quiet_inputs,
                      matches as _matches, quiet_nets, truthy_attr as _truthy_attr)
from .timing import ArrivalSolver, TimingGraph


class AnalysisContext:
    def __init__(self, design, config=None, options: Mapping[str, Mapping[str, Any]] | None = None):
        self.design = design
        self.config = config
        self._options = {k: dict(v) for k, v in (options or {}).items()}
        self._hop_cache: dict[str, tuple] = {}
        self._hops: dict[tuple, Hop] = {}
        self._shown: dict[str, str] = {}     # display_path per path (a few files, many calls)
        self._reach_cache: dict[str, tuple] = {}

    # ---- options -------------------------------------------------------------------------------
    def options(self, rule_id: str) -> dict[str, Any]:
        """The rule's options as resolved for this run (defaults when not given)."""
        if rule_id not in self._options:
            from ..plugins import get_rule
            self._options[rule_id] = get_rule(rule_id).resolve_options({})
        return self._options[rule_id]

    # ---- graph facts ---------------------------------------------------------------------------
    @property
    def graph(self) -> nx.DiGraph:
        return self.design.graph

    @cached_property
    def source_rank(self) -> dict[str, int]:
        """Rank of every node in source order (path, line, column, id): deterministic ties."""
        nodes = self.graph.nodes
        keyed = sorted(self.graph.nodes, key=lambda n: (
            nodes[n].get("path", "") or "", nodes[n].get("line", 0) or 0,
            nodes[n].get("column", 0) or 0, n))
        return {n: i for i, n in enumerate(keyed)}

    @cached_property
    def quiet_inputs(self) -> frozenset[str]:
        """Input nodes declared synchronous or quasi-static (attribute or ``static_inputs``):
        they are not treated as sources of glitches."""
        return declared_quiet_inputs(self.design,
                                     list(getattr(self.config, "static_inputs", []) or []))

    @cached_property
    def change_model(self) -> ChangeModel:
        """Which sources change together (:mod:`hazlint.analysis.changes`); building it checks
        the declarations (bad names are input errors)."""
        return build_change_model(self.design, self.config)

    @cached_property
    def quiet_sources(self) -> frozenset[str]:
        """Sources that never change: quasi-static inputs and registers."""
        return self.quiet_inputs | self.change_model.quiet

    @cached_property
    def quiet_nets(self) -> frozenset[str]:
        """Nets whose cone holds only quiet sources and constants: no finding starts there."""
        return quiet_nets(self.graph, self.quiet_sources)

    @cached_property
    def async_outputs(self) -> frozenset[str]:
        """Output sink nodes whose port is declared asynchronous."""
        pats = list(getattr(self.config, "async_outputs", []) or [])
        g = self.graph
        out = set()
        for port, n in self.design.output_node.items():
            attrs = dict(self.design.port_attrs.get(port, {}) or {})
            attrs.update(g.nodes[n].get("attrs") or {})
            if _truthy_attr(attrs, ASYNC_ATTR) or _matches(port, pats):
                out.add(n)
        return frozenset(out)

    @cached_property
    def sensitive_sinks(self) -> dict[str, str]:
        """Glitch-sensitive sink node -> its role (``"output"`` for asynchronous outputs)."""
        out = {}
        for n, d in self.graph.nodes(data=True):
            if d["kind"] != "sink":
                continue
            if d.get("role") in ASYNC_ROLES or n in self.async_outputs:
                out[n] = d.get("role", "")
        return dict(sorted(out.items()))

    @cached_property
    def output_sinks(self) -> frozenset[str]:
        return frozenset(n for n, d in self.graph.nodes(data=True)
                         if d["kind"] == "sink" and d.get("role") == "output")

    def scope_sinks(self, scope: str) -> list[str]:
        """Sinks that a finding must reach to be in scope: ``async`` (glitch-sensitive sinks),
        ``outputs`` (those and every primary output) or ``all`` (every sink and dangling gate)."""
        if scope == "async":
            s = set(self.sensitive_sinks)
        elif scope == "outputs":
            s = set(self.sensitive_sinks) | set(self.output_sinks)
        elif scope == "all":
            g = self.graph
            s = {n for n, d in g.nodes(data=True)
                 if d["kind"] == "sink" or (d["kind"] == "gate" and g.out_degree(n) == 0)}
        else:
            raise ValueError(f"unknown scope {scope!r}")
        return sorted(s)

    def scope_reach(self, scope: str) -> tuple[list[str], list[int]]:
        """(sinks in scope sorted in source order, per timing-graph node the set of those sinks
        it reaches as a bit mask). One pass in reverse topological order, computed once per
        scope."""
        cached = self._reach_cache.get(scope)
        if cached is None:
            tg = self.timing_graph
            rank = self.source_rank
            sinks = sorted((n for n in self.scope_sinks(scope) if n in tg.index),
                           key=lambda n: rank[n])
            reach = tg.reach_bits(sinks)
            cached = self._reach_cache[scope] = (sinks, reach)
        return cached

    @cached_property
    def stems(self) -> list[str]:
        """Fanout stems (a net read by two or more pins), quiet nets (constants and logic fed
        only by quasi-static inputs) excluded."""
        return fanout_stems(self.graph, skip=self.quiet_nets)

    def fanin_cone(self, node: str) -> tuple[set[str], set[str]]:
        """(gates, sources) of the transitive fan-in of ``node``, stopping at sources."""
        nodes = self.graph.nodes
        cone = fanin(self.graph, [node], include_roots=False,
                     stop=lambda u: nodes[u]["kind"] in SOURCE_KINDS)
        gates = {u for u in cone if nodes[u]["kind"] == "gate"}
        sources = {u for u in cone if nodes[u]["kind"] in SOURCE_KINDS}
        return gates, sources

    # ---- timing --------------------------------------------------------------------------------
    @cached_property
    def timing_graph(self) -> TimingGraph:
        # the design's topological order when it was already computed (the same order)
        known = vars(self.design).get("topo_order") if hasattr(self.design, "__dict__") else None
        return TimingGraph.build(self.graph, known)

    @cached_property
    def arrival_solver(self) -> ArrivalSolver:
        return ArrivalSolver(self.timing_graph)

    # graphs at least this large use the numpy batch solver when numpy is installed
    BATCH_MIN_NODES = 256
    # a scalar sweep past max(MIN, nodes // DIVISOR) visited nodes hands its stem to the batch
    SCALAR_BUDGET_MIN = 32
    SCALAR_BUDGET_DIVISOR = 400

    def stem_reconvergences(self, stems: list[int], min_skew: float = 0.0):
        """``(stem index, StemTiming, [Reconvergence])`` for every stem (timing-graph indices),
        reconvergences with a positive skew of at least ``min_skew`` only.

        Each stem first gets the scalar sweep, which stops early where the stem's branches can
        no longer meet; on graphs of ``BATCH_MIN_NODES`` or more (with numpy installed) a sweep
        that runs past a budget is abandoned and the stem goes to the numpy batch solver, which
        costs the same per stem whatever its cone. Both give the same results (tested)."""
        tg = self.timing_graph
        batch = None
        if len(tg.order) >= self.BATCH_MIN_NODES:
            try:
                import numpy  # noqa: F401
                batch = self.batch_solver
            except ImportError:
                batch = None
        budget = (max(self.SCALAR_BUDGET_MIN, len(tg.order) // self.SCALAR_BUDGET_DIVISOR)
                  if batch is not None else None)
        solver = self.arrival_solver
        deferred = []
        for s in stems:
            found = []

            def note(r, found=found):
                if r.skew > 0 and r.skew >= min_skew:
                    found.append(r)
            st = solver.solve(s, on_reconvergence=note, budget=budget)
            if st is None:
                deferred.append(s)
                continue
            yield s, st, found
        if deferred:
            yield from batch.solve_all(deferred, min_skew)

    @cached_property
    def batch_solver(self):
        from .timing import BatchArrivalSolver
        return BatchArrivalSolver(self.timing_graph)

    # ---- evidence helpers ----------------------------------------------------------------------
    def location(self, n: str) -> Location:
        d = self.graph.nodes[n]
        return Location(d.get("path", "") or "", d.get("line", 0) or 0, d.get("column", 1) or 1)

    def net_name(self, n: str) -> str:
        d = self.graph.nodes[n]
        return d.get("port") or d.get("name") or n

    def hop(self, n: str, delay: float | None = None, arrival: float | None = None) -> Hop:
        """The evidence hop of node ``n`` (shared: hops are frozen values, and the same node at
        the same arrival recurs across the findings of many stems)."""
        key = (n, delay, arrival)
        h = self._hops.get(key)
        if h is None:
            net, gate, cell, loc, inst = self._hop_base(n)
            h = self._hops[key] = Hop.fast(net, gate, cell, loc, inst, delay, arrival)
        return h

    def _hop_base(self, n: str):
        base = self._hop_cache.get(n)
        if base is None:
            d = self.graph.nodes[n]
            inst = d.get("instance", "") or ""
            kind = d["kind"]
            gate = inst.rsplit(".", 1)[-1] if kind in ("gate", "blackbox") else ""
            cell = (d.get("cell") or d.get("op") or "") if kind in ("gate", "blackbox") else ""
            if kind == "state":
                gate = (d.get("register") or "").rsplit(".", 1)[-1]
                cell = d.get("cell") or "register"
            loc = self.location(n) if d.get("path") else None
            base = (self.net_name(n), gate, cell, loc, inst)
            self._hop_cache[n] = base
        return base

    def display_path(self, path: str) -> str:
        """A path as reports print it: relative to the project root when there is one."""
        shown = self._shown.get(path)
        if shown is None:
            root = getattr(self.config, "root", None)
            if not root or not path:
                return path
            from ..paths import relpath
            shown = self._shown[path] = relpath(path, root)
        return shown

    def where(self, n: str) -> str:
        """``path:line`` of a node for evidence text (relative to the project root)."""
        loc = self.location(n)
        return f"{self.display_path(loc.path)}:{loc.line}" if loc.path else ""

    def hop_text(self, h: Hop) -> str:
        """Like :meth:`Hop.describe`, with the path relative to the project root."""
        where = (f" ({self.display_path(h.location.path)}:{h.location.line})"
                 if h.location else "")
        via = f" via {gate_words(h.cell, h.gate)}" if h.gate else ""
        t = "" if h.arrival is None else f" @{TimeUnit.of(self.graph).number(h.arrival)}"
        return f"{h.net}{t}{via}{where}"

    def describe(self, n: str) -> str:
        """Short human name of a node: the net, its port, or the sink pin."""
        d = self.graph.nodes[n]
        if d["kind"] == "sink":
            return d.get("name") or d.get("port") or n
        return self.net_name(n)
