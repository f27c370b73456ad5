"""The parse cache: one JSON entry per source file (its IR), and the entry store every other
kind of cached thing uses (:class:`ParseCache` with a namespace). The entry form, its checks and
the folder rules are in :mod:`.entries` and :mod:`.files`."""
from __future__ import annotations

import json
import os
import sys
import time
from pathlib import Path
from typing import Any, Iterable, Mapping

from . import entries
from .entries import (FORMAT, HEX_KEY, cache_limit_mb, default_cache_dir, entry_text,
                      log, prune, split_entry)
from .files import atomic_write, digest_bytes, digest_file, private_dirs, read_private
from .keys import reader_stamp

_last_prune: dict[str, float] = {}


class ParseCache:
    """JSON entry store with ``load(key) -> dict | None`` and ``store(key, dict)``.

    ``enabled=False`` gives a cache that never hits and never writes (``--no-cache``). Counters
    ``hits``, ``misses``, ``stores`` and ``dropped`` (corrupted entries removed) are kept for
    tests and benchmarks.
    """

    def __init__(self, directory: str | os.PathLike | None = None, *, enabled: bool = True,
                 namespace: str = "parse", version: str | None = None,
                 limit_mb: int | None = None):
        self.directory = Path(directory).expanduser() if directory else default_cache_dir()
        self.namespace = namespace
        self.limit_mb = cache_limit_mb(limit_mb)
        self.pruned = 0
        self.version = version if version is not None else reader_stamp()
        self.enabled = enabled
        self.hits = self.misses = self.stores = self.dropped = 0
        self.warning: str | None = None
        self._said = False
        if enabled:
            self._check_owner()

    # ------------------------------------------------------------------------------------------
    def _check_owner(self) -> None:
        """Refuse a cache folder that is not ours (owner, type) anywhere from the root down to
        this namespace: entries in it could be planted. Folders that are ours but open to
        others are made private again."""
        try:
            private_dirs(self.directory, self.directory / self.namespace, create=False)
        except OSError as exc:
            self.enabled = False
            self.warning = (f"hazlint: not using cache folder {self.directory}: "
                            f"{exc.filename}: {exc.strerror}")
            print(self.warning, file=sys.stderr)

    def _entry_path(self, key: str) -> Path:
        if not HEX_KEY.fullmatch(key):
            # keys are meant to be sha256 hex; anything else is hashed so it cannot name a path
            key = digest_bytes(key.encode("utf-8", "surrogateescape"))
        return self.directory / self.namespace / key[:2] / f"{key}.json"

    def _drop(self, path: Path, why: str = "unreadable") -> None:
        self.dropped += 1
        if not self._said:
            self._said = True
            log.debug("cache entry %s ignored and removed (%s); it is recomputed", path, why)
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
            if not private_dirs(self.directory, path.parent, create=False):
                self.misses += 1
                return None
            raw = read_private(path)
        except FileNotFoundError:
            self.misses += 1
            return None
        except OSError as exc:
            self._drop(path, exc.strerror or "not ours")
            self.misses += 1
            return None
        try:
            head, payload = split_entry(raw)
            if head["key"] != key:
                raise ValueError("stored under another key")
            if head["format"] != FORMAT or not isinstance(head["deps"], dict):
                raise ValueError("not an entry of this format")
            if head["hazlint"] != self.version:
                self.misses += 1       # written by another version: stale, not corrupt
                return None
            data = json.loads(payload)
            if not isinstance(data, dict):
                raise ValueError("the data is not a table")
        except (ValueError, UnicodeDecodeError, RecursionError) as exc:
            self._drop(path, str(exc) or type(exc).__name__)
            self.misses += 1
            return None
        for dep, want in head["deps"].items():
            if digest_file(dep) != want:
                self.misses += 1   # an included file changed since the entry was written
                return None
        self.hits += 1
        try:
            os.utime(path)         # recently used: the size limit removes the oldest first
        except OSError:
            pass
        return data

    def discard(self, key: str) -> None:
        """Remove an entry the caller could not use (well-formed JSON, unusable content)."""
        if self.enabled:
            path = self._entry_path(key)
            if os.path.lexists(path):
                self._drop(path, "its content is not usable")

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
        path = self._entry_path(key)
        try:
            payload = json.dumps(data, separators=(",", ":"))
        except (TypeError, ValueError, RecursionError):
            return              # not JSON-able: a programming error upstream; never pickle
        text = entry_text(key, self.version, dep_map, payload)
        try:
            private_dirs(self.directory, path.parent, create=True)
            atomic_write(path, lambda fh: fh.write(text))
        except OSError:
            return              # read-only, full disk or not ours: caching is best effort
        self.stores += 1
        self._maybe_prune(path)

    def _maybe_prune(self, written: Path) -> None:
        if self.limit_mb <= 0:
            return
        key = str(self.directory)
        now = time.monotonic()
        if now - _last_prune.get(key, -entries.PRUNE_INTERVAL) < entries.PRUNE_INTERVAL:
            return
        _last_prune[key] = now
        self.pruned += prune(self.directory, self.limit_mb, keep=written)

    def clear(self) -> int:
        """Remove every entry of this namespace; returns how many files were removed."""
        root = self.directory / self.namespace
        n = 0
        if root.is_dir():
            for p in [*root.rglob("*.json"), *root.rglob("*.txt")]:
                try:
                    p.unlink()
                    n += 1
                except OSError:
                    pass
        return n


def open_cache(directory: str | os.PathLike | None = None, *, enabled: bool = True,
               namespace: str = "parse", limit_mb: int | None = None,
               version: str | None = None) -> ParseCache | None:
    """The cache for a run: ``None`` when disabled (callers then skip caching entirely)."""
    if not enabled:
        return None
    cache = ParseCache(directory, namespace=namespace, limit_mb=limit_mb, version=version)
    return cache if cache.enabled else None


# ---------------------------------------------------------------------------------------------
