"""Grammar extensions over pyverilog, the IR they produce, and the parser-table cache."""
from __future__ import annotations

import inspect
import os
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest
from ply.yacc import YaccProduction, YaccSymbol
from pyverilog.vparser.parser import VerilogParser

from hazlint.errors import ParseError
from hazlint import ir
from hazlint.frontends.verilog import grammar as hp
from hazlint.frontends.verilog.reader import read_sources

FIXTURES = Path(__file__).resolve().parent.parent / "fixtures" / "frontend"
REPO = Path(__file__).resolve().parent.parent


def _read(tmp_path, text, name="t.v"):
    p = tmp_path / name
    p.write_text(textwrap.dedent(text))
    (sf,) = read_sources([str(p)])
    return sf


def _module(tmp_path, text):
    return _read(tmp_path, text).modules[0]


def _n(v):
    return ("num", None, v, 0, True)


def _same(v):
    return (v, v, v)


def _by_name(items, cls):
    return {it.name: it for it in items if isinstance(it, cls)}


# ------------------------------------------------------------------------------- delays
def test_gate_and_assign_delay_forms():
    (sf,) = read_sources([str(FIXTURES / "delays.v")])
    (m,) = sf.modules
    inst = _by_name(m.items, ir.Instance)
    real = lambda x: ("real", x)
    assert inst["g1"].delay == [_same(_n(5))]
    assert inst["g2"].delay == [_same(real(2.5))]
    assert inst["g3"].delay == [_same(_n(1)), _same(_n(2))]
    assert inst["g4"].delay == [_same(_n(1)), _same(_n(2)), _same(_n(3))]
    assert inst["g5"].delay == [(_n(1), _n(2), _n(3))]
    assert inst["g6"].delay == [(_n(1), _n(2), _n(3)), (_n(2), _n(3), _n(4))]
    assert inst["g7"].delay == [_same(("id", "D"))]
    for g in inst.values():
        assert g.params == []          # a gate primitive's #(...) is a delay, not a parameter
    # unnamed gate with a drive strength (ignored) and a delay
    (unnamed,) = [it for it in m.items if isinstance(it, ir.Instance) and it.name == ""]
    assert unnamed.cell == "not" and unnamed.delay == [_same(_n(4))]
    assigns = [it for it in m.items if isinstance(it, ir.Assign)]
    assert [a.lhs for a in assigns] == [("id", "n1"), ("id", "n2")]
    assert assigns[0].delay == [_same(_n(1)), _same(_n(2))]       # wire #(1,2) n1 = ...
    assert assigns[1].delay == [(_n(2), _n(3), _n(4))]
    assert m.timescale == pytest.approx((1e-9, 10e-12))


def test_module_parameter_overrides_named_and_positional(tmp_path):
    m = _module(tmp_path, """
        module top(input a, output y);
          sub #(.W(4), .D(2)) u1 (.a(a), .y(y), .nc());
          sub #(4, 2) u2 (a, y);
          sub u3 [3:0] (.a(a), .y(y));
          sub u4 (a, , y);
          sub u5 ();
        endmodule
        """)
    inst = _by_name(m.items, ir.Instance)
    assert inst["u1"].params == [("W", _n(4)), ("D", _n(2))] and inst["u1"].delay is None
    assert inst["u1"].connections == [("a", ("id", "a")), ("y", ("id", "y")), ("nc", None)]
    # positional #(...) on a non-primitive: both readings are kept (see ir.Instance)
    assert inst["u2"].params == [(None, _n(4)), (None, _n(2))]
    assert inst["u2"].delay == [_same(_n(4)), _same(_n(2))]
    assert inst["u2"].connections == [(None, ("id", "a")), (None, ("id", "y"))]
    assert inst["u3"].array == (_n(3), _n(0))
    assert inst["u4"].connections == [(None, ("id", "a")), (None, None), (None, ("id", "y"))]
    assert inst["u5"].connections == []


