"""Liberty reader: syntax, cell semantics, NLDM interpolation, errors.

Outside references: the Liberty file Debian's yosys package ships (/usr/share/yosys/cells.lib);
the NLDM look-up rules (bilinear interpolation over the breakpoints, linear extrapolation past
the edges: common practice for this format). fixtures/liberty/press_cells.lib is our own
library with invented numbers.
"""
from __future__ import annotations

import os
import random
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from hazlint.errors import ParseError
from hazlint.delays.liberty import read_liberty, table_of, verilog_models
from hazlint.delays.liberty_syntax import Table, parse_liberty, tokenize

ROOT = Path(__file__).resolve().parent.parent
PRESS = str(ROOT / "fixtures" / "liberty" / "press_cells.lib")
YOSYS_LIB = "/usr/share/yosys/cells.lib"


def lib_text(body: str, templates: str = "") -> str:
    return ("library (t) {\n  time_unit : \"1ns\" ;\n" + templates + body + "\n}\n")


# ------------------------------------------------------------------------------------------
# The library Debian's yosys ships


@pytest.mark.skipif(not os.path.exists(YOSYS_LIB), reason="Debian yosys not installed")
def test_yosys_cells_lib_flip_flops():
    lib = read_liberty(YOSYS_LIB)
    # cells.lib as shipped by Debian yosys 0.23: DFF_N, DFF_P and DFF_{N,P}{N,P}{0,1} (read from
    # the file itself); the name says clock edge, reset level and reset value - the same letters
    # as yosys's internal $_DFF_<C><R><V>_ cells (yosys manual, from memory)
    assert sorted(lib.cells) == sorted(["DFF_N", "DFF_P"] + [f"DFF_{c}{r}{v}" for c in "NP"
                                                              for r in "NP" for v in "01"])
    assert lib.skipped == {}
    for name, cell in lib.cells.items():
        seq = cell.sequential
        assert seq is not None and seq.kind == "ff"
        assert seq.state_outputs == {"Q": "Q"}
        assert cell.outputs == ["Q"] and cell.functions == {}
        clk_letter = name[4]
        assert seq.clocked_on == (("not", ("var", "C")) if clk_letter == "N" else ("var", "C"))
        assert seq.next_state == ("var", "D")
        if len(name) == 5:
            assert seq.clear is None and seq.preset is None
            assert sorted(cell.inputs) == ["C", "D"]
            continue
        level, value = name[5], name[6]
        ctl = ("not", ("var", "R")) if level == "N" else ("var", "R")
        assert (seq.clear, seq.preset) == ((ctl, None) if value == "0" else (None, ctl))
        assert sorted(cell.inputs) == ["C", "D", "R"]
        assert cell.arcs == {}          # the file has no timing groups
    lines = Path(YOSYS_LIB).read_text().splitlines()
    for name, cell in lib.cells.items():     # each cell's line is that of its "cell(NAME)"
        assert re.match(rf"\s*cell\s*\(\s*{name}\s*\)", lines[cell.line - 1])


# ------------------------------------------------------------------------------------------
# Our invented library: cells and functions


@pytest.fixture(scope="module")
def press():
    return read_liberty(PRESS)


def test_press_cells_functions(press):
    assert press.name == "press_cells"
    assert press.time_unit == pytest.approx(1e-9)
    assert press.capacitive_load_unit == (1.0, "pf")
    assert press.cells["AOI21X1"].functions["Y"] == \
        ("not", ("or", ("and", ("var", "A1"), ("var", "A2")), ("var", "B")))
    assert press.cells["AND2X1"].functions["Y"] == ("and", ("var", "A"), ("var", "B"))
    assert press.cells["NOR2X1"].functions["Y"] == ("not", ("or", ("var", "A"), ("var", "B")))
    assert press.cells["TIEHI"].functions["Y"] == ("const", 1)
    assert press.cells["TIEHI"].inputs == []
    t = press.cells["TBUFX1"]
    assert t.functions["Y"] == ("var", "A") and t.three_state["Y"] == ("not", ("var", "OE"))


