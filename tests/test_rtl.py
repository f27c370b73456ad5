"""RTL as far as it is logic: behavioural constructs, memories, and what is left out.

Behaviour is checked against Icarus Verilog (Debian ``iverilog -g2005``) simulating the same
source, clock by clock where there are clocks (tests/support/rtlcheck.py). IEEE 1364-2005
clause numbers beside the tests are recalled from memory, not looked up.
"""
from __future__ import annotations

import os
import subprocess
import sys
import textwrap

import pytest

import hazlint
from hazlint.errors import ElaborationError, ParseError
from hazlint import ir
from hazlint.frontends.verilog.reader import read_sources
from support import rtlcheck


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(textwrap.dedent(text))
    return p


def check(tmp_path, text, top, steps=120, **options):
    """``text`` elaborated by hazlint behaves as iverilog simulates it."""
    return rtlcheck.compare([write(tmp_path, f"{top}.v", text)], top, steps=steps, **options)


def cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "hazlint.cli", *args], cwd=cwd,
                          capture_output=True, text=True, timeout=300,
                          env=dict(os.environ, NO_COLOR="1",
                                   HAZLINT_CACHE_DIR=str(cwd / ".cache")))


# ------------------------------------------------------------------ functions and tasks
def test_input_integer_argument_and_loop_in_function(tmp_path):
    # 10.4.1: "input integer" is a typed function argument; 9.6: the loop bound is constant,
    # the condition inside it reads a signal
    check(tmp_path, """
        module press_mask(input [7:0] d, input [2:0] n, output [7:0] y, output [7:0] z);
          function [7:0] mask_low;
            input integer MR;
            input [7:0] x;
            integer i;
            begin
              mask_low = x;
              for (i = 0; i < 8; i = i + 1)
                if (i >= MR) mask_low[i] = 1'b0;
            end
          endfunction
          assign y = mask_low(n, d);
          assign z = mask_low(3, d);
        endmodule
    """, "press_mask")


def test_constant_and_recursive_functions(tmp_path):
    # 10.4.5 constant functions in parameters (recursive, automatic); 12.2 a signed parameter
    # with a range truncates and sign-extends its value
    d = check(tmp_path, """
        module press_const(input [3:0] a, output [7:0] f, output [7:0] p, output [3:0] w);
          function automatic integer fact(input integer n);
            fact = (n <= 1) ? 1 : n * fact(n - 1);
          endfunction
          function integer lg(input integer v);
            for (lg = 0; (1 << lg) < v; lg = lg + 1) ;
          endfunction
          localparam F5 = fact(5);
          localparam W = lg(10);
          localparam integer B = $rtoi($ceil($ln(100) / $ln(2)));   // 17.11 math functions
          parameter signed [3:0] P = -3;
          assign f = F5;
          assign p = P;
          assign w = a + W + B;
        endmodule
    """, "press_const", steps=20)
    assert d.evaluate({})["f[6]"] == 1        # 120 = 0b1111000


def test_recursion_on_a_signal_is_left_out(tmp_path):
    p = write(tmp_path, "rec.v", """
        module press_rec(input [3:0] n, output [3:0] y);
          function automatic [3:0] down(input [3:0] k);
            down = (k == 0) ? 4'd0 : down(k - 1);
          endfunction
          assign y = down(n);
        endmodule
    """)
    d = hazlint.load_design([str(p)])
    (rec,) = d.not_analysed
    assert "nest deeper than" in rec["reason"] and rec["module"] == "press_rec"


def test_task_with_outputs_and_block_local_variables(tmp_path):
    # 10.2 tasks with output arguments; 9.8.1 named blocks with their own variables; 9.6
    # while and repeat loops
    d = check(tmp_path, """
        module press_count(input [7:0] d, input [7:0] e, output reg [3:0] ones,
                           output reg [7:0] rot, output reg [7:0] lo, output reg [7:0] hi);
          task order(input [7:0] a, input [7:0] b, output [7:0] mn, output [7:0] mx);
            begin
              if (a < b) begin mn = a; mx = b; end
              else begin mn = b; mx = a; end
            end
          endtask
          always @* begin : count
            integer n;
            reg [7:0] t;
            ones = 0;
            n = 0;
            t = d;
            while (n < 8) begin
              ones = ones + t[0];
              t = t >> 1;
              n = n + 1;
            end
            rot = d;
            repeat (3) rot = {rot[6:0], rot[7]};
            order(d, e, lo, hi);
            $display("ones %d", ones);
          end
        endmodule
    """, "press_count")
    assert not d.registers                   # loop index and temporaries are not storage
    notes = [n.message for n in d.notes]
    assert any("system task $display ignored" in m for m in notes)


