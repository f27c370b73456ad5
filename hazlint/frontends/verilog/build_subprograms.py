"""AST -> IR for functions, tasks and block declarations (a mixin of the IR builder)."""
from __future__ import annotations

from pyverilog.vparser import ast as va

from ... import ir


def direction(v) -> str:
    if isinstance(v, va.Input):
        return "input"
    if isinstance(v, va.Output):
        return "output"
    return "inout"


class SubprogramBuilder:
    """Functions (:class:`ir.Function`), tasks (:class:`ir.Task`) and the declarations of
    named blocks; uses the builder's ``expr``, ``width``, ``stmt``, ``loc``, ``error``."""

    def _dims(self, v):
        if v.dimensions is None or not v.dimensions.lengths:
            return None
        return [(self.expr(ln.msb), self.expr(ln.lsb)) for ln in v.dimensions.lengths]

    def _function(self, n) -> ir.Function:
        kind, signed, width = n.rtype
        w = self.width(width)
        if kind == "integer":
            w = (("num", None, 31, 0, True), ("num", None, 0, 0, True))
        ports, decls = self._tf_items(n)
        return ir.Function(name=n.name, ports=ports, decls=decls, body=self.stmt(n.statement),
                           width=w, signed=bool(signed), kind=kind,
                           automatic=bool(n.automatic), loc=self.loc(n.lineno, n.hz_pos))

    def _task(self, n) -> ir.Task:
        ports, decls = self._tf_items(n)
        return ir.Task(name=n.name, ports=ports, decls=decls, body=self.stmt(n.statement),
                       automatic=bool(n.automatic), loc=self.loc(n.lineno, n.hz_pos))

    def _tf_items(self, n):
        """Arguments (ANSI header, then ``input ...;`` declarations, in order) and local
        declarations of a task or function."""
        ports: dict = {}
        decls: list = []
        for io in n.ports or ():
            first, second = io.first, io.second
            if getattr(io, "hz_init", None) is not None:
                self.error(f"argument '{first.name}' cannot have a default value",
                           first.lineno, first.name)
            kind = getattr(first, "hz_kind", None) or (
                self._net_kind(second) if second is not None else "reg")
            ports[first.name] = ir.Port(
                name=first.name, direction=direction(first), width=self.width(first.width),
                net_type="reg" if kind == "wire" else kind,
                signed=bool(first.signed or (second is not None and second.signed)),
                loc=self.loc(first.lineno, getattr(io, "hz_pos", None)))
        for d in n.decls:
            decls.extend(self._local_decls(d, ports))
        return list(ports.values()), decls

    def _local_decls(self, decl, ports=None) -> list:
        """Declarations inside a function, task or named block: ports go to ``ports`` (when
        given), variables and parameters are returned."""
        out = []
        dpos = getattr(decl, "hz_pos", None)
        for v in decl.list:
            t = type(v)
            pos = getattr(v, "hz_pos", dpos)
            if t in (va.Input, va.Output, va.Inout) and ports is not None:
                kind = getattr(v, "hz_kind", None) or "reg"
                port = ports.get(v.name)
                if port is None:
                    port = ports[v.name] = ir.Port(name=v.name, direction=direction(v))
                port.direction = direction(v)
                port.width = self.width(v.width) or port.width
                port.signed = port.signed or bool(v.signed)
                port.net_type = kind
                port.loc = self.loc(v.lineno, pos)
            elif t is va.Parameter or t is va.Localparam:
                out.append(self._param(v, t is va.Localparam, decl))
            elif t is va.Real:
                out.append(ir.Net(name=v.name, kind="real", loc=self.loc(v.lineno, pos)))
            elif isinstance(v, va.Variable):
                kind = self._net_kind(v)
                if ports is not None and v.name in ports:
                    # ``output q; reg [3:0] q;``: the type of an argument
                    port = ports[v.name]
                    port.width = port.width or self.width(v.width)
                    port.signed = port.signed or bool(v.signed)
                    if kind == "integer":
                        port.net_type = "integer"
                    continue
                out.append(ir.Net(name=v.name, kind=kind, width=self.width(v.width),
                                  signed=bool(v.signed) or kind == "integer",
                                  array=self._dims(v), loc=self.loc(v.lineno, pos)))
            else:
                self.error(f"unexpected declaration ({t.__name__}) in a task, function or "
                           "block", v.lineno, getattr(v, "name", t.__name__))
        return out
