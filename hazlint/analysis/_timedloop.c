/* The timed simulator's event loop, compiled: hazlint.analysis.timedsim.simulate over integer-
 * indexed arrays of one gate graph (built and driven by hazlint/analysis/compiled_timedsim.py).
 *
 * Same semantics as the Python loop of timedsim.py, which stays the reference (comments there
 * give the delay model): per time step, phase 1 applies every live event that matures at t in
 * (time, sequence number) order (source changes, gate output events, wire events onto a pin),
 * phase 2 evaluates each gate whose pins changed once, in the order the gates were first
 * touched, and schedules its output at t + the smallest delay (of the new value's direction) of
 * the changed pins. Inertial mode cancels a gate's pending output event when its zero-delay
 * value changes again (and schedules nothing when it went back to the output value); transport
 * mode and wire events drop the pending events at or after the new one's time. Cancelled
 * events stay in the heap (lazy deletion, as in Python) so that `until` and the end time see
 * the same heap. The sequence numbers are assigned as the Python loop assigns them.
 * tests/test_timedsim_compiled.py holds the two loops to identical traces.
 *
 * Arrays (contiguous buffers, int64 'q', float64 'd', bytes): n nodes; kind[n] (0 source, 1 gate,
 * 2 sink, 3 const), op[n] (OP_* below); in_ptr[n+1] and in_src[pins]: each node's input pins
 * (a pin is a position in in_src, the global pin number) and the node driving it; dly[2*pins]:
 * per pin the rise and the fall delay; rd_ptr[n+1], rd_pin[r], rd_wire[r]: per node the pins
 * it feeds and the wire delay in front of each; ex_ptr[n+1] and ex_code[]: the postfix code of
 * each OP_EXPR gate (a cell function), empty for the others.
 */
#define PY_SSIZE_T_CLEAN
#include <Python.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

typedef int64_t i64;

enum { K_SOURCE = 0, K_GATE = 1, K_SINK = 2, K_CONST = 3 };
enum {
    OP_NONE = 0, OP_AND, OP_OR, OP_NAND, OP_NOR, OP_XOR, OP_XNOR, OP_NOT, OP_BUF, OP_CONST0,
    OP_CONST1, OP_BUFIF1, OP_BUFIF0, OP_NOTIF1, OP_NOTIF0, OP_MUX, OP_EXPR, OP_LAST
};
/* an OP_EXPR gate's function: postfix code, pairs (what, arg): what 0 pushes input pin arg,
 * 1 pushes the constant arg, 2 + op applies op (OP_AND..OP_MUX) to the top arg values */
enum { EV_SRC = 0, EV_OUT = 1, EV_PIN = 2 };

static int eval_gate(int op, const uint8_t *in, i64 k) {
    i64 i;
    int v;
    switch (op) {
    case OP_AND: case OP_NAND:
        v = 1;
        for (i = 0; i < k; i++) v &= in[i];
        return op == OP_AND ? v : !v;
    case OP_OR: case OP_NOR:
        v = 0;
        for (i = 0; i < k; i++) v |= in[i];
        return op == OP_OR ? v : !v;
    case OP_XOR: case OP_XNOR:
        v = 0;
        for (i = 0; i < k; i++) v ^= in[i];
        return op == OP_XOR ? v : !v;
    case OP_NOT: return !in[0];
    case OP_BUF: return in[0];
    case OP_CONST0: return 0;
    case OP_CONST1: return 1;
    case OP_BUFIF1: return in[0] & in[1];
    case OP_BUFIF0: return in[0] & (!in[1]);
    case OP_NOTIF1: return (!in[0]) & in[1];
    case OP_NOTIF0: return (!in[0]) & (!in[1]);
    case OP_MUX: return in[0] ? in[1] : in[2];
    }
    return 0;
}

static int needs(int op) {
    return (op == OP_NOT || op == OP_BUF || op == OP_XOR || op == OP_XNOR) ? 1
         : (op >= OP_BUFIF1 && op <= OP_NOTIF0) ? 2 : op == OP_MUX ? 3 : 0;
}

static int eval_expr(const i64 *code, i64 len, const uint8_t *in, uint8_t *stack) {
    i64 sp = 0;
    for (i64 i = 0; i < len; i += 2) {
        i64 what = code[i], a = code[i + 1];
        if (what == 0) stack[sp++] = in[a];
        else if (what == 1) stack[sp++] = (uint8_t)a;
        else {
            sp -= a;
            stack[sp] = (uint8_t)eval_gate((int)(what - 2), stack + sp, a);
            sp++;
        }
    }
    return stack[0];
}