def test_unknown_function_and_wrong_argument_count_are_input_errors(tmp_path):
    p = write(tmp_path, "u.v", """
        module top(input a, output y);
          assign y = nosuch(a);
        endmodule
    """)
    with pytest.raises(ElaborationError) as e:
        hazlint.load_design([str(p)])
    assert e.value.line == 3 and "nosuch" in str(e.value)
    p = write(tmp_path, "n.v", """
        module top(input a, output y);
          function f(input x, input z); f = x & z; endfunction
          assign y = f(a);
        endmodule
    """)
    with pytest.raises(ElaborationError) as e:
        hazlint.load_design([str(p)])
    assert "takes 2 argument" in str(e.value)


# ------------------------------------------------------------------ statements
def test_variable_index_writes_are_decoded(tmp_path):
    # 5.2.1 bit selects and 5.2.1 indexed part selects on the left-hand side with a variable
    # index: each bit is written under its decoded condition
    check(tmp_path, """
        module press_onehot(input [2:0] sel, input v, input [1:0] k, input [3:0] d,
                            output reg [7:0] onehot, output reg [7:0] field,
                            output [3:0] picked, output [1:0] slice);
          always @* begin
            onehot = 8'd0;
            onehot[sel] = v;
            field = 8'hff;
            field[k*2 +: 2] = d[1:0];
          end
          assign picked = {d[k], d[sel[1:0]], d[3 - k], d[0]};
          assign slice = d[k +: 2];
        endmodule
    """, "press_onehot", hold=())


def test_case_casez_casex_and_constant_case(tmp_path):
    # 9.5 case, 9.5.1 casez/casex with ? and x in the items, a "case (1'b1)" priority form
    check(tmp_path, """
        module press_prio(input [3:0] req, input [1:0] mode, output reg [1:0] grant,
                          output reg hit, output reg [2:0] kind, output reg [1:0] multi);
          always @* begin
            casez (req)
              4'b1???: grant = 2'd3;
              4'b01??: grant = 2'd2;
              4'b001?: grant = 2'd1;
              default: grant = 2'd0;
            endcase
            casex (req)
              4'bx1x1: hit = 1'b1;
              default: hit = 1'b0;
            endcase
            case (1'b1)
              mode[1]: kind = 3'd4;
              mode[0]: kind = 3'd2;
              default: kind = 3'd1;
            endcase
            case (req[1:0])
              2'd0, 2'd3: multi = mode;
              2'd1: multi = ~mode;
              default: multi = 2'b10;
            endcase
          end
        endmodule
    """, "press_prio")


def test_incomplete_assignment_is_a_latch_with_its_enable(tmp_path):
    # 9.2 / common synthesis practice: a variable a combinational block does not assign on
    # every path keeps its value there: a latch enabled by the assigning condition
    d = check(tmp_path, """
        module press_hold(input en, input clr, input [3:0] d, output reg [3:0] q);
          always @* begin
            if (clr) q = 4'd0;
            else if (en) q = d;
          end
        endmodule
    """, "press_hold", steps=150)
    assert [r.kind for r in d.registers] == ["latch"] * 4
    en = d.graph.nodes[d.registers[0].pins["enable"]]
    assert en["role"] == "enable"
    # the enable is clr | en: it is 1 exactly when one of them is
    g = d.graph
    for clr in (0, 1):
        for e in (0, 1):
            v = d.evaluate({"clr": clr, "en": e}, nets=True)[en["inputs"][0]]
            assert v == (clr | e)
    assert any("latch inferred for 'q'" in n.message for n in d.notes)
    assert g is d.graph


