"""The module hierarchy: top choice, modules, parameters, declarations, items and
generate loops. A mixin of :class:`~hazlint.elaborate.elaborator.Elaborator`."""
from __future__ import annotations

from typing import Any, Mapping

from .. import budget as _budget
from .. import ir
from .. import limits as _limits
from ..errors import ElaborationError
from ..findings.words import number
from . import initial_values
from .common import walk_items
from .common import BlackBoxModule as _BlackBoxModule
from .common import expr_text as _expr_text
from .common import where as _where
from .consteval import NotConstant, const_value
from .scope import NetInfo, Scope, index_range


class HierarchyElaborator:
    """Tops, modules, parameters, declarations and items."""

    # ---------------------------------------------------------------- top ----------------------
    def choose_tops(self, top) -> list[str]:
        if top:
            tops = [top] if isinstance(top, str) else list(top)
            for t in tops:
                if t not in self.modules:
                    known = ", ".join(sorted(self.modules)[:10])
                    raise ElaborationError(f"unknown top module '{t}' (modules: {known})",
                                           construct=t)
            return tops
        used: set[str] = set()
        for m in self.modules.values():
            if getattr(m, "flat", None) is not None:
                continue                # gate primitives only (hazlint.elaborate.flat)
            for it in walk_items(m.items):
                if isinstance(it, ir.Instance):
                    used.add(it.cell)
        tops = [n for n in self.modules if n not in used and not self.modules[n].celldefine]
        if not tops:
            tops = [n for n in self.modules if n not in used]
        if not tops:
            if not self.modules:
                first = self.sources[0].path if self.sources else None
                raise ElaborationError("no module found in the input files",
                                       path=first, line=1 if first else None)
            raise _instantiation_cycle(self.modules)
        return tops

    # ---------------------------------------------------------------- modules ------------------
    def elab_module(self, scope: Scope, m: ir.Module, overrides, depth: int,
                    is_top: bool = False) -> None:
        if depth > self.max_depth:
            raise ElaborationError(f"hierarchy deeper than {self.max_depth} levels (recursive "
                                   f"instantiation of '{m.name}'?)", *_where(m.loc),
                                   construct=m.name)
        self.module_seen(m.name)
        self.register_subprograms(scope, m.items)
        # parameters: header, then body, with overrides
        named = {n: v for n, v in overrides if n is not None}
        positional = [v for n, v in overrides if n is None]
        header = list(m.params)
        body_params = [it for it in m.items if isinstance(it, ir.Param)]
        overridable = [p for p in header + body_params if not p.local]
        for i, v in enumerate(positional):
            if i < len(overridable):
                named.setdefault(overridable[i].name, v)
        for p in header:
            self._set_param(scope, p, named)
        for it in m.items:
            if isinstance(it, ir.Param):
                self._set_param(scope, it, named)
        for pname, port in m.ports.items():
            self.declare(scope, pname, port.width, port.net_type, port.signed, port.loc)
            if port.attrs and is_top:
                self._note_attrs(scope, pname, port.attrs, port.loc)
            if "init" in port.attrs:
                initial_values.record_attribute(self, scope, port)
        self.elab_items(scope, m.items, depth)

    def _note_attrs(self, scope: Scope, name: str, attrs: dict, loc) -> None:
        if any(str(k).startswith("hazlint_") for k in attrs):
            self.attr_decls.append((self.rel(scope, name), scope.nets[name].bits(), dict(attrs),
                                    loc))

    def _set_param(self, scope: Scope, p: ir.Param, named: Mapping[str, Any]) -> None:
        expr = named.get(p.name) if not p.local else None
        try:
            if expr is not None:
                # overrides are evaluated in the parent's scope by the caller
                v = expr[1] if isinstance(expr, tuple) and expr and expr[0] == "_value" else expr
            else:
                v = self.const_expr(p.value, scope, p.loc)
        except NotConstant as exc:
            raise ElaborationError(f"parameter '{p.name}' is not a constant expression "
                                   f"(uses '{exc}')", *_where(p.loc), construct=p.name) from None
        # its type (IEEE 1364-2005 12.2): the declared range and sign, else the value's
        if p.width is not None:
            w = abs(self.const(p.width[0], scope, p.loc) - self.const(p.width[1], scope, p.loc)) + 1
            if isinstance(v, int):
                v &= (1 << w) - 1
                if p.signed and (v >> (w - 1)) & 1:
                    v -= 1 << w
            scope.ptypes[p.name] = (w, p.signed)
        elif expr is None and isinstance(v, int):
            try:
                w, sg = self.expr_type(p.value, scope, p.loc)
            except (ElaborationError, _BlackBoxModule):
                w, sg = 32, True
            scope.ptypes[p.name] = (max(w, v.bit_length() + (1 if v < 0 else 0)),
                                    sg or p.signed)
        scope.params[p.name] = v

    def declare(self, scope: Scope, name: str, width, kind: str, signed: bool, loc,
                array=None) -> NetInfo:
        info = scope.nets.get(name)
        indices = None
        if width is not None:
            msb = self.const(width[0], scope, loc)
            lsb = self.const(width[1], scope, loc)
            _limits.check("vector_width", abs(msb - lsb) + 1, f"the width of '{name[:60]}'",
                          _where(loc))
            if max(abs(msb), abs(lsb)) >= 1 << 62:
                raise ElaborationError(f"the range of '{name[:60]}' ([{number(msb)}:"
                                       f"{number(lsb)}]) is beyond 2**62", *_where(loc))
            self._net_bits += abs(msb - lsb) + 1
            if abs(msb - lsb) > 8191:
                _budget.check_loading("elaborating the design", *_where(loc)[:2])
            if self._net_bits > self._max_net_bits:
                _limits.check("net_bits", self._net_bits, "the number of net bits declared",
                              _where(loc))
            indices = index_range(msb, lsb)
        if info is not None:
            if indices is not None and info.indices is None:
                info.indices = indices
            if kind in ("reg", "supply0", "supply1", "wand", "wor", "tri0", "tri1"):
                info.kind = kind
            return info
        info = NetInfo(base=f"{scope.prefix}{name}", indices=indices, kind=kind, signed=signed)
        scope.nets[name] = info
        if array:
            info.dims = self.array_dims(scope, array, loc)
            self.declare_array(scope, info, kind, loc)
            return info
        for b in info.bits():
            self.parent.setdefault(b, b)
            self.declared.add(b)
        if kind in ("supply0", "supply1"):
            for b in info.bits():
                self._add_driver("const", b, op="const1" if kind == "supply1" else "const0",
                                 instance=scope.instance, loc=loc)
        return info

    def const(self, e, scope: Scope, loc) -> int:
        try:
            v = self.const_expr(e, scope, loc)
        except NotConstant as exc:
            raise ElaborationError(f"expected a constant expression (it uses '{exc}')",
                                   *_where(loc), construct=_expr_text(e)) from None
        if isinstance(v, float) and not -float("inf") < v < float("inf"):
            raise ElaborationError("expected a finite constant", *_where(loc),
                                   construct=_expr_text(e))
        return int(v)

    def elab_items(self, scope: Scope, items, depth: int) -> None:
        # declarations first so that nets may be used before their declaration in the text
        mark = len(self.drivers)
        paths = [it for it in items if isinstance(it, ir.SpecifyPath)]
        if scope.parent is not None:
            self.register_subprograms(scope, items)
        for it in items:
            if isinstance(it, ir.Net):
                if it.kind == "real":
                    raise _BlackBoxModule(f"real variable '{it.name}'", it.loc)
                self.declare(scope, it.name, it.width, it.kind, it.signed, it.loc,
                             array=it.array)
                if it.kind == "trireg":
                    self.note(f"trireg '{it.name}': charge storage is not modelled, the net is "
                              "treated as a wire", it.loc, scope.instance)
                if it.delay:
                    nd = self.delay(it.delay, scope, it.loc)
                    for b in scope.nets[it.name].bits():
                        self.net_delay[b] = nd
                if it.attrs:
                    for b in scope.nets[it.name].bits():
                        self.port_attrs.setdefault(b, {}).update(it.attrs)
                    self._note_attrs(scope, it.name, it.attrs, it.loc)
                    if "init" in it.attrs:
                        initial_values.record_attribute(self, scope, it)
            elif isinstance(it, ir.Param) and scope.parent is not None:
                self._set_param(scope, it, {})
        for it in items:
            try:
                self.elab_item(scope, it, depth)
            except RecursionError:
                loc = getattr(it, "loc", None)
                what = (f"instance '{it.name}': the hierarchy is nested too deeply to elaborate "
                        "(recursive instantiation?)" if isinstance(it, ir.Instance) else
                        "expression or statement nested too deeply to elaborate")
                raise ElaborationError(what, *_where(loc)) from None
            except ValueError as exc:
                if "integer string conversion" not in str(exc):
                    raise
                # a constant of thousands of digits in a name or a message
                raise ElaborationError("a constant too large to print (more than 4300 digits) "
                                       "in an index or a name", *_where(getattr(it, "loc",
                                                                               None))) from None
            except ElaborationError as exc:
                if not exc.path and getattr(it, "loc", None) is not None:
                    exc.path, exc.line = it.loc.path, it.loc.line    # an error without a place
                raise
        if paths:
            self.apply_specify(scope, paths, self.drivers[mark:])

    def elab_item(self, scope: Scope, it, depth: int) -> None:
        if isinstance(it, (ir.Net, ir.Param)):
            return
        if isinstance(it, ir.Assign):
            self.elab_assign(scope, it)
        elif isinstance(it, ir.Instance):
            self.elab_instance(scope, it, depth)
        elif isinstance(it, ir.Always):
            self.elab_always(scope, it)
        elif isinstance(it, ir.Initial):
            initial_values.record_block(self, scope, it)
        elif isinstance(it, ir.GenFor):
            self.elab_genfor(scope, it, depth)
        elif isinstance(it, ir.GenIf):
            cond = self.const(it.cond, scope, it.loc)
            items, name = (it.then_items, it.name) if cond else (it.else_items, it.else_name)
            if items:
                self.elab_items(scope.child(name), items, depth)
        elif isinstance(it, ir.GenCase):
            sel = self.const(it.expr, scope, it.loc)
            chosen = None
            for labels, name, items in it.cases:
                if labels is None:
                    if chosen is None:
                        chosen = (name, items, True)
                    continue
                if any(self.const(lb, scope, it.loc) == sel for lb in labels):
                    chosen = (name, items, False)
                    break
            if chosen:
                self.elab_items(scope.child(chosen[0]), chosen[1], depth)
        elif isinstance(it, ir.GenBlock):
            self.elab_items(scope.child(it.name), it.items, depth)
        elif isinstance(it, (ir.SpecifyPath, ir.Function, ir.Task)):
            pass        # specify paths: applied once the module's gates exist; functions and
            #             tasks: registered with the scope, inlined where they are called
        elif isinstance(it, ir.Unsupported):
            raise _BlackBoxModule(it.what, it.loc)

    def elab_genfor(self, scope: Scope, g: ir.GenFor, depth: int) -> None:
        params = scope.all_params()
        v = self.const(g.init, scope, g.loc)
        count = 0
        while True:
            params[g.var] = v
            try:
                ok = const_value(g.cond, params)
            except NotConstant as exc:
                raise ElaborationError(f"generate loop condition is not constant ('{exc}')",
                                       *_where(g.loc)) from None
            if not ok:
                break
            count += 1
            if count > 100000:
                raise ElaborationError("generate loop does not terminate within 100000 "
                                       "iterations", *_where(g.loc))
            name = f"{g.name or 'genblk'}[{v}]"
            sub = Scope(prefix=f"{scope.prefix}{name}.", instance=f"{scope.instance}.{name}",
                        module=scope.module, params={g.var: v}, nets={}, parent=scope)
            self.elab_items(sub, g.items, depth)
            v = const_value(g.step, params)


