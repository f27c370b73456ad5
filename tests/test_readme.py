"""README.md shows the real output of the demo command and the test command CI runs."""
from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def test_readme_demo_block_is_the_real_output():
    text = (ROOT / "README.md").read_text()
    m = re.search(r"<!-- demo-output:begin -->\n```\n\$ (.*?)\n(.*?)\n```\n<!-- demo-output:end -->",
                  text, re.S)
    assert m, "README.md has no demo output block (run scripts/update-readme)"
    cmd, shown = m.group(1), m.group(2)
    assert cmd == "hazlint --config fixtures/demo/hazlint.toml"
    r = subprocess.run([sys.executable, "-m", "hazlint", "--config", "fixtures/demo/hazlint.toml",
                        "--color", "never"], cwd=ROOT, capture_output=True, text=True)
    assert r.returncode == 1                      # the demo has findings
    assert r.stdout.rstrip() == shown, "README demo output is stale: run scripts/update-readme"
    assert "does not make a machine safe" in shown   # the caution travels with the demo output


def test_demo_readme_shows_the_real_output_run_in_its_folder():
    demo = ROOT / "fixtures" / "demo"
    text = (demo / "README.md").read_text()
    m = re.search(r"<!-- demo-output:begin -->\n```console\n\$ hazlint\n(.*?)\n```\n"
                  r"<!-- demo-output:end -->", text, re.S)
    assert m, "fixtures/demo/README.md has no demo output block (run scripts/update-readme)"
    r = subprocess.run([sys.executable, "-m", "hazlint", "--color", "never"], cwd=demo,
                       capture_output=True, text=True)
    assert r.returncode == 1
    assert r.stdout.rstrip() == m.group(1), "stale: run scripts/update-readme"


def test_ci_runs_the_readme_test_command():
    text = (ROOT / "README.md").read_text()
    cmds = re.findall(r"^    (\S.*)$", text, re.M)
    assert cmds[0].startswith("python3 -m pip install -e . && hazlint ")
    assert cmds[1] == "scripts/install-test-deps && python3 -m pytest"
    ci = (ROOT / ".ci" / "run").read_text()
    assert "install-test-deps" in ci