# ------------------------------------------------------------------------------- UDPs
def test_udp_combinational_and_sequential_tables():
    (sf,) = read_sources([str(FIXTURES / "udp.v")])
    mux, latch = sf.primitives
    assert (mux.name, mux.output, mux.inputs, mux.sequential) == (
        "mux2_udp", "y", ["s", "a", "b"], False)
    assert mux.rows[0] == {"inputs": ["0", "1", "?"], "state": None, "output": "1", "line": 7}
    assert len(mux.rows) == 6 and mux.rows[-1]["inputs"] == ["x", "1", "1"]
    assert latch.sequential and latch.initial == "0" and latch.inputs == ["clk", "d", "rst_n"]
    got = [(r["inputs"], r["state"], r["output"]) for r in latch.rows]
    assert got == [
        (["?", "?", "0"], "?", "0"),
        (["r", "0", "1"], "?", "0"),
        (["(01)", "1", "1"], "?", "1"),
        (["f", "?", "1"], "?", "-"),
        (["?", "*", "1"], "?", "-"),
        (["?", "?", "p"], "?", "-"),
        (["(x1)", "b", "1"], "1", "1"),
    ]
    assert [r["line"] for r in latch.rows] == list(range(23, 30))
    (m,) = sf.modules
    inst = _by_name(m.items, ir.Instance)
    assert inst["m"].delay == [_same(_n(1)), _same(_n(2))]


def test_udp_row_with_wrong_input_count_is_an_error(tmp_path):
    with pytest.raises(ParseError) as err:
        _read(tmp_path, "primitive p (y, a, b);\noutput y; input a, b;\n"
                        "table\n 0 0 : 0 ;\n 1 : 1 ;\nendtable\nendprimitive\n")
    assert err.value.line == 5 and "input values" in err.value.message


# ------------------------------------------------------------------------------- specify
def test_specify_paths_and_skipped_timing_checks():
    (sf,) = read_sources([str(FIXTURES / "specify.v")])
    (m,) = sf.modules
    assert m.celldefine is True
    paths = [it for it in m.items if isinstance(it, ir.SpecifyPath)]
    assert len(paths) == 5
    p0, p1, p2, p3, p4 = paths
    real = lambda x: ("real", x)
    assert (p0.sources, p0.destinations, p0.full) == ([("id", "CK")], [("id", "Q")], False)
    assert p0.delay == [_same(real(0.3)), _same(real(0.4))]
    assert p1.full and p1.delay[0] == (real(0.1), real(0.2), real(0.3))
    assert (p2.edge, p2.polarity) == ("posedge", "+")
    assert p3.condition == ("id", "RN") and p3.delay == [_same(_n(1))]
    assert p4.delay == [_same(_n(2))] and p4.loc.line == 12
    specparams = {it.name: it for it in m.items if isinstance(it, ir.Param)}
    assert specparams["tsu"].value == real(0.2) and specparams["tsu"].local


# ------------------------------------------------------------------------------- attributes
def test_attributes_on_ports_nets_instances_and_modules():
    (sf,) = read_sources([str(FIXTURES / "press_ports.v")])
    (m,) = sf.modules
    assert m.attrs == {"top": None}
    assert m.ports["valve_enable"].attrs == {"hazlint_async": None}
    assert m.ports["guard_closed"].attrs == {}
    nets = _by_name(m.items, ir.Net)
    assert nets["both_hands"].attrs == {"keep": None, "note": "two-hand"}
    assert nets["armed[0]"].attrs == {"hazlint_async": None, "level": 1}
    inst = _by_name(m.items, ir.Instance)
    assert inst["u_both"].attrs == {"drive": "strong"}
    assert inst["u_arm"].attrs == {"reviewed": None}
    assert inst["u_out"].attrs == {}


def test_escaped_identifiers_lose_backslash_and_space():
    (sf,) = read_sources([str(FIXTURES / "press_ports.v")])
    inst = _by_name(sf.modules[0].items, ir.Instance)
    assert inst["u_arm"].connections[0] == (None, ("id", "armed[0]"))
    assert inst["u_out"].connections[1] == (None, ("id", "armed[0]"))


