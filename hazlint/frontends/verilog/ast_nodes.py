"""AST nodes of our own that the grammar builds beside pyverilog's (plain objects; build_ir reads
them), and the syntax error the reader maps to file:line."""
from __future__ import annotations


class SyntaxErr(Exception):
    """A syntax error in preprocessed text (the reader maps it to file:line)."""

    def __init__(self, message, lineno, lexpos=None, construct=None):
        super().__init__(message)
        self.message = message
        self.lineno = lineno
        self.lexpos = lexpos
        self.construct = construct


# ---------------------------------------------------------------------------------------------
# AST nodes of our own (plain objects; build_ir reads them)

class DelaySpec:
    """``#...`` delay: ``values`` is a list of (min, typ, max) pyverilog expressions;
    ``plain`` is true for a parenthesised list of plain values (which, on a module instance,
    may as well be positional parameter overrides)."""

    __slots__ = ("values", "plain", "lineno")

    def __init__(self, values, plain, lineno):
        self.values = values
        self.plain = plain
        self.lineno = lineno


class MinTypMax:
    __slots__ = ("min", "typ", "max", "lineno")

    def __init__(self, mn, typ, mx, lineno=0):
        self.min, self.typ, self.max, self.lineno = mn, typ, mx, lineno


class IPart:
    """Indexed part select ``var[base +: width]`` / ``var[base -: width]``."""

    def __init__(self, var, base, width, sign, lineno=0):
        self.var, self.base, self.width, self.sign, self.lineno = var, base, width, sign, lineno


class InstanceGroup:
    """One instantiation statement: ``cell #(...) name1 (...), name2 (...);``.

    ``params`` is a list of pyverilog ``ParamArg`` (named or positional) or None; ``delay`` a
    :class:`DelaySpec` or None; ``bodies`` a list of (name, ports, array, lineno, lexpos)."""

    def __init__(self, cell, params, delay, bodies, lineno, pos):
        self.cell, self.params, self.delay, self.bodies = cell, params, delay, bodies
        self.lineno, self.hz_pos = lineno, pos


class AssignGroup:
    def __init__(self, pairs, delay, lineno, pos):
        self.pairs, self.delay, self.lineno, self.hz_pos = pairs, delay, lineno, pos


class PrimitiveDef:
    def __init__(self, name, portlist, items, table, table_line, lineno, pos, end_lineno):
        self.name, self.portlist, self.items = name, portlist, items
        self.table, self.table_line = table, table_line
        self.lineno, self.hz_pos, self.end_lineno = lineno, pos, end_lineno


class UdpInitial:
    def __init__(self, name, value, lineno):
        self.name, self.value, self.lineno = name, value, lineno


class SpecifyBlock:
    def __init__(self, items, lineno):
        self.items, self.lineno = items, lineno


class SpecPath:
    def __init__(self, sources, dests, full, edge, polarity, data, delay, condition, lineno,
                 pos):
        self.sources, self.dests, self.full, self.edge = sources, dests, full, edge
        self.polarity, self.data, self.delay, self.condition = polarity, data, delay, condition
        self.lineno, self.hz_pos = lineno, pos


class SpecParams:
    def __init__(self, params, lineno):
        self.params, self.lineno = params, lineno


class Defparams:
    def __init__(self, pairs, lineno, pos):
        self.pairs, self.lineno, self.hz_pos = pairs, lineno, pos


class GenCaseNode:
    def __init__(self, expr, cases, lineno, pos):
        self.expr, self.cases, self.lineno, self.hz_pos = expr, cases, lineno, pos
