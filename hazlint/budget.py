"""The whole run's time budget.

A commit hook or a CI job must end. Every analysis has counted budgets of its own (node
visits, BDD nodes, SAT conflicts, simulation events: the same answer on every machine); the
time budget is the backstop above them for everything together. Its default,
:data:`DEFAULT_SECONDS`, fits a commit hook; ``--time-budget SECONDS`` or the configuration key
``time_budget`` set it, 0 turns it off.

Past the budget:

* reading and elaborating stop with ``file:line: error: ...`` (exit code 2): without the whole
  design there is nothing to analyse;
* every rule and prover step not yet done is reported as ``analysis-incomplete`` or
  ``inconclusive`` with the budget as its reason, and the report is written as usual.

Findings cut short by the clock depend on the machine, so a run that hit the budget stores
nothing in the result and report caches (:func:`hit`).

The budget of a run is a context value (:func:`using`); code anywhere below asks
:func:`expired` at points where stopping is clean.
"""
from __future__ import annotations

import contextlib
import contextvars
import time
from typing import Iterator

from .errors import HazlintError

DEFAULT_SECONDS = 60.0


class Deadline:
    """A point in (monotonic) time, and whether anyone found it passed."""

    def __init__(self, seconds: float | None):
        self.seconds = float(seconds) if seconds and seconds > 0 else 0.0
        self.start = time.monotonic()
        self.at = self.start + self.seconds if self.seconds else float("inf")
        self.hit = False

    def expired(self) -> bool:
        if time.monotonic() >= self.at:
            self.hit = True
            return True
        return False

    def left(self) -> float:
        return max(0.0, self.at - time.monotonic())

    def reason(self) -> str:
        return (f"the run's time budget ({self.seconds:g} s, option --time-budget or "
                f"time_budget; 0: none) was used up")


_CURRENT: contextvars.ContextVar[Deadline | None] = contextvars.ContextVar("hazlint_deadline",
                                                                           default=None)


def current() -> Deadline | None:
    return _CURRENT.get()


@contextlib.contextmanager
def using(seconds: float | None) -> Iterator[Deadline]:
    """Run the ``with`` block under a budget of ``seconds`` (None or 0: no time limit)."""
    d = Deadline(seconds)
    token = _CURRENT.set(d)
    try:
        yield d
    finally:
        _CURRENT.reset(token)


def expired() -> bool:
    """True when the current run is past its budget (False outside a budgeted run)."""
    d = _CURRENT.get()
    return d is not None and d.expired()


def left(default: float = float("inf")) -> float:
    """Seconds left in the current run's budget (``default`` outside one)."""
    d = _CURRENT.get()
    return default if d is None or not d.seconds else d.left()


def reason() -> str:
    d = _CURRENT.get()
    return d.reason() if d is not None else "time budget used up"


def hit() -> bool:
    """Whether the current run ran into its budget somewhere."""
    d = _CURRENT.get()
    return d is not None and d.hit


@contextlib.contextmanager
def bounded(config=None, seconds: float | None = None, limit_values=None) -> Iterator[Deadline]:
    """The bounds of one run: its time budget (``seconds``, else the configuration's
    ``time_budget``, else :data:`DEFAULT_SECONDS`; 0 for none) and its size limits (the
    configuration's ``limits`` table, then ``limit_values`` from the command line). A run
    already inside bounds keeps them (a command that lints calls this once, the library call
    below it finds them in place)."""
    from . import limits as _limits
    if _CURRENT.get() is not None:
        yield _CURRENT.get()
        return
    lim = _limits.DEFAULT
    if config is not None and getattr(config, "limits", None):
        lim = lim.with_values(config.limits, path=config.path,
                              line=config.key_lines.get("limits"))
    if limit_values:
        lim = lim.with_values(limit_values, where="--limit: ")
    if seconds is None and config is not None:
        seconds = getattr(config, "time_budget", None)
    if seconds is None:
        seconds = DEFAULT_SECONDS
    with _limits.using(lim), using(seconds) as d:
        yield d


class BudgetExceeded(HazlintError):
    """The time budget ran out while the design was being read or elaborated (exit 2)."""


def check_loading(what: str, path: str | None = None, line: int | None = None) -> None:
    """Stop reading/elaborating when the run is past its budget."""
    d = _CURRENT.get()
    if d is not None and d.expired():
        raise BudgetExceeded(f"{d.reason()} while {what}; nothing was analysed", path=path,
                             line=line)
