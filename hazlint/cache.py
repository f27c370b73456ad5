"""A cache of parsed sources (and other per-run products), stored as JSON.

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

import hashlib
import json
import logging
import os
import re
import sys
import time
from pathlib import Path
from typing import Any, Iterable, Mapping

from . import __version__
from .filestore import (Untrusted, atomic_write, digest_bytes, digest_file,  # noqa: F401
                        digest_stream, open_private, private_dirs, read_private)
# (re-exported: the cache's file rules are in hazlint.filestore)

FORMAT = 2
ENV_DIR = "HAZLINT_CACHE_DIR"
ENV_LIMIT = "HAZLINT_CACHE_LIMIT_MB"
DEFAULT_LIMIT_MB = 2048
PRUNE_INTERVAL = 60.0                  # seconds between size checks of one folder
_last_prune: dict[str, float] = {}


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
_HEX_KEY = re.compile(r"[0-9a-f]{16,128}")
log = logging.getLogger("hazlint.cache")


def _payload_digest(key: str, payload: bytes) -> str:
    """The digest an entry records: over the key it is stored under and its data bytes, so
    neither a changed byte nor an entry copied under another key passes."""
    return digest_bytes(key.encode("utf-8", "surrogateescape") + b"\n" + payload)


def _entry_text(key: str, version: str, deps: Mapping[str, str], payload: str) -> str:
    head = json.dumps({"format": FORMAT, "hazlint": version, "key": key, "deps": dict(deps),
                       "digest": _payload_digest(key, payload.encode("utf-8"))},
                      separators=(",", ":"))
    return head[:-1] + ',"data":' + payload + "}"


def _split_entry(raw: bytes) -> tuple[dict, bytes]:
    """(header, data bytes) of an entry written by :func:`_entry_text`, checked: the header
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
    for folder in (here / "frontends", here / "frontends" / "verilog", here / "frontends" / "slang"):
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
                 namespace: str = "parse", version: str | None = None,
                 limit_mb: int | None = None):
        self.directory = Path(directory).expanduser() if directory else default_cache_dir()
        self.namespace = namespace
        self.limit_mb = cache_limit_mb(limit_mb)
        self.pruned = 0
        self.version = version if version is not None else code_stamp()
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
        if not _HEX_KEY.fullmatch(key):
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
            head, payload = _split_entry(raw)
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
        text = _entry_text(key, self.version, dep_map, payload)
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
        if now - _last_prune.get(key, -PRUNE_INTERVAL) < PRUNE_INTERVAL:
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
# Positional JSON encoding of a closed set of classes (the IR, the flattened design)

CODEC_FORMAT = 1

# tags: the first element of a JSON list, when it is an int (never a bool)
#   i >= 0        instance of class i: [i, field values in the class table's order...]
#                 (an enum: [i, value])
#   T_LIST        a Python list:    [-1, items...]
#   T_TUPLE       a tuple whose first item is an int: [-2, items...]; any other tuple is the
#                 plain JSON list of its items (expressions, the common case, carry no tag)
#   T_DICT        a dict:           [-3, key, value, key, value...]
#   T_SHARED      a shared value:   [-4, index into the entry's "shared" table]
T_LIST, T_TUPLE, T_DICT, T_SHARED = -1, -2, -3, -4


class CodecError(ValueError):
    """An object the codec cannot encode, or an encoded document it cannot decode."""