def test_press_sequential_cells(press):
    r = press.cells["DFFRX1"]
    assert r.sequential.kind == "ff"
    assert r.sequential.clear == ("not", ("var", "RN")) and r.sequential.preset is None
    assert r.sequential.state_outputs == {"Q": "Q", "QN": "QN"}
    assert r.arcs[("CK", "Q")].rise_max == pytest.approx(0.55)
    assert r.arcs[("CK", "QN")].fall_max == pytest.approx(0.57)
    # setup/hold groups are checks, not delays
    assert ("CK", "D") not in r.arcs
    # a clear arc gives only the fall table; the rise takes the same value
    assert r.arcs[("RN", "Q")].fall_min == pytest.approx(0.40)
    sr = press.cells["DFFSRX1"].sequential
    assert (sr.clear_preset_var1, sr.clear_preset_var2) == ("L", "H")
    assert sr.preset == ("not", ("var", "SN"))
    la = press.cells["DLATCHX1"].sequential
    assert la.kind == "latch" and la.enable == ("var", "G") and la.data_in == ("var", "D")


def test_state_variable_names_are_normalised():
    text = lib_text("""
      cell (DFQ) {
        ff (S1, S1N) { clocked_on : "CP" ; next_state : "D & !S1N" ; }
        pin (D) { direction : input ; }
        pin (CP) { direction : input ; }
        pin (Q) { direction : output ; function : "S1" ; }
        pin (QB) { direction : output ; function : "!S1" ; }
      }""")
    c = read_liberty("x.lib", text=text).cells["DFQ"]
    assert c.sequential.state_outputs == {"Q": "Q", "QB": "QN"}
    assert c.sequential.next_state == ("and", ("var", "D"), ("not", ("var", "IQN")))


def test_unmodelled_cells_are_skipped_with_reason():
    text = lib_text("""
      cell (ST) { statetable ("A", "Q") { table : "H : - : H" ; }
        pin (A) { direction : input ; } pin (Q) { direction : output ; } }
      cell (MIXQ) { ff (IQ, IQN) { clocked_on : "C" ; next_state : "D" ; }
        pin (C) { direction : input ; } pin (D) { direction : input ; }
        pin (E) { direction : input ; }
        pin (Q) { direction : output ; function : "IQ & E" ; } }
      cell (OK) { pin (A) { direction : input ; }
        pin (Y) { direction : output ; function : "A" ; } }
    """)
    lib = read_liberty("x.lib", text=text)
    assert set(lib.cells) == {"OK"}
    assert "statetable" in lib.skipped["ST"]
    assert "mixes the state" in lib.skipped["MIXQ"]


# ------------------------------------------------------------------------------------------
# NLDM look-up


def test_grid_points_equal_the_table(press):
    (tab,) = table_of(PRESS, "INVX1", "Y", "A", "rise")
    rows = [[0.10, 0.20, 0.50], [0.14, 0.24, 0.54], [0.26, 0.36, 0.66]]   # as in the fixture
    for i, slew in enumerate([0.1, 0.3, 0.9]):
        for j, load in enumerate([0.01, 0.05, 0.2]):
            assert tab.at(slew, load) == pytest.approx(rows[i][j])
            lib = read_liberty(PRESS, input_slew=slew, output_load=load)
            assert lib.cells["INVX1"].arcs[("A", "Y")].rise_max == pytest.approx(rows[i][j])


