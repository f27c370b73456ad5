"""Random hierarchical structural Verilog for cross-checks against Icarus Verilog.

The generated designs use gate primitives, continuous assigns with bitwise, reduction, logical,
conditional, arithmetic and comparison operators, vectors with bit and part selects,
concatenation, parameters, a generate loop, and named and positional port connections. They are
invented test data, not benchmarks.
"""
from __future__ import annotations

import random

GATES = ("and", "or", "nand", "nor", "xor", "xnor")


def leaf_module(rng: random.Random, name: str, n_in: int, n_gates: int) -> str:
    """A module of random primitive gates and assigns over scalar nets, plus a vector port."""
    ins = [f"i{k}" for k in range(n_in)]
    lines = [f"module {name} #(parameter K = 1) (input [{n_in - 1}:0] iv, input s, "
             f"output [1:0] ov, output o);"]
    nets = []
    for k in range(n_in):
        lines.append(f"  wire {ins[k]} = iv[{k}];")
        nets.append(ins[k])
    nets.append("s")
    for g in range(n_gates):
        out = f"w{g}"
        kind = rng.random()
        if kind < 0.55:
            op = rng.choice(GATES + ("not", "buf"))
            if op in ("not", "buf"):
                a = rng.choice(nets)
                lines.append(f"  wire {out};\n  {op} g{g} ({out}, {a});")
            else:
                args = rng.sample(nets, min(len(nets), rng.randint(2, 3)))
                lines.append(f"  wire {out};\n  {op} g{g} ({out}, {', '.join(args)});")
        else:
            a, b, c = (rng.choice(nets) for _ in range(3))
            expr = rng.choice([
                f"{a} & ~{b}", f"({a} | {b}) ^ {c}", f"{a} ? {b} : {c}", f"~({a} & {b})",
                f"^{{{a}, {b}, {c}}}", f"&{{{a}, {b}}}", f"!{a} || ({b} && {c})",
                f"{a} == {b}", f"{{{a}, {b}}} < {{{c}, {a}}}", f"({{1'b0, {a}}} + {{1'b0, {b}}}) == 2'b10",
                f"K[0] ? {a} : {b}",
            ])
            lines.append(f"  wire {out} = {expr};")
        nets.append(out)
    tail = nets[-4:]
    lines.append(f"  assign ov = {{{tail[0]}, {tail[1]}}};")
    lines.append(f"  assign o = {tail[2]} ^ {tail[3]};")
    lines.append("endmodule")
    return "\n".join(lines)


def design(seed: int) -> tuple[str, str, list[tuple[str, int]], list[tuple[str, int]]]:
    """Return (verilog text, top name, [(input, width)], [(output, width)])."""
    rng = random.Random(seed)
    n_in = rng.randint(3, 5)
    parts = [leaf_module(rng, f"leaf{seed}_{k}", n_in, rng.randint(4, 12)) for k in range(2)]
    top = f"top{seed}"
    W = n_in
    body = [
        f"module {top} (input [{W - 1}:0] a, input [{W - 1}:0] b, input sel,",
        f"            output [3:0] y, output z, output [{W - 1}:0] v);",
        "  wire [1:0] ov0, ov1; wire o0, o1;",
        f"  leaf{seed}_0 #(.K({rng.randint(0, 1)})) u0 (.iv(a), .s(sel), .ov(ov0), .o(o0));",
        f"  leaf{seed}_1 #({rng.randint(0, 1)}) u1 (b ^ a, o0, ov1, o1);",
        "  assign y = {ov1, ov0};",
        "  assign z = o1 | (o0 & sel);",
        "  genvar gi;",
        f"  generate for (gi = 0; gi < {W}; gi = gi + 1) begin : bitwise",
        "    assign v[gi] = sel ? a[gi] : ~b[gi];",
        "  end endgenerate",
        "endmodule",
    ]
    text = "\n\n".join(parts) + "\n\n" + "\n".join(body) + "\n"
    return text, top, [("a", W), ("b", W), ("sel", 1)], [("y", 4), ("z", 1), ("v", W)]


def testbench(top: str, inputs, outputs, vectors: list[dict[str, int]]) -> str:
    """A testbench applying each vector and printing the outputs in hex, one line per vector."""
    decl = [f"  reg [{w - 1}:0] {n};" for n, w in inputs]
    decl += [f"  wire [{w - 1}:0] {n};" for n, w in outputs]
    conn = ", ".join(f".{n}({n})" for n, _ in inputs + outputs)
    lines = ["module tb;", *decl, f"  {top} dut ({conn});", "  initial begin"]
    fmt = " ".join("%h" for _ in outputs)
    args = ", ".join(n for n, _ in outputs)
    for vec in vectors:
        assigns = " ".join(f"{n} = {w}'d{vec[n]};" for n, w in inputs)
        lines.append(f"    {assigns} #1 $display(\"{fmt}\", {args});")
    lines += ["    $finish;", "  end", "endmodule"]
    return "\n".join(lines) + "\n"
