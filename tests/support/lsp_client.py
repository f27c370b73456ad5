"""A minimal LSP client over a real ``hazlint lsp`` subprocess's stdin/stdout.

It frames JSON-RPC messages with Content-Length headers itself (LSP base protocol), so nothing
of pygls is used on the client side; ``send_raw`` writes bytes as they are, for malformed
frames.
"""
from __future__ import annotations

import json
import os
import queue
import subprocess
import sys
import threading
from pathlib import Path


class Client:
    """A minimal LSP client over the server's stdin/stdout."""

    def __init__(self, cwd: Path):
        env = dict(os.environ, HAZLINT_CACHE_DIR=str(cwd / ".cache"))
        self.proc = subprocess.Popen(
            [sys.executable, "-m", "hazlint.cli", "lsp", "--debounce", "0.2"], cwd=cwd,
            stdin=subprocess.PIPE, stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
        self.inbox: queue.Queue = queue.Queue()
        self.next_id = 0
        self.stderr: list[bytes] = []
        threading.Thread(target=self._read, daemon=True).start()
        threading.Thread(target=lambda: self.stderr.extend(self.proc.stderr), daemon=True).start()

    def _read(self):
        out = self.proc.stdout
        while True:
            headers = {}
            while True:
                line = out.readline()
                if not line:
                    self.inbox.put(None)
                    return
                line = line.strip()
                if not line:
                    break
                k, _, v = line.decode("ascii").partition(":")
                headers[k.strip().lower()] = v.strip()
            body = out.read(int(headers["content-length"]))
            self.inbox.put(json.loads(body))

    def send(self, msg: dict):
        body = json.dumps(dict(msg, jsonrpc="2.0")).encode("utf-8")
        self.send_raw(b"Content-Length: %d\r\n\r\n" % len(body) + body)

    def send_raw(self, data: bytes):
        self.proc.stdin.write(data)
        self.proc.stdin.flush()

    def notify(self, method, params):
        self.send({"method": method, "params": params})

    def request(self, method, params):
        self.next_id += 1
        self.send({"id": self.next_id, "method": method, "params": params})
        return self.wait(lambda m: m.get("id") == self.next_id and "method" not in m)

    def wait(self, pred, timeout=120):
        # a generous timeout only guards against a hung server; nothing is timed
        while True:
            try:
                m = self.inbox.get(timeout=timeout)
            except queue.Empty:
                raise AssertionError("no message from the server; stderr:\n"
                                     + b"".join(self.stderr).decode(errors="replace"))
            if m is None:
                raise AssertionError("server closed its output; stderr:\n"
                                     + b"".join(self.stderr).decode(errors="replace"))
            if m.get("method") == "window/logMessage" and m["params"].get("type") == 1:
                raise AssertionError(m["params"]["message"])
            if pred(m):
                return m

    def diagnostics(self, uri, version=None):
        return self.wait(lambda m: m.get("method") == "textDocument/publishDiagnostics"
                         and m["params"]["uri"] == uri
                         and (version is None or m["params"].get("version") == version)
                         )["params"]["diagnostics"]

    def close(self):
        try:
            self.proc.stdin.close()
        except OSError:
            pass
        try:
            self.proc.wait(timeout=30)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait()


def start(tmp_path, root_uri):
    c = Client(tmp_path)
    init = c.request("initialize", {"processId": os.getpid(), "rootUri": root_uri,
                                    "capabilities": {}, "workspaceFolders": None})
    caps = init["result"]["capabilities"]
    assert caps["textDocumentSync"]["openClose"] is True
    assert init["result"]["serverInfo"]["name"] == "hazlint"
    c.notify("initialized", {})
    return c


def shutdown(c):
    reply = c.request("shutdown", None)
    assert reply.get("result") is None and "error" not in reply
    c.notify("exit", None)
    c.proc.stdin.close()
    assert c.proc.wait(timeout=30) == 0


def megabyte_netlist(n: int = 20000) -> str:
    """The press valve of the LSP tests (``guard_closed`` reconverging at an OR) with the
    inverted branch delayed through a chain of ``n`` buffers: one reconvergence whose slow path
    has ``n`` hops (about 2 MB of text for the default ``n``)."""
    lines = ["module press_chain(input guard_closed, input two_hand, input maint_key,",
             "                   output valve_enable);",
             "  wire run, bypass, " + ", ".join(f"delay_line_stage_{i:06d}"
                                               for i in range(n + 1)) + ";",
             "  not  g_inv (delay_line_stage_000000, guard_closed);"]
    for i in range(n):
        lines.append(f"  buf  delay_buffer_{i:06d} (delay_line_stage_{i + 1:06d}, "
                     f"delay_line_stage_{i:06d});")
    lines += ["  and  g_run (run, two_hand, guard_closed);",
              f"  and  g_byp (bypass, maint_key, delay_line_stage_{n:06d});",
              "  or   g_out (valve_enable, run, bypass);",
              "endmodule"]
    return "\n".join(lines) + "\n"