def test_between_grid_points_hand_computed_bilinear(press):
    # hand computation (common practice for NLDM: bilinear between the four neighbours)
    # INVX1 rise at slew 0.15, load 0.1: slew fraction (0.15-0.1)/(0.3-0.1) = 0.25,
    # load fraction (0.1-0.05)/(0.2-0.05) = 1/3; neighbours 0.20 0.50 / 0.24 0.54:
    # along load 0.20 + 0.30/3 = 0.30 and 0.24 + 0.30/3 = 0.34; along slew 0.30 + 0.25*0.04
    lib = read_liberty(PRESS, input_slew=0.15, output_load=0.1)
    assert lib.cells["INVX1"].arcs[("A", "Y")].rise_max == pytest.approx(0.31)
    # fall table at the same point: neighbours 0.16 0.40 / 0.20 0.44:
    # 0.16 + 0.24/3 = 0.24, 0.20 + 0.24/3 = 0.28, 0.24 + 0.25*0.04 = 0.25
    assert lib.cells["INVX1"].arcs[("A", "Y")].fall_max == pytest.approx(0.25)
    # midpoint of a cell: the mean of its four corners (0.10+0.20+0.14+0.24)/4
    lib = read_liberty(PRESS, input_slew=0.2, output_load=0.03)
    assert lib.cells["INVX1"].arcs[("A", "Y")].rise_min == pytest.approx(0.17)


def test_extrapolation_past_the_edges():
    # linear extrapolation from the last segment (common practice for NLDM tables)
    # slew 1.5 is past 0.9: fraction (1.5-0.3)/(0.9-0.3) = 2 at load 0.01: 0.14 + 2*(0.26-0.14)
    lib = read_liberty(PRESS, input_slew=1.5, output_load=0.01)
    assert lib.cells["INVX1"].arcs[("A", "Y")].rise_max == pytest.approx(0.38)
    # load 0 is below 0.01: fraction (0-0.01)/0.04 = -0.25 at slew 0.1: 0.10 - 0.25*0.10
    lib = read_liberty(PRESS, input_slew=0.1, output_load=0.0)
    assert lib.cells["INVX1"].arcs[("A", "Y")].rise_max == pytest.approx(0.075)
    # far below: extrapolation would go negative; a delay is clamped at zero
    lib = read_liberty(PRESS, input_slew=-5.0, output_load=-1.0)
    assert lib.cells["INVX1"].arcs[("A", "Y")].rise_max == 0.0


def test_variable_order_follows_the_template():
    # NAND2X1 pin B uses a template whose variable_1 is the load: rows are loads
    # midpoint (slew 0.5, load 0.105): the mean of 0.13 0.29 0.61 0.77 (hand computed) = 0.45
    lib = read_liberty(PRESS, input_slew=0.5, output_load=0.105)
    assert lib.cells["NAND2X1"].arcs[("B", "Y")].rise_max == pytest.approx(0.45)
    # slew 0.9 (second column), load 0.01 (first row): 0.29; a swapped reading would give 0.61
    lib = read_liberty(PRESS, input_slew=0.9, output_load=0.01)
    assert lib.cells["NAND2X1"].arcs[("B", "Y")].rise_max == pytest.approx(0.29)


def test_one_dimensional_and_scalar_tables_and_related_pin_list():
    lib = read_liberty(PRESS, input_slew=0.7, output_load=0.03)
    nor = lib.cells["NOR2X1"]
    # load-only table: 0.20 + 0.5*(0.30-0.20); the slew does not matter
    assert nor.arcs[("A", "Y")].rise_max == pytest.approx(0.25)
    assert nor.arcs[("B", "Y")] == nor.arcs[("A", "Y")]        # related_pin : "A B"
    assert lib.cells["BUFX1"].arcs[("A", "Y")].fall_min == pytest.approx(0.21)


def test_default_point_is_the_first_breakpoint(press):
    assert press.cells["INVX1"].arcs[("A", "Y")].rise_max == pytest.approx(0.10)
    assert press.cells["NAND2X1"].arcs[("B", "Y")].rise_max == pytest.approx(0.13)


def test_state_dependent_arcs_fold_to_min_and_max(press):
    a = press.cells["XOR2X1"].arcs[("A", "Y")]
    assert (a.rise_min, a.rise_max, a.fall_min, a.fall_max) == pytest.approx(
        (0.40, 0.46, 0.36, 0.38))
    assert len([t for t in press.timing["XOR2X1"] if t.related_pin == "A"]) == 2


