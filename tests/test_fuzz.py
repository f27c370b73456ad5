"""Property-based fuzzing: every input ends in exit 0, 1 or 2 within its budget, never a
traceback, and every exit 2 names ``file:line``.

Inputs are generated structural netlists and byte-, token- and line-level mutations of every
fixture (:mod:`support.fuzz`). This is the fixed-seed slice CI runs (``derandomize``: the same
examples on every run, a few hundred in all); ``bench/bench_fuzz.py`` runs ten thousand and
records the figures in bench/RESULTS-fuzz.md. Runs go through ``hazlint.cli.main`` in-process;
a sample goes through real processes.
"""
from __future__ import annotations

import pytest
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from support import fuzz

# no shrinking: a hang costs a minute per attempt; the failing example is printed as found
SLICE = settings(derandomize=True, deadline=None, database=None, print_blob=True,
                 suppress_health_check=list(HealthCheck), report_multiple_bugs=False,
                 phases=[Phase.explicit, Phase.reuse, Phase.generate])
HEAVY = {"hostile/vector_4096.v", "hostile/hier_doubling.v", "hostile/ports_1m.v",
         "hostile/define_bomb.v", "hostile/include_fanout/top.v"}


def _rel(p) -> str:
    return str(p.relative_to(fuzz.FIXTURES_DIR))


@pytest.fixture(scope="module")
def base(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzz")


def _check(o, what):
    bad = fuzz.problems(o)
    assert not bad, f"{bad} on {what}: exit {o.code}\n{o.stderr[-3000:]}"


@pytest.mark.parametrize("fixture", fuzz.FIXTURES, ids=_rel)
def test_mutants_of_every_fixture(base, fixture):
    n = 2 if _rel(fixture) in HEAVY else 6

    @settings(SLICE, max_examples=n)
    @given(fuzz.mutants(fixture))
    def mutant_ends_well(mut):
        level, data = mut
        path = fuzz.place(base, fixture, data)
        try:
            _check(fuzz.run_in_process(path), f"a {level} mutant of {_rel(fixture)}")
        finally:
            fuzz.restore(base, fixture)
    mutant_ends_well()


def test_generated_netlists(base):
    @settings(SLICE, max_examples=80)
    @given(fuzz.netlists())
    def netlist_ends_well(text):
        path = base / "generated.v"
        path.write_text(text)
        _check(fuzz.run_in_process(path), f"the generated netlist\n{text}")
    netlist_ends_well()


@pytest.mark.slow
def test_a_sample_through_real_processes(base):
    @settings(SLICE, max_examples=10)
    @given(st.sampled_from([f for f in fuzz.FIXTURES if _rel(f) not in HEAVY]).flatmap(
        lambda f: fuzz.mutants(f).map(lambda m: (f, m))))
    def process_ends_well(case):
        fixture, (level, data) = case
        path = fuzz.place(base, fixture, data)
        try:
            _check(fuzz.run_subprocess(path), f"a {level} mutant of {_rel(fixture)}")
        finally:
            fuzz.restore(base, fixture)
    process_ends_well()
