"""Grammar for functions, tasks and typed declarations (a mixin of the hazlint parser).

IEEE 1364-2005 as designers write it, beyond the stock pyverilog grammar:

* functions (10.4) with ``automatic``, a return type (``signed``, a range, ``integer``,
  ``real``), an ANSI argument list or ``input`` declarations, typed arguments (``input integer
  n``, ``input reg [3:0] x``, ``input signed [7:0] y``), local variables and (local)
  parameters, and any statement as the body (:class:`FunctionDef`);
* tasks (10.2) likewise (:class:`TaskDef`), and task enable statements ``t;`` / ``t(a, b);``
  (:class:`TaskEnable`);
* ``repeat (n) statement`` (9.6; :class:`RepeatStatement`); a delay before a system task
  (``#5 $display(...);``, 9.7.1; the delay is dropped as on assignments);
* ``integer`` arrays (``integer a [0:3];``, 4.9) and ``output integer`` ports (12.3.3), also
  with an initial value (``output integer n = 0;``);
  ``real`` declarations keep their names (the stock action names them all "real");
* several declaration assignments in one net or variable declaration (``wire a = x, b = y;``,
  6.1.2);
* ANSI output variables with an initial value (``output reg q = 1'b0``, ``output integer n =
  0``, ``output reg a = 0, b = 1``; 12.3.4: the IR builder refuses it on inputs and nets);
* ``parameter integer`` keeps its type, 32-bit signed (12.2; the stock actions drop it:
  :func:`integer_typed` wraps them).

``input reg`` is accepted here for task and function arguments; on a module port the IR
builder reports it.
"""
from __future__ import annotations

from pyverilog.vparser import ast as vast


def integer_typed(fn):
    """Wrap a stock ``parameter integer`` action: its parameters are 32-bit signed (IEEE
    1364-2005 12.2; the stock action drops the type)."""
    def action(self, p):
        fn(self, p)
        for prm in p[0].list:
            line = prm.lineno
            prm.width = vast.Width(vast.IntConst("31", lineno=line),
                                   vast.IntConst("0", lineno=line), lineno=line)
            prm.signed = True
    action.__doc__ = fn.__doc__
    return action


INTEGER_PARAM_RULES = ("p_param_integer", "p_param_end_integer", "p_parameterdecl_integer",
                        "p_localparamdecl_integer")


class FunctionDef:
    """``function [automatic] [signed] [range | integer | real] name ...``.

    ``rtype`` is (kind, signed, width) with kind "reg" | "integer" | "real"; ``ports`` the
    pyverilog ``Ioport`` list of an ANSI header (None without one); ``decls`` the
    declarations before the body (``Decl`` nodes: ports, variables, parameters)."""

    def __init__(self, name, automatic, rtype, ports, decls, statement, lineno, pos):
        self.name, self.automatic, self.rtype = name, automatic, rtype
        self.ports, self.decls, self.statement = ports, decls, statement
        self.lineno, self.hz_pos = lineno, pos


class TaskDef:
    """``task [automatic] name ...``; fields as :class:`FunctionDef` without a return type."""

    def __init__(self, name, automatic, ports, decls, statement, lineno, pos):
        self.name, self.automatic = name, automatic
        self.ports, self.decls, self.statement = ports, decls, statement
        self.lineno, self.hz_pos = lineno, pos


class TaskEnable:
    """A task enable statement ``name;`` / ``name(args);`` (``name`` a pyverilog Identifier)."""

    def __init__(self, name, args, lineno):
        self.name, self.args, self.lineno = name, args, lineno


class RepeatStatement:
    def __init__(self, count, statement, lineno):
        self.count, self.statement, self.lineno = count, statement, lineno