def _bilinear_lib(a, b, c, d, xs, ys):
    """A library whose table is the bilinear function a + b*x + c*y + d*x*y at its grid."""
    rows = ", ".join('"' + ", ".join(f"{a + b * x + c * y + d * x * y:.12g}" for y in ys) + '"'
                     for x in xs)
    return lib_text(f"""
      cell (C) {{ pin (A) {{ direction : input ; }}
        pin (Y) {{ direction : output ; function : "A" ;
          timing () {{ related_pin : "A" ;
            cell_rise (tpl) {{ values ({rows}) ; }}
            cell_fall (tpl) {{ values ({rows}) ; }} }} }} }}""",
                    f"""lu_table_template (tpl) {{ variable_1 : input_net_transition ;
          variable_2 : total_output_net_capacitance ;
          index_1 ("{', '.join(map(str, xs))}") ; index_2 ("{', '.join(map(str, ys))}") ; }}
    """)


def test_bilinear_functions_are_reproduced_everywhere():
    # a bilinear function is reproduced exactly by bilinear interpolation and by its linear
    # extrapolation (a property of the method, so the check does not depend on our numbers)
    rnd = random.Random(7)
    for _ in range(10):
        a, b, c, d = (rnd.uniform(0.0, 2.0) for _ in range(4))
        xs = sorted(rnd.sample(range(1, 60), 4))
        ys = sorted(rnd.sample(range(1, 60), 3))
        xs = [x / 50 for x in xs]
        ys = [y / 100 for y in ys]
        text = _bilinear_lib(a, b, c, d, xs, ys)
        for _ in range(5):
            x = rnd.uniform(-0.5, 1.8)
            y = rnd.uniform(-0.3, 0.9)
            want = a + b * x + c * y + d * x * y
            got = read_liberty("bi.lib", text=text, input_slew=x, output_load=y)
            assert got.cells["C"].arcs[("A", "Y")].rise_max == pytest.approx(max(want, 0.0),
                                                                             abs=1e-9)


def test_three_dimensional_table_is_multilinear():
    t = Table(["input_net_transition", "total_output_net_capacitance", "x"],
              [[0.0, 1.0], [0.0, 2.0], [0.0, 4.0]],
              [float(i) for i in range(8)])
    # value = 4*i + 2*j + k at corner (i, j, k); trilinear gives 4*s + 2*(l/2) + (z/4)
    assert t.lookup([0.5, 1.0, 2.0]) == pytest.approx(4 * 0.5 + 2 * 0.5 + 0.5)


def test_linear_delay_model():
    text = lib_text("""
      cell (L) { pin (A) { direction : input ; }
        pin (Y) { direction : output ; function : "!A" ;
          timing () { related_pin : "A" ; intrinsic_rise : 0.5 ; rise_resistance : 2.0 ;
                      intrinsic_fall : 0.4 ; fall_resistance : 1.0 ; } } }""")
    lib = read_liberty("l.lib", text=text, output_load=0.1)
    d = lib.cells["L"].arcs[("A", "Y")]
    # generic CMOS linear model: intrinsic + resistance * load (common practice)
    assert (d.rise_max, d.fall_max) == pytest.approx((0.7, 0.5))


# ------------------------------------------------------------------------------------------
# Syntax


def test_tokens_and_tree_keep_lines():
    text = ('library (x) {\n  /* a\n  comment */ delay_model : table_lookup\n'
            '  cell ("A1") {\n    pin (A) { direction : input ; }\n'
            '    values ("1, 2", \\\n "3, 4") ;\n  }\n}\n')
    top = parse_liberty(text, "x.lib")
    assert top.kind == "library" and top.name == "x"
    assert top.attr("delay_model") == "table_lookup"       # no ';' at the end of the line
    assert top.attr_line("delay_model") == 3
    cell = next(top.subgroups("cell"))
    assert cell.name == "A1" and cell.line == 4
    assert next(cell.subgroups("pin")).line == 5
    assert cell.attr("values") == ["1, 2", "3, 4"]
    assert [t.kind for t in tokenize('a : "b" ;')] == ["word", "punct", "string", "punct", "end"]


