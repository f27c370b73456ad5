"""Design cache: the rebuilt Design equals the freshly elaborated one; every key ingredient
misses when changed; corrupted entries are removed; warm lint output equals cold."""
from __future__ import annotations

import dataclasses
import importlib.resources
import json
import os
import shutil
from pathlib import Path

import pytest

from hazlint.store import design as dc
from hazlint.store.keys import code_stamp
from hazlint.store.result import ResultCache
from hazlint.config import load_config
from hazlint.netlist.design import Design
from hazlint.loader import load_design

ROOT = Path(__file__).resolve().parent.parent
FIX = ROOT / "fixtures"
OSTA = "/usr/share/doc/opensta/examples"


def assert_same_design(a: Design, b: Design) -> None:
    ga, gb = a.graph, b.graph
    assert list(ga.nodes(data=True)) == list(gb.nodes(data=True))
    assert list(ga.edges(data=True)) == list(gb.edges(data=True))
    # adjacency orders both ways (analyses iterate predecessors and successors)
    for n in ga:
        assert list(ga.pred[n]) == list(gb.pred[n]), n
        assert list(ga.succ[n]) == list(gb.succ[n]), n
    assert ga.graph == gb.graph
    # one attribute dict per edge, shared by both adjacency views as networkx keeps it
    for u, v in gb.edges:
        assert gb.succ[u][v] is gb.pred[v][u]
    for f in dataclasses.fields(Design):
        if f.name != "graph":
            assert getattr(a, f.name) == getattr(b, f.name), f.name
    # exact types inside node attributes (== alone takes 1 for True and [] for ())
    for n, d in ga.nodes(data=True):
        for k, v in d.items():
            assert type(gb.nodes[n][k]) is type(v), (n, k)


def round_trip(design: Design) -> Design:
    text = json.dumps(dc.encode_design(design), separators=(",", ":"))
    return dc.decode_design(json.loads(text))


def netlist(name: str) -> str:
    return str(importlib.resources.files("circuitgraph").joinpath(f"netlists/{name}"))


# ---------------------------------------------------------------------------------------------
# equality of the rebuilt design

def _fixture_designs():
    out = []
    for toml in sorted(FIX.rglob("hazlint.toml")):
        cfg = load_config(path=str(toml))
        out.append((str(toml), load_design(cfg.files, top=cfg.top, library=cfg.library())))
    for v in sorted(list((FIX / "rules").glob("*.v")) + list((FIX / "hazards").glob("*.v"))):
        out.append((str(v), load_design(str(v))))
    from hazlint.delays.liberty import read_liberty
    cells = read_liberty(str(FIX / "liberty" / "press_cells.lib"))
    out.append(("press_seq", load_design(str(FIX / "liberty" / "press_seq.v"), library=cells)))
    return out


def test_rebuilt_design_equals_fresh_on_fixtures(tmp_path):
    designs = _fixture_designs()
    noted = tmp_path / "noted.v"         # front-end notes (Diagnostic objects) on the design
    noted.write_text("module noted(input a, output y, output z, output reg q);\n  wire w;\n"
                     "  and g1 (y, a, w);\n  assign z = a;\n  assign z = ~a;\n"
                     "  always @* if (a) q = y;\nendmodule\n")
    designs.append((str(noted), load_design(str(noted))))
    assert len(designs) >= 15
    assert any(d.registers for _, d in designs) and any(d.notes for _, d in designs)
    assert any(d.latch_paths for _, d in designs)
    for name, d in designs:
        assert_same_design(d, round_trip(d))


