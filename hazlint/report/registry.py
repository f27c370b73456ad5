"""Report formats: discovery through the ``hazlint.formats`` entry-point group.

A format is a module (or any object) with these attributes:

``NAME``      the name ``--format`` takes, lowercase words joined by hyphens (``"sarif"``)
``SUMMARY``   one line, shown by ``hazlint formats``
``write(result, stream, options)``
              write the report of ``result`` (a :class:`hazlint.api.LintResult`: ``diagnostics``
              sorted, ``waived``, ``root``, ``relpath(path)``, ``rules``, ``design``) to the text
              stream ``stream``; ``options`` is a :class:`ReportOptions`. Same result, same bytes.

The built-in formats (``hazlint.report.text``, ``json``, ``sarif``, ``annotations``) are
registered in ``pyproject.toml`` under ``[project.entry-points."hazlint.formats"]`` exactly as a
third-party package registers its own. Only the entry point of the chosen format is loaded:
a broken plugin stops the runs that ask for it (exit 2, naming the plugin), not the others.
A plugin format that raises while writing is reported with its name, never as a traceback.
"""
from __future__ import annotations

import re
from dataclasses import asdict, dataclass
from functools import lru_cache
from importlib import metadata
from typing import Any, Callable, Iterator

from ..errors import HazlintError

ENTRY_POINT_GROUP = "hazlint.formats"
DEFAULT_FORMAT = "text"
_NAME_RE = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")
_OWN_DIST = "hazlint"


@dataclass(frozen=True)
class ReportOptions:
    """How the command line asks for a report; a format reads the fields it has a use for."""

    color: bool = False         # ANSI colours (text, on a terminal)
    evidence: bool = True       # evidence lines under each finding (text; --brief turns it off)
    ascii_only: bool = False    # ASCII glyphs only (text: the timing diagrams)
    caution: bool = True        # the closing safety note (text)

    def key(self) -> dict[str, Any]:
        """The options as JSON-able data (part of the report cache key)."""
        return asdict(self)


@dataclass(frozen=True)
class Format:
    """A loaded report format."""

    name: str
    summary: str
    writer: Callable[[Any, Any, ReportOptions], None]
    origin: str = ""            # "module (distribution)"
    builtin: bool = False       # shipped with hazlint (its report may be cached: its code is
    #                             part of the cache's code stamp, a plugin's is not)

    def write(self, result: Any, stream, options: ReportOptions | None = None) -> None:
        """Write the report; an exception of a plugin format becomes a :class:`HazlintError`
        (exit 2) naming the format and where it comes from."""
        options = options or ReportOptions()
        if self.builtin:
            self.writer(result, stream, options)
            return
        try:
            self.writer(result, stream, options)
        except (HazlintError, BrokenPipeError, MemoryError):
            raise
        except Exception as exc:
            raise HazlintError(f"output format '{self.name}' ({self.origin}) failed: "
                               f"{type(exc).__name__}: {exc}") from None

    def render(self, result: Any, options: ReportOptions | None = None) -> str:
        """The report as one string (small results: tests, the language server)."""
        import io
        buf = io.StringIO()
        self.write(result, buf, options)
        return buf.getvalue()


def format_from_object(obj: Any, origin: str = "", builtin: bool = False) -> Format:
    """Check a format module/object and wrap it; a :class:`HazlintError` names what is wrong."""
    missing = [a for a in ("NAME", "SUMMARY", "write") if not hasattr(obj, a)]
    if missing:
        raise HazlintError(f"output format plugin {origin or obj!r} lacks {', '.join(missing)}")
    name = obj.NAME
    if not isinstance(name, str) or not _NAME_RE.match(name):
        raise HazlintError(f"output format plugin {origin}: bad format name {name!r} "
                           f"(lowercase words joined by hyphens)")
    if not callable(obj.write):
        raise HazlintError(f"output format plugin {origin}: 'write' is not callable")
    return Format(name=name, summary=str(obj.SUMMARY).strip(), writer=obj.write, origin=origin,
                  builtin=builtin)


@lru_cache(maxsize=1)
def _entry_points() -> dict[str, tuple[metadata.EntryPoint, ...]]:
    """Registered entry points by format name (not loaded), in a fixed order."""
    out: dict[str, list[metadata.EntryPoint]] = {}
    for ep in metadata.entry_points(group=ENTRY_POINT_GROUP):
        out.setdefault(ep.name, []).append(ep)
    if not out:
        raise HazlintError(f"no output formats registered under the '{ENTRY_POINT_GROUP}' "
                           "entry-point group; install hazlint (pip install -e .) so its "
                           "formats are registered")
    return {k: tuple(sorted(v, key=_origin)) for k, v in sorted(out.items())}


def _origin(ep: metadata.EntryPoint) -> str:
    dist = getattr(ep, "dist", None)
    return f"{ep.value} ({dist.name})" if dist is not None else ep.value


def _is_builtin(ep: metadata.EntryPoint) -> bool:
    dist = getattr(ep, "dist", None)
    return dist is not None and dist.name == _OWN_DIST and ep.value.startswith("hazlint.")


class FormatNames:
    """The registered format names as ``argparse`` choices, read when first asked (so that
    building the command line does not scan the installed packages)."""

    def __contains__(self, name: object) -> bool:
        return isinstance(name, str) and name in _entry_points()

    def __iter__(self) -> Iterator[str]:
        return iter(_entry_points())


def format_names() -> list[str]:
    """Every registered format name, sorted."""
    return list(_entry_points())


@lru_cache(maxsize=None)
def get_format(name: str) -> Format:
    """The format registered as ``name``, loaded; a :class:`HazlintError` (exit 2) for an
    unknown name, a name registered twice or a plugin that cannot be loaded."""
    eps = _entry_points().get(name)
    if not eps:
        raise HazlintError(f"unknown output format '{name}' (known: "
                           f"{', '.join(_entry_points())}; `hazlint formats` lists them)")
    if len(eps) > 1:
        raise HazlintError(f"output format '{name}' registered twice: "
                           f"{' and '.join(_origin(e) for e in eps)}")
    ep = eps[0]
    try:
        obj = ep.load()
    except Exception as exc:    # a broken third-party plugin: its name, not a traceback
        raise HazlintError(f"cannot load output format '{name}' = {ep.value}: "
                           f"{type(exc).__name__}: {exc}") from None
    fmt = format_from_object(obj, _origin(ep), builtin=_is_builtin(ep))
    if fmt.name != name:
        raise HazlintError(f"output format entry point '{name}' ({_origin(ep)}) defines "
                           f"format '{fmt.name}'; they must match")
    return fmt


def all_formats() -> tuple[list[Format], list[HazlintError]]:
    """Every registered format that loads, sorted by name, and the errors of those that do
    not (for the listing command)."""
    good: list[Format] = []
    bad: list[HazlintError] = []
    for name in _entry_points():
        try:
            good.append(get_format(name))
        except HazlintError as exc:
            bad.append(exc)
    return good, bad