class Codec:
    """Encode and decode plain data plus instances of ``classes`` as compact JSON values.

    Field names are written once per document (a class table ``[[name, [field, ...]], ...]``),
    never per object, so an instance is a JSON list ``[class index, value, ...]``. Lists,
    tuples and dicts keep their Python type through a round trip. Instances of ``shared``
    classes (frozen, hashable values such as delays) are written once into a table and
    referenced by index; decoding gives one object per distinct value. ``interned`` maps a
    class to field names whose string values go through a string table (file paths repeated
    in every location).

    Decoding builds only the registered classes (by table lookup, never by a name taken from
    the document to import something) and calls nothing else: loading an entry cannot run
    code. An entry written when a class had other fields is decoded by field name when the
    current class still has every field it names, and rejected (:class:`CodecError`) otherwise.
    """

    def __init__(self, classes: Iterable[type], shared: Iterable[type] = (),
                 interned: Mapping[type, Iterable[str]] | None = None):
        import dataclasses
        import enum
        self.classes = list(classes)
        self.index = {c: i for i, c in enumerate(self.classes)}
        self.by_name = {c.__name__: c for c in self.classes}
        self.shared = frozenset(shared)
        self.is_enum = {c: isinstance(c, type) and issubclass(c, enum.Enum) for c in self.classes}
        self.fields = {c: () if self.is_enum[c] else tuple(f.name for f in dataclasses.fields(c))
                       for c in self.classes}
        interned = interned or {}
        self.interned = {c: tuple(self.fields[c].index(n) for n in interned.get(c, ()))
                         for c in self.classes}

    # ------------------------------------------------------------------------------------------
    def encode(self, obj: Any) -> dict:
        """``{"codec": n, "classes": [...], "strings": [...], "shared": [...], "root": ...}``"""
        state = _EncodeState()
        root = self._enc(obj, state)
        return {"codec": CODEC_FORMAT,
                "classes": [[c.__name__, list(self.fields[c])] for c in self.classes],
                "strings": state.strings, "shared": state.shared, "root": root}

    def encode_value(self, obj: Any, state: "_EncodeState") -> Any:
        return self._enc(obj, state)

    def header(self, state: "_EncodeState") -> dict:
        return {"codec": CODEC_FORMAT,
                "classes": [[c.__name__, list(self.fields[c])] for c in self.classes],
                "strings": state.strings, "shared": state.shared}

    def _enc(self, x: Any, st: "_EncodeState") -> Any:
        t = type(x)
        if t is str or t is int or t is float or t is bool or x is None:
            return x
        if t is tuple:
            items = [self._enc(v, st) for v in x]
            if items and type(x[0]) is int:
                items.insert(0, T_TUPLE)
            return items
        if t is list:
            return [T_LIST, *[self._enc(v, st) for v in x]]
        if t is dict:
            out = [T_DICT]
            for k, v in x.items():
                out.append(self._enc(k, st))
                out.append(self._enc(v, st))
            return out
        i = self.index.get(t)
        if i is None:
            raise CodecError(f"cannot encode a {t.__name__} value")
        if self.is_enum[t]:
            return [i, x.value]
        if t in self.shared:
            j = st.shared_index.get(x)
            if j is None:
                # fields first: a shared value inside gets the lower index, so decoding the
                # table in order always finds what an entry refers to
                encoded = self._enc_fields(x, t, i, st)
                j = st.shared_index[x] = len(st.shared)
                st.shared.append(encoded)
            return [T_SHARED, j]
        return self._enc_fields(x, t, i, st)

    def _enc_fields(self, x, t, i, st) -> list:
        out = [i]
        interned = self.interned[t]
        for k, name in enumerate(self.fields[t]):
            v = getattr(x, name)
            if k in interned and type(v) is str:
                out.append(st.string(v))
            else:
                out.append(self._enc(v, st))
        return out

    # ------------------------------------------------------------------------------------------
    def decoder(self, doc: Mapping[str, Any]) -> "_Decoder":
        """A decoder for values encoded with the header ``doc`` (class table, strings,
        shared values). Raises :class:`CodecError` when the document does not fit."""
        return _Decoder(self, doc)

    def decode(self, doc: Mapping[str, Any]) -> Any:
        dec = self.decoder(doc)
        return dec(doc.get("root"))


class _EncodeState:
    def __init__(self):
        self.strings: list[str] = []
        self.string_index: dict[str, int] = {}
        self.shared: list = []
        self.shared_index: dict = {}

    def string(self, s: str) -> int:
        i = self.string_index.get(s)
        if i is None:
            i = self.string_index[s] = len(self.strings)
            self.strings.append(s)
        return i


