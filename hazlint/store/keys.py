"""Cache keys and code stamps: what decides whether a cached thing is still valid.

:func:`make_key` hashes what parsing a file depends on; :func:`reader_stamp` stamps the front
ends' source files (an edited reader invalidates parsed IR), :func:`code_stamp` every source
file of hazlint and its built-in rules plus the networkx version (an edited analysis invalidates
designs, results and reports). The other keys (``design_key``, ``result_key``) live with the
thing they key (:mod:`.design`, :mod:`.result`).
"""
from __future__ import annotations

import hashlib
import importlib.util
import json
import os
from pathlib import Path
from typing import Any, Iterable, Mapping

from .. import __version__
from .entries import FORMAT

PACKAGE = Path(__file__).resolve().parent.parent     # the hazlint package folder


def make_key(content: str | bytes, *, defines: Mapping[str, Any] | None = None,
             include_dirs: Iterable[str] = (), included: Mapping[str, str | bytes] | None = None,
             version: str = __version__, extra: Any = None) -> str:
    """sha256 over everything that decides what parsing a file yields.

    ``content`` is the file's text, ``included`` the text of files it includes (when known up
    front; otherwise record them as ``deps`` on :meth:`ParseCache.store`), ``defines`` the
    command-line macros, ``include_dirs`` the search path (order matters), ``version`` the
    hazlint version (a new reader may build different IR from the same text).
    """
    h = hashlib.sha256()

    def part(tag: str, data: str | bytes) -> None:
        b = data.encode("utf-8", "surrogateescape") if isinstance(data, str) else data
        h.update(tag.encode() + b"\0" + str(len(b)).encode() + b"\0" + b)

    part("format", str(FORMAT))
    part("version", version)
    part("content", content)
    for name, text in sorted((included or {}).items()):
        part("include-name", name)
        part("include", text)
    part("defines", json.dumps(sorted((str(k), None if v is None else str(v))
                                      for k, v in (defines or {}).items())))
    part("include-dirs", json.dumps([os.fspath(d) for d in include_dirs]))
    if extra is not None:
        part("extra", json.dumps(extra, sort_keys=True, default=str))
    return h.hexdigest()



def _stamp_files(h, root: Path, folders=None) -> None:
    """Add (relative name, size, mtime) of the ``.py`` files under ``root`` to ``h``: every
    folder below it, or only ``folders`` (relative, not recursive) when given."""
    if folders is None:
        walk = os.walk(root)
    else:
        walk = []
        for f in folders:
            try:
                names = [e.name for e in os.scandir(root / f) if e.is_file()]
            except OSError:
                continue
            walk.append((str(root / f), [], names))
    for dirpath, dirnames, filenames in walk:
        dirnames[:] = sorted(d for d in dirnames if d != "__pycache__")
        for name in sorted(filenames):
            if name.endswith(".py"):
                try:
                    st = os.stat(os.path.join(dirpath, name))
                except OSError:
                    continue
                rel = os.path.relpath(os.path.join(dirpath, name), root)
                h.update(f"{rel}\0{st.st_size}\0{st.st_mtime_ns}\0".encode(
                    "utf-8", "surrogateescape"))


def reader_stamp() -> str:
    """The hazlint version plus a stamp of the front ends' own source files (name, size,
    mtime).

    The version alone is not enough while hazlint itself is being edited (a development
    checkout keeps one version number across many reader changes); an entry written by
    different reader code is then a miss rather than stale IR.
    """
    h = hashlib.sha256(__version__.encode())
    _stamp_files(h, PACKAGE, ("frontends", "frontends/verilog", "frontends/slang"))
    return f"{__version__}+{h.hexdigest()[:16]}"


_STAMP: str | None = None


def _networkx_version() -> str:
    # from the installed distribution's metadata: a cached report needs no networkx import
    from importlib import metadata
    try:
        return metadata.version("networkx")
    except metadata.PackageNotFoundError:
        import networkx
        return networkx.__version__



def code_stamp() -> str:
    """hazlint's version plus a stamp (file name, size, mtime) of every ``.py`` file of the
    ``hazlint`` package and of the built-in rules package: an entry written by other code is a
    miss, even in a development checkout that keeps its version number."""
    global _STAMP
    if _STAMP is None:
        h = hashlib.sha256(__version__.encode())
        h.update(_networkx_version().encode())
        roots = [PACKAGE]
        spec = importlib.util.find_spec("hazlint_rules")
        if spec is not None and spec.submodule_search_locations:
            roots += [Path(p) for p in spec.submodule_search_locations]
        for root in roots:
            h.update(b"\0root\0" + str(root).encode("utf-8", "surrogateescape"))
            _stamp_files(h, root)
        _STAMP = f"{__version__}+{h.hexdigest()[:16]}"
    return _STAMP
