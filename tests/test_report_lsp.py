"""``hazlint check --format lsp`` against the language server: a real ``hazlint lsp``
subprocess over stdio (``support.lsp_client``, no pygls on the client side) publishes, for a
document of the press demo, exactly the diagnostics the report format writes for that file."""
from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from support.lsp_client import shutdown, start

DEMO = Path(__file__).resolve().parent.parent / "fixtures" / "demo"


@pytest.mark.slow
def test_lsp_format_is_what_the_server_publishes(tmp_path):
    demo = tmp_path / "demo"
    shutil.copytree(DEMO, demo)
    p = subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--format", "lsp",
                        "--cache-dir", str(tmp_path / "cache")], cwd=demo, capture_output=True,
                       text=True, timeout=300)
    assert p.returncode == 1, p.stderr
    rows = [json.loads(line) for line in p.stdout.splitlines()]
    uris = [r["uri"] for r in rows]
    assert uris == sorted(uris) and len(set(uris)) == len(uris)
    assert all(d["source"] == "hazlint" for r in rows for d in r["diagnostics"])
    c = start(demo, demo.as_uri())
    try:
        # one document (each one opened is a lint of the whole configured design)
        row = rows[0]
        path = Path(row["uri"].removeprefix("file://"))
        assert path.parent == demo and row["diagnostics"]
        c.notify("textDocument/didOpen", {"textDocument": {
            "uri": row["uri"], "languageId": "verilog", "version": 1,
            "text": path.read_text()}})
        assert c.diagnostics(row["uri"], 1) == row["diagnostics"], path.name
        shutdown(c)
    finally:
        c.close()
