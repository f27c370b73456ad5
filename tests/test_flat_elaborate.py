"""The compiled reader and elaborator of flat netlists (hazlint/elaborate/_flatnet.c,
hazlint/elaborate/flat.py, hazlint/frontends/slang/flatread.py) against the general path.

Oracles: the general elaborator over the same files (the compiled path must give the same gate
graph: node and edge order, every attribute, the design's fields and notes); Icarus Verilog
(``iverilog``) simulating random flat netlists written here, against ``Design.evaluate`` of
the compiled design; the ISCAS-85 c17 benchmark as the circuitgraph==0.2.1 package ships it,
with its function from the published netlist (six 2-input NANDs: N10 = N1 nand N3, N11 = N3
nand N6, N16 = N2 nand N11, N19 = N11 nand N7, N22 = N10 nand N16, N23 = N16 nand N19, from
memory of the published netlist), checked by brute force over all 32 input vectors.
"""
from __future__ import annotations

import random
from pathlib import Path

import pytest

from hazlint import ir
from hazlint.cli import main
from hazlint.elaborate import elaborate, flat
from hazlint.frontends import registry
from hazlint.frontends.slang import flatread
from support import iverilog
from support.bench import netlist

ROOT = Path(__file__).resolve().parent.parent
FIX = ROOT / "fixtures"
FIXTURES = sorted(p for p in FIX.rglob("*.v") if "hostile" not in p.relative_to(FIX).parts)
CELLS = {c: {"inputs": ["CK", "D"], "outputs": {"Q": "IQ"},
             "ff": {"clocked_on": "CK", "next_state": "D"}} for c in ("ff", "fflopd")}
# flat ones (ctrl, router, c2670 with constant assigns) and s27 with flip-flops (general path)
NETLISTS = ["c17.v", "c432.v", "c880.v", "c1908.v", "dec.v", "int2float.v", "switch.v",
            "banyan_8.v", "ctrl.v", "router.v", "s27.v", "c2670.v"]


def _view(d):
    """Everything of a design, in order (repr tells lists from tuples, True from 1)."""
    g = d.graph
    return (repr(list(g.nodes(data=True))), repr(list(g.edges(data=True))),
            repr([(n, list(g.pred[n])) for n in g]), repr(g.graph), d.inputs, d.outputs,
            repr(d.notes), d.input_node, d.output_node, d.modules, d.not_analysed, d.memories,
            d.files, d.includes, d.timescale, repr(d.registers), repr(d.blackboxes),
            d.port_attrs, d.attr_decls, d.latch_paths, d.top)


def _load(paths, mode, **kw):
    """mode "compiled": the fast path as shipped; "lazy": modules kept as texts but the
    general elaborator over their items; "general": no flat module at all."""
    flatread.ENABLED = mode != "general"
    flat.ENABLED = mode == "compiled"
    try:
        before = flat.taken
        srcs = registry.read_sources([str(p) for p in paths], frontend="slang",
                                     include_dirs=[str(FIX / "frontend" / "inc")])
        d = elaborate(srcs, **kw)
        return d, flat.taken - before
    finally:
        flatread.ENABLED = flat.ENABLED = True


def _same(paths, modes=("lazy", "general"), **kw):
    """The modes give one design; returns whether the compiled path was taken."""
    a, used = _load(paths, "compiled", **kw)
    va = _view(a)
    for mode in modes:
        assert va == _view(_load(paths, mode, **kw)[0]), mode
    return used == 1, a


def test_extension_is_built():
    # the suite runs with the extension (CI builds it); without it the Python path is used
    assert flat.extension() is not None


@pytest.mark.parametrize("name", NETLISTS)
def test_benchmark_netlists_same_design(name):
    used, _d = _same([netlist(name)], library=CELLS)
    assert used == (name != "s27.v")            # its flip-flops are cells


@pytest.mark.parametrize("path", FIXTURES, ids=lambda p: str(p.relative_to(FIX)))
def test_fixtures_same_design(path):
    try:
        _same([path])
    except Exception as exc:        # the general path's error, whichever path was asked
        with pytest.raises(type(exc)) as again:
            _load([path], "general")
        assert str(again.value) == str(exc)


