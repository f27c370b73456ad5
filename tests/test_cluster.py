"""A cluster: the prover's work items on a real Dask ``LocalCluster`` of two worker processes
on loopback give the same report bytes as the local run.

Netlist: ISCAS-85 c432 (Brglez & Fujiwara 1985; shipped in the PyPI package
circuitgraph==0.2.1, read in place). The reference is the same lint with ``jobs = 1`` (every
item in this process). ``distributed`` is in the ``test`` extra; without it these tests are
skipped with that reason.
"""
from __future__ import annotations

import io
import logging
import os
import socket
import subprocess
import sys
from pathlib import Path

import pytest
from support.bench import netlist

from hazlint.api import lint
from hazlint.config import Config
from hazlint.report import json as rjson

distributed = pytest.importorskip(
    "distributed", reason="the Dask 'distributed' package (extra 'cluster') is not installed")

REPO = Path(__file__).resolve().parents[1]


def _report(**config) -> str:
    # c432's outputs are plain outputs: listed at the wider scope
    r = lint([netlist("c432.v")], config=Config(**config), use_cache=False, time_budget=0,
             rule_options={"unbalanced-reconvergence": {"scope": "outputs"}})
    s = io.StringIO()
    rjson.write(r, s)
    return s.getvalue()


@pytest.mark.slow
def test_local_cluster_gives_the_local_bytes(caplog, monkeypatch):
    monkeypatch.setenv("HAZLINT_PARALLEL_MIN_NODES", "0")
    local = _report(jobs=1)
    with distributed.LocalCluster(n_workers=2, processes=True, threads_per_worker=1,
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        with caplog.at_level(logging.DEBUG, logger="hazlint.workers"):
            remote = _report(scheduler=cluster.scheduler_address)
    ran = [r.getMessage() for r in caplog.records if r.name == "hazlint.workers"]
    assert any("_sat_sources" in m and "on the cluster" in m for m in ran), ran
    assert any("_decide_item" in m and "on the cluster" in m for m in ran), ran
    assert any("_show_item" in m and "on the cluster" in m for m in ran), ran
    assert '"static-1-hazard"' in local or '"dynamic-hazard"' in local
    assert remote == local


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.mark.slow
def test_unreachable_scheduler_is_an_input_error(tmp_path):
    port = _free_port()       # nothing listens there
    env = dict(os.environ, PYTHONPATH=str(REPO))
    r = subprocess.run([sys.executable, "-m", "hazlint", "check", "--no-cache", "--scheduler",
                        f"tcp://127.0.0.1:{port}", netlist("c17.v")], cwd=tmp_path, env=env,
                       capture_output=True, text=True, timeout=120)
    assert r.returncode == 2, r.stderr
    assert f"cannot reach the Dask scheduler at tcp://127.0.0.1:{port}" in r.stderr
    assert "Traceback" not in r.stderr
