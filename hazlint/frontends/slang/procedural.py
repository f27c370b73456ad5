"""pyslang syntax -> IR for what is not a plain declaration: always-block sensitivity and
statements, specify blocks, user-defined primitives.

A mixin of :class:`~hazlint.frontends.slang.build.Builder` (it uses the builder's ``expr``,
``at`` locator and ``error``). Statements become the tuples listed in
:mod:`hazlint.ir`; a statement with no gate meaning is ``("other", what, line)``
with the pyverilog front end's wording for the same construct.
"""
from __future__ import annotations

import re

from pyslang import parsing, syntax

from ... import ir
from ..literals import udp_level
from .exprs import COMPOUND_STEP, items, kind_words
from .subprograms import LOCAL_DECLS

SK = syntax.SyntaxKind
TK = parsing.TokenKind

_CASE = {"case": "case", "casex": "casex", "casez": "casez"}
_EDGES = {TK.PosEdgeKeyword: "posedge", TK.NegEdgeKeyword: "negedge"}
_DELAY_OR_DISABLE = "delay or disable statement"
_OTHER = {
    SK.ForeverStatement: "forever loop",
    SK.DoWhileStatement: "do-while loop", SK.ForeachLoopStatement: "foreach loop",
    SK.WaitStatement: "wait statement", SK.ParallelBlockStatement: "fork/join block",
    SK.DisableStatement: _DELAY_OR_DISABLE,
}
_UDP_SYMBOLS = re.compile(r"\([01xX?bB]{2}\)|[01xX?bBrRfFpPnN*\-]")
_SPECIFY_SKIPPED = frozenset((SK.SystemTimingCheck, SK.PulseStyleDeclaration,
                              SK.EmptyMember))


