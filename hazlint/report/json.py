"""JSON: a list of finding objects (``rule``, ``kind``, ``severity``, ``path``, ``line``,
``column``, ``instance``, ``message``, ``evidence``, ``fix``), paths relative to the project root.
Deterministic: the same input gives the same bytes (sorted findings, sorted keys)."""
from __future__ import annotations

import json
from typing import Any


def findings(result: Any, include_waived: bool = False) -> list[dict]:
    rel = getattr(result, "relpath", None) or (lambda p: p)
    diags = list(result.diagnostics)
    if include_waived:
        diags += list(getattr(result, "waived", []) or [])
    return [d.to_json(rel) for d in diags]


def render(result: Any, include_waived: bool = False) -> str:
    return json.dumps(findings(result, include_waived), indent=2, sort_keys=True,
                      ensure_ascii=False, allow_nan=False) + "\n"
