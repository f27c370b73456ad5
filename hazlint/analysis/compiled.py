"""When the reconvergence rule's inner loops and the timed simulator's event loop run compiled,
and where the compiled code comes from.

The kernel is a small C extension, ``hazlint.analysis._arrival`` (hazlint/analysis/_arrival.c),
built by setuptools when hazlint is installed (``optional=True``: without a C compiler the
build goes on without it). It reads the timing graph's arrays through the buffer protocol and
returns bytes, so it needs neither numpy nor any other package at run time, and it writes
nothing anywhere: no compiled code is ever loaded from a cache folder.

It is used for timing graphs of at least :data:`MIN_NODES` nodes (smaller ones finish in
microseconds either way). The environment variable ``HAZLINT_KERNEL`` overrides the choice:
``auto`` (default), ``c`` (whenever built, any size) or ``python`` (never; the numpy/Python
solvers of :mod:`hazlint.analysis.timing`, which give the same findings, tested). When the
extension is missing the rule falls back to those solvers silently; the reason is logged at
debug level (logger ``hazlint.kernel``). The timed simulator's event loop is a second extension,
``hazlint.analysis._timedloop`` (:func:`timed_loop`, :mod:`.compiled_timedsim`), built the
same way and used at every graph size unless ``HAZLINT_KERNEL`` is ``python``.

Why C and not numba (which issue 17 named first) is argued with measurements in DEVELOPERS.md:
numba costs 0.8 CPU s per process to import and load its cached machine code and about 18 CPU s
to compile on a cold cache, more than the whole rule on most benchmark circuits, and it would
load machine code from a writable cache folder.
"""
from __future__ import annotations

import importlib
import logging
import os

log = logging.getLogger("hazlint.kernel")

ENV = "HAZLINT_KERNEL"
MIN_NODES = 64          # timing-graph nodes from which the compiled kernel is used


def mode() -> str:
    m = (os.environ.get(ENV) or "auto").strip().lower()
    return m if m in ("auto", "c", "python") else "auto"


def wanted(n_nodes: int) -> bool:
    """Whether a graph of this size should use the compiled kernel."""
    m = mode()
    if m == "python":
        return False
    return m == "c" or n_nodes >= MIN_NODES


def timed_loop():
    """The timed simulator's compiled event loop (``hazlint.analysis._timedloop``: ``run`` and
    ``settle``), or None when it was not built. Used at every size unless ``HAZLINT_KERNEL``
    is ``python`` (:mod:`.compiled_timedsim`)."""
    global _LOOP
    if _LOOP is False:
        try:
            _LOOP = importlib.import_module("hazlint.analysis._timedloop")
        except ImportError as exc:
            log.debug("compiled event loop not built, using Python: %s", exc)
            _LOOP = None
    return _LOOP


_LOOP: object = False       # not looked up yet


def kernels():
    """The compiled kernel module (``solve_stems`` and ``reach_windows`` over buffers,
    returning bytes), or None when it was not built."""
    try:
        return importlib.import_module("hazlint.analysis._arrival")
    except ImportError as exc:
        log.debug("C kernel not built, using numpy: %s", exc)
        return None