class TaskFunctionGrammar:
    """Grammar rules (ply reads every ``p_`` method of the parser class, inherited ones too)."""

    def p_function(self, p):
        'function : FUNCTION tf_automatic function_type ID SEMICOLON tf_decls basic_statement ENDFUNCTION'
        p[0] = FunctionDef(p[4], p[2], p[3], None, p[6], p[7], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_function_ansi(self, p):
        'function : FUNCTION tf_automatic function_type ID LPAREN ioports RPAREN SEMICOLON tf_decls basic_statement ENDFUNCTION'
        p[0] = FunctionDef(p[4], p[2], p[3], p[6], p[9], p[10], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_task(self, p):
        'task : TASK tf_automatic ID SEMICOLON tf_decls basic_statement ENDTASK'
        p[0] = TaskDef(p[3], p[2], None, p[5], p[6], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_task_ansi(self, p):
        'task : TASK tf_automatic ID LPAREN ioports RPAREN SEMICOLON tf_decls basic_statement ENDTASK'
        p[0] = TaskDef(p[3], p[2], p[5], p[8], p[9], p.lineno(1), p.lexpos(1))
        p.set_lineno(0, p.lineno(1))

    def p_tf_automatic(self, p):
        """tf_automatic : AUTOMATIC
        | empty"""
        p[0] = p[1] is not None

    def p_function_type(self, p):
        """function_type : empty
        | width
        | SIGNED
        | SIGNED width
        | INTEGER
        | REAL"""
        if len(p) == 3:
            p[0] = ("reg", True, p[2])
        elif p[1] is None:
            p[0] = ("reg", False, None)
        elif isinstance(p[1], vast.Width):
            p[0] = ("reg", False, p[1])
        elif p[1] == "signed":
            p[0] = ("reg", True, None)
        else:
            p[0] = (p[1], p[1] == "integer", None)

    def p_tf_decls(self, p):
        'tf_decls : tf_decls tf_decl'
        p[1].append(p[2])
        p[0] = p[1]

    def p_tf_decls_empty(self, p):
        'tf_decls : empty'
        p[0] = []

    def p_tf_decl(self, p):
        """tf_decl : decl
        | integerdecl
        | realdecl
        | parameterdecl
        | localparamdecl"""
        p[0] = p[1]

    def p_decl_typed(self, p):
        """decl : sigtypes INTEGER declnamelist SEMICOLON
        | sigtypes REAL declnamelist SEMICOLON"""
        # typed task and function arguments (IEEE 1364-2005 10.2.1, 10.4.1): input integer n;
        kind = p[2]
        width = vast.Width(vast.IntConst("31", lineno=p.lineno(2)),
                           vast.IntConst("0", lineno=p.lineno(2)), lineno=p.lineno(2))
        out = []
        for rname, rdims, line, pos in p[3]:
            for d in self.create_decl(list(p[1]) + (["signed"] if kind == "integer" else []),
                                      rname, width=width if kind == "integer" else None,
                                      dimensions=rdims, lineno=line):
                d.hz_pos = pos
                d.hz_kind = kind
                out.append(d)
        p[0] = vast.Decl(out, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_ioport_head_integer(self, p):
        'ioport_head : sigtypes INTEGER portname'
        p[0] = self._typed_ioport(p)

    def p_ioport_integer(self, p):
        'ioport : sigtypes INTEGER portname'
        p[0] = self._typed_ioport(p)

    # ANSI variable ports with an initial value (IEEE 1364-2005 12.3.4:
    # ``output reg q = 1'b0``, ``output integer n = 0``, ``output reg a = 0, b = 1``)
    def p_ioport_init(self, p):
        """ioport : sigtypes portname EQUALS expression
        | sigtypes width portname EQUALS expression"""
        p[0] = self._ioport_init(p)

    def p_ioport_head_init(self, p):
        """ioport_head : sigtypes portname EQUALS expression
        | sigtypes width portname EQUALS expression"""
        p[0] = self._ioport_init(p)

    def _ioport_init(self, p):
        k = 2 if len(p) == 5 else 3
        node = self.create_ioport(p[1], p[k], width=p[2] if k == 3 else None,
                                  lineno=p.lineno(k))
        node.hz_pos = p.lexpos(1)
        node.hz_init = p[k + 2]
        p.set_lineno(0, p.lineno(1))
        return node

    def p_ioport_portname_init(self, p):
        'ioport : portname EQUALS expression'
        p[0] = (p[1], p[3])
        p.set_lineno(0, p.lineno(1))
        p.slice[0].lexpos = p.lexpos(1)

    def p_ioport_head_integer_init(self, p):
        'ioport_head : sigtypes INTEGER portname EQUALS expression'
        p[0] = self._typed_ioport(p)
        p[0].hz_init = p[5]         # output integer n = 0 (IEEE 1364-2005 12.3.4)

    def p_ioport_integer_init(self, p):
        'ioport : sigtypes INTEGER portname EQUALS expression'
        p[0] = self._typed_ioport(p)
        p[0].hz_init = p[5]

    def _typed_ioport(self, p):
        width = vast.Width(vast.IntConst("31", lineno=p.lineno(2)),
                           vast.IntConst("0", lineno=p.lineno(2)), lineno=p.lineno(2))
        node = self.create_ioport(list(p[1]) + ["signed"], p[3], width=width,
                                  lineno=p.lineno(3))
        node.first.hz_kind = "integer"
        node.second = vast.Integer(name=p[3], width=width, signed=True, lineno=p.lineno(3))
        node.hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))
        return node

    def p_single_statement_task(self, p):
        'single_statement : delays identifier SEMICOLON'
        p[0] = TaskEnable(p[2], [], p.lineno(2))
        p.set_lineno(0, p.lineno(2))

    def p_single_statement_task_args(self, p):
        'single_statement : delays identifier LPAREN func_args RPAREN SEMICOLON'
        p[0] = TaskEnable(p[2], list(p[4]), p.lineno(2))
        p.set_lineno(0, p.lineno(2))

    def p_single_statement_systemcall(self, p):
        'single_statement : delays systemcall SEMICOLON'
        # replaces the stock rule, which takes no delay: ``#5 $display(...);`` (IEEE 1364-2005
        # 9.7.1, a delay control before any statement); the delay has no gate meaning
        p[0] = vast.SingleStatement(p[2], lineno=p.lineno(2))
        p.set_lineno(0, p.lineno(2))

    def p_basic_statement_repeat(self, p):
        'basic_statement : REPEAT LPAREN expression RPAREN basic_statement'
        p[0] = RepeatStatement(p[3], p[5], p.lineno(1))
        p.set_lineno(0, p.lineno(1))

    def p_integerdecl(self, p):
        'integerdecl : INTEGER integernamelist SEMICOLON'
        self._integers(p, p[2], 2)

    def p_integerdecl_signed(self, p):
        'integerdecl : INTEGER SIGNED integernamelist SEMICOLON'
        self._integers(p, p[3], 3)

    def _integers(self, p, names, k):
        line = p.lineno(k)
        intlist = []
        for item in names:
            rname, rvalue, dims = item if len(item) == 3 else (item[0], item[1], None)
            intlist.append(vast.Integer(rname, vast.Width(vast.IntConst('31', lineno=line),
                                                          vast.IntConst('0', lineno=line),
                                                          lineno=line),
                                        signed=True, value=rvalue, dimensions=dims,
                                        lineno=line))
        p[0] = vast.Decl(intlist, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_integername_array(self, p):
        'integername : ID dimensions'
        p[0] = (p[1], None, p[2])
        p.set_lineno(0, p.lineno(1))

    def p_realdecl(self, p):
        'realdecl : REAL realnamelist SEMICOLON'
        # the stock action names every variable "real"
        reals = [vast.Real(name, None, lineno=p.lineno(1)) for name in p[2]]
        p[0] = vast.Decl(reals, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_declassign_list(self, p):
        """declassign : sigtypes declassign_list SEMICOLON
        | sigtypes width declassign_list SEMICOLON"""
        width = p[2] if len(p) == 5 else None
        elements = p[3] if len(p) == 5 else p[2]
        decls = []
        for name, assign in elements:
            decls.extend(self.create_declassign(p[1], name, assign, width=width,
                                                lineno=p.lineno(1)))
        p[0] = vast.Decl(decls, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_declassign_integer(self, p):
        """declassign : sigtypes INTEGER declassign_element SEMICOLON
        | sigtypes INTEGER declassign_list SEMICOLON"""
        # ``output integer n = 0;`` (IEEE 1364-2005 12.3.3): the port, an integer variable
        # of that name and its initial value
        line = p.lineno(2)
        width = vast.Width(vast.IntConst("31", lineno=line), vast.IntConst("0", lineno=line),
                           lineno=line)
        elements = p[3] if isinstance(p[3], list) else [p[3]]
        decls = []
        for name, assign in elements:
            for d in self.create_decl(list(p[1]) + ["signed"], name, width=width,
                                      lineno=p.lineno(1)):
                d.hz_kind = "integer"
                decls.append(d)
            decls.append(vast.Integer(name, width, signed=True, lineno=p.lineno(1)))
            decls.append(assign)
        p[0] = vast.Decl(decls, lineno=p.lineno(1))
        p[0].hz_pos = p.lexpos(1)
        p.set_lineno(0, p.lineno(1))

    def p_declassign_list_two(self, p):
        'declassign_list : declassign_element COMMA declassign_element'
        p[0] = [p[1], p[3]]

    def p_declassign_list_more(self, p):
        'declassign_list : declassign_list COMMA declassign_element'
        p[1].append(p[3])
        p[0] = p[1]
