"""The reconvergence rule's inner loops over flat arrays, written for numba's nopython mode.

These are plain Python functions over numpy arrays (no Python objects inside, no helper calls,
so numba compiles each on its own); :mod:`hazlint.analysis.compiled` compiles them when numba is
installed and the design is large enough. Run uncompiled they give the same results, slowly
(the tests do that on small graphs).

Graph layout (compressed sparse rows over the timing graph's topological order, see
:class:`hazlint.analysis.timing.TimingGraph`):

``fi_ptr, fi_src, fi_dmin, fi_dmax``
    fan-in of node v: entries ``fi_ptr[v] .. fi_ptr[v + 1]``, the driver and the pin's min/max
    delay (wire delay included); the position within v's entries is the back-pointer value.
``fo_ptr, fo_dst``
    distinct successors, ascending.
``pr_ptr, pr_src``
    distinct predecessors, ascending.

Reach sets (which sinks in scope a node reaches) are bit sets held as *windows*: node v's bits
are the 64-bit words ``lo[v] .. lo[v] + count[v]`` of the full set, stored at
``pool[off[v] ..]``. A node reaching the sinks of one block only thus costs a word or two, not a
word per 64 sinks of the whole design.
"""
from __future__ import annotations

import numpy as np


def reach_windows(fo_ptr, fo_dst, sink_node):
    """Windows of the sets of sinks reached, for every node. ``sink_node[k]`` is the node of
    sink k (bit k). Returns ``(lo, count, off, pool)``; one pass in reverse topological order
    for the windows, one to fill the words."""
    n = fo_ptr.shape[0] - 1
    own = np.full(n, -1, np.int64)
    for k in range(sink_node.shape[0]):
        own[sink_node[k]] = k
    lo = np.full(n, -1, np.int64)
    hi = np.full(n, -1, np.int64)
    for v in range(n - 1, -1, -1):
        a = -1
        b = -1
        if own[v] >= 0:
            a = own[v] >> 6
            b = a
        for e in range(fo_ptr[v], fo_ptr[v + 1]):
            u = fo_dst[e]
            if hi[u] >= 0:
                if a < 0 or lo[u] < a:
                    a = lo[u]
                if hi[u] > b:
                    b = hi[u]
        lo[v] = a
        hi[v] = b
    count = np.zeros(n, np.int64)
    off = np.zeros(n, np.int64)
    total = 0
    for v in range(n):
        if hi[v] >= 0:
            count[v] = hi[v] - lo[v] + 1
        off[v] = total
        total += count[v]
    pool = np.zeros(total, np.uint64)
    one = np.uint64(1)
    for v in range(n - 1, -1, -1):
        if count[v] == 0:
            continue
        base = off[v] - lo[v]
        if own[v] >= 0:
            pool[base + (own[v] >> 6)] |= one << np.uint64(own[v] & 63)
        for e in range(fo_ptr[v], fo_ptr[v + 1]):
            u = fo_dst[e]
            for j in range(count[u]):
                pool[base + lo[u] + j] |= pool[off[u] + j]
    return lo, count, off, pool


