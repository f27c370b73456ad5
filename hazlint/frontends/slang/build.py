"""pyslang syntax tree -> IR: modules, ports, declarations, instances, assigns, generate.

The IR is pre-elaboration, so this walks slang's *syntax tree* (not its elaborated
compilation): every item keeps its own token's location, parameters stay expressions and
generate constructs stay unexpanded, exactly as the pyverilog front end leaves them. Which
token a location points at follows that front end (the name of a declared net or instance, the
keyword of an ``assign``, ``always``, ``parameter`` or ``integer`` declaration), so the two give
equal IR for the same text. Statements, specify blocks and UDP tables are in
:mod:`.procedural`, functions, tasks and their declarations in :mod:`.subprograms`.
"""
from __future__ import annotations

from pyslang import parsing, syntax

from ... import ir
from ..literals import GATE_PRIMITIVES, attr_value, expr_text
from . import fastpath, flatread
from .exprs import COMPOUND_STEP, ExprMapper, items, kind_words
from .procedural import Procedural
from .subprograms import Subprograms

SK = syntax.SyntaxKind
TK = parsing.TokenKind

_NET_KINDS = {"wire", "tri", "tri0", "tri1", "wand", "triand", "wor", "trior", "trireg",
              "uwire", "supply0", "supply1"}
_DIRECTIONS = {TK.InputKeyword: "input", TK.OutputKeyword: "output", TK.InOutKeyword: "inout"}
# SV integer atom types: a signed vector of their width (2-state values are plain 0/1 here)
_ATOM_WIDTH = {SK.IntType: 32, SK.ShortIntType: 16, SK.LongIntType: 64, SK.ByteType: 8}
_ALWAYS = {SK.AlwaysBlock: "always", SK.AlwaysFFBlock: "always_ff",
           SK.AlwaysCombBlock: "always_comb", SK.AlwaysLatchBlock: "always_latch"}


def _num(v: int):
    return ("num", None, v, 0, True)


_INTEGER_WIDTH = (_num(31), _num(0))
# declared kinds whose declaration assignment is an initial value, not a driver (IEEE
# 1364-2005 6.2.1; the IR's ``kind`` of reg, logic, bit and the SV integer types is "reg")
_VARIABLE_KINDS = ("reg", "integer")


