"""Paths as reports show them."""
from __future__ import annotations

import os


def relpath(path: str, root: str) -> str:
    """``path`` relative to ``root`` with forward slashes when inside it, else unchanged."""
    if not path:
        return path
    ap = os.path.abspath(path)
    try:
        rel = os.path.relpath(ap, os.path.abspath(root))
    except ValueError:
        return path.replace(os.sep, "/")
    if rel == ".." or rel.startswith(".." + os.sep):
        return ap.replace(os.sep, "/")
    return rel.replace(os.sep, "/")
