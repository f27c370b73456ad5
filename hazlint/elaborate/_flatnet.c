/* The compiled reader and elaborator of flat gate-level modules (hazlint.elaborate.flat).
 *
 * A flat module is a list of members of four shapes, as slang parsed them: port declarations
 * (read by the Python reader), `wire [m:l] a, b;`, gate primitives with an instance name and
 * plain terminals (`nand g1 (y, a, b[3]);`), and `assign y = x;` (names and constant bit
 * selects only). `check` tells whether a module's member texts are all of these shapes (and
 * lists its wire declarations' names for the reader); `build` elaborates them into the gate
 * graph's node and edge lists, exactly as hazlint.elaborate would (see flat.py for the
 * contract). Both return None for anything outside the subset, or on any doubt (a net with
 * two drivers, a net read but never driven, a vector on a gate terminal, an undeclared name,
 * a select out of range): the caller then takes the general path, which gives the result
 * (or the error or warning) the subset leaves out.
 *
 * The grammar accepted is a subset of the Python fast path's regular expressions
 * (hazlint/frontends/slang/fastpath.py): whitespace is space, tab, CR, LF only (any other
 * control character rejects the module), comments only before a member's first token, an
 * escaped identifier is a backslash and non-blank characters up to a blank, without
 * `(),;` inside.
 */
#define PY_SSIZE_T_CLEAN
#include <Python.h>
#include <string.h>

/* member kinds, as the reader passes them */
enum { K_OTHER = 0, K_PORT = 1, K_NET = 2, K_INST = 3, K_ASSIGN = 4 };

typedef struct {
    const char *s;
    Py_ssize_t n, i;
    long line;          /* line of s[i] */
    Py_ssize_t lstart;  /* offset (in the member, may be negative) of the current line's start */
} Cur;

