"""Arrival times from one fanout stem, by dynamic programming over a topological order.

For a stem *s* the analysis visits only *s*'s fanout cone, in topological order, and keeps for every
node the minimum and maximum arrival time of a transition launched at *s* (static min/max timing
with the design's delay model: each gate input pin has a :class:`hazlint.netlist.library.Delay`, each
edge may carry an SDF ``wire`` delay). It also keeps, per node, which fanout branch of *s* its
paths start on (one branch, or several), which is what tells a genuine reconvergence of *s*'s
branches at a gate from paths that split later at another stem. Back-pointers give the fastest and
the slowest path without enumerating paths: the work per stem is linear in the size of its cone.

This is the classic block-oriented static timing recurrence (arrival = max/min over fan-in of
predecessor arrival plus arc delay), restricted to a single launching point.
"""
from __future__ import annotations

import heapq
import math
from dataclasses import dataclass

from .timing_graph import TimingGraph  # noqa: F401  (the graph these solvers read)

INF = math.inf


@dataclass
class Reconvergence:
    """A gate where transitions from two different fanout branches of a stem meet."""

    gate: int                 # node index
    skew: float               # slowest arrival through one pin minus fastest through another
    slow_pin: int             # position in the gate's fan-in list
    fast_pin: int
    slow_arrival: float
    fast_arrival: float


class StemTiming:
    """Min/max arrival of a transition launched at one stem, over the stem's fanout cone.

    Arrays are shared scratch space owned by :class:`ArrivalSolver`; results are valid until the
    solver's next :meth:`ArrivalSolver.solve` call.
    """

    def __init__(self, solver: "ArrivalSolver", stem: int, cone: list[int]):
        self.solver = solver
        self.stem = stem
        self.cone = cone        # topological order, stem first
        self._chains: dict = {}

    def chain(self, node: int, slow: bool, make, tag: str = "") -> tuple:
        """The fastest/slowest path from the stem to ``node`` as a tuple of
        ``make(node index, hop delay, arrival)`` items, stem first, walked back along the
        back-pointers. The paths of one stem form a tree, so every node already placed on an
        earlier path of this stem (per ``tag``) ends the walk: its prefix is copied from that
        path instead of walked again."""
        return self.chain_ids(node, slow, make, tag)[1]

    def chain_ids(self, node: int, slow: bool, make, tag: str = "") -> tuple[tuple, tuple]:
        """:meth:`chain` together with the node ids (``tg.order`` entries) along the path:
        ``(ids, items)``, two tuples of the same length."""
        s = self.solver
        back = s.bmax if slow else s.bmin
        arr = s.amax if slow else s.amin
        bget = getattr(back, "get", None) or back.__getitem__
        aget = getattr(arr, "get", None) or arr.__getitem__
        fanin = s.tg.fanin
        order = s.tg.order
        key = (tag, slow)
        memo = self._chains.get(key)
        if memo is None:
            memo = self._chains[key] = {}
        stem = self.stem
        walked = []
        n = node
        while True:
            hit = memo.get(n)
            if hit is not None:
                ids, items, i = hit
                ids, items = ids[:i + 1], items[:i + 1]
                break
            if n == stem:
                ids = items = ()
                walked.append((n, 0.0, 0.0))
                break
            p, _pin, dmin, dmax = fanin[n][bget(n)]
            walked.append((n, dmax if slow else dmin, aget(n)))
            n = p
        walked.reverse()
        ids = ids + tuple(order[i] for i, _dl, _a in walked)
        items = items + tuple(make(i, dl, a) for i, dl, a in walked)
        base = len(ids) - len(walked)
        for k, (i, _dl, _a) in enumerate(walked):
            memo[i] = (ids, items, base + k)
        return ids, items

    @property
    def arrival_min(self):
        return self.solver.amin

    @property
    def arrival_max(self):
        return self.solver.amax

    def path_to(self, node: int, slow: bool) -> list[tuple[int, float, float]]:
        """Fastest (slow=False) or slowest path from the stem to ``node`` as
        (node index, delay of the hop, arrival) triples, stem first. Back-pointers only."""
        s = self.solver
        back = s.bmax if slow else s.bmin
        arr = s.amax if slow else s.amin
        fanin = s.tg.fanin
        out = []
        n = node
        while n != self.stem:
            k = back[n]
            p, _pin, dmin, dmax = fanin[n][k]
            out.append((n, dmax if slow else dmin, arr[n]))
            n = p
        out.append((self.stem, 0.0, 0.0))
        out.reverse()
        return out


