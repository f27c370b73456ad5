"""The lint run as keyword-argument functions: the library interface of earlier versions, kept
as thin wrappers. Each builds a :class:`~hazlint.request.RunRequest` (:func:`hazlint.request.resolve`
takes the same keywords) and hands it to :mod:`hazlint.pipeline`, the one module that composes
the stages.

    >>> from hazlint.api import lint
    >>> result = lint(["fixtures/demo/press_top.v"])          # doctest: +SKIP
    >>> [(d.rule, d.line) for d in result.diagnostics]        # doctest: +SKIP
"""
from __future__ import annotations

from typing import Any, Mapping, Sequence

from . import pipeline
from .config import Config
from .pipeline import LintResult, refine, run_rules
from .request import resolve

__all__ = ["LintResult", "lint", "load", "refine", "report_key", "run_rules"]


def lint(files: Sequence[str] | None = None, *, progress=None, **options) -> LintResult:
    """Lint a design; ``options`` are those of :func:`hazlint.request.resolve` (``config``,
    ``cwd``, ``texts``, ``changed``, ``select``, ``ignore``, ``prove``, ``top``,
    ``include_dirs``, ``defines``, ``baseline``, ``rule_options``, ``use_cache``,
    ``time_budget``, ``limits``, ...)."""
    return pipeline.lint(resolve(files, **options), progress=progress)


def report_key(files: Sequence[str] | None = None, *, render: Mapping[str, Any] | None = None,
               **options) -> str | None:
    """The finished-report key of the run :func:`lint` would make with these arguments
    (:func:`hazlint.pipeline.report_key`)."""
    return pipeline.report_key(resolve(files, **options), render)


def load(files: Sequence[str], config: Config, *, progress=None, **options):
    """The design of ``files`` as a lint run loads it (configured cells, Liberty, SDF; the
    design cache unless ``use_cache=False``); ``options`` as for :func:`lint`."""
    return pipeline.load(resolve(files, config=config, **options), progress=progress)
