"""The compiled reconvergence kernel against the pure numpy/Python solvers.

Oracle: the pure solvers (``ArrivalSolver``, ``BatchArrivalSolver`` and the rule's own
selection), which tests/test_rules_reconvergence.py holds against path enumeration and
networkx's immediate dominators. The kernel must give the same diagnostics, field by field,
and the same report bytes, on random circuits and on the ISCAS-85 / EPFL netlists shipped in
the PyPI package circuitgraph==0.2.1 (read in place through importlib.resources).
"""
from __future__ import annotations

import dataclasses
import importlib.resources
import io
import logging
import pickle
import random
import sys

import pytest

from graphbuild import GraphBuilder
from hazlint.analysis import compiled
from hazlint.analysis.context import AnalysisContext
from hazlint.diagnostics import Diagnostic, Location, Severity, sort_diagnostics
from hazlint.netlist.library import Delay
from hazlint.plugins import get_rule

RULE = get_rule("unbalanced-reconvergence")
needs_c = pytest.mark.skipif(compiled.kernels() is None,
                             reason="C kernel not built (no C compiler at install)")


def _netlist(name: str) -> str:
    return str(importlib.resources.files("circuitgraph") / "netlists" / name)


def _random_circuit(rng, n):
    """Random gates with random rise/fall min/max delays, a shared select line, registers
    with an asynchronous reset from logic, and a few primary outputs."""
    b = GraphBuilder()
    nodes = [b.input(f"i{k}") for k in range(rng.randint(2, 6))]
    for k in range(n):
        fanin = rng.randint(1, 4)
        srcs = [rng.choice(nodes[-12:] if rng.random() < 0.7 else nodes) for _ in range(fanin)]
        delays = [Delay(lo, lo + rng.choice([0.0, 0.5]), lo, lo + rng.choice([0.0, 1.0, 2.5]))
                  for lo in (rng.choice([0.0, 1.0, 2.0, 3.0]) for _ in srcs)]
        if rng.random() < 0.3:
            delays = [Delay.fixed(1.0)] * len(srcs)
        op = rng.choice(["and", "or", "nand", "nor", "xor"]) if fanin > 1 else \
            rng.choice(["buf", "not"])
        nodes.append(b.gate(f"g{k}", op, srcs, delay=delays))
    clk = b.input("clk")
    for k in range(rng.randint(0, 3)):
        b.register(f"r{k}", {"clock": clk, "data": rng.choice(nodes),
                             "reset": rng.choice(nodes[-20:])})
    for k, x in enumerate(rng.sample(nodes, min(len(nodes), rng.randint(1, 6)))):
        b.output(f"o{k}", x)
    return b.design()


def _diagnostics(design, monkeypatch, mode, **opts):
    monkeypatch.setenv("HAZLINT_KERNEL", mode)
    ctx = AnalysisContext(design, None, {RULE.id: RULE.resolve_options(opts)})
    return sort_diagnostics(RULE.check(design, ctx))


@needs_c
@pytest.mark.parametrize("seed", range(40))
def test_kernel_gives_the_pure_solvers_diagnostics_on_random_circuits(seed, monkeypatch):
    rng = random.Random(5000 + seed)
    design = _random_circuit(rng, rng.randint(10, 120))
    opts = {"scope": rng.choice(["async", "outputs", "all"]),
            "min_skew": rng.choice([0.0, 0.0, 1.0, 2.5])}
    pure = _diagnostics(design, monkeypatch, "python", **opts)
    fast = _diagnostics(design, monkeypatch, "c", **opts)
    assert [d.to_json() for d in fast] == [d.to_json() for d in pure]
    assert fast == pure


def _report(path, monkeypatch, mode, fmt):
    from hazlint.api import lint
    from hazlint.config import Config
    from hazlint.report import json as json_report, text as text_report
    monkeypatch.setenv("HAZLINT_KERNEL", mode)
    # the rule's own findings, one per (stem, sink) reconvergence: grouping them into one per
    # problem (hazlint.findings.fold) would hide a difference between the kernels
    monkeypatch.setattr("hazlint.findings.fold.fold", lambda diags, *a, **k: list(diags))
    result = lint([path], config=Config(), rule_options={RULE.id: {"scope": "all"}},
                  prove=False, use_cache=False)
    out = io.StringIO()
    (json_report if fmt == "json" else text_report).write(result, out)
    return out.getvalue(), len(result.diagnostics)


@needs_c
@pytest.mark.parametrize("name", ["c432.v", "c880.v", "c1908.v", "c3540.v", "ctrl.v",
                                  "int2float.v", "router.v", "cavlc.v"])