class ArrivalSolver:
    """Runs the per-stem DP. One instance per timing graph; reuses its arrays across stems."""

    def __init__(self, tg: TimingGraph):
        self.tg = tg
        n = len(tg.order)
        self.amin = [INF] * n
        self.amax = [-INF] * n
        self.bmin = [0] * n
        self.bmax = [0] * n
        self.dom = [-1] * n          # immediate dominator in the current cone; -1: not in it
        self.top = [0] * n           # the stem's dominator-tree child above each node
        self.left = [0] * n          # successors not yet visited
        self._touched: list[int] = []

    def _reset(self):
        amin, amax, dom = self.amin, self.amax, self.dom
        for i in self._touched:
            amin[i] = INF
            amax[i] = -INF
            dom[i] = -1
        self._touched = []

    def solve(self, stem: int, on_reconvergence=None, complete: bool = False,
              budget: int | None = None) -> StemTiming | None:
        """Fill arrival arrays for ``stem``'s cone. ``on_reconvergence(Reconvergence)`` is called
        for every gate where paths from two different fanout branches of the stem meet for the
        first time (in topological order).

        "For the first time" is decided with dominators of the cone (the stem is the root): two
        input pins of a gate reconverge *at this stem* when the nearest common dominator of
        their drivers is the stem itself. When every path to both pins passes through some
        other node, the branches really split at that node, a later stem, and the reconvergence
        is that stem's; so each reconvergence is attributed to the nearest stem that causes it.
        On a DAG visited in topological order, a node's immediate dominator is the nearest
        common dominator of its predecessors (Cooper, Harvey & Kennedy, "A Simple, Fast
        Dominance Algorithm", 2001, with one pass sufficing in topological order).

        The cone is discovered lazily (a heap of topological positions) and the sweep stops as
        soon as no further reconvergence of this stem is possible: when the stem's own reads are
        all done and every node still waiting for successors lies under one child of the stem
        in the dominator tree, every later node is dominated by that child. ``complete`` sweeps
        the whole cone regardless (arrival times everywhere). With a ``budget``, a sweep that
        would visit more nodes than that gives up and returns None (the caller then hands the
        stem to the batch solver).
        """
        self._reset()
        amin, amax, bmin, bmax, dom = self.amin, self.amax, self.bmin, self.bmax, self.dom
        top, left = self.top, self.left
        tg = self.tg
        fanin, fanout, preds = tg.fanin, tg.fanout, tg.preds
        amin[stem] = 0.0
        amax[stem] = 0.0
        dom[stem] = stem
        left[stem] = len(fanout[stem])
        visited = [stem]
        heap = list(fanout[stem])
        heapq.heapify(heap)
        queued = set(heap)
        open_tops: dict[int, int] = {}      # dominator-tree child of the stem -> open nodes
        push, pop = heapq.heappush, heapq.heappop
        while heap:
            v = pop(heap)
            visited.append(v)
            lo = INF
            hi = -INF
            klo = khi = 0
            d = -1
            reached = []
            for k, (p, pin, dmin, dmax) in enumerate(fanin[v]):
                if p == stem:
                    a_lo = dmin
                    a_hi = dmax
                else:
                    if dom[p] < 0:
                        continue
                    a_lo = amin[p] + dmin
                    a_hi = amax[p] + dmax
                if a_lo < lo:
                    lo = a_lo
                    klo = k
                if a_hi > hi:
                    hi = a_hi
                    khi = k
                # nearest common dominator of the drivers so far (indices are topological)
                if d < 0:
                    d = p
                elif d != p:
                    a, b = d, p
                    while a != b:
                        while a > b:
                            a = dom[a]
                        while b > a:
                            b = dom[b]
                    d = a
                reached.append((k, p, a_lo, a_hi))
            if d == stem and len(reached) >= 2 and on_reconvergence is not None:
                r = _worst_pair_top(reached, top, stem)
                if r is not None:
                    skew, ks, kf, ts, tf = r
                    on_reconvergence(Reconvergence(v, skew, ks, kf, ts, tf))
            amin[v] = lo
            amax[v] = hi
            bmin[v] = klo
            bmax[v] = khi
            dom[v] = d
            # bookkeeping of the open frontier, for the early stop
            for p in preds[v]:
                if dom[p] < 0:
                    continue
                left[p] -= 1
                if left[p] == 0 and p != stem:
                    t = top[p]
                    c = open_tops[t] - 1
                    if c:
                        open_tops[t] = c
                    else:
                        del open_tops[t]
            outs = fanout[v]
            if outs:
                t = v if d == stem else top[d]
                top[v] = t
                left[v] = len(outs)
                open_tops[t] = open_tops.get(t, 0) + 1
                for w in outs:
                    if w not in queued:
                        queued.add(w)
                        push(heap, w)
            if not complete and left[stem] == 0 and len(open_tops) <= 1:
                break
            if budget is not None and len(visited) > budget:
                self._touched = visited
                return None
        self._touched = visited
        visited.sort()
        return StemTiming(self, stem, visited)