def test_rebuilt_design_equals_fresh_with_sdf_wires_and_arcs(tmp_path):
    from hazlint.api import load
    from hazlint.delays.sdf import annotate
    from hazlint.delays.liberty import read_liberty
    lib = read_liberty(str(FIX / "liberty" / "press_cells.lib"))
    d = load_design(str(FIX / "sdf" / "press_valve.v"), library=lib)
    annotate(d, str(FIX / "sdf" / "press_valve.sdf"), corner="minmax", library=lib)
    wires = [e for e in d.graph.edges(data=True) if "wire" in e[2]]
    assert wires                                   # the SDF put interconnect delays on edges
    assert_same_design(d, round_trip(d))
    if os.path.exists(f"{OSTA}/example1.sdf"):
        cfg = load_config(path=str(FIX / "sdf" / "opensta_example1_cells.toml"))
        lib2 = cfg.library()
        d2 = load_design(f"{OSTA}/example1.v", library=lib2)
        annotate(d2, f"{OSTA}/example1.sdf", corner="minmax", library=lib2)
        assert any("arc_delays" in a for _, a in d2.graph.nodes(data=True))
        assert_same_design(d2, round_trip(d2))
    assert load  # the api path is exercised below


@pytest.mark.parametrize("name", ["c17.v", "c432.v", "c7552.v", "s27.v", "s13207.v"])
def test_rebuilt_design_equals_fresh_on_benchmarks(name):
    # netlists of the PyPI package circuitgraph==0.2.1, read in place
    d = load_design(netlist(name))
    back = round_trip(d)
    assert_same_design(d, back)
    assert back.summary() == d.summary()


def test_explicit_edges_when_they_are_not_the_derived_ones():
    d = load_design(str(FIX / "hazards" / "static1_sop.v"))
    g = d.graph
    src = d.input_node[d.inputs[0]]
    sink = next(s for s in d.output_node.values() if src not in g.nodes[s]["inputs"])
    g.add_edge(src, sink, pins=[], note=("x", 1))     # an edge no pin of the sink reads
    doc = dc.encode_design(d)
    assert "succ" in doc["edges"]
    assert_same_design(d, dc.decode_design(json.loads(json.dumps(doc))))


# ---------------------------------------------------------------------------------------------
# keys and invalidation through api.load

VALVE = """\
`include "press_defs.vh"
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire n_guard, run, bypass;
  not g_inv (n_guard, guard_closed);
  and g_run (run, two_hand, guard_closed);
`ifdef BYPASS
  and g_byp (bypass, maint_key, n_guard);
`else
  and g_byp (bypass, maint_key, guard_closed);
`endif
  or  g_out (valve_enable, run, bypass);
endmodule
"""

LIB = """\
library (press_min) {
  time_unit : "1ns";
  cell (BUFX1) {
    pin (A) { direction : input; }
    pin (Y) { direction : output; function : "A";
      timing () { related_pin : "A"; cell_rise (scalar) { values ("0.5"); }
                  cell_fall (scalar) { values ("0.4"); } } }
  }
}
"""


class Counting:
    """Counts real elaborations (the real function runs)."""

    def __init__(self, monkeypatch):
        import hazlint.elaborate as flatten
        self.calls = 0
        real = flatten.elaborate

        def counted(*a, **k):
            self.calls += 1
            return real(*a, **k)
        monkeypatch.setattr(flatten, "elaborate", counted)


def project(tmp_path, **extra):
    """The configuration with ``extra`` keys; the sources are written on the first call."""
    if not (tmp_path / "valve.v").exists():
        _write_sources(tmp_path)
    lines = [f'cache_dir = "{tmp_path / "cache"}"']
    extra.setdefault("files", '["valve.v"]')
    for k, v in extra.items():
        lines.append(f"{k} = {v}")
    (tmp_path / "hazlint.toml").write_text("\n".join(lines) + "\n")
    return load_config(path=str(tmp_path / "hazlint.toml"))


def _write_sources(tmp_path):
    (tmp_path / "press_defs.vh").write_text("`define PRESS 1\n")
    (tmp_path / "valve.v").write_text(VALVE)
    (tmp_path / "cells.lib").write_text(LIB)
    # the SDF fixture with its netlist and Liberty cells
    for name in ("sdf/press_valve.v", "sdf/press_valve.sdf", "liberty/press_cells.lib"):
        shutil.copy(FIX / name, tmp_path / Path(name).name)


