"""Read Verilog sources into IR: preprocess -> parse -> build IR, per file.

:func:`read_sources` is the entry point the rest of hazlint uses. Each input file becomes one
:class:`~hazlint.frontend.ir.SourceFile` holding every module and primitive its preprocessed
text defines (including those pulled in through ```include``). The pyverilog AST is dropped as
soon as a file's IR is built.
"""
from __future__ import annotations

import gc
import hashlib
import json
import os
import re
import threading
from typing import Callable

from .. import __version__
from ..errors import HazlintError, ParseError
from . import ir
from .build_ir import build_source
from .parser import SyntaxErr, get_parser
from .preprocess import Preprocessor, digest_text, read_text

CACHE_FORMAT = 2        # 2: positional IR (ir.to_compact)
_PARSE_LOCK = threading.RLock()


def read_sources(paths: list[str], include_dirs: list[str] = (), defines: dict[str, str] = None,
                 root: str | None = None, jobs: int = 1, cache=None,
                 texts: dict[str, str] = None,
                 progress: Callable[[int, int, str], None] | None = None,
                 tolerant: bool = False, tables=None) -> list[ir.SourceFile]:
    """Read ``paths`` into IR, one :class:`ir.SourceFile` per path, in input order.

    ``texts`` overrides file contents by path (unsaved editor buffers, includes too);
    ``cache`` is an object with ``load(key) -> dict | None`` and ``store(key, dict)``;
    ``jobs > 1`` parses in worker processes; ``progress(done, total, path)`` is called once per
    file; ``root`` bounds where includes may resolve (default, per input file: the repository
    holding it, else its folder; never the working directory); ``tables``: where the parser
    keeps its tables (see :func:`~hazlint.frontend.parser.get_parser`; False: built in memory,
    nothing written). Errors are :class:`~hazlint.errors.ParseError` with the original
    file:line; with ``tolerant`` a file that cannot be read comes back without modules and
    with its error in ``SourceFile.error`` (the elaborator decides whether the design needs it).
    """
    paths = [os.fspath(p) for p in paths]
    include_dirs = [os.fspath(d) for d in include_dirs]
    defines = dict(defines or {})
    texts = {os.path.abspath(k): v for k, v in (texts or {}).items()}
    total = len(paths)
    results: list = [None] * total
    keys: list = [None] * total
    todo: list[int] = []
    done = 0
    for i, path in enumerate(paths):
        text = read_text(path, texts)
        if cache is not None:
            keys[i] = _cache_key(path, text, include_dirs, defines, root)
            sf = _from_cache(cache, keys[i], texts)
            if sf is not None:
                results[i] = sf
                done += 1
                if progress:
                    progress(done, total, path)
                continue
        todo.append(i)
    config = (include_dirs, defines, root, texts, tables)
    if jobs > 1 and len(todo) > 1:
        from concurrent.futures import ProcessPoolExecutor, as_completed
        with ProcessPoolExecutor(max_workers=min(jobs, len(todo))) as pool:
            futures = {pool.submit(_worker, paths[i], config): i for i in todo}
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
            results[i] = _unread(paths[i], err, texts)
    else:
        for i in todo:
            try:
                results[i] = read_one(paths[i], include_dirs, defines, root, texts, tables)
            except HazlintError as exc:
                if not tolerant:
                    raise
                results[i] = _unread(paths[i], {"message": exc.message, "path": exc.path,
                                                "line": exc.line, "column": exc.column,
                                                "construct": exc.construct}, texts)
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


def _unread(path: str, err: dict, texts) -> ir.SourceFile:
    """The IR of a file that could not be read: no modules, the error (its ``path`` is the
    file or an included file) and what the file defines."""
    try:
        names = scan_definitions(read_text(path, texts))
    except HazlintError:
        names = []
    return ir.SourceFile(path=path, error=dict(err, path=err.get("path") or path,
                                               modules=names))


def read_one(path: str, include_dirs=(), defines=None, root=None, texts=None,
             tables=None) -> ir.SourceFile:
    """Preprocess, parse and build the IR of one file."""
    # the AST and IR are acyclic and all stay alive until the end: cyclic GC passes over
    # hundreds of thousands of young objects would only cost time
    with _PARSE_LOCK:          # one parser per process (a language server may call from threads)
        gc_was_enabled = gc.isenabled()
        gc.disable()
        try:
            return _read_one(path, include_dirs, defines, root, texts, tables)
        finally:
            if gc_was_enabled:
                gc.enable()


