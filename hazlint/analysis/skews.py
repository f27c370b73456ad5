"""Skews between sources that change together, for replaying a multi-input witness.

Sources that a transition changes "together" never change at exactly the same moment: inputs
drift, registers of one clock differ in clock-to-output delay. The timed replay of a witness with
several changing sources therefore tries the nominal gate delays with the sources changing one
after another, in every order, the skew between consecutive changes growing from one unit to
twice the longest path through the changing logic.
"""
from __future__ import annotations

import itertools
from typing import Iterator, Sequence


def skew_offsets(changing: Sequence[str], span: float, limit: int
                 ) -> Iterator[dict[str, float]]:
    """Change-time offsets (source -> time after the first change): every order of the
    sources (rotations past three), consecutive changes ``skew`` apart, the skew taken from
    small to ``2 * span``; at most ``limit`` of them."""
    changing = list(changing)
    if len(changing) <= 3:
        orders = [list(o) for o in itertools.permutations(changing)]
    else:
        orders = [changing[k:] + changing[:k] for k in range(len(changing))]
    steps = sorted({max(1.0, float(round(span * f))) for f in (0.0, 0.25, 0.5, 1.0, 1.5, 2.0)})
    made = 0
    for skew in steps:
        for o in orders:
            if made >= limit:
                return
            made += 1
            yield {n: k * skew for k, n in enumerate(o) if k}
