"""Verilog parser: pyverilog's grammar (subclassed, not copied) with the gaps hazlint needs closed.

Grammar additions and repairs over :class:`pyverilog.vparser.parser.VerilogParser`:

* gate / UDP / assign delays: ``#5``, ``#2.5``, ``#d``, ``#(1,2)``, ``#(1,2,3)``, ``#(1:2:3)``,
  ``#(1:2:3, 2:3:4)`` (:class:`DelaySpec`); drive strengths ``(strong0, weak1)`` (ignored);
  unnamed gate instances with a delay; ``assign a = b, c = d;``;
* user-defined primitives (``primitive ... table ... endtable ... endprimitive``);
* ``specify`` blocks: module paths (``=>``, ``*>``, edge-sensitive, ``if``/``ifnone``),
  ``specparam``; timing checks are skipped;
* net types ``wand wor tri0 tri1 triand trior trireg uwire``; net declarations with a delay
  (``wire #5 w;``, ``wire [3:0] #(1,2) bus;``) and with a drive strength (``wire (strong0, weak1)
  w = a;``); ``generate case``; generate ``for``/``if``/``case``
  directly in the module body; indexed part selects ``[b +: w]`` kept as such (:class:`IPart`);
* attributes (kept by the lexer, looked up by the position of the construct, ``hz_pos``);
* list-building actions append to a Python list instead of concatenating tuples (the stock
  form is quadratic in list length); see :func:`_linear_list_actions`;
* functions and tasks as IEEE 1364-2005 writes them, task enables, ``repeat``, typed arguments,
  ``integer`` arrays and ``output integer`` ports, output variables with initial values,
  ``parameter integer`` typed (:mod:`hazlint.frontend.grammar_tasks`);
* the stock ``p_declassign_element_delay`` and ``p_integerdecl_signed`` index bugs are fixed.

LALR tables are generated once per grammar signature and kept as a JSON entry of the hazlint
cache (:class:`hazlint.cache.ParseCache`, namespace ``parser``) under the same folder as every
other entry (``--cache-dir``, ``cache_dir``, ``HAZLINT_CACHE_DIR``, else the per-user cache
folder), with its key and digest checked like any entry; nothing is written to the working
directory and no pickle is used. Tables read back are validated (every state, action, goto and
production refers to something that exists) and rebuilt when they are not valid. With
``tables=False`` (``--no-cache``) or an unusable cache folder they are built in memory.
"""
from __future__ import annotations

import ast as pyast
import hashlib
import inspect
import os
import re
import textwrap
import types

import ply
import ply.yacc as yacc
from pyverilog.vparser import ast as vast
from pyverilog.vparser import parser as vparser
from pyverilog.vparser.parser import VerilogParser

from .. import __version__
from .grammar_tasks import INTEGER_PARAM_RULES, TaskFunctionGrammar, integer_typed
from .lexer import HzLexer, LexError


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


# ---------------------------------------------------------------------------------------------
# linear list building

def _rule_lhs(doc: str) -> str:
    return doc.strip().split(":", 1)[0].strip()


def _stock_list_actions():
    """Find the stock actions ``p[0] = p[1] + (p[k],)`` (append k), ``p[0] = (p[1],)`` and
    ``p[0] = ()`` on the same nonterminals, by reading pyverilog's own source."""
    tree = pyast.parse(textwrap.dedent(inspect.getsource(VerilogParser)))
    cls = tree.body[0]
    appends, ones, empties = {}, {}, {}
    for fn in cls.body:
        if not isinstance(fn, pyast.FunctionDef) or not fn.name.startswith("p_"):
            continue
        doc = pyast.get_docstring(fn, clean=False) or ""
        body = [s for s in fn.body if not (isinstance(s, pyast.Expr) and (
            isinstance(s.value, pyast.Constant) or (
                isinstance(s.value, pyast.Call) and isinstance(s.value.func, pyast.Attribute)
                and s.value.func.attr == "set_lineno")))]
        if len(body) != 1 or not isinstance(body[0], pyast.Assign):
            continue
        src = pyast.unparse(body[0])
        m = re.fullmatch(r"p\[0\] = p\[1\] \+ \(p\[(\d)\],\)", src)
        if m:
            appends[fn.name] = (doc, int(m.group(1)))
        elif src == "p[0] = (p[1],)":
            ones[fn.name] = doc
        elif src == "p[0] = ()":
            empties[fn.name] = doc
    lhs = {_rule_lhs(doc) for doc, _ in appends.values()}
    ones = {n: d for n, d in ones.items() if _rule_lhs(d) in lhs}
    empties = {n: d for n, d in empties.items() if _rule_lhs(d) in lhs}
    return appends, ones, empties


# The actions below touch ``p.slice`` directly (same effect as ``p[0] = ...`` plus
# ``p.set_lineno(0, p.lineno(1))``): they run hundreds of thousands of times on a netlist.

def _make_append(doc, k):
    def action(self, p):
        s = p.slice
        first = s[1]
        lst = first.value
        lst.append(s[k].value)
        s[0].value = lst
        s[0].lineno = getattr(first, "lineno", 0)
    action.__doc__ = doc
    return action