def solve_stems(stems, fi_ptr, fi_src, fi_dmin, fi_dmax, fo_ptr, fo_dst, pr_ptr, pr_src,
                rank, rw_lo, rw_count, rw_off, pool, min_skew):
    """For each stem: the arrival sweep of :meth:`ArrivalSolver.solve` (same arithmetic, same
    tie rules, same early stop), the rule's choice of the worst reconvergence per sink in scope
    (reconvergences by skew, descending, then source rank of the gate; each takes the sinks it
    reaches that no earlier one took), and the fastest and slowest path to both pins of every
    chosen gate, walked back along the back-pointers.

    Returns ``(F, S, T)``. ``F`` has one row per finding, stems in the given order and the
    findings of a stem by source rank of the gate: stem, gate, skew, slow pin, fast pin, slow
    arrival, fast arrival, first sink in ``S``, sink count, slow path end in ``T``, fast path
    end in ``T`` (integers held exactly in float64). ``S`` lists sink numbers (bits),
    ascending per finding. ``T`` is the forest of reported paths, one tree per stem and
    direction, rows (node, parent row or -1 at the stem, hop delay, arrival): a path is read
    from its end up to the root."""
    n = fi_ptr.shape[0] - 1
    inf = np.inf
    amin = np.zeros(n)
    amax = np.zeros(n)
    bmin = np.zeros(n, np.int64)
    bmax = np.zeros(n, np.int64)
    dom = np.zeros(n, np.int64)
    top = np.zeros(n, np.int64)
    left = np.zeros(n, np.int64)
    cnt = np.zeros(n, np.int64)
    seen = np.full(n, -1, np.int64)          # stamp: run that visited the node
    queued = np.full(n, -1, np.int64)
    cnt_run = np.full(n, -1, np.int64)
    tree_run = np.full((2, n), -1, np.int64)  # stamp per direction (0 fast, 1 slow)
    tree_row = np.zeros((2, n), np.int64)
    heap = np.zeros(n + 1, np.int64)
    chain = np.zeros(n + 1, np.int64)
    maxk = 1
    for v in range(n):
        if fi_ptr[v + 1] - fi_ptr[v] > maxk:
            maxk = fi_ptr[v + 1] - fi_ptr[v]
    r_k = np.zeros(maxk, np.int64)
    r_p = np.zeros(maxk, np.int64)
    r_lo = np.zeros(maxk)
    r_hi = np.zeros(maxk)
    C = np.zeros((64, 6))                    # candidates of one stem
    F = np.zeros((64, 11))
    S = np.zeros(256, np.int64)
    T = np.zeros((256, 4))
    nf = 0
    ns = 0
    nt = 0
    words = 1
    for v in range(n):
        if rw_count[v] > words:
            words = rw_count[v]
    rem = np.zeros(words, np.uint64)
    zero = np.uint64(0)
    one = np.uint64(1)
    for run in range(stems.shape[0]):
        stem = stems[run]
        # ---- the sweep -----------------------------------------------------------------------
        amin[stem] = 0.0
        amax[stem] = 0.0
        dom[stem] = stem
        seen[stem] = run
        left[stem] = fo_ptr[stem + 1] - fo_ptr[stem]
        nh = 0
        for e in range(fo_ptr[stem], fo_ptr[stem + 1]):
            w = fo_dst[e]
            queued[w] = run
            # push
            i = nh
            heap[i] = w
            nh += 1
            while i > 0:
                par = (i - 1) >> 1
                if heap[par] <= heap[i]:
                    break
                t = heap[par]
                heap[par] = heap[i]
                heap[i] = t
                i = par
        n_open = 0
        nc = 0
        while nh > 0:
            # pop the smallest topological position
            v = heap[0]
            nh -= 1
            heap[0] = heap[nh]
            i = 0
            while True:
                c = 2 * i + 1
                if c >= nh:
                    break
                if c + 1 < nh and heap[c + 1] < heap[c]:
                    c += 1
                if heap[i] <= heap[c]:
                    break
                t = heap[c]
                heap[c] = heap[i]
                heap[i] = t
                i = c
            lo = inf
            hi = -inf
            klo = 0
            khi = 0
            d = -1
            nr = 0
            base = fi_ptr[v]
            for k in range(fi_ptr[v + 1] - base):
                p = fi_src[base + k]
                if p == stem:
                    a_lo = fi_dmin[base + k]
                    a_hi = fi_dmax[base + k]
                else:
                    if seen[p] != run:
                        continue
                    a_lo = amin[p] + fi_dmin[base + k]
                    a_hi = amax[p] + fi_dmax[base + k]
                if a_lo < lo:
                    lo = a_lo
                    klo = k
                if a_hi > hi:
                    hi = a_hi
                    khi = k
                if d < 0:
                    d = p
                elif d != p:
                    a = d
                    b = p
                    while a != b:
                        while a > b:
                            a = dom[a]
                        while b > a:
                            b = dom[b]
                    d = a
                r_k[nr] = k
                r_p[nr] = p
                r_lo[nr] = a_lo
                r_hi[nr] = a_hi
                nr += 1
            if d == stem and nr >= 2:
                found = False
                best = 0.0
                bka = 0
                bkb = 0
                bts = 0.0
                btf = 0.0
                for ia in range(nr):
                    pa = r_p[ia]
                    ta = top[pa] if pa != stem else -1
                    for ib in range(nr):
                        if ia == ib:
                            continue
                        pb = r_p[ib]
                        if ta >= 0 and pb != stem and ta == top[pb]:
                            continue
                        skew = r_hi[ia] - r_lo[ib]
                        if not found or skew > best:
                            found = True
                            best = skew
                            bka = r_k[ia]
                            bkb = r_k[ib]
                            bts = r_hi[ia]
                            btf = r_lo[ib]
                if found and best > 0 and best >= min_skew:
                    if nc == C.shape[0]:
                        C2 = np.zeros((2 * nc, 6))
                        C2[:nc] = C[:nc]
                        C = C2
                    C[nc, 0] = v
                    C[nc, 1] = best
                    C[nc, 2] = bka
                    C[nc, 3] = bkb
                    C[nc, 4] = bts
                    C[nc, 5] = btf
                    nc += 1
            amin[v] = lo
            amax[v] = hi
            bmin[v] = klo
            bmax[v] = khi
            dom[v] = d
            seen[v] = run
            # bookkeeping of the open frontier, for the early stop
            for e in range(pr_ptr[v], pr_ptr[v + 1]):
                p = pr_src[e]
                if seen[p] != run:
                    continue
                left[p] -= 1
                if left[p] == 0 and p != stem:
                    t = top[p]
                    cnt[t] -= 1
                    if cnt[t] == 0:
                        n_open -= 1
            nout = fo_ptr[v + 1] - fo_ptr[v]
            if nout > 0:
                t = v if d == stem else top[d]
                top[v] = t
                left[v] = nout
                if cnt_run[t] != run:
                    cnt_run[t] = run
                    cnt[t] = 0
                if cnt[t] == 0:
                    n_open += 1
                cnt[t] += 1
                for e in range(fo_ptr[v], fo_ptr[v + 1]):
                    w = fo_dst[e]
                    if queued[w] != run:
                        queued[w] = run
                        i = nh
                        heap[i] = w
                        nh += 1
                        while i > 0:
                            par = (i - 1) >> 1
                            if heap[par] <= heap[i]:
                                break
                            t2 = heap[par]
                            heap[par] = heap[i]
                            heap[i] = t2
                            i = par
            if left[stem] == 0 and n_open <= 1:
                break
        if nc == 0:
            continue
        # ---- the worst reconvergence per sink ------------------------------------------------
        s_lo = rw_lo[stem]
        s_count = rw_count[stem]
        nz = 0
        for j in range(s_count):
            rem[j] = pool[rw_off[stem] + j]
            if rem[j] != zero:
                nz += 1
        if nz == 0:
            continue
        ranks = np.zeros(nc, np.int64)
        neg = np.zeros(nc)
        for c in range(nc):
            ranks[c] = rank[np.int64(C[c, 0])]
        by_rank = np.argsort(ranks, kind="mergesort")
        for c in range(nc):
            neg[c] = -C[by_rank[c], 1]
        pick = by_rank[np.argsort(neg, kind="mergesort")]
        chosen = np.zeros(nc, np.int64)
        first = np.zeros(nc, np.int64)
        many = np.zeros(nc, np.int64)
        nch = 0
        for q in range(nc):
            c = pick[q]
            g = np.int64(C[c, 0])
            g_count = rw_count[g]
            if g_count == 0:
                continue
            shift = rw_lo[g] - s_lo
            start = ns
            for j in range(g_count):
                w = pool[rw_off[g] + j] & rem[shift + j]
                if w == zero:
                    continue
                rem[shift + j] &= ~w
                if rem[shift + j] == zero:
                    nz -= 1
                for b in range(64):
                    if (w >> np.uint64(b)) & one:
                        if ns == S.shape[0]:
                            S2 = np.zeros(2 * ns, np.int64)
                            S2[:ns] = S[:ns]
                            S = S2
                        S[ns] = (rw_lo[g] + j) * 64 + b
                        ns += 1
            if ns > start:
                chosen[nch] = c
                first[nch] = start
                many[nch] = ns - start
                nch += 1
                if nz == 0:
                    break
        if nch == 0:
            continue
        ch_rank = np.zeros(nch, np.int64)
        for q in range(nch):
            ch_rank[q] = ranks[chosen[q]]
        # ---- the findings and their paths, by source rank of the gate -------------------------
        for q in np.argsort(ch_rank, kind="mergesort"):
            c = chosen[q]
            g = np.int64(C[c, 0])
            if nf == F.shape[0]:
                F2 = np.zeros((2 * nf, 11))
                F2[:nf] = F[:nf]
                F = F2
            F[nf, 0] = stem
            F[nf, 1] = g
            F[nf, 2] = C[c, 1]
            F[nf, 3] = C[c, 2]
            F[nf, 4] = C[c, 3]
            F[nf, 5] = C[c, 4]
            F[nf, 6] = C[c, 5]
            F[nf, 7] = first[q]
            F[nf, 8] = many[q]
            for slow in range(2):
                x = fi_src[fi_ptr[g] + np.int64(C[c, 2] if slow == 1 else C[c, 3])]
                m = 0
                u = x
                parent = -1
                while True:
                    if tree_run[slow, u] == run:
                        parent = tree_row[slow, u]
                        break
                    if u == stem:
                        break
                    chain[m] = u
                    m += 1
                    u = fi_src[fi_ptr[u] + (bmax[u] if slow == 1 else bmin[u])]
                if nt + m + 1 > T.shape[0]:
                    T2 = np.zeros((2 * (nt + m + 1), 4))
                    T2[:nt] = T[:nt]
                    T = T2
                if parent < 0:
                    # the stem: the root of this stem's tree
                    T[nt, 0] = stem
                    T[nt, 1] = -1
                    T[nt, 2] = 0.0
                    T[nt, 3] = 0.0
                    tree_run[slow, stem] = run
                    tree_row[slow, stem] = nt
                    parent = nt
                    nt += 1
                for i in range(m - 1, -1, -1):
                    u = chain[i]
                    if slow == 1:
                        e = fi_ptr[u] + bmax[u]
                        T[nt, 2] = fi_dmax[e]
                        T[nt, 3] = amax[u]
                    else:
                        e = fi_ptr[u] + bmin[u]
                        T[nt, 2] = fi_dmin[e]
                        T[nt, 3] = amin[u]
                    T[nt, 0] = u
                    T[nt, 1] = parent
                    tree_run[slow, u] = run
                    tree_row[slow, u] = nt
                    parent = nt
                    nt += 1
                F[nf, 10 - slow] = tree_row[slow, x]
            nf += 1
    return F[:nf].copy(), S[:ns].copy(), T[:nt].copy()
