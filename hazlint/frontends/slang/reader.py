"""Read Verilog / SystemVerilog files into IR with pyslang: preprocess and parse in slang,
then walk its syntax tree (:mod:`.build`).

Each file is one compilation unit, as in the pyverilog front end: slang's preprocessor runs
with the configured include directories and macros, unsaved editor buffers (``texts``) stand
in for files of the same path, includes must resolve inside the project root or an include
directory. The first error slang reports ends the read as a
:class:`~hazlint.errors.ParseError` at its original ``file:line`` with slang's message. The
directive state of each module and primitive (```timescale`` or ``timeunit``,
```celldefine``, ```default_nettype``) is the one slang's compilation gives the definition.
"""
from __future__ import annotations

import gc
import os

import pyslang
from pyslang import ast, parsing, syntax

from ...errors import HazlintError, ParseError
from ...limits import LimitExceeded
from ... import ir
from ..driver import combined_digest, read_with
from ..files import digest_text, read_text, repository_root
from ..verilog.preprocess import Preprocessor
from .build import Builder
from .locate import Locator

_UNITS = {pyslang.TimeUnit.Seconds: 1.0, pyslang.TimeUnit.Milliseconds: 1e-3,
          pyslang.TimeUnit.Microseconds: 1e-6, pyslang.TimeUnit.Nanoseconds: 1e-9,
          pyslang.TimeUnit.Picoseconds: 1e-12, pyslang.TimeUnit.Femtoseconds: 1e-15}
_MAGNITUDE = {pyslang.TimeScaleMagnitude.One: 1, pyslang.TimeScaleMagnitude.Ten: 10,
              pyslang.TimeScaleMagnitude.Hundred: 100}


def read_sources(paths, include_dirs=(), defines=None, root=None, jobs=1, cache=None,
                 texts=None, progress=None, tolerant: bool = False) -> list[ir.SourceFile]:
    """The pyslang front end with the arguments of
    :func:`hazlint.frontends.verilog.reader.read_sources`."""
    return read_with(read_one, paths, include_dirs=include_dirs, defines=defines, root=root,
                     jobs=jobs, cache=cache, texts=texts, progress=progress, tolerant=tolerant,
                     key_extra={"name": "slang", "pyslang": pyslang.__version__})


def read_one(path: str, include_dirs=(), defines=None, root=None, texts=None,
             fast: bool = True) -> ir.SourceFile:
    """Preprocess, parse and build the IR of one file (``fast=False``: no text fast path,
    every construct through the syntax tree; the tests hold the two equal)."""
    gc_was_enabled = gc.isenabled()
    gc.disable()            # the syntax tree and IR are acyclic: no cyclic GC passes
    try:
        return _read_one(path, include_dirs, defines, root, texts, fast)
    finally:
        if gc_was_enabled:
            gc.enable()


def _read_one(path, include_dirs, defines, root, texts, fast) -> ir.SourceFile:
    texts = {os.path.abspath(k): v for k, v in (texts or {}).items()}
    apath = os.path.abspath(path)
    text = read_text(path, texts)           # also: a clear error for a missing file
    sm = pyslang.SourceManager()
    for d in include_dirs:
        sm.addUserDirectories(os.path.abspath(d))
    for p, t in texts.items():
        if p != apath:
            sm.assignText(p, t)
    if "`" in text:
        _within_limits(path, text, include_dirs, defines, root, texts)
    options = _options(defines)
    try:
        if apath in texts:
            tree = syntax.SyntaxTree.fromFileInMemory(_encodable(text), sm, path, apath,
                                                      options)
        else:
            tree = syntax.SyntaxTree.fromFile(path, sm, options)
    except RuntimeError:
        raise ParseError("input nested too deeply to parse", path=path) from None
    main = tree.root.endOfFile.location.buffer
    at = Locator(sm, path, main)
    includes = _check_includes(tree, sm, at, path, include_dirs, root)
    _raise_first_error(tree, sm, at)
    state = _definition_state(tree)
    b = Builder(at, state, fast=fast)
    try:
        modules, prims = b.source(tree.root)
    except RecursionError:
        raise ParseError("expression nested too deeply", path=path) from None
    digests = {path: digest_text(text)}
    for p in includes:
        digests.setdefault(p, digest_text(read_text(p, texts)))
    return ir.SourceFile(path=path, modules=modules, primitives=prims, notes=b.notes,
                         includes=includes, digest=combined_digest(digests, path))


