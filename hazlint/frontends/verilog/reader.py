"""Read Verilog sources into IR: preprocess -> parse -> build IR, per file.

:func:`read_sources` is the entry point the rest of hazlint uses. Each input file becomes one
:class:`~hazlint.ir.SourceFile` holding every module and primitive its preprocessed
text defines (including those pulled in through ```include``). The pyverilog AST is dropped as
soon as a file's IR is built.
"""
from __future__ import annotations

import functools
import gc
import re
import threading
from typing import Callable

from ...errors import ParseError
from ... import ir
from .build_ir import build_source
from ..driver import combined_digest, read_with
from .ast_nodes import SyntaxErr
from .grammar import get_parser
from ..files import read_text
from .preprocess import Preprocessor

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
    keeps its tables (see :func:`~hazlint.frontends.verilog.grammar.get_parser`; False: built in memory,
    nothing written). Errors are :class:`~hazlint.errors.ParseError` with the original
    file:line; with ``tolerant`` a file that cannot be read comes back without modules and
    with its error in ``SourceFile.error`` (the elaborator decides whether the design needs it).
    """
    one = functools.partial(read_one, tables=tables) if tables is not None else read_one
    return read_with(one, paths, include_dirs=include_dirs, defines=defines, root=root,
                     jobs=jobs, cache=cache, texts=texts, progress=progress, tolerant=tolerant)


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
                             digest=combined_digest(pre.digests, path))
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
                       includes=list(pre.includes), digest=combined_digest(pre.digests, path))
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
