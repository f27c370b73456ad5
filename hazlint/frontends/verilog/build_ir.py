"""AST -> IR: turn the parser's output into :mod:`hazlint.ir` objects.

Locations go through the preprocessor's line map to the original ``file:line``; columns come
from token positions (1 when unknown). Attributes found by the lexer are attached to the
construct that starts right after them. Expression nesting is limited
(:data:`MAX_EXPR_DEPTH`) so a pathological input gives a :class:`~hazlint.errors.ParseError`.
"""
from __future__ import annotations

import re

from pyverilog.vparser import ast as va

from ...errors import ParseError
from . import grammar_tasks as gt
from ... import ir
from . import ast_nodes as hp
from .build_subprograms import SubprogramBuilder
from .build_subprograms import direction as _direction
from ..literals import GATE_PRIMITIVES, attr_value, parse_number
from ..literals import expr_text as _text
from ..literals import udp_level as _udp_level

MAX_EXPR_DEPTH = 500

_UNOPS = {va.Uminus: "-", va.Uplus: "+", va.Ulnot: "!", va.Unot: "~", va.Uand: "&",
          va.Unand: "~&", va.Uor: "|", va.Unor: "~|", va.Uxor: "^", va.Uxnor: "~^"}
_BINOPS = {va.Power: "**", va.Times: "*", va.Divide: "/", va.Mod: "%", va.Plus: "+",
           va.Minus: "-", va.Sll: "<<", va.Srl: ">>", va.Sla: "<<<", va.Sra: ">>>",
           va.LessThan: "<", va.GreaterThan: ">", va.LessEq: "<=", va.GreaterEq: ">=",
           va.Eq: "==", va.NotEq: "!=", va.Eql: "===", va.NotEql: "!==", va.And: "&",
           va.Xor: "^", va.Xnor: "~^", va.Or: "|", va.Land: "&&", va.Lor: "||"}
_ALWAYS_KIND = {va.AlwaysFF: "always_ff", va.AlwaysComb: "always_comb",
                va.AlwaysLatch: "always_latch", va.Always: "always"}
_CASE_KIND = {va.CasexStatement: "casex", va.CasezStatement: "casez",
              va.UniqueCaseStatement: "case", va.CaseStatement: "case"}

_VARIABLE_KINDS = ("reg", "integer", "time")


def _target(assign) -> str | None:
    """The variable a declaration assignment initialises."""
    lv = getattr(assign.left, "var", None)
    return getattr(lv, "name", None)