def _within_limits(path, text, include_dirs, defines, root, texts) -> None:
    """slang expands macros and includes without a bound (a `define whose expansion quadruples
    at each level filled 24 GB; an include fan-out ran for minutes). A file that uses compiler
    directives is first walked by hazlint's own preprocessor in its counting-only mode (no
    output text, line map or digests are built), which counts macro expansion and includes
    against the documented limits (``macro_expansion``, ``include_fanout``) and raises a
    located :class:`~hazlint.limits.LimitExceeded`. Only the limits are taken from it: any
    other complaint it has is left to slang, which reads SystemVerilog directives the Verilog
    preprocessor does not know."""
    try:
        Preprocessor(include_dirs, defines, root, texts).check_limits(path, text)
    except LimitExceeded:
        raise
    except HazlintError:
        pass


def _encodable(text: str) -> str:
    """Editor text with undecodable bytes (kept as surrogates) made into U+FFFD: slang takes
    UTF-8 only."""
    try:
        text.encode("utf-8")
        return text
    except UnicodeEncodeError:
        return text.encode("utf-8", "surrogateescape").decode("utf-8", "replace")


def _options(defines):
    bag = pyslang.Bag()
    po = parsing.PreprocessorOptions()
    po.predefines = [f"{k}={'' if v is None else v}" for k, v in (defines or {}).items()]
    bag.preprocessorOptions = po
    return bag


def _check_includes(tree, sm, at, path, include_dirs, root) -> list[str]:
    """The files pulled in through ```include`` (absolute paths, first inclusion order); an
    include that resolves outside the project root and every include directory is an error,
    as in the pyverilog front end."""
    base = os.path.realpath(root) if root else (repository_root(path)
                                                 or os.path.dirname(os.path.realpath(path)))
    allowed = [base] + [os.path.realpath(d) for d in include_dirs]
    out: list[str] = []
    for inc in tree.getIncludeDirectives():
        buf = inc.buffer
        if buf is None or not buf:
            continue                        # not found: slang reports it
        full = os.path.abspath(os.fspath(sm.getFullPath(buf.id)))
        real = os.path.realpath(full)
        if not any(_inside(real, b) for b in allowed):
            where = at.where(inc.syntax.getFirstToken().location)
            raise ParseError(f'include "{inc.path}" refused: it resolves outside the project '
                             "root and every include directory", path=where[0], line=where[1],
                             column=where[2], construct=inc.path)
        if full not in out:
            out.append(full)
    return out


def _inside(path: str, base: str) -> bool:
    try:
        return os.path.commonpath([path, base]) == base
    except ValueError:
        return False


def _raise_first_error(tree, sm, at) -> None:
    errors = [d for d in tree.diagnostics if d.isError()]
    if not errors:
        return
    d = errors[0]
    engine = pyslang.DiagnosticEngine(sm)
    message = engine.formatMessage(d)
    p, line, col = at.where(d.location)
    raise ParseError(message, path=p, line=line, column=col,
                     construct=_token_at(sm, d.location))


def _token_at(sm, loc) -> str | None:
    """The word or symbol at ``loc`` in its source text (for the error's quotation)."""
    try:
        loc = sm.getFullyExpandedLoc(loc)
        text = sm.getSourceText(loc.buffer)
    except Exception:
        return None
    i = loc.offset
    if not text or i >= len(text):
        return None
    j = i
    while j < len(text) and j - i < 40 and not text[j].isspace() and (
            text[j].isalnum() or text[j] in "_$\\`'" or j == i):
        j += 1
    word = text[i:j].strip()
    return word or None


def _definition_state(tree) -> dict:
    """(buffer id, offset of the name token) -> directive state of each module and UDP."""
    comp = ast.Compilation()
    comp.addSyntaxTree(tree)
    out = {}
    for d in comp.getDefinitions():
        loc = d.location
        ts = d.timeScale
        timescale = None
        if ts is not None:
            timescale = (_MAGNITUDE[ts.base.magnitude] * _UNITS[ts.base.unit],
                         _MAGNITUDE[ts.precision.magnitude] * _UNITS[ts.precision.unit])
        nettype = "wire"
        nt = getattr(d, "defaultNetType", None)
        if nt is not None:
            nettype = "none" if nt.netKind == nt.NetKind.Unknown else nt.name
        out[(loc.buffer.id, loc.offset)] = {
            "timescale": timescale, "celldefine": bool(getattr(d, "cellDefine", False)),
            "default_nettype": nettype}
    return out