def _make_one(doc):
    def action(self, p):
        s = p.slice
        first = s[1]
        s[0].value = [first.value]
        s[0].lineno = getattr(first, "lineno", 0)
    action.__doc__ = doc
    return action


def _make_empty(doc):
    def action(self, p):
        p[0] = []
    action.__doc__ = doc
    return action


def _linear_list_actions(namespace: dict) -> list[str]:
    """Install list-appending replacements of the stock tuple-concatenating actions into a
    class namespace (unless the class body defines its own). Returns the names replaced."""
    appends, ones, empties = _stock_list_actions()
    done = []
    for name, (doc, k) in appends.items():
        namespace.setdefault(name, _make_append(doc, k))
        done.append(name)
    for name, doc in ones.items():
        namespace.setdefault(name, _make_one(doc))
        done.append(name)
    for name, doc in empties.items():
        namespace.setdefault(name, _make_empty(doc))
        done.append(name)
    return done


def _with_pos(fn):
    """Wrap a stock action so the node it builds remembers where it starts (``hz_pos``)."""
    def action(self, p):
        fn(self, p)
        node = p[0]
        if node is not None and not isinstance(node, (str, tuple, list)):
            node.hz_pos = p.lexpos(1)
    action.__doc__ = fn.__doc__
    return action


_POS_RULES = (
    "p_parameterdecl", "p_parameterdecl_signed", "p_parameterdecl_width",
    "p_parameterdecl_signed_width", "p_parameterdecl_integer", "p_localparamdecl",
    "p_localparamdecl_signed", "p_localparamdecl_width", "p_localparamdecl_signed_width",
    "p_localparamdecl_integer", "p_always", "p_always_ff", "p_always_comb", "p_always_latch",
    "p_initial", "p_generate_for", "p_generate_if", "p_generate_if_woelse",
    "p_declassign", "p_declassign_width", "p_decl", "p_decl_width", "p_genvardecl",
    "p_param", "p_param_signed", "p_param_width", "p_param_signed_width", "p_param_integer",
    "p_param_end", "p_param_end_signed", "p_param_end_width", "p_param_end_signed_width",
    "p_param_end_integer", "p_generate", "p_ioport", "p_ioport_width", "p_ioport_dimensions",
    "p_ioport_head", "p_ioport_head_width", "p_ioport_head_dimensions",
)


# ---------------------------------------------------------------------------------------------

