"""When and how the reconvergence rule's inner loops run compiled (numba).

The kernels in :mod:`hazlint.analysis.arrival_kernels` are compiled with numba (the optional
``fast`` extra) for timing graphs of at least :data:`MIN_NODES` nodes: below that the pure
Python/numpy solvers finish in about the time numba needs to import itself and load the compiled
code (0.3-0.5 s here), so nothing would be gained. The environment variable ``HAZLINT_KERNEL``
overrides the choice: ``auto`` (default), ``numba`` (whenever numba is installed, any size) or
``python`` (never; the pure path).

Compiled code is cached on disk in the hazlint cache folder (``<cache>/numba``: the per-user
folder, ``--cache-dir`` / ``cache_dir`` or ``HAZLINT_CACHE_DIR``), never beside the installed
package. numba's own ``cache=True`` writes to ``__pycache__`` next to the source file, or to
``numba.config.CACHE_DIR`` when that is set; we set it only while our kernels are decorated
(numba picks the cache location per function at that moment) and restore it afterwards, so
other numba users in the same process are not affected. A numba cache holds machine code, so the
folder gets the same owner check as every other cache entry (:class:`hazlint.cache.ParseCache`
refuses a folder that belongs to another user) and is created private (mode 0700); when it is
refused or cannot be created the kernels are compiled in memory only.

When numba is missing, too old, or fails to compile or run, :func:`kernels` returns ``None`` and
the caller uses the numpy/Python path, which gives the same findings (tested); the reason is
logged at debug level (logger ``hazlint.kernel``).
"""
from __future__ import annotations

import importlib
import logging
import os
import sys
from pathlib import Path

log = logging.getLogger("hazlint.kernel")

ENV = "HAZLINT_KERNEL"
MIN_NODES = 64          # timing-graph nodes from which the compiled kernel is used
MIN_NUMBA = (0, 57)     # first release tested here with numpy 2 is newer; older may work

_loaded: dict[str, object] = {}     # cache folder (or "") -> namespace of compiled kernels
_failed: dict[str, str] = {}


def mode() -> str:
    m = (os.environ.get(ENV) or "auto").strip().lower()
    return m if m in ("auto", "c", "numba", "python") else "auto"


def wanted(n_nodes: int) -> bool:
    """Whether a graph of this size should try the compiled kernels."""
    m = mode()
    if m == "python":
        return False
    return m != "auto" or n_nodes >= MIN_NODES


def cache_folder(cache_dir: str | os.PathLike | None) -> Path | None:
    """``<cache>/numba`` when the cache folder is usable (ours, creatable), else None."""
    from ..cache import ParseCache
    try:
        probe = ParseCache(cache_dir, namespace="numba")
    except OSError:
        return None
    if not probe.enabled:
        return None
    folder = probe.directory / "numba"
    try:
        folder.mkdir(parents=True, exist_ok=True, mode=0o700)
        if hasattr(os, "getuid") and folder.stat().st_uid != os.getuid():
            return None
    except OSError:
        return None
    return folder


def kernels(cache_dir: str | os.PathLike | None = None):
    """The compiled kernels (an object with ``solve_stems`` and ``reach_windows`` over buffers,
    returning bytes), or None when none can be had: the C extension when it was built, else
    numba when ``HAZLINT_KERNEL=numba`` asks for it."""
    if mode() != "numba":
        try:
            return importlib.import_module("hazlint.analysis._arrival")
        except ImportError as exc:
            log.debug("C kernel not built, using numpy: %s", exc)
            return None
    folder = cache_folder(cache_dir)
    key = str(folder or "")
    if key in _loaded:
        return _loaded[key]
    if key in _failed:
        return None
    try:
        k = _compile(folder)
    except Exception as exc:       # ImportError, numba typing/lowering errors, bad cache
        _failed[key] = f"{type(exc).__name__}: {exc}"
        log.debug("compiled kernels unavailable, using numpy: %s", _failed[key])
        return None
    _loaded[key] = k
    return k


class _NumbaKernels:
    """The numba-compiled twins behind the C module's interface (buffers in, bytes out)."""

    def __init__(self, solve_stems, reach_windows):
        self._solve, self._reach = solve_stems, reach_windows

    @staticmethod
    def _np(bufs):
        import numpy as np
        return [np.frombuffer(b, dtype=np.uint64 if k == 13 else
                              (np.float64 if k in (3, 4) else np.int64))
                if len(b) else np.zeros(0, np.uint64 if k == 13 else
                                        (np.float64 if k in (3, 4) else np.int64))
                for k, b in enumerate(bufs)]

    def reach_windows(self, fo_ptr, fo_dst, sinks):
        import numpy as np
        a = [np.frombuffer(b, dtype=np.int64) if len(b) else np.zeros(0, np.int64)
             for b in (fo_ptr, fo_dst, sinks)]
        return tuple(x.tobytes() for x in self._reach(*a))

    def solve_stems(self, *args):
        return tuple(x.tobytes() for x in self._solve(*self._np(args[:14]), args[14]))


def _compile(folder: Path | None) -> _NumbaKernels:
    import numba
    import numpy as np
    if tuple(int(x) for x in numba.__version__.split(".")[:2]) < MIN_NUMBA:
        raise ImportError(f"numba {numba.__version__} is older than "
                          f"{'.'.join(map(str, MIN_NUMBA))}")
    from . import arrival_kernels as src
    old = numba.config.CACHE_DIR
    if folder is not None:
        numba.config.CACHE_DIR = str(folder)
    try:
        opts = dict(nogil=True, cache=folder is not None)
        solve = numba.njit(**opts)(src.solve_stems)
        reach = numba.njit(**opts)(src.reach_windows)
    finally:
        numba.config.CACHE_DIR = old
    # compile (or load from the cache) now, on a two-node graph, so a failure shows here and
    # the caller falls back before any real work is done
    i64 = np.int64
    ptr = np.array([0, 0, 1], i64)
    fo = np.array([0, 1, 1], i64)
    lo, cnt, off, pool = reach(fo, np.array([1], i64), np.array([1], i64))
    solve(np.array([0], i64), ptr, np.array([0], i64), np.ones(1), np.ones(1), fo,
          np.array([1], i64), ptr, np.array([0], i64), np.array([0, 1], i64), lo, cnt, off,
          pool, 0.0)
    return _NumbaKernels(solve, reach)
