"""Grammar patches applied to the class once it is defined: list-building actions that append to
a Python list instead of concatenating tuples (the stock form is quadratic in list length), and
wrappers that make a stock action's node remember where it starts (``hz_pos``, used to look up
attributes)."""
from __future__ import annotations

import ast as pyast
import inspect
import re
import textwrap

from pyverilog.vparser.parser import VerilogParser

from .grammar_tasks import INTEGER_PARAM_RULES, integer_typed


def _rule_lhs(doc: str) -> str:
    return doc.strip().split(":", 1)[0].strip()


def _stock_list_actions():
    """Find the stock actions ``p[0] = p[1] + (p[k],)`` (append k), ``p[0] = (p[1],)`` and
    ``p[0] = ()`` on the same nonterminals, by reading pyverilog's own source."""
    tree = pyast.parse(textwrap.dedent(inspect.getsource(VerilogParser)))
    cls = tree.body[0]
    appends, ones, empties = {}, {}, {}
    for fn in cls.body:
        if not isinstance(fn, pyast.FunctionDef) or not fn.name.startswith("p_"):
            continue
        doc = pyast.get_docstring(fn, clean=False) or ""
        body = [s for s in fn.body if not (isinstance(s, pyast.Expr) and (
            isinstance(s.value, pyast.Constant) or (
                isinstance(s.value, pyast.Call) and isinstance(s.value.func, pyast.Attribute)
                and s.value.func.attr == "set_lineno")))]
        if len(body) != 1 or not isinstance(body[0], pyast.Assign):
            continue
        src = pyast.unparse(body[0])
        m = re.fullmatch(r"p\[0\] = p\[1\] \+ \(p\[(\d)\],\)", src)
        if m:
            appends[fn.name] = (doc, int(m.group(1)))
        elif src == "p[0] = (p[1],)":
            ones[fn.name] = doc
        elif src == "p[0] = ()":
            empties[fn.name] = doc
    lhs = {_rule_lhs(doc) for doc, _ in appends.values()}
    ones = {n: d for n, d in ones.items() if _rule_lhs(d) in lhs}
    empties = {n: d for n, d in empties.items() if _rule_lhs(d) in lhs}
    return appends, ones, empties


# The actions below touch ``p.slice`` directly (same effect as ``p[0] = ...`` plus
# ``p.set_lineno(0, p.lineno(1))``): they run hundreds of thousands of times on a netlist.

def _make_append(doc, k):
    def action(self, p):
        s = p.slice
        first = s[1]
        lst = first.value
        lst.append(s[k].value)
        s[0].value = lst
        s[0].lineno = getattr(first, "lineno", 0)
    action.__doc__ = doc
    return action


def _make_one(doc):
    def action(self, p):
        s = p.slice
        first = s[1]
        s[0].value = [first.value]
        s[0].lineno = getattr(first, "lineno", 0)
    action.__doc__ = doc
    return action


def _make_empty(doc):
    def action(self, p):
        p[0] = []
    action.__doc__ = doc
    return action


def _linear_list_actions(namespace: dict) -> list[str]:
    """Install list-appending replacements of the stock tuple-concatenating actions into a
    class namespace (unless the class body defines its own). Returns the names replaced."""
    appends, ones, empties = _stock_list_actions()
    done = []
    for name, (doc, k) in appends.items():
        namespace.setdefault(name, _make_append(doc, k))
        done.append(name)
    for name, doc in ones.items():
        namespace.setdefault(name, _make_one(doc))
        done.append(name)
    for name, doc in empties.items():
        namespace.setdefault(name, _make_empty(doc))
        done.append(name)
    return done


def _with_pos(fn):
    """Wrap a stock action so the node it builds remembers where it starts (``hz_pos``)."""
    def action(self, p):
        fn(self, p)
        node = p[0]
        if node is not None and not isinstance(node, (str, tuple, list)):
            node.hz_pos = p.lexpos(1)
    action.__doc__ = fn.__doc__
    return action


_POS_RULES = (
    "p_parameterdecl", "p_parameterdecl_signed", "p_parameterdecl_width",
    "p_parameterdecl_signed_width", "p_parameterdecl_integer", "p_localparamdecl",
    "p_localparamdecl_signed", "p_localparamdecl_width", "p_localparamdecl_signed_width",
    "p_localparamdecl_integer", "p_always", "p_always_ff", "p_always_comb", "p_always_latch",
    "p_initial", "p_generate_for", "p_generate_if", "p_generate_if_woelse",
    "p_declassign", "p_declassign_width", "p_decl", "p_decl_width", "p_genvardecl",
    "p_param", "p_param_signed", "p_param_width", "p_param_signed_width", "p_param_integer",
    "p_param_end", "p_param_end_signed", "p_param_end_width", "p_param_end_signed_width",
    "p_param_end_integer", "p_generate", "p_ioport", "p_ioport_width", "p_ioport_dimensions",
    "p_ioport_head", "p_ioport_head_width", "p_ioport_head_dimensions",
)


def _ours(cls, name: str) -> bool:
    """True when one of hazlint's grammar classes (not pyverilog's) defines ``name``."""
    for klass in cls.__mro__:
        if klass is VerilogParser:
            return False
        if name in klass.__dict__:
            return True
    return False


def install(cls) -> list[str]:
    """Patch the grammar class ``cls``: generated list-appending actions (hand-written ones in
    our classes take precedence) and position-recording wrappers. Returns the names of the
    list actions replaced."""
    generated: dict = {}
    replaced = _linear_list_actions(generated)
    for name, fn in generated.items():
        if not _ours(cls, name):
            setattr(cls, name, fn)
    for name in _POS_RULES:
        if not _ours(cls, name):
            fn = getattr(VerilogParser, name)
            if name in INTEGER_PARAM_RULES:
                fn = integer_typed(fn)
            setattr(cls, name, _with_pos(fn))
    return replaced
