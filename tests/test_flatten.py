"""Elaboration of structural Verilog into the gate graph (real pyverilog parse, real flattener).

Functional checks compare Design.evaluate with Python's own integer arithmetic and Boolean
operators on random vectors (the Verilog semantics of these operators on unsigned values, IEEE
1364-2005 section 5, common practice).
"""
from __future__ import annotations

import random
import subprocess
import sys
import textwrap

import pytest

import hazlint
from hazlint.errors import HazlintError


def load(tmp_path, text, name="t.v", **kw):
    p = tmp_path / name
    p.write_text(textwrap.dedent(text))
    return hazlint.load_design([str(p)], **kw)


def bus(d_values, name, value, width):
    for i in range(width):
        d_values[f"{name}[{i}]"] = (value >> i) & 1


def read_bus(out, name, width):
    return sum((out[f"{name}[{i}]"] & 1) << i for i in range(width))


def test_hierarchy_named_positional_and_instance_paths(tmp_path):
    d = load(tmp_path, """
        module inv(input a, output y); not g (y, a); endmodule
        module pair(input a, b, output y);
          wire t;
          inv u_a (.a(a), .y(t));
          and g2 (y, t, b);
        endmodule
        module top(input x, z, output q);
          pair p0 (x, z, q);
        endmodule
    """)
    assert d.top == "top" and d.inputs == ["x", "z"] and d.outputs == ["q"]
    g = d.graph
    inv = [n for n, a in g.nodes(data=True) if a.get("cell") == "not"]
    assert len(inv) == 1
    assert g.nodes[inv[0]]["instance"] == "top.p0.u_a.g"
    assert g.nodes[inv[0]]["line"] == 2
    and_node = next(n for n, a in g.nodes(data=True) if a.get("cell") == "and")
    assert g.nodes[and_node]["instance"] == "top.p0.g2"
    for x in (0, 1):
        for z in (0, 1):
            assert d.evaluate({"x": x, "z": z})["q"] == ((1 - x) & z)


def test_parameters_generate_and_selects(tmp_path):
    d = load(tmp_path, """
        module slice #(parameter W = 4, parameter INV = 0) (input [W-1:0] a, output [W-1:0] y);
          genvar i;
          generate
            for (i = 0; i < W; i = i + 1) begin : g
              if (INV) begin : n
                not u (y[i], a[i]);
              end else begin : b
                buf u (y[i], a[i]);
              end
            end
          endgenerate
        endmodule
        module top(input [7:0] a, output [7:0] y, output [3:0] r, output [5:0] c);
          localparam HALF = 8 / 2;
          slice #(.W(HALF), .INV(1)) lo (.a(a[HALF-1:0]), .y(y[3:0]));
          slice #(HALF) hi (a[7:4], y[7:4]);
          assign r = {a[0], a[7], a[3:2]};
          assign c = {3{a[1:0]}} ^ {a[5], 5'b10101};
        endmodule
    """)
    assert len(d.inputs) == 8 and len(d.outputs) == 18
    insts = sorted(a["instance"] for _, a in d.graph.nodes(data=True) if a["kind"] == "gate"
                   and a["cell"] in ("not", "buf"))
    assert "top.lo.g[0].n.u" in insts and "top.hi.g[3].b.u" in insts
    rng = random.Random(1)
    for _ in range(50):
        a = rng.randrange(256)
        v = {}
        bus(v, "a", a, 8)
        out = d.evaluate(v)
        assert read_bus(out, "y", 8) == ((~a & 0xF) | (a & 0xF0))
        assert read_bus(out, "r", 4) == (((a & 1) << 3) | (((a >> 7) & 1) << 2) | ((a >> 2) & 3))
        rep = ((a & 3) << 4) | ((a & 3) << 2) | (a & 3)
        assert read_bus(out, "c", 6) == rep ^ ((((a >> 5) & 1) << 5) | 0b10101)


