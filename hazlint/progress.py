"""A progress line on the terminal for long runs.

The reader calls ``progress(done, total, path)`` after each file. :class:`Progress` draws one line
on **stderr only**, and only when stderr is a terminal and the run has already taken longer than
``delay`` seconds, so short runs and machine-readable output (JSON, SARIF on stdout, files) are
never touched. ``close()`` erases the line.
"""
from __future__ import annotations

import os
import sys
import time
from typing import Callable, TextIO

ProgressFn = Callable[[int, int, str], None]


class Progress:
    def __init__(self, stream: TextIO | None = None, *, delay: float = 2.0,
                 label: str = "parsing", force: bool = False,
                 clock: Callable[[], float] = time.monotonic):
        self.stream = stream if stream is not None else sys.stderr
        self.delay = delay
        self.label = label
        self.clock = clock
        self.start = clock()
        self.active = force or _is_terminal(self.stream)
        self.shown = False
        self._last_draw = -1.0
        self._width = 0

    def __call__(self, done: int, total: int, path: str = "") -> None:
        if not self.active:
            return
        now = self.clock()
        if now - self.start < self.delay:
            return
        if self.shown and done < total and now - self._last_draw < 0.1:
            return          # redraw at most ten times a second
        self._last_draw = now
        name = os.path.basename(path) if path else ""
        pct = int(100 * done / total) if total else 100
        text = f"hazlint: {self.label} {done}/{total} ({pct}%) {name}"
        cols = _columns(self.stream)
        text = text[: max(10, cols - 1)]
        pad = " " * max(0, self._width - len(text))
        self.stream.write("\r" + text + pad)
        self.stream.flush()
        self._width = len(text)
        self.shown = True

    def close(self) -> None:
        if self.shown:
            self.stream.write("\r" + " " * self._width + "\r")
            self.stream.flush()
            self.shown = False

    def __enter__(self) -> "Progress":
        return self

    def __exit__(self, *exc) -> None:
        self.close()


def _is_terminal(stream: TextIO) -> bool:
    try:
        return stream.isatty()
    except (AttributeError, ValueError):
        return False


def _columns(stream: TextIO) -> int:
    try:
        return os.get_terminal_size(stream.fileno()).columns
    except (AttributeError, OSError, ValueError):
        return 80


def terminal_progress(enabled: bool = True, label: str = "parsing") -> Progress | None:
    """A :class:`Progress` for stderr, or None when it would never draw (not a terminal)."""
    if not enabled or not _is_terminal(sys.stderr):
        return None
    return Progress(sys.stderr, label=label)
