"""Finished reports of the command line, cached by :func:`hazlint.api.report_key`."""
from __future__ import annotations

import os
from pathlib import Path
from typing import Iterable

from .files import atomic_write, digest_file, digest_stream, open_private, private_dirs
from .namespace import Namespace

# finished reports of the command line

REPORT_FORMAT = 2
REPORT_NAMESPACE = "report"


class ReportCache(Namespace):
    """The rendered report of a ``check`` run and the worst severity in it, by
    :func:`hazlint.api.report_key`, in namespace ``report``, stamped with :func:`code_stamp`.

    The report text is a file of its own beside the entry (``<key>.txt``; the entry records
    its size), written once by the renderer and copied from there, so a report of hundreds of
    megabytes is never held in memory or escaped into JSON. Files the design pulled in through
    ``include`` are dependencies of the entry: when one of them changed the entry is a miss. A
    hit lets a rerun on unchanged inputs print the same bytes without decoding the design or
    the findings. A report larger than a quarter of the cache's size limit is written, copied
    out and removed again (it would push everything else out of the cache)."""

    NAMESPACE = REPORT_NAMESPACE

    def _text_path(self, key: str) -> Path:
        return self.store_._entry_path(key).with_suffix(".txt")

    def load(self, key: str):
        """``(file, worst)``: the report opened for reading (text, UTF-8) and the highest
        severity (an int of :class:`~hazlint.diagnostics.Severity`) among its findings, None
        for none; or None on a miss. The report file must be a regular file of ours with the
        size and digest the entry recorded; otherwise entry and file are removed."""
        import io
        data = self.entry(key)
        if data is None:
            return None
        size, worst, digest = data.get("size"), data.get("worst"), data.get("digest")
        if (data.get("format") != REPORT_FORMAT or type(size) is not int
                or not (worst is None or type(worst) is int and 0 <= worst <= 2)
                or type(digest) is not str):
            self._drop_both(key)
            return None
        path = self._text_path(key)
        try:
            raw = open_private(path)
        except OSError:
            self._drop_both(key)
            return None
        try:
            if os.fstat(raw.fileno()).st_size != size or digest_stream(raw) != digest:
                raise OSError("the report file is not the one recorded")
            raw.seek(0)
            os.utime(path)
        except OSError:
            raw.close()
            self._drop_both(key)
            return None
        return io.TextIOWrapper(raw, encoding="utf-8", newline=""), worst

    def _drop_both(self, key: str) -> None:
        self.store_.discard(key)
        try:
            self._text_path(key).unlink()
        except OSError:
            pass

    def store(self, key: str, write, worst: int | None, deps: Iterable[str] = ()):
        """Run ``write(stream)`` into the report file for ``key`` and record the entry.
        Returns ``(path, keep)``: where the report is, and False when it is not to be kept
        (too large: the caller removes it after copying it out); None when nothing could be
        written (read-only or full disk) and the caller should render directly."""
        path = self._text_path(key)
        try:
            private_dirs(self.store_.directory, path.parent, create=True)
            atomic_write(path, write)
            size = path.stat().st_size
        except OSError:
            return None
        limit = self.store_.limit_mb * 1024 * 1024
        if limit and size > limit // 4:
            return path, False
        digest = digest_file(path)
        if digest is not None:
            self.store_.store(key, {"format": REPORT_FORMAT, "worst": worst, "size": size,
                                    "digest": digest}, deps=list(dict.fromkeys(deps)))
        return path, True


def open_report_cache(directory: str | os.PathLike | None = None, *,
                      limit_mb: int | None = None) -> ReportCache | None:
    c = ReportCache(directory, limit_mb=limit_mb)
    return c if c.enabled else None
