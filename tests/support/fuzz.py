"""Hostile inputs for the fuzzing suite, and the check of one hazlint run on them.

Inputs (hypothesis strategies):

* :func:`netlists`: generated structural netlists: several modules with scalar and vector
  ports, gate primitives with and without delays, continuous assigns over random expressions,
  parameters whose values are random constant expressions (division and modulo by zero, huge
  powers and shifts, negative and fractional powers included), vector ranges from such
  constants, generate loops, always blocks, instances of other modules (and sometimes of
  themselves);
* :func:`mutants`: a fixture mutated at the byte level (flips, insertions of odd bytes, a
  byte-order mark, deletions), the token level (tokens deleted, repeated, swapped, replaced by
  keywords, operators and hostile literals) or the line level (lines deleted, repeated, swapped,
  hostile directives inserted).

A run is checked by :func:`problems`: it must end with exit code 0, 1 or 2, print no traceback
(exit 3 is hazlint's own "internal error"), say ``file:line: error: ...`` on every exit 2, and
end within its budget (a run still going long after its time budget is a hang). Runs go
in-process through :func:`hazlint.cli.main` (fast) or through a subprocess (the real thing).
The fuzzing runs use smaller size limits than the defaults (:data:`ARGS`), so one run cannot
take gigabytes; what the limits and the budget stop still has to end as exit 2 with a place.
"""
from __future__ import annotations

import contextlib
import io
import os
import re
import shutil
import signal
import subprocess
import sys
import time
from dataclasses import dataclass
from pathlib import Path

from hypothesis import strategies as st

REPO = Path(__file__).resolve().parents[2]
FIXTURES_DIR = REPO / "fixtures"
FIXTURES = sorted(p for p in FIXTURES_DIR.rglob("*")
                  if p.is_file() and p.suffix in (".v", ".vh", ".vg"))

BUDGET = 5.0                 # seconds: --time-budget of every fuzzing run
HANG = 60.0                  # seconds past which a run counts as hung
ARGS = ["check", "--no-cache", "--time-budget", str(BUDGET), "--format", "json",
        "--limit", "vector_width=65536", "--limit", "instances=20000",
        "--limit", "gates=200000", "--limit", "net_bits=400000"]
LOCATED = re.compile(r"^[^\n]+?:\d+(?::\d+)?: error: \S", re.M)

# ---------------------------------------------------------------------------------------------
# generated netlists

GATES = ("and", "or", "nand", "nor", "xor", "xnor")
_SMALL = st.integers(1, 9).map(str)
_ODD_NUMBERS = st.sampled_from(
    ["0", "1", "-1", "2", "31", "32", "64", "4'b1x0z", "8'hFF", "1'bx", "32'd4294967295",
     "123456789012345678901234567890", "99999999", "2**64", "2**-1", "(-1)**0.5", "1<<100000",
     "1%0", "7/0", "0**-1", "(-2)**3", "$clog2(1000)", "0.5", "1e400", "-0"])


def _rarely(draw, one_in: int) -> bool:
    return draw(st.integers(0, one_in - 1)) == 0


@st.composite
def const_exprs(draw, depth: int = 2, names: tuple[str, ...] = ()):
    """A constant expression as Verilog text: small numbers mostly, hostile ones sometimes
    (about one leaf in thirty), so that most generated designs get past elaboration."""
    if depth <= 0 or draw(st.integers(0, 3)) == 0:
        if _rarely(draw, 30):
            return draw(_ODD_NUMBERS)
        if names and _rarely(draw, 3):
            return draw(st.sampled_from(names))
        return draw(_SMALL)
    op = draw(st.sampled_from(["+", "-", "*", "/", "%", "**", "<<", ">>", "&", "|", "^",
                               "==", "<", "?"]))
    a = draw(const_exprs(depth - 1, names))
    b = draw(const_exprs(depth - 1, names))
    if op == "?":
        return f"({a} ? {b} : {draw(const_exprs(depth - 1, names))})"
    return f"({a} {op} {b})"


@st.composite
def signal_exprs(draw, nets: list[str], depth: int = 2):
    if depth <= 0 or draw(st.integers(0, 2)) == 0:
        return draw(st.sampled_from(nets))
    kind = draw(st.sampled_from(["bin", "bin", "un", "cond", "cat", "red"]
                                + (["sel"] if _rarely(draw, 8) else [])))
    a = draw(signal_exprs(nets, depth - 1))
    if kind == "un":
        return f"~{a}"
    if kind == "red":
        return f"{draw(st.sampled_from(['&', '|', '^', '~^']))}{a}"
    if kind == "sel":
        return f"{a}[{draw(const_exprs(1))}]" if a.isidentifier() else a
    b = draw(signal_exprs(nets, depth - 1))
    if kind == "cond":
        return f"({a} ? {b} : {draw(signal_exprs(nets, depth - 1))})"
    if kind == "cat":
        return f"{{{a}, {b}}}"
    op = draw(st.sampled_from(["&", "|", "^", "+", "-", "*", "==", "<", "&&", "<<", "~^"]))
    return f"({a} {op} {b})"