def _meet(dom, a: int, b: int) -> int:
    while a != b:
        while a > b:
            a = dom[a]
        while b > a:
            b = dom[b]
    return a


def _worst_pair_top(reached, top, stem):
    """:func:`_worst_pair` with the stem's dominator-tree child above each driver (``top``):
    two drivers other than the stem meet first at the stem exactly when they lie under
    different children of the stem in the dominator tree (same pair order, same ties)."""
    best = None
    for ka, pa, _lo_a, hi_a in reached:
        ta = top[pa] if pa != stem else -1
        for kb, pb, lo_b, _hi_b in reached:
            if ka == kb:
                continue
            if ta >= 0 and pb != stem and ta == top[pb]:
                continue
            skew = hi_a - lo_b
            if best is None or skew > best[0]:
                best = (skew, ka, kb, hi_a, lo_b)
    return best


def _worst_pair(reached, dom, stem):
    """Largest (slow arrival through pin a) - (fast arrival through pin b) over pin pairs whose
    paths first meet here, i.e. whose drivers' nearest common dominator is the stem.
    ``reached``: (fanin position, driver, lo, hi)."""
    best = None
    for ka, pa, _lo_a, hi_a in reached:
        for kb, pb, lo_b, _hi_b in reached:
            if ka == kb:
                continue
            if pa != stem and pb != stem and (pa == pb or _meet(dom, pa, pb) != stem):
                continue
            skew = hi_a - lo_b
            if best is None or skew > best[0]:
                best = (skew, ka, kb, hi_a, lo_b)
    return best


# ---------------------------------------------------------------------------------------------
# The same DP for many stems at once (numpy): one column per stem, one topological level at a
# time. It computes exactly what ArrivalSolver.solve computes (same arithmetic, same tie rules);
# tests compare the two. Worth it when cones are large: the scalar sweep costs a few
# microseconds per node in Python, the batch a fraction of that per node and stem.

class _LevelPlan:
    """Per topological level: node indices and padded fan-in (pad row = N, never reached)."""

    def __init__(self, tg: TimingGraph):
        import numpy as np
        n = len(tg.order)
        level = [0] * n
        for v in range(n):
            f = tg.fanin[v]
            if f:
                level[v] = 1 + max(level[p] for p, _, _, _ in f)
        self.level = level
        by_level: dict[int, list[int]] = {}
        for v in range(n):
            if tg.fanin[v]:
                by_level.setdefault(level[v], []).append(v)
        self.levels = []
        for lv in sorted(by_level):
            vs = by_level[lv]
            k = max(len(tg.fanin[v]) for v in vs)
            P = np.full((len(vs), k), n, dtype=np.int64)
            DMIN = np.zeros((len(vs), k))
            DMAX = np.zeros((len(vs), k))
            for i, v in enumerate(vs):
                for j, (p, _pin, dmin, dmax) in enumerate(tg.fanin[v]):
                    P[i, j] = p
                    DMIN[i, j] = dmin
                    DMAX[i, j] = dmax
            self.levels.append((lv, np.array(vs, dtype=np.int64), P, DMIN, DMAX))


