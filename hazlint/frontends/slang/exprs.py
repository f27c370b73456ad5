"""pyslang expression syntax -> IR expression tuples (see :mod:`hazlint.ir`).

The mapping is by syntax kind and gives the tuples the pyverilog front end gives for the same
source text: parentheses disappear, ``^~`` is written ``~^``, a ``min:typ:max`` expression keeps
its typical value, literals go through :func:`hazlint.frontends.literals.parse_number` on their
source text. A construct with no IR form (an unbased ``'1``, a cast, a streaming operator ...)
is a :class:`~hazlint.errors.ParseError` at its ``file:line``.
"""
from __future__ import annotations

from pyslang import syntax

from ..literals import expr_text, parse_number

SK = syntax.SyntaxKind
Node = syntax.SyntaxNode

MAX_EXPR_DEPTH = 500        # the same bound as the pyverilog front end

UNOPS = {
    SK.UnaryMinusExpression: "-", SK.UnaryPlusExpression: "+",
    SK.UnaryLogicalNotExpression: "!", SK.UnaryBitwiseNotExpression: "~",
    SK.UnaryBitwiseAndExpression: "&", SK.UnaryBitwiseNandExpression: "~&",
    SK.UnaryBitwiseOrExpression: "|", SK.UnaryBitwiseNorExpression: "~|",
    SK.UnaryBitwiseXorExpression: "^", SK.UnaryBitwiseXnorExpression: "~^",
}
BINOPS = {
    SK.PowerExpression: "**", SK.MultiplyExpression: "*", SK.DivideExpression: "/",
    SK.ModExpression: "%", SK.AddExpression: "+", SK.SubtractExpression: "-",
    SK.LogicalShiftLeftExpression: "<<", SK.LogicalShiftRightExpression: ">>",
    SK.ArithmeticShiftLeftExpression: "<<<", SK.ArithmeticShiftRightExpression: ">>>",
    SK.LessThanExpression: "<", SK.GreaterThanExpression: ">",
    SK.LessThanEqualExpression: "<=", SK.GreaterThanEqualExpression: ">=",
    SK.EqualityExpression: "==", SK.InequalityExpression: "!=",
    SK.CaseEqualityExpression: "===", SK.CaseInequalityExpression: "!==",
    SK.BinaryAndExpression: "&", SK.BinaryXorExpression: "^", SK.BinaryXnorExpression: "~^",
    SK.BinaryOrExpression: "|", SK.LogicalAndExpression: "&&", SK.LogicalOrExpression: "||",
}
# SV compound assignments in a generate loop step: ``i += 1`` is ``i = i + 1``
COMPOUND_STEP = {
    SK.AddAssignmentExpression: "+", SK.SubtractAssignmentExpression: "-",
    SK.MultiplyAssignmentExpression: "*", SK.DivideAssignmentExpression: "/",
    SK.LogicalLeftShiftAssignmentExpression: "<<", SK.LogicalRightShiftAssignmentExpression: ">>",
}
# connection and argument wrappers slang puts around a plain expression
_WRAPPERS = frozenset((SK.SimplePropertyExpr, SK.SimpleSequenceExpr))
_WHAT = {
    SK.UnbasedUnsizedLiteralExpression: "unbased unsized literal",
    SK.TimeLiteralExpression: "time literal", SK.CastExpression: "cast",
    SK.SignedCastExpression: "signed cast",
    SK.StreamingConcatenationExpression: "streaming operator",
    SK.AssignmentPatternExpression: "assignment pattern", SK.InsideExpression: "inside operator",
    SK.MemberAccessExpression: "member access", SK.WildcardEqualityExpression: "==? operator",
    SK.WildcardInequalityExpression: "!=? operator", SK.NullLiteralExpression: "null",
}


