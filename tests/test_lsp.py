"""The language server, spoken to over stdio by a real subprocess (``hazlint lsp``).

The client (``support.lsp_client``) frames JSON-RPC messages with Content-Length headers
itself (LSP base protocol), so nothing of pygls is used on the client side.
"""
from __future__ import annotations

import pytest
from support.lsp_client import start, shutdown

# the designs drive plain outputs: listed at the wider scope
WIDE = '[rules.unbalanced-reconvergence]\nscope = "outputs"\n'

HAZARD = """\
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire n_guard, run, bypass;
  not g_inv (n_guard, guard_closed);
  and g_run (run, two_hand, guard_closed);
  and g_byp (bypass, maint_key, n_guard);
  or  g_out (valve_enable, run, bypass);
endmodule
"""
# guard_closed fans out at line 3/4 and reconverges one gate apart at g_out (line 6): the
# reconvergence rule documents that it reports at the reconvergence gate.
HAZARD_LINE = 6

FIXED = """\
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire run;
  and g_run (run, two_hand, guard_closed);
  and g_out (valve_enable, run, maint_key);
endmodule
"""

LOOP = """\
module press_valve(input guard_closed, input two_hand, output valve_enable);
  wire n1, n2;
  nand g1 (n1, guard_closed, n2);
  and  g2 (n2, n1, two_hand);
  assign valve_enable = n2;
endmodule
"""
LOOP_LINE = 3   # the loop rule reports at the loop's first gate in source order


@pytest.mark.slow
def test_open_change_fix_shutdown(tmp_path):
    rtl = tmp_path / "rtl"
    rtl.mkdir()
    # a project configuration the CLI would use: the LSP must discover it from the document
    (tmp_path / "hazlint.toml").write_text('files = ["rtl/*.v"]\ntop = "press_valve"\n' + WIDE)
    doc = rtl / "press_valve.v"
    doc.write_text(HAZARD)
    uri = doc.as_uri()
    c = start(tmp_path, tmp_path.as_uri())
    try:
        c.notify("textDocument/didOpen", {"textDocument": {
            "uri": uri, "languageId": "verilog", "version": 1, "text": HAZARD}})
        diags = c.diagnostics(uri, 1)
        assert diags, "expected the reconvergent-fanout finding"
        hz = [d for d in diags if d["code"] == "unbalanced-reconvergence"]
        assert len(hz) == 1
        assert hz[0]["range"]["start"]["line"] == HAZARD_LINE - 1      # LSP lines are 0-based
        assert hz[0]["source"] == "hazlint"
        # evidence as related information, pointing into the same document
        rel = hz[0].get("relatedInformation") or []
        assert rel and all(r["location"]["uri"] == uri for r in rel)
        rel_lines = {r["location"]["range"]["start"]["line"] for r in rel}
        assert {2, 3, 4} & rel_lines                 # the gates on the branches (lines 3-5)

        # the editor buffer changes (not saved): the fixed text must be linted, not the file
        c.notify("textDocument/didChange", {
            "textDocument": {"uri": uri, "version": 2},
            "contentChanges": [{"text": FIXED}]})
        assert c.diagnostics(uri, 2) == []

        # typing a loop into the buffer; a burst of changes is linted once after the pause
        half = LOOP[: len(LOOP) // 2]
        c.notify("textDocument/didChange", {"textDocument": {"uri": uri, "version": 3},
                                            "contentChanges": [{"text": half}]})
        c.notify("textDocument/didChange", {"textDocument": {"uri": uri, "version": 4},
                                            "contentChanges": [{"text": LOOP}]})
        diags = c.diagnostics(uri, 4)
        loops = [d for d in diags if d["code"] == "combinational-loop"]
        assert loops and loops[0]["range"]["start"]["line"] == LOOP_LINE - 1

        # saved with the fixed text: the diagnostics go away again
        doc.write_text(FIXED)
        c.notify("textDocument/didChange", {"textDocument": {"uri": uri, "version": 5},
                                            "contentChanges": [{"text": FIXED}]})
        c.notify("textDocument/didSave", {"textDocument": {"uri": uri}})
        assert c.diagnostics(uri, 5) == []
        shutdown(c)
    finally:
        c.close()


@pytest.mark.slow
def test_syntax_error_is_a_diagnostic_not_a_crash(tmp_path):
    doc = tmp_path / "broken.v"
    text = "module m(input a, output y);\n  and g1 (y, a\nendmodule\n"
    doc.write_text(text)
    c = start(tmp_path, tmp_path.as_uri())
    try:
        c.notify("textDocument/didOpen", {"textDocument": {
            "uri": doc.as_uri(), "languageId": "verilog", "version": 1, "text": text}})
        diags = c.diagnostics(doc.as_uri(), 1)
        assert len(diags) == 1 and diags[0]["severity"] == 1       # Error
        assert diags[0]["range"]["start"]["line"] in (1, 2)        # the open gate / endmodule

        # a sub-project with its own configuration: the server applies it like the CLI would
        sub = tmp_path / "sub"
        sub.mkdir()
        (sub / "hazlint.toml").write_text('ignore = ["unbalanced-reconvergence"]\n')
        other = sub / "valve.v"
        other.write_text(HAZARD)
        c.notify("textDocument/didOpen", {"textDocument": {
            "uri": other.as_uri(), "languageId": "verilog", "version": 1, "text": HAZARD}})
        assert c.diagnostics(other.as_uri(), 1) == []
        shutdown(c)
    finally:
        c.close()


@pytest.mark.slow
def test_saving_the_configuration_relints_open_documents(tmp_path):
    cfg = tmp_path / "hazlint.toml"
    cfg.write_text('files = ["press_valve.v"]\n' + WIDE)
    doc = tmp_path / "press_valve.v"
    doc.write_text(HAZARD)
    c = start(tmp_path, tmp_path.as_uri())
    try:
        c.notify("textDocument/didOpen", {"textDocument": {
            "uri": doc.as_uri(), "languageId": "verilog", "version": 1, "text": HAZARD}})
        assert [d["code"] for d in c.diagnostics(doc.as_uri(), 1)] == ["unbalanced-reconvergence"]
        # the user turns the rule off in the configuration file and saves it in the editor
        text = 'files = ["press_valve.v"]\nignore = ["unbalanced-reconvergence"]\n' + WIDE
        cfg.write_text(text)
        c.notify("textDocument/didOpen", {"textDocument": {
            "uri": cfg.as_uri(), "languageId": "toml", "version": 1, "text": text}})
        c.notify("textDocument/didSave", {"textDocument": {"uri": cfg.as_uri()}})
        assert c.diagnostics(doc.as_uri(), 1) == []
        # and turns it back on outside the editor: a watched-file notification
        cfg.write_text('files = ["press_valve.v"]\n' + WIDE)
        c.notify("workspace/didChangeWatchedFiles",
                 {"changes": [{"uri": cfg.as_uri(), "type": 2}]})
        assert [d["code"] for d in c.diagnostics(doc.as_uri(), 1)] == ["unbalanced-reconvergence"]
        shutdown(c)
    finally:
        c.close()
