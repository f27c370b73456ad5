/* The reconvergence rule's inner loops, compiled: reach windows, and per stem the arrival sweep,
 * the choice of the worst reconvergence per sink and the walk-back of both paths.
 *
 * solve_stems does for each stem what hazlint.analysis.timing.ArrivalSolver.solve does (same
 * arithmetic, same tie rules, same early stop; comments there give the method), then the
 * rule's selection (rules/reconvergence.py: reconvergences by skew, descending, then source
 * rank of the gate; each takes the sinks in scope it reaches that no earlier one took) and the
 * fastest and slowest path to both pins of every chosen gate along the back-pointers.
 * tests/test_arrival_kernel.py holds it equal to those pure solvers.
 *
 * Inputs are contiguous buffers (array.array, numpy arrays, bytes) of int64 / float64 / uint64;
 * outputs are bytes. Graph layout: compressed sparse rows over the topological order
 * (hazlint.analysis.timing.TimingGraph): fi_ptr/fi_src/fi_dmin/fi_dmax (fan-in per input pin,
 * the position within a node's entries is the back-pointer), fo_ptr/fo_dst (distinct
 * successors, ascending), pr_ptr/pr_src (distinct predecessors, ascending).
 *
 * Reach sets (the sinks in scope a node reaches) are bit sets held as windows: node v's bits
 * are the 64-bit words lo[v] .. lo[v] + count[v] of the whole set, stored at pool[off[v]..],
 * so a node reaching the sinks of one block costs a word or two, not a word per 64 sinks of
 * the design.
 *
 * solve_stems returns (F, S, T). F: one row of 11 float64 per finding, stems in the given
 * order, a stem's findings by source rank of the gate: stem, gate, skew, slow pin, fast pin,
 * slow arrival, fast arrival, first sink in S, sink count, slow path end in T, fast path end
 * in T (integers held exactly). S: int64 sink numbers, ascending per finding. T: the forest
 * of reported paths, one tree per stem and direction, rows of 3 int32 (node, parent row, and
 * the back-pointer: the node's fan-in position on the path; -1 and -1 at the stem): a path is
 * read from its end up to the root, its hop delays from the fan-in arrays, its arrivals summed
 * from the stem as the sweep summed them (12 bytes a hop: EPFL div's 500,000 findings at the
 * widest scope walk some 120 million hops).
 */
#define PY_SSIZE_T_CLEAN
#include <Python.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

typedef int64_t i64;

#if defined(_MSC_VER)
#include <intrin.h>
static __inline int ctz64(uint64_t x) {
    unsigned long i;
    _BitScanForward64(&i, x);
    return (int)i;
}
#else
#define ctz64(x) __builtin_ctzll(x)
#endif

typedef struct {
    char *data;
    Py_ssize_t len, cap;   /* bytes */
} Buf;

static int buf_reserve(Buf *b, Py_ssize_t more) {
    if (b->len + more <= b->cap) return 0;
    Py_ssize_t cap = b->cap ? b->cap : 4096;
    while (cap < b->len + more) cap *= 2;
    char *d = realloc(b->data, (size_t)cap);
    if (!d) { PyErr_NoMemory(); return -1; }
    b->data = d;
    b->cap = cap;
    return 0;
}

static int buf_put(Buf *b, const void *x, Py_ssize_t n) {
    if (buf_reserve(b, n) < 0) return -1;
    memcpy(b->data + b->len, x, (size_t)n);
    b->len += n;
    return 0;
}

static PyObject *buf_bytes(Buf *b) {
    PyObject *r = PyBytes_FromStringAndSize(b->data ? b->data : "", b->len);
    free(b->data);
    b->data = NULL;
    b->len = b->cap = 0;
    return r;
}

static int check(Py_buffer *v, Py_ssize_t item, const char *name) {
    if (v->len % item) {
        PyErr_Format(PyExc_ValueError, "%s: buffer of %zd bytes is not a whole number of items",
                     name, v->len);
        return -1;
    }
    return 0;
}

/* ---------------------------------------------------------------------------------------- */

