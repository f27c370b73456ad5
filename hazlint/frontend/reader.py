"""Read Verilog sources into IR: preprocess -> parse -> build IR, per file.

:func:`read_sources` is the entry point the rest of hazlint uses. Each input file becomes one
:class:`~hazlint.frontend.ir.SourceFile` holding every module and primitive its preprocessed
text defines (including those pulled in through ```include``). The pyverilog AST is dropped as
soon as a file's IR is built.
"""
from __future__ import annotations

import gc
import threading
from typing import Callable

from ..errors import ParseError
from . import ir
from .build_ir import build_source
from .driver import (CACHE_FORMAT, combined_digest, read_with,  # noqa: F401 (re-exported API)
                     scan_definitions)
from .parser import SyntaxErr, get_parser
from .preprocess import Preprocessor

_PARSE_LOCK = threading.RLock()


def read_sources(paths: list[str], include_dirs: list[str] = (), defines: dict[str, str] = None,
                 root: str | None = None, jobs: int = 1, cache=None,
                 texts: dict[str, str] = None,
                 progress: Callable[[int, int, str], None] | None = None,
                 tolerant: bool = False) -> list[ir.SourceFile]:
    """Read ``paths`` into IR, one :class:`ir.SourceFile` per path, in input order.

    ``texts`` overrides file contents by path (unsaved editor buffers, includes too);
    ``cache`` is an object with ``load(key) -> dict | None`` and ``store(key, dict)``;
    ``jobs > 1`` parses in worker processes; ``progress(done, total, path)`` is called once per
    file; ``root`` bounds where includes may resolve (default: the common directory of the
    inputs). Errors are :class:`~hazlint.errors.ParseError` with the original file:line; with
    ``tolerant`` a file that cannot be read comes back without modules and with its error in
    ``SourceFile.error`` (the elaborator decides whether the design needs it).
    """
    return read_with(read_one, paths, include_dirs=include_dirs, defines=defines, root=root,
                     jobs=jobs, cache=cache, texts=texts, progress=progress, tolerant=tolerant)


def read_one(path: str, include_dirs=(), defines=None, root=None, texts=None) -> ir.SourceFile:
    """Preprocess, parse and build the IR of one file."""
    # the AST and IR are acyclic and all stay alive until the end: cyclic GC passes over
    # hundreds of thousands of young objects would only cost time
    with _PARSE_LOCK:          # one parser per process (a language server may call from threads)
        gc_was_enabled = gc.isenabled()
        gc.disable()
        try:
            return _read_one(path, include_dirs, defines, root, texts)
        finally:
            if gc_was_enabled:
                gc.enable()


def _read_one(path, include_dirs, defines, root, texts) -> ir.SourceFile:
    pre = Preprocessor(include_dirs, defines, root, texts).run(path)
    parser = get_parser()
    try:
        ast = parser.parse(pre.text)
    except SyntaxErr as exc:
        file, line = pre.line_map.lookup(exc.lineno or 1)
        col = None
        if exc.lexpos is not None:
            col = exc.lexpos - (pre.text.rfind("\n", 0, exc.lexpos) + 1) + 1
        msg = exc.message
        if exc.construct and exc.construct != "EOF":
            msg = f"{msg} near '{exc.construct}'"
        raise ParseError(msg, path=file, line=line, column=col,
                         construct=exc.construct) from None
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
                       includes=list(pre.includes), digest=combined_digest(pre.digests, path))
    return sf
