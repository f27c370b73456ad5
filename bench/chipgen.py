"""Generate a chip-sized netlist from the EPFL benchmark circuits (circuitgraph==0.2.1).

The chip is a row of *tiles*. A tile wraps one EPFL circuit (read in place from the package,
never copied): its inputs come from a register bank, its outputs go to a register bank clocked
by a gated clock (``clk`` AND a negative-edge enable register, the usual glitch-free gating
when the enable only changes while the clock is low), both banks with an asynchronous
active-low reset. Tile k's inputs are tile k-1's registered outputs (bits taken cyclically),
so the tiles talk only through registers. Every fourth tile's reset is the chip reset AND a
per-tile soft reset input, i.e. an asynchronous reset from logic. Every eighth tile (from the
sixth on) is the careless variant ``tile_<circuit>_mux``: its clock enable is a two-input
multiplexer of input-register bits, ungated by any latch, whose select reconverges with a skew
(the textbook static hazard, straight into the output bank's clock pins). Each tile module type is in its own file (``tile_<circuit>.v``), so a
commit that edits one tile type touches one file; the top is ``chip_top.v``.

    python bench/chipgen.py OUT_DIR --gates 1000000
"""
from __future__ import annotations

import argparse
import importlib.resources
import re
from pathlib import Path

# the EPFL circuits a chip is built from, largest first: (file, gates as loaded by hazlint)
CORES = [("memctrl.v", 81353), ("log2.v", 46746), ("multiplier.v", 42974),
         ("square.v", 35262), ("voter.v", 25993), ("arbiter.v", 23189), ("sin.v", 7655),
         ("max.v", 5063)]


def netlist(name: str) -> Path:
    return Path(str(importlib.resources.files("circuitgraph") / "netlists" / name))


def ports(path: Path) -> tuple[str, list[str], list[str], list[str]]:
    """(module name, header order, inputs, outputs) of a flat EPFL netlist."""
    text = path.read_text()
    m = re.search(r"\bmodule\s+(\w+)\s*\(([^;]*)\)\s*;", text)
    name, header = m.group(1), [p.strip() for p in m.group(2).split(",")]
    decl = {}
    for kind, body in re.findall(r"\b(input|output)\s+([^;]*);", text):
        for p in body.split(","):
            decl[p.strip()] = kind
    ins = [p for p in header if decl.get(p) == "input"]
    outs = [p for p in header if decl.get(p) == "output"]
    return name, header, ins, outs


def plan(gates: int) -> list[str]:
    """Core files for about ``gates`` gates: round robin over CORES, largest first."""
    out, total, k = [], 0, 0
    while total < gates:
        f, g = CORES[k % len(CORES)]
        out.append(f)
        total += g
        k += 1
    return out


def tile_module(core: str, mux_enable: bool = False) -> tuple[str, int, int]:
    name, header, ins, outs = ports(netlist(core))
    ni, no = len(ins), len(outs)
    conn = []
    for p in header:
        conn.append(f"in_q[{ins.index(p)}]" if p in ins else f"core_out[{outs.index(p)}]")
    if mux_enable:
        gate = [f"module tile_{name}_mux(clk, rst_n, cg_en, din, dout);",
                "  input clk, rst_n, cg_en;",
                "  wire en_q, s_n, m0, m1;",
                "  // careless clock enable: a multiplexer of register bits, no latch",
                "  not g_sn (s_n, in_q[0]);",
                "  and g_m0 (m0, in_q[0], in_q[1]);",
                f"  and g_m1 (m1, s_n, in_q[{min(2, ni - 1)}]);",
                "  or g_en (en_q, m0, m1);"]
    else:
        gate = [f"module tile_{name}(clk, rst_n, cg_en, din, dout);",
                "  input clk, rst_n, cg_en;",
                "  reg en_q;",
                "  // clock gate: the enable register changes on the falling edge only",
                "  always @(negedge clk or negedge rst_n)",
                "    if (!rst_n) en_q <= 1'b0; else en_q <= cg_en;"]
    lines = [
        f"// tile around the EPFL circuit {name} (circuitgraph 0.2.1 netlist)",
        gate[0],
        f"  input [{ni - 1}:0] din;",
        f"  output [{no - 1}:0] dout;",
        f"  reg [{ni - 1}:0] in_q;",
        f"  reg [{no - 1}:0] out_q;",
        f"  wire [{no - 1}:0] core_out;",
        "  wire gclk;",
        *gate[1:],
        "  and g_cg (gclk, clk, en_q);",
        "  always @(posedge clk or negedge rst_n)",
        f"    if (!rst_n) in_q <= {ni}'b0; else in_q <= din;",
        f"  {name} u_core ({', '.join(conn)});",
        "  always @(posedge gclk or negedge rst_n)",
        f"    if (!rst_n) out_q <= {no}'b0; else out_q <= core_out;",
        "  assign dout = out_q;",
        "endmodule",
        "",
    ]
    return "\n".join(lines), ni, no


