"""The findings of a run (before waivers, baseline and the changed-files filter), cached by
:func:`result_key`."""
from __future__ import annotations

import hashlib
import json
import os
from typing import Any, Iterable, Mapping

from .codec import CodecError
from .design import design_codec
from .namespace import Namespace

# findings of a run (before waivers, baseline and the changed-files filter)

RESULT_FORMAT = 1
RESULT_NAMESPACE = "result"


# configuration keys that do not change the findings this cache holds: the report format,
# the acceptances and the baseline (applied to the cached findings afterwards), where the
# caches live, and how the work is spread (the findings never depend on the worker count)
REPORT_ONLY_KEYS = frozenset(("format", "accept_file", "baseline", "cache_dir",
                              "cache_limit_mb", "jobs", "scheduler"))


def result_key(design_key: str, config, *, select, ignore, prove: bool,
               options: Mapping[str, Any], rules: Iterable[Any],
               prove_options: Mapping[str, Any] | None = None) -> str | None:
    """sha256 over what decides the findings of a design: the design key, the
    configuration table but its :data:`REPORT_ONLY_KEYS` plus the resolved rule options, the selection, whether the prover ran
    and its options (``prove_options``, default the configuration's), and which rules ran
    with a stamp of each rule's module file (rules from other distributions are not covered
    by :func:`code_stamp`)."""
    import sys
    ran = []
    for r in rules:
        mod = sys.modules.get(getattr(r.check, "__module__", ""), None)
        f = getattr(mod, "__file__", None)
        try:
            st = os.stat(f) if f else None
        except OSError:
            st = None
        ran.append([r.id, r.origin, str(r.severity), f,
                    [st.st_size, st.st_mtime_ns] if st else None])
    material = {
        "format": RESULT_FORMAT, "design": design_key,
        "raw": {k: v for k, v in (config.raw or {}).items() if k not in REPORT_ONLY_KEYS},
        "config_path": config.path, "root": config.root, "severity": config.severity,
        "async_outputs": config.async_outputs, "static_inputs": config.static_inputs,
        "prove_options": config.prove if prove_options is None else prove_options, "select": None if select is None else list(select),
        "ignore": list(ignore), "prove": bool(prove), "options": options, "rules": ran,
    }
    try:
        text = json.dumps(material, sort_keys=True, default=repr)
    except (TypeError, ValueError):
        return None
    return hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()


class ResultCache(Namespace):
    """Findings (a list of :class:`~hazlint.diagnostics.Diagnostic`) by :func:`result_key`,
    in namespace ``result``, stamped with :func:`code_stamp`."""

    NAMESPACE = RESULT_NAMESPACE

    def load(self, key: str):
        data = self.entry(key)
        if data is None:
            return None
        from ..diagnostics import Diagnostic
        try:
            if data.get("format") != RESULT_FORMAT:
                raise CodecError("not a result entry of this format")
            diags = design_codec().decode(data)
            if not isinstance(diags, list) or not all(isinstance(d, Diagnostic) for d in diags):
                raise CodecError("not a list of findings")
        except (ValueError, RecursionError, AttributeError):
            self.store_.discard(key)
            return None
        return diags

    def store(self, key: str, diagnostics) -> bool:
        try:
            doc = design_codec().encode(list(diagnostics))
        except (CodecError, RecursionError):
            return False
        doc["format"] = RESULT_FORMAT
        before = self.store_.stores
        self.store_.store(key, doc)
        return self.store_.stores > before


def open_result_cache(directory: str | os.PathLike | None = None, *,
                      limit_mb: int | None = None) -> ResultCache | None:
    c = ResultCache(directory, limit_mb=limit_mb)
    return c if c.enabled else None
