"""Run yosys (Debian's package, a reference synthesis tool) from tests."""
from __future__ import annotations

import json
import re
import shutil
import subprocess
from pathlib import Path

import pytest

YOSYS = shutil.which("yosys")


def require_yosys() -> str:
    if not YOSYS:
        # .ci/run installs Debian's yosys, so in CI this never fails
        pytest.fail("yosys is required: apt-get install yosys")
    return YOSYS


def datdir() -> Path:
    """yosys' data folder (simcells.v, simlib.v, cells.lib): ``yosys-config --datdir`` when
    that helper is installed (Debian ships it in yosys-dev), else ``<prefix>/share/yosys``."""
    require_yosys()
    cfg = shutil.which("yosys-config")
    if cfg:
        out = subprocess.run([cfg, "--datdir"], capture_output=True, text=True).stdout.strip()
        if out:
            return Path(out)
    return Path(YOSYS).resolve().parent.parent / "share" / "yosys"


def run(script: str, cwd: Path, timeout: float = 600) -> str:
    """Run a yosys script (commands separated by ';'); return its log."""
    r = subprocess.run([require_yosys(), "-q", "-l", str(cwd / "yosys.log"), "-p", script],
                       capture_output=True, text=True, cwd=cwd, timeout=timeout)
    if r.returncode != 0:
        raise AssertionError(f"yosys failed:\n{r.stdout}\n{r.stderr}")
    return (cwd / "yosys.log").read_text()


def modules(path: Path) -> dict[str, tuple[list[str], str]]:
    """Module name -> (port list, body) of a yosys model library (simcells.v, simlib.v)."""
    text = path.read_text()
    out = {}
    for m in re.finditer(r"^module\s+\\(\$\w+)\s*\(([^)]*)\);(.*?)^endmodule", text,
                         re.S | re.M):
        out[m.group(1)] = ([p.strip() for p in m.group(2).split(",") if p.strip()], m.group(0))
    return out


def stat_cells(json_path: Path, top: str) -> dict[str, int]:
    """Cell counts by type of the flattened design ``top`` from ``tee -o FILE stat -json``
    (yosys 0.23's JSON statistics; hierarchical designs are counted through the
    "design" entry when present)."""
    data = json.loads(json_path.read_text())
    if "design" in data:
        return dict(data["design"]["num_cells_by_type"])
    return dict(data["modules"][f"\\{top}"]["num_cells_by_type"])