BAD = [
    ("library (t) {\n cell (A) {\n pin (Y) { direction : output ; }\n", 4, "not closed"),
    ("library (t) {\n /* never ends\n}\n", 2, "unterminated comment"),
    ('library (t) {\n cell (A) { pin (Y) { function : "A ; } }\n}\n', 2, "unterminated string"),
    ("cell (A) { }\n", 1, "starts with"),
    ("library (t) {\n  time_unit : ;\n}\n", 2, "no value"),
    ("library (t) {\n  x y ;\n}\n", 2, "expected ':' or '('"),
    ("library (t) {\n}\nextra\n", 3, "after the end"),
    ('library (t) {\n cell (A) {\n  pin (Y) { direction : sideways ; }\n }\n}\n', 3, "direction"),
    ('library (t) {\n cell (A) {\n  pin (Y) { direction : output ;\n   function : "A &" ; }\n'
     ' }\n}\n', 4, "function"),
    ('library (t) {\n cell (A) {\n  pin (Y) { direction : output ; function : "Q" ; }\n }\n}\n',
     3, "unknown pin 'Q'"),
    ('library (t) {\n cell (A) { pin (A) { direction : input ; }\n  pin (Y) { direction : output ;'
     ' function : "A" ;\n   timing () { related_pin : "A" ;\n'
     '    cell_rise (nope) { values ("1") ; }'
     ' } } }\n}\n', 5, "undefined template 'nope'"),
    ('library (t) {\n lu_table_template (t2) { variable_1 : input_net_transition ;\n'
     '  index_1 ("0.1, 0.2") ; }\n cell (A) { pin (A) { direction : input ; }\n'
     '  pin (Y) { direction : output ; function : "A" ;\n   timing () { related_pin : "A" ;\n'
     '    cell_rise (t2) {\n     values ("1, 2, 3") ; } } } }\n}\n', 8, "3 values"),
    ('library (t) {\n lu_table_template (t2) { variable_1 : input_net_transition ;\n'
     '  index_1 ("0.2, 0.1") ; }\n cell (A) { pin (A) { direction : input ; }\n'
     '  pin (Y) { direction : output ; function : "A" ;\n   timing () { related_pin : "A" ;\n'
     '    cell_rise (t2) { values ("1, 2") ; } } } }\n}\n', 7, "increase"),
    ('library (t) {\n cell (A) { pin (A) { direction : input ; }\n  pin (Y) { direction : output ;'
     ' function : "A" ;\n   timing () { related_pin : "A" ;\n    cell_rise (scalar) {'
     ' values ("fast") ; } } } }\n}\n', 5, "'fast' is not a number"),
    ('library (t) {\n cell (A) { pin (A) { direction : input ; }\n  pin (Y) { direction : output ;'
     ' function : "A" ;\n   timing () { related_pin : "Z" ; } } }\n}\n', 4, "related_pin 'Z'"),
    ('library (t) {\n cell (F) {\n  ff (IQ, IQN) { next_state : "D" ; }\n'
     '  pin (D) { direction : input ; } }\n}\n', 3, "clocked_on"),
]


@pytest.mark.parametrize("text,line,words", BAD, ids=[b[2] for b in BAD])
def test_malformed_files_name_file_and_line(text, line, words):
    with pytest.raises(ParseError) as ei:
        read_liberty("bad.lib", text=text)
    e = ei.value
    assert e.path == "bad.lib" and e.line == line, str(e)
    assert words in str(e)
    assert re.match(rf"bad\.lib:{line}: error: Liberty", str(e)) or "cannot" in str(e)


def test_missing_file_is_a_parse_error(tmp_path):
    with pytest.raises(ParseError) as ei:
        read_liberty(str(tmp_path / "none.lib"))
    assert "cannot read Liberty file" in str(ei.value)


# ------------------------------------------------------------------------------------------
# A netlist Debian's yosys maps onto its own cells.lib, linted and simulated