class Builder(SubprogramBuilder):
    def __init__(self, path: str, pre, lexer):
        self.path = path
        self.pre = pre
        self.lmap = pre.line_map
        self.text = lexer.lexer.lexdata
        self.attrs_at = lexer.attrs_at
        self.notes: list = []

    # ------------------------------------------------------------------ locations
    def loc(self, lineno, pos=None) -> ir.Loc:
        p, line = self.lmap.lookup(lineno or 1)
        col = 1
        if pos is not None:
            col = pos - (self.text.rfind("\n", 0, pos) + 1) + 1
        return ir.Loc(p, line, col)

    def attrs(self, pos) -> dict:
        if pos is None:
            return {}
        found = self.attrs_at.get(pos)
        if not found:
            return {}
        out = {}
        for _line, entries in found:
            for name, value in entries:
                if name is None:
                    continue
                out[name] = attr_value(value)
        return out

    def error(self, message, lineno, construct=None):
        p, line = self.lmap.lookup(lineno or 1)
        raise ParseError(message, path=p, line=line, construct=construct)

    # ------------------------------------------------------------------ expressions
    def expr(self, n, depth=0):
        if n is None:
            return None
        if depth > MAX_EXPR_DEPTH:
            self.error(f"expression nested deeper than {MAX_EXPR_DEPTH} levels",
                       getattr(n, "lineno", 0), "expression")
        t = type(n)
        d = depth + 1
        if t is va.Identifier:
            if n.scope is not None:
                return ("id", self._scoped(n))
            return ("id", n.name)
        if t is va.IntConst:
            try:
                return parse_number(n.value)
            except ValueError:
                self.error("malformed number", n.lineno, n.value)
        if t is va.Rvalue or t is va.Lvalue:
            return self.expr(n.var, depth)
        op = _BINOPS.get(t)
        if op is not None:
            return ("binop", op, self.expr(n.left, d), self.expr(n.right, d))
        op = _UNOPS.get(t)
        if op is not None:
            return ("unop", op, self.expr(n.right, d))
        if t is va.Pointer:
            return ("bit", self.expr(n.var, d), self.expr(n.ptr, d))
        if t is va.Partselect:
            return ("part", self.expr(n.var, d), self.expr(n.msb, d), self.expr(n.lsb, d))
        if t is hp.IPart:
            return ("ipart", self.expr(n.var, d), self.expr(n.base, d), self.expr(n.width, d),
                    n.sign)
        if t is va.Concat or t is va.LConcat:
            return ("concat", [self.expr(x, d) for x in n.list])
        if t is va.Repeat:
            return ("repl", self.expr(n.times, d), [self.expr(x, d) for x in n.value.list])
        if t is va.Cond:
            return ("cond", self.expr(n.cond, d), self.expr(n.true_value, d),
                    self.expr(n.false_value, d))
        if t is va.FloatConst:
            return ("real", float(n.value))
        if t is va.StringConst:
            return ("str", n.value)
        if t is va.FunctionCall:
            name = self._scoped(n.name) if n.name.scope is not None else n.name.name
            return ("call", name, [self.expr(x, d) for x in n.args])
        if t is va.SystemCall:
            return ("call", "$" + n.syscall, [self.expr(x, d) for x in n.args])
        if t is hp.MinTypMax:
            return self.expr(n.typ, depth)
        self.error(f"unsupported expression ({t.__name__})", getattr(n, "lineno", 0),
                   t.__name__)

    def _scoped(self, ident) -> str:
        parts = []
        for label in ident.scope.labellist:
            s = label.name
            if label.loop is not None:
                e = self.expr(label.loop)
                s += f"[{e[2]}]" if e[0] == "num" else "[" + _text(e) + "]"
            parts.append(s)
        parts.append(ident.name)
        return ".".join(parts)

    def width(self, w):
        if w is None:
            return None
        return (self.expr(w.msb), self.expr(w.lsb))

    def delay(self, spec):
        if spec is None:
            return None
        return [(self.expr(m.min), self.expr(m.typ), self.expr(m.max)) for m in spec.values]

    # ------------------------------------------------------------------ modules
    def module(self, m) -> ir.Module:
        line = m.lineno
        st = self.pre.state.at(line)
        mod = ir.Module(name=m.name, timescale=st["timescale"], celldefine=st["celldefine"],
                        default_nettype=st["default_nettype"],
                        loc=self.loc(line, getattr(m, "hz_pos", None)),
                        attrs=self.attrs(getattr(m, "hz_pos", None)))
        for decl in m.paramlist.params:
            for prm in decl.list:
                mod.params.append(self._param(prm, False, decl))
        ansi = False
        initial_values: list = []
        for port in m.portlist.ports:
            if isinstance(port, va.Ioport):
                ansi = True
                self._ansi_port(mod, port, initial_values)
            else:
                mod.port_order.append(port.name)
        self._port_first_decl = {}
        mod.items = initial_values + self.items(m.items, mod, ansi)
        for name in mod.port_order:
            if name not in mod.ports:
                self.error(f"port '{name}' of module '{m.name}' has no direction declaration",
                           line, name)
        return mod

    def _ansi_port(self, mod, io, initial_values):
        first, second = io.first, io.second
        if getattr(first, "hz_input_reg", False):
            self.error(f"invalid port declaration '{_direction(first)} reg'", first.lineno,
                       first.name)
        pos = getattr(io, "hz_pos", None)
        attr_pos = getattr(io, "hz_attrs_from", None) or pos
        kind = getattr(first, "hz_kind", None) or (
            self._net_kind(second) if second is not None else "wire")
        mod.port_order.append(first.name)
        port = mod.ports[first.name] = ir.Port(
            name=first.name, direction=_direction(first), width=self.width(first.width),
            net_type=kind, signed=bool(first.signed or (second is not None and second.signed)),
            loc=self.loc(first.lineno, pos), attrs=self.attrs(attr_pos))
        init = getattr(io, "hz_init", None)
        if init is not None:
            # ``output reg q = 1'b0``: an initial value, as ``reg q = 1'b0;`` (IEEE 1364-2005
            # 12.3.4); only a variable port has one
            if kind not in _VARIABLE_KINDS or port.direction != "output":
                self.error(f"port '{first.name}' cannot have an initial value (only an output "
                           "variable can)", first.lineno, first.name)
            initial_values.append(ir.Initial(loc=port.loc, body=(
                "assign", "=", ("id", first.name), self.expr(init), self._line(first))))

    def _param(self, prm, local, decl):
        pos = getattr(decl, "hz_pos", None)
        return ir.Param(name=prm.name, value=self.expr(prm.value), local=local,
                        width=self.width(prm.width), loc=self.loc(prm.lineno, pos),
                        signed=bool(getattr(prm, "signed", False)))

    @staticmethod
    def _net_kind(v) -> str:
        k = getattr(v, "hz_kind", None)
        if k:
            return k
        if isinstance(v, va.Reg):
            return "reg"
        if isinstance(v, va.Tri):
            return "tri"
        if isinstance(v, va.Integer):
            return "integer"
        if type(v).__name__ == "Logic":
            return "reg"
        return "wire"

    def items(self, nodes, mod, ansi=False) -> list:
        out: list = []
        for n in nodes:
            self._item(n, out, mod, ansi)
        return out

    def _item(self, n, out, mod, ansi):
        t = type(n)
        if t is va.Decl:
            self._decl(n, out, mod)
        elif t is hp.InstanceGroup:
            self._instances(n, out)
        elif t is hp.AssignGroup:
            loc = self.loc(n.lineno, n.hz_pos)
            attrs = self.attrs(n.hz_pos)
            delay = self.delay(n.delay)
            for lhs, rhs, line in n.pairs:
                out.append(ir.Assign(lhs=self.expr(lhs), rhs=self.expr(rhs), delay=delay,
                                     loc=loc if line == n.lineno else self.loc(line),
                                     attrs=attrs))
        elif isinstance(n, va.Always):
            pos = getattr(n, "hz_pos", None)
            sens, star = self._sens(n.sens_list)
            out.append(ir.Always(sens=sens, star=star, body=self.stmt(n.statement),
                                 kind=_ALWAYS_KIND.get(t, "always"),
                                 loc=self.loc(n.lineno, pos), attrs=self.attrs(pos)))
        elif t is va.Initial:
            out.append(ir.Initial(loc=self.loc(n.lineno, getattr(n, "hz_pos", None)),
                                  body=self.stmt(n.statement)))
        elif t is va.GenerateStatement:
            for x in n.items:
                self._item(x, out, mod, ansi)
        elif t is va.ForStatement:
            out.append(self._genfor(n, mod))
        elif t is va.IfStatement:
            out.append(self._genif(n, mod))
        elif t is hp.GenCaseNode:
            out.append(self._gencase(n, mod))
        elif t is va.Block:
            out.append(ir.GenBlock(name=n.scope, items=self.items(n.statements, mod),
                                   loc=self.loc(n.lineno)))
        elif t is hp.SpecifyBlock:
            for s in n.items:
                if isinstance(s, hp.SpecParams):
                    for name, value in s.params:
                        v = value.var if isinstance(value, va.Rvalue) else value
                        out.append(ir.Param(name=name, value=self.expr(v), local=True,
                                            loc=self.loc(s.lineno)))
                else:
                    out.append(self._specpath(s))
        elif t is hp.Defparams:
            for target, value in n.pairs:
                out.append(ir.Unsupported(
                    what=f"defparam {_text(self.expr(target))} = {_text(self.expr(value))}",
                    loc=self.loc(n.lineno, n.hz_pos)))
        elif t is gt.FunctionDef:
            out.append(self._function(n))
        elif t is gt.TaskDef:
            out.append(self._task(n))
        elif n is None:
            pass
        else:
            out.append(ir.Unsupported(what=type(n).__name__,
                                      loc=self.loc(getattr(n, "lineno", 0))))

    def _decl(self, decl, out, mod):
        dpos = getattr(decl, "hz_pos", None)
        attrs = self.attrs(dpos)
        variables = set()          # names declared here as variables (reg, integer, ...)
        for v in decl.list:
            t = type(v)
            pos = getattr(v, "hz_pos", dpos)
            if t in (va.Input, va.Output, va.Inout):
                if getattr(v, "hz_input_reg", False):
                    self.error(f"invalid declaration '{_direction(v)} reg'", v.lineno, v.name)
                port = mod.ports.get(v.name)
                if port is None:
                    if v.name not in mod.port_order:
                        self.notes.append((self.loc(v.lineno, pos),
                                           f"'{v.name}' is declared {_direction(v)} but is not "
                                           f"in the port list of '{mod.name}'"))
                        mod.port_order.append(v.name)
                    port = mod.ports[v.name] = ir.Port(name=v.name, direction=_direction(v))
                port.direction = _direction(v)
                port.width = self.width(v.width) or port.width
                port.signed = port.signed or bool(v.signed)
                port.loc = self.loc(v.lineno, pos)
                if getattr(v, "hz_kind", None) == "integer":
                    port.net_type = "integer"           # output integer n;
                if attrs:
                    port.attrs.update(attrs)
            elif t is va.Parameter or t is va.Localparam:
                out.append(self._param(v, t is va.Localparam, decl))
            elif t is va.Supply:
                name = v.name
                kind = "supply1" if v.value.value == "1" else "supply0"
                if name in mod.ports:
                    mod.ports[name].net_type = kind
                else:
                    out.append(ir.Net(name=name, kind=kind, width=self.width(v.width),
                                      loc=self.loc(v.lineno, pos), attrs=dict(attrs)))
            elif t is va.Assign and _target(v) in variables:
                # ``reg x = v;`` is an initial value (IEEE 1364-2005 6.2.1), not a driver;
                # at the declaration's keyword, the statement at the name's line
                out.append(ir.Initial(loc=self.loc(decl.lineno, dpos), body=(
                    "assign", "=", self.expr(v.left), self.expr(v.right), self._line(v))))
            elif t is va.Assign:
                out.append(ir.Assign(lhs=self.expr(v.left), rhs=self.expr(v.right),
                                     delay=self.delay(v.ldelay) if isinstance(
                                         v.ldelay, hp.DelaySpec) else None,
                                     loc=self.loc(decl.lineno, dpos), attrs=dict(attrs)))
            elif t is va.Genvar:
                continue
            elif t is va.Real:
                out.append(ir.Unsupported(what=f"real variable {v.name}",
                                          loc=self.loc(v.lineno, pos)))
            elif isinstance(v, va.Variable):
                kind = self._net_kind(v)
                if kind in _VARIABLE_KINDS:
                    variables.add(v.name)
                width = self.width(v.width)
                signed = bool(v.signed)
                if kind == "integer":
                    signed = True
                port = mod.ports.get(v.name)
                if port is not None and v.name in mod.port_order:
                    port.net_type = kind
                    port.width = port.width or width
                    port.signed = port.signed or signed
                    if attrs:
                        port.attrs.update(attrs)
                    continue
                array = self._dims(v)
                nd = getattr(v, "hz_delay", None)
                out.append(ir.Net(name=v.name, kind=kind, width=width, signed=signed,
                                  array=array, loc=self.loc(v.lineno, pos), attrs=dict(attrs),
                                  delay=self.delay(nd) if isinstance(nd, hp.DelaySpec)
                                  else None))
                value = getattr(v, "value", None)      # integer i = 5;
                if value is not None:
                    value = value.var if isinstance(value, va.Rvalue) else value
                    out.append(ir.Initial(loc=self.loc(v.lineno, pos), body=(
                        "assign", "=", ("id", v.name), self.expr(value), self._line(value))))
            else:
                out.append(ir.Unsupported(what=t.__name__, loc=self.loc(v.lineno, pos)))

    def _instances(self, g, out):
        attrs = self.attrs(g.hz_pos)
        cell = g.cell
        delay = self.delay(g.delay)
        params = []
        if g.params:
            params = [(a.paramname, self.expr(a.argname)) for a in g.params]
        if cell in GATE_PRIMITIVES and delay is not None:
            params = []                 # on a gate primitive a positional #(...) is a delay
        for name, ports, array, line, pos in g.bodies:
            if len(ports) == 1 and ports[0].portname is None and ports[0].argname is None:
                ports = []              # "u ()": no connections
            conns = []
            for pa in ports:
                conns.append((pa.portname, self.expr(pa.argname)
                              if pa.argname is not None else None))
            out.append(ir.Instance(
                cell=cell, name=name or "", connections=conns, params=list(params),
                delay=delay, array=self.width(array),
                loc=self.loc(line, pos if pos is not None else g.hz_pos), attrs=dict(attrs)))

    # ------------------------------------------------------------------ generate
    def _block_items(self, st, mod):
        if isinstance(st, va.Block):
            return st.scope, self.items(st.statements, mod)
        if st is None:
            return None, []
        return None, self.items([st], mod)

    def _genfor(self, n, mod) -> ir.GenFor:
        if not isinstance(n.pre, va.BlockingSubstitution) or not isinstance(
                n.post, va.BlockingSubstitution):
            self.error("generate for loop needs an initial assignment and a step",
                       n.lineno, "for")
        var = self.expr(n.pre.left)
        if var[0] != "id":
            self.error("generate for loop variable must be a plain name", n.lineno, "for")
        name, items = self._block_items(n.statement, mod)
        return ir.GenFor(var=var[1], init=self.expr(n.pre.right), cond=self.expr(n.cond),
                         step=self.expr(n.post.right), name=name, items=items,
                         loc=self.loc(n.lineno, getattr(n, "hz_pos", None)))

    def _genif(self, n, mod) -> ir.GenIf:
        name, then_items = self._block_items(n.true_statement, mod)
        else_name, else_items = None, []
        if isinstance(n.false_statement, va.IfStatement):
            else_items = [self._genif(n.false_statement, mod)]
        elif n.false_statement is not None:
            else_name, else_items = self._block_items(n.false_statement, mod)
        return ir.GenIf(cond=self.expr(n.cond), then_items=then_items, else_items=else_items,
                        name=name, else_name=else_name,
                        loc=self.loc(n.lineno, getattr(n, "hz_pos", None)))

    def _gencase(self, n, mod) -> ir.GenCase:
        cases = []
        for labels, body in n.cases:
            name, items = self._block_items(body, mod)
            cases.append(([self.expr(x) for x in labels] if labels is not None else None,
                          name, items))
        return ir.GenCase(expr=self.expr(n.expr), cases=cases, loc=self.loc(n.lineno, n.hz_pos))

    # ------------------------------------------------------------------ specify
    def _specpath(self, s) -> ir.SpecifyPath:
        return ir.SpecifyPath(
            sources=[self.expr(x) for x in s.sources],
            destinations=[self.expr(x) for x in s.dests],
            delay=[(self.expr(m.min), self.expr(m.typ), self.expr(m.max)) for m in s.delay],
            full=bool(s.full), edge=s.edge, polarity=s.polarity,
            condition=self.expr(s.condition), loc=self.loc(s.lineno, s.hz_pos))

    # ------------------------------------------------------------------ statements
    def _sens(self, sl):
        sens, star = [], False
        if sl is None:
            return sens, star
        for s in sl.list:
            if s.type == "all":
                star = True
            else:
                sens.append((s.type, self.expr(s.sig)))
        return sens, star

    def stmt(self, s):
        if s is None:
            return None
        t = type(s)
        if t is va.Block:
            stmts, decls = [], []
            for x in s.statements:
                if type(x) is va.Decl:
                    decls.extend(self._local_decls(x))
                else:
                    stmts.append(self.stmt(x))
            return ("block", stmts, s.scope, decls)
        if t is va.ForStatement:
            return ("for", self.stmt(s.pre), self.expr(s.cond), self.stmt(s.post),
                    self.stmt(s.statement), self._line(s))
        if t is va.WhileStatement:
            return ("while", self.expr(s.cond), self.stmt(s.statement), self._line(s))
        if t is gt.RepeatStatement:
            return ("repeat", self.expr(s.count), self.stmt(s.statement), self._line(s))
        if t is gt.TaskEnable:
            name = self._scoped(s.name) if s.name.scope is not None else s.name.name
            return ("call", name, [self.expr(x) for x in s.args], self._line(s))
        if t is va.SingleStatement and type(s.statement) is va.SystemCall:
            c = s.statement
            return ("call", "$" + c.syscall, [self.expr(x) for x in c.args], self._line(s))
        if t is va.IfStatement:
            return ("if", self.expr(s.cond), self.stmt(s.true_statement),
                    self.stmt(s.false_statement))
        if t is va.BlockingSubstitution:
            return ("assign", "=", self.expr(s.left), self.expr(s.right), self._line(s))
        if t is va.NonblockingSubstitution:
            return ("assign", "<=", self.expr(s.left), self.expr(s.right), self._line(s))
        if t in _CASE_KIND:
            cases = []
            for c in s.caselist:
                labels = [self.expr(x) for x in c.cond] if c.cond is not None else None
                cases.append((labels, self.stmt(c.statement)))
            return ("case", _CASE_KIND[t], self.expr(s.comp), cases)
        if t is va.EventStatement and not s.senslist.list:
            return ("block", [], None, [])        # a lone ';'
        what = {va.ForeverStatement: "forever loop", va.WaitStatement: "wait statement",
                va.EventStatement: "event control", va.ParallelBlock: "fork/join block",
                va.SingleStatement: "delay or disable statement",
                va.Decl: "declaration in a block"}.get(t, t.__name__)
        return ("other", what, self._line(s))

    def _line(self, s) -> int:
        return self.lmap.lookup(getattr(s, "lineno", 1) or 1)[1]

    # ------------------------------------------------------------------ UDPs
    def primitive(self, pd) -> ir.Primitive:
        names = []
        outputs, inputs, regs = set(), set(), set()
        initial = None
        for port in pd.portlist.ports:
            if isinstance(port, va.Ioport):
                names.append(port.first.name)
                (outputs if isinstance(port.first, va.Output) else inputs).add(port.first.name)
                if isinstance(port.second, va.Reg):
                    regs.add(port.first.name)
            else:
                names.append(port.name)
        for item in pd.items:
            if isinstance(item, hp.UdpInitial):
                initial = _udp_level(self.expr(item.value))
                if initial is None:
                    self.error("UDP initial value must be 0, 1 or x", item.lineno, item.name)
                continue
            for v in item.list:
                if isinstance(v, va.Output):
                    outputs.add(v.name)
                elif isinstance(v, va.Input):
                    inputs.add(v.name)
                elif isinstance(v, va.Reg):
                    regs.add(v.name)
        if not names:
            self.error(f"primitive '{pd.name}' has no ports", pd.lineno, pd.name)
        out_name = names[0]
        if out_name not in outputs:
            self.error(f"the first port of primitive '{pd.name}' must be its output",
                       pd.lineno, out_name)
        sequential = out_name in regs
        prim = ir.Primitive(name=pd.name, output=out_name, inputs=names[1:],
                            sequential=sequential, initial=initial,
                            timescale=self.pre.state.at(pd.lineno)["timescale"],
                            loc=self.loc(pd.lineno, pd.hz_pos))
        prim.rows = self._udp_rows(pd, len(names) - 1, sequential)
        return prim

    def _udp_rows(self, pd, n_inputs, sequential):
        raw = pd.table
        body_start = len("table")
        body = raw[body_start:len(raw) - len("endtable")]
        # blank out comments, keeping newlines so row lines stay right
        body = re.sub(r"//[^\n]*|/\*[\s\S]*?\*/",
                      lambda m: re.sub(r"[^\n]", " ", m.group()), body)
        rows = []
        offset = 0
        for chunk in body.split(";"):
            stripped = chunk.strip()
            lead = len(chunk) - len(chunk.lstrip())
            line = pd.table_line + body[:offset + lead].count("\n")
            offset += len(chunk) + 1
            if not stripped:
                continue
            fields = stripped.split(":")
            want = 3 if sequential else 2
            if len(fields) != want:
                self.error(f"UDP table row needs {want} fields separated by ':'", line,
                           stripped)
            syms = []
            for f in fields:
                s = re.sub(r"\s+", "", f)
                toks = re.findall(r"\([01xX?bB]{2}\)|[01xX?bBrRfFpPnN*\-]", s)
                if "".join(toks) != s:
                    self.error("bad symbol in UDP table row", line, stripped)
                syms.append([x.lower() for x in toks])
            ins = syms[0]
            if len(ins) != n_inputs:
                self.error(f"UDP table row has {len(ins)} input values, primitive "
                           f"'{pd.name}' has {n_inputs} inputs", line, stripped)
            state = None
            if sequential:
                if len(syms[1]) != 1:
                    self.error("UDP table row: one current-state value expected", line,
                               stripped)
                state = syms[1][0]
            if len(syms[-1]) != 1:
                self.error("UDP table row: one output value expected", line, stripped)
            rows.append({"inputs": ins, "state": state, "output": syms[-1][0],
                         "line": self.lmap.lookup(line)[1]})
        return rows


def build_source(path: str, ast, pre, lexer) -> tuple[list, list, list]:
    """Modules, primitives and notes of one parsed file."""
    b = Builder(path, pre, lexer)
    modules, prims = [], []
    for d in ast.description.definitions:
        if isinstance(d, va.ModuleDef):
            modules.append(b.module(d))
        elif isinstance(d, hp.PrimitiveDef):
            prims.append(b.primitive(d))
    return modules, prims, b.notes
