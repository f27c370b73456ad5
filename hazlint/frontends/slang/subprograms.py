"""pyslang syntax -> IR for functions, tasks and the declarations inside them and inside
procedural blocks (a mixin of :class:`~hazlint.frontends.slang.build.Builder`).

The IR is the one :mod:`hazlint.frontends.verilog.build_subprograms` builds for the same text:
:class:`~hazlint.ir.Function` / :class:`~hazlint.ir.Task` with their
arguments as ``Port`` (``net_type`` "reg", "integer" or "real"), local variables as ``Net``
and parameters as ``Param``; an argument's location is its direction keyword in an ANSI list
and its name in an ``input ...;`` declaration, as there. SystemVerilog forms with the same
meaning map to the same IR (``function int f (int x)``: a signed 32-bit ``reg``; an argument
without a direction continues the previous one, the first defaults to ``input``); what has no
IR form (``void`` functions, ``ref`` arguments, ``return``) is reported.
"""
from __future__ import annotations

from pyslang import parsing, syntax

from ... import ir
from .exprs import items, kind_words

SK = syntax.SyntaxKind
TK = parsing.TokenKind

_DIRECTIONS = {TK.InputKeyword: "input", TK.OutputKeyword: "output", TK.InOutKeyword: "inout"}
_REAL_TYPES = (SK.RealType, SK.RealTimeType, SK.ShortRealType)
LOCAL_DECLS = frozenset((SK.DataDeclaration, SK.ParameterDeclarationStatement,
                          SK.PortDeclaration, SK.NetDeclaration, SK.TypedefDeclaration,
                          SK.LocalVariableDeclaration))


class Subprograms:
    # ------------------------------------------------------------------ functions and tasks
    def subprogram(self, n, out, mod):
        proto = n.prototype
        name_node = proto.name
        if name_node.kind != SK.IdentifierName:
            self.error("a function or task name must be a plain name", name_node,
                       str(name_node).strip())
        name = name_node.identifier.valueText
        automatic = proto.lifetime.kind == TK.AutomaticKeyword
        loc = self.at.loc(proto.keyword)
        ports: dict = {}
        if proto.portList is not None:
            self._ansi_arguments(proto.portList, ports)
        decls: list = []
        stmts = []
        for x in n.items:
            if x.kind in LOCAL_DECLS:
                decls.extend(self.local_decls(x, ports))
            else:
                stmts.append(x)
        body = self._subprogram_body(stmts)
        if n.kind == SK.TaskDeclaration:
            out.append(ir.Task(name=name, ports=list(ports.values()), decls=decls, body=body,
                               automatic=automatic, loc=loc))
            return
        rt = proto.returnType
        if rt.kind == SK.VoidType:
            out.append(ir.Unsupported(what=f"void function {name}", loc=loc))
            return
        kind, width, signed = self.data_type(rt, proto)
        if rt.kind in _REAL_TYPES:
            kind, width, signed = "real", None, False
        out.append(ir.Function(name=name, ports=list(ports.values()), decls=decls, body=body,
                               width=width, signed=signed, kind=kind or "reg",
                               automatic=automatic, loc=loc))

    def _subprogram_body(self, stmts):
        """The body statement: one statement as written; several (allowed in
        SystemVerilog) as an unnamed block."""
        if not stmts:
            return ("block", [], None, [])
        if len(stmts) == 1:
            return self.stmt(stmts[0])
        return ("block", [self.stmt(s) for s in stmts], None, [])

    def _ansi_arguments(self, plist, ports):
        direction = "input"             # IEEE 1800-2017 13.3: the first defaults to input
        prev_type = None
        for p in items(plist.ports):
            if p.kind != SK.FunctionPort:
                self.error("unsupported argument", p, str(p).strip())
            d = p.declarator
            name = d.name.valueText
            if d.dimensions:
                self.error(f"argument '{name}' with unpacked dimensions is not supported", d,
                           name)
            if d.initializer is not None:
                self.error(f"argument '{name}' cannot have a default value", d, name)
            if p.direction.rawText:
                direction = _DIRECTIONS.get(p.direction.kind)
                if direction is None:
                    self.error(f"'{p.direction.rawText}' arguments are not supported", p,
                               p.direction.rawText)
                prev_type = None
            dt = p.dataType
            if dt is not None:
                prev_type = self._argument_type(dt, p)
            net_type, width, signed = prev_type or ("reg", None, False)
            first = p.getFirstToken()
            ports[name] = ir.Port(name=name, direction=direction, width=width,
                                  net_type=net_type, signed=signed, loc=self.at.loc(first))

    def _argument_type(self, dt, where):
        """(net type, width, signed) of an argument's data type."""
        if dt.kind in _REAL_TYPES:
            return "real", None, False
        kind, width, signed = self.data_type(dt, where)
        return (kind or "reg"), width, signed

    # ------------------------------------------------------------------ local declarations
    def local_decls(self, x, ports=None) -> list:
        """Declarations inside a function, task or procedural block: argument declarations
        go to ``ports`` (when given), variables (``Net``) and parameters are returned."""
        k = x.kind
        if k == SK.ParameterDeclarationStatement:
            p = x.parameter
            return self.params(p, False, p.keyword)
        if k == SK.PortDeclaration and ports is not None:
            self._argument_decl(x, ports)
            return []
        if k != SK.DataDeclaration:
            self.error(f"{kind_words(k)} in a function, task or block is not supported", x,
                       kind_words(k))
        t = x.type
        out = []
        if t.kind in _REAL_TYPES:
            for d in items(x.declarators):
                self._no_initializer(d)
                out.append(ir.Net(name=d.name.valueText, kind="real",
                                  loc=self.at.loc(x.getFirstToken())))
            return out
        kind, width, signed = self.data_type(t, x)
        kind = kind or "reg"
        for d in items(x.declarators):
            name = d.name.valueText
            self._no_initializer(d)
            if ports is not None and name in ports:
                # ``output q; reg [3:0] q;``: the type of an argument
                port = ports[name]
                port.width = port.width or width
                port.signed = port.signed or signed
                if kind == "integer":
                    port.net_type = "integer"
                continue
            loc = self.at.loc(x.getFirstToken() if kind == "integer" else d.name)
            out.append(ir.Net(name=name, kind=kind, width=width,
                              signed=signed or kind == "integer",
                              array=self.dims(d.dimensions), loc=loc))
        return out

    def _no_initializer(self, d):
        # IEEE 1364-2005 has no initial value on a local variable; SystemVerilog gives a
        # static one a single initialisation, an automatic one one per call: neither is
        # modelled, and dropping it would change the function
        if d.initializer is not None:
            name = d.name.valueText
            self.error(f"initial value of local variable '{name}' is not supported", d, name)

    def _argument_decl(self, x, ports):
        """``input [3:0] a;`` inside a function or task."""
        h = x.header
        if h.kind != SK.VariablePortHeader:
            self.error("unsupported argument declaration", h, str(h).strip())
        direction = _DIRECTIONS.get(h.direction.kind)
        if direction is None:
            self.error(f"'{h.direction.rawText}' arguments are not supported", h,
                       h.direction.rawText)
        net_type, width, signed = self._argument_type(h.dataType, x)
        for d in items(x.declarators):
            name = d.name.valueText
            self._no_initializer(d)
            port = ports.get(name)
            if port is None:
                port = ports[name] = ir.Port(name=name, direction=direction)
            port.direction = direction
            port.width = width or port.width
            port.signed = port.signed or signed
            port.net_type = net_type
            port.loc = self.at.loc(d.name)