class Builder(Procedural, Subprograms):
    """One source file's syntax tree -> modules and primitives. ``state`` maps a definition's
    name-token location ``(buffer id, offset)`` to its directive state (timescale, celldefine,
    default_nettype) as slang's compilation resolved it."""

    def __init__(self, locator, state: dict, fast: bool = True):
        self.at = locator
        self.state = state
        self.fast = fast
        self.notes: list = []
        self._buffers: dict = {}
        self.conn_exprs: dict = {}      # the fast path's shared connection expressions
        self.x = ExprMapper(locator.error)
        self.expr = self.x.expr

    # ------------------------------------------------------------------ helpers
    def error(self, message, what, construct=None):
        self.at.error(message, what, construct)

    def attrs(self, attr_list) -> dict:
        out = {}
        for inst in attr_list:
            for spec in items(inst.specs):
                value = spec.value
                text = None if value is None else str(value.expr).strip()
                out[spec.name.valueText] = attr_value(text)
        return out

    def width(self, dims):
        """(msb, lsb) of the packed dimension, None for a scalar."""
        if not dims:
            return None
        if len(dims) > 1:
            self.error("more than one packed dimension is not supported", dims[1],
                       str(dims[1]).strip())
        return self._range(dims[0])

    def dims(self, dims):
        """The unpacked dimensions ``[(msb, lsb), ...]``, None without any."""
        if not dims:
            return None
        return [self._range(d) for d in dims]

    def _range(self, dim):
        spec = dim.specifier
        if spec is None or spec.kind != SK.RangeDimensionSpecifier:
            self.error("unsupported dimension", dim, str(dim).strip())
        sel = spec.selector
        if sel.kind != SK.SimpleRangeSelect:
            self.error("a dimension needs the form [msb:lsb]", dim, str(dim).strip())
        return (self.expr(sel.left), self.expr(sel.right))

    def delay(self, d):
        """``#...`` -> ``[(min, typ, max), ...]`` or None."""
        if d is None:
            return None
        k = d.kind
        mtm = self.x.min_typ_max
        if k == SK.DelayControl:
            return [mtm(d.delayValue)]
        if k == SK.Delay3:
            return [mtm(v) for v in (d.delay1, d.delay2, d.delay3) if v is not None]
        self.error("unsupported delay", d, str(d).strip())

    def _def_state(self, name_tok) -> dict:
        loc = name_tok.location
        return self.state.get((loc.buffer.id, loc.offset)) or {
            "timescale": None, "celldefine": False, "default_nettype": "wire"}

    # ------------------------------------------------------------------ source file
    def source(self, root) -> tuple[list, list]:
        modules, prims = [], []
        for m in root.members:
            k = m.kind
            if k == SK.ModuleDeclaration:
                modules.append(self.module(m))
            elif k == SK.UdpDeclaration:
                prims.append(self.primitive(m))
            elif k in (SK.TimeUnitsDeclaration, SK.EmptyMember):
                continue
            else:
                self.error(f"{kind_words(k)} outside a module is not supported", m,
                           kind_words(k))
        return modules, prims

    # ------------------------------------------------------------------ modules
    def module(self, m) -> ir.Module:
        h = m.header
        st = self._def_state(h.name)
        mod = ir.Module(name=h.name.valueText, timescale=st["timescale"],
                        celldefine=st["celldefine"], default_nettype=st["default_nettype"],
                        loc=self.at.loc(h.moduleKeyword), attrs=self.attrs(m.attributes))
        if h.parameters is not None:
            for decl in items(h.parameters.declarations):
                mod.params.extend(self.params(decl, False, decl.keyword))
        ports = h.ports
        initial_values: list = []
        if ports is not None:
            if ports.kind == SK.AnsiPortList:
                self._ansi_ports(mod, ports, initial_values)
            elif ports.kind == SK.NonAnsiPortList:
                for p in items(ports.ports):
                    mod.port_order.append(self._nonansi_port_name(p))
            else:
                self.error("unsupported port list", ports, kind_words(ports.kind))
        flat = None if initial_values or not self.fast else \
            flatread.try_module(self, list(m.members), mod)
        if flat is not None:
            mod = flat                  # items built on first use (the compiled elaborator)
        else:
            mod.items = initial_values + self.items(m.members, mod)
        for name in mod.port_order:
            if name not in mod.ports:
                self.error(f"port '{name}' of module '{mod.name}' has no direction declaration",
                           h.moduleKeyword, name)
        return mod

    def _nonansi_port_name(self, p) -> str:
        if p.kind == SK.ImplicitNonAnsiPort and p.expr.kind == SK.PortReference \
                and p.expr.select is None:
            return p.expr.name.valueText
        self.error("unsupported port expression", p, str(p).strip())

    def _ansi_ports(self, mod, plist, initial_values):
        prev = None                     # (direction, net_type, width, signed, attrs)
        for p in items(plist.ports):
            if p.kind != SK.ImplicitAnsiPort:
                self.error("unsupported port", p, str(p).strip())
            h = p.header
            name_tok = p.declarator.name
            if p.declarator.dimensions:
                self.error("unpacked port dimensions are not supported", p, name_tok.valueText)
            direction, net_type, width, signed = self._port_header(h)
            own_attrs = self.attrs(p.attributes)
            if direction is None:
                if prev is None:
                    self.error(f"port '{name_tok.valueText}' has no direction", p,
                               name_tok.valueText)
                if (net_type, width, signed) == ("wire", None, False):
                    # a bare name continues the previous declaration's direction and type
                    direction, net_type, width, signed, attrs = prev
                else:
                    direction, attrs = prev[0], own_attrs
                loc_tok = name_tok
            else:
                attrs = own_attrs
                prev = (direction, net_type, width, signed, attrs)
                loc_tok = h.getFirstToken()             # the direction keyword
            mod.port_order.append(name_tok.valueText)
            port = mod.ports[name_tok.valueText] = ir.Port(
                name=name_tok.valueText, direction=direction, width=width, net_type=net_type,
                signed=signed, loc=self.at.loc(loc_tok), attrs=dict(attrs))
            init = p.declarator.initializer
            if init is not None:
                # ``output reg q = 1'b0``: an initial value (IEEE 1364-2005 12.3.4)
                if net_type not in _VARIABLE_KINDS or direction != "output":
                    self.error(f"port '{port.name}' cannot have an initial value (only an "
                               "output variable can)", p.declarator, port.name)
                initial_values.append(self._initial_value(port.name, init, p.declarator,
                                                          port.loc))

    def _port_header(self, h):
        """(direction or None, net type, width, signed) of a port header."""
        if h.kind == SK.VariablePortHeader:
            direction = _DIRECTIONS.get(h.direction.kind)
            dt = h.dataType
            net_type = "reg" if h.varKeyword.rawText == "var" else "wire"
            kind, width, signed = self.data_type(dt, h)
            if kind is not None:
                net_type = kind
            return direction, net_type, width, signed
        if h.kind == SK.NetPortHeader:
            direction = _DIRECTIONS.get(h.direction.kind)
            kind, width, signed = self.data_type(h.dataType, h)
            return direction, h.netType.rawText, width, signed
        self.error("unsupported port header", h, str(h).strip())

    def data_type(self, dt, where):
        """(net kind or None for implicit, width, signed) of a data type."""
        k = dt.kind
        signed = dt.signing.kind == TK.SignedKeyword if hasattr(dt, "signing") else False
        if k == SK.ImplicitType:
            return None, self.width(dt.dimensions), signed
        if k in (SK.RegType, SK.LogicType, SK.BitType):
            return "reg", self.width(dt.dimensions), signed
        if k == SK.IntegerType:
            return "integer", _INTEGER_WIDTH, dt.signing.kind != TK.UnsignedKeyword
        w = _ATOM_WIDTH.get(k)
        if w is not None:
            return "reg", (_num(w - 1), _num(0)), dt.signing.kind != TK.UnsignedKeyword
        self.error(f"unsupported data type ({kind_words(k)})", where, str(dt).strip())

    # ------------------------------------------------------------------ items
    def items(self, members, mod) -> list:
        out: list = []
        members = list(members)
        plan = fastpath.Members.plan(self, members) if self.fast else None
        if plan is None:
            for n in members:
                self.item(n, out, mod)
            return out
        try_item = plan.try_item
        for i, n in enumerate(members):
            if not try_item(i, n, out, mod):
                self.item(n, out, mod)
        return out

    def buffer_text(self, buffer):
        """(text, line starts) of a source buffer the fast path may read by offset, or
        (None, None): not ASCII, or renumbered by a ```line`` directive."""
        key = buffer.id
        got = self._buffers.get(key)
        if got is None:
            try:
                src = self.at.sm.getSourceText(buffer)
            except Exception:
                src = None
            if src is None or not src.isascii() or "`line" in src:
                got = (None, None)
            else:
                got = (src, fastpath.line_starts(src))
            self._buffers[key] = got
        return got

    def item(self, n, out, mod):
        k = n.kind
        h = _ITEM.get(k)
        if h is not None:
            h(self, n, out, mod)
        elif k in _ALWAYS:
            self._always(n, out)
        elif k in (SK.GenvarDeclaration, SK.EmptyMember, SK.TimeUnitsDeclaration):
            return
        else:
            first = n.getFirstToken()
            out.append(ir.Unsupported(what=kind_words(k), loc=self.at.loc(first)))

    def _port_decl(self, n, out, mod):
        attrs = self.attrs(n.attributes)
        direction, net_type, width, signed = self._port_header(n.header)
        explicit_type = _has_explicit_type(n.header)
        keyword = n.getFirstToken() if not n.attributes else n.header.getFirstToken()
        for d in items(n.declarators):
            name = d.name.valueText
            init = d.initializer
            if init is None:
                self.declare_port(name, direction, width, signed, explicit_type, net_type,
                                  attrs, self.at.loc(d.name), mod)
                continue
            # ``output reg q = 1'b0;``: an initial value (IEEE 1364-2005 12.3.3); ``output
            # wire w = a;``: a net declaration assignment; at the keyword, as there
            if direction == "input" or not explicit_type:
                self.error(f"port '{name}' cannot have an initial value in its "
                           f"{direction} declaration", d, name)
            loc = self.at.loc(keyword)
            self.declare_port(name, direction, width, signed, explicit_type, net_type, attrs,
                              loc, mod)
            if net_type in _VARIABLE_KINDS:
                out.append(self._initial_value(name, init, d, loc))
            else:
                out.append(ir.Assign(lhs=("id", name), rhs=self.expr(init.expr), loc=loc,
                                     attrs=dict(attrs)))

    def declare_port(self, name, direction, width, signed, explicit_type, net_type, attrs,
                     loc, mod) -> None:
        """A non-ANSI ``input``/``output``/``inout`` declaration of ``name``."""
        port = mod.ports.get(name)
        if port is None:
            if name not in mod.port_order:
                self.notes.append((loc, f"'{name}' is declared {direction} but is not in the "
                                        f"port list of '{mod.name}'"))
                mod.port_order.append(name)
            port = mod.ports[name] = ir.Port(name=name, direction=direction)
        port.direction = direction
        port.width = width or port.width
        port.signed = port.signed or signed
        if explicit_type:
            port.net_type = net_type
        port.loc = loc
        if attrs:
            port.attrs.update(attrs)

    def update_port(self, name, kind, width, signed, attrs, mod) -> bool:
        """A net or variable declaration of a port's name gives the port its type: True when
        ``name`` is a port (nothing else is declared then)."""
        port = mod.ports.get(name)
        if port is None or name not in mod.port_order:
            return False
        port.net_type = kind
        port.width = port.width or width
        port.signed = port.signed or signed
        if attrs:
            port.attrs.update(attrs)
        return True

    def _net_decl(self, n, out, mod):
        attrs = self.attrs(n.attributes)
        kind = n.netType.rawText
        dkind, width, signed = self.data_type(n.type, n)
        delay = self.delay(n.delay)
        first = n.getFirstToken() if not n.attributes else n.netType
        for d in items(n.declarators):
            self._declare(d, kind, width, signed, delay, attrs, mod, out, first)

    def _data_decl(self, n, out, mod):
        attrs = self.attrs(n.attributes)
        t = n.type
        if t.kind in (SK.RealType, SK.RealTimeType, SK.ShortRealType, SK.TimeType):
            first = n.getFirstToken() if not n.attributes else t.getFirstToken()
            for d in items(n.declarators):
                out.append(ir.Unsupported(what=f"{t.getFirstToken().rawText} variable "
                                               f"{d.name.valueText}", loc=self.at.loc(first)))
            return
        kind, width, signed = self.data_type(t, n)
        first = n.getFirstToken() if not n.attributes else t.getFirstToken()
        for d in items(n.declarators):
            self._declare(d, kind or "reg", width, signed, None, attrs, mod, out, first)

    def _declare(self, d, kind, width, signed, delay, attrs, mod, out, keyword_tok):
        name = d.name.valueText
        init = d.initializer
        variable = kind in _VARIABLE_KINDS
        if self.update_port(name, kind, width, signed, attrs, mod):
            if init is not None:
                loc = self.at.loc(keyword_tok)
                out.append(self._initial_value(name, init, d, loc) if variable else ir.Assign(
                    lhs=("id", name), rhs=self.expr(init.expr), delay=delay, loc=loc,
                    attrs=dict(attrs)))
            return
        # the pyverilog front end puts integer declarations and declarations with an
        # initial value at their keyword, other nets at their name
        at_keyword = kind == "integer" or init is not None
        loc = self.at.loc(keyword_tok if at_keyword else d.name)
        has_assign = init is not None and not variable
        out.append(ir.Net(name=name, kind=kind, width=width, signed=signed,
                          array=self.dims(d.dimensions), loc=loc, attrs=dict(attrs),
                          delay=None if has_assign else delay))
        if init is None:
            return
        if variable:
            out.append(self._initial_value(name, init, d, loc))
        else:
            out.append(ir.Assign(lhs=("id", name), rhs=self.expr(init.expr), delay=delay,
                                 loc=loc, attrs=dict(attrs)))

    def _initial_value(self, name, init, d, loc) -> ir.Initial:
        """``reg x = v;``: a power-up value (IEEE 1364-2005 6.2.1), read as ``initial x = v;``."""
        return ir.Initial(loc=loc, body=("assign", "=", ("id", name), self.expr(init.expr),
                                         self.at.line(d.name)))

    def params(self, decl, local, keyword_tok):
        if decl.kind == SK.TypeParameterDeclaration:
            self.error("type parameters are not supported", decl, str(decl).strip())
        if keyword_tok is not None and keyword_tok.rawText:
            local = keyword_tok.kind == TK.LocalParamKeyword
            loc_tok = keyword_tok
        else:
            loc_tok = None
        t = decl.type
        _kind, width, signed = self.data_type(t, decl)
        out = []
        for d in items(decl.declarators):
            if d.initializer is None:
                self.error(f"parameter '{d.name.valueText}' has no value", d, d.name.valueText)
            loc = self.at.loc(loc_tok if loc_tok is not None else d.name)
            out.append(ir.Param(name=d.name.valueText, value=self.expr(d.initializer.expr),
                                local=local, width=width, loc=loc, signed=signed))
        return out

    def _param_stmt(self, n, out, mod):
        p = n.parameter
        out.extend(self.params(p, False, p.keyword))

    def _assign(self, n, out, mod):
        attrs = self.attrs(n.attributes)
        delay = self.delay(n.delay)
        kw = n.assign
        loc = self.at.loc(kw)
        for a in items(n.assignments):
            if a.kind != SK.AssignmentExpression:
                self.error("unsupported assignment", a, str(a).strip())
            line = self.at.line(a.getFirstToken())
            out.append(ir.Assign(lhs=self.expr(a.left), rhs=self.expr(a.right), delay=delay,
                                 loc=loc if line == loc.line else
                                 self.at.loc_line_only(a.getFirstToken()),
                                 attrs=attrs))

    # ------------------------------------------------------------------ instances
    def _instances(self, n, out, mod, cell=None, delay=None, params=()):
        attrs = self.attrs(n.attributes)
        cell_tok = n.type
        cell = cell_tok.valueText if cell is None else cell
        for inst in items(n.instances):
            decl = inst.decl
            conns = self.connections(inst.connections)
            name, array, loc_tok = "", None, cell_tok
            if decl is not None:
                name = decl.name.valueText
                loc_tok = decl.name
                if decl.dimensions:
                    if len(decl.dimensions) > 1:
                        self.error("an instance array has one dimension", decl.dimensions[1],
                                   str(decl.dimensions[1]).strip())
                    array = self._range(decl.dimensions[0])
            out.append(ir.Instance(cell=cell, name=name, connections=conns, params=list(params),
                                   delay=delay, array=array, loc=self.at.loc(loc_tok),
                                   attrs=dict(attrs)))

    def connections(self, conns) -> list:
        out = []
        nodes = items(conns)
        if len(nodes) == 1 and nodes[0].kind == SK.EmptyPortConnection:
            return out                  # "u ()": no connections
        for c in nodes:
            k = c.kind
            if k == SK.OrderedPortConnection:
                out.append((None, self.expr(c.expr)))
            elif k == SK.NamedPortConnection:
                name = c.name.valueText
                if c.openParen.rawText == "":
                    out.append((name, ("id", name)))        # .name (SV implicit)
                else:
                    out.append((name, self.expr(c.expr) if c.expr is not None else None))
            elif k == SK.EmptyPortConnection:
                out.append((None, None))
            else:
                self.error("unsupported port connection", c, str(c).strip())
        return out

    def _hier_inst(self, n, out, mod):
        params, delay = [], None
        pva = n.parameters
        if pva is not None:
            params, delay = self._param_values(pva, n.type.valueText)
        self._instances(n, out, mod, delay=delay, params=params)

    def _param_values(self, pva, cell):
        """``#(...)`` on a module/UDP instance -> (params, delay) as the pyverilog front end
        fills them (see :class:`ir.Instance`): named -> params; plain positional -> both;
        with ``min:typ:max`` -> delay only."""
        vals = items(pva.parameters)
        if any(v.kind == SK.NamedParamAssignment for v in vals):
            return [(v.name.valueText, self.expr(v.expr)) for v in vals], None
        exprs = [v.expr for v in vals]
        if any(_is_mintypmax(e) for e in exprs):
            return [], [self.x.min_typ_max(e) for e in exprs]
        delay = [self.x.min_typ_max(e) for e in exprs]
        if pva.openParen.rawText == "" or cell in GATE_PRIMITIVES:
            return [], delay                                 # "#5": a delay
        return [(None, t[1]) for t in delay], delay

    def _prim_inst(self, n, out, mod):
        self._instances(n, out, mod, cell=n.type.rawText, delay=self.delay(n.delay))

    def _defparam(self, n, out, mod):
        loc = self.at.loc(n.defparam)
        for a in items(n.assignments):
            target = ("id", self.x.scoped_name(a.name))
            value = self.expr(a.setter.expr)
            out.append(ir.Unsupported(what=f"defparam {expr_text(target)} = {expr_text(value)}",
                                      loc=loc))

    def _initial(self, n, out, mod):
        out.append(ir.Initial(loc=self.at.loc(n.keyword), body=self.stmt(n.statement)))

    def _always(self, n, out):
        sens, star, body = self.sensitivity(n.statement)
        out.append(ir.Always(sens=sens, star=star, body=self.stmt(body), kind=_ALWAYS[n.kind],
                             loc=self.at.loc(n.keyword), attrs=self.attrs(n.attributes)))

    # ------------------------------------------------------------------ generate
    def _region(self, n, out, mod):
        for x in n.members:
            self.item(x, out, mod)

    def _block_items(self, b, mod):
        """(label, items) of a generate body: a ``begin ... end`` block or one item."""
        if b is None:
            return None, []
        if b.kind == SK.GenerateBlock:
            name = b.beginName.name.valueText if b.beginName is not None else (
                b.label.name.valueText if b.label is not None else None)
            return name, self.items(b.members, mod)
        out: list = []
        self.item(b, out, mod)
        return None, out

    def _loop_gen(self, n, out, mod):
        var = n.identifier.valueText
        it = n.iterationExpr
        k = it.kind
        if k == SK.AssignmentExpression and it.left.kind == SK.IdentifierName \
                and it.left.identifier.valueText == var:
            step = self.expr(it.right)
        elif k in COMPOUND_STEP and it.left.kind == SK.IdentifierName:
            step = ("binop", COMPOUND_STEP[k], ("id", var), self.expr(it.right))
        elif k in (SK.PostincrementExpression, SK.UnaryPreincrementExpression):
            step = ("binop", "+", ("id", var), _num(1))
        elif k in (SK.PostdecrementExpression, SK.UnaryPredecrementExpression):
            step = ("binop", "-", ("id", var), _num(1))
        else:
            self.error("generate for loop needs a step assigning the loop variable", it, "for")
        name, body = self._block_items(n.block, mod)
        out.append(ir.GenFor(var=var, init=self.expr(n.initialExpr), cond=self.expr(n.stopExpr),
                             step=step, name=name, items=body, loc=self.at.loc(n.keyword)))

    def _genif(self, n, mod) -> ir.GenIf:
        name, then_items = self._block_items(n.block, mod)
        else_name, else_items = None, []
        ec = n.elseClause
        if ec is not None:
            clause = ec.clause
            if clause.kind == SK.IfGenerate:
                else_items = [self._genif(clause, mod)]
            else:
                else_name, else_items = self._block_items(clause, mod)
        return ir.GenIf(cond=self.expr(n.condition), then_items=then_items,
                        else_items=else_items, name=name, else_name=else_name,
                        loc=self.at.loc(n.keyword))

    def _if_gen(self, n, out, mod):
        out.append(self._genif(n, mod))

    def _case_gen(self, n, out, mod):
        cases = []
        for c in n.items:
            if c.kind == SK.DefaultCaseItem:
                labels = None
            else:
                labels = [self.expr(x) for x in items(c.expressions)]
            name, body = self._block_items(c.clause, mod)
            cases.append((labels, name, body))
        out.append(ir.GenCase(expr=self.expr(n.condition), cases=cases,
                              loc=self.at.loc(n.keyword)))

    def _gen_block(self, n, out, mod):
        name, body = self._block_items(n, mod)
        out.append(ir.GenBlock(name=name, items=body, loc=self.at.loc_line_only(n.begin)))


