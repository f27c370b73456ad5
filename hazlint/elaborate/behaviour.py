"""Always blocks, functions and tasks into gates, registers and latches, as synthesis reads them.

A block is run once symbolically (:meth:`BehaviourElaborator.exec_stmt`): every variable bit
holds a value tree (a signal, ``HOLD`` for "unchanged", or ``("mux", cond, then, else)``);
``if`` and ``case`` fork and merge the trees under their conditions; ``for``, ``while`` and
``repeat`` loops are unrolled while their condition is a constant at elaboration (a loop whose
bound depends on signals cannot be unrolled: the module is reported as not analysed);
functions are inlined with their arguments bound (IEEE 1364-2005 10.4), tasks likewise with
their outputs copied back on return (10.2); a variable index on the left-hand side writes each
word or bit it may select under its decoded condition.

At the end of a block (IEEE 1364-2005 9.2, and common synthesis practice):

* combinational block (``always @*``, ``@(a or b)``, ``always_comb``): a variable assigned on
  every path is the logic of its final value; one not assigned on some path keeps its value
  there: a latch whose enable is the condition under which it is assigned (what synthesis
  builds, and reported as an inferred latch);
* clocked block: each variable is a flip-flop whose data is its final value (unassigned paths
  hold); the leading ``if (rst) ... else`` branches on other edge signals of the sensitivity
  list are asynchronous set/reset pins;
* a variable written only with blocking assignments is materialised only when something reads
  it outside the block's own evaluation (loop indices and intermediate values of a block are
  not registers), which is decided when the whole design is elaborated
  (:meth:`resolve_deferred`);
* memories written in clocked blocks become registers with decoded write enables, or memory
  nodes above a size (:mod:`.memory`).
"""
from __future__ import annotations

import re
from collections import Counter

from .. import ir
from .common import C0, C1, HOLD, BlackBoxModule, at_line, expr_text
from .common import const_bits
from .expressions import bits_value
from .selects import MemWrite
from .scope import Scope

MAX_LOOP_ITERATIONS = 65536      # per loop statement, across the whole block
MAX_CALL_DEPTH = 64              # nested function and task calls (recursion)
_TRAILING_INDEX = re.compile(r"(\[-?\d+\])+$")


class Exec:
    """State of a symbolic run: ``env`` final value trees of assigned bits (and memory write
    port fields, keyed by tuples), ``benv`` the values blocking assignments made visible,
    ``nba`` bits written by a nonblocking assignment, ``ports`` memory write ports opened."""

    __slots__ = ("env", "benv", "nba", "ports")

    def __init__(self, env=None, benv=None, nba=None, ports=None):
        self.env = env if env is not None else {}
        self.benv = benv if benv is not None else {}
        self.nba = nba if nba is not None else set()
        self.ports = ports if ports is not None else []

    def fork(self) -> "Exec":
        return Exec(dict(self.env), dict(self.benv), set(self.nba), list(self.ports))


