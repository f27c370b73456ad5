"""Preprocessor: directives, macros, includes, line maps and errors."""
from __future__ import annotations

from pathlib import Path

import pytest

from hazlint.errors import ParseError
from hazlint.frontends.verilog.preprocess import preprocess
from hazlint.frontends.verilog.reader import read_sources

FIXTURES = Path(__file__).resolve().parent.parent / "fixtures" / "frontend"


def _pp(tmp_path, text, name="t.v", **kw):
    p = tmp_path / name
    p.write_text(text)
    return preprocess(str(p), **kw), str(p)


def _lines(res):
    return res.text.split("\n")[:-1]


def test_file_without_directives_passes_through_unchanged(tmp_path):
    text = "module m(a);\n  input a; /* c */\nendmodule\n"
    res, path = _pp(tmp_path, text)
    assert res.text == text
    assert [res.line_map.lookup(i) for i in (1, 3)] == [(path, 1), (path, 3)]


def test_macros_with_arguments_nested_parens_and_commas(tmp_path):
    res, _ = _pp(tmp_path, "`define W 4\n"
                           "`define AND2(a, b) ((a) & (b))\n"
                           "wire [`W-1:0] w;\n"
                           "assign y = `AND2(f(p, q), {c, d});\n")
    lines = _lines(res)
    assert lines[0] == lines[1] == ""                 # directive lines become empty lines
    assert lines[2] == "wire [4-1:0] w;"
    assert lines[3] == "assign y = ((f(p, q)) & ({c, d}));"


def test_multiline_define_body_expands_on_one_line_and_keeps_line_count(tmp_path):
    res, path = _pp(tmp_path, "`define OR3(a, b, c) a | \\\n   b | \\\n   c\n"
                              "assign y = `OR3(p, q, r);\n"
                              "wire after;\n")
    lines = _lines(res)
    assert len(lines) == 5
    assert lines[3].split() == ["assign", "y", "=", "p", "|", "q", "|", "r;"]
    assert res.line_map.lookup(5) == (path, 5) and lines[4] == "wire after;"


def test_macro_use_with_arguments_over_several_lines(tmp_path):
    res, path = _pp(tmp_path, "`define ADD(a, b) (a + b)\n"
                              "assign y = `ADD(p,\n"
                              "                q);  wire z;\n"
                              "wire w;\n")
    lines = _lines(res)
    assert lines[1].replace(" ", "") == "assigny=(p+q);wirez;"
    assert lines[2] == ""
    assert lines[3] == "wire w;" and res.line_map.lookup(4) == (path, 4)


def test_nested_macro_expansion_and_undef(tmp_path):
    res, _ = _pp(tmp_path, "`define A 1\n`define B (`A + `A)\nx = `B;\n`undef A\n"
                           "`ifdef A\nyes\n`else\nno\n`endif\n")
    lines = _lines(res)
    assert lines[2] == "x = (1 + 1);"
    assert lines[5] == "" and lines[7] == "no"


def test_conditionals_nest_and_elsif_picks_one_branch(tmp_path):
    text = ("`ifdef FAST\n"
            "  `ifndef SLOW\nfast_only\n  `else\nboth\n  `endif\n"
            "`elsif MEDIUM\nmedium\n"
            "`else\nnone\n"
            "`endif\n")
    kept = lambda defs: [l for l in _lines(_pp(tmp_path, text, defines=defs)[0]) if l.strip()]
    assert kept({"FAST": ""}) == ["fast_only"]
    assert kept({"FAST": "", "SLOW": ""}) == ["both"]
    assert kept({"MEDIUM": ""}) == ["medium"]
    assert kept({}) == ["none"]


def test_directives_inside_comments_and_strings_are_text(tmp_path):
    res, _ = _pp(tmp_path, "/* `ifdef X\n `bogus */ wire a; // `undefined_thing\n"
                           '$display("`not_a_macro");\n')
    lines = _lines(res)
    assert lines[1] == " `bogus */ wire a; // `undefined_thing"
    assert lines[2] == '$display("`not_a_macro");'


def test_include_line_map_and_search_order(tmp_path):
    inc = tmp_path / "inc"
    inc.mkdir()
    (inc / "defs.vh").write_text("wire from_dir;\n`define K 3\n")
    (tmp_path / "local.vh").write_text("wire from_local;\n")
    res, path = _pp(tmp_path, "wire a;\n`include \"local.vh\"\n`include \"defs.vh\"\n"
                              "assign b = `K;\n", include_dirs=[str(inc)])
    lines = _lines(res)
    where = {l.strip(): res.line_map.lookup(i) for i, l in enumerate(lines, 1) if l.strip()}
    assert where["wire from_local;"] == (str(tmp_path / "local.vh"), 1)
    assert where["wire from_dir;"] == (str(inc / "defs.vh"), 1)
    assert where["assign b = 3;"] == (path, 4)
    assert where["wire a;"] == (path, 1)
    assert res.includes == [str(tmp_path / "local.vh"), str(inc / "defs.vh")]