def test_c17_function_by_brute_force():
    used, d = _same([netlist("c17.v")])
    assert used
    ins = ["N1", "N2", "N3", "N6", "N7"]
    assert d.inputs == ins and d.outputs == ["N22", "N23"]
    for v in range(32):
        n1, n2, n3, n6, n7 = ((v >> k) & 1 for k in range(5))
        nand = lambda a, b: 1 - (a & b)          # noqa: E731
        n10, n11 = nand(n1, n3), nand(n3, n6)
        n16, n19 = nand(n2, n11), nand(n11, n7)
        got = d.evaluate({b: (v >> k) & 1 for k, b in enumerate(ins)})
        assert (got["N22"], got["N23"]) == (nand(n10, n16), nand(n16, n19)), v


_OPS = ("and", "nand", "or", "nor", "xor", "xnor")


def _random_flat(seed: int, n_in=8, n_gates=60, n_out=6) -> str:
    """A flat netlist of our own: vector ports (bit selects), escaped and plain wire names,
    ranged wires, buf/not, n-input gates, a repeated input, plain and constant assigns."""
    rng = random.Random(seed)
    lines = ["// press valve interlock, generated", "module press_flat (i, o);",
             f"  input [{n_in - 1}:0] i;", f"  output [{n_out - 1}:0] o;",
             f"  wire [{n_gates - 1}:0] t;"]
    lines += ["  wire k0, k1;", "  assign k0 = 1'b0;", "  assign k1 = 1'b1;"]
    names = [f"i[{k}]" for k in range(n_in)] + ["k0", "k1"]
    n_in += 2
    declared = []
    for k in range(n_gates):
        kind = rng.randrange(3)
        if kind == 0:
            w = f"t[{k}]"
        elif kind == 1:
            w = f"\\v{k}[0] "
            declared.append(w)
        else:
            w = f"n{k}"
            declared.append(w)
        names.append(w)
    if declared:
        lines.append("  wire " + ", ".join(declared) + ";")
    for k in range(n_gates):
        out = names[n_in + k]
        srcs = names[:n_in + k]
        op = rng.choice(_OPS + ("buf", "not"))
        if op in ("buf", "not"):
            ins = [rng.choice(srcs)]
        else:
            ins = [rng.choice(srcs) for _ in range(rng.randint(2, 4))]
            if rng.random() < 0.2:
                ins.append(ins[0])                  # one net on two pins
        lines.append(f"  {op} g{k} ({out}, {', '.join(ins)});")
    for k in range(n_out):
        lines.append(f"  assign o[{k}] = {names[n_in + n_gates - 1 - k]};")
    lines.append("endmodule")
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("seed", range(4))
def test_random_flat_netlists_against_iverilog(seed, tmp_path):
    iverilog.require_iverilog()
    text = _random_flat(seed)
    p = tmp_path / "press_flat.v"
    p.write_text(text)
    used, d = _same([p])
    assert used
    rng = random.Random(seed)
    vectors = [rng.getrandbits(8) for _ in range(48)]
    sim = iverilog.run_vectors({"press_flat.v": text}, "press_flat", 8, 6, vectors, tmp_path)
    for v, line in zip(vectors, sim):
        got = d.evaluate({f"i[{k}]": (v >> k) & 1 for k in range(8)})
        assert "".join(str(got[f"o[{k}]"]) for k in reversed(range(6))) == line, (v, line)


# ---------------------------------------------------------------------------------------------
# what the compiled path leaves to the general one: the same design, notes and errors

FALLBACK = {
    "two_drivers": "and g1 (y, a, b);\n  or g2 (y, a, b);",
    "undriven": "and g1 (y, a, w);",
    "vector_terminal": "and g1 (y, a, v);",
    "implicit_net": "and g1 (y, a, q);",
    "constant": "and g1 (y, a, 1'b1);",
    "buf_two_outputs": "buf g1 (y, w, a);\n  and g2 (z, w, b);",
    "assign_vector": "assign v = {a, b};\n  and g1 (y, v[0], v[1]);",
    "comment_inside": "and g1 (y, a, /* valve */ b);",
    "delay": "and #2 g1 (y, a, b);",
    "unnamed_gate": "and (y, a, b);",
}


@pytest.mark.parametrize("case", sorted(FALLBACK))
def test_outside_the_subset_the_general_path_decides(case, tmp_path):
    p = tmp_path / "press_valves.v"
    p.write_text("module press_valves (a, b, y, z);\n  input a, b;\n  output y, z;\n"
                 "  wire w;\n  wire [1:0] v;\n  " + FALLBACK[case] +
                 "\n  assign z = a;\nendmodule\n")
    used, _d = _same([p])
    assert not used


