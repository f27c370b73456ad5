"""A cache of parsed sources (and other per-run products), stored as JSON.

Why JSON and nothing else: a cache directory can end up somewhere a pull request can write (a CI
workspace, a shared checkout). Loading an entry must never execute code, so entries are plain JSON
read with :func:`json.loads`; the IR module rebuilds only its own dataclasses from it
(:func:`hazlint.frontend.ir.from_json`).

Layout: ``<dir>/<namespace>/<key[:2]>/<key>.json``, one file per entry::

    {"format": 1, "hazlint": "0.1.0", "key": "<hex>", "deps": {"<path>": "<sha256>"},
     "data": {...}}

``deps`` lists files the entry was derived from besides the one hashed into the key (files pulled
in through ``include``): an entry whose dependency changed on disk is a miss, so an edit to a
header invalidates every file that includes it even though the including file's own text did not
change. Writes are atomic (temporary file in the same folder, then :func:`os.replace`), so a reader
running in parallel never sees half an entry. Entries that cannot be read back (truncated, not
JSON, wrong shape, wrong key) are removed and treated as misses.

The default directory is per user (``platformdirs.user_cache_dir("hazlint")``); the environment
variable ``HAZLINT_CACHE_DIR`` or the ``directory`` argument override it.
"""
from __future__ import annotations

import hashlib
import json
import os
import re
import sys
import tempfile
from pathlib import Path
from typing import Any, Iterable, Mapping

from . import __version__

FORMAT = 1
ENV_DIR = "HAZLINT_CACHE_DIR"
_HEX_KEY = re.compile(r"[0-9a-f]{16,128}")


def default_cache_dir() -> Path:
    env = os.environ.get(ENV_DIR)
    if env:
        return Path(env).expanduser()
    try:
        import platformdirs
        return Path(platformdirs.user_cache_dir("hazlint", appauthor=False))
    except ImportError:  # pragma: no cover - platformdirs is a dependency
        return Path.home() / ".cache" / "hazlint"


