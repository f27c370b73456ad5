"""The last step of elaboration: driver and sink records -> the gate graph of a
:class:`~hazlint.netlist.design.Design` (see :mod:`hazlint.netlist.graph` for the schema). A mixin of
:class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

import networkx as nx

from .. import budget as _budget
from ..netlist.design import Design
from ..diagnostics import Severity
from ..findings.words import TimeUnit
from ..netlist.library import ZERO_DELAY
from . import initial_values
from .common import C0, C1
from .common import where as _where


class GraphEmitter:
    """Records -> networkx graph."""

    # ---------------------------------------------------------------- graph --------------------
    def build_graph(self, tops, inputs, outputs) -> Design:
        find = self.find
        unit = TimeUnit(*self.settle_time_unit())     # converts delay lists: before the nodes
        g = nx.DiGraph()
        # choose one name per merged net
        members: dict[str, list[str]] = {}
        for name in list(self.parent):
            members.setdefault(find(name), []).append(name)
        self._members = members
        port_set = set(inputs) | set(outputs)
        inits = initial_values.by_net(self.init_values, find)
        driven = {find(d["out"]) for d in self.drivers}
        for root, (bit, v, loc, inst) in inits.items():
            if root not in driven:      # a variable nothing assigns keeps its initial value
                self._add_driver("const", bit, op=f"const{v}", instance=inst, loc=loc)

        def rank(n: str):
            return (0 if n in port_set else 1, "$" in n, n.count("."), len(n), n)
        rep = self._rep = {r: ms[0] if len(ms) == 1 else min(ms, key=rank)
                           for r, ms in members.items()}
        # drivers per merged net
        drv_of: dict[str, list[dict]] = {}
        for d in self.drivers:
            drv_of.setdefault(find(d["out"]), []).append(d)

        def node_of(sig: str) -> str:
            if sig in (C0, C1):
                if sig not in g:
                    g.add_node(sig, kind="const", name=sig, op="const1" if sig == C1 else
                               "const0", inputs=[], pins=[], delays=[], cell="constant",
                               instance="", path="", line=0, column=1)
                return sig
            return rep[find(sig)]

        for k, (r, ds) in enumerate(drv_of.items()):
            if not k & 8191:
                _budget.check_loading("building the gate graph", *_where(ds[0]["loc"])[:2])
            nid = rep[r]
            strong = [d for d in ds if not d.get("weak")]
            ds_use = strong or ds
            if len(ds_use) > 1:
                tri = [d for d in ds_use if d.get("tri")]
                if len(tri) == len(ds_use):
                    # a three-state bus: the enabled driver wins; resolve with an OR of drivers
                    outs = []
                    for k, d in enumerate(tri):
                        dn = f"{nid}$drv{k}"
                        self._emit(g, dn, d, node_of)
                        outs.append(dn)
                    first = tri[0]
                    g.add_node(nid, kind="gate", name=nid, op="or", inputs=outs,
                               pins=[f"drv{k}" for k in range(len(outs))],
                               delays=[ZERO_DELAY] * len(outs), cell="tribus",
                               instance=first["instance"], **_locattrs(first["loc"]))
                    continue
                kinds = sorted({d["kind"] for d in ds_use})
                locs = ", ".join(f"{d['loc'].path}:{d['loc'].line}" for d in ds_use[:3]
                                 if d["loc"])
                self.note(f"net '{nid}' has {len(ds_use)} drivers ({', '.join(kinds)}; {locs}); "
                          f"the first is used", ds_use[1]["loc"], ds_use[1]["instance"],
                          severity=Severity.WARNING)
            self._emit(g, nid, ds_use[0], node_of)
        # sinks
        for s in self.sinks:
            src = node_of(s["input"])
            attrs = {k: v for k, v in s.items() if k not in ("id", "input", "loc")}
            g.add_node(s["id"], kind="sink", inputs=[src], pins=["in"],
                       delays=[ZERO_DELAY], **_locattrs(s["loc"]), **attrs)
        # edges (and undriven-net sources), gathered first and added in one call: the same
        # edges in the same order, without networkx's per-edge checks
        edges: dict[tuple[str, str], list[int]] = {}
        nodes = g.nodes
        for n in list(nodes):
            for i, src in enumerate(nodes[n]["inputs"]):
                if src not in g:
                    self._undriven(g, src)
                pins = edges.get((src, n))
                if pins is None:
                    edges[(src, n)] = [i]
                else:
                    pins.append(i)
        g.add_edges_from((u, v, {"pins": pins}) for (u, v), pins in edges.items())
        unit.record(g)
        design = Design(
            graph=g, top=tops[0] if len(tops) == 1 else ",".join(tops),
            inputs=inputs, outputs=outputs, registers=self.registers,
            blackboxes=self.blackboxes, notes=self.notes,
            files=[sf.path for sf in self.sources],
            includes=list(dict.fromkeys(p for sf in self.sources
                                        for p in getattr(sf, "includes", ()) or ())),
            timescale=(self.time_unit, self.precision) if self.time_unit else None,
            input_node={b: node_of(b) for b in inputs},
            output_node={s["port"]: s["id"] for s in self.sinks if s["role"] == "output"},
            latch_paths=self.latch_paths,
            port_attrs={b: a for b, a in self.port_attrs.items() if b in port_set},
            attr_decls=[{"name": name, "nodes": [rep.get(find(b)) for b in bits], "attrs": attrs,
                         "path": loc.path if loc else "", "line": loc.line if loc else 0}
                        for name, bits, attrs, loc in self.attr_decls],
        )
        # registers refer to sink ids (stable) and state node ids (merged-net names)
        for r in self.registers:
            r.outputs = {k: node_of(v) for k, v in r.outputs.items()}
        initial_values.apply_to_graph(g, inits, rep, self.registers)
        design.latch_paths = [(d_, e_, node_of(q)) for d_, e_, q in self.latch_paths]
        return design

    def _emit(self, g, nid, d, node_of) -> None:
        attrs = dict(kind=d["kind"], name=nid, op=d["op"],
                     inputs=[node_of(s) for s in d["inputs"]], pins=list(d["pins"]),
                     delays=list(d["delays"]), cell=d["cell"], instance=d["instance"],
                     **_locattrs(d["loc"]))
        if d.get("expr") is not None:
            attrs["expr"] = d["expr"]
        if d.get("attrs"):
            attrs["attrs"] = d["attrs"]
        for k in ("register", "state", "port", "reason", "out_pin", "tri", "memory"):
            if k in d:
                attrs[k] = d[k]
        if d["kind"] == "const":
            attrs["op"] = d["op"]
        g.add_node(nid, **attrs)

    def _undriven(self, g, nid) -> None:
        owner = self.bb_owner
        for m in self._members.get(self.find(nid), [nid]):
            if m in owner:
                path, cell, loc, reason = owner[m]
                g.add_node(nid, kind="blackbox", name=nid, op="buf", inputs=[], pins=[],
                           delays=[], cell=cell, instance=path, reason=reason, **_locattrs(loc))
                return
        g.add_node(nid, kind="blackbox", name=nid, op="buf", inputs=[], pins=[], delays=[],
                   cell="undriven", instance="", reason="undriven net", path="", line=0,
                   column=1)
        if any(self.undriven_word(m) for m in self._members.get(self.find(nid), [nid])):
            return                      # one warning per array (hazlint.elaborate.memory)
        self.note(f"net '{nid}' is read but never driven; it is a free input for analysis",
                  None, "", key=("undriven", nid), severity=Severity.WARNING)


def _locattrs(loc) -> dict:
    if loc is None:
        return {"path": "", "line": 0, "column": 1}
    return {"path": loc.path, "line": loc.line, "column": loc.col or 1}
