"""Paths as reports show them: the one rule every report, the baseline and the change model use.

A file inside the project root is shown relative to it, with forward slashes (what a CI runner
resolves against the checkout, and what stays the same on every machine); a file outside it is
shown as its absolute path, with forward slashes. SARIF states the same rule as a URI
(:func:`hazlint.report.sarif` builds it from :func:`inside_root`).

>>> relpath("/work/press/rtl/valve.v", "/work/press")
'rtl/valve.v'
>>> relpath("/work/press/../shared/cells.v", "/work/press")
'/work/shared/cells.v'
>>> relpath("/work/press/..old/valve.v", "/work/press")
'..old/valve.v'
>>> inside_root("/work/shared/cells.v", "/work/press") is None
True
"""
from __future__ import annotations

import os


def inside_root(path: str, root: str | None) -> str | None:
    """``path`` relative to ``root`` with forward slashes when the file lies inside ``root``;
    None when it does not (or there is no root, or no relative path exists: another drive)."""
    if not path or not root:
        return None
    try:
        rel = os.path.relpath(os.path.abspath(path), os.path.abspath(root))
    except ValueError:
        return None
    if rel == ".." or rel.startswith(".." + os.sep):
        return None
    return rel.replace(os.sep, "/")


def relpath(path: str, root: str | None) -> str:
    """``path`` as reports show it: relative to ``root`` inside it, else absolute (forward
    slashes either way); an empty path stays empty."""
    if not path:
        return path
    rel = inside_root(path, root)
    if rel is not None:
        return rel
    return os.path.abspath(path).replace(os.sep, "/")
