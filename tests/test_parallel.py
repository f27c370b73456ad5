"""Every core: the prover's work items in worker processes give the same bytes as one process.

The reference for every comparison is the same run with ``-j 1`` (every item in this process,
no pool). Netlists: ISCAS-85 c432 and c880 (Brglez & Fujiwara 1985; shipped in the PyPI
package circuitgraph==0.2.1, read in place) and c432 again with each of its outputs as the
asynchronous reset of a fault register, so the sink verdicts over the change model, their
delay searches and waveforms run in the workers too. ``HAZLINT_PARALLEL_MIN_NODES=0`` makes
these small designs use the pool; ``HAZLINT_DEBUG`` shows that it did.
"""
from __future__ import annotations

import os
import random
import re
import subprocess
import sys
import threading
from pathlib import Path

import networkx as nx
import pytest
from support.bench import netlist

from hazlint.analysis import workers
from hazlint.analysis.batch import _skip_draws
from hazlint.config import load_config
from hazlint.errors import ConfigError

REPO = Path(__file__).resolve().parents[1]


def _check(tmp_path, files, jobs, extra=()):
    env = dict(os.environ, HAZLINT_PARALLEL_MIN_NODES="0", HAZLINT_DEBUG="1",
               PYTHONPATH=str(REPO))
    out = tmp_path / f"j{jobs}.json"
    r = subprocess.run([sys.executable, "-m", "hazlint", "check", "--no-cache", "--format",
                        "json", "--time-budget", "0", "-j", str(jobs), "-o", str(out),
                        *extra, *files], cwd=tmp_path, env=env, capture_output=True,
                       text=True, timeout=900)
    assert r.returncode in (0, 1), r.stderr[-2000:]
    return out.read_bytes(), r.stderr


def _pooled(stderr: str) -> set[str]:
    """The item functions that ran in worker processes (debug lines of hazlint.workers)."""
    return set(re.findall(r"hazlint\.workers: (\w+): \d+ items in \d+ worker processes",
                          stderr))


@pytest.mark.slow
@pytest.mark.parametrize("name", ["c432.v", "c880.v"])
def test_iscas_json_is_the_same_for_one_and_two_jobs(tmp_path, name):
    # the outputs of an ISCAS circuit are plain outputs: listed at the wider scope
    one, err1 = _check(tmp_path, [netlist(name)], 1, ("--scope", "outputs"))
    two, err2 = _check(tmp_path, [netlist(name)], 2, ("--scope", "outputs"))
    assert not _pooled(err1)
    # the SAT queries and the refinement of the findings ran in the pool
    assert {"_sat_sources", "_decide_item", "_show_item"} <= _pooled(err2), err2[-3000:]
    assert b'"static-1-hazard"' in one or b'"dynamic-hazard"' in one
    assert one == two


def _async_wrapper(tmp_path) -> Path:
    """c432 with each output as the active-low asynchronous reset of a fault register."""
    outs = ["N223", "N329", "N370", "N421", "N430", "N431", "N432"]
    text = Path(netlist("c432.v")).read_text()
    ins = re.search(r"input ([^;]*);", text).group(1)
    ins = [x.strip() for x in ins.split(",")]
    lines = ["module press_fault_bank(clk, d, " + ", ".join(ins) + ", q);",
             "  input clk, d;", "  input " + ", ".join(ins) + ";",
             f"  output [{len(outs) - 1}:0] q;", f"  reg [{len(outs) - 1}:0] q;",
             "  wire " + ", ".join(outs) + ";",
             "  c432 core(" + ", ".join(f".{p}({p})" for p in ins + outs) + ");"]
    for k, o in enumerate(outs):
        lines += [f"  always @(posedge clk or negedge {o})",
                  f"    if (!{o}) q[{k}] <= 1'b0; else q[{k}] <= d;"]
    lines.append("endmodule")
    p = tmp_path / "press_fault_bank.v"
    p.write_text("\n".join(lines) + "\n")
    return p