def _yosys_map(tmp: Path) -> Path:
    out = tmp / "press_seq_mapped.v"
    src = ROOT / "fixtures" / "liberty" / "press_seq.v"
    # yosys 0.23 (Debian): generic synthesis, flip-flops onto cells.lib; cells.lib has no
    # combinational cells, so the logic stays as simple gates that write_verilog prints as assigns
    script = (f"read_verilog {src}; synth -top press_seq; dfflibmap -liberty {YOSYS_LIB}; "
              f"abc -g AND,NAND,OR,NOR,XOR,XNOR,ANDNOT,ORNOT,MUX; opt_clean; "
              f"write_verilog -noattr {out}")
    subprocess.run(["yosys", "-q", "-p", script], check=True, capture_output=True, text=True)
    return out


needs_yosys = pytest.mark.skipif(
    not os.path.exists(YOSYS_LIB) or not shutil.which("yosys") or not shutil.which("iverilog"),
    reason="Debian yosys and iverilog needed")


@pytest.fixture(scope="module")
def mapped(tmp_path_factory):
    from hazlint.loader import load_design
    tmp = tmp_path_factory.mktemp("yosys")
    net = _yosys_map(tmp)
    lib = read_liberty(YOSYS_LIB)
    return tmp, net, lib, load_design(str(net), library=lib)


@pytest.mark.slow
@needs_yosys
def test_yosys_mapped_registers_have_the_right_pins(mapped):
    tmp, net, lib, design = mapped
    text = net.read_text()
    g = design.graph
    by_q = {}
    for r in design.registers:
        q = r.outputs["Q"]
        by_q[g.nodes[q]["name"]] = r
    # nets merged with an output port take the port's name (fault_r -> fault, seen -> cycle_seen)
    assert sorted(by_q) == ["armed", "cycle_seen", "fault", "valve_r"]

    def src(sink):      # the primary input (or net) feeding a sink
        return g.nodes[g.nodes[sink]["inputs"][0]]["name"]
    # what press_seq.v says of each register (ours), mapped by yosys onto cells.lib
    expect = {"armed": ("posedge", "reset", "rst_n", 0), "fault": ("posedge", "set", "set_n", 0),
              "valve_r": ("negedge", None, None, None),
              "cycle_seen": ("posedge", "reset", "clr", 1)}
    for q, (edge, role, pin_net, level) in expect.items():
        r = by_q[q]
        assert r.kind == "ff" and r.clock_edge == edge, q
        assert src(r.pins["clock"]) == "clk"
        assert set(r.pins) == {"clock", "data"} | ({role} if role else set()), q
        if role:
            assert src(r.pins[role]) == pin_net and r.active[role] == level, q
        # the cell yosys chose for it is the one whose name says this behaviour
        m = re.search(rf"(DFF_\w+) {re.escape(_inst(r))} \(", text)
        assert m and m.group(1) == r.cell
    assert {r.cell for r in design.registers} == {"DFF_PN0", "DFF_PN1", "DFF_N", "DFF_PP0"}


def _inst(r) -> str:
    """The register's cell instance name in the netlist (its register name is its Q net)."""
    return r.instance.rsplit(".", 1)[-1]


