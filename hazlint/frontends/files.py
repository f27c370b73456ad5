"""Reading source files, shared by every front end: the text of a file (or of an editor buffer),
its digest and the checkout it belongs to."""
from __future__ import annotations

import hashlib
import os
import stat

from ..errors import ParseError


def digest_text(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()


def read_text(path: str, texts: dict | None = None) -> str:
    """Contents of ``path``: from ``texts`` (editor buffers) if present there, else the file."""
    if texts:
        for key in (path, os.path.abspath(path)):
            if key in texts:
                return texts[key]
    try:
        # without blocking at open (a FIFO must not hang the run), and only a regular file
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise ParseError(f"cannot read file: {exc.strerror}", path=path) from None
    except ValueError:                     # a NUL in the name
        raise ParseError("cannot read file: the name holds a NUL character",
                         path=path.replace("\0", "\\0")) from None
    try:
        st = os.fstat(fd)
        if stat.S_ISDIR(st.st_mode):
            raise ParseError("cannot read file: is a directory", path=path)
        if not stat.S_ISREG(st.st_mode):
            raise ParseError("cannot read file: not a regular file", path=path)
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)
        with os.fdopen(fd, "rb") as fh:
            fd = -1
            data = fh.read()
    except OSError as exc:
        raise ParseError(f"cannot read file: {exc.strerror}", path=path) from None
    finally:
        if fd >= 0:
            os.close(fd)
    return data.decode("utf-8", "surrogateescape")


def repository_root(path: str) -> str | None:
    """The top folder of the version-control checkout holding ``path`` (the nearest folder
    upward with a ``.git`` entry), or None."""
    d = os.path.dirname(os.path.realpath(path))
    while True:
        if os.path.exists(os.path.join(d, ".git")):
            return d
        parent = os.path.dirname(d)
        if parent == d:
            return None
        d = parent
