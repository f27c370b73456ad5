"""Functions and tasks, inlined where they are called: a function's arguments are bound and its
body run symbolically (IEEE 1364-2005 10.4; constant functions evaluate parameters), a task's
outputs are copied back on return (10.2). A mixin of
:class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

from ..errors import ElaborationError
from .. import ir
from .common import C0, BlackBoxModule, where
from .scope import NetInfo, Scope, index_range
from .behaviour import MAX_CALL_DEPTH, Exec


class SubprogramElaborator:
    """Function and task calls."""

    # ------------------------------------------------------------ functions and tasks
    def register_subprograms(self, scope: Scope, items) -> None:
        for it in items:
            if isinstance(it, ir.Function):
                scope.functions[it.name] = it
            elif isinstance(it, ir.Task):
                scope.tasks[it.name] = it

    @staticmethod
    def find_function(scope, name):
        """(function, the scope declaring it) seen from ``scope``, or None."""
        return _find_declared(scope, "functions", name)

    @staticmethod
    def find_task(scope, name):
        """(task, the scope declaring it) seen from ``scope``, or None."""
        return _find_declared(scope, "tasks", name)

    def function_type(self, fn: ir.Function, fscope, loc) -> tuple[int, bool]:
        if fn.kind == "real":
            raise BlackBoxModule(f"function '{fn.name}' returns a real value", fn.loc or loc)
        if fn.width is None:
            return (1, fn.signed)
        msb = self.const(fn.width[0], fscope, fn.loc or loc)
        lsb = self.const(fn.width[1], fscope, fn.loc or loc)
        return (abs(msb - lsb) + 1, fn.signed)

    def _call_scope(self, fscope: Scope, name: str, decls, loc) -> Scope:
        self._ncall = getattr(self, "_ncall", 0) + 1
        depth = getattr(self, "_call_depth", 0)
        if depth >= MAX_CALL_DEPTH:
            raise BlackBoxModule(f"calls of '{name}' nest deeper than {MAX_CALL_DEPTH} levels "
                                 "(recursion that does not end at elaboration)", loc)
        cs = Scope(prefix=f"{fscope.prefix}{name}${self._ncall}.",
                   instance=f"{fscope.instance}.{name}", module=fscope.module, parent=fscope)
        for d in decls:
            if isinstance(d, ir.Param):
                self._set_param(cs, d, {})
        return cs

    def _local_var(self, cs: Scope, name, width, kind, signed, loc, array=None) -> NetInfo:
        """A variable of a function or task call: a name in the call scope only (its bits
        are never nets of their own)."""
        if kind == "real":
            raise BlackBoxModule(f"real variable '{name}'", loc)
        indices = None
        if width is not None:
            indices = index_range(self.const(width[0], cs, loc), self.const(width[1], cs, loc))
        dims = self.array_dims(cs, array, loc) if array else None
        info = NetInfo(base=f"{cs.prefix}{name}", indices=indices, kind=kind,
                       signed=signed or kind == "integer", dims=dims)
        cs.nets[name] = info
        locals_ = self.__dict__.setdefault("_local_bits", set())
        for w in (info.words() if dims else [info]):
            locals_.update(w.bits())
        return info

    def call_function(self, scope, name: str, args, loc, env) -> list[str]:
        """Inline a call of user function ``name``: the bits of its result (LSB first)."""
        found = self.find_function(scope, name)
        if found is None:
            raise ElaborationError(f"unknown function '{name}'", *where(loc), construct=name)
        fn, fscope = found
        inputs = [p for p in fn.ports if p.direction == "input"]
        if len(args) != len(inputs):
            raise ElaborationError(f"function '{name}' takes {len(inputs)} argument(s), the "
                                   f"call gives {len(args)}", *where(loc), construct=name)
        width, signed = self.function_type(fn, fscope, loc)
        floc = fn.loc or loc
        cs = self._call_scope(fscope, name, fn.decls, loc)
        st = Exec(benv=dict(env) if env else {})
        for p, a in zip(inputs, args):
            info = self._local_var(cs, p.name, p.width, p.net_type, p.signed, p.loc or floc)
            vals = self.bits(a, scope, loc, len(info.bits()), env)
            for b, v in zip(info.bits(), vals):
                st.benv[b] = v
        ret = self._local_var(cs, name, fn.width, "reg", signed, floc)
        if fn.kind == "integer":
            ret.signed = True
        self._run_body(fn, cs, floc, st)
        out = []
        missing = False
        for b in ret.bits():
            v = st.benv.get(b)
            if v is None:
                missing = True
                v = C0
            elif isinstance(v, tuple):
                if self._has_hold(v):
                    missing = True
                v = self.realize(cs, v, C0, floc)
            out.append(v)
        if missing:
            self.note(f"function '{name}' does not assign its result on every path: those "
                      f"bits are taken as 0", floc, scope.instance, key=("fnret", name))
        return out[:width]

    def call_task(self, scope, name: str, args, loc, st: Exec) -> None:
        found = self.find_task(scope, name)
        if found is None:
            raise ElaborationError(f"unknown task '{name}'", *where(loc), construct=name)
        task, tscope = found
        if len(args) != len(task.ports):
            raise ElaborationError(f"task '{name}' takes {len(task.ports)} argument(s), the "
                                   f"call gives {len(args)}", *where(loc), construct=name)
        tloc = task.loc or loc
        cs = self._call_scope(tscope, name, task.decls, loc)
        infos = []
        for p, a in zip(task.ports, args):
            info = self._local_var(cs, p.name, p.width, p.net_type, p.signed, p.loc or tloc)
            infos.append(info)
            if p.direction in ("input", "inout"):
                vals = self.bits(a, scope, loc, len(info.bits()), st.benv)
                for b, v in zip(info.bits(), vals):
                    st.benv[b] = v
                    st.env[b] = v
        self._run_body(task, cs, tloc, st)
        for p, a, info in zip(task.ports, args, infos):
            if p.direction in ("output", "inout"):
                vals = [self.read_bit(b, st.benv) for b in info.bits()]
                self._assign(scope, loc, st, a, vals, blocking=True)

    def _run_body(self, sub, cs, loc, st) -> None:
        """Declare the local variables of the function or task ``sub`` in its call scope
        ``cs`` and run its body once, counting the call depth (recursion bound)."""
        for d in sub.decls:
            if isinstance(d, ir.Net):
                self._local_var(cs, d.name, d.width, d.kind, d.signed, d.loc or loc, d.array)
        self._call_depth = getattr(self, "_call_depth", 0) + 1
        try:
            self.exec_stmt(sub.body, cs, loc, st)
        finally:
            self._call_depth -= 1


def _find_declared(scope, table: str, name: str):
    """The nearest enclosing scope's ``table`` entry ``name`` and that scope, or None."""
    s = scope
    while s is not None:
        item = getattr(s, table).get(name)
        if item is not None:
            return item, s
        s = s.parent
    return None