class HzParser(TaskFunctionGrammar, VerilogParser):
    """The hazlint Verilog grammar. Construct through :func:`get_parser`."""

    start = "source_text"

    # ------------------------------------------------------------------ removed stock rules
    p_definition_pragma = None
    p_pragma = None
    p_pragma_assign = None
    p_assignment_delay = None
    p_waitcontent_statement_empty = None
    p_instance_or = None
    p_instance_or_noname = None
    p_instance_noname = None
    p_sigtype_input = p_sigtype_output = p_sigtype_inout = p_sigtype_tri = None
    p_sigtype_reg = p_sigtype_logic = p_sigtype_wire = p_sigtype_signed = None
    p_sigtype_supply0 = p_sigtype_supply1 = None
    p_parameterlist_noname = None
    # functions and tasks: replaced by the IEEE 1364-2005 forms below
    p_function_nowidth = p_function_integer = p_function_statement = p_function_calc = None
    p_funcvardecl = p_funcvardecls = p_funcvardecls_one = None
    p_task_calc = p_task_statement = p_taskvardecl = None
    p_taskvardecls = p_taskvardecls_empty = p_taskvardecls_one = None

    def __init__(self, tables_module=None, write_tables=True, tables=None):
        self.lexer = HzLexer()
        self.lexer.build()
        self.tokens = self.lexer.tokens
        self.tables_source = None
        self.tables_path = None
        self._build(tables if write_tables else False)

    # ------------------------------------------------------------------ tables
    def _build(self, tables):
        """Load the LALR tables from ``tables`` (a cache with ``load``/``store``/``discard``;
        None: the default cache folder; False: none), else generate them (and store them)."""
        pdict = {k: getattr(self, k) for k in dir(self)}
        pdict["__file__"] = __file__
        reflect = yacc.ParserReflect(pdict, log=yacc.NullLogger())
        reflect.get_all()
        signature = reflect.signature()
        key = hashlib.sha256("\0".join([__version__, ply.__version__, yacc.__tabversion__,
                                        signature]).encode()).hexdigest()
        store = _table_store(tables)
        tabmod = None
        if store is not None:
            try:
                tabmod = _tables_module(store.load(key), signature, pdict)
            except Exception:          # a broken cache never stops a run
                tabmod = None
            if tabmod is None:
                store.discard(key)
        try:
            self.parser = _yacc(self, tabmod)
        except Exception:
            if tabmod is None:
                raise
            store.discard(key)         # valid-looking tables that ply cannot use: rebuild
            tabmod = None
            self.parser = _yacc(self, None)
        if tabmod is not None and tabmod._lr_action is self.parser.action:
            self.tables_source = "cache"
        else:
            self.tables_source = "generated"
            if store is not None:
                store.store(key, _tables_data(self.parser, signature))
        if store is not None:
            self.tables_path = str(store._entry_path(key))

    # ------------------------------------------------------------------ parsing
    def parse(self, text, debug=0):
        try:
            self.lexer.check_nesting(text)
            self.lexer.input(text)
            self._text = text
            return self.parser.parse(None, lexer=self.lexer.lexer, debug=debug,
                                     tokenfunc=self.lexer.fast_tokens())
        except LexError as exc:
            raise SyntaxErr(exc.message, exc.lineno, exc.lexpos, exc.construct) from None
        except vparser.ParseError as exc:
            # a stock semantic check (no location): parse again with the plain ply lexer,
            # whose line counter then tells where it failed
            line = 1
            try:
                self.lexer.input(text)
                self.parser.parse(None, lexer=self.lexer.lexer)
            except vparser.ParseError:
                line = self.lexer.lexer.lineno
            except Exception:
                pass
            raise SyntaxErr("invalid construct (%s)" % exc, line, None, None) from None
        finally:
            # ply keeps its stacks (and with them the whole AST) on the parser object
            self.parser.statestack = []
            self.parser.symstack = []
            self._text = ""

    def p_error(self, p):
        if p is None:
            raise SyntaxErr("unexpected end of input", self._text.rstrip().count("\n") + 1,
                            None, "EOF")
        value = p.value if p.type != "TABLE" else "table"
        raise SyntaxErr("syntax error", p.lineno, p.lexpos, str(value)[:40])

    # ------------------------------------------------------------------ hot paths
    def p_identifier(self, p):
        'identifier : ID'
        s = p.slice
        tok = s[1]
        s[0].value = vast.Identifier(tok.value, None, lineno=tok.lineno)
        s[0].lineno = tok.lineno

    def p_expression_id(self, p):
        'expression : identifier'
        s = p.slice
        s[0].value = s[1].value
        s[0].lineno = getattr(s[1], "lineno", 0)

    def p_instance_port_list(self, p):
        'instance_port_list : expression'
        s = p.slice
        line = getattr(s[1], "lineno", 0)
        s[0].value = vast.PortArg(None, s[1].value, lineno=line)
        s[0].lineno = line

    # ------------------------------------------------------------------ definitions
    def p_definition_primitive(self, p):
        'definition : primitive_def'
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_moduledef(self, p):
        'moduledef : MODULE modulename paramlist portlist items ENDMODULE'
        p[0] = vast.ModuleDef(name=p[2], paramlist=p[3], portlist=p[4], items=p[5],
                              lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p[0].end_lineno = p.lineno(6)
        p.set_lineno(0, p.lineno(1))

    def p_portname(self, p):
        'portname : ID'
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))
        p.slice[0].lexpos = p.lexpos(1)

    def p_ports(self, p):
        'ports : ports COMMA portname'
        port = vast.Port(name=p[3], width=None, dimensions=None, type=None, lineno=p.lineno(3))
        port.hz_pos = p.lexpos(3)
        p[1].append(port)
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_ports_one(self, p):
        'ports : portname'
        port = vast.Port(name=p[1], width=None, dimensions=None, type=None, lineno=p.lineno(1))
        port.hz_pos = p.lexpos(1)
        p[0] = [port]
        p.set_lineno(0, p.lineno(1))

    def p_sigtype(self, p):
        '''sigtype : INPUT
        | OUTPUT
        | INOUT
        | TRI
        | REG
        | LOGIC
        | WIRE
        | SIGNED
        | SUPPLY0
        | SUPPLY1
        | WAND
        | WOR
        | TRI0
        | TRI1
        | TRIAND
        | TRIOR
        | TRIREG
        | UWIRE
        '''
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))
        p.slice[0].lexpos = p.lexpos(1)

    def p_sigtypes(self, p):
        'sigtypes : sigtypes sigtype'
        p[1].append(p[2])
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))
        p.slice[0].lexpos = p.lexpos(1)

    def p_sigtypes_one(self, p):
        'sigtypes : sigtype'
        p[0] = [p[1]]
        p.set_lineno(0, p.lineno(1))
        p.slice[0].lexpos = p.lexpos(1)

    def p_ioports(self, p):
        'ioports : ioports COMMA ioport'
        init = None
        if isinstance(p[3], tuple):             # a bare name with an initial value
            p[3], init = p[3]
        if isinstance(p[3], str):
            # a bare name continues the previous declaration's direction and type
            prev = p[1][-1]
            t = vast.Ioport(type(prev.first)(name=p[3], width=prev.first.width,
                                             signed=prev.first.signed, lineno=p.lineno(3)),
                            type(prev.second)(name=p[3], width=prev.second.width,
                                              signed=prev.second.signed, lineno=p.lineno(3))
                            if prev.second is not None else None,
                            lineno=p.lineno(3))
            t.hz_pos = p.lexpos(3)
            t.hz_attrs_from = getattr(prev, "hz_pos", None)
            if getattr(prev.first, "hz_kind", None):
                t.first.hz_kind = prev.first.hz_kind
            t.hz_init = init
            p[1].append(t)
        else:
            p[1].append(p[3])
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_ioports_one(self, p):
        'ioports : ioport_head'
        p[0] = [p[1]]
        p.set_lineno(0, p.lineno(1))

    def p_ioport_portname(self, p):
        'ioport : portname'
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))
        p.slice[0].lexpos = p.lexpos(1)

    def create_ioport(self, sigtypes, name, width=None, dimensions=None, lineno=0):
        # ``input reg`` is legal on task and function arguments (IEEE 1364-2005 10.2.1)
        as_reg = "reg" in sigtypes and ("input" in sigtypes or "inout" in sigtypes)
        if as_reg:
            sigtypes = [s for s in sigtypes if s != "reg"]
        try:
            node = VerilogParser.create_ioport(self, sigtypes, name, width, dimensions, lineno)
            if as_reg:
                node.second = vast.Reg(name=name, width=width, signed="signed" in sigtypes,
                                       lineno=lineno)
                node.first.hz_input_reg = True      # an error on a module port (build_ir)
        except vparser.ParseError:
            raise SyntaxErr("invalid port declaration '%s'" % " ".join(sigtypes), lineno,
                            None, name) from None
        kinds = [s for s in sigtypes if s in _EXTRA_NET_KINDS]
        if kinds:
            node.second = vast.Wire(name=name, width=width, signed='signed' in sigtypes,
                                    lineno=lineno)
            node.second.hz_kind = kinds[0]
        return node

    def create_decl(self, sigtypes, name, width=None, dimensions=None, lineno=0):
        as_reg = "reg" in sigtypes and ("input" in sigtypes or "inout" in sigtypes)
        if as_reg:
            sigtypes = [s for s in sigtypes if s != "reg"]
        try:
            decls = VerilogParser.create_decl(self, sigtypes, name, width, dimensions, lineno)
            if as_reg:
                decls[0].hz_input_reg = True        # an error on a module port (build_ir)
                decls.append(vast.Reg(name=name, width=width, signed="signed" in sigtypes,
                                      dimensions=dimensions, lineno=lineno))
        except vparser.ParseError:
            raise SyntaxErr("invalid declaration '%s'" % " ".join(sigtypes), lineno, None,
                            name) from None
        for s in sigtypes:
            if s in _EXTRA_NET_KINDS:
                w = vast.Wire(name=name, width=width, signed='signed' in sigtypes,
                              dimensions=dimensions, lineno=lineno)
                w.hz_kind = s
                decls.append(w)
        return decls

    def p_decl(self, p):
        'decl : sigtypes declnamelist SEMICOLON'
        out = []
        for rname, rdims, line, pos in p[2]:
            for d in self.create_decl(p[1], rname, dimensions=rdims, lineno=line):
                d.hz_pos = pos
                out.append(d)
        p[0] = vast.Decl(out, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_decl_width(self, p):
        'decl : sigtypes width declnamelist SEMICOLON'
        self._decl(p, p[2], p[3])

    def p_decl_delay(self, p):
        '''decl : sigtypes delays declnamelist SEMICOLON
        | sigtypes width delays declnamelist SEMICOLON'''
        # a net delay (IEEE 1364 6.1.3): kept on each declared net
        width = p[2] if len(p) == 6 else None
        spec, names = (p[3], p[4]) if len(p) == 6 else (p[2], p[3])
        self._decl(p, width, names, spec)

    def _decl(self, p, width, names, delay=None):
        out = []
        for rname, rdims, line, pos in names:
            for d in self.create_decl(p[1], rname, width=width, dimensions=rdims, lineno=line):
                d.hz_pos = pos
                if delay is not None:
                    d.hz_delay = delay
                out.append(d)
        p[0] = vast.Decl(out, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_declassign_strength(self, p):
        '''declassign : sigtypes strength declassign_element SEMICOLON
        | sigtypes strength width declassign_element SEMICOLON'''
        # drive strengths do not change the logic function: dropped, as on gates and assigns
        width = p[3] if len(p) == 6 else None
        element = p[4] if len(p) == 6 else p[3]
        decllist = self.create_declassign(p[1], element[0], element[1], width=width,
                                          lineno=p.lineno(1))
        p[0] = vast.Decl(decllist, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_declname(self, p):
        'declname : ID'
        p[0] = (p[1], None, p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_declarray(self, p):
        'declname : ID dimensions'
        p[0] = (p[1], p[2], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_dimensions(self, p):
        'dimensions : dimensions length'
        p[1].lengths.append(p[2])
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def create_declassign(self, sigtypes, name, assign, width=None, lineno=0):
        if not any(s in sigtypes for s in ("reg", "wire", "tri") + _EXTRA_NET_KINDS):
            raise SyntaxErr("a declaration with an initial value needs a net type", lineno,
                            None, name)
        decls = [d for d in self.create_decl([s for s in sigtypes], name, width=width,
                                             lineno=lineno)]
        decls.append(assign)
        return decls

    def p_declassign_element_delay(self, p):
        'declassign_element : delays ID EQUALS delays rvalue'
        assign = vast.Assign(vast.Lvalue(vast.Identifier(p[2], lineno=p.lineno(2)),
                                         lineno=p.lineno(2)),
                             p[5], p[1], p[4], lineno=p.lineno(2))
        p[0] = (p[2], assign)
        p.set_lineno(0, p.lineno(2))

    # ------------------------------------------------------------------ items
    def p_item(self, p):
        """item : standard_item
        | generate
        | generate_if
        | generate_for
        | generate_case
        """
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_standard_item(self, p):
        """standard_item : decl
        | integerdecl
        | realdecl
        | declassign
        | parameterdecl
        | localparamdecl
        | genvardecl
        | assignment
        | always
        | always_ff
        | always_comb
        | always_latch
        | initial
        | instance
        | function
        | task
        | specify_block
        | defparam
        """
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_defparam(self, p):
        'defparam : DEFPARAM defparam_list SEMICOLON'
        p[0] = Defparams(p[2], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_defparam_list(self, p):
        'defparam_list : defparam_list COMMA defparam_one'
        p[1].append(p[3])
        p[0] = p[1]

    def p_defparam_list_one(self, p):
        'defparam_list : defparam_one'
        p[0] = [p[1]]

    def p_defparam_one(self, p):
        'defparam_one : identifier EQUALS rvalue'
        p[0] = (p[1], p[3])

    # ------------------------------------------------------------------ delays and strengths
    def p_delays(self, p):
        'delays : DELAY LPAREN expression RPAREN'
        p[0] = DelaySpec([MinTypMax(p[3], p[3], p[3])], True, p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_delays_multi(self, p):
        'delays : DELAY LPAREN mtm_multi RPAREN'
        p[0] = DelaySpec(p[3], all(m.min is m.max for m in p[3]), p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_delays_identifier(self, p):
        'delays : DELAY identifier'
        p[0] = DelaySpec([MinTypMax(p[2], p[2], p[2])], False, p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_delays_intnumber(self, p):
        'delays : DELAY intnumber'
        c = vast.IntConst(p[2], lineno=p.lineno(1))
        p[0] = DelaySpec([MinTypMax(c, c, c)], False, p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_delays_floatnumber(self, p):
        'delays : DELAY floatnumber'
        c = vast.FloatConst(p[2], lineno=p.lineno(1))
        p[0] = DelaySpec([MinTypMax(c, c, c)], False, p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_mtm_multi_two(self, p):
        'mtm_multi : expression COMMA mtm_item'
        p[0] = [MinTypMax(p[1], p[1], p[1], p.lineno(1)), p[3]]
        p.set_lineno(0, p.lineno(1))

    def p_mtm_multi_more(self, p):
        'mtm_multi : mtm_multi COMMA mtm_item'
        p[1].append(p[3])
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_mtm_multi_one(self, p):
        'mtm_multi : expression COLON expression COLON expression'
        p[0] = [MinTypMax(p[1], p[3], p[5], p.lineno(1))]
        p.set_lineno(0, p.lineno(1))

    def p_mtm_item(self, p):
        'mtm_item : expression'
        p[0] = MinTypMax(p[1], p[1], p[1], p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_mtm_item_triple(self, p):
        'mtm_item : expression COLON expression COLON expression'
        p[0] = MinTypMax(p[1], p[3], p[5], p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_mtm_list(self, p):
        'mtm_list : mtm_list COMMA mtm_item'
        p[1].append(p[3])
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_mtm_list_one(self, p):
        'mtm_list : mtm_item'
        p[0] = [p[1]]
        p.set_lineno(0, p.lineno(1))

    def p_strength(self, p):
        '''strength : LPAREN strength_kw COMMA strength_kw RPAREN
        | LPAREN strength_kw RPAREN'''
        p[0] = None

    def p_strength_kw(self, p):
        '''strength_kw : STRENGTH
        | SUPPLY0
        | SUPPLY1'''
        p[0] = p[1]

    # ------------------------------------------------------------------ continuous assignment
    def p_assignment(self, p):
        'assignment : ASSIGN assign_head assign_list SEMICOLON'
        p[0] = AssignGroup(p[3], p[2], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_assign_head(self, p):
        'assign_head : delays'
        p[0] = p[1]

    def p_assign_head_strength(self, p):
        'assign_head : strength delays'
        p[0] = p[2]

    def p_assign_list(self, p):
        'assign_list : assign_list COMMA assign_one'
        p[1].append(p[3])
        p[0] = p[1]

    def p_assign_list_one(self, p):
        'assign_list : assign_one'
        p[0] = [p[1]]

    def p_assign_one(self, p):
        'assign_one : lvalue EQUALS rvalue'
        p[0] = (p[1], p[3], p.lineno(2))

    # ------------------------------------------------------------------ instances
    def p_instance(self, p):
        '''instance : instance_cell parameterlist instance_bodylist SEMICOLON
        | instance_cell strength parameterlist instance_bodylist SEMICOLON'''
        n = len(p)
        plist = p[n - 3]
        self._instance(p, plist, p[n - 2])

    def p_instance_noname(self, p):
        '''instance : instance_cell instance_bodylist_noname SEMICOLON
        | instance_cell parameterlist_ne instance_bodylist_noname SEMICOLON
        | instance_cell strength instance_bodylist_noname SEMICOLON
        | instance_cell strength parameterlist_ne instance_bodylist_noname SEMICOLON'''
        n = len(p)
        if n == 4:
            plist = None
        elif n == 5:
            plist = p[2] if p.slice[2].type == "parameterlist_ne" else None
        else:
            plist = p[3]
        self._instance(p, plist, p[n - 2])

    def _instance(self, p, plist, bodies):
        params, delay = None, None
        if isinstance(plist, DelaySpec):
            delay = plist
        elif plist:
            params = plist
            if all(a.paramname is None for a in plist):
                # a positional list: parameters of a module or the delay of a gate / UDP
                if any(isinstance(a.argname, MinTypMax) for a in plist):
                    delay = DelaySpec([a.argname if isinstance(a.argname, MinTypMax) else
                                       MinTypMax(a.argname, a.argname, a.argname) for a in plist],
                                      False, p.lineno(1))
                    params = None
                else:
                    delay = DelaySpec([MinTypMax(a.argname, a.argname, a.argname) for a in plist],
                                      True, p.lineno(1))
        p[0] = InstanceGroup(p[1], params, delay, bodies, p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_instance_cell(self, p):
        '''instance_cell : ID
        | SENS_OR'''
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))
        p.slice[0].lexpos = p.lexpos(1)

    def p_instance_body(self, p):
        'instance_body : ID LPAREN instance_ports RPAREN'
        p[0] = (p[1], p[3], None, p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_instance_body_array(self, p):
        'instance_body : ID width LPAREN instance_ports RPAREN'
        p[0] = (p[1], p[4], p[2], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_instance_body_noname(self, p):
        'instance_body_noname : LPAREN instance_ports RPAREN'
        p[0] = ('', p[2], None, p.lineno(1), None)
        p.set_lineno(0, p.lineno(1))

    p_instance_ports_list_empty = None

    def p_instance_port_list_empty(self, p):
        'instance_port_list : empty'
        # an unconnected positional port (``u (a, , b)``); ``()`` also comes here and is
        # turned back into "no connections" by the IR builder
        p[0] = vast.PortArg(None, None, lineno=p.lineno(1))

    def p_parameterlist(self, p):
        'parameterlist : parameterlist_ne'
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_parameterlist_ne(self, p):
        '''parameterlist_ne : DELAY LPAREN param_args RPAREN
        | DELAY LPAREN param_args_noname RPAREN'''
        p[0] = p[3]
        p.set_lineno(0, p.lineno(1))

    def p_parameterlist_delay(self, p):
        '''parameterlist_ne : DELAY intnumber
        | DELAY floatnumber
        | DELAY identifier'''
        v = p[2]
        if isinstance(v, str):
            v = (vast.FloatConst if p.slice[2].type == "floatnumber" else vast.IntConst)(
                v, lineno=p.lineno(1))
        p[0] = DelaySpec([MinTypMax(v, v, v)], False, p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_param_arg_noname_mtm(self, p):
        'param_arg_noname : expression COLON expression COLON expression'
        p[0] = vast.ParamArg(None, MinTypMax(p[1], p[3], p[5], p.lineno(1)), lineno=p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    # ------------------------------------------------------------------ part selects
    def p_partselect_plus(self, p):
        'partselect : identifier LBRACKET expression PLUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "+", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_partselect_minus(self, p):
        'partselect : identifier LBRACKET expression MINUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "-", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_partselect_pointer_plus(self, p):
        'partselect : pointer LBRACKET expression PLUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "+", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_partselect_pointer_minus(self, p):
        'partselect : pointer LBRACKET expression MINUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "-", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_lpartselect_lpointer_plus(self, p):
        'lpartselect : pointer LBRACKET expression PLUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "+", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_lpartselect_lpointer_minus(self, p):
        'lpartselect : pointer LBRACKET expression MINUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "-", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_lpartselect_plus(self, p):
        'lpartselect : identifier LBRACKET expression PLUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "+", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_lpartselect_minus(self, p):
        'lpartselect : identifier LBRACKET expression MINUSCOLON expression RBRACKET'
        p[0] = IPart(p[1], p[3], p[5], "-", p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    # ------------------------------------------------------------------ always / sensitivity
    def p_sens_empty(self, p):
        'senslist : empty'
        p[0] = vast.SensList([], lineno=p.lineno(1))

    # ------------------------------------------------------------------ generate case
    def p_generate_item(self, p):
        """generate_item : standard_item
        | generate_if
        | generate_for
        | generate_case
        | generate_block
        """
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    # a generate block is now a generate item itself, so the bodies take generate_item only
    def p_generate_if_true_item(self, p):
        'gif_true_item : generate_item'
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_generate_if_false_item(self, p):
        'gif_false_item : generate_item'
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_generate_forcontent(self, p):
        'generate_forcontent : generate_item'
        p[0] = p[1]
        p.set_lineno(0, p.lineno(1))

    def p_generate_case(self, p):
        'generate_case : CASE LPAREN expression RPAREN gen_case_items ENDCASE'
        p[0] = GenCaseNode(p[3], p[5], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_gen_case_items(self, p):
        'gen_case_items : gen_case_items gen_case_item'
        p[1].append(p[2])
        p[0] = p[1]

    def p_gen_case_items_one(self, p):
        'gen_case_items : gen_case_item'
        p[0] = [p[1]]

    def p_gen_case_item(self, p):
        'gen_case_item : casecontent_condition COLON gen_case_body'
        p[0] = (p[1], p[3])

    def p_gen_case_item_default(self, p):
        'gen_case_item : DEFAULT COLON gen_case_body'
        p[0] = (None, p[3])

    def p_gen_case_body(self, p):
        'gen_case_body : generate_item'
        p[0] = p[1]

    # ------------------------------------------------------------------ UDP
    def p_primitive_def(self, p):
        'primitive_def : PRIMITIVE modulename portlist udp_items TABLE ENDPRIMITIVE'
        p[0] = PrimitiveDef(p[2], p[3], p[4], p[5], p.lineno(5), p.lineno(1), p.lexpos(1),
                            p.lineno(6))
        p.set_lineno(0, p.lineno(1))

    def p_primitive_def_noitems(self, p):
        'primitive_def : PRIMITIVE modulename portlist TABLE ENDPRIMITIVE'
        p[0] = PrimitiveDef(p[2], p[3], [], p[4], p.lineno(4), p.lineno(1), p.lexpos(1),
                            p.lineno(5))
        p.set_lineno(0, p.lineno(1))

    def p_udp_items(self, p):
        'udp_items : udp_items udp_item'
        p[1].append(p[2])
        p[0] = p[1]

    def p_udp_items_one(self, p):
        'udp_items : udp_item'
        p[0] = [p[1]]

    def p_udp_item(self, p):
        'udp_item : decl'
        p[0] = p[1]

    def p_udp_initial(self, p):
        'udp_item : INITIAL ID EQUALS expression SEMICOLON'
        p[0] = UdpInitial(p[2], p[4], p.lineno(1))

    # ------------------------------------------------------------------ specify
    def p_specify_block(self, p):
        'specify_block : SPECIFY specify_items ENDSPECIFY'
        p[0] = SpecifyBlock(p[2], p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_specify_block_empty(self, p):
        'specify_block : SPECIFY ENDSPECIFY'
        p[0] = SpecifyBlock([], p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_specify_items(self, p):
        'specify_items : specify_items specify_item'
        if p[2] is not None:
            p[1].append(p[2])
        p[0] = p[1]

    def p_specify_items_one(self, p):
        'specify_items : specify_item'
        p[0] = [p[1]] if p[1] is not None else []

    def p_specify_item_specparam(self, p):
        'specify_item : SPECPARAM param_substitution_list SEMICOLON'
        p[0] = SpecParams(p[2], p.lineno(1))

    def p_specify_item_specparam_width(self, p):
        'specify_item : SPECPARAM width param_substitution_list SEMICOLON'
        p[0] = SpecParams(p[3], p.lineno(1))

    def p_specify_item_check(self, p):
        'specify_item : TIMINGCHECK'
        p[0] = None

    def p_specify_item_path(self, p):
        'specify_item : simple_path EQUALS path_delay SEMICOLON'
        p[0] = self._path(p[1], p[3], None)

    def p_specify_item_if(self, p):
        'specify_item : IF LPAREN expression RPAREN simple_path EQUALS path_delay SEMICOLON'
        p[0] = self._path(p[5], p[7], p[3])
        p[0].lineno, p[0].hz_pos = p.lineno(1), p.lexpos(1)

    def p_specify_item_ifnone(self, p):
        'specify_item : IFNONE simple_path EQUALS path_delay SEMICOLON'
        p[0] = self._path(p[2], p[4], None)
        p[0].lineno, p[0].hz_pos = p.lineno(1), p.lexpos(1)

    def _path(self, sp, delay, cond):
        (edge, srcs, pol, full, dst, data, pol2, line, pos) = sp
        return SpecPath(srcs, dst, full, edge, pol or pol2, data, delay, cond, line, pos)

    def p_simple_path(self, p):
        'simple_path : LPAREN path_edge path_terms path_polarity path_op path_dst RPAREN'
        dst, data, pol2 = p[6]
        p[0] = (p[2], p[3], p[4], p[5], dst, data, pol2, p.lineno(1), p.lexpos(1))

    def p_path_edge(self, p):
        '''path_edge : POSEDGE
        | NEGEDGE
        | empty'''
        p[0] = p[1]

    def p_path_polarity(self, p):
        '''path_polarity : PLUS
        | MINUS
        | empty'''
        p[0] = p[1]

    def p_path_op(self, p):
        '''path_op : PATH_PARALLEL
        | PATH_FULL'''
        p[0] = p[1] == "*>"

    def p_path_dst(self, p):
        'path_dst : path_terms'
        p[0] = (p[1], None, None)

    def p_path_dst_data(self, p):
        'path_dst : LPAREN path_terms path_colon expression RPAREN'
        p[0] = (p[2], p[4], p[3])

    def p_path_colon(self, p):
        '''path_colon : PLUSCOLON
        | MINUSCOLON
        | COLON'''
        p[0] = {"+:": "+", "-:": "-"}.get(p[1])

    def p_path_terms(self, p):
        'path_terms : path_terms COMMA path_term'
        p[1].append(p[3])
        p[0] = p[1]

    def p_path_terms_one(self, p):
        'path_terms : path_term'
        p[0] = [p[1]]

    def p_path_term(self, p):
        '''path_term : identifier
        | pointer
        | partselect'''
        p[0] = p[1]

    def p_path_delay(self, p):
        'path_delay : LPAREN mtm_list RPAREN'
        p[0] = p[2]

    def p_path_delay_simple(self, p):
        '''path_delay : intnumber
        | floatnumber
        | identifier'''
        v = p[1]
        if isinstance(v, str):
            v = (vast.FloatConst if p.slice[1].type == "floatnumber" else vast.IntConst)(
                v, lineno=p.lineno(1))
        p[0] = [MinTypMax(v, v, v, p.lineno(1))]


_HERE = os.path.dirname(os.path.abspath(__file__))
_EXTRA_NET_KINDS = ("wand", "wor", "tri0", "tri1", "triand", "trior", "trireg", "uwire")

# generated list-appending actions (hand-written ones in the class body take precedence) and
# position-recording wrappers
_generated: dict = {}
LINEAR_ACTIONS = _linear_list_actions(_generated)
for _name, _fn in _generated.items():
    if _name not in HzParser.__dict__:
        setattr(HzParser, _name, _fn)
for _name in _POS_RULES:
    if _name not in HzParser.__dict__:
        _fn = getattr(VerilogParser, _name)
        if _name in INTEGER_PARAM_RULES:
            _fn = integer_typed(_fn)
        setattr(HzParser, _name, _with_pos(_fn))
del _generated


# ---------------------------------------------------------------------------------------------
# table cache

def _table_store(tables):
    """The cache the tables live in: ``tables`` itself, the default cache folder (None) or
    none (False, or a cache folder hazlint may not use)."""
    if tables is False:
        return None
    if tables is not None:
        return tables
    from ..cache import open_cache
    return open_cache(namespace="parser", version=f"{__version__}+tables")


def _yacc(module, tabmod):
    if tabmod is None:
        tabmod = types.ModuleType("hazlint_parsetab_missing")
        tabmod._tabversion = "none"
    return yacc.yacc(module=module, method="LALR", tabmodule=tabmod, debug=False,
                     write_tables=False, optimize=False, outputdir=_HERE,
                     errorlog=yacc.NullLogger(), start=module.start)


def _tables_module(data, signature: str, pdict: dict):
    """The tables of a cache entry as the module ply reads, or None when they are not valid
    for this grammar: other version or signature, or any state, action, goto or production
    that refers to something that does not exist (a corrupted entry must cost a rebuild,
    never a crash)."""
    if not isinstance(data, dict) or data.get("signature") != signature \
            or data.get("tabversion") != yacc.__tabversion__ or data.get("method") != "LALR":
        return None
    prods, action, goto = data.get("productions"), data.get("action"), data.get("goto")
    if not (isinstance(prods, list) and isinstance(action, list) and isinstance(goto, list)
            and prods and action):
        return None
    for pr in prods:
        if not (isinstance(pr, list) and len(pr) == 6 and isinstance(pr[0], str)
                and isinstance(pr[1], str) and type(pr[2]) is int and pr[2] >= 0
                and (pr[3] is None or isinstance(pr[3], str) and callable(pdict.get(pr[3])))
                and isinstance(pr[4], str) and type(pr[5]) is int):
            return None
    n_states, n_prods = len(action), len(prods)

    def table(rows, ok):
        out = {}
        for row in rows:
            if not (isinstance(row, list) and len(row) == 2 and type(row[0]) is int
                    and 0 <= row[0] < n_states and row[0] not in out
                    and isinstance(row[1], list)):
                return None
            entries = {}
            for item in row[1]:
                if not (isinstance(item, list) and len(item) == 2 and isinstance(item[0], str)
                        and type(item[1]) is int and ok(item[1])):
                    return None
                entries[item[0]] = item[1]
            out[row[0]] = entries
        return out
    act = table(action, lambda a: (0 < a < n_states) or (-n_prods < a <= 0))
    got = table(goto, lambda g: 0 <= g < n_states)
    if act is None or got is None or len(act) != n_states:
        return None
    mod = types.ModuleType("hazlint_parsetab")
    mod._tabversion = data["tabversion"]
    mod._lr_method = data["method"]
    mod._lr_signature = data["signature"]
    mod._lr_action = act
    mod._lr_goto = got
    mod._lr_productions = [tuple(p) for p in prods]
    return mod


def _tables_data(parser, signature: str) -> dict:
    return {
        "tabversion": yacc.__tabversion__,
        "method": "LALR",
        "signature": signature,
        "action": [[s, list(a.items())] for s, a in parser.action.items()],
        "goto": [[s, list(g.items())] for s, g in parser.goto.items()],
        "productions": [[pr.str, pr.name, pr.len, pr.func, os.path.basename(pr.file or ""),
                         pr.line] for pr in parser.productions],
    }


_PARSER: HzParser | None = None


def get_parser(tables=None) -> HzParser:
    """The process-wide parser, built once: its tables come from ``tables`` (a cache; None:
    the default cache folder; False: built in memory, nothing read or written)."""
    global _PARSER
    if _PARSER is None:
        _PARSER = HzParser(tables=tables)
    return _PARSER