static PyObject *reach_windows(PyObject *self, PyObject *args) {
    Py_buffer bfo_ptr, bfo_dst, bsink;
    if (!PyArg_ParseTuple(args, "y*y*y*", &bfo_ptr, &bfo_dst, &bsink)) return NULL;
    PyObject *result = NULL;
    i64 *own = NULL, *lo = NULL, *hi = NULL, *count = NULL, *off = NULL;
    uint64_t *pool = NULL;
    if (check(&bfo_ptr, 8, "fo_ptr") || check(&bfo_dst, 8, "fo_dst") || check(&bsink, 8, "sinks"))
        goto done;
    const i64 *fo_ptr = bfo_ptr.buf, *fo_dst = bfo_dst.buf, *sink = bsink.buf;
    i64 n = bfo_ptr.len / 8 - 1, ns = bsink.len / 8;
    if (n < 0) { PyErr_SetString(PyExc_ValueError, "empty fo_ptr"); goto done; }
    own = malloc(sizeof(i64) * (n + 1));
    lo = malloc(sizeof(i64) * (n + 1));
    hi = malloc(sizeof(i64) * (n + 1));
    count = calloc((size_t)n + 1, sizeof(i64));
    off = calloc((size_t)n + 1, sizeof(i64));
    if (!own || !lo || !hi || !count || !off) { PyErr_NoMemory(); goto done; }
    for (i64 v = 0; v < n; v++) own[v] = -1;
    for (i64 k = 0; k < ns; k++) {
        if (sink[k] < 0 || sink[k] >= n) { PyErr_SetString(PyExc_IndexError, "sink"); goto done; }
        own[sink[k]] = k;
    }
    for (i64 v = n - 1; v >= 0; v--) {
        i64 a = -1, b = -1;
        if (own[v] >= 0) { a = own[v] >> 6; b = a; }
        for (i64 e = fo_ptr[v]; e < fo_ptr[v + 1]; e++) {
            i64 u = fo_dst[e];
            if (hi[u] >= 0) {
                if (a < 0 || lo[u] < a) a = lo[u];
                if (hi[u] > b) b = hi[u];
            }
        }
        lo[v] = a;
        hi[v] = b;
    }
    i64 total = 0;
    for (i64 v = 0; v < n; v++) {
        if (hi[v] >= 0) count[v] = hi[v] - lo[v] + 1;
        off[v] = total;
        total += count[v];
    }
    pool = calloc((size_t)total + 1, sizeof(uint64_t));
    if (!pool) { PyErr_NoMemory(); goto done; }
    for (i64 v = n - 1; v >= 0; v--) {
        if (!count[v]) continue;
        i64 base = off[v] - lo[v];
        if (own[v] >= 0) pool[base + (own[v] >> 6)] |= (uint64_t)1 << (own[v] & 63);
        for (i64 e = fo_ptr[v]; e < fo_ptr[v + 1]; e++) {
            i64 u = fo_dst[e];
            for (i64 j = 0; j < count[u]; j++) pool[base + lo[u] + j] |= pool[off[u] + j];
        }
    }
    result = Py_BuildValue("(y#y#y#y#)", (char *)lo, (Py_ssize_t)(8 * n), (char *)count,
                           (Py_ssize_t)(8 * n), (char *)off, (Py_ssize_t)(8 * n), (char *)pool,
                           (Py_ssize_t)(8 * total));
done:
    free(own); free(lo); free(hi); free(count); free(off); free(pool);
    PyBuffer_Release(&bfo_ptr); PyBuffer_Release(&bfo_dst); PyBuffer_Release(&bsink);
    return result;
}

/* ---------------------------------------------------------------------------------------- */

typedef struct { i64 gate; double skew; i64 ka, kb; double ts, tf; } Cand;

static const i64 *g_rank;        /* for qsort of candidates (one call at a time: the GIL) */
static const Cand *g_cand;

static int by_skew_then_rank(const void *x, const void *y) {
    const Cand *a = &g_cand[*(const i64 *)x], *b = &g_cand[*(const i64 *)y];
    if (a->skew > b->skew) return -1;
    if (a->skew < b->skew) return 1;
    i64 ra = g_rank[a->gate], rb = g_rank[b->gate];
    return (ra > rb) - (ra < rb);
}