def digest_bytes(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def digest_file(path: str | os.PathLike) -> str | None:
    try:
        with open(path, "rb") as fh:
            return digest_bytes(fh.read())
    except OSError:
        return None


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


def code_stamp() -> str:
    """The hazlint version plus a stamp of the reader's own source files (name, size, mtime).

    The version alone is not enough while hazlint itself is being edited (a development
    checkout keeps one version number across many reader changes); an entry written by
    different reader code is then a miss rather than stale IR.
    """
    h = hashlib.sha256(__version__.encode())
    here = Path(__file__).resolve().parent
    for folder in (here / "frontend",):
        try:
            entries = sorted(os.scandir(folder), key=lambda e: e.name)
        except OSError:
            continue
        for e in entries:
            if e.name.endswith(".py"):
                st = e.stat()
                h.update(f"{e.name}\0{st.st_size}\0{st.st_mtime_ns}\0".encode())
    return f"{__version__}+{h.hexdigest()[:16]}"


class ParseCache:
    """JSON entry store with ``load(key) -> dict | None`` and ``store(key, dict)``.

    ``enabled=False`` gives a cache that never hits and never writes (``--no-cache``). Counters
    ``hits``, ``misses``, ``stores`` and ``dropped`` (corrupted entries removed) are kept for
    tests and benchmarks.
    """

    def __init__(self, directory: str | os.PathLike | None = None, *, enabled: bool = True,
                 namespace: str = "parse", version: str | None = None):
        self.directory = Path(directory).expanduser() if directory else default_cache_dir()
        self.namespace = namespace
        self.version = version if version is not None else code_stamp()
        self.enabled = enabled
        self.hits = self.misses = self.stores = self.dropped = 0
        self.warning: str | None = None
        if enabled:
            self._check_owner()

    # ------------------------------------------------------------------------------------------
    def _check_owner(self) -> None:
        """Refuse a cache folder that belongs to another user: its entries could be planted."""
        if not hasattr(os, "getuid"):
            return
        probe = self.directory
        while not probe.exists() and probe != probe.parent:
            probe = probe.parent
        try:
            st = probe.stat()
        except OSError:
            return
        if probe == self.directory and st.st_uid != os.getuid():
            self.enabled = False
            self.warning = (f"hazlint: not using cache folder {self.directory}: "
                            f"it belongs to another user")
            print(self.warning, file=sys.stderr)

    def _entry_path(self, key: str) -> Path:
        if not _HEX_KEY.fullmatch(key):
            # keys are meant to be sha256 hex; anything else is hashed so it cannot name a path
            key = digest_bytes(key.encode("utf-8", "surrogateescape"))
        return self.directory / self.namespace / key[:2] / f"{key}.json"

    def _drop(self, path: Path) -> None:
        self.dropped += 1
        try:
            path.unlink()
        except OSError:
            pass

    # ------------------------------------------------------------------------------------------
    def load(self, key: str) -> dict | None:
        if not self.enabled:
            return None
        path = self._entry_path(key)
        try:
            raw = path.read_bytes()
        except OSError:
            self.misses += 1
            return None
        try:
            entry = json.loads(raw)
        except (ValueError, UnicodeDecodeError):
            self._drop(path)
            self.misses += 1
            return None
        if (not isinstance(entry, dict) or entry.get("format") != FORMAT
                or entry.get("key") != key or not isinstance(entry.get("data"), dict)
                or not isinstance(entry.get("deps", {}), dict)):
            self._drop(path)
            self.misses += 1
            return None
        if entry.get("hazlint") != self.version:
            self.misses += 1       # written by another version: stale, not corrupt
            return None
        for dep, want in entry.get("deps", {}).items():
            if digest_file(dep) != want:
                self.misses += 1   # an included file changed since the entry was written
                return None
        self.hits += 1
        return entry["data"]

    def store(self, key: str, data: Mapping[str, Any],
              deps: Iterable[str] | Mapping[str, str] | None = None) -> None:
        """Write one entry atomically. ``deps``: files (or file -> sha256) the entry depends on
        besides the content in the key (the reader checks its own include digests, which also
        cover unsaved editor text, inside ``data``)."""
        if not self.enabled:
            return
        deps = deps or ()
        if isinstance(deps, Mapping):
            dep_map = {str(k): str(v) for k, v in deps.items()}
        else:
            dep_map = {}
            for p in deps:
                d = digest_file(p)
                if d is None:
                    return      # cannot pin a dependency: do not cache at all
                dep_map[str(p)] = d
        entry = {"format": FORMAT, "hazlint": self.version, "key": key, "deps": dep_map,
                 "data": data}
        path = self._entry_path(key)
        try:
            text = json.dumps(entry, separators=(",", ":"))
        except (TypeError, ValueError):
            return              # not JSON-able: a programming error upstream; never pickle
        try:
            path.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
            fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-", suffix=".json")
            try:
                with os.fdopen(fd, "w", encoding="utf-8") as fh:
                    fh.write(text)
                os.replace(tmp, path)
            except BaseException:
                try:
                    os.unlink(tmp)
                except OSError:
                    pass
                raise
        except OSError:
            return              # read-only or full disk: caching is best effort
        self.stores += 1

    def clear(self) -> int:
        """Remove every entry of this namespace; returns how many files were removed."""
        root = self.directory / self.namespace
        n = 0
        if root.is_dir():
            for p in root.rglob("*.json"):
                try:
                    p.unlink()
                    n += 1
                except OSError:
                    pass
        return n


def open_cache(directory: str | os.PathLike | None = None, *, enabled: bool = True,
               namespace: str = "parse") -> ParseCache | None:
    """The cache for a run: ``None`` when disabled (callers then skip caching entirely)."""
    if not enabled:
        return None
    cache = ParseCache(directory, namespace=namespace)
    return cache if cache.enabled else None
