"""Grammar rules for instances, part selects, generate, user-defined primitives and specify
blocks: a mixin of :class:`~hazlint.frontends.verilog.grammar.HzParser` (see its docstring for
the additions over pyverilog's grammar)."""
from __future__ import annotations

from pyverilog.vparser import ast as vast

from .ast_nodes import (DelaySpec, GenCaseNode, InstanceGroup, IPart, MinTypMax, PrimitiveDef,
                        SpecifyBlock, SpecParams, SpecPath, UdpInitial)


class StructureGrammar:
    """Instances, part selects, generate ``case``/items, UDPs and specify blocks."""

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