static int by_rank(const void *x, const void *y) {
    i64 ra = g_rank[g_cand[((const i64 *)x)[0]].gate], rb = g_rank[g_cand[((const i64 *)y)[0]].gate];
    return (ra > rb) - (ra < rb);
}

#define NBUF 14

static PyObject *solve_stems(PyObject *self, PyObject *args) {
    Py_buffer B[NBUF];
    double min_skew;
    memset(B, 0, sizeof(B));
    if (!PyArg_ParseTuple(args, "y*y*y*y*y*y*y*y*y*y*y*y*y*y*d", &B[0], &B[1], &B[2], &B[3],
                          &B[4], &B[5], &B[6], &B[7], &B[8], &B[9], &B[10], &B[11], &B[12],
                          &B[13], &min_skew))
        return NULL;
    static const char *names[NBUF] = {"stems", "fi_ptr", "fi_src", "fi_dmin", "fi_dmax", "fo_ptr",
                                      "fo_dst", "pr_ptr", "pr_src", "rank", "lo", "count", "off",
                                      "pool"};
    PyObject *result = NULL;
    void *mem[24] = {0};
    int nmem = 0;
    Buf Fb = {0}, Sb = {0}, Tb = {0};
    Cand *C = NULL;
    i64 ccap = 0;
    for (int i = 0; i < NBUF; i++)
        if (check(&B[i], 8, names[i])) goto done;
    const i64 *stems = B[0].buf, *fi_ptr = B[1].buf, *fi_src = B[2].buf;
    const double *fi_dmin = B[3].buf, *fi_dmax = B[4].buf;
    const i64 *fo_ptr = B[5].buf, *fo_dst = B[6].buf, *pr_ptr = B[7].buf, *pr_src = B[8].buf;
    const i64 *rank = B[9].buf, *rw_lo = B[10].buf, *rw_count = B[11].buf, *rw_off = B[12].buf;
    const uint64_t *pool = B[13].buf;
    i64 n = B[1].len / 8 - 1, nstems = B[0].len / 8;
    if (n < 0 || B[5].len / 8 != n + 1 || B[7].len / 8 != n + 1 || B[9].len / 8 < n ||
        B[10].len / 8 < n || B[11].len / 8 < n || B[12].len / 8 < n) {
        PyErr_SetString(PyExc_ValueError, "array sizes do not match the graph");
        goto done;
    }
    for (i64 s = 0; s < nstems; s++)
        if (stems[s] < 0 || stems[s] >= n) { PyErr_SetString(PyExc_IndexError, "stem"); goto done; }

#define ALLOC(var, type, count)                                                       \
    type *var = calloc((size_t)(count) + 1, sizeof(type));                            \
    mem[nmem++] = var;                                                                \
    if (!var) { PyErr_NoMemory(); goto done; }
    ALLOC(amin, double, n);
    ALLOC(amax, double, n);
    ALLOC(bmin, i64, n);
    ALLOC(bmax, i64, n);
    ALLOC(dom, i64, n);
    ALLOC(top, i64, n);
    ALLOC(left, i64, n);
    ALLOC(cnt, i64, n);
    ALLOC(seen, i64, n);
    ALLOC(queued, i64, n);
    ALLOC(cnt_run, i64, n);
    ALLOC(tree_run, i64, 2 * n);
    ALLOC(tree_row, i64, 2 * n);
    /* the queue of discovered nodes: a bit per node plus a bit per word of those (every pushed
     * node lies after the one popped, so a forward scan is a monotone priority queue; the
     * second level keeps the scan short when a cone is spread thin over a large graph) */
    i64 nw0 = (n >> 6) + 1, nw1 = (nw0 >> 6) + 1;
    ALLOC(q0, uint64_t, nw0);
    ALLOC(q1, uint64_t, nw1);
    ALLOC(chain, i64, n + 1);
    i64 maxk = 1, words = 1;
    for (i64 v = 0; v < n; v++) {
        if (fi_ptr[v + 1] - fi_ptr[v] > maxk) maxk = fi_ptr[v + 1] - fi_ptr[v];
        if (rw_count[v] > words) words = rw_count[v];
    }
    ALLOC(r_k, i64, maxk);
    ALLOC(r_p, i64, maxk);
    ALLOC(r_lo, double, maxk);
    ALLOC(r_hi, double, maxk);
    ALLOC(rem, uint64_t, words);
    for (i64 v = 0; v < n; v++) { seen[v] = queued[v] = cnt_run[v] = -1; }
    for (i64 v = 0; v < 2 * n; v++) tree_run[v] = -1;
    i64 nt = 0;

    for (i64 run = 0; run < nstems; run++) {
        i64 stem = stems[run];
        /* ---- the sweep ---- */
        amin[stem] = 0.0;
        amax[stem] = 0.0;
        dom[stem] = stem;
        seen[stem] = run;
        left[stem] = fo_ptr[stem + 1] - fo_ptr[stem];
        i64 nh = 0;
#define PUSH(w)                                                                      \
    do {                                                                             \
        i64 w_ = (w);                                                                \
        q0[w_ >> 6] |= (uint64_t)1 << (w_ & 63);                                     \
        q1[w_ >> 12] |= (uint64_t)1 << ((w_ >> 6) & 63);                             \
        nh++;                                                                        \
    } while (0)
        for (i64 e = fo_ptr[stem]; e < fo_ptr[stem + 1]; e++) {
            i64 w = fo_dst[e];
            queued[w] = run;
            PUSH(w);
        }
        i64 n_open = 0, nc = 0;
        i64 cur = stem;        /* every queued node is after this one */
#define POP(v)                                                                       \
    do {                                                                             \
        i64 wd_ = cur >> 6;                                                          \
        uint64_t bits_ = q0[wd_] & (~(uint64_t)0 << (cur & 63));                     \
        if (!bits_) {                                                                \
            i64 w1_ = (wd_ + 1) >> 6;                                                \
            uint64_t b1_ = q1[w1_] & (~(uint64_t)0 << ((wd_ + 1) & 63));             \
            while (!b1_) b1_ = q1[++w1_];                                            \
            wd_ = (w1_ << 6) + ctz64(b1_);                                 \
            bits_ = q0[wd_];                                                         \
        }                                                                            \
        (v) = (wd_ << 6) + ctz64(bits_);                                   \
        q0[wd_] &= ~((uint64_t)1 << ((v) & 63));                                     \
        if (!q0[wd_]) q1[wd_ >> 6] &= ~((uint64_t)1 << (wd_ & 63));                  \
        nh--;                                                                        \
        cur = (v);                                                                   \
    } while (0)
        while (nh > 0) {
            i64 v;
            POP(v);
            double lo = INFINITY, hi = -INFINITY;
            i64 klo = 0, khi = 0, d = -1, nr = 0, base = fi_ptr[v];
            for (i64 k = 0; k < fi_ptr[v + 1] - base; k++) {
                i64 p = fi_src[base + k];
                double a_lo, a_hi;
                if (p == stem) {
                    a_lo = fi_dmin[base + k];
                    a_hi = fi_dmax[base + k];
                } else {
                    if (seen[p] != run) continue;
                    a_lo = amin[p] + fi_dmin[base + k];
                    a_hi = amax[p] + fi_dmax[base + k];
                }
                if (a_lo < lo) { lo = a_lo; klo = k; }
                if (a_hi > hi) { hi = a_hi; khi = k; }
                if (d < 0) d = p;
                else if (d != p) {
                    i64 a = d, b = p;
                    while (a != b) {
                        while (a > b) a = dom[a];
                        while (b > a) b = dom[b];
                    }
                    d = a;
                }
                r_k[nr] = k; r_p[nr] = p; r_lo[nr] = a_lo; r_hi[nr] = a_hi;
                nr++;
            }
            if (d == stem && nr >= 2) {
                int found = 0;
                double best = 0.0, bts = 0.0, btf = 0.0;
                i64 bka = 0, bkb = 0;
                for (i64 ia = 0; ia < nr; ia++) {
                    i64 pa = r_p[ia];
                    i64 ta = pa != stem ? top[pa] : -1;
                    for (i64 ib = 0; ib < nr; ib++) {
                        if (ia == ib) continue;
                        i64 pb = r_p[ib];
                        if (ta >= 0 && pb != stem && ta == top[pb]) continue;
                        double skew = r_hi[ia] - r_lo[ib];
                        if (!found || skew > best) {
                            found = 1; best = skew; bka = r_k[ia]; bkb = r_k[ib];
                            bts = r_hi[ia]; btf = r_lo[ib];
                        }
                    }
                }
                if (found && best > 0 && best >= min_skew) {
                    if (nc == ccap) {
                        i64 cap = ccap ? 2 * ccap : 64;
                        Cand *c2 = realloc(C, sizeof(Cand) * (size_t)cap);
                        if (!c2) { PyErr_NoMemory(); goto done; }
                        C = c2; ccap = cap;
                    }
                    C[nc].gate = v; C[nc].skew = best; C[nc].ka = bka; C[nc].kb = bkb;
                    C[nc].ts = bts; C[nc].tf = btf;
                    nc++;
                }
            }
            amin[v] = lo; amax[v] = hi; bmin[v] = klo; bmax[v] = khi; dom[v] = d;
            seen[v] = run;
            /* bookkeeping of the open frontier, for the early stop */
            for (i64 e = pr_ptr[v]; e < pr_ptr[v + 1]; e++) {
                i64 p = pr_src[e];
                if (seen[p] != run) continue;
                left[p]--;
                if (left[p] == 0 && p != stem) {
                    i64 t = top[p];
                    if (--cnt[t] == 0) n_open--;
                }
            }
            i64 nout = fo_ptr[v + 1] - fo_ptr[v];
            if (nout > 0) {
                i64 t = d == stem ? v : top[d];
                top[v] = t;
                left[v] = nout;
                if (cnt_run[t] != run) { cnt_run[t] = run; cnt[t] = 0; }
                if (cnt[t] == 0) n_open++;
                cnt[t]++;
                for (i64 e = fo_ptr[v]; e < fo_ptr[v + 1]; e++) {
                    i64 w = fo_dst[e];
                    if (queued[w] != run) { queued[w] = run; PUSH(w); }
                }
            }
            if (left[stem] == 0 && n_open <= 1) break;
        }
        while (nh > 0) {       /* stopped early: empty the queue for the next stem */
            i64 v;
            POP(v);
        }
        if (nc == 0) continue;
        /* ---- the worst reconvergence per sink ---- */
        i64 s_lo = rw_lo[stem], s_count = rw_count[stem], nz = 0;
        for (i64 j = 0; j < s_count; j++) {
            rem[j] = pool[rw_off[stem] + j];
            if (rem[j]) nz++;
        }
        if (nz == 0) continue;
        i64 *pick = malloc(sizeof(i64) * (size_t)nc * 4);
        if (!pick) { PyErr_NoMemory(); goto done; }
        i64 *chosen = pick + nc;      /* pairs (candidate, first sink) then count */
        for (i64 c = 0; c < nc; c++) pick[c] = c;
        g_rank = rank;
        g_cand = C;
        /* skew descending, then source rank (unique): the order of a stable lexsort */
        qsort(pick, (size_t)nc, sizeof(i64), by_skew_then_rank);
        i64 nch = 0;
        i64 sbase = Sb.len / 8;
        for (i64 q = 0; q < nc; q++) {
            i64 c = pick[q], g = C[c].gate, g_count = rw_count[g];
            if (!g_count) continue;
            i64 shift = rw_lo[g] - s_lo, start = Sb.len / 8;
            for (i64 j = 0; j < g_count; j++) {
                uint64_t w = pool[rw_off[g] + j] & rem[shift + j];
                if (!w) continue;
                rem[shift + j] &= ~w;
                if (!rem[shift + j]) nz--;
                for (int b = 0; b < 64; b++)
                    if ((w >> b) & 1) {
                        i64 s = (rw_lo[g] + j) * 64 + b;
                        if (buf_put(&Sb, &s, 8) < 0) { free(pick); goto done; }
                    }
            }
            if (Sb.len / 8 > start) {
                chosen[3 * nch] = c;
                chosen[3 * nch + 1] = start;
                chosen[3 * nch + 2] = Sb.len / 8 - start;
                nch++;
                if (nz == 0) break;
            }
        }
        (void)sbase;
        /* ---- the findings and their paths, by source rank of the gate ---- */
        qsort(chosen, (size_t)nch, 3 * sizeof(i64), by_rank);
        for (i64 q = 0; q < nch; q++) {
            const Cand *cd = &C[chosen[3 * q]];
            i64 g = cd->gate;
            double row[11] = {(double)stem, (double)g, cd->skew, (double)cd->ka, (double)cd->kb,
                              cd->ts, cd->tf, (double)chosen[3 * q + 1],
                              (double)chosen[3 * q + 2], 0, 0};
            for (int slow = 0; slow < 2; slow++) {
                i64 x = fi_src[fi_ptr[g] + (slow ? cd->ka : cd->kb)];
                i64 m = 0, u = x, parent = -1;
                i64 *trun = tree_run + slow * n, *trow = tree_row + slow * n;
                for (;;) {
                    if (trun[u] == run) { parent = trow[u]; break; }
                    if (u == stem) break;
                    chain[m++] = u;
                    u = fi_src[fi_ptr[u] + (slow ? bmax[u] : bmin[u])];
                }
                if (nt + m + 1 >= INT32_MAX) {
                    PyErr_SetString(PyExc_MemoryError, "path forest of one batch too large");
                    free(pick);
                    goto done;
                }
                if (buf_reserve(&Tb, (Py_ssize_t)(12 * (m + 1))) < 0) { free(pick); goto done; }
                int32_t *T = (int32_t *)Tb.data;
                if (parent < 0) {
                    T[3 * nt] = (int32_t)stem; T[3 * nt + 1] = -1; T[3 * nt + 2] = -1;
                    trun[stem] = run; trow[stem] = nt;
                    parent = nt++;
                }
                for (i64 i = m - 1; i >= 0; i--) {
                    u = chain[i];
                    T[3 * nt] = (int32_t)u;
                    T[3 * nt + 1] = (int32_t)parent;
                    T[3 * nt + 2] = (int32_t)(slow ? bmax[u] : bmin[u]);
                    trun[u] = run; trow[u] = nt;
                    parent = nt++;
                }
                Tb.len = 12 * nt;
                row[10 - slow] = (double)trow[x];
            }
            if (buf_put(&Fb, row, sizeof(row)) < 0) { free(pick); goto done; }
        }
        free(pick);
    }
    {
        PyObject *f = buf_bytes(&Fb), *s = buf_bytes(&Sb), *t = buf_bytes(&Tb);
        if (f && s && t) result = PyTuple_Pack(3, f, s, t);
        Py_XDECREF(f); Py_XDECREF(s); Py_XDECREF(t);
    }
done:
    for (int i = 0; i < nmem; i++) free(mem[i]);
    free(C);
    free(Fb.data); free(Sb.data); free(Tb.data);
    for (int i = 0; i < NBUF; i++)
        if (B[i].obj) PyBuffer_Release(&B[i]);
    return result;
}

static PyMethodDef methods[] = {
    {"reach_windows", reach_windows, METH_VARARGS,
     "reach_windows(fo_ptr, fo_dst, sink_node) -> (lo, count, off, pool) as bytes"},
    {"solve_stems", solve_stems, METH_VARARGS,
     "solve_stems(stems, fi_ptr, fi_src, fi_dmin, fi_dmax, fo_ptr, fo_dst, pr_ptr, pr_src, rank,"
     " lo, count, off, pool, min_skew) -> (F, S, T) as bytes"},
    {NULL, NULL, 0, NULL}};

static struct PyModuleDef module = {PyModuleDef_HEAD_INIT, "_arrival",
                                    "Compiled arrival-time kernels of the reconvergence rule.", -1,
                                    methods};

PyMODINIT_FUNC PyInit__arrival(void) { return PyModule_Create(&module); }