def test_block_temporaries_and_shared_loop_index_are_not_registers(tmp_path):
    # a blocking temporary of a clocked block and one loop index shared by two blocks: no
    # register and no second driver; the shift register and the registered outputs remain
    d = check(tmp_path, """
        module press_filter(input clk, input rst_n, input [7:0] s, output reg [7:0] avg,
                            output reg [3:0] cnt);
          integer i;
          reg [9:0] sum;
          reg [7:0] hist [0:3];
          always @(posedge clk or negedge rst_n)
            if (!rst_n) begin
              for (i = 0; i < 4; i = i + 1) hist[i] <= 8'd0;
              avg <= 8'd0;
            end else begin
              for (i = 3; i > 0; i = i - 1) hist[i] <= hist[i-1];
              hist[0] <= s;
              sum = 0;
              for (i = 0; i < 4; i = i + 1) sum = sum + hist[i];
              avg <= sum[9:2];
            end
          always @(posedge clk) begin
            cnt = 0;
            for (i = 0; i < 8; i = i + 1) cnt = cnt + s[i];
          end
        endmodule
    """, "press_filter", steps=150)
    names = {r.name for r in d.registers}
    assert len(d.registers) == 4 * 8 + 8 + 4, sorted(names)
    assert not any(n.startswith(("i[", "sum[")) for n in names)
    assert not [n for n in d.notes if "drivers" in n.message]


# ------------------------------------------------------------------ memories
BIG = """
    module press_trace(input clk, input we, input [3:0] wa, input [3:0] ra, input [7:0] wd,
                       output [7:0] rd, output reg [7:0] rq);
      reg [7:0] mem [0:15];
      always @(posedge clk) if (we) mem[wa] <= wd;
      assign rd = mem[ra];
      always @(posedge clk) rq <= mem[ra];
    endmodule
"""


def test_small_memory_is_registers_with_decoded_write_enables(tmp_path):
    d = check(tmp_path, BIG, "press_trace", steps=150)
    assert not d.memories
    assert len(d.registers) == 16 * 8 + 8
    # each word's data pin: (we & wa == k) ? wd : mem[k], so a word holds unless addressed
    r = next(r for r in d.registers if r.name == "mem[5][2]")
    g = d.graph
    data = g.nodes[r.pins["data"]]["inputs"][0]
    base = {f"wa[{i}]": (5 >> i) & 1 for i in range(4)}
    assert d.evaluate(dict(base, we=1, **{"wd[2]": 1}), nets=True)[data] == 1
    assert d.evaluate(dict(base, we=0, **{"wd[2]": 1}), nets=True)[data] == 0
    assert d.evaluate(dict({"wa[0]": 0, "wa[2]": 1}, we=1, **{"wd[2]": 1}), nets=True)[data] == 0


def test_large_memory_is_a_memory_node(tmp_path):
    p = write(tmp_path, "t.v", BIG)
    d = hazlint.load_design([str(p)], memory_max_bits=64)      # 16 x 8 = 128 bits > 64
    (m,) = d.memories
    assert (m["name"], m["words"], m["width"], m["write_ports"], m["read_ports"]) == \
        ("mem", 16, 8, 1, 1)                                   # one read port: same address
    g = d.graph
    sinks = [n for n, a in g.nodes(data=True) if a["kind"] == "sink" and a.get("memory")]
    roles = sorted({(g.nodes[n]["role"], g.nodes[n]["name"].split(".")[1].rstrip("0123456789[]"))
                    for n in sinks})
    # write clock (a clock pin), write enable, address and data, read address: all sinks
    assert roles == [("clock", "wclk"), ("data", "raddr"), ("data", "waddr"), ("data", "wdata"),
                     ("data", "we")]
    assert len([n for n in sinks if ".wdata" in g.nodes[n]["name"]]) == 8
    # read data are sources (here merged with the output port they drive)
    assert all(g.nodes[n]["kind"] == "state" and g.nodes[n]["memory"] == "mem"
               for n in m["read_data"]) and m["read_data"][0] == "rd[0]"
    assert len(d.registers) == 8 and not any(r.name.startswith("mem") for r in d.registers)
    assert any("kept as a memory node" in n.message for n in d.notes)
    # the read data can be driven in evaluation like any source
    assert d.evaluate({m["read_data"][3]: 1})["rd[3]"] == 1


def test_memory_node_read_reaching_an_asynchronous_pin_warns(tmp_path):
    p = write(tmp_path, "cfg.v", """
        module press_cfg(input clk, input we, input [3:0] a, input [7:0] d, input [3:0] ra,
                         output reg q);
          reg [7:0] cfg [0:15];
          always @(posedge clk) if (we) cfg[a] <= d;
          wire clr = cfg[ra][0] & cfg[ra][1];
          always @(posedge clk or posedge clr) if (clr) q <= 1'b0; else q <= d[0];
        endmodule
    """)
    d = hazlint.load_design([str(p)], memory_max_bits=64)
    (w,) = [n for n in d.notes if "memory node" in n.message and "reach" in n.message]
    assert str(w.severity) == "warning" and "q.reset" in w.message
    d2 = hazlint.load_design([str(p)])                        # 128 bits: registers
    assert not d2.memories and not [n for n in d2.notes if "reach" in n.message]