def _has_explicit_type(h) -> bool:
    """Does a non-ANSI port declaration name a net or variable type (``output reg q``)?"""
    if h.kind == SK.NetPortHeader:
        return True
    return h.dataType.kind != SK.ImplicitType or h.varKeyword.rawText == "var"


def _is_mintypmax(e) -> bool:
    if e.kind == SK.ParenthesizedExpression:
        e = e.expression
    return e.kind == SK.MinTypMaxExpression


_ITEM = {
    SK.PortDeclaration: Builder._port_decl,
    SK.NetDeclaration: Builder._net_decl,
    SK.DataDeclaration: Builder._data_decl,
    SK.ParameterDeclarationStatement: Builder._param_stmt,
    SK.ContinuousAssign: Builder._assign,
    SK.HierarchyInstantiation: Builder._hier_inst,
    SK.PrimitiveInstantiation: Builder._prim_inst,
    SK.DefParam: Builder._defparam,
    SK.FunctionDeclaration: Subprograms.subprogram,
    SK.TaskDeclaration: Subprograms.subprogram,
    SK.InitialBlock: Builder._initial,
    SK.GenerateRegion: Builder._region,
    SK.LoopGenerate: Builder._loop_gen,
    SK.IfGenerate: Builder._if_gen,
    SK.CaseGenerate: Builder._case_gen,
    SK.GenerateBlock: Builder._gen_block,
    SK.SpecifyBlock: Procedural.specify,
}
