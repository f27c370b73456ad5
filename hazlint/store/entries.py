"""Cache entries on disk: the folder, the entry frame and its checks, the size limit.

Every kind of cached thing (:mod:`.parse`, :mod:`.design`, :mod:`.result`, :mod:`.report`)
is stored as entries of this form, through :class:`hazlint.store.parse.ParseCache`.

Why JSON and nothing else: a cache directory can end up somewhere a pull request can write (a CI
workspace, a shared checkout). Loading an entry must never execute code, so entries are plain JSON
read with :func:`json.loads`; the IR module rebuilds only its own dataclasses from it
(:func:`hazlint.ir.from_json`).

Layout: ``<dir>/<namespace>/<key[:2]>/<key>.json``, one file per entry::

    {"format":2,"hazlint":"0.1.0+...","key":"<hex>","deps":{"<path>":"<sha256>"},
     "digest":"<sha256 of the key, a newline and the data bytes>","data":{...}}

An entry cannot lie: it records the key it was stored under and a digest of that key and its
own ``data`` bytes, and both are checked before the data is decoded. An entry that fails any check (wrong
key, wrong digest, not a regular file, not ours, a symbolic link, not JSON, a missing field) is
removed and recomputed, and the first such entry of a run is mentioned at debug level (logger
``hazlint.cache``; ``HAZLINT_DEBUG=1`` shows it). Reading opens without following links and
without blocking, so a FIFO planted as an entry cannot hang a run.

Ownership: every folder of the cache (the root, the namespaces, the key prefixes; and any
parent the cache creates) is made mode 0700 whatever the umask, every folder from the root to
an entry must belong to the user running hazlint, and an entry file owned by another user is
refused: on a shared machine nobody else can plant a report for your next run.

``deps`` lists files the entry was derived from besides the one hashed into the key (files pulled
in through ``include``): an entry whose dependency changed on disk is a miss, so an edit to a
header invalidates every file that includes it even though the including file's own text did not
change. Writes are atomic (temporary file in the same folder, then :func:`os.replace`), so a reader
running in parallel never sees half an entry. Entries that cannot be read back (truncated, not
JSON, wrong shape, wrong key) are removed and treated as misses.

The default directory is per user (``platformdirs.user_cache_dir("hazlint")``); the environment
variable ``HAZLINT_CACHE_DIR`` or the ``directory`` argument override it.

Size: the whole folder (every namespace) is kept under a limit, ``DEFAULT_LIMIT_MB`` unless the
configuration (``cache_limit_mb``) or ``HAZLINT_CACHE_LIMIT_MB`` says otherwise; 0 means no
limit. After a store, at most once a minute per folder and process, the least recently used
entries (a hit refreshes an entry's modification time) are removed until the folder is back
under 80% of the limit. The entry just written is never removed.
"""
from __future__ import annotations

import json
import logging
import os
import re
from pathlib import Path
from typing import Mapping

from .files import digest_bytes

FORMAT = 2
ENV_DIR = "HAZLINT_CACHE_DIR"
ENV_LIMIT = "HAZLINT_CACHE_LIMIT_MB"
DEFAULT_LIMIT_MB = 2048
PRUNE_INTERVAL = 60.0                  # seconds between size checks of one folder


def cache_limit_mb(configured: int | None = None) -> int:
    """The size limit in MB: the configured value, else the environment's, else the default."""
    if configured is not None:
        return int(configured)
    env = os.environ.get(ENV_LIMIT)
    if env:
        try:
            return max(0, int(env))
        except ValueError:
            pass
    return DEFAULT_LIMIT_MB


def prune(directory: str | os.PathLike, limit_mb: int, keep: Path | None = None) -> int:
    """Remove least recently used entries until ``directory`` holds at most 80% of
    ``limit_mb``; returns how many were removed. ``keep`` is never removed."""
    if limit_mb <= 0:
        return 0
    entries = []
    total = 0
    for root, _dirs, files in os.walk(directory):
        for f in files:
            if not f.endswith((".json", ".txt")):      # entries and report texts
                continue
            p = os.path.join(root, f)
            try:
                st = os.stat(p)
            except OSError:
                continue
            total += st.st_size
            entries.append((st.st_mtime, st.st_size, p))
    limit = limit_mb * 1024 * 1024
    if total <= limit:
        return 0
    goal = int(limit * 0.8)
    removed = 0
    keep_s = str(keep) if keep is not None else None
    for _mtime, size, p in sorted(entries):
        if total <= goal:
            break
        if p == keep_s:
            continue
        try:
            os.unlink(p)
        except OSError:
            continue
        total -= size
        removed += 1
    return removed


HEX_KEY = re.compile(r"[0-9a-f]{16,128}")
log = logging.getLogger("hazlint.cache")


def _payload_digest(key: str, payload: bytes) -> str:
    """The digest an entry records: over the key it is stored under and its data bytes, so
    neither a changed byte nor an entry copied under another key passes."""
    return digest_bytes(key.encode("utf-8", "surrogateescape") + b"\n" + payload)


def entry_text(key: str, version: str, deps: Mapping[str, str], payload: str) -> str:
    head = json.dumps({"format": FORMAT, "hazlint": version, "key": key, "deps": dict(deps),
                       "digest": _payload_digest(key, payload.encode("utf-8"))},
                      separators=(",", ":"))
    return head[:-1] + ',"data":' + payload + "}"


def split_entry(raw: bytes) -> tuple[dict, bytes]:
    """(header, data bytes) of an entry written by :func:`entry_text`, checked: the header
    must be exactly what the writer produces for its fields and the data must have the
    recorded digest. Raises ``ValueError`` otherwise; the data itself is not decoded."""
    cut = raw.find(b',"data":')
    if cut < 0 or not raw.endswith(b"}"):
        raise ValueError("not an entry")
    head = json.loads(raw[:cut] + b"}")
    if not isinstance(head, dict) or set(head) != {"format", "hazlint", "key", "deps",
                                                   "digest"}:
        raise ValueError("entry header has other fields")
    again = json.dumps(head, separators=(",", ":"))[:-1] + ',"data":'
    if raw[:cut + 8] != again.encode("utf-8"):
        raise ValueError("entry header is not in the written form")
    data = raw[cut + 8:-1]
    if not isinstance(head["key"], str) or _payload_digest(head["key"], data) != head["digest"]:
        raise ValueError("the data does not have the recorded digest")
    return head, data


def default_cache_dir() -> Path:
    env = os.environ.get(ENV_DIR)
    if env:
        return Path(env).expanduser()
    try:
        import platformdirs
        return Path(platformdirs.user_cache_dir("hazlint", appauthor=False))
    except ImportError:  # pragma: no cover - platformdirs is a dependency
        return Path.home() / ".cache" / "hazlint"

