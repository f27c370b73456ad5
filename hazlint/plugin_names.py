"""What every entry-point plugin (a rule, an output format) must have: its required attributes
and a name of lowercase words joined by hyphens.

    >>> class Toy:
    ...     NAME = "tab-lines"
    ...     write = print
    >>> plugin_name(Toy, ("NAME", "write"), "NAME", "output format", "format name", "toy")
    'tab-lines'
    >>> is_name("Tab_Lines")
    False
"""
from __future__ import annotations

import re
from typing import Any, Iterable

from .errors import HazlintError

NAME_RE = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")


def is_name(text: Any) -> bool:
    """Lowercase words of letters and digits joined by hyphens, starting with a letter."""
    return isinstance(text, str) and NAME_RE.match(text) is not None


def plugin_name(obj: Any, required: Iterable[str], name_attr: str, what: str, noun: str,
                origin: str = "") -> str:
    """The name of plugin ``obj`` (its attribute ``name_attr``) after checking that it has every
    ``required`` attribute; a :class:`HazlintError` that says which ``what`` (e.g. "rule")
    from ``origin`` lacks what, or why its ``noun`` (e.g. "rule id") is bad."""
    missing = [a for a in required if not hasattr(obj, a)]
    if missing:
        raise HazlintError(f"{what} plugin {origin or obj!r} lacks {', '.join(missing)}")
    name = getattr(obj, name_attr)
    if not is_name(name):
        raise HazlintError(f"{what} plugin {origin}: bad {noun} {name!r} (lowercase words "
                           f"joined by hyphens)")
    return name