def test_operators_against_python(tmp_path):
    d = load(tmp_path, """
        module top(input [5:0] a, input [5:0] b, input s,
                   output [5:0] add, output [5:0] sub, output [11:0] mul,
                   output lt, output ge, output eq, output ne, output [5:0] shl, output [5:0] shr,
                   output [5:0] mux, output red_and, output red_xor, output lor, output lnot,
                   output [5:0] neg, output gt, output le, output [5:0] vsh);
          assign add = a + b;
          assign sub = a - b;
          assign mul = a * b;
          assign lt = a < b;
          assign ge = a >= b;
          assign gt = a > b;
          assign le = a <= b;
          assign eq = a == b;
          assign ne = a != b;
          assign shl = a << 2;
          assign shr = a >> 3;
          assign vsh = a << b[2:0];
          assign mux = s ? a : b;
          assign red_and = &a;
          assign red_xor = ^b;
          assign lor = a || (b && s);
          assign lnot = !a;
          assign neg = -a;
        endmodule
    """)
    rng = random.Random(7)
    vecs = [(rng.randrange(64), rng.randrange(64), rng.randrange(2)) for _ in range(200)]
    vecs += [(0, 0, 0), (63, 63, 1), (0, 63, 0)]
    W = len(vecs)
    v = {}
    for k, (a, b, s) in enumerate(vecs):
        for i in range(6):
            v[f"a[{i}]"] = v.get(f"a[{i}]", 0) | (((a >> i) & 1) << k)
            v[f"b[{i}]"] = v.get(f"b[{i}]", 0) | (((b >> i) & 1) << k)
        v["s"] = v.get("s", 0) | (s << k)
    out = d.evaluate(v, width=W)

    def get(name, width, k):
        if width == 1:
            return (out[name] >> k) & 1
        return sum(((out[f"{name}[{i}]"] >> k) & 1) << i for i in range(width))
    for k, (a, b, s) in enumerate(vecs):
        assert get("add", 6, k) == (a + b) % 64
        assert get("sub", 6, k) == (a - b) % 64
        assert get("mul", 12, k) == a * b
        assert get("lt", 1, k) == int(a < b) and get("ge", 1, k) == int(a >= b)
        assert get("gt", 1, k) == int(a > b) and get("le", 1, k) == int(a <= b)
        assert get("eq", 1, k) == int(a == b) and get("ne", 1, k) == int(a != b)
        assert get("shl", 6, k) == (a << 2) % 64 and get("shr", 6, k) == a >> 3
        assert get("vsh", 6, k) == (a << (b & 7)) % 64
        assert get("mux", 6, k) == (a if s else b)
        assert get("red_and", 1, k) == int(a == 63)
        assert get("red_xor", 1, k) == bin(b).count("1") % 2
        assert get("lor", 1, k) == int(bool(a) or (bool(b) and bool(s)))
        assert get("lnot", 1, k) == int(a == 0)
        assert get("neg", 6, k) == (-a) % 64


def test_unsupported_operator_names_construct(tmp_path):
    # a power of two signals has no gate structure here: the module is left out, and the
    # warning names the construct and its line
    d = load(tmp_path, """
        module top(input [3:0] a, b, output [3:0] q);
          assign q = a ** b;
        endmodule
    """)
    (rec,) = d.not_analysed
    assert rec["module"] == "top" and rec["line"] == 3 and "a ** b" in rec["reason"]
    (w,) = [n for n in d.notes if n.kind == "not-analysed"]
    assert str(w.severity) == "warning" and w.line == 3 and "a ** b" in w.message


def test_register_templates(tmp_path):
    d = load(tmp_path, """
        module top(input clk, rst_n, set, d, en, g, output reg q, output reg p, output reg l,
                   output reg [1:0] cnt);
          always @(posedge clk or negedge rst_n)
            if (!rst_n) q <= 1'b0;
            else q <= d;
          always @(negedge clk or posedge set)
            if (set) p <= 1'b1;
            else if (en) p <= d;
          always @(*)
            if (g) l = d;
          always @(posedge clk)
            cnt <= cnt + 2'd1;
        endmodule
    """)
    regs = {r.name: r for r in d.registers}
    assert set(regs) == {"q", "p", "l", "cnt[0]", "cnt[1]"}
    g = d.graph
    q, p, l = regs["q"], regs["p"], regs["l"]
    assert q.kind == "ff" and q.clock_edge == "posedge" and q.active == {"reset": 0}
    assert g.nodes[q.pins["reset"]]["inputs"] == [d.input_node["rst_n"]]
    assert g.nodes[q.pins["clock"]]["inputs"] == [d.input_node["clk"]]
    assert p.clock_edge == "negedge" and p.active == {"set": 1} and "reset" not in p.pins
    assert l.kind == "latch" and g.nodes[l.pins["enable"]]["inputs"] == [d.input_node["g"]]
    assert g.nodes[l.pins["data"]]["inputs"] == [d.input_node["d"]]
    assert not d.has_loop              # registers cut the counter's feedback
    # p's data pin: en ? d : p (hold) -- evaluate it through the graph with p's state given
    for en in (0, 1):
        for dv in (0, 1):
            for pv in (0, 1):
                nets = d.evaluate({"en": en, "d": dv, "p": pv}, nets=True)
                assert nets[p.pins["data"]] == (dv if en else pv)
    # counter next state = cnt + 1
    for c in range(4):
        nets = d.evaluate({"cnt[0]": c & 1, "cnt[1]": c >> 1}, nets=True)
        nxt = nets[regs["cnt[0]"].pins["data"]] | (nets[regs["cnt[1]"].pins["data"]] << 1)
        assert nxt == (c + 1) % 4