typedef struct { Py_buffer b; const char *name; Py_ssize_t item; } Arg;

static int get(PyObject *o, Arg *a, const char *name, Py_ssize_t item, int writable) {
    a->name = name;
    a->item = item;
    if (PyObject_GetBuffer(o, &a->b, writable ? PyBUF_WRITABLE : PyBUF_SIMPLE) < 0) return -1;
    if (a->b.len % item) {
        PyErr_Format(PyExc_ValueError, "%s: buffer of %zd bytes is not a whole number of items",
                     name, a->b.len);
        PyBuffer_Release(&a->b);
        return -1;
    }
    return 0;
}

static i64 count_of(Arg *a) { return a->b.len / a->item; }

/* the graph arrays, checked once per call */
typedef struct {
    i64 n, npins, nrd, depth;
    const uint8_t *kind, *op;
    const i64 *in_ptr, *in_src, *rd_ptr, *rd_pin, *ex_ptr, *ex_code;
} Graph;

static int check_expr(Graph *g, i64 v) {
    /* the code of gate v reads its own pins only and leaves one value */
    i64 sp = 0, k = g->in_ptr[v + 1] - g->in_ptr[v];
    for (i64 i = g->ex_ptr[v]; i < g->ex_ptr[v + 1]; i += 2) {
        i64 what = g->ex_code[i], a = g->ex_code[i + 1];
        if (what == 0 ? (a < 0 || a >= k) : what == 1 ? (a != 0 && a != 1)
            : (what < 2 + OP_AND || what > 2 + OP_MUX || a < needs((int)(what - 2)) || a > sp))
            return -1;
        sp += what <= 1 ? 1 : 1 - a;
        if (sp > g->depth) g->depth = sp;
    }
    return sp == 1 && (g->ex_ptr[v + 1] - g->ex_ptr[v]) % 2 == 0 ? 0 : -1;
}

static inline int gate_value(const Graph *g, i64 v, const uint8_t *in, uint8_t *stack) {
    if (g->op[v] == OP_EXPR)
        return eval_expr(g->ex_code + g->ex_ptr[v], g->ex_ptr[v + 1] - g->ex_ptr[v], in, stack);
    return eval_gate(g->op[v], in, g->in_ptr[v + 1] - g->in_ptr[v]);
}

static int check_graph(Graph *g, Arg *kind, Arg *op, Arg *in_ptr, Arg *in_src, Arg *ex_ptr,
                       Arg *ex_code) {
    g->n = count_of(kind);
    g->depth = 1;
    g->ex_ptr = ex_ptr->b.buf;
    g->ex_code = ex_code->b.buf;
    if (count_of(ex_ptr) != g->n + 1 || g->ex_ptr[0] != 0 ||
        g->ex_ptr[g->n] != count_of(ex_code)) {
        PyErr_SetString(PyExc_ValueError, "expression arrays of different sizes");
        return -1;
    }
    g->kind = kind->b.buf;
    g->op = op->b.buf;
    g->in_ptr = in_ptr->b.buf;
    g->in_src = in_src->b.buf;
    g->npins = count_of(in_src);
    if (count_of(op) != g->n || count_of(in_ptr) != g->n + 1 || g->in_ptr[0] != 0 ||
        g->in_ptr[g->n] != g->npins) {
        PyErr_SetString(PyExc_ValueError, "graph arrays of different sizes");
        return -1;
    }
    for (i64 v = 0; v < g->n; v++) {
        i64 k = g->in_ptr[v + 1] - g->in_ptr[v];
        if (k < 0 || g->kind[v] > K_CONST || g->op[v] >= OP_LAST) {
            PyErr_SetString(PyExc_ValueError, "bad node entry");
            return -1;
        }
        if (g->ex_ptr[v + 1] < g->ex_ptr[v] ||
            (g->ex_ptr[v + 1] > g->ex_ptr[v]) != (g->kind[v] == K_GATE && g->op[v] == OP_EXPR)) {
            PyErr_SetString(PyExc_ValueError, "ex_ptr");
            return -1;
        }
        if (g->kind[v] == K_GATE) {
            int o = g->op[v];
            if (o == OP_NONE || k < needs(o) || (o == OP_EXPR && check_expr(g, v) < 0)) {
                PyErr_SetString(PyExc_ValueError, "gate op unknown, too few inputs or bad "
                                "expression code");
                return -1;
            }
        }
    }
    for (i64 p = 0; p < g->npins; p++)
        if (g->in_src[p] < 0 || g->in_src[p] >= g->n) {
            PyErr_SetString(PyExc_IndexError, "in_src");
            return -1;
        }
    return 0;
}

