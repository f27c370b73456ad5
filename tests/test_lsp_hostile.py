"""A language server that cannot be knocked over: a real ``hazlint lsp`` subprocess over stdio
gets malformed frames, a document URI with ``%00`` and a megabyte netlist.

The frames follow the LSP base protocol (a ``Content-Length`` header, a blank line, the JSON
body); each bad frame below breaks that rule in one way. JSON-RPC 2.0 gives -32600 as the
code of an invalid request (from memory of the JSON-RPC 2.0 specification, section 5.1).
"""
from __future__ import annotations

import json

import pytest
from support.lsp_client import megabyte_netlist, shutdown, start

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


def _open(c, uri, text, version=1):
    c.notify("textDocument/didOpen", {"textDocument": {
        "uri": uri, "languageId": "verilog", "version": version, "text": text}})


@pytest.mark.slow
def test_malformed_frames_are_answered_or_skipped_and_the_stream_goes_on(tmp_path):
    doc = tmp_path / "press_valve.v"
    doc.write_text(HAZARD)
    (tmp_path / "hazlint.toml").write_text(WIDE)
    c = start(tmp_path, tmp_path.as_uri())
    try:
        # a request whose Content-Length is not a number: answered with an error
        body = json.dumps({"jsonrpc": "2.0", "id": 900, "method": "workspace/symbol",
                           "params": {"query": "valve"}}).encode()
        c.send_raw(b"Content-Length: abc\r\n\r\n" + body)
        reply = c.wait(lambda m: m.get("id") == 900)
        assert reply["error"]["code"] == -32600
        # a notification with no Content-Length at all: skipped (the document stays closed)
        other = tmp_path / "skipped.v"
        body = json.dumps({"jsonrpc": "2.0", "method": "textDocument/didOpen", "params": {
            "textDocument": {"uri": other.as_uri(), "languageId": "verilog", "version": 1,
                             "text": HAZARD}}}).encode()
        c.send_raw(b"Content-Type: application/vscode-jsonrpc; charset=utf-8\r\n\r\n" + body)
        # junk that is no frame at all, then a frame whose body is not JSON
        c.send_raw(b"this is not a frame\r\n")
        c.send_raw(b"Content-Length: 5\r\n\r\n{{{{{")
        # the stream is intact: the next well-formed messages are served
        _open(c, doc.as_uri(), HAZARD)
        diags = c.diagnostics(doc.as_uri(), 1)
        assert [d["code"] for d in diags] == ["unbalanced-reconvergence"]
        # a request right after: answered with its own id
        again = c.request("shutdown", None)
        assert "error" not in again
        c.notify("exit", None)
        c.proc.stdin.close()
        assert c.proc.wait(timeout=30) == 0
        # the skipped didOpen never reached the server: nothing was published for it
        # (every message the server sent is in the inbox or was consumed above)
        while True:
            m = c.inbox.get(timeout=30)
            if m is None:
                break
            assert m.get("params", {}).get("uri") != other.as_uri()
    finally:
        c.close()


@pytest.mark.slow
def test_a_nul_in_a_uri_touches_only_its_own_document(tmp_path):
    doc = tmp_path / "press_valve.v"
    doc.write_text(HAZARD)
    (tmp_path / "hazlint.toml").write_text(WIDE)
    bad_uri = tmp_path.as_uri() + "/bad%00name.v"
    c = start(tmp_path, tmp_path.as_uri())
    try:
        _open(c, bad_uri, HAZARD)
        bad = c.diagnostics(bad_uri, 1)
        assert len(bad) == 1 and bad[0]["code"] == "input-error"
        assert "does not name a file" in bad[0]["message"]
        _open(c, doc.as_uri(), HAZARD)
        assert [d["code"] for d in c.diagnostics(doc.as_uri(), 1)] == ["unbalanced-reconvergence"]
        # an edit of the good document is linted again while the bad one stays open
        c.notify("textDocument/didChange", {"textDocument": {"uri": doc.as_uri(),
                                                             "version": 2},
                                            "contentChanges": [{"text": HAZARD}]})
        assert [d["code"] for d in c.diagnostics(doc.as_uri(), 2)] == ["unbalanced-reconvergence"]
        shutdown(c)
    finally:
        c.close()


@pytest.mark.slow
def test_a_megabyte_document_gets_its_diagnostics(tmp_path):
    from hazlint.lsp import MAX_RELATED
    text = megabyte_netlist()
    assert len(text.encode()) > 1_000_000
    doc = tmp_path / "press_chain.v"
    doc.write_text(text)
    (tmp_path / "hazlint.toml").write_text(WIDE)
    c = start(tmp_path, tmp_path.as_uri())
    try:
        _open(c, doc.as_uri(), text)
        diags = c.diagnostics(doc.as_uri(), 1)
        hz = [d for d in diags if d["code"] == "unbalanced-reconvergence"]
        assert len(hz) == 1
        assert hz[0]["range"]["start"]["line"] == text.count("\n") - 2   # the or gate
        rel = hz[0]["relatedInformation"]
        # the slow path has 20,000 hops: shown up to the cap, the rest counted
        assert len(rel) == MAX_RELATED
        assert "more evidence locations" in rel[-1]["message"]
        shutdown(c)
    finally:
        c.close()