@pytest.mark.slow
def test_async_sinks_json_is_the_same_for_one_and_two_jobs(tmp_path):
    top = _async_wrapper(tmp_path)
    files = [str(top), netlist("c432.v")]
    extra = ["--top", "press_fault_bank"]
    one, _ = _check(tmp_path, files, 1, extra)
    two, err2 = _check(tmp_path, files, 2, extra)
    assert {"_decide_item", "_show_item"} <= _pooled(err2), err2[-3000:]
    assert b'"unregistered-async"' in one or b'"sink_node"' in one
    assert one == two


def test_skipping_draws_leaves_the_generator_where_the_draws_would():
    # the reference is Python's own Mersenne Twister stream, drawn one value at a time
    for width, draws in ((64 * 256, 7), (96, 5), (50, 9)):
        a, b = random.Random(3), random.Random(3)
        for _ in range(draws):
            a.getrandbits(width)
        _skip_draws(b, draws, width)
        assert a.getrandbits(4096) == b.getrandbits(4096)


def test_connected_groups_are_the_connected_components():
    # oracle: networkx connected components of the graph joining each index to its keys
    rng = random.Random(5)
    for _ in range(30):
        keyed = [(i, [rng.randrange(25) for _ in range(rng.randrange(3))])
                 for i in range(rng.randrange(1, 40))]
        g = nx.Graph()
        for i, keys in keyed:
            g.add_node(("i", i))
            for k in keys:
                g.add_edge(("i", i), ("k", k))
        want = sorted(sorted(n[1] for n in c if n[0] == "i") for c in nx.connected_components(g))
        want = [c for c in want if c]
        got = workers.connected_groups(keyed)
        assert sorted(got) == want
        assert [g_[0] for g_ in got] == sorted(g_[0] for g_ in got)     # in first-index order
        packed = workers.pack(got, 3)
        assert len(packed) <= 3 and sorted(i for p in packed for i in p) == \
            sorted(i for i, _ in keyed)


@pytest.mark.parametrize("threaded", [False, True])
def test_classify_outputs_in_a_pool_equals_one_process(monkeypatch, threaded):
    """Small chunks give many simulation items: each must see the random vectors the one
    process pass gives its chunk, and each SAT item the same shared encoding. With another
    thread running, the pool starts through a fork server and gets the design pickled."""
    from hazlint.analysis.prove import classify_outputs
    from hazlint.api import load
    from hazlint.config import Config
    g = load([netlist("c880.v")], Config(), use_cache=False).graph
    monkeypatch.setattr(workers, "MIN_NODES", 0)
    monkeypatch.delenv("HAZLINT_PARALLEL_MIN_NODES", raising=False)
    ref = classify_outputs(g, options={"seed": 4}, chunk=8, vectors=64)
    stop = threading.Event()
    other = threading.Thread(target=stop.wait, daemon=True)
    if threaded:
        other.start()
    try:
        with workers.configured(jobs=2), workers.Session({"graph": g}, len(g)) as ses:
            got = classify_outputs(g, options={"seed": 4}, chunk=8, vectors=64, session=ses)
            assert ses.remote_items > 0
    finally:
        stop.set()
    assert len(ref) > 100
    assert got == ref


def test_scheduler_configuration_key(tmp_path):
    (tmp_path / "hazlint.toml").write_text('scheduler = "tcp://10.0.0.5:8786"\njobs = 3\n')
    cfg = load_config(str(tmp_path))
    assert cfg.scheduler == "tcp://10.0.0.5:8786" and cfg.jobs == 3
    (tmp_path / "hazlint.toml").write_text('scheduler = "  "\n')
    with pytest.raises(ConfigError, match="scheduler"):
        load_config(str(tmp_path))


def test_an_item_handed_out_after_the_budget_ran_out_is_out_of_time():
    # a worker gets (the run's budget, seconds left); nothing left must not mean "no budget"
    seen = {}

    def item(shared, common, it, local):
        from hazlint import budget
        seen["expired"], seen["reason"] = budget.expired(), budget.reason()
        return it

    assert workers._run_budgeted(item, None, None, 7, {}, (15.0, 0.0))[:2] == (7, True)
    assert seen["expired"] and "time budget (15 s" in seen["reason"]
    assert workers._run_budgeted(item, None, None, 8, {}, (0.0, 0.0))[:2] == (8, False)
    assert not seen["expired"]
