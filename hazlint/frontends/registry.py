"""Front ends: which reader turns which file into IR.

:data:`READERS` maps a front-end name to a reader with the signature of
:func:`hazlint.frontends.verilog.reader.read_sources` (files -> ``[ir.SourceFile]``). Both give the same
IR for the same text; what each accepts is listed in DEVELOPERS.md.

* ``pyverilog`` (default): our preprocessor and a pyverilog grammar, Verilog-2005 plus the
  SystemVerilog that pyverilog knows (``logic``, ``always_ff`` ...).
* ``slang`` (optional, PyPI ``pyslang``): slang's preprocessor and parser, SystemVerilog
  1800-2017; much faster on very large netlists.
* ``auto`` (what the configuration key ``frontend`` and ``--frontend`` default to): ``.sv`` and
  ``.svh`` files through slang when pyslang is installed, every other file through pyverilog.

:func:`read_sources` is the one entry point the rest of hazlint calls; it imports a front end
only when a file needs it.
"""
from __future__ import annotations

import os
from typing import TYPE_CHECKING, Callable

from ..errors import ConfigError, ParseError

if TYPE_CHECKING:
    from .. import ir

SV_SUFFIXES = (".sv", ".svh")
INSTALL_HINT = "pip install 'hazlint[slang]'"


def _pyverilog(paths, include_dirs=(), defines=None, root=None, jobs=1, cache=None,
               texts=None, progress=None, tolerant=False, tables=None) -> list[ir.SourceFile]:
    from .verilog.reader import read_sources as read
    return read(paths, include_dirs=include_dirs, defines=defines, root=root, jobs=jobs,
                cache=cache, texts=texts, progress=progress, tolerant=tolerant, tables=tables)


def _slang(paths, include_dirs=(), defines=None, root=None, jobs=1, cache=None, texts=None,
           progress=None, tolerant=False) -> list[ir.SourceFile]:
    from .slang.reader import read_sources as read
    return read(paths, include_dirs=include_dirs, defines=defines, root=root, jobs=jobs,
                cache=cache, texts=texts, progress=progress, tolerant=tolerant)


READERS: dict[str, Callable[..., list]] = {"pyverilog": _pyverilog, "slang": _slang}
CHOICES = ("auto", *READERS)
DEFAULT = "auto"


def register(name: str, reader: Callable[..., list]) -> None:
    """Add a front end: ``reader(paths, include_dirs=, defines=, root=, jobs=, cache=, texts=,
    progress=, tolerant=)`` returns one :class:`~hazlint.ir.SourceFile` per path. It is then
    chosen by name (configuration key ``frontend``, ``--frontend``); ``auto`` never picks it."""
    global CHOICES
    if name == "auto" or not name or not name.replace("-", "_").isidentifier():
        raise ValueError(f"not a usable front-end name: {name!r}")
    READERS[name] = reader
    CHOICES = ("auto", *READERS)


def slang_available() -> bool:
    from .slang import available
    return available()


def check_choice(frontend: str) -> None:
    """A :class:`ConfigError` for an unknown front end or one that is not installed."""
    choices = ("auto", *READERS)
    if frontend not in choices:
        raise ConfigError(f"unknown front end '{frontend}' (choose from {', '.join(choices)})",
                          construct=frontend)
    if frontend == "slang" and not slang_available():
        raise ConfigError(f"the slang front end needs pyslang: {INSTALL_HINT}",
                          construct=frontend)


def reader_for(path: str, frontend: str = DEFAULT) -> str:
    """The name of the front end that reads ``path``."""
    if frontend != "auto":
        return frontend
    if path.lower().endswith(SV_SUFFIXES) and slang_available():
        return "slang"
    return "pyverilog"


def key_material(paths, frontend: str = DEFAULT):
    """What the front-end choice adds to a design's cache key: None when pyverilog reads
    every file (the key of a design as before there was a choice), else each file's front
    end and the pyslang version."""
    names = [reader_for(os.fspath(p), frontend) for p in paths]
    if all(n == "pyverilog" for n in names):
        return None
    out = {"readers": names}
    if "slang" in names:
        from importlib.metadata import PackageNotFoundError, version
        try:
            out["pyslang"] = version("pyslang")
        except PackageNotFoundError:
            out["pyslang"] = None
    return out


def read_sources(paths, include_dirs=(), defines=None, root=None, jobs: int = 1, cache=None,
                 texts=None, progress=None, frontend: str = DEFAULT,
                 tolerant: bool = False, tables=None) -> list[ir.SourceFile]:
    """Read ``paths`` into IR, each file with the front end :func:`reader_for` picks; the
    arguments are those of :func:`hazlint.frontends.verilog.reader.read_sources`."""
    check_choice(frontend)
    paths = [os.fspath(p) for p in paths]
    # without a root each reader bounds includes per file (the repository holding it, else
    # its folder; never the working directory)
    groups: dict[str, list[int]] = {}
    for i, p in enumerate(paths):
        groups.setdefault(reader_for(p, frontend), []).append(i)
    if len(groups) == 1:
        (name,) = groups
        return _read(name, paths, include_dirs, defines, root, jobs, cache, texts, progress,
                     tolerant, tables)
    results: list = [None] * len(paths)
    done = [0]

    def counted(_done, _total, path):
        done[0] += 1
        progress(done[0], len(paths), path)

    for name, idx in groups.items():
        part = _read(name, [paths[i] for i in idx], include_dirs, defines, root, jobs, cache,
                     texts, counted if progress else None, tolerant, tables)
        for i, sf in zip(idx, part):
            results[i] = sf
    return results


def _read(name, paths, include_dirs, defines, root, jobs, cache, texts, progress, tolerant,
          tables=None):
    # parser tables are the pyverilog front end's (slang has no generated tables)
    extra = {"tables": tables} if tables is not None and name == "pyverilog" else {}
    try:
        out = READERS[name](paths, include_dirs=include_dirs, defines=defines, root=root,
                            jobs=jobs, cache=cache, texts=texts, progress=progress,
                            tolerant=tolerant, **extra)
    except ParseError as exc:
        exc.message += _sv_hint(name, exc.path)
        raise
    for sf in out:
        if sf.error is not None:        # tolerant: the same hint on the recorded error
            sf.error["message"] = sf.error.get("message", "") + _sv_hint(name, sf.error.get("path"))
    return out


def _sv_hint(name, path) -> str:
    if name == "pyverilog" and (path or "").lower().endswith(SV_SUFFIXES) \
            and not slang_available():
        return f" (SystemVerilog reads best with the slang front end: {INSTALL_HINT})"
    return ""
