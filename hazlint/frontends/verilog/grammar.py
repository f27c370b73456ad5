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
  ``parameter integer`` typed (:mod:`hazlint.frontends.verilog.grammar_tasks`);
* the stock ``p_declassign_element_delay`` and ``p_integerdecl_signed`` index bugs are fixed.

The grammar is three classes: :class:`HzParser` (definitions, ports, declarations, items,
delays, continuous assignments), :class:`~.grammar_structures.StructureGrammar` (instances,
part selects, generate, UDPs, specify) and :class:`~.grammar_tasks.TaskFunctionGrammar`;
:mod:`.grammar_patches` installs the generated actions, :mod:`.ast_nodes` holds our AST nodes,
:mod:`.tables` keeps the LALR tables in the hazlint cache.
"""
from __future__ import annotations

from pyverilog.vparser import ast as vast
from pyverilog.vparser import parser as vparser
from pyverilog.vparser.parser import VerilogParser

from .ast_nodes import AssignGroup, Defparams, DelaySpec, MinTypMax, SyntaxErr
from .grammar_patches import install
from .grammar_structures import StructureGrammar
from .grammar_tasks import TaskFunctionGrammar
from .lexer import HzLexer, LexError
from .tables import build as build_tables

EXTRA_NET_KINDS = ("wand", "wor", "tri0", "tri1", "triand", "trior", "trireg", "uwire")


class HzParser(TaskFunctionGrammar, StructureGrammar, VerilogParser):
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
    p_sigtype_input = p_sigtype_output = p_sigtype_inout = p_sigtype_tri = None
    p_sigtype_reg = p_sigtype_logic = p_sigtype_wire = p_sigtype_signed = None
    p_sigtype_supply0 = p_sigtype_supply1 = None
    p_parameterlist_noname = None
    # functions and tasks: replaced by the IEEE 1364-2005 forms below
    p_function_nowidth = p_function_integer = p_function_statement = p_function_calc = None
    p_funcvardecl = p_funcvardecls = p_funcvardecls_one = None
    p_task_calc = p_task_statement = p_taskvardecl = None
    p_taskvardecls = p_taskvardecls_empty = p_taskvardecls_one = None

    def __init__(self, write_tables=True, tables=None):
        self.lexer = HzLexer()
        self.lexer.build()
        self.tokens = self.lexer.tokens
        self.tables_source = None
        self.tables_path = None
        build_tables(self, tables if write_tables else False, __file__)

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
        kinds = [s for s in sigtypes if s in EXTRA_NET_KINDS]
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
            if s in EXTRA_NET_KINDS:
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
        if not any(s in sigtypes for s in ("reg", "wire", "tri") + EXTRA_NET_KINDS):
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


# generated list-appending actions (hand-written ones in our classes take precedence) and
# position-recording wrappers
LINEAR_ACTIONS = install(HzParser)

_PARSER: HzParser | None = None


def get_parser(tables=None) -> HzParser:
    """The process-wide parser, built once: its tables come from ``tables`` (a cache; None:
    the default cache folder; False: built in memory, nothing read or written)."""
    global _PARSER
    if _PARSER is None:
        _PARSER = HzParser(tables=tables)
    return _PARSER
