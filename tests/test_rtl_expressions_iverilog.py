"""Random Verilog expressions mixing signed and unsigned operands of different widths evaluate
in hazlint's gates as Icarus Verilog evaluates them.

Oracle: Icarus Verilog 11 (``iverilog -g2005``) simulating the same module (tests/support/
rtlcheck.py; x results such as a division by zero are not compared). What it checks is IEEE
1364-2005 5.4 (expression bit lengths: context-determined operands extended to the widest of
the expression and its target, self-determined shift amounts, conditions, concatenation
members and reduction operands), 5.5 (an expression is signed only when all its context-
determined operands are; sign extension of signed operands; ``$signed`` / ``$unsigned``),
5.1.12 (``>>>`` fills with the sign bit of a signed expression), 5.1.6 (signed division and
modulus) and 4.8.1 (sized, unsized and signed literals). Clause numbers recalled from memory.
"""
from __future__ import annotations

import random

import pytest

from support import rtlcheck

INPUTS = {"a": (8, False), "b": (8, True), "c": (4, True), "d": (4, False), "e": (1, False),
          "f": (16, True), "g": (3, False)}
BINARY = ["+", "-", "*", "&", "|", "^", "~^", "/", "%"]
COMPARE = ["<", "<=", ">", ">=", "==", "!="]
SHIFTS = ["<<", ">>", "<<<", ">>>"]
LITERALS = ["3", "(-5)", "8'hA5", "4'sb1001", "6'sd17", "2'b10", "'d9", "12'sh800", "1'b1"]


def _leaf(rng, sized_only=False):
    r = rng.random()
    if r < 0.55 or sized_only:
        name = rng.choice(list(INPUTS))
        w = INPUTS[name][0]
        if w > 2 and rng.random() < 0.25:
            hi = rng.randrange(1, w)
            lo = rng.randrange(0, hi)
            return f"{name}[{hi}:{lo}]"
        if w > 1 and rng.random() < 0.1:
            return f"{name}[{rng.randrange(w)}]"
        return name
    return rng.choice(LITERALS)


def expression(rng, depth: int) -> str:
    if depth == 0 or rng.random() < 0.2:
        return _leaf(rng)
    k = rng.random()
    a = expression(rng, depth - 1)
    if k < 0.35:
        return f"({a} {rng.choice(BINARY)} {expression(rng, depth - 1)})"
    if k < 0.47:
        return f"({a} {rng.choice(COMPARE)} {expression(rng, depth - 1)})"
    if k < 0.60:
        amount = rng.choice(["g", "d[1:0]", "2", "c[2:0]"])
        return f"({a} {rng.choice(SHIFTS)} {amount})"
    if k < 0.70:
        return f"({expression(rng, depth - 1)} ? {a} : {expression(rng, depth - 1)})"
    if k < 0.78:
        return f"{rng.choice(['$signed', '$unsigned'])}({a})"
    if k < 0.86:
        return f"({rng.choice(['-', '~', '!', '&', '|', '^', '~|'])}{a})"
    if k < 0.94:
        return "{" + f"{_leaf(rng, True)}, {_leaf(rng, True)}" + "}"
    return f"({a} && {expression(rng, depth - 1)})"


def module(seed: int, n_out: int = 10) -> str:
    rng = random.Random(seed)
    ports = [f"input {'signed ' if s else ''}[{w - 1}:0] {n}" if w > 1 else f"input {n}"
             for n, (w, s) in INPUTS.items()]
    body = []
    for k in range(n_out):
        w = rng.randrange(1, 21)
        signed = rng.random() < 0.5
        ports.append(f"output {'signed ' if signed else ''}[{w - 1}:0] y{k}")
        body.append(f"  assign y{k} = {expression(rng, 3)};")
    return (f"module press_expr{seed}(\n  " + ",\n  ".join(ports) + "\n);\n" + "\n".join(body)
            + "\nendmodule\n")


@pytest.mark.parametrize("seed", range(8))
def test_random_expressions_match_iverilog(tmp_path, seed):
    p = tmp_path / f"press_expr{seed}.v"
    p.write_text(module(seed))
    rtlcheck.compare([p], f"press_expr{seed}", steps=48, seed=seed)


@pytest.mark.slow
@pytest.mark.parametrize("seed", range(8, 40))
def test_more_random_expressions_match_iverilog(tmp_path, seed):
    p = tmp_path / f"press_expr{seed}.v"
    p.write_text(module(seed))
    rtlcheck.compare([p], f"press_expr{seed}", steps=48, seed=seed)