class Procedural:
    # ------------------------------------------------------------------ always
    def sensitivity(self, st):
        """(sens, star, body statement) of an always block's statement."""
        if st.kind != SK.TimingControlStatement:
            return [], False, st
        tc = st.timingControl
        k = tc.kind
        if k == SK.ImplicitEventControl:
            return [], True, st.statement
        if k == SK.EventControlWithExpression:
            sens: list = []
            self._events(tc.expr, sens)
            return sens, False, st.statement
        if k == SK.EventControl:
            return [("level", self.expr(tc.eventName))], False, st.statement
        return [], False, st

    def _events(self, e, out):
        k = e.kind
        if k == SK.ParenthesizedEventExpression:
            self._events(e.expr, out)
        elif k == SK.BinaryEventExpression:
            self._events(e.left, out)
            self._events(e.right, out)
        elif k == SK.SignalEventExpression:
            if e.iffClause is not None:
                self.error("'iff' in an event control is not supported", e, "iff")
            edge = _EDGES.get(e.edge.kind)
            if edge is None and e.edge.rawText:
                self.error(f"'{e.edge.rawText}' event is not supported", e, e.edge.rawText)
            out.append((edge or "level", self.expr(e.expr)))
        else:
            self.error("unsupported event expression", e, kind_words(k))

    # ------------------------------------------------------------------ statements
    def stmt(self, s):
        if s is None:
            return None
        k = s.kind
        if k == SK.SequentialBlockStatement:
            return self._block(s)
        if k == SK.ExpressionStatement:
            return self._expr_stmt(s.expr, s)
        if k == SK.ConditionalStatement:
            ec = s.elseClause
            return ("if", self.expr(self.x.predicate(s.predicate)), self.stmt(s.statement),
                    self.stmt(ec.clause) if ec is not None else None)
        if k == SK.CaseStatement:
            return self._case(s)
        if k == SK.ForLoopStatement:
            return self._for(s)
        if k == SK.LoopStatement:
            line = self._line(s)
            if s.repeatOrWhile.kind == TK.RepeatKeyword:
                return ("repeat", self.expr(s.expr), self.stmt(s.statement), line)
            return ("while", self.expr(s.expr), self.stmt(s.statement), line)
        if k == SK.TimingControlStatement:
            if s.timingControl.kind in (SK.DelayControl, SK.Delay3):
                if s.statement.kind == SK.EmptyStatement:
                    return ("other", _DELAY_OR_DISABLE, self._line(s))      # "#5;"
                return self.stmt(s.statement)       # "#d x = y": the delay has no gate
            return ("other", "event control", self._line(s))
        if k == SK.EmptyStatement:
            return ("block", [], None, [])
        what = _OTHER.get(k)
        return ("other", what or kind_words(k), self._line(s))

    def _block(self, s):
        """``begin [: name] declarations statements end``."""
        name = None
        if s.blockName is not None:
            name = s.blockName.name.valueText
        elif s.label is not None:
            name = s.label.name.valueText           # SV "name: begin"
        stmts, decls = [], []
        for x in s.items:
            if x.kind in LOCAL_DECLS:
                decls.extend(self.local_decls(x))
            else:
                stmts.append(self.stmt(x))
        return ("block", stmts, name, decls)

    def _for(self, s):
        """``for (init; cond; step) body``; SystemVerilog loop variables
        (``for (int i = 0; ...)``) become an unnamed block declaring them around the loop."""
        line = self._line(s)
        inits, decls = [], []
        for x in items(s.initializers):
            if x.kind == SK.ForVariableDeclaration:
                d = x.declarator
                if x.type is None:
                    self.error("a loop variable needs a type", x, d.name.valueText)
                kind, width, signed = self.data_type(x.type, x)
                kind = kind or "reg"
                decls.append(ir.Net(name=d.name.valueText, kind=kind, width=width,
                                    signed=signed or kind == "integer",
                                    loc=self.at.loc(d.name)))
                if d.initializer is None:
                    self.error("a loop variable needs an initial value", x, d.name.valueText)
                inits.append(("assign", "=", ("id", d.name.valueText),
                              self.expr(d.initializer.expr), self.at.line(d.name)))
            else:
                inits.append(self._step(x, s))
        steps = [self._step(x, s) for x in items(s.steps)]
        if len(inits) > 1 or len(steps) > 1:
            self.error("a for loop with several initialisations or steps is not supported", s,
                       "for")
        loop = ("for", inits[0] if inits else None, self.expr(s.stopExpr),
                steps[0] if steps else None, self.stmt(s.statement), line)
        if decls:
            return ("block", [loop], None, decls)
        return loop

    def _step(self, e, s):
        """A for loop's initialisation or step as an ``("assign", "=", ...)`` statement."""
        st = self._expr_stmt(e, e)
        if st[0] != "assign" or st[1] != "=":
            self.error("a for loop's initialisation and step must be assignments", e,
                       str(e).strip())
        return st

    def _line(self, node) -> int:
        return self.at.line(node.getFirstToken())

    def _expr_stmt(self, e, s):
        k = e.kind
        if k == SK.AssignmentExpression or k == SK.NonblockingAssignmentExpression:
            op = "=" if k == SK.AssignmentExpression else "<="
            rhs = e.right
            if rhs.kind == SK.TimingControlExpression:
                rhs = rhs.expr                  # "x = #d y": the delay has no gate
            return ("assign", op, self.expr(e.left), self.expr(rhs), self._line(s))
        op = COMPOUND_STEP.get(k)
        if op is not None:
            lhs = self.expr(e.left)
            return ("assign", "=", lhs, ("binop", op, lhs, self.expr(e.right)), self._line(s))
        if k in (SK.PostincrementExpression, SK.PostdecrementExpression,
                 SK.UnaryPreincrementExpression, SK.UnaryPredecrementExpression):
            target = e.operand
            lhs = self.expr(target)
            op = "+" if k in (SK.PostincrementExpression, SK.UnaryPreincrementExpression) \
                else "-"
            return ("assign", "=", lhs, ("binop", op, lhs, ("num", None, 1, 0, True)),
                    self._line(s))
        if k in (SK.InvocationExpression, SK.SystemName, SK.IdentifierName, SK.ScopedName):
            # a task enable or system task: ``t;``, ``t(a, b);``, ``$display(...);``
            call = self.expr(e) if k == SK.InvocationExpression else ("call", (
                e.systemIdentifier.rawText if k == SK.SystemName
                else self.x.scoped_name(e)), [])
            return ("call", call[1], call[2], self._line(s))
        return ("other", kind_words(k), self._line(s))

    def _case(self, s):
        word = _CASE.get(s.caseKeyword.rawText)
        if word is None or s.matchesOrInside.rawText:
            self.error(f"unsupported case statement '{s.caseKeyword.rawText}'", s,
                       s.caseKeyword.rawText)
        cases = []
        for c in s.items:
            if c.kind == SK.DefaultCaseItem:
                cases.append((None, self.stmt(c.clause)))
            elif c.kind == SK.StandardCaseItem:
                cases.append(([self.expr(x) for x in items(c.expressions)],
                              self.stmt(c.clause)))
            else:
                self.error("unsupported case item", c, kind_words(c.kind))
        return ("case", word, self.expr(s.expr), cases)

    # ------------------------------------------------------------------ specify
    def specify(self, n, out, mod):
        for s in n.items:
            k = s.kind
            if k == SK.SpecparamDeclaration:
                loc = self.at.loc_line_only(s.keyword)
                for d in items(s.declarators):
                    if d.value2 is not None:
                        continue                    # PATHPULSE$ (reject, error) limits
                    out.append(ir.Param(name=d.name.valueText, value=self.expr(d.value1),
                                        local=True, loc=loc))
            elif k == SK.PathDeclaration:
                out.append(self._path(s, None))
            elif k == SK.ConditionalPathDeclaration:
                out.append(self._path(s.path, self.expr(s.predicate), s))
            elif k == SK.IfNonePathDeclaration:
                out.append(self._path(s.path, None, s))
            elif k in _SPECIFY_SKIPPED:
                continue
            else:
                out.append(ir.Unsupported(what=kind_words(k),
                                          loc=self.at.loc(s.getFirstToken())))

    def _path(self, p, condition, outer=None) -> ir.SpecifyPath:
        desc = p.desc
        suffix = desc.suffix
        polarity = None
        if desc.polarityOperator.rawText:
            polarity = desc.polarityOperator.rawText
        if suffix.kind == SK.EdgeSensitivePathSuffix:
            op = suffix.polarityOperator.rawText
            if op and op[0] in "+-":
                polarity = op[0]
        edge = _EDGES.get(desc.edgeIdentifier.kind)
        first = (outer if outer is not None else p).getFirstToken()
        return ir.SpecifyPath(
            sources=[self.expr(x) for x in items(desc.inputs)],
            destinations=[self.expr(x) for x in items(suffix.outputs)],
            delay=[self.x.min_typ_max(v) for v in items(p.delays)],
            full=desc.pathOperator.rawText == "*>", edge=edge, polarity=polarity,
            condition=condition, loc=self.at.loc(first))

    # ------------------------------------------------------------------ UDPs
    def primitive(self, u) -> ir.Primitive:
        name = u.name.valueText
        names: list = []
        outputs, inputs, regs = set(), set(), set()
        initial = None
        body = u.body
        pl = u.portList
        decls = list(items(body.portDecls))
        if pl.kind == SK.AnsiUdpPortList:
            decls = list(items(pl.ports)) + decls
        else:
            for p in items(pl.ports):
                names.append(p.identifier.valueText)
        for d in decls:
            if d.kind == SK.UdpOutputPortDecl:
                pname = d.name.valueText
                outputs.add(pname)
                if d.reg.rawText:
                    regs.add(pname)
                if d.initializer is not None:
                    initial = udp_level(self.expr(d.initializer.expr))
                if pl.kind == SK.AnsiUdpPortList:
                    names.append(pname)
            elif d.kind == SK.UdpInputPortDecl:
                for x in items(d.names):
                    inputs.add(x.identifier.valueText)
                    if pl.kind == SK.AnsiUdpPortList:
                        names.append(x.identifier.valueText)
            elif d.kind == SK.DataDeclaration:
                for x in items(d.declarators):
                    regs.add(x.name.valueText)
        if body.initialStmt is not None:
            initial = udp_level(self.expr(body.initialStmt.value))
            if initial is None:
                self.error("UDP initial value must be 0, 1 or x", body.initialStmt, name)
        if not names:
            self.error(f"primitive '{name}' has no ports", u.primitive, name)
        out_name = names[0]
        if out_name not in outputs:
            self.error(f"the first port of primitive '{name}' must be its output",
                       u.primitive, out_name)
        sequential = out_name in regs
        st = self._def_state(u.name)
        prim = ir.Primitive(name=name, output=out_name, inputs=names[1:], sequential=sequential,
                            initial=initial, timescale=st["timescale"],
                            loc=self.at.loc(u.primitive))
        prim.rows = [self._udp_row(e, len(names) - 1, sequential, name)
                     for e in body.entries]
        return prim

    def _udp_row(self, e, n_inputs, sequential, name) -> dict:
        ins = _UDP_SYMBOLS.findall("".join(_field_text(f) for f in e.inputs).replace(" ", ""))
        ins = [x.lower() for x in ins]
        text = " ".join(_field_text(f) for f in e.inputs)
        if len(ins) != n_inputs:
            self.error(f"UDP table row has {len(ins)} input values, primitive '{name}' has "
                       f"{n_inputs} inputs", e, text)
        state = None
        if sequential:
            if e.current is None:
                self.error("UDP table row needs 3 fields separated by ':'", e, text)
            state = _field_text(e.current).lower()
        elif e.current is not None:
            self.error("UDP table row needs 2 fields separated by ':'", e, text)
        if e.next is None:
            self.error("UDP table row: one output value expected", e, text)
        return {"inputs": ins, "state": state, "output": _field_text(e.next).lower(),
                "line": self._line(e)}


def _field_text(f) -> str:
    """A UDP table field's symbols as written (``(01)`` for an edge), without comments."""
    if f.kind == SK.UdpEdgeField:
        second = f.second.rawText if f.second is not None else ""
        return "(" + f.first.rawText + second + ")"
    return f.field.rawText
