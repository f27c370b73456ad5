"""The timed simulator against Icarus Verilog: with the same ``#(rise, fall)`` gate delays every
output change time must be the one iverilog prints (inertial mode; iverilog's gate delays are
inertial, which the probe below checks on iverilog itself rather than assuming it). Every
simulation runs on both event loops, the compiled one (the default) and the Python one, which
must give the same trace."""
from __future__ import annotations

import glob
import os
import random
import re
import shutil
import subprocess

import pytest

from hazlint.analysis import compiled
from hazlint.analysis.circuits import build_graph, graph_to_verilog, random_circuit
from hazlint.analysis.timedsim import simulate as simulate_one

pytestmark = pytest.mark.skipif(shutil.which("iverilog") is None, reason="needs iverilog")

HERE = os.path.dirname(__file__)
FIXTURES = os.path.join(HERE, "..", "fixtures", "hazards")
SETTLE = 1000


def run_iverilog(tmp_path, circuits):
    """One compile and one run for many circuits. Each circuit: ``verilog`` (module text),
    ``module``, ``inputs``/``outputs`` (port names in port order), ``init`` (port -> value) and
    ``events`` [(time, port, value)]. Returns {(circuit, output index): [(time, value)]}."""
    src = ["`timescale 1ns/1ns"]
    tb = ["module tb;"]
    seen = set()
    for k, c in enumerate(circuits):
        if c["module"] not in seen:
            seen.add(c["module"])
            src.append(c["verilog"])
        ins = [f"c{k}_i{i}" for i in range(len(c["inputs"]))]
        outs = [f"c{k}_o{j}" for j in range(len(c["outputs"]))]
        tb.append(f"  reg {', '.join(ins)};")
        tb.append(f"  wire {', '.join(outs)};")
        conns = [f".{p}({w})" for p, w in zip(c["inputs"], ins)]
        conns += [f".{p}({w})" for p, w in zip(c["outputs"], outs)]
        tb.append(f"  {c['module']} u{k}({', '.join(conns)});")
        for j, w in enumerate(outs):
            tb.append(f'  always @({w}) if ($time > {SETTLE // 2}) '
                      f'$display("%0t {k} {j} %b", $time, {w});')
        tb.append("  initial begin")
        for p, w in zip(c["inputs"], ins):
            tb.append(f"    {w} = {c['init'][p]};")
        last = 0
        for t, p, v in c["events"]:
            tb.append(f"    #{t - last} {ins[c['inputs'].index(p)]} = {v};")
            last = t
        tb.append("  end")
    end = max((c["events"][-1][0] for c in circuits if c["events"]), default=SETTLE) + 500
    tb.append(f"  initial #{end} $finish;")
    tb.append("endmodule")
    path = tmp_path / "bench.v"
    path.write_text("\n".join(src + tb) + "\n")
    exe = tmp_path / "bench.vvp"
    subprocess.run(["iverilog", "-o", str(exe), str(path)], check=True, capture_output=True)
    out = subprocess.run(["vvp", "-n", str(exe)], capture_output=True, text=True,
                         check=True).stdout
    got: dict = {}
    for line in out.splitlines():
        m = re.match(r"(\d+) (\d+) (\d+) ([01xz])$", line)
        if m:
            got.setdefault((int(m[2]), int(m[3])), []).append(
                (float(m[1]), int(m[4]) if m[4] in "01" else m[4]))
    return got


def simulate(*args, **kw):
    """The trace of the compiled event loop (when built: tests/test_timedsim_compiled.py
    requires it), checked equal to the Python loop's."""
    traces = []
    for kernel in ("c", "python"):
        with pytest.MonkeyPatch.context() as mp:
            mp.setenv(compiled.ENV, kernel)
            traces.append(simulate_one(*args, **kw))
    assert traces[0] == traces[1]
    return traces[0]


def _random_events(rng, ports, n=12):
    cur = {p: rng.randint(0, 1) for p in ports}
    init = dict(cur)
    events, t = [], SETTLE
    for _ in range(n):
        t += rng.randint(1, 25)        # close events: pulses shorter and longer than gate delays
        p = rng.choice(ports)
        cur[p] ^= 1
        events.append((t, p, cur[p]))
    return init, events


def _compare(graph, circuit, got, k, in_node, out_nodes):
    init = {in_node[p]: v for p, v in circuit["init"].items()}
    evs = [(t, in_node[p], v) for t, p, v in circuit["events"]]
    tr = simulate(graph, init, evs, mode="inertial")
    bad = []
    for j, o in enumerate(out_nodes):
        mine = tr.changes(o)
        ref = got.get((k, j), [])
        if mine != ref:
            bad.append((k, j, mine, ref))
    return bad