static int is_blank(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }
static int is_idstart(char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_'; }
static int is_idchar(char c) { return is_idstart(c) || (c >= '0' && c <= '9') || c == '$'; }

static void adv(Cur *c) {
    if (c->s[c->i] == '\n') { c->line++; c->lstart = c->i + 1; }
    c->i++;
}

static int ws(Cur *c) {          /* \s* ; -1 on a control character */
    while (c->i < c->n) {
        char ch = c->s[c->i];
        if (is_blank(ch)) { adv(c); continue; }
        if ((unsigned char)ch < 0x20 || ch == 0x7f) return -1;
        break;
    }
    return 0;
}

static int lead(Cur *c) {        /* blanks and comments before the first token */
    for (;;) {
        if (ws(c) < 0) return -1;
        if (c->i + 1 < c->n && c->s[c->i] == '/' && c->s[c->i + 1] == '/') {
            while (c->i < c->n && c->s[c->i] != '\n') adv(c);
            continue;
        }
        if (c->i + 1 < c->n && c->s[c->i] == '/' && c->s[c->i + 1] == '*') {
            Py_ssize_t j = c->i + 2;
            while (j + 1 < c->n && !(c->s[j] == '*' && c->s[j + 1] == '/')) j++;
            if (j + 1 >= c->n) return -1;
            while (c->i < j + 2) adv(c);
            continue;
        }
        return 0;
    }
}

/* an identifier: [start, end) of its name (without the backslash of an escaped one) */
static int ident(Cur *c, Py_ssize_t *a, Py_ssize_t *b) {
    if (c->i >= c->n) return 0;
    char ch = c->s[c->i];
    if (is_idstart(ch)) {
        *a = c->i;
        while (c->i < c->n && is_idchar(c->s[c->i])) c->i++;
        *b = c->i;
        return 1;
    }
    if (ch == '\\') {
        Py_ssize_t j = c->i + 1;
        while (j < c->n) {
            char d = c->s[j];
            if (is_blank(d)) break;
            if ((unsigned char)d < 0x20 || d == 0x7f || (unsigned char)d > 0x7e) return 0;
            if (d == '(' || d == ')' || d == ',' || d == ';') return 0;
            j++;
        }
        if (j == c->i + 1 || j >= c->n) return 0;      /* empty, or no blank after it */
        *a = c->i + 1;
        *b = j;
        c->i = j;
        return 1;
    }
    return 0;
}

static int word(Cur *c, const char *w) {   /* a keyword followed by a non-identifier char */
    size_t k = strlen(w);
    if (c->i + (Py_ssize_t)k > c->n || memcmp(c->s + c->i, w, k) != 0) return 0;
    if (c->i + (Py_ssize_t)k < c->n && is_idchar(c->s[c->i + k])) return 0;
    c->i += k;
    return 1;
}

static int number(Cur *c, long *v) {       /* \d+, at most 9 digits */
    Py_ssize_t j = c->i;
    long x = 0;
    while (j < c->n && c->s[j] >= '0' && c->s[j] <= '9') {
        if (j - c->i >= 9) return 0;
        x = x * 10 + (c->s[j] - '0');
        j++;
    }
    if (j == c->i) return 0;
    c->i = j;
    *v = x;
    return 1;
}

static int lit(Cur *c, char ch) {
    if (c->i < c->n && c->s[c->i] == ch) { c->i++; return 1; }
    return 0;
}

/* ID or ID[n]: bit = -1 for none */
static int sig(Cur *c, Py_ssize_t *a, Py_ssize_t *b, long *bit) {
    if (!ident(c, a, b)) return 0;
    Py_ssize_t save = c->i;
    long sl = c->line; Py_ssize_t ss = c->lstart;
    *bit = -1;
    if (ws(c) < 0) return 0;
    if (lit(c, '[')) {
        if (ws(c) < 0 || !number(c, bit) || ws(c) < 0 || !lit(c, ']')) return 0;
        return 1;
    }
    c->i = save; c->line = sl; c->lstart = ss;
    return 1;
}

/* ---------------------------------------------------------------- the parsed module ---------- */

typedef struct { Py_ssize_t a, b; long bit; } Sig;

typedef struct {
    int kind;            /* K_NET, K_INST, K_ASSIGN */
    int op;              /* gate: index into OPS */
    Py_ssize_t member;
    Py_ssize_t na, nb;   /* instance name */
    long line, col;      /* of the instance name */
    long msb, lsb;       /* net: range, msb = -1 for none */
    int cval;            /* assign of 1'b0 / 1'b1: the value (line, col: the keyword) */
    Py_ssize_t first, count;   /* into the Sig array: terminals, names, or lhs and rhs */
} Stmt;

static const char *OPS[] = {"and", "nand", "or", "nor", "xor", "xnor", "buf", "not"};
#define N_OPS 8
#define N_INPUT_OPS 6

typedef struct {
    Stmt *st; Py_ssize_t nst, cst;
    Sig *sg; Py_ssize_t nsg, csg;
    const char **text;   /* member texts (by member index) */
} Parsed;

static int push_sig(Parsed *p, Py_ssize_t a, Py_ssize_t b, long bit) {
    if (p->nsg == p->csg) {
        p->csg = p->csg ? 2 * p->csg : 1024;
        Sig *n = PyMem_Realloc(p->sg, p->csg * sizeof(Sig));
        if (!n) return -1;
        p->sg = n;
    }
    p->sg[p->nsg].a = a; p->sg[p->nsg].b = b; p->sg[p->nsg].bit = bit;
    p->nsg++;
    return 0;
}

static Stmt *push_st(Parsed *p) {
    if (p->nst == p->cst) {
        p->cst = p->cst ? 2 * p->cst : 1024;
        Stmt *n = PyMem_Realloc(p->st, p->cst * sizeof(Stmt));
        if (!n) return NULL;
        p->st = n;
    }
    Stmt *s = &p->st[p->nst++];
    memset(s, 0, sizeof(Stmt));
    return s;
}

static void parsed_free(Parsed *p) {
    PyMem_Free(p->st); PyMem_Free(p->sg); PyMem_Free((void *)p->text);
}

/* 1: parsed; 0: outside the subset; -1: error set */
static int parse_member(Parsed *p, Py_ssize_t m, int kind, const char *s, Py_ssize_t n,
                        long *line, Py_ssize_t *lstart_abs, Py_ssize_t base) {
    Cur c = {s, n, 0, *line, *lstart_abs - base};
    Py_ssize_t a, b;
    long bit;
    Stmt *st;
    if (lead(&c) < 0) return 0;
    if (kind == K_NET) {
        if (!word(&c, "wire")) return 0;
        if (c.i >= c.n || !is_blank(c.s[c.i])) return 0;
        if (ws(&c) < 0) return 0;
        if (!(st = push_st(p))) return -1;
        st->kind = K_NET; st->member = m; st->msb = -1; st->lsb = -1;
        if (lit(&c, '[')) {
            if (ws(&c) < 0 || !number(&c, &st->msb) || ws(&c) < 0 || !lit(&c, ':') ||
                ws(&c) < 0 || !number(&c, &st->lsb) || ws(&c) < 0 || !lit(&c, ']') ||
                ws(&c) < 0) return 0;
        }
        st->first = p->nsg;
        for (;;) {
            if (!ident(&c, &a, &b)) return 0;
            if (push_sig(p, a, b, -1) < 0) return -1;
            if (ws(&c) < 0) return 0;
            if (lit(&c, ',')) { if (ws(&c) < 0) return 0; continue; }
            if (lit(&c, ';')) break;
            return 0;
        }
        st->count = p->nsg - st->first;
    } else if (kind == K_INST) {
        int op = -1;
        for (int k = 0; k < N_OPS; k++)
            if (word(&c, OPS[k])) { op = k; break; }
        if (op < 0) return 0;
        if (c.i >= c.n || !is_blank(c.s[c.i])) return 0;
        if (ws(&c) < 0) return 0;
        if (!(st = push_st(p))) return -1;
        st->kind = K_INST; st->member = m; st->op = op;
        st->line = c.line; st->col = c.i - c.lstart + 1;
        if (!ident(&c, &st->na, &st->nb)) return 0;
        if (ws(&c) < 0 || !lit(&c, '(') || ws(&c) < 0) return 0;
        st->first = p->nsg;
        for (;;) {
            if (!sig(&c, &a, &b, &bit)) return 0;
            if (push_sig(p, a, b, bit) < 0) return -1;
            if (ws(&c) < 0) return 0;
            if (lit(&c, ',')) { if (ws(&c) < 0) return 0; continue; }
            if (lit(&c, ')')) break;
            return 0;
        }
        st->count = p->nsg - st->first;
        if (ws(&c) < 0 || !lit(&c, ';')) return 0;
    } else if (kind == K_ASSIGN) {
        long kline = c.line, kcol = c.i - c.lstart + 1;
        if (!word(&c, "assign")) return 0;
        if (c.i >= c.n || !is_blank(c.s[c.i])) return 0;
        if (ws(&c) < 0) return 0;
        if (!(st = push_st(p))) return -1;
        st->kind = K_ASSIGN; st->member = m; st->cval = -1;
        st->line = kline; st->col = kcol;
        st->first = p->nsg; st->count = 2;
        if (!sig(&c, &a, &b, &bit)) return 0;
        if (push_sig(p, a, b, bit) < 0) return -1;
        if (ws(&c) < 0 || !lit(&c, '=') || ws(&c) < 0) return 0;
        if (c.i + 4 <= c.n && memcmp(c.s + c.i, "1'b", 3) == 0 &&
            (c.s[c.i + 3] == '0' || c.s[c.i + 3] == '1') &&
            (c.i + 4 == c.n || !strchr("0123456789abcdefABCDEFxXzZ?_", c.s[c.i + 4]) ||
             c.s[c.i + 4] == 0)) {
            st->cval = c.s[c.i + 3] - '0';          /* a one-bit constant */
            st->count = 1;
            c.i += 4;
        } else {
            if (!sig(&c, &a, &b, &bit)) return 0;
            if (push_sig(p, a, b, bit) < 0) return -1;
        }
        if (ws(&c) < 0 || !lit(&c, ';')) return 0;
    } else if (kind == K_PORT) {
        /* read by the Python reader; only its lines are counted here */
        while (c.i < c.n) adv(&c);
        c.i = c.n;
    } else {
        return 0;
    }
    if (c.i != c.n) return 0;
    *line = c.line;
    *lstart_abs = c.lstart + base;
    return 1;
}

/* parse every member; 1 / 0 / -1 */
static int parse_all(Parsed *p, PyObject *texts, PyObject *kinds, long line0,
                     Py_ssize_t lstart0) {
    Py_ssize_t nm = PyList_GET_SIZE(texts);
    if (!PyList_Check(kinds) || PyList_GET_SIZE(kinds) != nm) {
        PyErr_SetString(PyExc_TypeError, "texts and kinds must be lists of one length");
        return -1;
    }
    p->text = PyMem_Calloc(nm ? nm : 1, sizeof(char *));
    if (!p->text) { PyErr_NoMemory(); return -1; }
    long line = line0;
    Py_ssize_t lstart = lstart0, base = 0;
    for (Py_ssize_t m = 0; m < nm; m++) {
        PyObject *t = PyList_GET_ITEM(texts, m);
        if (!PyUnicode_Check(t) || PyUnicode_KIND(t) != PyUnicode_1BYTE_KIND ||
            !PyUnicode_IS_ASCII(t)) return 0;
        long kind = PyLong_AsLong(PyList_GET_ITEM(kinds, m));
        if (kind == -1 && PyErr_Occurred()) return -1;
        const char *s = (const char *)PyUnicode_1BYTE_DATA(t);
        Py_ssize_t n = PyUnicode_GET_LENGTH(t);
        p->text[m] = s;
        int r = parse_member(p, m, (int)kind, s, n, &line, &lstart, base);
        if (r <= 0) return r;
        base += n;
    }
    return 1;
}

static PyObject *str_of(const char *s, Py_ssize_t a, Py_ssize_t b) {
    return PyUnicode_FromStringAndSize(s + a, b - a);
}

/* check(texts, kinds) -> None, or [(member index, [names])] of the wire declarations */
static PyObject *check(PyObject *self, PyObject *args) {
    PyObject *texts, *kinds;
    if (!PyArg_ParseTuple(args, "O!O!", &PyList_Type, &texts, &PyList_Type, &kinds))
        return NULL;
    Parsed p = {0};
    int r = parse_all(&p, texts, kinds, 1, 0);
    if (r <= 0) { parsed_free(&p); if (r < 0) return NULL; Py_RETURN_NONE; }
    PyObject *out = PyList_New(0);
    if (!out) goto fail;
    for (Py_ssize_t k = 0; k < p.nst; k++) {
        Stmt *st = &p.st[k];
        if (st->kind != K_NET) continue;
        PyObject *names = PyList_New(st->count);
        if (!names) goto fail;
        const char *s = p.text[st->member];
        for (Py_ssize_t j = 0; j < st->count; j++) {
            Sig *g = &p.sg[st->first + j];
            PyObject *nm = str_of(s, g->a, g->b);
            if (!nm) { Py_DECREF(names); goto fail; }
            PyList_SET_ITEM(names, j, nm);
        }
        PyObject *item = Py_BuildValue("(nN)", st->member, names);
        if (!item || PyList_Append(out, item) < 0) { Py_XDECREF(item); goto fail; }
        Py_DECREF(item);
    }
    parsed_free(&p);
    return out;
fail:
    parsed_free(&p);
    Py_XDECREF(out);
    return NULL;
}

/* ---------------------------------------------------------------- elaboration ---------------- */

typedef struct {
    PyObject *names;     /* dict: net bit name -> index */
    PyObject *list;      /* index -> name (list) */
    PyObject *vectors;   /* dict: declared name -> (msb, lsb) or None for a scalar */
    Py_ssize_t *parent;
    Py_ssize_t cap, n;
} Nets;

static Py_ssize_t net_add(Nets *N, PyObject *name) {     /* new reference not taken */
    PyObject *v = PyDict_GetItemWithError(N->names, name);
    if (v) return PyLong_AsSsize_t(v);
    if (PyErr_Occurred()) return -1;
    if (N->n == N->cap) {
        N->cap = N->cap ? 2 * N->cap : 4096;
        Py_ssize_t *np = PyMem_Realloc(N->parent, N->cap * sizeof(Py_ssize_t));
        if (!np) { PyErr_NoMemory(); return -1; }
        N->parent = np;
    }
    PyObject *idx = PyLong_FromSsize_t(N->n);
    if (!idx) return -1;
    int r = PyDict_SetItem(N->names, name, idx);
    Py_DECREF(idx);
    if (r < 0 || PyList_Append(N->list, name) < 0) return -1;
    N->parent[N->n] = N->n;
    return N->n++;
}

static Py_ssize_t find(Nets *N, Py_ssize_t a) {
    Py_ssize_t r = a;
    while (N->parent[r] != r) r = N->parent[r];
    while (N->parent[a] != r) { Py_ssize_t q = N->parent[a]; N->parent[a] = r; a = q; }
    return r;
}

/* declare name with range (msb < 0: scalar): its range only; 1 ok, 0 doubt, -1 error */
static int declare(Nets *N, PyObject *name, long msb, long lsb) {
    int has = PyDict_Contains(N->vectors, name);
    if (has < 0) return -1;
    if (has) return 0;                  /* declared twice: the general path decides */
    PyObject *rng;
    if (msb < 0) { rng = Py_None; Py_INCREF(rng); }
    else rng = Py_BuildValue("(ll)", msb, lsb);
    if (!rng) return -1;
    int r = PyDict_SetItem(N->vectors, name, rng);
    Py_DECREF(rng);
    return r < 0 ? -1 : 1;
}

/* the bits of every declared name, in declaration order (the general elaborator's order of
   net bits), once every terminal is known to resolve */
static int declare_bits(Nets *N) {
    PyObject *name, *rng;
    Py_ssize_t pos = 0;
    while (PyDict_Next(N->vectors, &pos, &name, &rng)) {
        if (rng == Py_None) {
            if (net_add(N, name) < 0) return -1;
            continue;
        }
        long msb = PyLong_AsLong(PyTuple_GET_ITEM(rng, 0));
        long lsb = PyLong_AsLong(PyTuple_GET_ITEM(rng, 1));
        long step = msb >= lsb ? 1 : -1;
        for (long i = lsb;; i += step) {
            PyObject *b = PyUnicode_FromFormat("%U[%ld]", name, i);
            if (!b) return -1;
            Py_ssize_t k = net_add(N, b);
            Py_DECREF(b);
            if (k < 0) return -1;
            if (i == msb) break;
        }
    }
    return 0;
}

/* whether a terminal names a declared scalar, or an in-range bit of a declared vector:
   1 yes, 0 no, -1 error */
static int resolvable(Nets *N, const char *s, Sig *g) {
    PyObject *name = str_of(s, g->a, g->b);
    if (!name) return -1;
    PyObject *rng = PyDict_GetItemWithError(N->vectors, name);
    Py_DECREF(name);
    if (!rng) return PyErr_Occurred() ? -1 : 0;
    if (g->bit < 0) return rng == Py_None;
    if (rng == Py_None) return 0;
    long msb = PyLong_AsLong(PyTuple_GET_ITEM(rng, 0));
    long lsb = PyLong_AsLong(PyTuple_GET_ITEM(rng, 1));
    long lo = msb < lsb ? msb : lsb, hi = msb < lsb ? lsb : msb;
    return g->bit >= lo && g->bit <= hi;
}

/* the net bit a terminal reads or drives: index, -2 doubt, -1 error */
static Py_ssize_t resolve(Nets *N, const char *s, Sig *g) {
    PyObject *name = str_of(s, g->a, g->b);
    if (!name) return -1;
    PyObject *rng = PyDict_GetItemWithError(N->vectors, name);
    Py_ssize_t out = -2;
    if (!rng) {
        if (PyErr_Occurred()) out = -1;
    } else if (g->bit < 0) {
        if (rng == Py_None) {
            PyObject *v = PyDict_GetItemWithError(N->names, name);
            out = v ? PyLong_AsSsize_t(v) : (PyErr_Occurred() ? -1 : -2);
        }
    } else if (rng != Py_None) {
        long msb = PyLong_AsLong(PyTuple_GET_ITEM(rng, 0));
        long lsb = PyLong_AsLong(PyTuple_GET_ITEM(rng, 1));
        long lo = msb < lsb ? msb : lsb, hi = msb < lsb ? lsb : msb;
        if (g->bit >= lo && g->bit <= hi) {
            PyObject *b = PyUnicode_FromFormat("%U[%ld]", name, g->bit);
            if (!b) out = -1;
            else {
                PyObject *v = PyDict_GetItemWithError(N->names, b);
                out = v ? PyLong_AsSsize_t(v) : (PyErr_Occurred() ? -1 : -2);
                Py_DECREF(b);
            }
        }
    }
    Py_DECREF(name);
    return out;
}

/* rank of a merged net's name (build_graph.rank): port first, then without '$', fewer dots,
 * shorter, then by code point */
typedef struct { int port, dollar; Py_ssize_t dots, len; PyObject *s; } Rank;

static void rank_of(PyObject *s, PyObject *ports, Rank *r) {
    const char *d = (const char *)PyUnicode_1BYTE_DATA(s);
    Py_ssize_t n = PyUnicode_GET_LENGTH(s);
    r->port = PySet_Contains(ports, s) == 1 ? 0 : 1;
    r->dollar = memchr(d, '$', n) != NULL;
    r->dots = 0;
    for (Py_ssize_t i = 0; i < n; i++) r->dots += d[i] == '.';
    r->len = n;
    r->s = s;
}

static int rank_less(Rank *a, Rank *b) {
    if (a->port != b->port) return a->port < b->port;
    if (a->dollar != b->dollar) return a->dollar < b->dollar;
    if (a->dots != b->dots) return a->dots < b->dots;
    if (a->len != b->len) return a->len < b->len;
    return memcmp(PyUnicode_1BYTE_DATA(a->s), PyUnicode_1BYTE_DATA(b->s), a->len) < 0;
}

typedef struct { Py_ssize_t out; Py_ssize_t stmt; } Drv;   /* stmt -1: an input port */

/* build(texts, kinds, line0, lstart0, ports, port_bits, inputs, outputs, path, top, delay,
 *       max_width, max_bits[, node, succ, pred])
 *   ports: [(name, msb, lsb)] (msb None: scalar) in declaration order (a wire statement
 *   naming one declares nothing); port_bits: the set of top-level port bits; inputs, outputs:
 *   the input and output port bits in order; delay: each gate input's delay; max_width,
 *   max_bits: the limits of one wire's width and of all wire bits (past them: None); node,
 *   succ, pred: an empty networkx DiGraph's dictionaries, filled in place.
 * -> None, or (nodes, edges, input nodes, output nodes, drivers, wire bits, widest wire):
 *   nodes = [(id, attrs)] of the gates, constants and inputs in driver order (an input's
 *   location and port are added by the caller), edges = [(u, v, {"pins": [...]})] of the
 *   gates (both None when the graph was filled), the node id of each input and output bit. */
static PyObject *build(PyObject *self, PyObject *args) {
    PyObject *texts, *kinds, *ports, *port_bits, *inputs, *outputs, *path, *top, *delay;
    PyObject *gnode = NULL, *gsucc = NULL, *gpred = NULL;
    long line0;
    Py_ssize_t lstart0;
    Py_ssize_t max_width, max_bits;
    if (!PyArg_ParseTuple(args, "O!O!lnO!O!O!O!UUOnn|O!O!O!", &PyList_Type, &texts,
                          &PyList_Type, &kinds, &line0, &lstart0, &PyList_Type, &ports,
                          &PySet_Type, &port_bits, &PyList_Type, &inputs, &PyList_Type,
                          &outputs, &path, &top, &delay, &max_width, &max_bits,
                          &PyDict_Type, &gnode, &PyDict_Type, &gsucc,
                          &PyDict_Type, &gpred))
        return NULL;
    if (gnode && (!gsucc || !gpred || PyDict_Size(gnode) || PyDict_Size(gsucc) ||
                  PyDict_Size(gpred))) {
        PyErr_SetString(PyExc_ValueError, "the graph's node, succ and pred must be empty dicts");
        return NULL;
    }
    Parsed p = {0};
    Nets N = {0};
    Drv *drv = NULL;
    Py_ssize_t *drv_of = NULL, *rep = NULL, *ins = NULL;
    PyObject *result = NULL, *nodes = NULL, *edges = NULL, *pins = NULL;
    PyObject *innodes = NULL, *outnodes = NULL, *portnames = NULL;
    PyObject *s_kind = NULL, *s_name = NULL, *s_op = NULL, *s_inputs = NULL, *s_pins = NULL,
             *s_delays = NULL, *s_cell = NULL, *s_instance = NULL, *s_path = NULL,
             *s_line = NULL, *s_column = NULL, *s_tri = NULL, *s_gate = NULL, *s_input = NULL,
             *s_buf = NULL, *s_epins = NULL, *opname[N_OPS] = {0}, *s_const = NULL,
             *s_const0 = NULL, *s_const1 = NULL;
    Py_ssize_t ndrv = 0, widest = 0, vbits = 0;
    int r = parse_all(&p, texts, kinds, line0, lstart0);
    if (r <= 0) goto done;
    r = 0;
    N.names = PyDict_New(); N.list = PyList_New(0); N.vectors = PyDict_New();
    portnames = PySet_New(NULL);
    if (!N.names || !N.list || !N.vectors || !portnames) { r = -1; goto done; }
    /* 1. ports, in declaration order */
    for (Py_ssize_t k = 0; k < PyList_GET_SIZE(ports); k++) {
        PyObject *t = PyList_GET_ITEM(ports, k);
        PyObject *nm; PyObject *ms, *ls;
        if (!PyArg_ParseTuple(t, "UOO", &nm, &ms, &ls)) { r = -1; goto done; }
        if (!PyUnicode_IS_ASCII(nm)) goto done;
        long msb = -1, lsb = -1;
        if (ms != Py_None) {
            msb = PyLong_AsLong(ms); lsb = PyLong_AsLong(ls);
            if (PyErr_Occurred()) { r = -1; goto done; }
            if (msb < 0 || lsb < 0 || msb > 100000000 || lsb > 100000000) goto done;
        }
        int d = declare(&N, nm, msb, lsb);
        if (d <= 0) { r = d; goto done; }
        if (PySet_Add(portnames, nm) < 0) { r = -1; goto done; }
    }
    /* 2. wires, in order (a port's name was read as the port's type by the reader) */
    for (Py_ssize_t k = 0; k < p.nst; k++) {
        Stmt *st = &p.st[k];
        if (st->kind != K_NET) continue;
        if (st->msb >= 0) {
            Py_ssize_t w = (st->msb > st->lsb ? st->msb - st->lsb : st->lsb - st->msb) + 1;
            if (w > widest) widest = w;
        }
        for (Py_ssize_t j = 0; j < st->count; j++) {
            Sig *g = &p.sg[st->first + j];
            PyObject *nm = str_of(p.text[st->member], g->a, g->b);
            if (!nm) { r = -1; goto done; }
            PyObject *prev = PyDict_GetItemWithError(N.vectors, nm);
            int d;
            if (prev) {
                /* a port's name: nothing is declared (the reader made it the port's type);
                   any other name declared twice is left to the general path */
                d = PySet_Contains(portnames, nm);
            } else if (PyErr_Occurred()) {
                d = -1;
            } else {
                d = declare(&N, nm, st->msb, st->lsb);
                if (d > 0 && st->msb >= 0)
                    vbits += (st->msb > st->lsb ? st->msb - st->lsb : st->lsb - st->msb) + 1;
            }
            Py_DECREF(nm);
            if (d <= 0) { r = d; goto done; }
        }
    }
    if (widest > max_width || vbits > max_bits) goto done;   /* the general path says so */
    /* every terminal resolves: only then are the bits made (a module that falls back costs
       no more than its parse) */
    for (Py_ssize_t k = 0; k < p.nst; k++) {
        Stmt *st = &p.st[k];
        if (st->kind == K_NET) continue;
        for (Py_ssize_t j = 0; j < st->count; j++) {
            int ok = resolvable(&N, p.text[st->member], &p.sg[st->first + j]);
            if (ok <= 0) { r = ok; goto done; }
        }
    }
    if (declare_bits(&N) < 0) { r = -1; goto done; }
    /* 3. gates (drivers) and assigns (unions), in order */
    drv = PyMem_Malloc((p.nst + PyList_GET_SIZE(inputs) + 1) * sizeof(Drv) * 2);
    ins = PyMem_Malloc((p.nsg + 1) * sizeof(Py_ssize_t));
    if (!drv || !ins) { PyErr_NoMemory(); r = -1; goto done; }
    Py_ssize_t cap_drv = (p.nst + PyList_GET_SIZE(inputs) + 1) * 2;
    for (Py_ssize_t k = 0; k < p.nst; k++) {
        Stmt *st = &p.st[k];
        if (st->kind == K_NET) continue;
        const char *s = p.text[st->member];
        for (Py_ssize_t j = 0; j < st->count; j++) {
            Py_ssize_t x = resolve(&N, s, &p.sg[st->first + j]);
            if (x == -1) { r = -1; goto done; }
            if (x == -2) goto done;
            ins[st->first + j] = x;
        }
        if (st->kind == K_ASSIGN && st->cval >= 0) {      /* a constant driver */
            drv[ndrv].out = ins[st->first]; drv[ndrv].stmt = k; ndrv++;
            continue;
        }
        if (st->kind == K_ASSIGN) {
            Py_ssize_t a = find(&N, ins[st->first]), b = find(&N, ins[st->first + 1]);
            if (a != b) N.parent[a] = b;
            continue;
        }
        if (st->count < 2) goto done;
        if (st->op < N_INPUT_OPS) {
            drv[ndrv].out = ins[st->first]; drv[ndrv].stmt = k; ndrv++;
        } else {
            if (st->count != 2) goto done;          /* several outputs: the general path */
            drv[ndrv].out = ins[st->first]; drv[ndrv].stmt = k; ndrv++;
        }
        if (ndrv >= cap_drv) goto done;
    }
    for (Py_ssize_t k = 0; k < PyList_GET_SIZE(inputs); k++) {
        PyObject *v = PyDict_GetItemWithError(N.names, PyList_GET_ITEM(inputs, k));
        if (!v) { if (PyErr_Occurred()) r = -1; goto done; }
        drv[ndrv].out = PyLong_AsSsize_t(v); drv[ndrv].stmt = -1; ndrv++;
    }
    /* 4. one driver per merged net; the name of each merged net */
    drv_of = PyMem_Malloc((N.n + 1) * sizeof(Py_ssize_t));
    rep = PyMem_Malloc((N.n + 1) * sizeof(Py_ssize_t));
    if (!drv_of || !rep) { PyErr_NoMemory(); r = -1; goto done; }
    for (Py_ssize_t k = 0; k < N.n; k++) { drv_of[k] = -1; rep[k] = -1; }
    for (Py_ssize_t k = 0; k < ndrv; k++) {
        Py_ssize_t root = find(&N, drv[k].out);
        if (drv_of[root] >= 0) goto done;              /* two drivers */
        drv_of[root] = k;
    }
    {
        Rank best, cur;
        Rank *ranks = PyMem_Malloc((N.n + 1) * sizeof(Rank));
        if (!ranks) { PyErr_NoMemory(); r = -1; goto done; }
        for (Py_ssize_t k = 0; k < N.n; k++) {
            PyObject *nm = PyList_GET_ITEM(N.list, k);
            if (PyUnicode_READ_CHAR(nm, 0) == '@') { PyMem_Free(ranks); goto done; }
            rank_of(nm, port_bits, &cur);
            Py_ssize_t root = find(&N, k);
            if (rep[root] < 0) { rep[root] = k; ranks[root] = cur; continue; }
            best = ranks[root];
            if (rank_less(&cur, &best)) { rep[root] = k; ranks[root] = cur; }
        }
        PyMem_Free(ranks);
    }
    /* every net read has a driver */
    for (Py_ssize_t k = 0; k < p.nst; k++) {
        Stmt *st = &p.st[k];
        if (st->kind != K_INST) continue;
        for (Py_ssize_t j = 1; j < st->count; j++)
            if (drv_of[find(&N, ins[st->first + j])] < 0) goto done;
    }
    /* 5. nodes and edges */
#define S(var, text) if (!(var = PyUnicode_InternFromString(text))) { r = -1; goto done; }
    S(s_kind, "kind") S(s_name, "name") S(s_op, "op") S(s_inputs, "inputs") S(s_pins, "pins")
    S(s_delays, "delays") S(s_cell, "cell") S(s_instance, "instance") S(s_path, "path")
    S(s_line, "line") S(s_column, "column") S(s_tri, "tri") S(s_gate, "gate")
    S(s_input, "input") S(s_buf, "buf") S(s_epins, "pins") S(s_const, "const")
    S(s_const0, "const0") S(s_const1, "const1")
    for (int k = 0; k < N_OPS; k++) S(opname[k], OPS[k])
#undef S
    Py_ssize_t maxpins = 2;
    for (Py_ssize_t k = 0; k < p.nst; k++)
        if (p.st[k].kind == K_INST && p.st[k].count > maxpins) maxpins = p.st[k].count;
    pins = PyList_New(maxpins + 1);
    if (!pins) { r = -1; goto done; }
    for (Py_ssize_t k = 0; k <= maxpins; k++) {
        PyObject *t = PyUnicode_FromFormat("%zd", k + 1);
        if (!t) { r = -1; goto done; }
        PyList_SET_ITEM(pins, k, t);
    }
    nodes = PyList_New(0); edges = PyList_New(0);
    if (!nodes || !edges) { r = -1; goto done; }
    Py_ssize_t *srcs = PyMem_Malloc((maxpins + 1) * sizeof(Py_ssize_t));
    if (!srcs) { PyErr_NoMemory(); r = -1; goto done; }
#define NAME_OF(net) PyList_GET_ITEM(N.list, rep[find(&N, (net))])
    for (Py_ssize_t k = 0; k < ndrv; k++) {
        Drv *d = &drv[k];
        Py_ssize_t root = find(&N, d->out);
        if (drv_of[root] != k) continue;
        PyObject *id = NAME_OF(d->out);
        PyObject *a = PyDict_New();
        if (!a) { r = -1; break; }
        int bad = 0;
        if (d->stmt < 0) {
            PyObject *e1 = PyList_New(0), *e2 = PyList_New(0), *e3 = PyList_New(0);
            bad = !e1 || !e2 || !e3 ||
                PyDict_SetItem(a, s_kind, s_input) < 0 || PyDict_SetItem(a, s_name, id) < 0 ||
                PyDict_SetItem(a, s_op, s_buf) < 0 || PyDict_SetItem(a, s_inputs, e1) < 0 ||
                PyDict_SetItem(a, s_pins, e2) < 0 || PyDict_SetItem(a, s_delays, e3) < 0 ||
                PyDict_SetItem(a, s_cell, s_buf) < 0 || PyDict_SetItem(a, s_instance, top) < 0;
            Py_XDECREF(e1); Py_XDECREF(e2); Py_XDECREF(e3);
        } else if (p.st[d->stmt].kind == K_ASSIGN) {
            Stmt *st = &p.st[d->stmt];
            PyObject *e1 = PyList_New(0), *e2 = PyList_New(0), *e3 = PyList_New(0);
            PyObject *ln = PyLong_FromLong(st->line), *cl = PyLong_FromLong(st->col);
            PyObject *op = st->cval ? s_const1 : s_const0;
            bad = !e1 || !e2 || !e3 || !ln || !cl ||
                PyDict_SetItem(a, s_kind, s_const) < 0 || PyDict_SetItem(a, s_name, id) < 0 ||
                PyDict_SetItem(a, s_op, op) < 0 || PyDict_SetItem(a, s_inputs, e1) < 0 ||
                PyDict_SetItem(a, s_pins, e2) < 0 || PyDict_SetItem(a, s_delays, e3) < 0 ||
                PyDict_SetItem(a, s_cell, op) < 0 || PyDict_SetItem(a, s_instance, top) < 0 ||
                PyDict_SetItem(a, s_path, path) < 0 || PyDict_SetItem(a, s_line, ln) < 0 ||
                PyDict_SetItem(a, s_column, cl) < 0;
            Py_XDECREF(e1); Py_XDECREF(e2); Py_XDECREF(e3); Py_XDECREF(ln); Py_XDECREF(cl);
        } else {
            Stmt *st = &p.st[d->stmt];
            Py_ssize_t nin = st->op < N_INPUT_OPS ? st->count - 1 : 1;
            Py_ssize_t *in = &ins[st->first + 1];
            PyObject *il = PyList_New(nin), *pl = PyList_New(nin), *dl = PyList_New(nin);
            PyObject *iname = NULL, *ln = NULL, *cl = NULL;
            if (!il || !pl || !dl) bad = 1;
            for (Py_ssize_t j = 0; !bad && j < nin; j++) {
                PyObject *src = NAME_OF(in[j]);
                Py_INCREF(src); PyList_SET_ITEM(il, j, src);
                PyObject *pn = PyList_GET_ITEM(pins, j);
                Py_INCREF(pn); PyList_SET_ITEM(pl, j, pn);
                Py_INCREF(delay); PyList_SET_ITEM(dl, j, delay);
            }
            if (!bad) {
                PyObject *inm = str_of(p.text[st->member], st->na, st->nb);
                iname = inm ? PyUnicode_FromFormat("%U.%U", top, inm) : NULL;
                Py_XDECREF(inm);
                ln = PyLong_FromLong(st->line);
                cl = PyLong_FromLong(st->col);
                bad = !iname || !ln || !cl ||
                    PyDict_SetItem(a, s_kind, s_gate) < 0 || PyDict_SetItem(a, s_name, id) < 0 ||
                    PyDict_SetItem(a, s_op, opname[st->op]) < 0 ||
                    PyDict_SetItem(a, s_inputs, il) < 0 || PyDict_SetItem(a, s_pins, pl) < 0 ||
                    PyDict_SetItem(a, s_delays, dl) < 0 ||
                    PyDict_SetItem(a, s_cell, opname[st->op]) < 0 ||
                    PyDict_SetItem(a, s_instance, iname) < 0 ||
                    PyDict_SetItem(a, s_path, path) < 0 || PyDict_SetItem(a, s_line, ln) < 0 ||
                    PyDict_SetItem(a, s_column, cl) < 0 ||
                    PyDict_SetItem(a, s_tri, Py_False) < 0;
            }
            /* edges into this node: one per distinct source, its pins in order */
            Py_ssize_t ns = 0;
            for (Py_ssize_t j = 0; !bad && j < nin; j++) {
                Py_ssize_t sr = rep[find(&N, in[j])];
                Py_ssize_t q = 0;
                while (q < ns && srcs[q] != sr) q++;
                if (q < ns) continue;
                srcs[ns++] = sr;
                PyObject *pp = PyList_New(0);
                if (!pp) { bad = 1; break; }
                for (Py_ssize_t t = j; t < nin; t++)
                    if (rep[find(&N, in[t])] == sr) {
                        PyObject *iv = PyLong_FromSsize_t(t);
                        if (!iv || PyList_Append(pp, iv) < 0) { Py_XDECREF(iv); bad = 1; break; }
                        Py_DECREF(iv);
                    }
                PyObject *ea = bad ? NULL : PyDict_New();
                if (!ea || PyDict_SetItem(ea, s_epins, pp) < 0) bad = 1;
                PyObject *e = bad ? NULL : PyTuple_Pack(3, PyList_GET_ITEM(N.list, sr), id, ea);
                if (!e || PyList_Append(edges, e) < 0) bad = 1;
                Py_XDECREF(e); Py_XDECREF(ea); Py_DECREF(pp);
            }
            Py_XDECREF(il); Py_XDECREF(pl); Py_XDECREF(dl);
            Py_XDECREF(iname); Py_XDECREF(ln); Py_XDECREF(cl);
        }
        PyObject *t = bad ? NULL : PyTuple_Pack(2, id, a);
        Py_DECREF(a);
        if (!t || PyList_Append(nodes, t) < 0) { Py_XDECREF(t); r = -1; break; }
        Py_DECREF(t);
    }
    PyMem_Free(srcs);
    if (r < 0) goto done;
    /* node ids of the input and output port bits */
    innodes = PyList_New(PyList_GET_SIZE(inputs));
    outnodes = PyList_New(PyList_GET_SIZE(outputs));
    if (!innodes || !outnodes) { r = -1; goto done; }
    for (int side = 0; side < 2; side++) {
        PyObject *bits = side ? outputs : inputs, *dst = side ? outnodes : innodes;
        for (Py_ssize_t k = 0; k < PyList_GET_SIZE(bits); k++) {
            PyObject *v = PyDict_GetItemWithError(N.names, PyList_GET_ITEM(bits, k));
            if (!v) { if (PyErr_Occurred()) r = -1; goto done; }
            Py_ssize_t x = PyLong_AsSsize_t(v);
            if (drv_of[find(&N, x)] < 0) goto done;     /* an undriven output */
            PyObject *nm = NAME_OF(x);
            Py_INCREF(nm);
            PyList_SET_ITEM(dst, k, nm);
        }
    }
#undef NAME_OF
    if (gnode) {
        /* the networkx graph's own dictionaries, filled as add_nodes_from and add_edges_from
           would (a fresh attribute dictionary per node, one shared data dictionary per edge
           in succ and pred); the node and edge lists are then not returned */
        for (Py_ssize_t k = 0; k < PyList_GET_SIZE(nodes); k++) {
            PyObject *t = PyList_GET_ITEM(nodes, k);
            PyObject *id = PyTuple_GET_ITEM(t, 0);
            PyObject *s1 = PyDict_New(), *s2 = PyDict_New();
            int bad = !s1 || !s2 || PyDict_SetItem(gsucc, id, s1) < 0 ||
                PyDict_SetItem(gpred, id, s2) < 0 ||
                PyDict_SetItem(gnode, id, PyTuple_GET_ITEM(t, 1)) < 0;
            Py_XDECREF(s1); Py_XDECREF(s2);
            if (bad) { r = -1; goto done; }
        }
        for (Py_ssize_t k = 0; k < PyList_GET_SIZE(edges); k++) {
            PyObject *t = PyList_GET_ITEM(edges, k);
            PyObject *u = PyTuple_GET_ITEM(t, 0), *v = PyTuple_GET_ITEM(t, 1);
            PyObject *d = PyTuple_GET_ITEM(t, 2);
            PyObject *su = PyDict_GetItemWithError(gsucc, u);
            PyObject *pv = PyDict_GetItemWithError(gpred, v);
            if (!su || !pv || PyDict_SetItem(su, v, d) < 0 || PyDict_SetItem(pv, u, d) < 0) {
                if (!PyErr_Occurred())
                    PyErr_SetString(PyExc_RuntimeError, "edge between unknown nodes");
                r = -1; goto done;
            }
        }
        Py_SETREF(nodes, Py_None); Py_INCREF(Py_None);
        Py_SETREF(edges, Py_None); Py_INCREF(Py_None);
    }
    result = Py_BuildValue("(OOOOnnn)", nodes, edges, innodes, outnodes, ndrv, vbits, widest);
done:
    parsed_free(&p);
    PyMem_Free(N.parent); PyMem_Free(drv); PyMem_Free(drv_of); PyMem_Free(rep); PyMem_Free(ins);
    Py_XDECREF(N.names); Py_XDECREF(N.list); Py_XDECREF(N.vectors);
    Py_XDECREF(nodes); Py_XDECREF(edges); Py_XDECREF(pins);
    Py_XDECREF(innodes); Py_XDECREF(outnodes); Py_XDECREF(portnames);
    Py_XDECREF(s_kind); Py_XDECREF(s_name); Py_XDECREF(s_op); Py_XDECREF(s_inputs);
    Py_XDECREF(s_pins); Py_XDECREF(s_delays); Py_XDECREF(s_cell); Py_XDECREF(s_instance);
    Py_XDECREF(s_path); Py_XDECREF(s_line); Py_XDECREF(s_column); Py_XDECREF(s_tri);
    Py_XDECREF(s_gate); Py_XDECREF(s_input); Py_XDECREF(s_buf); Py_XDECREF(s_epins);
    Py_XDECREF(s_const); Py_XDECREF(s_const0); Py_XDECREF(s_const1);
    for (int k = 0; k < N_OPS; k++) Py_XDECREF(opname[k]);
    if (result) return result;
    if (r < 0 || PyErr_Occurred()) return NULL;
    Py_RETURN_NONE;
}

static PyMethodDef methods[] = {
    {"check", check, METH_VARARGS,
     "check(texts, kinds) -> None or [(member, [wire names])]: the members are all flat."},
    {"build", build, METH_VARARGS,
     "build(texts, kinds, line0, lstart0, ports, port_bits, inputs, outputs, path, top, "
     "delay, max_width, max_bits[, node, succ, pred]) -> None or (nodes, edges, input nodes, output nodes, drivers, vector bits, "
     "widest vector)."},
    {NULL, NULL, 0, NULL}};

static struct PyModuleDef module = {PyModuleDef_HEAD_INIT, "_flatnet",
                                    "Compiled reader and elaborator of flat netlists.", -1,
                                    methods};

PyMODINIT_FUNC PyInit__flatnet(void) { return PyModule_Create(&module); }
