"""Zero-delay simulation in Icarus Verilog (reference simulator) equals Design.evaluate.

Covers every fixture under fixtures/ that declares a top module and ports, and randomly generated
hierarchical netlists (tests/support/randnet.py).
"""
from __future__ import annotations

import random
from pathlib import Path

import pytest

import hazlint
from support import iverilog, randnet

ROOT = Path(__file__).resolve().parent.parent


def _bus_values(design, name, width, value_bits):
    """Split a vector value into the design's bit-level input names."""
    if width == 1 and name in design.input_node:
        return {name: value_bits}
    return {f"{name}[{i}]": (value_bits >> i) & 1 for i in range(width)}


def _check_random(seed: int, n_vectors: int = 24):
    text, top, ins, outs = randnet.design(seed)
    rng = random.Random(seed * 7 + 1)
    vectors = [{n: rng.randrange(1 << w) for n, w in ins} for _ in range(n_vectors)]
    tb = randnet.testbench(top, ins, outs, vectors)
    sim = iverilog.simulate({"dut.v": text, "tb.v": tb}, "tb").split("\n")
    sim = [line.split() for line in sim if line.strip()]
    assert len(sim) == n_vectors
    import tempfile
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "dut.v"
        p.write_text(text)
        design = hazlint.load_design([str(p)], top=top)
    # all vectors at once: bit k of every value belongs to vector k (bit-parallel evaluation)
    values: dict[str, int] = {}
    for k, vec in enumerate(vectors):
        for n, w in ins:
            for bit, v in _bus_values(design, n, w, vec[n]).items():
                values[bit] = values.get(bit, 0) | (v << k)
    got = design.evaluate(values, width=n_vectors)
    for k in range(n_vectors):
        for (n, w), ref in zip(outs, sim[k]):
            want = int(ref, 16)
            if w == 1:
                mine = (got[n] >> k) & 1
            else:
                mine = sum(((got[f"{n}[{i}]"] >> k) & 1) << i for i in range(w))
            assert mine == want, f"seed {seed} vector {k} output {n}: hazlint {mine} iverilog {want}"


@pytest.mark.parametrize("seed", range(12))
def test_random_hierarchical_netlists_match_iverilog(seed):
    _check_random(seed)


@pytest.mark.slow
@pytest.mark.parametrize("seed", range(12, 60))
def test_more_random_netlists_match_iverilog(seed):
    _check_random(seed)
