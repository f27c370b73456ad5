"""Random transitions of the change model, simulated bit-parallel: witnesses before the solver.

Most hazards at a sink show up among a few random transitions: every single change of every
source (with random values of the others) and random changes of two sources together. One
ternary/transient pass over the cone decides them all at once (one lane per transition,
:func:`hazlint.analysis.ternary.hazard_planes`), and the two middle corners of each two-source
cube tell a function hazard from a logic hazard exactly (a change of one source has no function
hazard; a change of two has no dynamic function hazard). A witness found here of the smallest
size a question allows (one source for "any" and "logic", two for "function") needs no solver;
everything else is left to the exact engines of :mod:`hazlint.analysis.multichange`.
"""
from __future__ import annotations

import random
from typing import Mapping, Sequence

from .changes import SinkModel
from .ternary import HAZARD_KINDS, IntAlgebra, bool_gate, hazard_planes, propagate


def random_transitions(graph, order: Sequence[str], target: str, srcs: Sequence[str],
                       sm: SinkModel, vectors: int = 32, pairs: int = 1024, triples: int = 512,
                       seed: int = 0
                       ) -> dict[str, dict[str, tuple[dict, dict, int]]]:
    """``{kind: {question: (before, after, size)}}`` for the hazards found, the smallest
    change set first (then the first lane)."""
    rng = random.Random(seed)
    n = len(sm.sources)
    if n == 0:
        return {}
    changes: list[tuple[int, ...]] = [(i,) for i in range(n) for _ in range(vectors)]
    blocked = set()
    for gr, ids in sm.groups:
        if gr.kind == "one-at-a-time":
            blocked |= {(a, b) for a in ids for b in ids}
    all_pairs = [(i, j) for i in range(n) for j in range(i + 1, n) if (i, j) not in blocked]
    if all_pairs:
        if len(all_pairs) * 4 <= pairs:
            chosen = [p for p in all_pairs for _ in range(pairs // len(all_pairs))]
        else:
            chosen = [rng.choice(all_pairs) for _ in range(pairs)]
        changes += chosen
    if n >= 3 and triples:
        # three sources: the smallest change with a dynamic function hazard
        for _ in range(triples):
            t = tuple(sorted(rng.sample(range(n), 3)))
            if not any((a, b) in blocked for a in t for b in t if a < b):
                changes.append(t)
    width = len(changes)
    A = IntAlgebra(width)
    va: dict[str, int] = {}
    for name in list(sm.sources) + list(sm.quiet):
        va[name] = rng.getrandbits(width)
    for gr, ids in sm.groups:          # one-hot groups start one-hot (or all 0)
        if gr.kind != "one-hot":
            continue
        names = [sm.sources[i] for i in ids]
        bits = {x: 0 for x in names}
        for lane in range(width):
            pick = rng.randrange(len(names) + 1)
            if pick < len(names):
                bits[names[pick]] |= 1 << lane
        va.update(bits)
    flip = [0] * n
    for lane, ch in enumerate(changes):
        for i in ch:
            flip[i] |= 1 << lane
    vb = dict(va)
    for i, name in enumerate(sm.sources):
        vb[name] = va[name] ^ flip[i]
    valid = A.mask
    for gr, ids in sm.groups:
        if gr.kind != "one-hot":
            continue
        names = [sm.sources[i] for i in ids]
        for vals in (va, vb):
            seen = 0
            for x in names:
                valid &= ~(seen & vals[x])
                seen |= vals[x]
    planes = hazard_planes(graph, order, target, A, va, vb, srcs)
    fa = planes["before"]
    # the middle corners of two-source cubes (single changes: the cube has none, a itself)
    m1, m2 = dict(va), dict(va)
    first = [0] * n
    second = [0] * n
    for lane, ch in enumerate(changes):
        if len(ch) == 2:
            first[ch[0]] |= 1 << lane
            second[ch[1]] |= 1 << lane
        elif len(ch) == 3:     # static: a three-source cube has six middle corners; these
            first[ch[0]] |= 1 << lane      # lanes only look for dynamic function hazards
            second[ch[0]] |= 1 << lane
    for i, name in enumerate(sm.sources):
        m1[name] = va[name] ^ first[i]
        m2[name] = va[name] ^ second[i]
    f1 = propagate(graph, order, {k: m1[k] for k in srcs}, A, bool_gate)[target]
    f2 = propagate(graph, order, {k: m2[k] for k in srcs}, A, bool_gate)[target]
    fh = (f1 ^ fa) | (f2 ^ fa)
    small = 0
    for lane, ch in enumerate(changes):
        if len(ch) <= 2:
            small |= 1 << lane
    dfh = _dynamic_function_hazard(graph, order, target, srcs, sm, changes, va, A, planes)
    out: dict[str, dict[str, tuple[dict, dict, int]]] = {}
    for k in HAZARD_KINDS:
        hit = planes[k] & valid
        if not hit:
            continue
        q: dict[str, tuple[dict, dict, int]] = {}
        if k == "dynamic-hazard":
            fn = hit & dfh
        else:
            hit &= small          # three-source lanes see one middle corner only
            fn = hit & fh
        for name, lanes in (("any", hit), ("function", fn), ("logic", hit & ~fn)):
            if lanes:
                lane = (lanes & -lanes).bit_length() - 1
                before = {x: (va[x] >> lane) & 1 for x in va}
                after = {x: (vb[x] >> lane) & 1 for x in vb}
                q[name] = (before, after, len(changes[lane]))
        out[k] = q
    return out


def _dynamic_function_hazard(graph, order, target, srcs, sm, changes, va, A, planes) -> int:
    """Lanes of three changing sources whose function returns to its start value after reaching
    its end value along a monotone path through the cube (corners a+S for subsets S)."""
    n = len(sm.sources)
    sel = [[0] * n for _ in range(3)]
    tri = 0
    for lane, ch in enumerate(changes):
        if len(ch) == 3:
            tri |= 1 << lane
            for pos, i in enumerate(ch):
                sel[pos][i] |= 1 << lane
    if not tri:
        return 0
    corner = {}
    for mask in range(1, 7):            # the six middle corners
        vals = dict(va)
        for i, name in enumerate(sm.sources):
            flip = 0
            for pos in range(3):
                if (mask >> pos) & 1:
                    flip |= sel[pos][i]
            vals[name] = va[name] ^ flip
        corner[mask] = propagate(graph, order, {k: vals[k] for k in srcs}, A, bool_gate)[target]
    fa, fb = planes["before"], planes["after"]
    corner[0], corner[7] = fa, fb
    hit = 0
    for c in range(8):
        for d in range(8):
            if c != d and c & d == c:
                # f(c) = f(b) and later f(d) = f(a)
                hit |= ~(corner[c] ^ fb) & ~(corner[d] ^ fa)
    return hit & (fa ^ fb) & tri & A.mask


def known_minimal(found: Mapping[str, tuple[dict, dict, int]], question: str,
                  kind: str) -> bool:
    """Is a simulated witness of the smallest size the question allows (a function hazard
    needs two changing sources, a dynamic one three)?"""
    hit = found.get(question)
    low = 1 if question != "function" else 3 if kind == "dynamic-hazard" else 2
    return hit is not None and hit[2] <= low