def _read_one(path, include_dirs, defines, root, texts, tables=None) -> ir.SourceFile:
    pre = Preprocessor(include_dirs, defines, root, texts).run(path)
    if _no_tokens(pre.text):
        # nothing but blanks and comments: a file with no description (legal, and empty)
        return ir.SourceFile(path=path, modules=[], primitives=[],
                             notes=[(ir.Loc(p, n), msg) for p, n, msg in pre.notes],
                             includes=list(pre.includes),
                             digest=_combined_digest(pre.digests, path))
    parser = get_parser(tables)
    try:
        ast = parser.parse(pre.text)
    except SyntaxErr as exc:
        file, line = pre.line_map.lookup(exc.lineno or 1)
        if not file:
            file, line = path, 1
        if exc.construct == "EOF":
            # the input ended early: that is the end of the file being read, not of the last
            # file it included
            file, line = path, max(1, read_text(path, texts).rstrip().count("\n") + 1)
        col = None
        if exc.lexpos is not None:
            col = exc.lexpos - (pre.text.rfind("\n", 0, exc.lexpos) + 1) + 1
        msg = exc.message
        if exc.construct and exc.construct != "EOF":
            msg = f"{msg} near '{exc.construct}'"
        raise ParseError(msg, path=file, line=line, column=col,
                         construct=exc.construct if exc.construct != "EOF" else None) from None
    except RecursionError:
        raise ParseError("input nested too deeply to parse", path=path) from None
    try:
        modules, prims, notes = build_source(path, ast, pre, parser.lexer)
    except RecursionError:
        raise ParseError("expression nested too deeply", path=path) from None
    finally:
        del ast
        parser.lexer.lexer.input("")     # drop the text held by the lexer
        parser.lexer.attrs_at = {}
    sf = ir.SourceFile(path=path, modules=modules, primitives=prims,
                       notes=notes + [(ir.Loc(p, n), msg) for p, n, msg in pre.notes],
                       includes=list(pre.includes), digest=_combined_digest(pre.digests, path))
    return sf


# ---------------------------------------------------------------------------------------------

_BLANKS = re.compile(r"\s*")


def _no_tokens(text: str) -> bool:
    """Whether ``text`` holds nothing but blanks and comments (one linear scan)."""
    i, n = 0, len(text)
    while True:
        i = _BLANKS.match(text, i).end()
        if i >= n:
            return True
        if text.startswith("//", i):
            j = text.find("\n", i)
            if j < 0:
                return True
            i = j
        elif text.startswith("/*", i):
            j = text.find("*/", i + 2)
            if j < 0:
                return False          # an open comment: the parser says where
            i = j + 2
        else:
            return False


def _combined_digest(digests: dict, path: str) -> str:
    h = hashlib.sha256()
    h.update(digests[path].encode())
    for p in sorted(k for k in digests if k != path):
        h.update(b"\0" + p.encode("utf-8", "surrogateescape") + b"\0" + digests[p].encode())
    return h.hexdigest()


def _cache_key(path, text, include_dirs, defines, root) -> str:
    material = json.dumps({
        "format": CACHE_FORMAT, "hazlint": __version__, "path": os.path.abspath(path),
        "content": digest_text(text), "include_dirs": [os.path.abspath(d) for d in include_dirs],
        "defines": sorted((str(k), None if v is None else str(v)) for k, v in defines.items()),
        "root": os.path.abspath(root) if root else None,
    }, sort_keys=True)
    return hashlib.sha256(material.encode()).hexdigest()


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
    gc_was_enabled = gc.isenabled()
    gc.disable()
    try:
        sf = ir.from_compact(data["ir"])
    except (KeyError, TypeError, ValueError, AttributeError):
        sf = None
    finally:
        if gc_was_enabled:
            gc.enable()
    if not isinstance(sf, ir.SourceFile):
        discard = getattr(cache, "discard", None)
        if discard is not None:
            discard(key)            # valid JSON but not an entry we can use: remove it
        return None
    return sf


def _to_cache(cache, key, sf: ir.SourceFile, texts) -> None:
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


def _worker(path, config):
    include_dirs, defines, root, texts, tables = config
    try:
        return ("ok", ir.to_json(read_one(path, include_dirs, defines, root, texts, tables)))
    except HazlintError as exc:
        return ("error", {"message": exc.message, "path": exc.path, "line": exc.line,
                          "column": exc.column, "construct": exc.construct})
