"""Run Icarus Verilog (the reference simulator) from tests."""
from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

import pytest

IVERILOG = shutil.which("iverilog")
VVP = shutil.which("vvp")


def require_iverilog():
    if not (IVERILOG and VVP):
        # .ci/run installs Debian's iverilog, so in CI this never skips
        pytest.fail("Icarus Verilog (iverilog, vvp) is required: apt-get install iverilog")


def simulate(sources: dict[str, str], top: str, timeout: float = 300,
             generation: str = "2005") -> str:
    """Compile ``sources`` (file name -> text) with iverilog and run them; return stdout.
    ``generation`` is iverilog's language generation (``-g2005``, ``-g2012`` for
    SystemVerilog)."""
    require_iverilog()
    with tempfile.TemporaryDirectory() as d:
        paths = []
        for name, text in sources.items():
            p = Path(d) / name
            p.write_text(text)
            paths.append(str(p))
        out = Path(d) / "sim.vvp"
        r = subprocess.run([IVERILOG, f"-g{generation}", "-s", top, "-o", str(out), *paths],
                           capture_output=True, text=True, timeout=timeout)
        if r.returncode != 0:
            raise AssertionError(f"iverilog failed:\n{r.stderr}")
        r = subprocess.run([VVP, "-n", str(out)], capture_output=True, text=True,
                           timeout=timeout)
        if r.returncode != 0:
            raise AssertionError(f"vvp failed:\n{r.stderr}")
        return r.stdout


def run_vectors(sources: dict[str, str], top: str, n_in: int, n_out: int,
                vectors: list[int], folder: Path) -> list[str]:
    """Drive input port ``i`` of module ``top`` with each vector in turn (one time unit
    apart) and return output port ``o`` after each, as binary strings MSB first (x/z kept).
    The vectors go through a ``$readmemh`` file in ``folder``."""
    hexfile = Path(folder) / f"{top}_vectors.hex"
    hexfile.write_text("".join(f"{v:x}\n" for v in vectors))
    n = len(vectors)
    tb = (f"module tb; reg [{n_in - 1}:0] i; wire [{n_out - 1}:0] o;\n"
          f"  reg [{n_in - 1}:0] mem [0:{n - 1}]; integer k;\n  {top} dut(.i(i), .o(o));\n"
          f"  initial begin $readmemh(\"{hexfile}\", mem);\n"
          f"    for (k = 0; k < {n}; k = k + 1) begin i = mem[k]; #1 $display(\"%b\", o); end\n"
          f"  end\nendmodule\n")
    out = simulate({**sources, "tb_vectors.v": tb}, "tb").split()
    assert len(out) == n, out[-5:]
    return out
