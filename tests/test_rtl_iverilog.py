"""RTL designs (fixtures/rtl/) elaborated by hazlint behave as Icarus Verilog simulates them.

Reference: Icarus Verilog 11 (Debian ``iverilog -g2005``) on the same source; hazlint's
Design is run clock by clock (tests/support/cyclesim.py) on the same random stimulus and every
output bit iverilog shows as 0/1 must match (tests/support/rtlcheck.py). The IEEE 1364-2005
clauses each fixture exercises are named beside it (clause numbers recalled from memory, not
looked up).
"""
from __future__ import annotations

from pathlib import Path

import pytest

from support import rtlcheck

RTL = Path(__file__).resolve().parent.parent / "fixtures" / "rtl"
SYNTH = Path(__file__).resolve().parent.parent / "fixtures" / "synth"

CASES = [
    # file/top, steps; IEEE 1364-2005 clauses
    ("press_functions", 150),   # 10.4 functions (typed, ANSI, automatic), 10.4.5 constant
    #                             functions, 10.2 tasks, 9.5 case, 9.6 for/while loops
    ("press_signed", 200),      # 4.3 signed, 5.1.6 / and %, 5.1.12 >>>, 5.4 bit lengths,
    #                             5.5 signed expressions, $signed / $unsigned
    ("press_arrays", 150),      # 4.9 multi-dimensional arrays, 12.4 generate loops, 12.2
    #                             localparam and genvar inside generate blocks, 17.11 $clog2
    ("press_memories", 200),    # 4.9.3 memories, 9.6 for loop in a reset branch,
    #                             part-select writes into a word, synchronous reads
    ("press_cpu", 250),         # a processor core: 9.5 case / casez, 10.4 functions,
    #                             10.2 tasks, memories, async reset
    ("press_pump", 150),        # 5.1 ^~ (XNOR), 12.3.4 ANSI output variables with initial
    #                             values, 6.2.1 several initial values in one declaration,
    #                             9.7.1 a delay before a system task, constant W / 2
]


@pytest.mark.parametrize("name,steps", CASES, ids=[c[0] for c in CASES])
def test_rtl_fixture_matches_iverilog(name, steps):
    design = rtlcheck.compare([RTL / f"{name}.v"], name, steps=steps)
    # analysed, not black-boxed: every module of the fixture was turned into logic
    assert design.modules and not design.not_analysed and not design.blackboxes


def test_processor_core_is_analysed_with_its_registers():
    design = rtlcheck.compare([RTL / "press_cpu.v"], "press_cpu", steps=120, seed=7)
    kinds = {r.kind for r in design.registers}
    # pc 4 + acc 8 + flags 2 + output port 8 + register file 4 x 8 = 54 flip-flops (counted
    # from the source); no latch (every combinational variable is assigned on every path)
    assert len(design.registers) == 54 and kinds == {"ff"}
    names = {r.name for r in design.registers}
    assert {"regs[0][0]", "regs[3][7]", "pc[3]", "acc[0]", "z", "c"} <= names
    # the ALU's loop index and the function temporaries are not registers
    assert not any(n.startswith(("i", "k")) or "$" in n for n in names)


@pytest.mark.parametrize("name", ["press_clkrst", "press_cpu", "press_i2c", "press_uart"])
def test_synthesis_corpus_rtl_read_as_rtl_matches_iverilog(name):
    # the RTL of the synthesised-netlist corpus (fixtures/synth/, written for the yosys tests)
    # read directly as RTL: 6.1.2 several declaration assignments in one declaration, 9.5
    # case, 4.9.3 memories, asynchronous and synchronous resets
    rtlcheck.compare([SYNTH / f"{name}.v"], name, steps=200)