def generate(out: Path, gates: int, cores: list[str] | None = None) -> dict:
    """Write the chip into ``out`` (``cores``: the tiles' circuits, default from
    :func:`plan`); returns {"files": [...], "top": ..., "tiles": n, ...}."""
    out.mkdir(parents=True, exist_ok=True)
    cores = cores or plan(gates)
    shapes = {}
    files = []
    mux = {k for k in range(len(cores)) if k % 8 == 5}
    for core in dict.fromkeys(cores):
        name = ports(netlist(core))[0]
        texts = []
        for variant in (False, True):
            if variant and not any(cores[k] == core for k in mux):
                continue
            text, ni, no = tile_module(core, variant)
            texts.append(text)
        shapes[core] = (name, ni, no)
        p = out / f"tile_{name}.v"
        p.write_text("\n".join(texts))
        files.append(str(p))
    n = len(cores)
    w_in = shapes[cores[0]][1]
    w_out = shapes[cores[-1]][2]
    soft = [k for k in range(n) if k % 4 == 3]
    top = ["// chip-sized benchmark top: a row of tiles talking through registers",
           "module chip_top(clk, rst_n, soft_rst_n, cg_en, din, dout);",
           "  input clk, rst_n;",
           f"  input [{max(1, len(soft)) - 1}:0] soft_rst_n;",
           "  input [3:0] cg_en;",
           f"  input [{w_in - 1}:0] din;",
           f"  output [{w_out - 1}:0] dout;"]
    for k, core in enumerate(cores):
        name, ni, no = shapes[core]
        top.append(f"  wire [{no - 1}:0] t{k}_q;")
    for j, k in enumerate(soft):
        top.append(f"  wire t{k}_rst_n;")
        top.append(f"  and g_rst{k} (t{k}_rst_n, rst_n, soft_rst_n[{j}]);")
    for k, core in enumerate(cores):
        name, ni, no = shapes[core]
        if k == 0:
            src = "din"
        else:
            pno = shapes[cores[k - 1]][2]
            bits = [f"t{k - 1}_q[{(ni - 1 - b) % pno}]" for b in range(ni)]
            src = "{" + ", ".join(bits) + "}"
        rst = f"t{k}_rst_n" if k in soft else "rst_n"
        kind = f"tile_{name}_mux" if k in mux else f"tile_{name}"
        top.append(f"  {kind} u_t{k} (.clk(clk), .rst_n({rst}), .cg_en(cg_en[{k % 4}]), "
                   f".din({src}), .dout(t{k}_q));")
    top += [f"  assign dout = t{n - 1}_q;", "endmodule", ""]
    (out / "chip_top.v").write_text("\n".join(top))
    files = [str(out / "chip_top.v")] + files + [str(netlist(c)) for c in dict.fromkeys(cores)]
    return {"files": files, "top": "chip_top", "tiles": n,
            "gates": sum(dict(CORES)[c] for c in cores), "cores": cores}


if __name__ == "__main__":
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--gates", type=int, default=1_000_000)
    a = ap.parse_args()
    info = generate(Path(a.out), a.gates)
    print(f"{info['tiles']} tiles, about {info['gates']} gates: " + " ".join(info["files"]))
