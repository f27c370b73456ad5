"""Documented limits on what one run reads and builds.

A linter runs unattended on files anyone can write, so every quantity that decides how much
memory or time reading a design takes has a limit. Past a limit the run stops with one
``file:line: error: ...`` (exit code 2) that names the limit and how to raise it, instead of
exhausting the machine. The defaults leave room for a netlist of ten million gates.

=================  ==========  ==================================================================
limit              default     what it bounds
=================  ==========  ==================================================================
vector_width       1048576     bits of one vector: a net, a port, a literal, a replication, a
                               part select, the WIDTH of a yosys word-level cell (IEEE 1364-2005
                               4.3.1 asks tools to support at least 65,536, from memory)
const_bits         1048576     bits of one intermediate value of a constant expression
                               (``2**64``, ``1 << 100000``)
delay              1e12        a delay value, in the module's time units
instances          20000000    instances elaborated (module, primitive, cell and UDP instances)
gates              20000000    gates, registers and port bits built by elaboration
net_bits           40000000    net bits declared (every bit of every vector, used or not)
macro_expansion    67108864    characters macro expansion produces while reading one input file
                               (its includes included)
include_fanout     10000       ```include`` directives followed while reading one input file
=================  ==========  ==================================================================

Each is set with ``--limit NAME=VALUE`` on the command line (repeatable) or in the
configuration's ``limits`` table (``limits = { vector_width = 4194304 }``).

The limits of a run are a context value (:func:`using`), so the reader and the flattener read
them where they need them (:func:`current`) without a parameter threaded through every call.
"""
from __future__ import annotations

import contextlib
import contextvars
from dataclasses import dataclass, fields, replace
from typing import Any, Iterator, Mapping

from .errors import ConfigError, HazlintError


@dataclass(frozen=True)
class Limits:
    vector_width: int = 1 << 20
    const_bits: int = 1 << 20
    delay: float = 1e12
    instances: int = 20_000_000
    gates: int = 20_000_000
    net_bits: int = 40_000_000
    macro_expansion: int = 1 << 26
    include_fanout: int = 10_000

    def with_values(self, values: Mapping[str, Any], where: str = "",
                    path: str | None = None, line: int | None = None) -> "Limits":
        """A copy with ``values`` (name -> number) applied; unknown names and values that are
        not positive numbers are a :class:`~hazlint.errors.ConfigError`."""
        known = {f.name: f.type for f in fields(self)}
        out = {}
        for name, value in values.items():
            key = str(name).replace("-", "_")
            if key not in known:
                raise ConfigError(f"{where}unknown limit '{name}' (known: "
                                  f"{', '.join(sorted(known))})", path=path, line=line,
                                  construct=str(name)[:60])
            is_float = known[key] in (float, "float")
            if isinstance(value, str):
                try:
                    value = float(value) if is_float else int(value.replace("_", ""), 0)
                except ValueError:
                    raise ConfigError(f"{where}limit '{name}' must be a number, got "
                                      f"{value[:40]!r}", path=path, line=line) from None
            if (isinstance(value, bool) or not isinstance(value, (int, float))
                    or (not is_float and not float(value).is_integer()) or not value > 0
                    or value != value or value == float("inf")):
                raise ConfigError(f"{where}limit '{name}' must be a positive number, got "
                                  f"{value!r}", path=path, line=line)
            out[key] = float(value) if is_float else int(value)
        return replace(self, **out)


DEFAULT = Limits()
_CURRENT: contextvars.ContextVar[Limits] = contextvars.ContextVar("hazlint_limits",
                                                                   default=DEFAULT)


def current() -> Limits:
    """The limits of the running lint (the defaults outside one)."""
    return _CURRENT.get()


@contextlib.contextmanager
def using(limits: Limits | None) -> Iterator[Limits]:
    """Make ``limits`` the current ones inside the ``with`` block (None: keep the current)."""
    if limits is None:
        yield current()
        return
    token = _CURRENT.set(limits)
    try:
        yield limits
    finally:
        _CURRENT.reset(token)


def parse_assignments(items) -> dict[str, str]:
    """``["vector_width=4096", ...]`` (command line) -> ``{"vector_width": "4096"}``."""
    out = {}
    for item in items or ():
        name, eq, value = str(item).partition("=")
        if not eq or not name.strip() or not value.strip():
            raise HazlintError(f"bad --limit '{item[:60]}' (expected NAME=VALUE, e.g. "
                               "vector_width=4194304)")
        out[name.strip()] = value.strip()
    return out


class LimitExceeded(HazlintError):
    """A documented limit was reached while reading or elaborating the design (exit 2)."""

    def __init__(self, name: str, what: str, *, path: str | None = None,
                 line: int | None = None, column: int | None = None,
                 construct: str | None = None, value: Any = None):
        limit = getattr(current(), name)
        shown = f"{limit:g}" if isinstance(limit, float) else str(limit)
        if isinstance(value, int) and not isinstance(value, bool):
            what += f" ({value if value < 10 ** 40 else 'more than 10**40'})"
        elif isinstance(value, float) and value != float("inf"):
            what += f" ({value:g})"
        super().__init__(f"{what} exceeds the limit {name} = {shown} (raise it with --limit "
                         f"{name}=N or 'limits = {{ {name} = N }}' in the configuration)",
                         path=path, line=line, column=column, construct=construct)
        self.limit = name
        self.value = value


def check(name: str, value, what: str, loc: tuple = ()) -> None:
    """Raise :class:`LimitExceeded` when ``value`` is above the current limit ``name``.
    ``loc`` is ``(path, line[, column])``."""
    if value > getattr(_CURRENT.get(), name):
        raise LimitExceeded(name, what, path=loc[0] if loc else None,
                            line=loc[1] if len(loc) > 1 else None,
                            column=loc[2] if len(loc) > 2 else None, value=value)
