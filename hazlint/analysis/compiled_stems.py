"""The reconvergence rule's per-stem work through the compiled kernels.

:class:`CompiledStems` runs :func:`hazlint.analysis.arrival_kernels.solve_stems` (compiled by
:mod:`hazlint.analysis.compiled`) over batches of stems and hands back each chosen
reconvergence as a :class:`CompiledFinding`: the same facts as the pure path's findings
(stem, gate, :class:`~hazlint.analysis.timing.Reconvergence`, sinks in scope, both paths), read
from the kernel's arrays only when asked. Its paths stay valid after the next batch (they live
in the batch's path forest, not in the solver's scratch arrays), so the rule can build its
diagnostics later, or never for findings a filter drops.
"""
from __future__ import annotations

from array import array

from .timing import Reconvergence

BATCH_STEMS = 1024       # stems per kernel call: bounds the arrays held before findings flow


class WindowReach:
    """Reach sets of the sinks in scope, read as Python int bit masks (bit k: sink k) like
    :meth:`AnalysisContext.scope_reach`'s list, built one node at a time from the windows."""

    def __init__(self, lo: bytes, count: bytes, off: bytes, pool: bytes):
        self.lo, self.count, self.off = _ints(lo), _ints(count), _ints(off)
        self.pool = pool

    def __len__(self):
        return len(self.lo)

    def __getitem__(self, i: int) -> int:
        c = self.count[i]
        if not c:
            return 0
        o = self.off[i]
        return int.from_bytes(self.pool[8 * o:8 * (o + c)], "little") << (64 * self.lo[i])


def _ints(b: bytes) -> array:
    a = array("q")
    a.frombytes(b)
    return a


def _int32s(b: bytes) -> array:
    a = array("i")
    if a.itemsize != 4:          # pragma: no cover - C int is 32 bits on every platform we know
        raise RuntimeError("array('i') is not 32 bits here")
    a.frombytes(b)
    return a


def _floats(b: bytes) -> array:
    a = array("d")
    a.frombytes(b)
    return a


class CompiledStems:
    """Kernel inputs for one context and scope: the graph arrays, source ranks, the sinks in
    scope (source order) and their reach windows."""

    def __init__(self, context, scope: str, kern):
        self.kern = kern
        tg = context.timing_graph
        self.tg = tg
        rank = context.source_rank
        self.rank = array("q", (rank[n] for n in tg.order))
        self.sinks = sorted((n for n in context.scope_sinks(scope) if n in tg.index),
                            key=rank.__getitem__)
        self.graph = (tg.fi_ptr, tg.fi_src, tg.fi_dmin, tg.fi_dmax, tg.fo_ptr, tg.fo_dst,
                      tg.pr_ptr, tg.pr_src)
        self.windows = kern.reach_windows(tg.fo_ptr, tg.fo_dst,
                                          array("q", (tg.index[n] for n in self.sinks)))
        self.reach = WindowReach(*self.windows)

    def findings(self, stem_ids, min_skew: float):
        """:class:`CompiledFinding` per chosen reconvergence: stems in the given order, each
        stem's findings in source order of the gate."""
        for i in range(0, len(stem_ids), BATCH_STEMS):
            stems = array("q", stem_ids[i:i + BATCH_STEMS])
            F, S, T = self.kern.solve_stems(stems, *self.graph, self.rank, *self.windows,
                                            float(min_skew))
            if not F:
                continue
            batch = _Batch(self, _floats(F), _ints(S), _int32s(T))
            order = batch.order
            for k, g in enumerate(batch.F[1::11]):
                yield CompiledFinding(batch, k, order[int(g)])


class _Batch:
    """One kernel call's results: findings ``F`` (11 values a row), sinks ``S``, path forest
    ``T`` (node, parent row, fan-in position: 3 values a row), as compact :mod:`array`
    columns."""

    __slots__ = ("order", "fanin_d", "sinks", "F", "S", "T", "memo")

    def __init__(self, stems: CompiledStems, F: array, S: array, T: array):
        tg = stems.tg
        self.order = tg.order
        self.fanin_d = (tg.fi_ptr, tg.fi_dmin, tg.fi_dmax)
        self.sinks = stems.sinks
        self.F, self.S, self.T = F, S, T
        self.memo = ({}, {})      # per direction: forest row -> (ids, items, position)


class CompiledFinding:
    """One chosen reconvergence (the pure path's ``Finding``, read from a batch)."""

    __slots__ = ("batch", "k", "gate")

    def __init__(self, batch: _Batch, k: int, gate: str):
        self.batch, self.k, self.gate = batch, k, gate

    def facts(self):
        """(stem id, gate id, Reconvergence, sink ids, slow path end, fast path end)."""
        b = self.batch
        stem, gate, skew, ks, kf, ts, tf, s0, sn, slow_end, fast_end = \
            b.F[11 * self.k:11 * self.k + 11].tolist()
        gi = int(gate)
        r = Reconvergence(gi, skew, int(ks), int(kf), ts, tf)
        sinks = [b.sinks[j] for j in b.S[int(s0):int(s0) + int(sn)]]
        return b.order[int(stem)], b.order[gi], r, sinks, int(slow_end), int(fast_end)

    def path(self, slow: bool, make, facts=None):
        """(node ids, items) of the slowest/fastest path, stem first, ending at the gate, as the
        pure path's ``Finding.path`` gives them. Paths of one stem share their prefixes (a
        tree): the walk stops at the first row an earlier path of this batch placed, and copies
        that path's prefix (as :meth:`StemTiming.chain_ids` does)."""
        b = self.batch
        _stem, gate, r, _sinks, slow_end, fast_end = facts or self.facts()
        order, T = b.order, b.T
        ptr, dmin, dmax = b.fanin_d
        dl = dmax if slow else dmin
        memo = b.memo[slow]
        walked = []
        t = slow_end if slow else fast_end
        ids = items = ()
        a = 0.0
        while t >= 0:
            hit = memo.get(t)
            if hit is not None:
                ids, items, a, i = hit
                ids, items = ids[:i + 1], items[:i + 1]
                break
            walked.append(t)
            t = T[3 * t + 1]
        walked.reverse()
        new_ids = []
        new_items = []
        base = len(ids)
        for k, t in enumerate(walked):
            u, parent, pin = T[3 * t], T[3 * t + 1], T[3 * t + 2]
            n = order[u]
            if parent < 0:
                d = a = 0.0                       # the stem
            else:
                d = dl[ptr[u] + pin]
                # the sweep's own sum: a hop out of the stem arrives at its delay
                a = d if T[3 * parent + 1] < 0 else a + d
            new_ids.append(n)
            new_items.append(make(n, d, a))
            memo[t] = (None, None, a, base + k)   # filled below, once the tuples exist
        ids = ids + tuple(new_ids)
        items = items + tuple(new_items)
        for k, t in enumerate(walked):
            memo[t] = (ids, items, memo[t][2], base + k)
        e = ptr[r.gate] + (r.slow_pin if slow else r.fast_pin)
        last = make(gate, dmax[e] if slow else dmin[e],
                    r.slow_arrival if slow else r.fast_arrival)
        return list(ids) + [gate], items + (last,)