def _instantiation_cycle(modules: Mapping[str, ir.Module]) -> ElaborationError:
    """The error for a design whose every module is instantiated: the instantiation that
    closes a cycle (a module that contains itself), at its line."""
    first: dict[str, dict[str, ir.Instance]] = {}
    for name in sorted(modules):
        uses: dict[str, ir.Instance] = {}
        for it in walk_items(modules[name].items):
            if isinstance(it, ir.Instance) and it.cell in modules:
                uses.setdefault(it.cell, it)
        first[name] = uses
    state: dict[str, int] = {}
    for start in sorted(modules):
        stack = [(start, iter(first[start].items()))]
        state[start] = 1
        path = [start]
        while stack:
            mod, it = stack[-1]
            nxt = next(it, None)
            if nxt is None:
                state[mod] = 2
                stack.pop()
                path.pop()
                continue
            cell, inst = nxt
            if state.get(cell) == 1:
                loop = " -> ".join(path[path.index(cell):] + [cell])
                how = ("itself" if cell == mod else
                       f"'{cell}', which contains '{mod}' again ({loop})")
                return ElaborationError(
                    f"module '{mod}' instantiates {how} through instance '{inst.name}': the "
                    "hierarchy never ends, so there is no top module", *_where(inst.loc),
                    construct=inst.name)
            if state.get(cell) is None:
                state[cell] = 1
                path.append(cell)
                stack.append((cell, iter(first[cell].items())))
    return ElaborationError("cannot find a top module (every module is instantiated); name "
                            "one with --top")