def test_inertial_probe_against_iverilog(tmp_path):
    # pulses narrower than, equal to and wider than the rise/fall delays, and a pulse that
    # ends exactly when the output event matures (the tie rule)
    g = build_graph(["a", "b"], [("y", "and", ["a", "b"], (5, 2)), ("z", "buf", ["a"], (3, 1)),
                                 ("w", "buf", ["a"], (1, 4))], ["y", "z", "w"])
    v = graph_to_verilog("probe", g)
    ins, outs = ["i0", "i1"], ["o0", "o1", "o2"]
    ev, t, a = [], SETTLE, 0
    for width, gap in ((1, 20), (3, 20), (6, 20), (4, 1), (2, 20), (5, 20)):
        a ^= 1
        ev.append((t, "i0", a))
        t += width
        a ^= 1
        ev.append((t, "i0", a))
        t += gap
    c = {"verilog": v, "module": "probe", "inputs": ins, "outputs": outs,
         "init": {"i0": 0, "i1": 1}, "events": ev}
    got = run_iverilog(tmp_path, [c])
    sinks = ["<sink>y", "<sink>z", "<sink>w"]
    assert _compare(g, c, got, 0, {"i0": "a", "i1": "b"}, sinks) == []
    # the 1-wide pulse is swallowed by the and gate's rise delay 5 (inertial), as iverilog shows
    assert not any(SETTLE <= t < SETTLE + 10 for t, _ in got.get((0, 0), []))


def _fixture_circuits(rng):
    from hazlint import load_design
    out = []
    for path in sorted(glob.glob(os.path.join(FIXTURES, "*.v"))):
        design = load_design(path)
        if design.has_loop:
            continue
        text = open(path).read()
        module = re.search(r"module\s+(\w+)", text).group(1)
        ins, outs = list(design.inputs), list(design.outputs)
        for rep in range(3):
            init, events = _random_events(rng, ins, 16)
            out.append((design, {"verilog": re.sub(r"`timescale[^\n]*\n", "", text),
                                 "module": module, "inputs": ins, "outputs": outs,
                                 "init": init, "events": events}))
    return out


def test_fixtures_match_iverilog(tmp_path):
    pytest.importorskip("hazlint.frontends.verilog.reader")
    rng = random.Random(5)
    cases = _fixture_circuits(rng)
    assert cases
    got = run_iverilog(tmp_path, [c for _, c in cases])
    bad = []
    for k, (design, c) in enumerate(cases):
        outs = [design.output_node[p] for p in c["outputs"]]
        bad += _compare(design.graph, c, got, k, design.input_node, outs)
    assert bad == []


@pytest.mark.slow
def test_random_circuits_match_iverilog(tmp_path):
    rng = random.Random(2024)
    graphs, circuits = [], []
    for k in range(240):
        g = random_circuit(rng, rng.randint(2, 7), rng.randint(3, 18), rng.randint(1, 3))
        ins = [f"i{i}" for i in range(sum(1 for _, d in g.nodes(data=True)
                                          if d["kind"] == "input"))]
        outs = [f"o{j}" for j in range(sum(1 for _, d in g.nodes(data=True)
                                           if d["kind"] == "sink"))]
        init, events = _random_events(rng, ins)
        graphs.append(g)
        circuits.append({"verilog": graph_to_verilog(f"m{k}", g), "module": f"m{k}",
                         "inputs": ins, "outputs": outs, "init": init, "events": events})
    got = run_iverilog(tmp_path, circuits)
    bad, compared = [], 0
    for k, (g, c) in enumerate(zip(graphs, circuits)):
        in_nodes = [n for n, d in g.nodes(data=True) if d["kind"] == "input"]
        sinks = [n for n, d in g.nodes(data=True) if d["kind"] == "sink"]
        bad += _compare(g, c, got, k, dict(zip(c["inputs"], in_nodes)), sinks)
        compared += sum(len(got.get((k, j), [])) for j in range(len(sinks)))
    assert bad == []
    assert compared > 500      # the comparison saw plenty of output changes


