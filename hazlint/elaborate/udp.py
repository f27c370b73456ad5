"""User-defined primitives: combinational tables as a sum of products, sequential ones as
registers with the roles their table gives the inputs. A mixin of
:class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

import re
from typing import Any

from .. import ir
from ..netlist.design import Register
from ..errors import ElaborationError
from .common import where as _where
from .scope import Scope


class UdpElaborator:
    """UDP instances."""

    # ---------------------------------------------------------------- UDPs ---------------------
    def elab_udp(self, scope: Scope, inst: ir.Instance, udp: ir.Primitive) -> None:
        path = f"{scope.instance}.{inst.name}"
        terms = [self.conn_bits(scope, e, inst.loc) for _, e in inst.connections]
        if len(terms) != 1 + len(udp.inputs) or any(t is None for t in terms):
            raise ElaborationError(f"UDP '{udp.name}' takes {1 + len(udp.inputs)} terminals",
                                   *_where(inst.loc), construct=inst.name)
        out = terms[0][0]
        ins = [t[0] for t in terms[1:]]
        dspec = inst.delay
        if dspec is None and inst.params:
            dspec = [(v, v, v) for _, v in inst.params]
        delay = self.delay(dspec, scope, inst.loc) if dspec else self.default_delay
        if not udp.sequential:
            expr = _udp_comb_expr(udp)
            self._add_driver("gate", out, op="expr", inputs=ins, pins=list(udp.inputs),
                             delays=[delay] * len(ins), cell=udp.name, instance=path,
                             loc=inst.loc, expr=expr)
            return
        roles = _udp_seq_roles(udp)
        name = self.rel(scope, inst.name)
        kind = "ff" if roles["clock"] is not None else "latch"
        reg = Register(name=name, kind=kind, cell=udp.name, instance=path,
                       path=inst.loc.path if inst.loc else "",
                       line=inst.loc.line if inst.loc else 0)
        self._add_driver("state", out, op="buf", instance=path, loc=inst.loc, cell=udp.name,
                         register=name, state="Q")
        reg.outputs["Q"] = out
        for i, pin in enumerate(udp.inputs):
            role = roles["pins"][i]
            active = roles["active"].get(i)
            kw = {"register": name}
            if role == "clock":
                reg.clock_edge = active
                kw["active"] = active
            elif active is not None:
                reg.active[role] = active
                kw["active"] = active
            sid = self.add_sink(ins[i], role, f"{name}.{pin}", inst.loc, path, pin=pin, **kw)
            reg.pins.setdefault(role, sid)
        self.registers.append(reg)
        if kind == "latch" and "enable" in reg.pins and "data" in reg.pins:
            self.latch_paths.append((reg.pins["data"], reg.pins["enable"], out))


def _udp_comb_expr(udp: ir.Primitive):
    """Sum of products of the table rows whose output is 1 (x rows contribute nothing)."""
    terms = []
    for row in udp.rows:
        if row["output"] != "1":
            continue
        lits = []
        for i, v in enumerate(row["inputs"]):
            v = v.lower()
            if v == "1":
                lits.append(("in", i))
            elif v == "0":
                lits.append(("not", ("in", i)))
            elif v in ("?", "b", "x"):
                if v == "x":
                    lits = None
                    break
        if lits is None:
            continue
        terms.append(("and", *lits) if len(lits) > 1 else lits[0] if lits else ("const", 1))
    if not terms:
        return ("const", 0)
    return ("or", *terms) if len(terms) > 1 else terms[0]

_EDGE = re.compile(r"^\(..\)$|^[rfpn*]$", re.I)

def _udp_seq_roles(udp: ir.Primitive) -> dict:
    """Pin roles of a sequential UDP from its table.

    An input that takes an edge entry on a row whose output changes is the clock; an input that
    forces the output to a constant at one level while every other input is don't-care is an
    asynchronous set or reset; a level-sensitive table with no clock makes a latch whose enable is
    the input that, at one level, makes every row hold ('-'). The rest are data.
    """
    n = len(udp.inputs)
    roles = ["data"] * n
    active: dict[int, Any] = {}
    clock = None
    for row in udp.rows:
        if row["output"] == "-":
            continue
        for i, v in enumerate(row["inputs"]):
            if _EDGE.match(v) and clock is None:
                rising = v.lower() in ("r", "p", "(01)", "(0x)", "(x1)")
                falling = v.lower() in ("f", "n", "(10)", "(1x)", "(x0)")
                if rising or falling:
                    clock = i
                    active[i] = "posedge" if rising else "negedge"
    if clock is not None:
        roles[clock] = "clock"
    for i in range(n):
        if i == clock:
            continue
        for row in udp.rows:
            vals = row["inputs"]
            if row["output"] in ("0", "1") and vals[i] in ("0", "1") and all(
                    v in ("?", "b", "*") or (j == clock and _EDGE.match(v))
                    for j, v in enumerate(vals) if j != i) and \
                    all(v in ("?", "b") for j, v in enumerate(vals) if j != i and j != clock):
                roles[i] = "reset" if row["output"] == "0" else "set"
                active[i] = int(vals[i])
                break
    if clock is None:
        # latch: the enable is the input whose one level makes the table hold
        for i in range(n):
            for level in ("0", "1"):
                rows = [r for r in udp.rows if r["inputs"][i] in (level, "?", "b")]
                if rows and all(r["output"] == "-" for r in udp.rows if r["inputs"][i] == level) \
                        and any(r["inputs"][i] == level for r in udp.rows) \
                        and roles[i] == "data":
                    roles[i] = "enable"
                    active[i] = 1 - int(level)
                    break
            if "enable" in roles:
                break
    return {"clock": clock, "pins": roles, "active": active}
