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
        # every bit now points at its root (find compresses paths) and no union follows:
        # a lookup in the parent table is find() without the call
        root_of = self.parent.get
        port_set = set(inputs) | set(outputs)
        inits = initial_values.by_net(self.init_values, find)
        if inits:
            driven = {root_of(d["out"], d["out"]) for d in self.drivers}
            for root, (bit, v, loc, inst) in inits.items():
                if root not in driven:  # a variable nothing assigns keeps its initial value
                    self._add_driver("const", bit, op=f"const{v}", instance=inst, loc=loc)

        def rank(n: str):
            return (0 if n in port_set else 1, "$" in n, n.count("."), len(n), n)
        rep = self._rep = {r: ms[0] if len(ms) == 1 else min(ms, key=rank)
                           for r, ms in members.items()}
        # drivers per merged net; the records are handed over (and freed as they become
        # nodes), so a large design does not hold each gate's attributes twice
        drv_of: dict[str, list[dict]] = {}
        for d in self.drivers:
            out = d["out"]
            r = root_of(out, out)
            ds = drv_of.get(r)
            if ds is None:
                drv_of[r] = [d]
            else:
                ds.append(d)
        self.drivers = []

        def node_of(sig: str) -> str:
            if sig in (C0, C1):
                if sig not in g:
                    g.add_node(sig, kind="const", name=sig, op="const1" if sig == C1 else
                               "const0", inputs=[], pins=[], delays=[], cell="constant",
                               instance="", path="", line=0, column=1)
                return sig
            return rep[root_of(sig, sig)]

        for k, r in enumerate(list(drv_of)):
            ds = drv_of.pop(r)
            if not k & 8191:
                _budget.check_loading("building the gate graph", *_where(ds[0]["loc"])[:2])
            nid = rep[r]
            if len(ds) == 1:
                _emit(g, nid, ds[0], node_of)
                continue
            strong = [d for d in ds if not d.get("weak")]
            ds_use = strong or ds
            if len(ds_use) > 1:
                tri = [d for d in ds_use if d.get("tri")]
                if len(tri) == len(ds_use):
                    # a three-state bus: the enabled driver wins; resolve with an OR of drivers
                    outs = []
                    for k, d in enumerate(tri):
                        dn = f"{nid}$drv{k}"
                        _emit(g, dn, d, node_of)
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
            _emit(g, nid, ds_use[0], node_of)
        # sinks
        for s in self.sinks:
            src = node_of(s["input"])
            attrs = {k: v for k, v in s.items() if k not in ("id", "input", "loc")}
            g.add_node(s["id"], kind="sink", inputs=[src], pins=["in"],
                       delays=[ZERO_DELAY], **_locattrs(s["loc"]), **attrs)
        # edges (and undriven-net sources), gathered first and added in one call: the same
        # edges in the same order, without networkx's per-edge checks
        edges = []
        add_edge = edges.append
        for n, ins in list(g.nodes(data="inputs")):
            if not ins:
                continue
            if len(ins) == 1:
                src = ins[0]
                if src not in g:
                    self._undriven(g, src)
                add_edge((src, n, {"pins": [0]}))
                continue
            pins_of: dict[str, list[int]] = {}
            for i, src in enumerate(ins):
                pins = pins_of.get(src)
                if pins is None:
                    if src not in g:
                        self._undriven(g, src)
                    pins_of[src] = [i]
                else:
                    pins.append(i)
            for src, pins in pins_of.items():
                add_edge((src, n, {"pins": pins}))
        g.add_edges_from(edges)
        del edges
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


# attributes a driver record may carry into its node, in the order they are written
_EXTRA = ("register", "state", "port", "reason", "out_pin", "tri", "memory")


def _emit(g, nid, d, node_of) -> None:
    """Driver record ``d`` -> node ``nid`` (the schema of :mod:`hazlint.netlist.graph`)."""
    loc = d["loc"]
    attrs = {"kind": d["kind"], "name": nid, "op": d["op"],
             "inputs": [node_of(s) for s in d["inputs"]], "pins": list(d["pins"]),
             "delays": list(d["delays"]), "cell": d["cell"], "instance": d["instance"]}
    if loc is None:
        attrs["path"], attrs["line"], attrs["column"] = "", 0, 1
    else:
        attrs["path"], attrs["line"], attrs["column"] = loc.path, loc.line, loc.col or 1
    if d["expr"] is not None:
        attrs["expr"] = d["expr"]
    if d["attrs"]:
        attrs["attrs"] = d["attrs"]
    if len(d) > 11:             # the record has more than the keys every record has
        for k in _EXTRA:
            if k in d:
                attrs[k] = d[k]
    g.add_node(nid, **attrs)


def _locattrs(loc) -> dict:
    if loc is None:
        return {"path": "", "line": 0, "column": 1}
    return {"path": loc.path, "line": loc.line, "column": loc.col or 1}