NET_DELAYS = """\
module netdly(input a, input b, output y, output z);
  wire #(2,3) n1;             // net delays: rise 2, fall 3
  wire #4 n2;
  wire [1:0] #1 bus;
  nand #(1,2) g1 (n1, a, b);  // gate delay plus net delay
  assign #1 n2 = ~a;          // assign delay plus net delay
  assign #2 bus = {a, b};     // the same on a vector, no gate
  and #1 g2 (y, n1, bus[0]);  // every delay explicit: hazlint's default is one unit per gate,
  or  #1 g3 (z, n2, bus[1]);  // iverilog's is zero
endmodule
"""


# Icarus Verilog rejects net delays ("sorry: net delays not supported"), so its reference is the
# same circuit with each net delay added to the delay of the net's driver, which is how IEEE
# 1364 defines a net delay on a driven net (the standard's net-delay clause, cited from memory).
NET_DELAYS_MOVED = """\
module netdly(input a, input b, output y, output z);
  wire n1, n2;
  wire [1:0] bus;
  nand #(3,5) g1 (n1, a, b);
  assign #5 n2 = ~a;
  assign #3 bus = {a, b};
  and #1 g2 (y, n1, bus[0]);
  or  #1 g3 (z, n2, bus[1]);
endmodule
"""


def test_net_declaration_delays_match_iverilog(tmp_path):
    # input changes are 40 apart (wider than any path), so each output change time is the sum
    # of the delays along its path, rise and fall told apart
    from hazlint import load_design
    path = tmp_path / "netdly.v"
    path.write_text(NET_DELAYS)
    design = load_design(str(path))
    rng = random.Random(11)
    cur = {"a": 0, "b": 0}
    events, t = [], SETTLE
    for _ in range(24):
        t += 40
        p = rng.choice(["a", "b"])
        cur[p] ^= 1
        events.append((t, p, cur[p]))
    c = {"verilog": NET_DELAYS_MOVED, "module": "netdly", "inputs": ["a", "b"],
         "outputs": ["y", "z"], "init": {"a": 0, "b": 0}, "events": events}
    got = run_iverilog(tmp_path, [c])
    assert len(got.get((0, 0), [])) > 3 and len(got.get((0, 1), [])) > 3
    outs = [design.output_node[p] for p in c["outputs"]]
    assert _compare(design.graph, c, got, 0, design.input_node, outs) == []


def test_specify_path_delays_match_iverilog(tmp_path):
    # cells with module path delays, simulated by iverilog with -gspecify at the max corner
    # (-Tmax): every change time of y, through three single-gate cells, equals hazlint's
    from hazlint import load_design
    cells = os.path.join(HERE, "..", "fixtures", "frontend", "specify_cells.v")
    top = os.path.join(HERE, "..", "fixtures", "frontend", "specify_top.v")
    design = load_design([cells, top], top="top")
    rng = random.Random(7)
    cur = {"a": 0, "b": 0, "c": 0}
    events, t = [], 100
    for _ in range(80):
        t += 10                        # wider than any path: no pulse is swallowed
        p = rng.choice(["a", "b", "c"])
        cur[p] ^= 1
        events.append((t, p, cur[p]))
    tb = ["`timescale 1ns/1ps", "module tb;", "  reg a, b, c; wire y, z;",
          "  top t(.a(a), .b(b), .c(c), .y(y), .z(z));",
          '  always @(y) if ($realtime > 50) $display("%0.3f %b", $realtime, y);',
          "  initial begin", "    a = 0; b = 0; c = 0;"]
    last = 0
    for t, p, v in events:
        tb.append(f"    #{t - last} {p} = {v};")
        last = t
    tb += ["    #20 $finish;", "  end", "endmodule"]
    (tmp_path / "tb.v").write_text("\n".join(tb) + "\n")
    exe = tmp_path / "tb.vvp"
    subprocess.run(["iverilog", "-gspecify", "-Tmax", "-o", str(exe), cells, top,
                    str(tmp_path / "tb.v")], check=True, capture_output=True)
    out = subprocess.run(["vvp", "-n", str(exe)], capture_output=True, text=True,
                         check=True).stdout
    ref = [(float(m[1]), int(m[2])) for m in re.finditer(r"^([\d.]+) ([01])$", out, re.M)]
    assert len(ref) >= 8
    init = {design.input_node[p]: 0 for p in "abc"}
    tr = simulate(design.graph, init, [(t, design.input_node[p], v) for t, p, v in events],
                  mode="inertial")
    mine = [(round(t, 3), v) for t, v in tr.changes(design.output_node["y"])]
    assert mine == ref
    # the two-level cell's paths are reported, not applied
    assert any("more than one gate" in getattr(n, "message", "") for n in design.notes)