/* ---------------------------------------------------------------------------------------- */

static PyObject *settle(PyObject *self, PyObject *args) {
    /* the steady state of an acyclic graph: vals (writable, one byte per node) holds the
     * sources' values; gates, sinks and constants are filled in along the topological order */
    PyObject *o[8];
    Arg A[8];
    memset(A, 0, sizeof(A));
    PyObject *result = NULL;
    int got = 0;
    if (!PyArg_ParseTuple(args, "OOOOOOOO", &o[0], &o[1], &o[2], &o[3], &o[4], &o[5], &o[6],
                          &o[7]))
        return NULL;
    static const char *names[8] = {"order", "kind", "op", "in_ptr", "in_src", "ex_ptr",
                                   "ex_code", "vals"};
    static const Py_ssize_t items[8] = {8, 1, 1, 8, 8, 8, 8, 1};
    for (; got < 8; got++)
        if (get(o[got], &A[got], names[got], items[got], got == 7) < 0) goto done;
    Graph g;
    if (check_graph(&g, &A[1], &A[2], &A[3], &A[4], &A[5], &A[6]) < 0) goto done;
    const i64 *order = A[0].b.buf;
    i64 m = count_of(&A[0]);
    uint8_t *val = A[7].b.buf;
    if (count_of(&A[7]) != g.n) {
        PyErr_SetString(PyExc_ValueError, "vals");
        goto done;
    }
    uint8_t *tmp = NULL;
    i64 maxk = 0;
    for (i64 v = 0; v < g.n; v++)
        if (g.in_ptr[v + 1] - g.in_ptr[v] > maxk) maxk = g.in_ptr[v + 1] - g.in_ptr[v];
    tmp = malloc((size_t)(maxk + g.depth) + 1);
    if (!tmp) { PyErr_NoMemory(); goto done; }
    for (i64 i = 0; i < m; i++) {
        i64 v = order[i];
        if (v < 0 || v >= g.n) { free(tmp); PyErr_SetString(PyExc_IndexError, "order"); goto done; }
        i64 a = g.in_ptr[v], k = g.in_ptr[v + 1] - a;
        switch (g.kind[v]) {
        case K_GATE:
            for (i64 j = 0; j < k; j++) tmp[j] = val[g.in_src[a + j]];
            val[v] = (uint8_t)gate_value(&g, v, tmp, tmp + maxk);
            break;
        case K_CONST: val[v] = g.op[v] == OP_CONST1; break;
        case K_SINK: val[v] = k ? val[g.in_src[a]] : 0; break;
        default: break;
        }
    }
    free(tmp);
    Py_INCREF(Py_None);
    result = Py_None;
done:
    for (int i = 0; i < got; i++) PyBuffer_Release(&A[i].b);
    return result;
}

/* ---------------------------------------------------------------------------------------- */

typedef struct { double t; i64 seq; i64 target; int32_t kind; int32_t v; } Ev;
typedef struct { double t; i64 seq; int32_t v; } Pend;
typedef struct { Pend *e; int32_t len, cap; } PList;
typedef struct { double t; int32_t node, v; } Rec;

static inline int ev_less(const Ev *a, const Ev *b) {
    return a->t < b->t || (a->t == b->t && a->seq < b->seq);
}

typedef struct {
    Ev *heap;
    i64 nheap, capheap;
    uint8_t *live;          /* per sequence number */
    i64 seq, caplive;
} Queue;

static int q_push(Queue *q, double t, int kind, i64 target, int v, i64 seq) {
    if (q->nheap == q->capheap) {
        i64 cap = q->capheap ? 2 * q->capheap : 256;
        Ev *h = realloc(q->heap, sizeof(Ev) * (size_t)cap);
        if (!h) return -1;
        q->heap = h;
        q->capheap = cap;
    }
    Ev e = {t, seq, target, kind, v};
    i64 i = q->nheap++;
    while (i > 0) {
        i64 up = (i - 1) >> 1;
        if (!ev_less(&e, &q->heap[up])) break;
        q->heap[i] = q->heap[up];
        i = up;
    }
    q->heap[i] = e;
    return 0;
}