def test_include_from_including_directory_wins_over_include_dirs(tmp_path):
    inc = tmp_path / "inc"
    inc.mkdir()
    (inc / "same.vh").write_text("wire from_dir;\n")
    (tmp_path / "same.vh").write_text("wire from_local;\n")
    res, _ = _pp(tmp_path, '`include "same.vh"\n', include_dirs=[str(inc)])
    assert "from_local" in res.text and "from_dir" not in res.text


def test_include_outside_root_is_refused(tmp_path):
    proj = tmp_path / "proj"
    proj.mkdir()
    (tmp_path / "secret.vh").write_text("module leaked; endmodule\n")
    src = proj / "top.v"
    src.write_text('// top\n`include "../secret.vh"\n')
    with pytest.raises(ParseError) as err:
        read_sources([str(src)], root=str(proj))
    assert err.value.path == str(src) and err.value.line == 2
    assert "refused" in err.value.message and err.value.construct == "../secret.vh"
    # the same file is allowed once its directory is an include directory
    (sf,) = read_sources([str(src)], root=str(proj), include_dirs=[str(tmp_path)])
    assert sf.includes == [str(tmp_path / "secret.vh")]


def test_missing_include_names_file_and_line(tmp_path):
    with pytest.raises(ParseError) as err:
        _pp(tmp_path, "\n\n`include \"nowhere.vh\"\n")
    assert err.value.line == 3 and err.value.construct == "nowhere.vh"
    assert "t.v:3: error:" in str(err.value)


def test_recursive_include_is_an_error(tmp_path):
    (tmp_path / "a.vh").write_text('`include "b.vh"\n')
    (tmp_path / "b.vh").write_text('\n`include "a.vh"\n')
    with pytest.raises(ParseError) as err:
        _pp(tmp_path, '`include "a.vh"\n')
    assert err.value.path.endswith("b.vh") and err.value.line == 2
    assert "recursive include" in err.value.message


@pytest.mark.parametrize("text, line, construct, words", [
    ("wire a;\n`ifdef X\nwire b;\n", 2, "`ifdef", "unterminated"),
    ("\n`endif\n", 2, "`endif", "without"),
    ("wire a;\n`frobnicate 3\n", 2, "`frobnicate", "unknown compiler directive"),
    ("`define A `B\n`define B `A\nx = `A;\n", 3, "`A", "recursive macro"),
    ("`define F(a, b) a\nx = `F(1);\n", 2, "`F", "argument"),
    ("`timescale 3ns/1ps\n", 1, "`timescale 3ns/1ps", "timescale"),
])
def test_errors_name_file_line_and_construct(tmp_path, text, line, construct, words):
    with pytest.raises(ParseError) as err:
        _pp(tmp_path, text)
    e = err.value
    assert (e.line, e.construct) == (line, construct)
    assert words in e.message
    assert e.path.endswith("t.v")


def test_line_directive_is_honoured(tmp_path):
    res, _ = _pp(tmp_path, 'wire a;\n`line 100 "orig.v" 0\nwire b;\nwire c;\n')
    assert res.line_map.lookup(3) == ("orig.v", 100)
    assert res.line_map.lookup(4) == ("orig.v", 101)


def test_timescale_celldefine_nettype_reach_each_module(tmp_path):
    p = tmp_path / "ts.v"
    p.write_text("`timescale 10ns/100ps\n`default_nettype none\nmodule a; endmodule\n"
                 "`celldefine\n`timescale 1ps/1fs\nmodule b; endmodule\n`endcelldefine\n"
                 "`resetall\nmodule c; endmodule\n")
    (sf,) = read_sources([str(p)])
    a, b, c = sf.modules
    assert a.timescale == pytest.approx((10e-9, 100e-12))     # 10 ns / 100 ps
    assert (a.celldefine, a.default_nettype) == (False, "none")
    assert b.timescale == pytest.approx((1e-12, 1e-15)) and b.celldefine is True
    assert (c.timescale, c.celldefine, c.default_nettype) == (None, False, "wire")


def test_include_fixture_with_include_dir():
    (sf,) = read_sources([str(FIXTURES / "include_main.v")],
                         include_dirs=[str(FIXTURES / "inc")])
    (m,) = sf.modules
    (assign,) = [it for it in m.items if type(it).__name__ == "Assign"]
    assert assign.rhs == ("binop", "&", ("id", "g"), ("id", "h"))
    assert assign.loc.line == 4 and assign.loc.path.endswith("include_main.v")
    assert sf.includes == [str(FIXTURES / "inc" / "press_defs.vh")]