@st.composite
def netlists(draw):
    """Text of a few modules that instantiate each other (see the module docstring)."""
    n_mods = draw(st.integers(1, 3))
    mods = []
    for m in range(n_mods):
        n_in, n_out = draw(st.integers(1, 4)), draw(st.integers(1, 3))
        ins, outs = [f"i{k}" for k in range(n_in)], [f"o{k}" for k in range(n_out)]
        rng = lambda: draw(st.sampled_from(["", "", "", "[3:0] ", "[0:3] ",  # noqa: E731
                                            "[P-1:0] ", f"[{draw(const_exprs(1))}:0] "]))
        ports = [f"input {rng()}{n}" for n in ins] + [f"output {rng()}{n}" for n in outs]
        lines = [f"module m{m} #(parameter P = {draw(const_exprs(2))}) ({', '.join(ports)});"]
        nets = list(ins)
        for k in range(draw(st.integers(0, 10))):
            w = f"w{k}"
            kind = draw(st.sampled_from(["gate", "gate", "assign", "assign", "param", "vec",
                                         "inst", "gen", "always", "flop", "not", "ycell"]))
            if kind == "gate":
                ins_ = draw(st.lists(st.sampled_from(nets), min_size=1, max_size=3))
                delay = draw(st.sampled_from(["", "", f"#({draw(const_exprs(1))}) ",
                                              "#(1:2:3, 2) "]))
                lines.append(f"  wire {w};\n  {draw(st.sampled_from(GATES))} {delay}g{k} "
                             f"({w}, {', '.join(ins_)});")
            elif kind == "not":
                lines.append(f"  wire {w};\n  not g{k} ({w}, {draw(st.sampled_from(nets))});")
            elif kind == "assign":
                lines.append(f"  wire {w} = {draw(signal_exprs(nets))};")
            elif kind == "param":
                lines.append(f"  localparam L{k} = {draw(const_exprs(2, ('P',)))};")
                continue
            elif kind == "vec":
                lines.append(f"  wire [{draw(const_exprs(1, ('P',)))}:0] {w};\n"
                             f"  assign {w} = {draw(signal_exprs(nets))};")
            elif kind == "inst":
                # modules instantiate later ones; now and then one of their own or earlier
                low = 0 if _rarely(draw, 10) else m + 1
                if low >= n_mods:
                    continue
                target = draw(st.integers(low, n_mods - 1))
                conns = ", ".join(draw(st.sampled_from(nets)) for _ in range(draw(
                    st.integers(0, 5))))
                over = draw(st.sampled_from(["", f"#({draw(const_exprs(1))}) "]))
                lines.append(f"  wire {w};\n  m{target} {over}u{k} ({conns});")
            elif kind == "gen":
                bound = draw(const_exprs(1)) if _rarely(draw, 20) else draw(
                    st.sampled_from(["1", "2", "4", "(P > 4 ? 4 : 1)"]))
                lines.append(f"  genvar gv{k};\n  wire [3:0] {w};\n  generate for (gv{k} = 0; "
                             f"gv{k} < {bound}; gv{k} = gv{k} + 1) begin : gb{k}"
                             f"\n    assign {w}[gv{k}] = {draw(st.sampled_from(nets))};\n"
                             "  end endgenerate")
            elif kind == "ycell":
                # a word-level cell of yosys' library, as synthesised netlists have them
                n = draw(st.sampled_from(["1", "2", "4"])) if not _rarely(draw, 5) else \
                    draw(const_exprs(1))
                a, b = draw(st.sampled_from(nets)), draw(st.sampled_from(nets))
                cell = draw(st.sampled_from(["and", "or", "xor", "add", "sub", "eq", "not",
                                             "lut", "mux"]))
                if cell == "not":
                    text = (f"\\$not #(.A_SIGNED(0), .A_WIDTH({n}), .Y_WIDTH({n})) "
                            f"y{k} (.A({a}), .Y({w}));")
                elif cell == "lut":
                    text = (f"\\$lut #(.WIDTH({n}), .LUT({draw(const_exprs(1))})) "
                            f"y{k} (.A({a}), .Y({w}));")
                elif cell == "mux":
                    text = (f"\\$mux #(.WIDTH({n})) y{k} (.A({a}), .B({b}), "
                            f".S({draw(st.sampled_from(nets))}), .Y({w}));")
                else:
                    text = (f"\\${cell} #(.A_SIGNED(0), .B_SIGNED(0), .A_WIDTH({n}), "
                            f".B_WIDTH({n}), .Y_WIDTH({n})) y{k} (.A({a}), .B({b}), "
                            f".Y({w}));")
                lines.append(f"  wire [{n}-1:0] {w};\n  {text}")
            elif kind == "always":
                lines.append(f"  reg {w};\n  always @(*) {w} = {draw(signal_exprs(nets))};")
            else:
                lines.append(f"  reg {w};\n  always @(posedge {draw(st.sampled_from(nets))}) "
                             f"{w} <= {draw(signal_exprs(nets))};")
            nets.append(w)
        for o in outs:
            lines.append(f"  assign {o} = {draw(signal_exprs(nets))};")
        lines.append("endmodule")
        mods.append("\n".join(lines))
    return "\n\n".join(mods) + "\n"