def test_submodule_and_escaped_names(tmp_path):
    # a flat module instantiated below a top (its items are built on use), escaped names that
    # read like bit selects next to a vector of the same base name
    p = tmp_path / "press_pair.v"
    p.write_text("module press_cell (a, b, y);\n  input a, b;\n  output y;\n"
                 "  nand g (y, a, b);\nendmodule\n"
                 "module press_pair (\\p[0] , p, y);\n  input \\p[0] ;\n  input [1:1] p;\n"
                 "  output y;\n  wire \\m.x ;\n  press_cell u (.a(\\p[0] ), .b(p[1]), .y(\\m.x ));\n"
                 "  assign y = \\m.x ;\nendmodule\n")
    used, d = _same([p])
    assert not used and d.evaluate({"p[0]": 1, "p[1]": 1})["y"] == 0
    q = tmp_path / "press_flat_names.v"
    q.write_text("module press_names (\\p[0] , p, y);\n  input \\p[0] ;\n  input [1:1] p;\n"
                 "  output y;\n  wire \\m.x , \\w$1 ;\n  nand g (\\m.x , \\p[0] , p[1]);\n"
                 "  not h (\\w$1 , \\m.x );\n  assign y = \\w$1 ;\nendmodule\n")
    used, d = _same([q])
    assert used and d.evaluate({"p[0]": 1, "p[1]": 1})["y"] == 1


def test_select_out_of_range_is_the_general_error(tmp_path, capsys):
    p = tmp_path / "press_range.v"
    p.write_text("module press_range (a, y);\n  input [1:0] a;\n  output y;\n"
                 "  and g1 (y, a[0], a[5]);\nendmodule\n")
    code = main(["check", "--no-cache", "--frontend", "slang", str(p)])
    err = capsys.readouterr().err
    flatread.ENABLED = False
    try:
        code2 = main(["check", "--no-cache", "--frontend", "slang", str(p)])
    finally:
        flatread.ENABLED = True
    assert code == code2
    assert capsys.readouterr().err == err
    if code == 2:
        assert f"{p}:4" in err


def test_without_the_extension(monkeypatch, tmp_path):
    p = tmp_path / "press_flat.v"
    p.write_text(_random_flat(7))
    want = _view(_load([p], "compiled")[0])
    monkeypatch.setattr(flat, "_flatnet", None)
    d, used = _load([p], "compiled")
    assert not used and _view(d) == want
    (sf,) = registry.read_sources([str(p)], frontend="slang")
    assert type(sf.modules[0]) is ir.Module


def test_flat_module_round_trips_as_a_plain_module(tmp_path):
    p = tmp_path / "press_flat.v"
    p.write_text(_random_flat(3))
    (sf,) = registry.read_sources([str(p)], frontend="slang")
    assert isinstance(sf.modules[0], flatread.FlatModule)
    flatread.ENABLED = False
    try:
        (plain,) = registry.read_sources([str(p)], frontend="slang")
    finally:
        flatread.ENABLED = True
    assert type(plain.modules[0]) is ir.Module
    assert repr(sf) == repr(plain) and sf == plain
    back = ir.from_compact(ir.to_compact(sf))
    assert type(back.modules[0]) is ir.Module and repr(back) == repr(plain)
    assert repr(ir.from_json(ir.to_json(sf))) == repr(plain)


@pytest.mark.parametrize("design,top", [("press_clkrst", "press_clkrst"), ("press_uart", "press_uart")])
def test_yosys_netlists_same_design(design, top, tmp_path):
    # yosys' own netlists of an RTL design of the corpus (tests/test_synth_corpus.py): generic
    # cells (-noexpr), assign expressions, and NAND/NOR/NOT after abc; none is a flat module
    # of gate primitives, and each reads the same in every mode
    from support import yosys
    yosys.require_yosys()
    rtl = FIX / "synth" / f"{design}.v"
    yosys.run(f"read_verilog {rtl}; synth -top {top}; write_verilog -noexpr noexpr.v; "
              f"write_verilog expr.v; abc -g cmos2; opt_clean; write_verilog -noexpr nand.v",
              tmp_path)
    for name in ("noexpr.v", "expr.v", "nand.v"):
        used, _d = _same([tmp_path / name], top=top)
        assert not used


@pytest.mark.slow
def test_epfl_multiplier_same_design():
    # the netlist of the speed goal (EPFL multiplier, 43k gates); the lazily read items are
    # those of the general read (test_frontend_slang.py compares the IR)
    used, d = _same([netlist("multiplier.v")], modes=("lazy",))
    assert used and d.graph.number_of_nodes() == 43230