class _Column:
    """One stem's results out of a batch, shaped like ArrivalSolver for StemTiming."""

    def __init__(self, tg, amin, amax, bmin, bmax):
        self.tg = tg
        self.amin, self.amax, self.bmin, self.bmax = amin, amax, bmin, bmax


class BatchArrivalSolver:
    # cap on nodes x stems per batch (about 30 bytes each, plus per-level temporaries)
    MAX_CELLS = 4_000_000

    def __init__(self, tg: TimingGraph):
        self.tg = tg
        self.plan = _LevelPlan(tg)

    @property
    def batch_size(self) -> int:
        return max(1, min(256, self.MAX_CELLS // max(1, len(self.tg.order))))

    def solve_all(self, stems: list[int], min_skew: float | None = None):
        """:meth:`solve` over all ``stems`` in batches of stems at similar depth."""
        order = sorted(stems, key=lambda s: (self.plan.level[s], s))
        bsz = self.batch_size
        for i in range(0, len(order), bsz):
            yield from self.solve(order[i:i + bsz], min_skew)

    def solve(self, stems: list[int], min_skew: float | None = None):
        """Yield ``(stem, StemTiming, [Reconvergence, ...])`` for each stem (in order).
        With ``min_skew``, only reconvergences whose skew is positive and at least that."""
        import numpy as np
        tg = self.tg
        n = len(tg.order)
        B = len(stems)
        cols = np.arange(B)
        st_arr = np.array(stems, dtype=np.int64)
        amin = np.full((n + 1, B), INF)
        amax = np.full((n + 1, B), -INF)
        dom = np.full((n + 1, B), -1, dtype=np.int64)
        bmin = np.zeros((n + 1, B), dtype=np.int16)
        bmax = np.zeros((n + 1, B), dtype=np.int16)
        amin[st_arr, cols] = 0.0
        amax[st_arr, cols] = 0.0
        dom[st_arr, cols] = st_arr
        # the stem's dominator-tree child above each node (the stem itself for the stem)
        top = np.full((n + 1, B), -1, dtype=np.int64)
        top[st_arr, cols] = st_arr
        # candidate reconvergences, one tuple of arrays per level: (column, gate, skew, slow
        # pin, fast pin, slow arrival, fast arrival); no Python object per candidate
        parts: list[tuple] = []
        first = min(self.plan.level[s] for s in stems)
        stem_pos = {s: [b for b in range(B) if stems[b] == s] for s in set(stems)}
        for lv, V, P, DMIN, DMAX in self.plan.levels:
            if lv <= first:
                continue            # nothing below the shallowest stem is in any cone
            reached = dom[P] >= 0                                   # (n, K, B)
            rows = reached.any(axis=2).any(axis=1)
            if not rows.any():
                continue
            if not rows.all():
                # rows no column reaches keep their initial values (INF, -INF, -1, 0): only
                # the reached rows are computed and written back
                sel = np.nonzero(rows)[0]
                V, P, DMIN, DMAX, reached = V[sel], P[sel], DMIN[sel], DMAX[sel], reached[sel]
            lo_pin = np.where(reached, amin[P] + DMIN[:, :, None], INF)
            hi_pin = np.where(reached, amax[P] + DMAX[:, :, None], -INF)
            klo = lo_pin.argmin(axis=1)
            khi = hi_pin.argmax(axis=1)
            lo = np.take_along_axis(lo_pin, klo[:, None, :], axis=1)[:, 0, :]
            hi = np.take_along_axis(hi_pin, khi[:, None, :], axis=1)[:, 0, :]
            d = np.full(lo.shape, -1, dtype=np.int64)
            K = P.shape[1]
            for k in range(K):
                pk = np.broadcast_to(P[:, k][:, None], d.shape)
                rk = reached[:, k, :]
                fresh = rk & (d < 0)
                d = np.where(fresh, pk, d)
                need = rk & ~fresh & (d != pk)
                if need.any():
                    ii, bb = np.nonzero(need)
                    d[ii, bb] = _meet_many(dom, d[ii, bb], pk[ii, bb], bb)
            count = reached.sum(axis=1)
            cand = (d == st_arr[None, :]) & (count >= 2)
            if K == 2 and min_skew is not None and cand.any():
                best = np.maximum(hi_pin[:, 0, :] - lo_pin[:, 1, :],
                                  hi_pin[:, 1, :] - lo_pin[:, 0, :])
                cand &= (best > 0) & (best >= min_skew)
            if cand.any():
                ii, bb = np.nonzero(cand)
                if K == 2:
                    s01 = hi_pin[ii, 0, bb] - lo_pin[ii, 1, bb]
                    s10 = hi_pin[ii, 1, bb] - lo_pin[ii, 0, bb]
                    take10 = s10 > s01
                    ka = take10.astype(np.int64)
                    kb = 1 - ka
                    skews = np.where(take10, s10, s01)
                    ts = hi_pin[ii, ka, bb]
                    tf = lo_pin[ii, kb, bb]
                    keep = None
                else:
                    ka, kb, skews, ts, tf, keep = _worst_pairs(
                        np, ii, bb, P, hi_pin, lo_pin, reached, top, st_arr, min_skew)
                if keep is not None:
                    ii, bb = ii[keep], bb[keep]
                if len(ii):
                    parts.append((bb, V[ii], skews, ka, kb, ts, tf))
            # dominator-tree child of the stem: the node itself where its idom is the stem
            Tn = np.where(d == st_arr[None, :], V[:, None],
                          np.where(d >= 0, top[np.maximum(d, 0), cols[None, :]], -1))
            amin[V] = lo
            amax[V] = hi
            dom[V] = d
            bmin[V] = klo
            bmax[V] = khi
            top[V] = Tn
            # a stem that is itself a gate keeps its own launch point in its column
            for s, bs in stem_pos.items():
                if self.plan.level[s] == lv:
                    for b in bs:
                        amin[s, b] = 0.0
                        amax[s, b] = 0.0
                        dom[s, b] = s
                        top[s, b] = s
        if parts:
            cat = [np.concatenate(x) for x in zip(*parts)]
            # by column, then gate (topological order, as the scalar sweep reports them)
            srt = np.lexsort((cat[1], cat[0]))
            cat = [x[srt] for x in cat]
            bounds = np.searchsorted(cat[0], np.arange(B + 1))
        for b, s in enumerate(stems):
            if not parts or bounds[b] == bounds[b + 1]:
                yield s, None, []
                continue
            lo_b, hi_b = bounds[b], bounds[b + 1]
            found = FoundSet(*(x[lo_b:hi_b] for x in cat[1:]))
            col = _Column(tg, _ColView(amin, b, float), _ColView(amax, b, float),
                          _ColView(bmin, b, int), _ColView(bmax, b, int))
            yield s, StemTiming(col, s, []), found


class FoundSet:
    """One stem's reconvergences out of a batch, held as arrays (gate, skew, slow pin, fast pin,
    slow arrival, fast arrival; gates in topological order). It reads as a sequence of
    :class:`Reconvergence` (built on access), and callers that select among many candidates use
    the arrays directly, so a stem with thousands of candidates costs no Python object per
    candidate."""

    __slots__ = ("gates", "skews", "slow_pins", "fast_pins", "slow_arrivals", "fast_arrivals")

    def __init__(self, gates, skews, slow_pins, fast_pins, slow_arrivals, fast_arrivals):
        self.gates, self.skews = gates, skews
        self.slow_pins, self.fast_pins = slow_pins, fast_pins
        self.slow_arrivals, self.fast_arrivals = slow_arrivals, fast_arrivals

    def __len__(self):
        return len(self.gates)

    def __getitem__(self, k):
        if k < 0:
            k += len(self)
        if not 0 <= k < len(self):
            raise IndexError(k)
        return Reconvergence(int(self.gates[k]), float(self.skews[k]), int(self.slow_pins[k]),
                             int(self.fast_pins[k]), float(self.slow_arrivals[k]),
                             float(self.fast_arrivals[k]))

    def __iter__(self):
        for k in range(len(self)):
            yield self[k]

    def __eq__(self, other):
        try:
            return list(self) == list(other)
        except TypeError:
            return NotImplemented

    __hash__ = None


def _worst_pairs(np, ii, bb, P, hi_pin, lo_pin, reached, top, st_arr, min_skew):
    """:func:`_worst_pair` for many candidate gates of a level at once (rows ``ii``, columns
    ``bb``): pin pairs (a, b), a != b, both reached, qualify when either driver is the stem or
    the drivers lie under different children of the stem in the dominator tree; the largest
    hi[a] - lo[b] wins, first in (a, b) order on ties, as in the scalar loop. Returns
    (slow pins, fast pins, skews, slow arrivals, fast arrivals, rows kept)."""
    K = P.shape[1]
    m = len(ii)
    outs = []
    step = max(1, 2_000_000 // (K * K))
    eye = ~np.eye(K, dtype=bool)
    for c in range(0, m, step):
        i2, b2 = ii[c:c + step], bb[c:c + step]
        hi = hi_pin[i2, :, b2]                      # (m, K)
        lo = lo_pin[i2, :, b2]
        R = reached[i2, :, b2]
        Pd = P[i2]
        isstem = Pd == st_arr[b2][:, None]
        Tp = top[np.minimum(Pd, top.shape[0] - 1), b2[:, None]]
        ok = (R[:, :, None] & R[:, None, :] & eye[None, :, :]
              & (isstem[:, :, None] | isstem[:, None, :] | (Tp[:, :, None] != Tp[:, None, :])))
        S = np.where(ok, hi[:, :, None] - lo[:, None, :], -INF).reshape(len(i2), K * K)
        j = S.argmax(axis=1)
        rows = np.arange(len(i2))
        best = S[rows, j]
        valid = ok.reshape(len(i2), K * K).any(axis=1)
        if min_skew is not None:
            valid &= (best > 0) & (best >= min_skew)
        ka, kb = j // K, j % K
        outs.append((ka, kb, best, hi[rows, ka], lo[rows, kb], valid))
    ka, kb, best, ts, tf, valid = (np.concatenate(x) for x in zip(*outs))
    return ka[valid], kb[valid], best[valid], ts[valid], tf[valid], valid


class _ColView:
    """One column of a batch array, read element by element (paths touch few nodes)."""

    def __init__(self, arr, b, conv):
        self.arr, self.b, self.conv = arr, b, conv
        # a strided view of the column; .item gives a Python float/int without a Python frame
        self.get = arr[:, b].item

    def __getitem__(self, i):
        return self.conv(self.arr[i, self.b])


class _DomColumn:
    def __init__(self, dom, b):
        self.dom, self.b = dom, b

    def __getitem__(self, i):
        return int(self.dom[i, self.b])


def _meet_many(dom, a, b, cols):
    """Nearest common dominators of pairs (a[i], b[i]) in columns cols[i], vectorised."""
    import numpy as np
    a = a.copy()
    b = b.copy()
    todo = np.nonzero(a != b)[0]
    while todo.size:
        ai, bi, ci = a[todo], b[todo], cols[todo]
        up_a = ai > bi
        ai = np.where(up_a, dom[ai, ci], ai)
        bi = np.where(~up_a, dom[bi, ci], bi)
        a[todo], b[todo] = ai, bi
        todo = todo[ai != bi]
    return a