def test_module_not_analysed_is_a_black_box_with_one_warning(tmp_path):
    # a loop whose bound is a signal cannot be unrolled: the module is left out, once
    d = load(tmp_path, """
        module beh(input [3:0] a, input [2:0] n, output reg [3:0] y);
          integer i;
          always @(*) begin
            y = 0;
            for (i = 0; i < n; i = i + 1) y[i] = a[3 - i];
          end
        endmodule
        module top(input [3:0] a, input [2:0] n, output [3:0] y, output z);
          beh u1 (.a(a), .n(n), .y(y));
          beh u2 (.a(a), .n(n), .y());
          and g (z, a[0], a[1]);
        endmodule
    """)
    assert {b.name for b in d.blackboxes} == {"top.u1", "top.u2"}
    notes = [n for n in d.notes if n.kind == "not-analysed"]
    assert len(notes) == 1 and str(notes[0].severity) == "warning"
    assert "'beh'" in notes[0].message and notes[0].line == 6
    assert d.not_analysed[0]["instances"] == ["top.u1", "top.u2"]
    assert d.modules == ["beh", "top"]
    assert d.graph.nodes[d.net_node("y[0]")]["kind"] == "blackbox"
    assert d.evaluate({"a[0]": 1, "a[1]": 1})["z"] == 1


def test_unknown_cell_warns_once_per_type(tmp_path):
    d = load(tmp_path, """
        module top(input a, b, output y, z);
          MYSTERY u1 (.A(a), .Z(y));
          MYSTERY u2 (.A(b), .Z(z));
        endmodule
    """)
    assert len(d.blackboxes) == 2
    assert len([n for n in d.notes if "MYSTERY" in n.message]) == 1
    assert d.graph.nodes[d.net_node("y")]["kind"] == "blackbox"


def test_three_state_enable_is_a_sink(tmp_path):
    d = load(tmp_path, """
        module top(input a, b, e, output y);
          wire ne;
          not n (ne, e);
          bufif1 t1 (y, a, e);
          bufif1 t2 (y, b, ne);
        endmodule
    """)
    sinks = [a for _, a in d.graph.nodes(data=True) if a.get("role") == "tristate_enable"]
    assert len(sinks) == 2
    for a_, b_, e_ in [(0, 1, 0), (1, 0, 1), (1, 1, 0), (0, 0, 1)]:
        assert d.evaluate({"a": a_, "b": b_, "e": e_})["y"] == (a_ if e_ else b_)


def test_gate_delays_and_timescale(tmp_path):
    d = load(tmp_path, """
        `timescale 1ns/10ps
        module top(input a, b, output y, z, w);
          wire t;
          and #(1:2:3, 2:3:4) g1 (t, a, b);
          or #5 g2 (y, t, a);
          sub u (.a(a), .y(z));
          assign #2.5 w = a ^ b;
        endmodule
        `timescale 100ps/10ps
        module sub(input a, output y);
          not #(3, 4) n (y, a);
        endmodule
    """)
    g = d.graph
    g1 = next(a for _, a in g.nodes(data=True) if a.get("instance") == "top.g1")
    dl = g1["delays"][0]
    # design unit = the finest module unit (100 ps); 1 ns = 10 units
    assert (dl.rise_min, dl.rise_max, dl.fall_min, dl.fall_max) == (10, 30, 20, 40)
    n = next(a for _, a in g.nodes(data=True) if a.get("instance") == "top.u.n")
    assert (n["delays"][0].rise_max, n["delays"][0].fall_max) == (3, 4)
    w = g.nodes[d.net_node("w")]
    assert w["op"] == "xor" and w["delays"][0].rise_max == 25
    assert d.timescale[0] == pytest.approx(100e-12)