def test_kernel_reports_are_byte_identical_on_benchmark_netlists(name, monkeypatch):
    # ISCAS-85 (Brglez & Fujiwara 1985) and EPFL (Amaru et al. 2015) netlists
    for fmt in ("json", "text"):
        pure, n = _report(_netlist(name), monkeypatch, "python", fmt)
        fast, m = _report(_netlist(name), monkeypatch, "c", fmt)
        assert n == m and n > 10
        assert fast == pure


@needs_c
@pytest.mark.slow
@pytest.mark.parametrize("name", ["c6288.v", "priority_ckt.v", "i2c.v"])
def test_kernel_reports_are_byte_identical_on_larger_netlists(name, monkeypatch):
    pure, n = _report(_netlist(name), monkeypatch, "python", "text")
    fast, m = _report(_netlist(name), monkeypatch, "c", "text")
    assert n == m and n > 100 and fast == pure


@needs_c
def test_reach_windows_hold_the_pure_reach_sets(monkeypatch):
    # the kernel's windowed bit sets read back as the pure path's Python int masks
    from hazlint.analysis.compiled_stems import CompiledStems
    import hazlint
    for design in (hazlint.load_design(_netlist("c880.v")),
                   _random_circuit(random.Random(3), 150)):
        for scope in ("async", "outputs", "all"):
            ctx = AnalysisContext(design)
            sinks, reach = ctx.scope_reach(scope)
            cs = CompiledStems(ctx, scope, compiled.kernels())
            assert cs.sinks == sinks
            assert [cs.reach[i] for i in range(len(reach))] == reach


def test_without_the_c_kernel_the_rule_falls_back_silently(monkeypatch, caplog):
    design = _random_circuit(random.Random(11), 90)
    expected = _diagnostics(design, monkeypatch, "python")
    monkeypatch.setitem(sys.modules, "hazlint.analysis._arrival", None)   # import fails
    with caplog.at_level(logging.DEBUG, logger="hazlint.kernel"):
        got = _diagnostics(design, monkeypatch, "c")
    assert got == expected and got
    assert any("C kernel not built" in r.message for r in caplog.records)


@needs_c
def test_kernel_rejects_arrays_that_do_not_fit():
    from array import array
    k = compiled.kernels()
    q = lambda *x: array("q", x)  # noqa: E731
    with pytest.raises(ValueError):
        k.solve_stems(q(0), q(0, 0, 1), q(0), array("d", [1.0]), array("d", [1.0]), q(0, 1),
                      q(1), q(0, 0, 1), q(0), q(0, 1), q(), q(), q(), b"", 0.0)
    with pytest.raises(IndexError):
        k.reach_windows(q(0, 1, 1), q(1), q(7))
    with pytest.raises(ValueError):
        k.reach_windows(b"\0" * 12, q(), q())


# ---- deferred diagnostics ---------------------------------------------------------------------

def _pair():
    loc = Location("a.v", 3, 2)
    fields = dict(message="m", evidence={"key": "k", "path": "a.v"}, notes=("n",), flows=(),
                  fix="f")
    calls = []

    def build():
        calls.append(1)
        return dict(fields)
    lazy = Diagnostic.deferred("r", "unbalanced-reconvergence", Severity.WARNING, loc, "top.g",
                               build)
    eager = Diagnostic("r", "unbalanced-reconvergence", Severity.WARNING, loc, "top.g", **fields)
    return lazy, eager, calls


def test_deferred_diagnostic_reads_as_the_eager_one():
    lazy, eager, calls = _pair()
    assert calls == []
    assert lazy.sort_key() == eager.sort_key() and calls == [1]
    assert lazy == eager and lazy.to_json() == eager.to_json()
    assert lazy.fingerprint_material() == eager.fingerprint_material()
    assert calls == [1]                               # built once
    assert dataclasses.replace(lazy, fix="g") == dataclasses.replace(eager, fix="g")
    assert lazy.with_severity(Severity.ERROR) == eager.with_severity(Severity.ERROR)
    with pytest.raises(AttributeError):
        lazy.no_such_field
    with pytest.raises(dataclasses.FrozenInstanceError):
        lazy.message = "x"


def test_deferred_diagnostic_pickles_and_encodes_built():
    from hazlint.store.result import open_result_cache  # noqa: F401  (codec of findings)
    lazy, eager, _ = _pair()
    assert pickle.loads(pickle.dumps(lazy)) == eager
    lazy2, _, calls = _pair()
    assert pickle.loads(pickle.dumps(lazy2)) == eager and calls == [1]
    assert "_build" not in vars(lazy2)