def test_table_filled_by_an_initial_block_is_one_warning(tmp_path):
    # a table whose words only an initial block (or $readmemh) fills: the words are free
    # inputs, reported once for the array, and the module is analysed
    p = write(tmp_path, "rom.v", """
        module press_rom(input [3:0] a, output [7:0] q, output [7:0] first);
          reg [7:0] rom [0:15];
          integer i;
          initial for (i = 0; i < 16; i = i + 1) rom[i] = i;
          assign q = rom[a];
          assign first = rom[0];
        endmodule
    """)
    for limit in (4096, 64):        # registers, memory node
        d = hazlint.load_design([str(p)], memory_max_bits=limit)
        assert not d.not_analysed and not d.blackboxes
        warnings = [n for n in d.notes if str(n.severity) == "warning"]
        assert len(warnings) <= 1, [n.message for n in warnings]
        if limit == 4096:
            assert "words of 'rom' are read but never written" in warnings[0].message


def test_memory_limit_is_a_configuration_key(tmp_path):
    write(tmp_path, "t.v", BIG)
    (tmp_path / "hazlint.toml").write_text('files = ["t.v"]\nmemory_as_registers_max_bits = 64\n')
    p = cli("summary", "--format", "json", cwd=tmp_path)
    assert p.returncode == 0, p.stderr
    import json
    s = json.loads(p.stdout)
    assert [m["name"] for m in s["memories"]] == ["mem"]
    (tmp_path / "hazlint.toml").write_text('files = ["t.v"]\nmemory_as_registers_max_bits = -1\n')
    p = cli("summary", cwd=tmp_path)
    assert p.returncode == 2 and "memory_as_registers_max_bits" in p.stderr


# ------------------------------------------------------------------ what is left out
LEFT_OUT = """
    module leaf(input [3:0] a, output reg [3:0] y);
      always @* begin : scan
        y = a;
        if (a == 4'd0) disable scan;
        y = ~a;
      end
    endmodule
    module press_top(input [3:0] a, b, output [3:0] y, output z);
      leaf u1 (.a(a), .y(y));
      assign z = &b;
    endmodule
"""


def test_left_out_module_is_a_failing_warning_counted_in_the_summary(tmp_path):
    write(tmp_path, "top.v", LEFT_OUT)
    p = cli("check", "--no-prove", "top.v", cwd=tmp_path)
    assert p.returncode == 1, p.stdout + p.stderr
    lines = p.stdout.splitlines()
    head = [ln for ln in lines if ": warning: module 'leaf' is not analysed" in ln]
    assert len(head) == 1 and head[0].startswith("top.v:5:")
    assert "disable statement" in head[0] and "[front-end]" in head[0]
    summary = [ln for ln in lines if ln.startswith("hazlint: ")][0]
    assert summary.endswith("; 1 of 2 modules not analysed: leaf")
    # a rule selection does not hide it
    p = cli("check", "--no-prove", "--select", "combinational-loop", "top.v", cwd=tmp_path)
    assert p.returncode == 1 and "not analysed" in p.stdout
    # a lower failing level keeps the summary honest
    (tmp_path / "hazlint.toml").write_text('fail_on = "error"\n')
    p = cli("check", "--no-prove", "top.v", cwd=tmp_path)
    assert p.returncode == 0 and "1 of 2 modules not analysed: leaf" in p.stdout


def test_changed_files_filter_keeps_what_was_left_out(tmp_path):
    # a commit hook that lints only the staged file still says the design was not all read
    from hazlint.api import lint
    leaf, top = LEFT_OUT.split("    module press_top")
    write(tmp_path, "leaf.v", leaf)
    write(tmp_path, "top.v", "    module press_top" + top)
    r = lint(["leaf.v", "top.v"], cwd=str(tmp_path), changed=["top.v"], prove=False,
             use_cache=False)
    assert [(d.kind, d.location.path.endswith("leaf.v")) for d in r.diagnostics] == [
        ("not-analysed", True)]
    assert r.exit_code() == 1