class ExprMapper:
    """Expression syntax -> IR tuples. ``error(message, token_or_node, construct)`` raises."""

    def __init__(self, error):
        self.error = error

    def expr(self, n, depth: int = 0):
        if n is None:
            return None
        if depth > MAX_EXPR_DEPTH:
            self.error(f"expression nested deeper than {MAX_EXPR_DEPTH} levels", n, "expression")
        k = n.kind
        d = depth + 1
        if k == SK.IdentifierName:
            return ("id", n.identifier.valueText)
        if k == SK.IdentifierSelectName:
            return self._selects(("id", n.identifier.valueText), n.selectors, d)
        if k == SK.IntegerLiteralExpression:
            return self._number(n.literal.rawText, n)
        if k == SK.IntegerVectorExpression:
            return self._number(n.size.rawText + n.base.rawText + n.value.rawText, n)
        op = BINOPS.get(k)
        if op is not None:
            return ("binop", op, self.expr(n.left, d), self.expr(n.right, d))
        op = UNOPS.get(k)
        if op is not None:
            return ("unop", op, self.expr(n.operand, d))
        if k == SK.ParenthesizedExpression:
            return self.expr(n.expression, depth)
        if k in _WRAPPERS:
            return self.expr(n.expr, depth)
        if k == SK.ConditionalExpression:
            return ("cond", self.expr(self.predicate(n.predicate), d), self.expr(n.left, d),
                    self.expr(n.right, d))
        if k == SK.ConcatenationExpression:
            return ("concat", [self.expr(x, d) for x in items(n.expressions)])
        if k == SK.MultipleConcatenationExpression:
            return ("repl", self.expr(n.expression, d),
                    [self.expr(x, d) for x in items(n.concatenation.expressions)])
        if k == SK.ElementSelectExpression:
            return self._select(self.expr(n.left, d), n.select, d)
        if k == SK.ScopedName:
            return ("id", self.scoped_name(n))
        if k == SK.RealLiteralExpression:
            return ("real", float(n.literal.rawText.replace("_", "")))
        if k == SK.StringLiteralExpression:
            return ("str", n.literal.rawText[1:-1])      # as written, escapes kept
        if k == SK.InvocationExpression:
            return self._call(n, d)
        if k == SK.SystemName:
            return ("call", n.systemIdentifier.rawText, [])
        if k == SK.MinTypMaxExpression:
            return self.expr(n.typ, depth)
        what = _WHAT.get(k, kind_words(k))
        self.error(f"unsupported expression ({what})", n, what)

    def min_typ_max(self, n):
        """A delay value: ``(min, typ, max)`` expressions (the same three for a plain value)."""
        if n.kind == SK.ParenthesizedExpression and n.expression.kind == SK.MinTypMaxExpression:
            n = n.expression
        if n.kind == SK.MinTypMaxExpression:
            return (self.expr(n.min), self.expr(n.typ), self.expr(n.max))
        e = self.expr(n)
        return (e, e, e)

    @staticmethod
    def predicate(p):
        """The condition of a ``ConditionalPredicate`` (one plain expression in Verilog)."""
        conds = items(p.conditions)
        return conds[0].expr

    def _number(self, text: str, n):
        try:
            return parse_number(text)
        except ValueError:
            self.error("malformed number", n, text)

    def _selects(self, base, selectors, d):
        e = base
        for sel in selectors:
            e = self._select(e, sel, d)
        return e

    def _select(self, e, sel, d):
        s = sel.selector
        if s is None:
            self.error("empty select", sel, "[]")
        k = s.kind
        if k == SK.BitSelect:
            return ("bit", e, self.expr(s.expr, d))
        if k == SK.SimpleRangeSelect:
            return ("part", e, self.expr(s.left, d), self.expr(s.right, d))
        if k == SK.AscendingRangeSelect:
            return ("ipart", e, self.expr(s.left, d), self.expr(s.right, d), "+")
        if k == SK.DescendingRangeSelect:
            return ("ipart", e, self.expr(s.left, d), self.expr(s.right, d), "-")
        self.error("unsupported select", sel, kind_words(k))

    def scoped_name(self, n) -> str:
        """``a.b[1].c`` as one dotted name (the pyverilog front end's form of a scoped name)."""
        k = n.kind
        if k == SK.ScopedName:
            return self.scoped_name(n.left) + "." + self.scoped_name(n.right)
        if k == SK.IdentifierName:
            return n.identifier.valueText
        if k == SK.IdentifierSelectName:
            out = n.identifier.valueText
            for sel in n.selectors:
                s = sel.selector
                e = self.expr(s.expr) if s is not None and s.kind == SK.BitSelect else None
                if e is None:
                    self.error("unsupported select in a hierarchical name", sel, str(sel).strip())
                out += f"[{e[2]}]" if e[0] == "num" else "[" + expr_text(e) + "]"
            return out
        self.error("unsupported hierarchical name", n, str(n).strip())

    def _call(self, n, d):
        left = n.left
        if left.kind == SK.SystemName:
            name = left.systemIdentifier.rawText
        elif left.kind == SK.IdentifierName:
            name = left.identifier.valueText
        elif left.kind == SK.ScopedName:
            name = self.scoped_name(left)
        else:
            self.error("unsupported call", n, str(left).strip())
        args = []
        if n.arguments is not None:
            for a in items(n.arguments.parameters):
                if a.kind != SK.OrderedArgument:
                    self.error("named arguments are not supported", a, str(a).strip())
                args.append(self.expr(a.expr, d))
        return ("call", name, args)


def items(lst) -> list:
    """The nodes of a separated syntax list (the separators dropped)."""
    return [x for x in lst if isinstance(x, Node)]


def kind_words(k) -> str:
    name = str(k).rsplit(".", 1)[-1]
    out = []
    for ch in name:
        if ch.isupper() and out:
            out.append(" ")
        out.append(ch.lower())
    return "".join(out)