def test_warm_load_hits_and_every_ingredient_misses(tmp_path, monkeypatch):
    from hazlint.api import load
    count = Counting(monkeypatch)
    cfg = project(tmp_path)
    files = cfg.files
    cold = load(files, cfg)
    warm = load(files, cfg)
    assert count.calls == 1                     # the second load came from the design cache
    assert_same_design(cold, warm)
    assert len(list((tmp_path / "cache" / "design").rglob("*.json"))) == 1

    def misses(change, *, cfg_fn=lambda: cfg, **kw):
        before = count.calls
        change()
        c = cfg_fn()
        load(c.files, c, **kw)
        first = count.calls - before
        load(c.files, c, **kw)          # and the new state is cached in turn
        return first == 1 and count.calls - before == 1

    valve = tmp_path / "valve.v"
    assert misses(lambda: valve.write_text(VALVE.replace("g_run", "g_run ")))   # a byte
    assert misses(lambda: (tmp_path / "press_defs.vh").write_text("`define PRESS 2\n"))
    assert misses(lambda: None, defines={"BYPASS": "1"})                      # a define
    assert misses(lambda: None, top="press_valve")
    assert misses(lambda: None, include_dirs=[str(tmp_path / "inc")])
    # a cell definition in the configuration
    assert misses(lambda: None, cfg_fn=lambda: project(
        tmp_path, cells='{ INVX1 = { inputs = ["A"], outputs = { Y = "!A" } } }'))
    assert misses(lambda: None, cfg_fn=lambda: project(
        tmp_path, cells='{ INVX1 = { inputs = ["A"], outputs = { Y = "!A" }, delay = 2 } }'))
    # Liberty contents, then SDF contents
    assert misses(lambda: None, cfg_fn=lambda: project(tmp_path, liberty='["cells.lib"]'))
    assert misses(lambda: (tmp_path / "cells.lib").write_text(LIB.replace("0.5", "0.6")),
                  cfg_fn=lambda: project(tmp_path, liberty='["cells.lib"]'))
    sdf_cfg = lambda: project(tmp_path, files='["press_valve.v"]',          # noqa: E731
                              liberty='["press_cells.lib"]', sdf='"press_valve.sdf"')
    assert misses(lambda: None, cfg_fn=sdf_cfg)
    annotated = load(sdf_cfg().files, sdf_cfg())
    assert any("wire" in e for _, _, e in annotated.graph.edges(data=True))
    assert misses(lambda: (tmp_path / "press_valve.sdf").write_text(
        (tmp_path / "press_valve.sdf").read_text().replace("0.3:0.4:0.5", "0.3:0.4:0.7")),
        cfg_fn=sdf_cfg)
    # unsaved editor text is a different content: a miss, and not stored
    before = count.calls
    cfg = project(tmp_path)
    load(cfg.files, cfg, texts={str(valve): VALVE})
    load(cfg.files, cfg, texts={str(valve): VALVE})
    assert count.calls - before == 2
    # --no-cache never reads it
    before = count.calls
    load(cfg.files, cfg, use_cache=False)
    assert count.calls - before == 1


def test_key_covers_every_ingredient(tmp_path):
    (tmp_path / "a.v").write_text("module a; endmodule\n")
    (tmp_path / "x.lib").write_text(LIB)
    (tmp_path / "x.sdf").write_text("(DELAYFILE)")
    base = dict(paths=[str(tmp_path / "a.v")], top="a", include_dirs=["inc"],
                defines={"A": "1"}, root=str(tmp_path), cells={"C": {"inputs": ["A"]}},
                liberty=[str(tmp_path / "x.lib")], sdf=[str(tmp_path / "x.sdf")],
                sdf_corner="minmax", default_delay=None)
    k0 = dc.design_key(**base)
    assert k0 == dc.design_key(**base) and k0 is not None
    variants = [dict(top="b"), dict(include_dirs=["inc2"]), dict(defines={"A": "2"}),
                dict(root=str(tmp_path / "sub")), dict(cells={"C": {"inputs": ["B"]}}),
                dict(sdf_corner="max"), dict(default_delay=2.0), dict(liberty=[]),
                dict(sdf=[]), dict(texts={str(tmp_path / "a.v"): "module b; endmodule\n"})]
    keys = {dc.design_key(**dict(base, **v)) for v in variants}
    assert len(keys | {k0}) == len(variants) + 1
    (tmp_path / "x.lib").write_text(LIB + " ")
    assert dc.design_key(**base) != k0
    assert dc.design_key(**dict(base, paths=[str(tmp_path / "missing.v")])) is None


