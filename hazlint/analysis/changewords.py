"""A sink verdict over the change model as evidence and words: the model, the cell model, the
hazards found, and a fix that fits a function hazard (findings of
:func:`hazlint.analysis.refine.refine` at glitch-sensitive sinks)."""
from __future__ import annotations

from dataclasses import replace

from ..findings.evidence import Verdict, typed, with_verdict

from .cellmodel import MODEL_TEXT
from .multichange import SinkVerdict
from .ternary import HAZARD_KINDS


def with_change_model(diag, v: SinkVerdict, label, cell_model: str = "atomic"):
    """The finding with the change model and the cell model it was proven under, in its
    evidence and notes (right after the proof line)."""
    cons = v.model.constraint_text(label)
    ev = typed(diag.evidence)
    ev = with_verdict(ev, replace(ev.verdict or Verdict(), change_model={
        "sources": {label(n): v.model.labels.get(n, "any time") for n in v.model.sources},
        "held": sorted(label(n) for n in v.model.quiet),
        "constraints": cons, "max_changes": v.model.max_changes, "bound": v.bound,
        "covered": v.model.proven_text(label, v.bound)},
        cell_model=cell_model, sink_hazards=v.to_json(label)))
    lines = [f"change model: {v.model.sources_text(label) or 'no changing source'}"
             + (f"; {'; '.join(cons)}" if cons else ""),
             f"cell model: {MODEL_TEXT.get(cell_model, cell_model)}"]
    summary = v.summary(label)
    if summary:
        lines.append("hazards over the model:")
        lines += [f"  {x}" for x in summary]
    notes = [t for t in diag.notes if not t.startswith("also possible for other transitions")]
    at = next((i + 1 for i, t in enumerate(notes) if t.startswith("proof:")), None)
    if at is None:
        at = next((i + 1 for i, t in enumerate(notes)
                   if t.startswith(("proven hazard-free", "hazard proof inconclusive"))),
                  len(notes))
    notes[at:at] = lines
    return replace(diag, evidence=ev, notes=tuple(notes), fix=_fix(diag, v, label))


def _fix(diag, v: SinkVerdict, label) -> str | None:
    """A function hazard is the circuit's, not the logic's: say which sources must not change
    together, and how to tell the tool when the circuit guarantees it."""
    fh = None
    for k in HAZARD_KINDS:
        f = v.kinds.get(k, {}).get("function")
        if f is not None and f.status == "present" and (fh is None or f.size < fh.size):
            fh = f
    if fh is None:
        return diag.fix
    names = [label(n) for n in fh.changed]
    together = f"{', '.join(names[:-1])} and {names[-1]}" if len(names) > 1 else names[0]
    text = (f"{together} changing together glitch this pin whatever the logic (a function "
            "hazard): drive the pin from a register, or make the sources change one at a time; "
            "if the circuit guarantees that, declare it (configuration one_at_a_time or "
            "static_inputs, or the attributes hazlint_one_at_a_time / hazlint_static)")
    best = v.best()
    if best is not None and best[1] != "function" and diag.fix:
        return f"{diag.fix}; this removes the logic hazard only: {text}"
    return text
