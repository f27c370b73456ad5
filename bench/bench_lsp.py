"""The language server on a megabyte netlist: time from ``didOpen`` to its diagnostics.

A real ``hazlint lsp`` process over stdio (the client of the tests, tests/support/lsp_client.py)
opens the chain netlist of the LSP tests (about 2 MB, 20,000 buffers, one finding whose slow
path has 20,000 hops, shown as at most ``MAX_RELATED`` related locations) and waits for its
diagnostics; the same file is linted by the command line for comparison. Writes
bench/RESULTS-lsp.md.

    python bench/bench_lsp.py [--gates N]
"""
from __future__ import annotations

import argparse
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
sys.path.insert(0, str(HERE.parent / "tests"))

from support.lsp_client import megabyte_netlist, shutdown, start  # noqa: E402


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--gates", type=int, default=20000)
    ap.add_argument("--out", default=str(HERE / "RESULTS-lsp.md"))
    args = ap.parse_args()
    work = Path(tempfile.mkdtemp(prefix="hazlint-lsp-bench-"))
    text = megabyte_netlist(args.gates)
    doc = work / "press_chain.v"
    doc.write_text(text)
    t0 = time.monotonic()
    cli = subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-cache",
                          str(doc)], capture_output=True, text=True,
                         env=dict(os.environ, PYTHONPATH=str(HERE.parent)))
    t_cli = time.monotonic() - t0
    c = start(work, work.as_uri())
    try:
        t0 = time.monotonic()
        c.notify("textDocument/didOpen", {"textDocument": {
            "uri": doc.as_uri(), "languageId": "verilog", "version": 1, "text": text}})
        diags = c.diagnostics(doc.as_uri(), 1)
        t_lsp = time.monotonic() - t0
        related = sum(len(d.get("relatedInformation") or []) for d in diags)
        shutdown(c)
    finally:
        c.close()
    lines = ["# Language server on a megabyte netlist", "",
             f"Recorded {time.strftime('%Y-%m-%d')} on {platform.machine()}, {os.cpu_count()} "
             f"cores, Python {platform.python_version()}, by `python bench/bench_lsp.py`"
             + (f" --gates {args.gates}" if args.gates != 20000 else "") + ". Wall-clock "
             "seconds of one run each on a shared machine.", "",
             "| document | size | gates | findings | related locations | `didOpen` to "
             "diagnostics (s) | `hazlint check` (s) |", "|---|---:|---:|---:|---:|---:|---:|",
             f"| press_chain.v | {len(text.encode()) / 1e6:.2f} MB | {args.gates + 4} | "
             f"{len(diags)} | {related} | {t_lsp:.1f} | {t_cli:.1f} |", "",
             "Both include reading, elaborating, the rules and the prover; the server's time "
             "adds the conversion to LSP diagnostics (one line index per text, related "
             "locations capped per diagnostic) and the round trip."]
    Path(args.out).write_text("\n".join(lines) + "\n")
    print(f"wrote {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
