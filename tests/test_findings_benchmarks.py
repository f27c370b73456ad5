"""At most one finding per problem on every ISCAS-85 and EPFL netlist shipped in circuitgraph.

Netlists: the PyPI package ``circuitgraph==0.2.1`` (read in place through importlib.resources):
ISCAS-85 (Brglez & Fujiwara, ISCAS 1985) and the EPFL combinational benchmark suite (Amaru,
Gaillardon, De Micheli, IWLS 2015). Both are combinational, without registers or loops, so:

* with the default configuration (glitch-sensitive sinks only) at most one finding per
  glitch-sensitive sink plus one per loop, with the sinks counted from the graph's pin roles and
  the loops by networkx' strongly connected components (the oracle);
* with the wider scope (``scope = "outputs"``) at most one finding per output bit, each at its
  own sink. The larger netlists run without the prover (``--no-prove``): the batched proofs of
  tens of thousands of reconvergences would dominate the suite, and the grouping is what is
  checked here; they are marked slow, and their arrival-time work is bounded (``work_budget``
  5e7 node visits; the stems left out are reported as ``analysis-incomplete``).

The count of places the default scope does not list is checked on the small netlists against
a brute-force oracle over networkx ancestors (a stem reconverges toward an output when two of
its reads reach it).
"""
from __future__ import annotations

import importlib.resources
import importlib.util
import re

import networkx as nx
import pytest

from hazlint.api import lint
from hazlint.config import Config
from hazlint.findings.fold import HAZARD_KINDS, LOOP_KINDS

NETLISTS = importlib.resources.files("circuitgraph") / "netlists"
ISCAS85 = sorted(n.name for n in NETLISTS.iterdir() if re.fullmatch(r"c\d+(g|_assign|_gates)?\.v",
                                                                     n.name))
EPFL = ["adder.v", "arbiter.v", "bar.v", "cavlc.v", "ctrl.v", "dec.v", "div.v", "i2c.v",
        "int2float.v", "log2.v", "max.v", "memctrl.v", "multiplier.v", "priority_ckt.v",
        "router.v", "sin.v", "sqrt.v", "square.v", "voter.v"]
BIG = 400_000            # bytes: netlists above are slow tests and run without the prover
PROVE_MAX = 10_000       # bytes: the wider scope with the prover only up to this size


def _param(name):
    big = (NETLISTS / name).stat().st_size > BIG
    return pytest.param(name, marks=pytest.mark.slow) if big else name


def _config(tmp_path, big=False):
    # the large netlists through the slang front end when it is installed: it reads them in
    # less than half the time, and both front ends give the same IR (tests/test_frontend_slang)
    slang = big and importlib.util.find_spec("pyslang") is not None
    return Config(root=str(tmp_path), cache_dir=str(tmp_path / "cache"),
                  frontend="slang" if slang else "auto")


def _problems(result):
    hazards = [d for d in result.diagnostics if d.kind in HAZARD_KINDS]
    loops = [d for d in result.diagnostics if d.kind in LOOP_KINDS]
    other = [d for d in result.diagnostics if d not in hazards and d not in loops]
    return hazards, loops, other


@pytest.mark.parametrize("name", [_param(n) for n in ISCAS85 + EPFL])
def test_one_finding_per_problem(name, tmp_path):
    path = str(NETLISTS / name)
    size = (NETLISTS / name).stat().st_size
    # no time budget: on a busy machine reading the largest netlists can take a minute (a
    # run past its budget stops with an error, which is not what is checked here)
    res = lint([path], config=_config(tmp_path, size > BIG), cwd=str(tmp_path), time_budget=0,
               use_cache=False)
    g = res.design.graph
    sensitive = res.context.sensitive_sinks
    loops = [c for c in nx.strongly_connected_components(g) if len(c) > 1]
    hazards, loop_findings, other = _problems(res)
    assert len(hazards) <= len(sensitive)
    assert len(loop_findings) <= len(loops)
    assert {d.kind for d in other} <= {"analysis-incomplete", "design-note"}, other[:3]
    # (combinational benchmarks: nothing is glitch-sensitive, nothing loops)
    assert not sensitive and not loops and not hazards

    opts = {"scope": "outputs"}
    if size > BIG:
        # bounded arrival-time work on the large arithmetic blocks (stems past it are reported
        # as not analysed, an analysis-incomplete warning): the suite's time stays in check
        opts["work_budget"] = 5e7
    wide = lint([path], config=_config(tmp_path, size > BIG), cwd=str(tmp_path),
                prove=size <= PROVE_MAX,
                rule_options={"unbalanced-reconvergence": opts}, time_budget=0, use_cache=False)
    outputs = [n for n, d in g.nodes(data=True)
               if d["kind"] == "sink" and d.get("role") == "output"]
    hazards, _, other = _problems(wide)
    assert len(hazards) <= len(outputs)
    sinks = [d.evidence["problem"] for d in hazards]
    assert len(set(sinks)) == len(sinks)                       # one finding per output bit
    labels = {f"hazard:{res.context.describe(n)}" for n in outputs}
    assert set(sinks) <= labels
    assert {d.kind for d in other} <= {"analysis-incomplete", "design-note"}
    # what the default run left out is what the wider scope lists, at most
    unlisted = res.counts.get("unlisted") or {}
    assert len(hazards) <= unlisted.get("outputs", 0)


def _reconvergent_outputs(g):
    """Oracle: output sinks toward which some net reconverges (two reads, distinct readers or
    two pins of one, both reaching the sink), by networkx ancestors; brute force."""
    out = 0
    for t, d in g.nodes(data=True):
        if d["kind"] != "sink" or d.get("role") != "output":
            continue
        cone = nx.ancestors(g, t) | {t}
        hit = False
        for u in cone - {t}:
            reads = 0
            for _, w, e in g.out_edges(u, data=True):
                if w in cone:
                    reads += len(e.get("pins") or (0,))
            if reads >= 2:
                hit = True
                break
        out += hit
    return out


@pytest.mark.parametrize("name", ["c17.v", "c432.v", "c880.v", "int2float.v"])
def test_unlisted_count_matches_a_brute_force_oracle(name, tmp_path):
    res = lint([str(NETLISTS / name)], config=_config(tmp_path), cwd=str(tmp_path))
    want = _reconvergent_outputs(res.design.graph)
    assert want > 0
    assert (res.counts.get("unlisted") or {}).get("outputs") == want
    from hazlint.report.text import summary_line
    assert f"not listed: reconvergent fanout into {want} plain output" in summary_line(res)
