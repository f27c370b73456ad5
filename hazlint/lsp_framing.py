"""A framing filter between the editor's byte stream and the language server's reader.

The LSP base protocol frames every message with a ``Content-Length`` header. pygls' reader
loses the stream for good after one frame whose header is missing or not a number: it then
reads each following body as a header line. :class:`FramedReader` reads the raw stream itself
and hands pygls only well-formed frames (``readline()`` and ``read(n)``, what pygls asks of
stdin):

* a frame with a valid ``Content-Length`` (case and blanks as they come) passes unchanged;
* a frame whose ``Content-Length`` is missing, not a number or beyond :data:`MAX_BODY` is
  recovered when its body is one JSON value (found by decoding, not by the header): a request
  (it has an ``id``) is answered with a JSON-RPC error, a notification is skipped;
* bytes that are neither a header nor such a body are skipped up to the next
  ``Content-Length:`` header.

Either way the next well-formed frame is read as usual: one bad frame costs only itself.
"""
from __future__ import annotations

import json
import logging
import re
import threading
from typing import Callable

log = logging.getLogger("hazlint.lsp")

MAX_BODY = 256 << 20          # bytes of one message; a larger Content-Length is not believed
MAX_HEADER_LINE = 8192
_HEADER = re.compile(rb"^[ \t]*content-length[ \t]*:[ \t]*([0-9]{1,12})[ \t]*$", re.I)
_START = re.compile(rb"content-length[ \t]*:", re.I)
INVALID_REQUEST = -32600


class LockedWriter:
    """The protocol's output stream, one whole write at a time (pygls and the filter both
    write frames)."""

    def __init__(self, stream):
        self.stream = stream
        self.lock = threading.Lock()

    def write(self, data: bytes) -> None:
        with self.lock:
            self.stream.write(data)
            self.stream.flush()

    def flush(self) -> None:
        pass

    def close(self) -> None:
        self.stream.close()


def error_frame(msg_id, message: str, code: int = INVALID_REQUEST) -> bytes:
    body = json.dumps({"jsonrpc": "2.0", "id": msg_id,
                       "error": {"code": code, "message": message}}).encode("utf-8")
    return b"Content-Length: %d\r\n\r\n" % len(body) + body


class FramedReader:
    """``readline()``/``read(n)`` over ``raw`` that only ever yield well-formed frames.
    ``answer(bytes)`` writes a reply frame (to a malformed request)."""

    def __init__(self, raw, answer: Callable[[bytes], None] | None = None):
        self.raw = raw
        self.answer = answer
        self.buf = bytearray()        # raw bytes not yet framed
        self.out = bytearray()        # well-formed frames not yet handed out
        self.eof = False
        self._read = getattr(raw, "read1", None) or raw.read
        self.skipped = 0              # malformed frames and junk runs dropped (for tests)

    # -- what pygls calls ------------------------------------------------------------------
    def readline(self) -> bytes:
        while b"\n" not in self.out:
            if not self._next_frame():
                break
        i = self.out.find(b"\n")
        i = len(self.out) if i < 0 else i + 1
        line = bytes(self.out[:i])
        del self.out[:i]
        return line

    def read(self, n: int = -1) -> bytes:
        while n < 0 or len(self.out) < n:
            if not self._next_frame():
                break
        n = len(self.out) if n < 0 else n
        data = bytes(self.out[:n])
        del self.out[:n]
        return data

    # -- framing -------------------------------------------------------------------------------
    def _fill(self) -> bool:
        if self.eof:
            return False
        try:
            chunk = self._read(65536)
        except (OSError, ValueError):
            chunk = b""
        if not chunk:
            self.eof = True
            return False
        self.buf += chunk
        return True

    def _line(self) -> bytes | None:
        """One header line (without its end), None at the end of the stream. A line longer
        than :data:`MAX_HEADER_LINE` is junk: it comes back whole, to be skipped."""
        while True:
            i = self.buf.find(b"\n")
            if i >= 0:
                line = bytes(self.buf[:i])
                del self.buf[:i + 1]
                return line.rstrip(b"\r")
            if len(self.buf) > MAX_HEADER_LINE:
                line = bytes(self.buf)
                self.buf.clear()
                return line
            if not self._fill():
                if self.buf:
                    line = bytes(self.buf)
                    self.buf.clear()
                    return line
                return None

    def _next_frame(self) -> bool:
        """Move one message into ``out``; False at the end of the stream."""
        while True:
            length, seen_header, bad = None, False, False
            while True:
                line = self._line()
                if line is None:
                    return False
                if not line.strip():
                    if seen_header or bad:
                        break
                    continue                      # blank lines between frames
                m = _HEADER.match(line)
                if m:
                    seen_header = True
                    length = int(m.group(1))
                elif b":" in line and len(line) < 1024 and not line.lstrip().startswith(b"{"):
                    seen_header = True            # another header (Content-Type, or junk)
                    if _START.search(line):
                        bad = True                # a Content-Length that is not a number
                else:
                    bad = True                    # not a header at all
                    self._skip_to_header(line)
                    length, seen_header, bad = None, False, False
            if length is not None and not bad and length <= MAX_BODY:
                while len(self.buf) < length:
                    if not self._fill():
                        return False
                body = bytes(self.buf[:length])
                del self.buf[:length]
                self.out += b"Content-Length: %d\r\n\r\n" % length + body
                return True
            self._recover()

    def _skip_to_header(self, junk: bytes) -> None:
        """Junk where a header should be: drop it up to the next ``Content-Length:``."""
        self.skipped += 1
        log.warning("skipped %d bytes that are not an LSP frame", len(junk))
        m = _START.search(junk)
        if m:
            self.buf[:0] = junk[m.start():] + b"\n"

    def _recover(self) -> None:
        """The header block lacked a usable Content-Length: take the body as one JSON value
        if there is one, answer it when it is a request, and go on after it."""
        self.skipped += 1
        while True:
            text = self.buf.decode("latin-1")     # one char per byte: offsets stay byte offsets
            start = len(text) - len(text.lstrip())
            nxt = _START.search(self.buf, start)
            scan = text[:nxt.start()] if nxt else text
            try:
                value, end = json.JSONDecoder().raw_decode(scan, start)
            except json.JSONDecodeError as exc:
                incomplete = nxt is None and (exc.pos >= len(scan.rstrip()) - 1
                                              or exc.msg.startswith("Unterminated"))
                if incomplete and len(self.buf) <= MAX_BODY and self._fill():
                    continue
                # not JSON: drop everything up to the next header
                cut = nxt.start() if nxt else len(self.buf)
                del self.buf[:cut]
                log.warning("skipped a frame without a valid Content-Length header")
                return
            except RecursionError:
                value, end = None, len(scan)
            del self.buf[:end]
            msg_id = value.get("id") if isinstance(value, dict) else None
            if isinstance(value, dict) and "method" in value and msg_id is not None \
                    and self.answer is not None:
                self.answer(error_frame(msg_id, "malformed frame: the Content-Length header "
                                                "is missing or not a number; request ignored"))
            log.warning("skipped a frame without a valid Content-Length header")
            return