static Ev q_pop(Queue *q) {
    Ev top = q->heap[0], last = q->heap[--q->nheap];
    i64 i = 0, n = q->nheap;
    for (;;) {
        i64 c = 2 * i + 1;
        if (c >= n) break;
        if (c + 1 < n && ev_less(&q->heap[c + 1], &q->heap[c])) c++;
        if (!ev_less(&q->heap[c], &last)) break;
        q->heap[i] = q->heap[c];
        i = c;
    }
    if (n) q->heap[i] = last;
    return top;
}

static int q_newseq(Queue *q, i64 *out) {
    i64 s = ++q->seq;
    if (s >= q->caplive) {
        i64 cap = q->caplive ? 2 * q->caplive : 1024;
        while (cap <= s) cap *= 2;
        uint8_t *l = realloc(q->live, (size_t)cap);
        if (!l) return -1;
        memset(l + q->caplive, 0, (size_t)(cap - q->caplive));
        q->live = l;
        q->caplive = cap;
    }
    q->live[s] = 1;
    *out = s;
    return 0;
}

static void pl_remove(PList *p, i64 seq) {
    for (int32_t i = 0; i < p->len; i++)
        if (p->e[i].seq == seq) {
            memmove(p->e + i, p->e + i + 1, sizeof(Pend) * (size_t)(p->len - i - 1));
            p->len--;
            return;
        }
}

/* the transport rule, then the new event: timedsim's push() */
static int push(Queue *q, PList *p, double t, int kind, i64 target, int v) {
    i64 seq;
    if (q_newseq(q, &seq) < 0) return -1;
    int32_t keep = 0;
    for (int32_t i = 0; i < p->len; i++) {
        if (p->e[i].t >= t) q->live[p->e[i].seq] = 0;
        else p->e[keep++] = p->e[i];
    }
    p->len = keep;
    if (p->len == p->cap) {
        int32_t cap = p->cap ? 2 * p->cap : 2;
        Pend *e = realloc(p->e, sizeof(Pend) * (size_t)cap);
        if (!e) return -1;
        p->e = e;
        p->cap = cap;
    }
    p->e[p->len++] = (Pend){t, seq, v};
    return q_push(q, t, kind, target, v, seq);
}

typedef struct { Rec *r; i64 len, cap; } Recs;

static int rec_put(Recs *w, double t, i64 node, int v) {
    if (w->len == w->cap) {
        i64 cap = w->cap ? 2 * w->cap : 64;
        Rec *r = realloc(w->r, sizeof(Rec) * (size_t)cap);
        if (!r) return -1;
        w->r = r;
        w->cap = cap;
    }
    w->r[w->len++] = (Rec){t, (int32_t)node, (int32_t)v};
    return 0;
}

#define NRUN 15

