"""Random combinational and clocked always blocks (if/else, case, for loops, variable-index
writes, blocking and nonblocking assignments) behave in hazlint as Icarus Verilog simulates them.

Oracle: Icarus Verilog 11 (``iverilog -g2005``) on the same module, clock by clock (tests/
support/rtlcheck.py). What it checks is IEEE 1364-2005 9.2 (blocking and nonblocking
procedural assignments), 9.4 (if-else), 9.5 (case), 9.6 (for loops), 5.2.1 (bit and indexed
part selects written with a variable index) as synthesis reads them. Clause numbers recalled
from memory.
"""
from __future__ import annotations

import random

import pytest

from support import rtlcheck

VARS = {"t0": 8, "t1": 4, "t2": 1, "t3": 6}
INS = {"a": 8, "b": 8, "s": 3, "k": 2}


def _expr(rng, names):
    pick = lambda: rng.choice(names)   # noqa: E731
    return rng.choice([
        f"{pick()} + {pick()}", f"{pick()} ^ {pick()}", f"~{pick()}", f"{pick()} & {pick()}",
        f"{pick()} - 1", f"{{{pick()}, {pick()}}}", f"{pick()} >> s[1:0]", f"{pick()} * 3",
        f"({pick()} < {pick()}) ? {pick()} : {pick()}", f"{pick()}",
    ])


def _stmt(rng, depth, names, op, loop_var, prefix=""):
    k = rng.random()
    var = rng.choice(list(VARS))
    w = VARS[var]
    var = prefix + var
    if depth == 0 or k < 0.4:
        return f"{var} {op} {_expr(rng, names)};"

    def sub():
        return _stmt(rng, depth - 1, names, op, loop_var, prefix)
    if k < 0.55:
        return f"if ({rng.choice(names)}[0]) begin {sub()} end else begin {sub()} end"
    if k < 0.65:
        return f"if (a > b) {sub()}"
    if k < 0.8:
        arms = " ".join(f"2'd{i}: {sub()}" for i in rng.sample(range(4), rng.randrange(1, 4)))
        return f"case (k) {arms} default: {sub()} endcase"
    if k < 0.9:
        if w == 1:
            return f"{var} {op} a[s];"
        return (f"for ({loop_var} = 0; {loop_var} < {w}; {loop_var} = {loop_var} + 1) "
                f"{var}[{loop_var}] {op} {rng.choice(names)}[{loop_var} % 3] ^ b[{loop_var}];")
    if w >= 4:
        return rng.choice([f"{var}[s % {w}] {op} b[k];", f"{var}[k +: 2] {op} a[1:0];"])
    return f"{var} {op} b[k];"


def module(seed: int) -> str:
    rng = random.Random(seed)
    names = list(INS) + list(VARS)
    comb = [f"{v} = a[{w - 1}:0];" if w > 1 else f"{v} = a[0];" for v, w in VARS.items()]
    comb += [_stmt(rng, 3, names, "=", "i") for _ in range(6)]
    regs = [_stmt(rng, 2, names + [f"r_{v}" for v in VARS], "<=", "j", "r_") for _ in range(4)]
    decl = "\n".join(f"  output reg [{w - 1}:0] {v}," for v, w in VARS.items())
    rdecl = "\n".join(f"  output reg [{w - 1}:0] r_{v}," for v, w in VARS.items())
    return f"""module press_proc{seed}(
  input clk, input rst_n, input [7:0] a, input [7:0] b, input [2:0] s, input [1:0] k,
{decl}
{rdecl}
  output done
);
  integer i, j;
  always @* begin
    {chr(10).join('    ' + c for c in comb).strip()}
  end
  always @(posedge clk or negedge rst_n)
    if (!rst_n) begin
      {' '.join(f'r_{v} <= 0;' for v in VARS)}
    end else begin
    {chr(10).join('      ' + r for r in regs).strip()}
    end
  assign done = ^{{{', '.join(VARS)}}};
endmodule
"""


@pytest.mark.parametrize("seed", range(6))
def test_random_always_blocks_match_iverilog(tmp_path, seed):
    p = tmp_path / f"press_proc{seed}.v"
    p.write_text(module(seed))
    d = rtlcheck.compare([p], f"press_proc{seed}", steps=60, seed=seed)
    # the combinational block assigns every variable first: no latch; i and j are indices
    assert not [r for r in d.registers if r.kind == "latch"]
    assert all(r.name.startswith("r_t") for r in d.registers)


@pytest.mark.slow
@pytest.mark.parametrize("seed", range(6, 30))
def test_more_random_always_blocks_match_iverilog(tmp_path, seed):
    p = tmp_path / f"press_proc{seed}.v"
    p.write_text(module(seed))
    rtlcheck.compare([p], f"press_proc{seed}", steps=60, seed=seed)
