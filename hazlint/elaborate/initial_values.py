"""Power-up values of registers: ``reg x = v;``, ``initial x = v;`` and yosys' ``init`` attribute.

An initial value is the state a register holds before its first clock edge (IEEE 1364-2005
6.2.1 reads a variable declaration assignment as an ``initial`` assignment; yosys writes the
same value as ``reg [7:0] \\storage[6] = 8'h00;`` or, in ``-noexpr`` netlists, as the attribute
``(* init = 8'h00 *)`` on the wire a flip-flop cell drives). It is never a second driver: the
value is kept on the register's state node (``init``) and on :class:`~hazlint.netlist.design.Register`
(``init``), where simulation and witnesses can start from it. A variable that nothing else
drives keeps its initial value for ever, so there it becomes a constant; on a net driven by
combinational logic it has no effect.

Only constant assignments are initial values; other statements of an ``initial`` block (system
tasks, delays, loops) are simulation-only and are reported once per module as ignored.
"""
from __future__ import annotations

from ..diagnostics import Severity
from ..errors import ElaborationError, HazlintError
from .. import ir
from ..frontends.literals import parse_number

InitValues = dict      # net bit -> (0 | 1 | None for x, loc, instance)


def record_block(el, scope, it: ir.Initial) -> None:
    """Record the constant assignments of ``it`` as power-up values in ``el.init_values``."""
    ignored: list[str] = []

    def run(stmt) -> None:
        if stmt is None:
            return
        tag = stmt[0]
        if tag == "block":
            for s in stmt[1]:
                run(s)
        elif tag == "assign":
            loc = ir.Loc(it.loc.path, stmt[4], 1) if it.loc and stmt[4] else it.loc
            try:
                bits = el.lvalue_bits(stmt[2], scope, loc)
            except HazlintError:
                ignored.append("an assignment to a computed target")
                return
            value = _constant(el, stmt[3], scope)
            if value is None:
                ignored.append("an assignment of a non-constant value")
                return
            _store(el, scope, bits, *value, loc)
        else:
            ignored.append({"if": "a conditional", "case": "a case statement"}.get(
                tag, stmt[1] if tag == "other" else tag))

    run(it.body)
    if ignored:
        el.note(f"initial block: only constant assignments set power-up values; "
                f"{ignored[0]} is simulation-only and ignored", it.loc, scope.instance,
                key=("initial", scope.module.name))


def record_attribute(el, scope, net: ir.Net | ir.Port) -> None:
    """yosys' ``(* init = ... *)`` on a declared net or port."""
    v = net.attrs.get("init")
    if isinstance(v, bool) or v is None:
        return
    if isinstance(v, int):
        value, xz = v, 0
    else:
        try:
            num = parse_number(str(v))
        except ValueError:
            el.note(f"init attribute '{v}' of '{net.name}' is not a number; ignored", net.loc,
                    scope.instance, severity=Severity.WARNING)
            return
        value, xz = num[2], num[3]
    _store(el, scope, scope.nets[net.name].bits(), value, xz, net.loc)


def _constant(el, e, scope) -> tuple[int, int] | None:
    """(value, x/z mask) of a constant expression, or None."""
    if e[0] == "num":
        return e[2], e[3]
    try:
        return el.const(e, scope, None), 0
    except ElaborationError:
        return None


def _store(el, scope, bits, value: int, xz: int, loc) -> None:
    for i, b in enumerate(bits):
        if b in el.const_bits(2, 2):
            continue
        v = None if (xz >> i) & 1 else (value >> i) & 1
        el.init_values[b] = (v, loc, scope.instance)


def by_net(init_values: InitValues, find) -> dict[str, tuple[str, int, object, str]]:
    """Merged net -> (bit, value, loc, instance) for every bit with a known value."""
    out: dict = {}
    for bit, (v, loc, inst) in init_values.items():
        if v is not None:
            out.setdefault(find(bit), (bit, v, loc, inst))
    return out


def apply_to_graph(g, inits: dict, rep: dict, registers) -> None:
    """Put each known power-up value on its state node and its register (as the Q value)."""
    for root, (_bit, v, _loc, _inst) in inits.items():
        nid = rep.get(root)
        if nid in g and g.nodes[nid]["kind"] == "state":
            g.nodes[nid]["init"] = v
    for r in registers:
        q, qn = r.outputs.get("Q"), r.outputs.get("QN")
        if q in g and "init" in g.nodes[q]:
            r.init = g.nodes[q]["init"]
        elif qn in g and "init" in g.nodes[qn]:
            r.init = 1 - g.nodes[qn]["init"]
