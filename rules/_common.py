"""Helpers shared by the built-in rules."""
from __future__ import annotations

import hashlib

from hazlint.diagnostics import Severity


def stable_key(*parts: str) -> str:
    """A short key that identifies a finding from node names only (no line numbers)."""
    h = hashlib.sha1("\x00".join(parts).encode()).hexdigest()[:12]
    return f"{parts[0]}:{h}"


def severity(name: str) -> Severity:
    return Severity.parse(name)


def name_list(names, limit: int = 6) -> str:
    names = list(names)
    if len(names) <= limit:
        return ", ".join(names)
    return ", ".join(names[:limit]) + f", ... ({len(names) - limit} more)"