def test_left_out_top_module(tmp_path):
    p = write(tmp_path, "t.v", """
        module press_top(input clk, output reg q);
          always @(posedge clk) begin : b
            q = 1'b1;
            disable b;
          end
        endmodule
    """)
    d = hazlint.load_design([str(p)])
    (rec,) = d.not_analysed
    assert rec["module"] == "press_top" and rec["instances"] == ["press_top"]
    assert "disable statement" in rec["reason"]
    assert d.graph.nodes[d.net_node("q")]["kind"] == "blackbox"


def test_unparsable_file_the_top_does_not_need_is_a_warning(tmp_path):
    write(tmp_path, "good.v", """
        module press_top(input a, b, output y);
          and g (y, a, b);
        endmodule
    """)
    write(tmp_path, "broken.v", """
        module scratch(input a; output b);
        endmodule
    """)
    p = cli("check", "--no-prove", "good.v", "broken.v", cwd=tmp_path)
    assert p.returncode == 1, p.stdout + p.stderr
    (w,) = [ln for ln in p.stdout.splitlines() if "file not read" in ln]
    assert w.startswith("broken.v:2:") and "(scratch)" in w
    # the same file is an input error when the chosen top needs what it defines
    write(tmp_path, "user.v", """
        module press_user(input a, output y);
          scratch u (.a(a), .b(y));
        endmodule
    """)
    p = cli("check", "--no-prove", "user.v", "broken.v", cwd=tmp_path)
    assert p.returncode == 2 and "broken.v:2:" in p.stderr and "syntax error" in p.stderr
    with pytest.raises(ParseError):
        read_sources([str(tmp_path / "broken.v")])
    (sf,) = read_sources([str(tmp_path / "broken.v")], tolerant=True)
    assert sf.error["modules"] == ["scratch"] and sf.error["line"] == 2 and not sf.modules


# ------------------------------------------------------------------ IR
def test_several_declaration_assignments_in_one_declaration(tmp_path):
    # 6.1.2: list_of_net_decl_assignments, and variable declaration assignments (initial
    # values, 6.2.1)
    d = check(tmp_path, """
        module press_pair(input [1:0] p, output l, output r, output [3:0] both);
          wire left = p[1], right = p[0];
          wire [1:0] hi = {left, right}, lo = ~{left, right};
          assign l = left;
          assign r = right;
          assign both = {hi, lo};
        endmodule
    """, "press_pair", steps=16)
    assert not d.notes



def test_ir_of_functions_tasks_and_arrays_round_trips(tmp_path):
    p = write(tmp_path, "r.v", """
        module r(input clk, input [1:0] a, output reg [3:0] y);
          wire [3:0] w [0:1][0:2];
          reg [7:0] m [0:3];
          integer ia [0:1];
          function automatic signed [3:0] f(input integer n, input reg [3:0] x);
            localparam K = 2;
            f = x + n + K;
          endfunction
          task t; output [3:0] o; begin o = 4'd1; end endtask
          always @* begin : b
            reg [1:0] k;
            k = a;
            t(y);
            repeat (2) y = f(k, y);
          end
        endmodule
    """)
    (sf,) = read_sources([str(p)])
    m = sf.modules[0]
    nets = {it.name: it for it in m.items if isinstance(it, ir.Net)}
    assert len(nets["w"].array) == 2 and len(nets["m"].array) == 1 and nets["ia"].array
    fn = next(it for it in m.items if isinstance(it, ir.Function))
    assert fn.automatic and fn.signed and [(q.name, q.net_type) for q in fn.ports] == [
        ("n", "integer"), ("x", "reg")]
    assert isinstance(fn.decls[0], ir.Param)
    tk = next(it for it in m.items if isinstance(it, ir.Task))
    assert [(q.name, q.direction) for q in tk.ports] == [("o", "output")]
    al = next(it for it in m.items if isinstance(it, ir.Always))
    assert al.body[2] == "b" and al.body[3][0].name == "k"
    assert al.body[1][1][0] == "call" and al.body[1][2][0] == "repeat"
    data = ir.to_json(sf)
    assert ir.to_json(ir.from_json(data)) == data
    back = ir.from_compact(ir.to_compact(sf))
    assert ir.to_json(back) == data
    # the cached form elaborates to the same design
    from hazlint.elaborate import elaborate
    a, b = elaborate([sf]).summary(), elaborate([back]).summary()
    assert a == b and a["registers"] == 0 and a["latches"] == 0
