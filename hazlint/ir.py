"""Netlist IR: the seam between the Verilog reader and the flattener.

The reader (preprocess -> pyverilog parse -> AST walk) produces one :class:`SourceFile` per input
file; the flattener reads nothing else. Every item carries a :class:`Loc` in the *original* file
(line map applied through includes and macros). All values are plain data so a source file's IR
can be cached as JSON (:func:`to_json` / :func:`from_json`).

Expressions are tuples (JSON lists once cached):

=================================  ======================================================
``("id", name)``                   identifier (escaped identifiers without the backslash)
``("num", width, value, xz, signed)``  constant; ``width`` None when unsized; ``xz`` is a
                                   mask of x/z bits (value bit 0 = x, 1 = z at those bits)
``("real", value)``                real constant
``("str", text)``                  string
``("bit", e, index)``              bit select
``("part", e, msb, lsb)``          part select
``("ipart", e, base, width, sign)``  indexed part select ``+:`` / ``-:`` (sign "+" or "-")
``("concat", [e, ...])``           concatenation
``("repl", count, [e, ...])``      replication ``{count{...}}``
``("unop", op, e)``                op in ``~ ! - + & ~& | ~| ^ ~^``
``("binop", op, a, b)``            op in ``& | ^ ~^ && || + - * / % ** << >> <<< >>>
                                   == != === !== < <= > >=``
``("cond", c, a, b)``              ``c ? a : b``
``("call", name, [args])``         function or system-function call
=================================  ======================================================

Delays: ``Delay3 = list[MinTypMax]`` of length 1..3 (rise, fall, turn-off), each
``MinTypMax = (min_expr, typ_expr, max_expr)`` (all three the same expression for a plain value).
Values are in the module's ``timescale`` unit.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any, Optional, Union

Expr = tuple
MinTypMax = tuple  # (min, typ, max) expressions
Delay3 = list      # [MinTypMax, ...] rise, fall, turn-off


@dataclass
class Loc:
    path: str
    line: int
    col: int = 1


@dataclass
class Port:
    name: str
    direction: str                      # "input" | "output" | "inout"
    width: Optional[tuple] = None       # (msb_expr, lsb_expr) or None for a scalar
    net_type: str = "wire"              # "wire" | "reg" | "tri" | ...
    signed: bool = False
    loc: Optional[Loc] = None
    attrs: dict = field(default_factory=dict)


@dataclass
class Net:
    name: str
    kind: str = "wire"                  # wire reg tri wand wor trireg uwire supply0 supply1 integer
    width: Optional[tuple] = None
    signed: bool = False
    # unpacked dimensions, left to right: [(msb, lsb), ...] (``reg [7:0] ram [0:15]`` has one,
    # ``wire [3:0] w [0:3][0:3]`` two); None for a plain net or variable
    array: Optional[list] = None
    loc: Optional[Loc] = None
    attrs: dict = field(default_factory=dict)
    delay: Optional[list] = None        # net delay: [(min, typ, max) expr, ...] rise, fall


@dataclass
class Param:
    name: str
    value: Expr
    local: bool = False
    width: Optional[tuple] = None       # declared range (msb, lsb); None: the value's own type
    loc: Optional[Loc] = None
    signed: bool = False                # declared ``signed`` (with or without a range)


@dataclass
class Assign:
    lhs: Expr
    rhs: Expr
    delay: Optional[Delay3] = None
    loc: Optional[Loc] = None
    attrs: dict = field(default_factory=dict)


@dataclass
class Instance:
    """A module, cell, UDP or gate-primitive instance.

    ``connections`` lists ``(port_name_or_None, expr_or_None)`` in source order: named
    connections have the port name, positional ones None; an empty ``.p()`` has expr None.
    ``params`` likewise for ``#(...)`` parameter overrides of modules; ``delay`` holds a gate
    primitive's or UDP's ``#`` delay instead.

    How the reader fills them (it cannot know yet whether a cell name is a UDP or a module):
    a named ``#(.W(4))`` goes to ``params`` only; a bare ``#5`` / ``#2.5`` / ``#d`` or a list
    with ``min:typ:max`` goes to ``delay`` only; a positional plain list ``#(a, b)`` goes to
    both (``params`` as ``(None, expr)``, ``delay`` as ``(e, e, e)`` triples), except on the
    built-in gate primitives (``and`` ... ``pulldown``), where it is a delay only. ``name`` is
    ``""`` for an unnamed gate instance. Attribute values in ``attrs`` (here and elsewhere) are
    None for a bare flag, an int for a plain number, else the text (string quotes removed).
    """

    cell: str
    name: str
    connections: list = field(default_factory=list)
    params: list = field(default_factory=list)
    delay: Optional[Delay3] = None
    array: Optional[tuple] = None       # (msb, lsb) of an instance array
    loc: Optional[Loc] = None
    attrs: dict = field(default_factory=dict)


# Statements inside always blocks, functions and tasks (tuples, JSON lists when cached):
#   ("block", [stmt, ...], name_or_None, [Net | Param, ...])   begin [: name] decls stmts end
#   ("if", cond_expr, then_stmt_or_None, else_stmt_or_None)
#   ("assign", "=" | "<=", lhs_expr, rhs_expr, line)
#   ("case", "case"|"casex"|"casez", expr, [([label_expr, ...] or None for default, stmt), ...])
#   ("for", init_stmt_or_None, cond_expr_or_None, step_stmt_or_None, body_stmt, line)
#                                  init and step are ("assign", "=", ...) statements
#   ("while", cond_expr, body_stmt, line)
#   ("repeat", count_expr, body_stmt, line)
#   ("call", name, [arg_expr, ...], line)   task enable; system tasks keep their "$" ($display)
#   ("other", "description of the construct", line)
# A block's name and declarations (items 2 and 3) may be left out: ("block", [stmt, ...]).
Stmt = tuple


@dataclass
class Always:
    # sensitivity: list of (edge, expr) with edge "posedge" | "negedge" | "level";
    # ``star`` true for @* / @(*); ``kind`` is "always", "always_ff", "always_comb", "always_latch"
    sens: list = field(default_factory=list)
    star: bool = False
    body: Optional[Stmt] = None
    kind: str = "always"
    loc: Optional[Loc] = None
    attrs: dict = field(default_factory=dict)


@dataclass
class Initial:
    """An ``initial`` block, or the initial value of a variable declaration (``reg x = v;``,
    read as ``initial x = v;``); the constant assignments in ``body`` are power-up values."""

    loc: Optional[Loc] = None
    body: Optional[Stmt] = None


@dataclass
class GenFor:
    var: str
    init: Expr
    cond: Expr
    step: Expr                      # new value of ``var`` (rhs of the step assignment)
    name: Optional[str] = None      # block label, used in hierarchical names
    items: list = field(default_factory=list)
    loc: Optional[Loc] = None


@dataclass
class GenIf:
    cond: Expr
    then_items: list = field(default_factory=list)
    else_items: list = field(default_factory=list)
    name: Optional[str] = None
    else_name: Optional[str] = None
    loc: Optional[Loc] = None


@dataclass
class GenCase:
    expr: Expr
    cases: list = field(default_factory=list)   # [([label_expr...] or None, name, items)]
    loc: Optional[Loc] = None


@dataclass
class GenBlock:
    name: Optional[str] = None
    items: list = field(default_factory=list)
    loc: Optional[Loc] = None


@dataclass
class SpecifyPath:
    """A specify-block module path ``(src => dst) = delays`` or ``*>``."""

    sources: list
    destinations: list
    delay: Optional[list] = None        # up to 6/12 MinTypMax values, as written
    full: bool = False                  # *> (full) or => (parallel)
    edge: Optional[str] = None          # posedge / negedge on the source
    polarity: Optional[str] = None      # "+" / "-" / None
    condition: Optional[Expr] = None    # if (cond) path
    loc: Optional[Loc] = None


@dataclass
class Function:
    """A function declaration (IEEE 1364-2005 10.4), a module or generate item.

    ``ports`` are its inputs in declaration order (:class:`Port`: ``net_type`` "reg",
    "integer" or "real"; an ``integer`` has ``width`` (31, 0) and ``signed`` set); ``decls``
    its local variables (:class:`Net`) and parameters (:class:`Param`); ``body`` one statement.
    The return value is the variable named after the function: ``width`` None is one bit;
    ``kind`` "reg" | "integer" (``width`` (31, 0), signed) | "real"."""

    name: str
    ports: list = field(default_factory=list)
    decls: list = field(default_factory=list)
    body: Optional[Stmt] = None
    width: Optional[tuple] = None
    signed: bool = False
    kind: str = "reg"
    automatic: bool = False
    loc: Optional[Loc] = None


@dataclass
class Task:
    """A task declaration (IEEE 1364-2005 10.2): ``ports`` with direction input, output or
    inout, otherwise as :class:`Function`."""

    name: str
    ports: list = field(default_factory=list)
    decls: list = field(default_factory=list)
    body: Optional[Stmt] = None
    automatic: bool = False
    loc: Optional[Loc] = None


@dataclass
class Unsupported:
    """A construct the reader keeps only as a note (``defparam``, ``real`` variables, ...):
    a module holding one is not modelled (its instances are black boxes, reported)."""

    what: str
    loc: Optional[Loc] = None


Item = Union[Net, Param, Assign, Instance, Always, Initial, GenFor, GenIf, GenCase, GenBlock,
             SpecifyPath, Function, Task, Unsupported]


@dataclass
class Module:
    name: str
    port_order: list = field(default_factory=list)   # port names as in the header
    ports: dict = field(default_factory=dict)         # name -> Port
    items: list = field(default_factory=list)         # source order
    params: list = field(default_factory=list)        # header #(parameter ...) declarations
    timescale: Optional[tuple] = None                 # (unit_seconds, precision_seconds)
    celldefine: bool = False
    default_nettype: str = "wire"
    loc: Optional[Loc] = None
    attrs: dict = field(default_factory=dict)


@dataclass
class Primitive:
    """A user-defined primitive. ``rows`` are the table entries split into fields, e.g.
    ``["0", "1", ":", "?", ":", "1"]`` becomes ``inputs=["0","1"], state="?", output="1"``."""

    name: str
    output: str
    inputs: list = field(default_factory=list)
    sequential: bool = False
    initial: Optional[str] = None            # "0" | "1" | "x"
    rows: list = field(default_factory=list)  # [{"inputs": [...], "state": str|None, "output": str, "line": n}]
    timescale: Optional[tuple] = None
    loc: Optional[Loc] = None


@dataclass
class SourceFile:
    path: str
    modules: list = field(default_factory=list)
    primitives: list = field(default_factory=list)
    notes: list = field(default_factory=list)          # [(Loc, message)]
    includes: list = field(default_factory=list)       # files pulled in through `include
    digest: str = ""                                   # content hash (cache key material)
    # set when the file could not be read (``read_sources(tolerant=True)``; it then has no
    # modules): {"message", "path" (the file, or the included file at fault), "line",
    # "column", "construct", "modules": [module and primitive names a plain text scan of the
    # file finds]}; the elaborator decides whether the design needs the file
    error: Optional[dict] = None


# ---------------------------------------------------------------------------------------------
# JSON round trip (no code execution on load: only these classes can be built)

_CLASSES = {c.__name__: c for c in (Loc, Port, Net, Param, Assign, Instance, Always, Initial,
                                    GenFor, GenIf, GenCase, GenBlock, SpecifyPath, Function,
                                    Task, Unsupported, Module, Primitive, SourceFile)}


def to_json(obj: Any) -> Any:
    if dataclasses.is_dataclass(obj):
        d = {"_t": getattr(type(obj), "encode_as", type(obj)).__name__}
        for f in dataclasses.fields(obj):
            d[f.name] = to_json(getattr(obj, f.name))
        return d
    if isinstance(obj, (list, tuple)):
        return [to_json(x) for x in obj]
    if isinstance(obj, dict):
        return {"_d": [[to_json(k), to_json(v)] for k, v in obj.items()]}
    return obj


def from_json(data: Any) -> Any:
    """Inverse of :func:`to_json`. Lists come back as tuples (expressions are tuples) except for
    the list-typed dataclass fields, which come back as lists."""
    # hot path of a warm (cached) run: field lists are looked up once per class and scalars
    # are not recursed into
    if isinstance(data, dict):
        name = data.get("_t")
        if name is not None:
            cls = _CLASSES[name]
            kwargs = {}
            for fname, is_list in _field_info(cls):
                if fname in data:
                    v = data[fname]
                    if isinstance(v, (dict, list)):
                        v = from_json(v)
                        if is_list and isinstance(v, tuple):
                            v = list(v)
                    kwargs[fname] = v
            return cls(**kwargs)
        if "_d" in data:
            return {_hashable(from_json(k)): from_json(v) for k, v in data["_d"]}
        return {k: from_json(v) for k, v in data.items()}
    if isinstance(data, list):
        return tuple([from_json(x) if isinstance(x, (dict, list)) else x for x in data])
    return data


_FIELD_INFO: dict = {}


def _field_info(cls) -> tuple:
    info = _FIELD_INFO.get(cls)
    if info is None:
        info = _FIELD_INFO[cls] = tuple((f.name, _is_list_field(f))
                                        for f in dataclasses.fields(cls))
    return info


def _hashable(x):
    return tuple(_hashable(i) for i in x) if isinstance(x, (list, tuple)) else x


def _is_list_field(f) -> bool:
    return f.default_factory is list if f.default_factory is not dataclasses.MISSING else False


# ---------------------------------------------------------------------------------------------
# Compact JSON (the parse cache's format): positional, field names once per entry

COMPACT_FORMAT = 1
_CODEC = None


def _codec():
    global _CODEC
    if _CODEC is None:
        from .store.codec import Codec
        _CODEC = Codec(_CLASSES.values(), interned={Loc: ("path",)})
    return _CODEC


def to_compact(obj: Any) -> dict:
    """A positional JSON encoding of IR (see :class:`hazlint.store.codec.Codec`): each object is a
    list of its field values, field names are written once per entry in a class table, and
    location paths once in a string table. :func:`from_compact` gives back an equal object
    (lists stay lists, tuples tuples)."""
    doc = _codec().encode(obj)
    doc["ir"] = COMPACT_FORMAT
    return doc


def from_compact(doc: Any) -> Any:
    """Inverse of :func:`to_compact`; raises ``ValueError`` on an entry it cannot read."""
    if not isinstance(doc, dict) or doc.get("ir") != COMPACT_FORMAT:
        raise ValueError("not a compact IR document")
    return _codec().decode(doc)