# ------------------------------------------------------------------------------- constructs
def test_ports_params_nets_and_continuous_assigns(tmp_path):
    m = _module(tmp_path, """
        module nonansi #(parameter W = 8, parameter [3:0] K = 4'hA) (a, b, y, q);
          input [W-1:0] a;
          input signed b;
          output y;
          output reg [1:0] q;
          parameter D = 2;
          localparam L = D * 2;
          wire [3:0] w1, w2;
          tri t; wand wa; wor wo; supply0 gnd; supply1 vdd; integer i;
          tri0 t0; triand ta;
          reg [7:0] mem [0:15];
          wire w3 = a[0] ^ b;
          assign y = w1[0], w2 = {2{a[1:0]}};
          assign {w1[3], w1[2:1]} = a[W-1 -: 3];
        endmodule
        """)
    assert m.port_order == ["a", "b", "y", "q"]
    assert [p.direction for p in m.ports.values()] == ["input", "input", "output", "output"]
    assert m.ports["b"].signed and m.ports["q"].net_type == "reg"
    assert m.ports["a"].width == (("binop", "-", ("id", "W"), _n(1)), _n(0))
    assert [(p.name, p.local) for p in m.params] == [("W", False), ("K", False)]
    assert m.params[1].width == (_n(3), _n(0)) and m.params[1].value == ("num", 4, 10, 0, False)
    params = {it.name: it for it in m.items if isinstance(it, ir.Param)}
    assert not params["D"].local and params["L"].local
    nets = _by_name(m.items, ir.Net)
    kinds = {n: nets[n].kind for n in nets}
    assert kinds == {"w1": "wire", "w2": "wire", "t": "tri", "wa": "wand", "wo": "wor",
                     "gnd": "supply0", "vdd": "supply1", "i": "integer", "t0": "tri0",
                     "ta": "triand", "mem": "reg", "w3": "wire"}
    assert nets["mem"].array == [(_n(0), _n(15))] and nets["i"].signed
    assigns = [it for it in m.items if isinstance(it, ir.Assign)]
    assert assigns[0].lhs == ("id", "w3")
    assert assigns[2].rhs == ("repl", _n(2), [("part", ("id", "a"), _n(1), _n(0))])
    assert assigns[3].rhs == ("ipart", ("id", "a"), ("binop", "-", ("id", "W"), _n(1)),
                              _n(3), "-")
    assert assigns[3].lhs[0] == "concat"


def test_generate_for_if_case_with_labels(tmp_path):
    m = _module(tmp_path, """
        module g #(parameter N = 4, parameter MODE = 1) (input [N-1:0] a, output [N-1:0] y);
          genvar i;
          generate
            for (i = 0; i < N; i = i + 1) begin : bit_slice
              buf b (y[i], a[i]);
            end
          endgenerate
          if (MODE == 1) begin : fast
            wire f;
          end else if (MODE == 2) begin : medium
            wire m;
          end else begin : slow
            wire s;
          end
          case (MODE)
            0, 1: begin : c01 wire c; end
            default: wire d;
          endcase
        endmodule
        """)
    gf, gi, gc = [it for it in m.items if isinstance(it, (ir.GenFor, ir.GenIf, ir.GenCase))]
    assert (gf.var, gf.name, gf.init, gf.step) == ("i", "bit_slice", _n(0),
                                                   ("binop", "+", ("id", "i"), _n(1)))
    assert isinstance(gf.items[0], ir.Instance)
    assert gi.name == "fast" and isinstance(gi.else_items[0], ir.GenIf)
    assert gi.else_items[0].name == "medium" and gi.else_items[0].else_name == "slow"
    assert [(c[0], c[1]) for c in gc.cases] == [([_n(0), _n(1)], "c01"), (None, None)]


def test_always_blocks_statements_and_sensitivity(tmp_path):
    m = _module(tmp_path, """
        module a (input clk, rst_n, en, d, input [1:0] s, output reg q, l, y);
          always @(posedge clk or negedge rst_n)
            if (!rst_n) q <= 1'b0;
            else q <= d;
          always @(en or d) if (en) l = d;
          always @(*) begin
            casez (s)
              2'b1?: y = d;
              2'b01: ;
              default: begin y = 1'b0; end
            endcase
          end
          always @* for (k = 0; k < 2; k = k + 1) y = d;
          initial q = 0;
          function f; input x; f = x; endfunction
        endmodule
        """)
    alw = [it for it in m.items if isinstance(it, ir.Always)]
    assert alw[0].sens == [("posedge", ("id", "clk")), ("negedge", ("id", "rst_n"))]
    assert alw[0].body == ("if", ("unop", "!", ("id", "rst_n")),
                           ("assign", "<=", ("id", "q"), ("num", 1, 0, 0, False), 4),
                           ("assign", "<=", ("id", "q"), ("id", "d"), 5))
    assert alw[1].sens == [("level", ("id", "en")), ("level", ("id", "d"))] and not alw[1].star
    assert alw[2].star
    (case,) = alw[2].body[1]
    assert case[:3] == ("case", "casez", ("id", "s"))
    assert case[3][0][0] == [("num", 2, 0b11, 0b01, False)]       # 2'b1?: ? is z
    assert case[3][1][1] == ("block", [], None, []) and case[3][2][0] is None
    assert alw[3].body == ("for", ("assign", "=", ("id", "k"), _n(0), 14),
                           ("binop", "<", ("id", "k"), _n(2)),
                           ("assign", "=", ("id", "k"), ("binop", "+", ("id", "k"), _n(1)), 14),
                           ("assign", "=", ("id", "y"), ("id", "d"), 14), 14)
    assert any(isinstance(it, ir.Initial) for it in m.items)
    (fn,) = [it for it in m.items if isinstance(it, ir.Function)]
    assert (fn.name, [p.name for p in fn.ports], fn.body) == (
        "f", ["x"], ("assign", "=", ("id", "f"), ("id", "x"), 16))