static PyObject *run(PyObject *self, PyObject *args) {
    PyObject *o[NRUN], *watch_o, *until_o;
    int transport;
    long long max_events;
    Arg A[NRUN];
    memset(A, 0, sizeof(A));
    if (!PyArg_ParseTuple(args, "OOOOOOOOOOOOOOOOpL", &o[0], &o[1], &o[2], &o[3], &o[13],
                          &o[14], &o[4], &o[5], &o[6], &o[7], &o[8], &o[9], &o[10], &o[11],
                          &watch_o, &until_o, &transport, &max_events))
        return NULL;
    static const char *names[NRUN] = {"kind", "op", "in_ptr", "in_src", "dly", "rd_ptr",
                                      "rd_pin", "rd_wire", "val0", "ev_t", "ev_node", "ev_val",
                                      "watch", "ex_ptr", "ex_code"};
    static const Py_ssize_t items[NRUN] = {1, 1, 8, 8, 16, 8, 8, 8, 1, 8, 8, 1, 1, 8, 8};
    PyObject *result = NULL;
    int got = 0, has_watch = watch_o != Py_None, has_until = until_o != Py_None;
    double until = 0.0;
    if (has_until) {
        until = PyFloat_AsDouble(until_o);
        if (until == -1.0 && PyErr_Occurred()) return NULL;
    }
    o[12] = watch_o;
    uint8_t *val = NULL, *pinval = NULL, *undelayed = NULL, *touched = NULL, *pchanged = NULL;
    uint8_t *stack = NULL;
    i64 *pin_node = NULL, *order = NULL;
    PList *pend = NULL, *wpend = NULL;
    Queue q = {0};
    Recs rec = {0};
    Graph g;
    for (; got < NRUN; got++) {
        if (got == 12 && !has_watch) { memset(&A[12], 0, sizeof(Arg)); continue; }
        if (get(o[got], &A[got], names[got], items[got], 0) < 0) goto done;
    }
    if (check_graph(&g, &A[0], &A[1], &A[2], &A[3], &A[13], &A[14]) < 0) goto done;
    const double *dly = A[4].b.buf, *rd_wire = A[7].b.buf, *ev_t = A[9].b.buf;
    const i64 *rd_ptr = A[5].b.buf, *rd_pin = A[6].b.buf, *ev_node = A[10].b.buf;
    const uint8_t *val0 = A[8].b.buf, *ev_val = A[11].b.buf;
    const uint8_t *watch = has_watch ? A[12].b.buf : NULL;
    i64 n = g.n, np = g.npins, nrd = count_of(&A[6]), nev = count_of(&A[9]);
    if (count_of(&A[4]) != np || count_of(&A[5]) != n + 1 || rd_ptr[0] != 0 ||
        rd_ptr[n] != nrd || count_of(&A[7]) != nrd || count_of(&A[8]) != n ||
        count_of(&A[10]) != nev || count_of(&A[11]) != nev || (has_watch && count_of(&A[12]) != n)) {
        PyErr_SetString(PyExc_ValueError, "arrays of different sizes");
        goto done;
    }
    for (i64 v = 0; v < n; v++)
        if (rd_ptr[v + 1] < rd_ptr[v]) { PyErr_SetString(PyExc_ValueError, "rd_ptr"); goto done; }
    for (i64 r = 0; r < nrd; r++)
        if (rd_pin[r] < 0 || rd_pin[r] >= np) { PyErr_SetString(PyExc_IndexError, "rd_pin"); goto done; }
    for (i64 e = 0; e < nev; e++)
        if (ev_node[e] < 0 || ev_node[e] >= n) { PyErr_SetString(PyExc_IndexError, "ev_node"); goto done; }

    val = malloc((size_t)n + 1);
    undelayed = malloc((size_t)n + 1);
    touched = calloc((size_t)n + 1, 1);
    order = malloc(sizeof(i64) * ((size_t)n + 1));
    pinval = malloc((size_t)np + 1);
    pchanged = calloc((size_t)np + 1, 1);
    pin_node = malloc(sizeof(i64) * ((size_t)np + 1));
    stack = malloc((size_t)g.depth + 1);
    pend = calloc((size_t)n + 1, sizeof(PList));
    wpend = calloc((size_t)np + 1, sizeof(PList));
    if (!val || !undelayed || !touched || !order || !pinval || !pchanged || !pin_node || !pend ||
        !wpend || !stack) { PyErr_NoMemory(); goto done; }
    for (i64 v = 0; v < n; v++) {
        val[v] = val0[v] & 1;
        undelayed[v] = val[v];
        for (i64 p = g.in_ptr[v]; p < g.in_ptr[v + 1]; p++) pin_node[p] = v;
    }
    for (i64 p = 0; p < np; p++) pinval[p] = val[g.in_src[p]];

    for (i64 e = 0; e < nev; e++) {
        i64 seq;
        if (q_newseq(&q, &seq) < 0 || q_push(&q, ev_t[e], EV_SRC, ev_node[e], ev_val[e] & 1, seq) < 0)
            { PyErr_NoMemory(); goto done; }
    }
    i64 count = 0;
    double now = 0.0;
    int status = 0;                 /* 0 done, 1 stopped at until, 2 event budget exceeded */
#define TOUCH(node, pin) do { \
        if (!touched[node]) { touched[node] = 1; order[nt++] = (node); } \
        pchanged[pin] = 1; } while (0)
    while (q.nheap) {
        double t = q.heap[0].t;
        if (has_until && t > until) { status = 1; break; }
        now = t;
        i64 nt = 0;
        /* phase 1: apply everything that matures at t */
        while (q.nheap && q.heap[0].t == t) {
            Ev e = q_pop(&q);
            if (!q.live[e.seq]) continue;
            q.live[e.seq] = 0;
            count++;
            if (count > max_events) { status = 2; goto finish; }
            if (e.kind == EV_PIN) {
                pl_remove(&wpend[e.target], e.seq);
                if (pinval[e.target] != e.v) {
                    pinval[e.target] = (uint8_t)e.v;
                    TOUCH(pin_node[e.target], e.target);
                }
                continue;
            }
            if (e.kind == EV_OUT) pl_remove(&pend[e.target], e.seq);
            i64 u = e.target;
            if (val[u] == e.v) continue;
            val[u] = (uint8_t)e.v;
            if ((!watch || watch[u]) && rec_put(&rec, t, u, e.v) < 0) { PyErr_NoMemory(); goto done; }
            for (i64 r = rd_ptr[u]; r < rd_ptr[u + 1]; r++) {
                i64 p = rd_pin[r];
                double w = rd_wire[r];
                if (w > 0) {
                    if (push(&q, &wpend[p], t + w, EV_PIN, p, e.v) < 0) { PyErr_NoMemory(); goto done; }
                } else if (pinval[p] != e.v) {
                    pinval[p] = (uint8_t)e.v;
                    TOUCH(pin_node[p], p);
                }
            }
        }
        /* phase 2: evaluate each touched gate once, in the order first touched */
        for (i64 i = 0; i < nt; i++) {
            i64 v = order[i], a = g.in_ptr[v], b = g.in_ptr[v + 1];
            touched[v] = 0;
            int kind = g.kind[v];
            if (kind == K_SINK) {
                for (i64 p = a; p < b; p++) pchanged[p] = 0;
                int x = pinval[a];
                if (val[v] != x) {
                    val[v] = (uint8_t)x;
                    if ((!watch || watch[v]) && rec_put(&rec, t, v, x) < 0) { PyErr_NoMemory(); goto done; }
                }
                continue;
            }
            if (kind != K_GATE) {
                for (i64 p = a; p < b; p++) pchanged[p] = 0;
                continue;
            }
            int x = gate_value(&g, v, pinval + a, stack);
            int edge = x ? 0 : 1;
            double dl = 0.0;
            int first = 1;
            for (i64 p = a; p < b; p++)
                if (pchanged[p]) {
                    pchanged[p] = 0;
                    double d = dly[2 * p + edge];
                    if (first || d < dl) { dl = d; first = 0; }
                }
            if (x == undelayed[v]) continue;
            undelayed[v] = (uint8_t)x;
            PList *pl = &pend[v];
            if (!transport && pl->len) {
                /* the zero-delay value went back to the output's value: swallow the pulse */
                for (int32_t j = 0; j < pl->len; j++) q.live[pl->e[j].seq] = 0;
                pl->len = 0;
                if (x == val[v]) continue;
            }
            if (push(&q, pl, t + dl, EV_OUT, v, x) < 0) { PyErr_NoMemory(); goto done; }
        }
    }