def test_udps(tmp_path):
    d = load(tmp_path, """
        primitive maj (y, a, b, c);
          output y; input a, b, c;
          table
            1 1 ? : 1;
            1 ? 1 : 1;
            ? 1 1 : 1;
            0 0 ? : 0;
            0 ? 0 : 0;
            ? 0 0 : 0;
          endtable
        endprimitive
        primitive dff_r (q, clk, d, r);
          output q; reg q; input clk, d, r;
          table
            // clk d r : q : q+
               ?   ? 1 : ? : 0;
               r   0 0 : ? : 0;
               r   1 0 : ? : 1;
               f   ? 0 : ? : -;
               ?  (??) 0 : ? : -;
          endtable
        endprimitive
        module top(input a, b, c, clk, rst, output y, q);
          maj m (y, a, b, c);
          dff_r f (q, clk, y, rst);
        endmodule
    """)
    for v in range(8):
        a, b, c = v & 1, (v >> 1) & 1, v >> 2
        assert d.evaluate({"a": a, "b": b, "c": c})["y"] == int(a + b + c >= 2)
    (r,) = d.registers
    assert r.kind == "ff" and r.clock_edge == "posedge"
    assert d.graph.nodes[r.pins["reset"]]["inputs"] == [d.input_node["rst"]]
    assert d.graph.nodes[r.pins["clock"]]["inputs"] == [d.input_node["clk"]]


def test_port_attributes_reach_the_design(tmp_path):
    d = load(tmp_path, """
        module top(input a, b, (* hazlint_async *) output y);
          and g (y, a, b);
        endmodule
    """)
    assert "hazlint_async" in d.port_attrs["y"]


def test_default_nettype_none_rejects_implicit_nets(tmp_path):
    with pytest.raises(HazlintError) as e:
        load(tmp_path, """
            `default_nettype none
            module top(input wire a, output wire y);
              and g (y, a, undeclared_net);
            endmodule
        """)
    assert "undeclared_net" in str(e.value) and e.value.line == 4


def test_unknown_top_and_cli_error_exit_code(tmp_path):
    p = tmp_path / "t.v"
    p.write_text("module top(input a, output y); buf g (y, a); endmodule\n")
    with pytest.raises(HazlintError):
        hazlint.load_design([str(p)], top="nope")
    r = subprocess.run([sys.executable, "-m", "hazlint.cli", "summary", str(p), "--top", "nope"],
                       capture_output=True, text=True)
    assert r.returncode == 2
    assert "unknown top module 'nope'" in r.stderr and "Traceback" not in r.stderr
    bad = tmp_path / "bad.v"
    bad.write_text("module top(input a, output y);\n  and g (y a);\nendmodule\n")
    r = subprocess.run([sys.executable, "-m", "hazlint.cli", "summary", str(bad)],
                       capture_output=True, text=True)
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert f"{bad}:2:" in r.stderr or "bad.v:2:" in r.stderr


def test_summary_command_json(tmp_path):
    import json
    p = tmp_path / "t.v"
    p.write_text("module top(input a, b, output y); wire t; nand g1 (t, a, b); not g2 (y, t);"
                 " endmodule\n")
    r = subprocess.run([sys.executable, "-m", "hazlint.cli", "summary", str(p), "--format",
                        "json"], capture_output=True, text=True, cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    s = json.loads(r.stdout)
    assert s["gates_by_type"] == {"nand": 1, "not": 1} and s["logic_depth"] == 2


def test_trireg_uwire_and_net_delays_in_the_gate_graph(tmp_path):
    d = load(tmp_path, """
        module leaf(input a, output y); not #1 g (y, a); endmodule
        module m(input a, input b, output y, output z);
          trireg t;
          uwire u;
          wire #(2,3) n;
          wire #4 w;
          assign t = a;
          assign u = b;
          nand #1 g1 (n, t, u);
          leaf l (.a(a), .y(w));       // a delayed net driven through a child's output port
          assign y = n;
          assign z = w;
        endmodule
        """)
    for a in (0, 1):
        for b in (0, 1):
            out = d.evaluate({"a": a, "b": b})
            assert out["y"] == 1 - (a & b) and out["z"] == 1 - a
    g = d.graph
    gate = next(n for n, x in g.nodes(data=True) if x.get("instance", "").endswith("g1"))
    dl = g.nodes[gate]["delays"][0]
    assert (dl.rise_max, dl.fall_max) == (3.0, 4.0)          # gate 1 plus net (2, 3)
    # the net delay of w rides on a buffer behind the child's output: the cone of z holds the
    # child's inverter (1) and that buffer (4)
    import networkx as nx
    cone = [n for n in nx.ancestors(g, d.output_node["z"]) if g.nodes[n]["kind"] == "gate"]
    assert sorted(g.nodes[n]["delays"][0].rise_max for n in cone) == [1.0, 4.0]
    assert any("trireg 't'" in getattr(n, "message", "") for n in d.notes)