def test_columns_of_instances_assigns_always_and_declarations(tmp_path):
    m = _module(tmp_path, "module c(input a, output y);\n"
                          "  wire   n1;\n"
                          "    assign n1 = a;\n"
                          "  and g1 (y, n1, a), g2 (y, a, a);\n"
                          "      always @(a) ;\n"
                          "endmodule\n")
    net, asg, g1, g2, alw = m.items
    assert (net.loc.line, net.loc.col) == (2, 10)
    assert (asg.loc.line, asg.loc.col) == (3, 5)
    assert (g1.loc.line, g1.loc.col) == (4, 7) and g2.loc.col == 22
    assert (alw.loc.line, alw.loc.col) == (5, 7)
    assert m.ports["a"].loc.col == 10          # start of the port declaration


# ------------------------------------------------------------------------------- errors
def test_syntax_error_reports_original_file_line_and_token(tmp_path):
    (tmp_path / "body.vh").write_text("  wire ok;\n  and g1 (y a, b);\n")
    src = tmp_path / "top.v"
    src.write_text("`define X 1\nmodule top(input a, b, output y);\n`include \"body.vh\"\n"
                   "endmodule\n")
    with pytest.raises(ParseError) as err:
        read_sources([str(src)])
    e = err.value
    assert (e.path, e.line, e.construct) == (str(tmp_path / "body.vh"), 2, "a")
    assert str(e).startswith(f"{tmp_path / 'body.vh'}:2:")


def test_unexpected_end_of_input(tmp_path):
    with pytest.raises(ParseError) as err:
        _read(tmp_path, "module m(input a);\n  wire w;\n")
    assert "end of input" in err.value.message and err.value.path.endswith("t.v")


def test_deep_nesting_is_a_parse_error_not_a_recursion_error(tmp_path):
    deep = "(" * 5000 + "a" + ")" * 5000
    with pytest.raises(ParseError) as err:
        _read(tmp_path, f"module m(input a, output y);\nassign y = {deep};\nendmodule\n")
    assert err.value.line == 2 and "nested" in err.value.message
    chain = "~" * 3000 + "a"             # no brackets, but a deep expression tree
    with pytest.raises(ParseError) as err:
        _read(tmp_path, f"module m(input a, output y);\n\nassign y = {chain};\nendmodule\n")
    assert err.value.line == 3 and "nested" in err.value.message


# ------------------------------------------------------------------------------- linear lists
def _production(values):
    syms = []
    for v in values:
        s = YaccSymbol()
        s.value, s.lineno, s.lexpos = v, 1, 0
        syms.append(s)
    return YaccProduction(syms)


def test_every_stock_tuple_concatenation_is_overridden():
    source = inspect.getsource(VerilogParser)
    stock = {name for name, fn in vars(VerilogParser).items()
             if name.startswith("p_") and callable(fn) and "p[1] + (" in inspect.getsource(fn)}
    assert len(stock) >= 35              # the stock grammar has 37 such actions (pyverilog 1.3)
    for name in stock:
        assert getattr(hp.HzParser, name) is not getattr(VerilogParser, name), name
    assert "p[1] + (" in source


def test_list_actions_append_and_return_the_same_list():
    parser = hp.get_parser()
    checked = 0
    for name in hp.LINEAR_ACTIONS + ["p_sigtypes", "p_ports", "p_ioports"]:
        fn = getattr(parser, name)
        if fn is None:
            continue
        rule = fn.__doc__.split(":", 1)[1].split()
        if len(rule) < 2 or rule[0] != fn.__doc__.split(":")[0].strip():
            continue                          # not a left-recursive list rule
        lst = ["first"]
        values = [None, lst] + ["x"] * (len(rule) - 1)
        if name == "p_ioports":
            values[-1] = object()             # a full port declaration, not a bare name
        p = _production(values)
        fn(p)
        assert p[0] is lst, name
        assert len(lst) == 2, name
        checked += 1
    assert checked >= 25


