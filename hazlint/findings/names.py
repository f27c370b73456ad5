"""One name per idea, and the old spellings for one more release.

Rule ids are the kind of problem they report (``unbalanced-reconvergence``,
``unregistered-async``, ``combinational-loop``, ``unused-acceptance``); accepting a finding is
*accept* everywhere (the ``// hazlint accept(...)`` comment, ``[[accept]]`` tables, the
``accept_file`` key, "accepted" in reports); inputs that never change during operation are
*static* everywhere (``static_inputs``, ``(* hazlint_static *)``, "static" in the evidence).

The spellings used before keep working until the next release: :func:`rule_id` and
:func:`config_key` translate them and remember what they met, and the command prints one
deprecation note per run (:func:`take_note`) naming each old spelling, its new name and where it
was written.
"""
from __future__ import annotations

RECONVERGENCE_RULE = "unbalanced-reconvergence"
SENSITIVE_PIN_RULE = "unregistered-async"
LOOP_RULE = "combinational-loop"
UNUSED_ACCEPT_RULE = "unused-acceptance"
FRONT_END_RULE = "front-end"

# old rule id -> new rule id
RULE_RENAMES = {
    "skewed-reconvergence": RECONVERGENCE_RULE,
    "async-from-logic": SENSITIVE_PIN_RULE,
    "comb-loop": LOOP_RULE,
    "unused-waiver": UNUSED_ACCEPT_RULE,
}
# old configuration key -> new key
KEY_RENAMES = {
    "sync_inputs": "static_inputs",
    "waiver_file": "accept_file",
}
# old Verilog attribute -> new attribute
ATTRIBUTE_RENAMES = {
    "hazlint_sync": "hazlint_static",
}

_MET: dict[tuple[str, str], str] = {}      # (old, new) -> first place it was written


def deprecated(old: str, new: str, where: str = "") -> None:
    """Remember that ``old`` was used for ``new`` (at ``where``, e.g. ``path:line``)."""
    _MET.setdefault((old, new), where)


def rule_id(rid: str, where: str = "") -> str:
    """The current id of ``rid`` (an old id is translated and remembered)."""
    new = RULE_RENAMES.get(rid)
    if new is None:
        return rid
    deprecated(rid, new, where)
    return new


def rule_ids(ids, where: str = "") -> list[str]:
    return [rule_id(r, where) for r in ids]


def take_note() -> str | None:
    """The run's one deprecation note (None when no old spelling was met); forgets them."""
    if not _MET:
        return None
    parts = [f"'{old}' is now '{new}'" + (f" ({where})" if where else "")
             for (old, new), where in sorted(_MET.items())]
    _MET.clear()
    return ("hazlint: note: old spellings still work in this release but not in the next: "
            + "; ".join(parts))