def test_entry_from_other_code_is_a_miss(tmp_path):
    d = load_design(str(FIX / "hazards" / "static1_sop.v"))
    key = "ab" * 32
    dc.DesignCache(tmp_path, version="0.1.0+aaaa").store(key, d)
    assert dc.DesignCache(tmp_path, version="0.1.0+bbbb").load(key) is None
    assert_same_design(d, dc.DesignCache(tmp_path, version="0.1.0+aaaa").load(key))
    assert code_stamp().startswith("0.1.0+")


def test_corrupted_or_truncated_entries_are_ignored_and_removed(tmp_path):
    d = load_design(str(FIX / "hazards" / "static1_sop.v"))
    key = "cd" * 32
    c = dc.DesignCache(tmp_path)
    assert c.store(key, d)
    (entry,) = (tmp_path / "design").rglob("*.json")
    good = entry.read_bytes()
    doc = json.loads(good)

    def broken_variants():
        yield good[: len(good) // 2]                              # truncated
        yield b"\x00\xff" + good[2:]                              # not JSON
        for mutate in (lambda e: e["data"].update(ids=e["data"]["ids"][:-1]),
                       lambda e: e["data"]["nodes"][0].__setitem__(0, 999),
                       lambda e: e["data"].update(format=99),
                       lambda e: e["data"]["fields"].update(unknown=1),
                       lambda e: e["data"].pop("edges"),
                       lambda e: e["data"].update(deps=[1])):
            e = json.loads(json.dumps(doc))
            mutate(e)
            yield json.dumps(e).encode()

    for n, junk in enumerate(broken_variants(), 1):
        entry.write_bytes(junk)
        c = dc.DesignCache(tmp_path)
        assert c.load(key) is None, n
        assert not entry.exists(), n          # removed, so the next run writes a good one
        assert c.dropped == 1
        entry.parent.mkdir(parents=True, exist_ok=True)
    entry.write_bytes(good)
    assert_same_design(d, dc.DesignCache(tmp_path).load(key))


def test_unencodable_design_is_not_stored(tmp_path):
    d = load_design(str(FIX / "hazards" / "static1_sop.v"))
    n = next(iter(d.graph))
    d.graph.nodes[n]["odd"] = {1, 2}             # a set: not plain data
    c = dc.DesignCache(tmp_path)
    assert not c.store("ef" * 32, d)
    assert not list(tmp_path.rglob("*.json"))


# ---------------------------------------------------------------------------------------------
# warm output bytes equal cold output bytes

def _cli(args, cwd):
    import contextlib
    import io

    from hazlint.cli import main
    out = io.StringIO()
    old = os.getcwd()
    os.chdir(cwd)
    try:
        with contextlib.redirect_stdout(out):
            code = main(args)
    finally:
        os.chdir(old)
    return code, out.getvalue()


@pytest.mark.slow
def test_warm_output_equals_cold_for_every_format(tmp_path):
    demo = tmp_path / "demo"
    shutil.copytree(FIX / "demo", demo)
    rules = tmp_path / "rules"
    shutil.copytree(FIX / "rules", rules)
    runs = [(demo, [])] + [(rules, [p.name]) for p in sorted(rules.glob("*.v"))]
    for fmt in ("text", "json", "sarif"):
        cache = tmp_path / f"cache-{fmt}"
        for cwd, files in runs:
            args = ["check", "--format", fmt, "--cache-dir", str(cache), *files]
            cold = _cli(args, cwd)
            warm = _cli(args, cwd)
            fresh = _cli(["check", "--format", fmt, "--no-cache", *files], cwd)
            assert warm == cold == fresh, (fmt, cwd, files)
        assert list((cache / "design").rglob("*.json"))        # the warm runs had a design


# ---------------------------------------------------------------------------------------------
# result cache: findings before waivers and baseline

LOOP = """\
module storage (s, r, q, qn);
  input s, r;
  output q, qn;
  nor g_q  (q, r, qn);
  nor g_qn (qn, s, q);
endmodule
"""


def test_result_cache_hits_misses_and_redoes_waivers(tmp_path, monkeypatch):
    import hazlint.api as api
    import hazlint.pipeline as pipeline
    calls = []
    real = pipeline.run_rules

    def counted(*a, **k):
        calls.append(1)
        return real(*a, **k)
    monkeypatch.setattr(pipeline, "run_rules", counted)
    (tmp_path / "storage.v").write_text(LOOP)
    waivers = tmp_path / "waivers.toml"
    waivers.write_text("")

    def cfg(extra=""):
        (tmp_path / "hazlint.toml").write_text(
            f'files = ["storage.v"]\ncache_dir = "{tmp_path / "cache"}"\n'
            f'accept_file = "waivers.toml"\n{extra}')
        return load_config(path=str(tmp_path / "hazlint.toml"))

    def run(c, **kw):
        return api.lint(config=c, cwd=str(tmp_path), prove=False, **kw)

    cold = run(cfg())
    warm = run(cfg())
    assert len(calls) == 1                      # the rules ran once
    assert warm.diagnostics == cold.diagnostics and warm.counts == cold.counts
    assert any(d.rule == "combinational-loop" for d in cold.diagnostics)
    # waivers are applied afresh on a hit: a new waiver file entry takes effect
    waivers.write_text('[[accept]]\nrule = "combinational-loop"\ninstance = "*"\n'
                       'reason = "storage pair, reviewed"\n')
    waived = run(cfg())
    assert len(calls) == 1
    assert not any(d.rule == "combinational-loop" for d in waived.diagnostics)
    assert any(d.rule == "combinational-loop" for d in waived.waived)
    fresh = api.lint(config=cfg(), cwd=str(tmp_path), prove=False, use_cache=False)
    assert waived.diagnostics == fresh.diagnostics and waived.waived == fresh.waived
    assert len(calls) == 2
    # what decides the findings misses: severity, a selection, the prover switch
    n = len(calls)
    run(cfg('severity = { combinational-loop = "error" }\n'))
    run(cfg(), select=["combinational-loop"])
    api.lint(config=cfg(), cwd=str(tmp_path), prove=True)
    assert len(calls) == n + 3
    # corrupted result entries are removed and recomputed
    for e in (tmp_path / "cache" / "result").rglob("*.json"):
        e.write_text('{"format": 1, "hazlint": "x", "key": "')
    again = run(cfg())
    assert again.diagnostics == waived.diagnostics and len(calls) == n + 4


def test_result_cache_round_trip_on_a_benchmark(tmp_path):
    # ISCAS c432 from circuitgraph==0.2.1 at the wider scope: one finding per output bit,
    # each folded from many stems' findings (paths of hops and locations, folded members)
    from hazlint.api import lint
    res = lint([netlist("c432.v")], cwd=str(tmp_path), prove=False, use_cache=False,
               rule_options={"unbalanced-reconvergence": {"scope": "outputs"}})
    assert len(res.diagnostics) >= 3 and any(d.flows for d in res.diagnostics)
    assert any(d.evidence.get("also") for d in res.diagnostics)
    c = ResultCache(tmp_path / "cache")
    assert c.store("12" * 32, res.diagnostics)
    back = ResultCache(tmp_path / "cache").load("12" * 32)
    assert back == res.diagnostics
    assert [d.to_json() for d in back] == [d.to_json() for d in res.diagnostics]


# ---------------------------------------------------------------------------------------------
# report cache: the finished report of a check run

def test_report_cache_replays_bytes_and_misses_on_every_input(tmp_path, monkeypatch):
    import hazlint.pipeline as pipeline
    calls = []
    real = pipeline.lint

    def counted(*a, **k):
        calls.append(1)
        return real(*a, **k)
    monkeypatch.setattr(pipeline, "lint", counted)
    project(tmp_path)
    # BYPASS: guard_closed paths of 1 and 2 (into a plain output: listed at the wider scope)
    base = ["check", "--no-prove", "-D", "BYPASS", "--scope", "outputs"]

    cold = _cli(base, tmp_path)
    assert cold[0] == 1 and "valve.v" in cold[1]            # findings: exit 1
    assert len(calls) == 1
    entries = list((tmp_path / "cache" / "report").rglob("*.json"))
    assert len(entries) == 1
    warm = _cli(base, tmp_path)
    assert warm == cold and len(calls) == 1                 # same bytes, no lint run
    # the exit code of a hit follows --fail-on from the stored worst severity
    assert _cli(base + ["--fail-on", "never"], tmp_path) == (0, cold[1])
    assert _cli(base + ["--fail-on", "error"], tmp_path)[0] == \
        _cli(base + ["--fail-on", "error", "--no-cache"], tmp_path)[0]
    assert len(calls) == 2                                  # only the --no-cache run linted
    out = tmp_path / "report.txt"
    assert _cli(base + ["-o", str(out)], tmp_path) == (1, "")
    assert out.read_text() == cold[1] and len(calls) == 2
    # another format or renderer option is another entry
    js = _cli(base + ["--format", "json"], tmp_path)
    assert len(calls) == 3 and json.loads(js[1])
    assert _cli(base + ["--brief"], tmp_path)[1] != cold[1] and len(calls) == 4
    # an edit to a file pulled in through `include` is a miss although valve.v is unchanged
    (tmp_path / "press_defs.vh").write_text("`define PRESS 2\n")
    assert _cli(base, tmp_path) == cold and len(calls) == 5
    # a waiver comment in the source changes the report
    src = tmp_path / "valve.v"
    src.write_text(VALVE.replace("or  g_out", "// hazlint accept(unbalanced-reconvergence): "
                                 "two-hand input is debounced upstream\n  or  g_out"))
    waived = _cli(base, tmp_path)
    assert len(calls) == 6 and waived[1] != cold[1] and "accepted" in waived[1]
    assert waived == _cli(base + ["--no-cache"], tmp_path)
    src.write_text(VALVE)
    # a baseline: its contents are part of the key
    bl = tmp_path / "baseline.json"
    assert _cli(base + ["--write-baseline", str(bl)], tmp_path)[0] == 0
    n = len(calls)
    hidden = _cli(base + ["--baseline", str(bl)], tmp_path)
    assert hidden[0] == 0 and "in baseline" in hidden[1] and len(calls) == n + 1
    assert _cli(base + ["--baseline", str(bl)], tmp_path) == hidden and len(calls) == n + 1
    bl.write_text(json.dumps({**json.loads(bl.read_text()), "findings": []}))
    assert _cli(base + ["--baseline", str(bl)], tmp_path)[0] == 1 and len(calls) == n + 2
    # the changed-files filter is part of the key
    assert _cli(base + ["--changed", "press_defs.vh"], tmp_path)[1] != cold[1]
    assert len(calls) == n + 3
    # --no-cache neither reads nor writes report entries
    before = sorted((tmp_path / "cache" / "report").rglob("*.json"))
    _cli(base + ["--no-cache", "--select", "combinational-loop"], tmp_path)
    assert sorted((tmp_path / "cache" / "report").rglob("*.json")) == before
    # a corrupted entry is removed and the report recomputed
    for e in (tmp_path / "cache" / "report").rglob("*.json"):
        e.write_text('{"format": 1, "hazlint": "x", "key": "')
    assert _cli(base, tmp_path) == cold