@pytest.mark.slow
@needs_yosys
def test_yosys_mapped_function_equals_icarus(mapped):
    """Every combination of inputs and register states: the gate graph's outputs and register
    pin values equal Icarus Verilog's simulation of the mapped netlist with cell models written
    from the parsed library (register contents forced inside the models)."""
    tmp, net, lib, design = mapped
    g = design.graph
    ins = [p for p in design.inputs if p != "clk"]
    regs = sorted(design.registers, key=lambda r: r.name)
    nbits = len(ins) + len(regs)
    (tmp / "models.v").write_text(verilog_models(lib))
    tb = ["module tb;", f"  reg [{nbits - 1}:0] v;", "  reg clk = 0;"]
    outs = list(design.outputs)
    tb += [f"  wire {o};" for o in outs]
    conns = [f".{p}(v[{k}])" for k, p in enumerate(ins)] + [".clk(clk)"] + \
        [f".{o}({o})" for o in outs]
    tb.append(f"  press_seq dut({', '.join(conns)});")
    tb.append("  integer i;")
    tb.append("  initial begin")
    tb.append(f"    for (i = 0; i < {1 << nbits}; i = i + 1) begin")
    tb.append("      v = i;")
    # iverilog 11 evaluates a force's right-hand side once, so force again for every vector
    for k, r in enumerate(regs):
        tb.append(f"      force dut.{_inst(r)}.IQ = v[{len(ins) + k}];")
    tb.append("      #1;")
    pins = [f"dut.{_inst(r)}.{p}" for r in regs for p in _cell_inputs(lib, r.cell)]
    fields = outs + pins
    tb.append(f'      $display("%0d {" ".join(["%b"] * len(fields))}", i, '
              f'{", ".join(fields)});')
    tb += ["    end", "    $finish;", "  end", "endmodule"]
    (tmp / "tb.v").write_text("\n".join(tb) + "\n")
    subprocess.run(["iverilog", "-o", str(tmp / "sim"), str(tmp / "tb.v"), str(net),
                    str(tmp / "models.v")], check=True, capture_output=True, text=True)
    run = subprocess.run(["vvp", "-n", str(tmp / "sim")], check=True, capture_output=True,
                         text=True)
    rows = {}
    for line in run.stdout.splitlines():
        parts = line.split()
        if parts and parts[0].isdigit():
            rows[int(parts[0])] = [int(x) for x in parts[1:]]
    assert len(rows) == 1 << nbits
    # hazlint: all vectors at once, bit-parallel (bit i of every value is vector i)
    width = 1 << nbits
    values = {}
    for k, p in enumerate(ins):
        values[p] = sum(1 << i for i in range(width) if (i >> k) & 1)
    for k, r in enumerate(regs):
        values[r.name] = sum(1 << i for i in range(width) if (i >> (len(ins) + k)) & 1)
    values["clk"] = 0
    got = design.evaluate(values, width, nets=True)
    cols = list(outs)
    sinks = []
    for r in regs:
        spec = lib.cells[r.cell].sequential
        for p in _cell_inputs(lib, r.cell):
            role = "clock" if p == "C" else "data" if p == "D" else \
                ("reset" if spec.clear is not None else "set")
            sinks.append(r.pins[role])
    for i in range(width):
        want = rows[i]
        mine = [(got[o] >> i) & 1 for o in cols] + [(got[s] >> i) & 1 for s in sinks]
        assert mine == want, (i, fields)


def _cell_inputs(lib, cell):
    return [p for p in ("C", "D", "R") if p in lib.cells[cell].inputs]



def test_load_design_with_a_liberty_path(tmp_path):
    from hazlint.loader import load_design
    v = tmp_path / "latch.v"
    v.write_text("module fault_hold(input guard_closed, input maint_key, output hold, output y);\n"
                 "  wire one, g_n;\n"
                 "  TIEHI  u_one (.Y(one));\n"
                 "  INVX1  u_inv (.A(guard_closed), .Y(g_n));\n"
                 "  NAND2X1 u_nd (.A(g_n), .B(maint_key), .Y(y));\n"
                 "  DLATCHX1 u_lat (.D(one), .G(g_n), .Q(hold));\n"
                 "endmodule\n")
    design = load_design(str(v), library=PRESS)       # a .lib path: read by read_liberty
    lib = read_liberty(PRESS)
    g = design.graph
    nd = design.net_node("y")
    assert g.nodes[nd]["cell"] == "NAND2X1" and g.nodes[nd]["pins"] == ["A", "B"]
    # delays per pin come from the Liberty arcs (tables at their first breakpoints)
    assert g.nodes[nd]["delays"] == [lib.cells["NAND2X1"].arcs[("A", "Y")],
                                     lib.cells["NAND2X1"].arcs[("B", "Y")]]
    (lat,) = design.registers
    assert lat.kind == "latch" and lat.cell == "DLATCHX1" and lat.active["enable"] == 1
    assert g.nodes[g.nodes[lat.pins["enable"]]["inputs"][0]]["name"] == "g_n"
    # the truth table of the combinational part: y = !( !guard & maint )
    out = design.evaluate({"guard_closed": 0b0101, "maint_key": 0b0011}, 4)
    assert out["y"] == 0b1101