class _Decoder:
    def __init__(self, codec: Codec, doc: Mapping[str, Any]):
        if not isinstance(doc, Mapping) or doc.get("codec") != CODEC_FORMAT:
            raise CodecError("not an entry of this codec format")
        table = doc.get("classes")
        strings = doc.get("strings", [])
        if not isinstance(table, list) or not isinstance(strings, list):
            raise CodecError("malformed class table")
        self.strings = strings
        # per class index of the document: (constructor taking the positional values)
        makers = []
        for row in table:
            if (not isinstance(row, list) or len(row) != 2 or not isinstance(row[0], str)
                    or not isinstance(row[1], list)):
                raise CodecError("malformed class table")
            cls = codec.by_name.get(row[0])
            if cls is None:
                raise CodecError(f"unknown class '{row[0]}'")
            makers.append(self._maker(codec, cls, tuple(row[1])))
        self.makers = makers
        self.shared: list = []
        self._dec = self._make_dec()
        shared = doc.get("shared", [])
        if not isinstance(shared, list):
            raise CodecError("malformed shared table")
        for v in shared:
            # shared values may refer to earlier shared values only (encode order)
            self.shared.append(self(v))

    def _maker(self, codec: Codec, cls, names: tuple):
        if codec.is_enum[cls]:
            def make_enum(args, _c=cls):
                try:
                    return _c(args[0])
                except (ValueError, IndexError):
                    raise CodecError(f"{_c.__name__}: bad value") from None
            return make_enum
        have = codec.fields[cls]
        strings = self.strings
        if names == have:
            positions = codec.interned[cls]
        else:
            if not set(names) <= set(have):
                raise CodecError(f"{cls.__name__}: the entry names fields this code lacks")
            positions = tuple(k for k, nm in enumerate(names)
                              if have.index(nm) in codec.interned[cls])
        n = len(names)

        def make(args, _n=n, _new=object.__new__, _c=cls, _names=names, _pos=positions,
                 _exact=names == have):
            if len(args) != _n:
                raise CodecError(f"{_c.__name__}: wrong number of fields")
            for k in _pos:
                try:
                    args[k] = strings[args[k]]
                except (IndexError, TypeError):
                    raise CodecError("string index out of range") from None
            if _exact:
                # every field is given: fill the instance directly (what the generated
                # __init__ would do, without its per-call overhead)
                obj = _new(_c)
                obj.__dict__.update(zip(_names, args))
                return obj
            # another layout of the class: the constructor gives new fields their defaults
            return _c(**dict(zip(_names, args)))
        return make

    def __call__(self, x: Any) -> Any:
        if type(x) is not list:
            return x
        return self._dec(x)

    def _make_dec(self):
        # the hot loop of a warm run: a closure over locals, scalars never recursed into
        makers = self.makers
        shared = self.shared
        _list, _int, _tuple = list, int, tuple

        def dec(x):
            if not x:
                return ()
            h = x[0]
            if type(h) is _int:
                vals = [dec(v) if type(v) is _list else v for v in x]
                if h >= 0:
                    vals[0:1] = ()
                    try:
                        return makers[h](vals)
                    except IndexError:
                        raise CodecError("class index out of range") from None
                del vals[0]
                if h == T_LIST:
                    return vals
                if h == T_TUPLE:
                    return _tuple(vals)
                if h == T_DICT:
                    if len(vals) % 2:
                        raise CodecError("a dict with a key but no value")
                    it = iter(vals)
                    return {(_hashable(k) if type(k) is _list else k): v for k, v in zip(it, it)}
                if h == T_SHARED:
                    try:
                        return shared[x[1]]
                    except (IndexError, TypeError):
                        raise CodecError("shared index out of range") from None
                raise CodecError(f"unknown tag {h}")
            return _tuple([dec(v) if type(v) is _list else v for v in x])
        return dec


def _hashable(x):
    return tuple(_hashable(i) for i in x) if isinstance(x, list) else x
