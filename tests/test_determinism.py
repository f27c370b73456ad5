"""Same input, same bytes: the reports do not depend on the string hash seed.

ISCAS-85 c7552 (Brglez & Fujiwara 1985; the netlist shipped in the PyPI package
circuitgraph==0.2.1, read in place) has hundreds of proven hazards (at the wider scope, folded
into one finding per output bit) whose delay searches, pulse times and waveforms used to follow
Python's hash order of node names. Two processes with
different ``PYTHONHASHSEED`` values lint it once each (no cache, no time budget) and write the
text, JSON and SARIF reports; all three must be equal byte for byte.
"""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from support.bench import netlist

REPO = Path(__file__).resolve().parents[1]

CHILD = r"""
import sys
from hazlint.api import lint
from hazlint.report import json as rjson, sarif, text
src, out = sys.argv[1], sys.argv[2]
result = lint([src], use_cache=False, time_budget=0,
              rule_options={"unbalanced-reconvergence": {"scope": "outputs"}})
for name, write in (("text", lambda s: text.write(result, s)),
                    ("json", lambda s: rjson.write(result, s)),
                    ("sarif", lambda s: sarif.write(result, s))):
    with open(f"{out}.{name}", "w", encoding="utf-8", newline="") as fh:
        write(fh)
"""


@pytest.mark.slow
def test_c7552_reports_do_not_depend_on_the_hash_seed(tmp_path):
    src = netlist("c7552.v")
    outs = []
    for seed in ("1", "4242"):
        out = tmp_path / f"seed{seed}"
        env = dict(os.environ, PYTHONHASHSEED=seed, PYTHONPATH=str(REPO))
        subprocess.run([sys.executable, "-c", CHILD, src, str(out)], cwd=tmp_path, env=env,
                       check=True, timeout=900)
        outs.append(out)
    for fmt in ("text", "json", "sarif"):
        a = Path(f"{outs[0]}.{fmt}").read_bytes()
        b = Path(f"{outs[1]}.{fmt}").read_bytes()
        assert len(a) > 20_000, fmt             # a finding per output bit with its evidence
        assert a == b, fmt


ALWAYS = """\
module press_alw(input a, input b, input c, input s, output reg y, output reg z, output reg q);
  always @(*) begin
    y = a;
    z = b;
    if (s) begin y = b & c; z = a | c; q = a ^ b; end
    else begin y = a | b; z = c; q = b; end
    if (a) begin z = y ^ q; y = z & c; end
  end
endmodule
"""


def test_gates_built_for_always_blocks_are_named_in_a_fixed_order(tmp_path):
    # the branches of an if are merged variable by variable; the gates they need get their
    # names ($nNN) in the order they are built, which once followed a set's hash order
    src = tmp_path / "press_alw.v"
    src.write_text(ALWAYS)
    outs = set()
    for seed in ("1", "2", "3"):
        p = subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-cache",
                            "--format", "json", str(src)], capture_output=True, timeout=300,
                           env=dict(os.environ, PYTHONHASHSEED=seed, PYTHONPATH=str(REPO)))
        assert p.returncode in (0, 1), p.stderr
        outs.add(p.stdout)
    assert len(outs) == 1
