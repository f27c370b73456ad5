"""What every front end does around its own parser: the parse cache, worker processes, progress.

A front end is a function ``read_one(path, include_dirs, defines, root, texts) ->
ir.SourceFile`` (module-level, so worker processes can be handed it by name);
:func:`read_with` runs it over a list of files with the cache, ``jobs`` and ``progress`` the
callers ask for. ``key_extra`` (JSON-able) goes into every cache key, so two front ends never
share an entry. With ``tolerant`` a file that cannot be read comes back as a
:class:`~hazlint.ir.SourceFile` without modules, its error in ``SourceFile.error`` and
the module names a text scan finds (the elaborator decides whether the design needs it).
Nothing here imports a parser.
"""
from __future__ import annotations

import hashlib
import json
import os
import re
from typing import Callable

from .. import __version__
from ..errors import HazlintError, ParseError
from ..gcpause import collector_paused
from .. import ir
from .files import digest_text, read_text

CACHE_FORMAT = 2        # 2: positional IR (ir.to_compact)


def read_with(read_one: Callable, paths: list[str], include_dirs: list[str] = (),
              defines: dict[str, str] = None, root: str | None = None, jobs: int = 1,
              cache=None, texts: dict[str, str] = None,
              progress: Callable[[int, int, str], None] | None = None,
              key_extra=None, tolerant: bool = False) -> list[ir.SourceFile]:
    """``read_one`` over ``paths`` (see :func:`hazlint.frontends.verilog.reader.read_sources` for the
    arguments), results in input order; with ``jobs > 1`` in worker processes."""
    paths = [os.fspath(p) for p in paths]
    include_dirs = [os.fspath(d) for d in include_dirs]
    defines = dict(defines or {})
    texts = {os.path.abspath(k): v for k, v in (texts or {}).items()}
    # without a root the preprocessor bounds includes per file (the repository holding it,
    # else its folder; never the working directory)
    total = len(paths)
    results: list = [None] * total
    keys: list = [None] * total
    todo: list[int] = []
    done = 0
    for i, path in enumerate(paths):
        text = read_text(path, texts)
        if cache is not None:
            keys[i] = _cache_key(path, text, include_dirs, defines, root, key_extra)
            sf = _from_cache(cache, keys[i], texts)
            if sf is not None:
                results[i] = sf
                done += 1
                if progress:
                    progress(done, total, path)
                continue
        todo.append(i)
    config = (include_dirs, defines, root, texts)
    if jobs > 1 and len(todo) > 1:
        from concurrent.futures import ProcessPoolExecutor, as_completed
        with ProcessPoolExecutor(max_workers=min(jobs, len(todo))) as pool:
            futures = {pool.submit(_worker, read_one, paths[i], config): i for i in todo}
            errors = {}
            for fut in as_completed(futures):
                i = futures[fut]
                status, payload = fut.result()
                if status == "error":
                    errors[i] = payload
                    continue
                results[i] = ir.from_json(payload)
                done += 1
                if progress:
                    progress(done, total, paths[i])
        if errors and not tolerant:
            raise ParseError(**errors[min(errors)])     # the first failing file in input order
        for i, err in errors.items():
            results[i] = unread(paths[i], err, texts)
    else:
        for i in todo:
            try:
                results[i] = read_one(paths[i], include_dirs, defines, root, texts)
            except HazlintError as exc:
                if not tolerant:
                    raise
                results[i] = unread(paths[i], _error_dict(exc), texts)
            done += 1
            if progress:
                progress(done, total, paths[i])
    if cache is not None:
        for i in todo:
            if results[i].error is None:
                _to_cache(cache, keys[i], results[i], texts)
    return results


_DEFINES = re.compile(r"^\s*(?:macromodule|module|primitive)\s+(\\\S+|[A-Za-z_][\w$]*)", re.M)
_COMMENTS = re.compile(r"//[^\n]*|/\*[\s\S]*?\*/")


def scan_definitions(text: str) -> list[str]:
    """Names of the modules and primitives a Verilog text defines, by a plain text scan (for
    a file the parser rejected)."""
    names = []
    for m in _DEFINES.finditer(_COMMENTS.sub(" ", text)):
        n = m.group(1)
        names.append(n[1:] if n.startswith("\\") else n)
    return names


def unread(path: str, err: dict, texts) -> ir.SourceFile:
    """The IR of a file that could not be read: no modules, the error (its ``path`` is the
    file or an included file) and what the file defines."""
    try:
        names = scan_definitions(read_text(path, texts))
    except HazlintError:
        names = []
    return ir.SourceFile(path=path, error=dict(err, path=err.get("path") or path,
                                               modules=names))


def _error_dict(exc: HazlintError) -> dict:
    return {"message": exc.message, "path": exc.path, "line": exc.line, "column": exc.column,
            "construct": exc.construct}


# ---------------------------------------------------------------------------------------------

def combined_digest(digests: dict, path: str) -> str:
    """One hash over a file's content digest and those of the files it includes."""
    h = hashlib.sha256()
    h.update(digests[path].encode())
    for p in sorted(k for k in digests if k != path):
        h.update(b"\0" + p.encode("utf-8", "surrogateescape") + b"\0" + digests[p].encode())
    return h.hexdigest()


def _cache_key(path, text, include_dirs, defines, root, extra=None) -> str:
    material = {
        "format": CACHE_FORMAT, "hazlint": __version__, "path": os.path.abspath(path),
        "content": digest_text(text), "include_dirs": [os.path.abspath(d) for d in include_dirs],
        "defines": sorted((str(k), None if v is None else str(v)) for k, v in defines.items()),
        "root": os.path.abspath(root) if root else None,
    }
    if extra is not None:
        material["front_end"] = extra
    return hashlib.sha256(json.dumps(material, sort_keys=True).encode()).hexdigest()


def _from_cache(cache, key, texts):
    try:
        data = cache.load(key)
    except Exception:       # a broken cache must never stop a lint run
        return None
    if not isinstance(data, dict) or data.get("format") != CACHE_FORMAT:
        return None
    deps = data.get("deps") or {}
    for dep, want in deps.items():
        try:
            if digest_text(read_text(dep, texts)) != want:
                return None
        except HazlintError:
            return None
    # decoding builds many small acyclic objects: no cyclic GC passes meanwhile
    try:
        with collector_paused():
            sf = ir.from_compact(data["ir"])
    except (KeyError, TypeError, ValueError, AttributeError):
        sf = None
    if not isinstance(sf, ir.SourceFile):
        discard = getattr(cache, "discard", None)
        if discard is not None:
            discard(key)            # valid JSON but not an entry we can use: remove it
        return None
    return sf


def _to_cache(cache, key, sf: ir.SourceFile, texts) -> None:
    if any(getattr(m, "flat", None) is not None and "_items" not in m.__dict__
           for m in sf.modules):
        # a flat module read by the compiled reader has no items yet; storing it would
        # build them all (the slow per-member work the compiled path avoids), and reading
        # the file again through that path costs about what decoding the entry would
        return
    deps = {}
    for p in sf.includes:
        try:
            deps[p] = digest_text(read_text(p, texts))
        except HazlintError:
            return
    try:
        cache.store(key, {"format": CACHE_FORMAT, "ir": ir.to_compact(sf), "deps": deps,
                          "includes": list(sf.includes)})
    except Exception:
        pass


def _worker(read_one, path, config):
    include_dirs, defines, root, texts = config
    try:
        return ("ok", ir.to_json(read_one(path, include_dirs, defines, root, texts)))
    except HazlintError as exc:
        return ("error", _error_dict(exc))