class BehaviourElaborator:
    """Always blocks, functions and tasks (a mixin of :class:`hazlint.elaborate.elaborator.Elaborator`)."""

    _prev_reads: set | None = None     # while a block runs: bits it read before writing them
    _read_scope: Scope | None = None   # where gates for values read in a block are built

    # ------------------------------------------------------------ statements
    def exec_stmt(self, stmt, scope, loc, st: Exec) -> None:
        """Run ``stmt`` symbolically on ``st`` (see the module docstring)."""
        if stmt is None:
            return
        self._read_scope = scope
        tag = stmt[0]
        if tag == "block":
            bscope = scope
            if len(stmt) > 3 and stmt[3]:
                bscope = self._block_scope(scope, stmt[2], stmt[3], loc)
            for s in stmt[1]:
                self.exec_stmt(s, bscope, loc, st)
        elif tag == "assign":
            kind, lhs, rhs, line = stmt[1], stmt[2], stmt[3], stmt[4]
            sl = at_line(loc, line)
            pieces = self.targets(lhs, scope, sl, st.benv)
            W = sum(p.width for p in pieces)
            src = self.bits(rhs, scope, sl, W, env=st.benv)
            self._write_pieces(scope, sl, st, pieces, src, kind == "=")
        elif tag == "if":
            c = self.truth(stmt[1], scope, loc, st.benv)
            self._branch(scope, loc, st, c, stmt[2], stmt[3])
        elif tag == "case":
            self._case(stmt, scope, loc, st)
        elif tag == "if_sig":
            self._branch(scope, loc, st, stmt[1], stmt[2], stmt[3])
        elif tag == "for":
            _, init, cond, step, body, line = stmt
            sl = at_line(loc, line)
            self.exec_stmt(init, scope, sl, st)
            self._loop(scope, sl, st, cond, body, step, "for")
        elif tag == "while":
            self._loop(scope, at_line(loc, stmt[3]), st, stmt[1], stmt[2], None, "while")
        elif tag == "repeat":
            sl = at_line(loc, stmt[3])
            n = self.const_try(stmt[1], scope, sl, st.benv)
            if n is None:
                raise BlackBoxModule("repeat loop whose count depends on signals", sl)
            if n > MAX_LOOP_ITERATIONS:
                raise BlackBoxModule(f"repeat loop of more than {MAX_LOOP_ITERATIONS} "
                                     "iterations", sl)
            for _ in range(max(0, n)):
                self.exec_stmt(stmt[2], scope, sl, st)
        elif tag == "call":
            sl = at_line(loc, stmt[3])
            if stmt[1].startswith("$"):
                self.note(f"system task {stmt[1]} ignored (simulation only)", sl,
                          scope.instance, key=("systask", stmt[1], scope.module.name))
            else:
                self.call_task(scope, stmt[1], stmt[2], sl, st)
        elif tag == "other":
            raise BlackBoxModule(stmt[1], at_line(loc, stmt[2]))
        else:
            raise BlackBoxModule(f"statement '{tag}'", loc)

    def _block_scope(self, scope, name, decls, loc) -> Scope:
        """A named block's own variables: nets of the design (static, as in Verilog-2005)."""
        cache = self.__dict__.setdefault("_block_scopes", {})
        key = (scope.prefix, name or f"@{id(decls)}")
        bs = cache.get(key)
        if bs is None:
            bs = cache[key] = Scope(prefix=f"{scope.prefix}{name or 'unnamed'}.",
                                    instance=f"{scope.instance}.{name or 'unnamed'}",
                                    module=scope.module, parent=scope)
            for d in decls:
                if isinstance(d, ir.Param):
                    self._set_param(bs, d, {})
            for d in decls:
                if isinstance(d, ir.Net):
                    if d.kind == "real":
                        raise BlackBoxModule(f"real variable '{d.name}'", d.loc or loc)
                    self.declare(bs, d.name, d.width, d.kind, d.signed, d.loc or loc,
                                 array=d.array)
        return bs

    def _write_pieces(self, scope, loc, st: Exec, pieces, src, blocking) -> None:
        off = 0
        for p in pieces:
            part = src[off:off + p.width]
            off += p.width
            if isinstance(p, MemWrite):
                self.memory_write(scope, p, part, st, loc)
                continue
            for cond, bits in p.alts:
                for d, s in zip(bits, part):
                    if d is not None:           # None: out of range, the write is ignored
                        self._write(st, d, s, cond, blocking)

    def _assign(self, scope, loc, st, lhs, vals, blocking) -> None:
        pieces = self.targets(lhs, scope, loc, st.benv)
        W = sum(p.width for p in pieces)
        vals = list(vals[:W]) + [C0] * (W - len(vals))
        self._write_pieces(scope, loc, st, pieces, vals, blocking)

    @staticmethod
    def _write(st: Exec, d: str, s, cond, blocking: bool) -> None:
        if cond == C1:
            st.env[d] = s
            if blocking:
                st.benv[d] = s
        else:
            st.env[d] = ("mux", cond, s, st.env.get(d, HOLD))
            if blocking:
                st.benv[d] = ("mux", cond, s, st.benv.get(d, HOLD))
        if not blocking:
            st.nba.add(d)

    def _branch(self, scope, loc, st: Exec, c, then_s, else_s) -> None:
        if c == C1:
            self._run(then_s, scope, loc, st)
            return
        if c == C0:
            self._run(else_s, scope, loc, st)
            return
        t, e = st.fork(), st.fork()
        self._run(then_s, scope, loc, t)
        self._run(else_s, scope, loc, e)
        self._merge(c, st, t, e)

    def _run(self, s, scope, loc, st):
        if s is not None and s[0] == "if_sig":
            self._branch(scope, loc, st, s[1], s[2], s[3])
        else:
            self.exec_stmt(s, scope, loc, st)

    @staticmethod
    def _merge(c, st: Exec, t: Exec, e: Exec) -> None:
        for k in list(t.env) + [k for k in e.env if k not in t.env]:
            a = t.env.get(k, st.env.get(k, HOLD))
            b = e.env.get(k, st.env.get(k, HOLD))
            st.env[k] = a if a == b else ("mux", c, a, b)
        for k in list(t.benv) + [k for k in e.benv if k not in t.benv]:
            a = t.benv.get(k, st.benv.get(k, HOLD))
            b = e.benv.get(k, st.benv.get(k, HOLD))
            st.benv[k] = a if a == b else ("mux", c, a, b)
        st.nba |= t.nba | e.nba
        seen = {id(p) for p in st.ports}
        for p in t.ports + e.ports:
            if id(p) not in seen:
                seen.add(id(p))
                st.ports.append(p)

    def _case(self, stmt, scope, loc, st: Exec) -> None:
        kind, sel, arms = stmt[1], stmt[2], stmt[3]
        labels_all = [lb for labels, _ in arms if labels is not None for lb in labels]
        types = [self.expr_type(x, scope, loc) for x in [sel] + labels_all]
        w = max(t[0] for t in types)
        sg = all(t[1] for t in types)
        s_bits = self.eval_bits(sel, scope, loc, w, sg, st.benv)
        default = None
        conds = []
        for labels, s in arms:
            if labels is None:
                default = s
                continue
            terms = [self._case_match(scope, kind, s_bits, lb, w, sg, loc, st.benv)
                     for lb in labels]
            c = self.reduce(scope, "or", terms, loc)
            if c == C0:
                continue
            conds.append((c, s))
            if c == C1:
                break                   # later arms cannot be reached
        chain = default if not conds or conds[-1][0] != C1 else None
        for c, s in reversed(conds):
            chain = ("if_sig", c, s, chain) if c != C1 else s
        self._run(chain, scope, loc, st)

    def _case_match(self, scope, kind, s_bits, label, w, sg, loc, env) -> str:
        if label[0] == "num" and kind in ("casez", "casex") and label[3]:
            _, _lw, value, xz, _sg = label
            dont = xz if kind == "casex" else (xz & value)     # casez: only z/? are wild
            terms = []
            for i, sb in enumerate(s_bits):
                if (dont >> i) & 1:
                    continue
                bit = (value >> i) & 1 if not (xz >> i) & 1 else 0
                terms.append(sb if bit else self.logic_not(scope, sb, loc))
            return self.reduce(scope, "and", terms, loc) if terms else C1
        lb = self.eval_bits(label, scope, loc, w, sg, env)
        return self.compare(scope, "==", s_bits, lb, loc)

    def _loop(self, scope, loc, st: Exec, cond, body, step, what) -> None:
        n = 0
        while True:
            c = self.truth(cond, scope, loc, st.benv) if cond is not None else C1
            if c == C0:
                return
            if c != C1:
                raise BlackBoxModule(f"{what} loop whose condition depends on signals (its "
                                     f"bound is not a constant: '{expr_text(cond)}')", loc)
            n += 1
            if n > MAX_LOOP_ITERATIONS:
                raise BlackBoxModule(f"{what} loop does not end within {MAX_LOOP_ITERATIONS} "
                                     "iterations", loc)
            self.exec_stmt(body, scope, loc, st)
            self.exec_stmt(step, scope, loc, st)

    # ------------------------------------------------------------ value trees
    def realize(self, scope, tree, hold: str, loc) -> str:
        """Turn a value tree into gates; HOLD stands for ``hold`` (the variable's own value)."""
        if tree == HOLD:
            return hold
        if isinstance(tree, str):
            return tree
        _, c, a, b = tree
        ra = self.realize(scope, a, hold, loc)
        rb = self.realize(scope, b, hold, loc)
        if ra == rb:
            return ra
        return self.mux_bits(scope, c, [ra], [rb], loc)[0]

    def read_bit(self, b: str, env) -> str:
        """The value of net bit ``b`` inside a block: its blocking value, else the net (the
        value before the block), remembered as a read of the previous value."""
        if env is None or b in (C0, C1):
            return b
        v = env.get(b)
        if v is None:
            if self._prev_reads is not None:
                self._prev_reads.add(b)
            return b
        if isinstance(v, tuple):
            if self._prev_reads is not None and self._has_hold(v):
                self._prev_reads.add(b)
            v = env[b] = self.realize(self._read_scope, v, b, None)
        return v

    @staticmethod
    def _has_hold(tree) -> bool:
        if tree == HOLD:
            return True
        if isinstance(tree, str):
            return False
        return BehaviourElaborator._has_hold(tree[2]) or BehaviourElaborator._has_hold(tree[3])

    def _enable_of(self, scope, tree, loc) -> str:
        """Condition under which a value tree does not hold (latch enable)."""
        if tree == HOLD:
            return C0
        if isinstance(tree, str):
            return C1
        _, c, a, b = tree
        ea = self._enable_of(scope, a, loc)
        eb = self._enable_of(scope, b, loc)
        if ea == eb:
            return ea
        return self.mux_bits(scope, c, [ea], [eb], loc)[0]

    def _data_of(self, tree):
        """The value tree with held branches pruned (latch data)."""
        if isinstance(tree, str) or tree == HOLD:
            return tree
        _, c, a, b = tree
        a, b = self._data_of(a), self._data_of(b)
        if a == HOLD:
            return b
        if b == HOLD:
            return a
        return ("mux", c, a, b)

    # ------------------------------------------------------------ always blocks
    def elab_always(self, scope: Scope, al: ir.Always) -> None:
        edges = [(edge, e) for edge, e in al.sens if edge in ("posedge", "negedge")]
        if al.body is None:
            return
        self._read_scope = scope
        self._prev_reads = set()
        try:
            if edges:
                self.elab_clocked(scope, al, edges)
            else:
                self.elab_level(scope, al)
        finally:
            self._prev_reads = None

    def _assigned_bits(self, st: Exec) -> list[str]:
        local = self.__dict__.get("_local_bits", ())
        return [k for k in st.env if isinstance(k, str) and k not in local]

    def elab_level(self, scope: Scope, al: ir.Always) -> None:
        loc = al.loc
        st = Exec()
        self.exec_stmt(al.body, scope, loc, st)
        if st.ports:
            raise BlackBoxModule("memory written outside a clocked block", loc)
        latches = []
        for b in self._assigned_bits(st):
            tree = st.env[b]
            if not self._has_hold(tree):
                self._defer(b, st, lambda b=b, v=self.realize(scope, tree, b, loc):
                            self.connect(scope, b, v, loc))
                continue
            en = self._enable_of(scope, tree, loc)
            data = self.realize(scope, self._data_of(tree), C0, loc)
            latches.append(b)
            self._defer(b, st, lambda b=b, en=en, data=data: self._latch(scope, al, b, en, data))
        if latches:
            names = sorted({_TRAILING_INDEX.sub("", b)[len(scope.prefix):] for b in latches})
            self.note(f"latch inferred for {', '.join(repr(n) for n in names[:6])}"
                      f"{' ...' if len(names) > 6 else ''}: not assigned on every path of a "
                      "combinational block", loc, scope.instance,
                      key=("latch", scope.instance, loc.line if loc else 0))

    def _latch(self, scope, al, b, en, data):
        self._make_register(scope, al, b, "latch", enable=(en, 1), data=data)

    def _defer(self, b: str, st: Exec, action) -> None:
        """Materialise ``b`` now, or, when only blocking assignments wrote it, once the
        design shows that something reads it (:meth:`resolve_deferred`)."""
        if b in st.nba:
            action()
        else:
            self.__dict__.setdefault("_deferred", []).append((b, action))

    def resolve_deferred(self, extra_refs=()) -> None:
        """Materialise the deferred variables some driver, sink or connection reads (repeated
        until nothing new is read); the rest were block-internal values."""
        pending = self.__dict__.pop("_deferred", [])
        if not pending:
            return
        find = self.find
        while pending:
            refs = set(extra_refs) | self.blackbox_pins
            for d in self.drivers:
                refs.update(d["inputs"])
            for s in self.sinks:
                refs.add(s["input"])
            roots = {find(n) for n in refs}
            count = Counter(find(n) for n in self.parent)
            todo = [(b, a) for b, a in pending if find(b) in roots or count[find(b)] > 1]
            if not todo:
                return
            done = {id(a) for _, a in todo}
            pending = [(b, a) for b, a in pending if id(a) not in done]
            for _, action in todo:
                action()

    def elab_clocked(self, scope: Scope, al: ir.Always, edges) -> None:
        loc = al.loc
        body = al.body
        while body and body[0] == "block" and len(body[1]) == 1 and not (
                len(body) > 3 and body[3]):
            body = body[1][0]
        edge_names = {}
        edge_exprs = {}
        for edge, e in edges:
            key = _edge_key(e)          # a name, or one constant bit of a vector (yosys)
            if key is None:
                raise BlackBoxModule("edge on an expression in a sensitivity list", loc)
            edge_names[key] = edge
            edge_exprs[key] = e
        # peel asynchronous branches: if (<async cond>) ... else if ... else <clocked>
        asyncs = []
        stmt = body
        while (stmt is not None and stmt[0] == "if" and len(edge_names) > 1
               and _ids(stmt[1], True) and _ids(stmt[1], True) <= set(edge_names)
               and len(asyncs) < len(edge_names) - 1):
            asyncs.append((stmt[1], stmt[2]))
            stmt = stmt[3]
            while stmt is not None and stmt[0] == "block" and len(stmt[1]) == 1 and not (
                    len(stmt) > 3 and stmt[3]):
                stmt = stmt[1][0]
        used = set().union(*(_ids(c, True) for c, _ in asyncs)) if asyncs else set()
        clocks = [n for n in edge_names if n not in used]
        if len(clocks) != 1:
            raise BlackBoxModule("always block whose clock cannot be identified (sensitivity "
                                 f"list {', '.join(edge_names)})", loc)
        clk = clocks[0]
        clk_sig = self.lvalue_bits(edge_exprs[clk], scope, loc, reading=True)[0]
        st = Exec()
        self.exec_stmt(stmt, scope, loc, st)
        assigned = self._assigned_bits(st)
        async_of: dict[str, list] = {}
        for cond, branch in asyncs:
            sig, level = self._cond_signal(scope, cond, loc)
            ast = Exec()
            self.exec_stmt(branch, scope, loc, ast)
            if ast.ports:
                raise BlackBoxModule("memory written in an asynchronous set/reset branch", loc)
            for b in self._assigned_bits(ast):
                v = ast.benv.get(b) if b in ast.benv else ast.env.get(b)
                v = self.realize(scope, v, b, loc) if isinstance(v, tuple) else v
                if b not in st.env:
                    assigned.append(b)
                    st.env[b] = HOLD
                st.nba |= ast.nba
                if v == C0:
                    async_of.setdefault(b, []).append(("reset", sig, level))
                elif v == C1:
                    async_of.setdefault(b, []).append(("set", sig, level))
                else:
                    self.note(f"asynchronous load of a non-constant value into '{b}' is "
                              f"modelled as both set and reset pins", loc, scope.instance)
                    async_of.setdefault(b, []).append(("set", sig, level))
                    async_of.setdefault(b, []).append(("reset", sig, level))
        clock = (clk_sig, edge_names[clk])
        for b in assigned:
            data = self.realize(scope, st.env.get(b, HOLD), b, loc)
            sets = [(s, lv, loc) for role, s, lv in async_of.get(b, []) if role == "set"]
            resets = [(s, lv, loc) for role, s, lv in async_of.get(b, []) if role == "reset"]
            self._defer(b, st, lambda b=b, data=data, sets=sets, resets=resets:
                        self._make_register(scope, al, b, "ff", clock=clock, data=data,
                                            sets=sets, resets=resets))
        if st.ports:
            self.memory_ports_done(scope, al, st, clock)

    def _cond_signal(self, scope, cond, loc) -> tuple[str, int]:
        """An asynchronous condition as (net, active level); plain forms use no gate."""
        c = cond
        if _edge_key(c) is not None:
            return self.lvalue_bits(c, scope, loc, reading=True)[0], 1
        if c[0] == "unop" and c[1] in ("!", "~") and _edge_key(c[2]) is not None:
            return self.lvalue_bits(c[2], scope, loc, reading=True)[0], 0
        if c[0] == "binop" and c[1] in ("==", "===") and c[2][0] == "id" and c[3][0] == "num":
            return self.net_bits(scope, c[2][1], loc)[0], 1 if c[3][2] else 0
        return self.truth(cond, scope, loc), 1


def _edge_key(e) -> str | None:
    """``name`` or ``name[3]`` for an identifier or a constant bit select, else None."""
    if e[0] == "id":
        return e[1]
    if e[0] == "bit" and e[1][0] == "id" and e[2][0] == "num" and not e[2][3]:
        return f"{e[1][1]}[{e[2][2]}]"
    return None


def _ids(e, bit_keys: bool = False) -> set[str]:
    """The identifiers an expression reads; with ``bit_keys``, a constant bit select is kept
    apart as ``name[3]`` (:func:`_edge_key`)."""
    key = _edge_key(e) if bit_keys else None
    if key is not None:
        return {key}
    tag = e[0]
    if tag == "id":
        return {e[1]}
    if tag in ("num", "real", "str"):
        return set()
    out: set[str] = set()
    for x in e[1:]:
        if isinstance(x, tuple) and x and isinstance(x[0], str):
            out |= _ids(x, bit_keys)
        elif isinstance(x, (list, tuple)):
            for y in x:
                if isinstance(y, tuple) and y and isinstance(y[0], str):
                    out |= _ids(y, bit_keys)
    return out


__all__ = ["BehaviourElaborator", "Exec", "bits_value", "const_bits"]