# ---------------------------------------------------------------------------------------------
# mutations of the fixtures

_TOKEN = re.compile(r"\s+|//[^\n]*|/\*.*?\*/|\"(?:[^\"\\\n]|\\.)*\"|`?[A-Za-z_$][\w$]*"
                    r"|\d+'[sS]?[bodhBODH][0-9a-fA-FxXzZ_?]+|\d+(?:\.\d+)?|\\\S+|.", re.S)
REPLACEMENTS = ["module", "endmodule", "input", "output", "inout", "wire", "reg", "assign",
                "always", "@(*)", "posedge", "begin", "end", "generate", "endgenerate", "for",
                "genvar", "parameter", "localparam", "primitive", "table", "endtable",
                "specify", "endspecify", "(", ")", "[", "]", "{", "}", ";", ",", ":", "?",
                "#", "=", "<=", "'", "\"", "\\", "`", "/*", "*/", "//", "+:", "-:", "**",
                "%", "/", "<<<", "1%0", "2**64", "(-1)**0.5", "1<<100000", "4'bxz",
                "123456789012345678901234567890", "99999999", "[99999999:0]", "#(1/0)",
                "`undefined_macro", "`define X `X", "\\escaped ", "\ufeff", "\x00", "\xff",
                "\\$lut ", "\\$add ", "#(.WIDTH(64))", ".A_WIDTH(99999999999)"]
HOSTILE_LINES = ['`include "/etc/passwd"', '`include "../../../../etc/hostname"',
                 "`line 0 \"\" 0", "`define BOOM `BOOM `BOOM", "`BOOM",
                 "`define D4(x) x x x x", "wire w = `D4(`D4(`D4(`D4(`D4(a)))));",
                 "`ifdef NOPE", "`endif", "`else", "`timescale 1ns/1ps",
                 "`default_nettype none", "`celldefine", "`resetall",
                 "module loop(input a, output y); loop u(a, y); endmodule",
                 "parameter Q = 1 % 0;", "wire [2**64:0] huge;", "not #(1<<100000) gq (y, a);",
                 "", "endmodule", "module"]
_ODD_BYTES = [b"\x00", b"\xff", b"\xef\xbb\xbf", b"`", b"\\", b"\"", b"/*", b"\n", b"\r",
              b"\t", b"(", b")", b";", b"\x80", b"\xc3\x28"]


@st.composite
def byte_mutants(draw, data: bytes) -> bytes:
    b = bytearray(data)
    for _ in range(draw(st.integers(1, 6))):
        op = draw(st.sampled_from(["flip", "insert", "delete", "odd", "bom", "truncate"]))
        at = draw(st.integers(0, len(b))) if b else 0
        if op == "flip" and b:
            at = min(at, len(b) - 1)
            b[at] ^= 1 << draw(st.integers(0, 7))
        elif op == "insert":
            b[at:at] = bytes([draw(st.integers(0, 255))])
        elif op == "delete" and b:
            del b[at:at + draw(st.integers(1, 16))]
        elif op == "odd":
            b[at:at] = draw(st.sampled_from(_ODD_BYTES))
        elif op == "bom":
            b[0:0] = b"\xef\xbb\xbf"
        elif op == "truncate":
            del b[at:]
    return bytes(b)