finish:
    result = Py_BuildValue("(iLdy#)", status, (long long)count, now, rec.r ? (char *)rec.r : "",
                           (Py_ssize_t)(sizeof(Rec) * (size_t)rec.len));
done:
    for (int i = 0; i < got; i++)
        if (A[i].b.obj) PyBuffer_Release(&A[i].b);
    if (pend) for (i64 v = 0; v < g.n; v++) free(pend[v].e);
    if (wpend) for (i64 p = 0; p < g.npins; p++) free(wpend[p].e);
    free(val); free(undelayed); free(touched); free(order); free(pinval); free(pchanged);
    free(pin_node); free(pend); free(wpend); free(q.heap); free(q.live); free(rec.r); free(stack);
    return result;
}

static PyMethodDef methods[] = {
    {"settle", settle, METH_VARARGS,
     "settle(order, kind, op, in_ptr, in_src, ex_ptr, ex_code, vals): fill vals (bytearray, sources set) with "
     "the steady state of an acyclic graph along the topological order"},
    {"run", run, METH_VARARGS,
     "run(kind, op, in_ptr, in_src, ex_ptr, ex_code, dly, rd_ptr, rd_pin, rd_wire, val0, ev_t, ev_node, ev_val,"
     " watch | None, until | None, transport, max_events) -> (status, events, end,"
     " records): status 0 done, 1 stopped at until, 2 event budget exceeded; records packed"
     " (float64 time, int32 node, int32 value) for every change of a watched node"},
    {NULL, NULL, 0, NULL}};

static struct PyModuleDef module = {PyModuleDef_HEAD_INIT, "_timedloop",
                                    "The timed simulator's event loop, compiled.", -1, methods};

PyMODINIT_FUNC PyInit__timedloop(void) { return PyModule_Create(&module); }