@pytest.mark.slow
def test_forty_thousand_item_module_parses(tmp_path):
    n = 40000
    body = "".join(f"  not g{i} (n{i + 1}, n{i});\n" for i in range(n))
    m = _module(tmp_path, f"module big(input n0, output n{n});\n{body}endmodule\n")
    assert len(m.items) == n
    assert m.items[-1].name == f"g{n - 1}" and m.items[-1].loc.line == n + 1


# ------------------------------------------------------------------------------- table cache
_PROBE = ("import os, sys; from hazlint.frontends.verilog.grammar import HzParser; p = HzParser(); "
          "print(p.tables_source); print(p.tables_path); print(sorted(os.listdir('.')))")


@pytest.mark.slow
def test_parser_tables_cached_per_user_and_not_in_cwd(tmp_path):
    env = dict(os.environ, XDG_CACHE_HOME=str(tmp_path / "cache"),
               PYTHONPATH=str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    work = tmp_path / "work"
    work.mkdir()

    def probe():
        out = subprocess.run([sys.executable, "-c", _PROBE], cwd=work, env=env, text=True,
                             capture_output=True, check=True).stdout.split("\n")
        return out[0], out[1], out[2]

    src1, path1, listing1 = probe()
    assert src1 == "generated"
    assert path1.startswith(str(tmp_path / "cache" / "hazlint")) and path1.endswith(".json")
    inode = os.stat(path1).st_ino
    src2, path2, listing2 = probe()
    assert (src2, path2) == ("cache", path1)
    assert os.stat(path1).st_ino == inode                # read, not rewritten (a write replaces)
    assert listing1 == listing2 == "[]"                   # nothing written to the cwd
    with open(path1, "rb") as fh:
        assert fh.read(1) == b"{"                          # JSON, not a pickle


@pytest.mark.slow
def test_unwritable_cache_dir_builds_in_memory(tmp_path):
    ro = tmp_path / "ro"
    ro.mkdir()
    (ro / "hazlint").write_text("not a directory")       # makedirs of hazlint/parser fails
    env = dict(os.environ, XDG_CACHE_HOME=str(ro),
               PYTHONPATH=str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    out = subprocess.run([sys.executable, "-c", _PROBE], cwd=tmp_path, env=env, text=True,
                         capture_output=True, check=True).stdout.split("\n")
    assert out[0] == "generated" and out[1] == "None"


@pytest.mark.parametrize("text, line, construct", [
    ("module m(a);\n\n  input reg a;\nendmodule\n", 3, "a"),
    ("module m(input reg a);\nendmodule\n", 1, "a"),
    ("module m;\n input x = 1;\nendmodule\n", 2, "x"),
])
def test_invalid_declarations_name_line_and_signal(tmp_path, text, line, construct):
    # the stock checks raise without a location; the reader must still say where
    with pytest.raises(ParseError) as err:
        _read(tmp_path, text)
    assert (err.value.line, err.value.construct) == (line, construct)


def test_attribute_on_non_ansi_port_declaration(tmp_path):
    m = _module(tmp_path, """
        module press (guard_closed, valve_enable);
          input guard_closed;
          (* hazlint_async *) output valve_enable;
          assign valve_enable = guard_closed;
        endmodule
        """)
    assert m.ports["valve_enable"].attrs == {"hazlint_async": None}
    assert m.ports["guard_closed"].attrs == {}


def test_expression_operators_and_literals(tmp_path):
    m = _module(tmp_path, """
        module e (input [3:0] a, b, output [7:0] y);
          assign y = {~a & b | a ^ b, ~^a, !a && b || a != b, a === b ? 4'hx : 4'bz1?0,
                      -a + b * 2 / 3 % 5 ** 2, a << 1 >> 1 <<< 1 >>> 1, &a, ~&a, |a, ~|a,
                      ^a, a <= b, a >= b, a < b, a > b, a == b, a !== b, f(a, b), $signed(a),
                      8'sd5, 3.5e1, "txt"};
        endmodule
        """)
    (a,) = [it for it in m.items if isinstance(it, ir.Assign)]
    parts = a.rhs[1]
    assert parts[0] == ("binop", "|", ("binop", "&", ("unop", "~", ("id", "a")), ("id", "b")),
                        ("binop", "^", ("id", "a"), ("id", "b")))     # & binds tighter than |
    assert parts[1] == ("unop", "~^", ("id", "a"))
    assert parts[2][1] == "||" and parts[2][2][1] == "&&" and parts[2][3][1] == "!="
    cond = parts[3]
    assert cond[0] == "cond" and cond[1][1] == "==="
    assert cond[2] == ("num", 4, 0, 0b1111, False)            # 4'hx: all x
    assert cond[3] == ("num", 4, 0b1110, 0b1010, False)       # 4'bz1?0: z 1 z 0
    assert parts[4][1] == "+" and parts[4][2] == ("unop", "-", ("id", "a"))
    assert [p[1] for p in parts[6:10]] == ["&", "~&", "|", "~|"]
    assert [p[1] for p in parts[11:17]] == ["<=", ">=", "<", ">", "==", "!=="]
    assert parts[17] == ("call", "f", [("id", "a"), ("id", "b")])
    assert parts[18] == ("call", "$signed", [("id", "a")])
    assert parts[19] == ("num", 8, 5, 0, True)
    assert parts[20] == ("real", 35.0) and parts[21] == ("str", "txt")


def test_bare_named_block_in_generate_region(tmp_path):
    m = _module(tmp_path, """
        module b (input a, output y);
          generate
            begin : stage
              wire t;
              buf u (t, a);
            end
            if (1) buf v (y, a);
          endgenerate
        endmodule
        """)
    blk, gif = m.items
    assert isinstance(blk, ir.GenBlock) and blk.name == "stage"
    assert [type(x).__name__ for x in blk.items] == ["Net", "Instance"]
    assert isinstance(gif, ir.GenIf) and gif.name is None
    assert isinstance(gif.then_items[0], ir.Instance)


def test_defparam_is_kept_as_unsupported_and_macromodule_is_a_module(tmp_path):
    m = _module(tmp_path, """
        macromodule top (input a, output y);
          sub u1 (a, y);
          defparam u1.W = 4;
        endmodule
        """)
    assert m.name == "top"
    (d,) = [it for it in m.items if isinstance(it, ir.Unsupported)]
    assert d.what == "defparam u1.W = 4" and (d.loc.line, d.loc.col) == (4, 3)


def test_grammar_has_no_reduce_reduce_conflicts():
    import types

    import ply.yacc as yacc

    class Log:
        def __init__(self):
            self.lines = []

        def warning(self, msg, *args):
            self.lines.append(msg % args)

        error = warning

        def info(self, *args):
            pass

        debug = critical = info

    p = hp.HzParser.__new__(hp.HzParser)
    p.lexer = hp.HzLexer()
    p.lexer.build()
    p.tokens = p.lexer.tokens
    missing = types.ModuleType("no_tables")
    missing._tabversion = "none"
    log = Log()
    yacc.yacc(module=p, method="LALR", debug=True, debuglog=Log(), errorlog=log,
              write_tables=False, tabmodule=missing, outputdir=str(REPO), start="source_text")
    assert not [line for line in log.lines if "reduce/reduce" in line or "never reduced" in line]


def test_net_types_delays_and_strengths_on_declarations(tmp_path):
    # IEEE 1364: trireg and (2005) uwire net types, a delay on a net declaration, a drive
    # strength on a net declaration assignment
    m = _module(tmp_path, """\
        module m(input a, output y);
          trireg t;
          uwire u;
          wire #5 w1, w2;
          wire [3:0] #(1:2:3, 4) bus;
          wire (strong0, weak1) s = a;
          wire (pull0, pull1) [1:0] sv = {a, a};
          assign y = t & u & w1 & w2 & bus[0] & s & sv[1];
        endmodule
        """)
    nets = _by_name(m.items, ir.Net)
    assert nets["t"].kind == "trireg" and nets["u"].kind == "uwire"
    assert nets["w1"].delay == nets["w2"].delay == [_same(_n(5))]
    assert nets["bus"].delay == [(_n(1), _n(2), _n(3)), _same(_n(4))]
    assert nets["bus"].width is not None and nets["s"].delay is None
    assigns = [it for it in m.items if isinstance(it, ir.Assign)]
    assert [a.lhs for a in assigns][:2] == [("id", "s"), ("id", "sv")]