@st.composite
def token_mutants(draw, text: str) -> str:
    toks = _TOKEN.findall(text)
    real = [i for i, t in enumerate(toks) if t.strip()]
    for _ in range(draw(st.integers(1, 5))):
        if not real:
            toks.append(draw(st.sampled_from(REPLACEMENTS)))
            continue
        i = real[draw(st.integers(0, len(real) - 1))]
        op = draw(st.sampled_from(["delete", "repeat", "swap", "replace", "replace"]))
        if op == "delete":
            toks[i] = ""
        elif op == "repeat":
            toks[i] = toks[i] + " " + toks[i]
        elif op == "swap":
            j = real[draw(st.integers(0, len(real) - 1))]
            toks[i], toks[j] = toks[j], toks[i]
        else:
            toks[i] = draw(st.sampled_from(REPLACEMENTS))
    return "".join(toks)


@st.composite
def line_mutants(draw, text: str) -> str:
    lines = text.split("\n")
    for _ in range(draw(st.integers(1, 4))):
        at = draw(st.integers(0, len(lines)))
        op = draw(st.sampled_from(["delete", "repeat", "swap", "insert", "insert"]))
        if op == "insert" or not lines:
            lines.insert(at, draw(st.sampled_from(HOSTILE_LINES)))
            continue
        at = min(at, len(lines) - 1)
        if op == "delete":
            del lines[at]
        elif op == "repeat":
            lines.insert(at, lines[at])
        else:
            j = draw(st.integers(0, len(lines) - 1))
            lines[at], lines[j] = lines[j], lines[at]
    return "\n".join(lines)


@st.composite
def mutants(draw, fixture: Path, level: str | None = None) -> tuple[str, bytes]:
    """(level, mutated bytes) of ``fixture``."""
    data = fixture.read_bytes()
    level = level or draw(st.sampled_from(["byte", "token", "line"]))
    if level == "byte":
        return level, draw(byte_mutants(data))
    text = data.decode("utf-8", "surrogateescape")
    out = draw(token_mutants(text)) if level == "token" else draw(line_mutants(text))
    return level, out.encode("utf-8", "surrogateescape")


def workspace(base: Path) -> Path:
    """A copy of the fixtures tree under ``base`` (mutants are written beside the siblings
    their fixture includes, and the fixtures themselves are never touched)."""
    dest = base / "fixtures"
    if not dest.exists():
        shutil.copytree(FIXTURES_DIR, dest)
    return dest


def place(base: Path, fixture: Path, data: bytes) -> Path:
    """Write ``data`` in the copy of the fixtures tree, in ``fixture``'s place."""
    ws = workspace(base)
    path = ws / fixture.relative_to(FIXTURES_DIR)
    path.write_bytes(data)
    return path


def restore(base: Path, fixture: Path) -> None:
    shutil.copyfile(fixture, workspace(base) / fixture.relative_to(FIXTURES_DIR))


# ---------------------------------------------------------------------------------------------
# one run, and what is wrong with it

@dataclass
class Outcome:
    code: int | None          # None: hung (killed or interrupted)
    stdout: str
    stderr: str
    seconds: float


class _Hung(BaseException):
    """Raised by the watchdog inside a run that went on for :data:`HANG` seconds."""


def run_in_process(path: Path, args=ARGS) -> Outcome:
    from hazlint.cli import main
    out, err = io.StringIO(), io.StringIO()
    t0 = time.monotonic()

    def alarm(signum, frame):
        raise _Hung()
    old = signal.signal(signal.SIGALRM, alarm)
    signal.setitimer(signal.ITIMER_REAL, HANG)
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main([*args, str(path)])
    except _Hung:
        code = None
    except BaseException as exc:             # noqa: BLE001 - anything escaping main is a crash
        import traceback
        err.write("Traceback (escaped hazlint.cli.main):\n" + traceback.format_exc())
        code = -1 if not isinstance(exc, SystemExit) else exc.code
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)
    return Outcome(code, out.getvalue(), err.getvalue(), time.monotonic() - t0)


def run_subprocess(path: Path, args=ARGS) -> Outcome:
    t0 = time.monotonic()
    env = dict(os.environ, PYTHONPATH=str(REPO))
    try:
        p = subprocess.run([sys.executable, "-m", "hazlint.cli", *args, str(path)],
                           capture_output=True, text=True, timeout=HANG, env=env,
                           errors="replace")
        return Outcome(p.returncode, p.stdout, p.stderr, time.monotonic() - t0)
    except subprocess.TimeoutExpired as exc:
        return Outcome(None, "", str(exc.stderr or ""), time.monotonic() - t0)


def problems(o: Outcome) -> list[str]:
    """What is wrong with a run (empty: nothing): ``crash``, ``hang``, ``no-location``."""
    bad = []
    if o.code is None:
        bad.append("hang")
    elif o.code not in (0, 1, 2) or "Traceback" in o.stderr or "internal error" in o.stderr:
        bad.append("crash")
    elif o.code == 2 and not LOCATED.search(o.stderr):
        bad.append("no-location")
    return bad
