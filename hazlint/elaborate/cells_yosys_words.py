"""yosys cells in a netlist: the gate-level set, and the word-level cells bit-blasted into gates.

A netlist that yosys writes before (or without) technology mapping keeps word-level cells with
parameters: ``\\$add #(.A_SIGNED(0), .A_WIDTH(4), ...) u (.A(a), .B(b), .Y(y));``. Each one is
turned here into the same gates the elaborator builds for the equivalent Verilog expression
(ripple-carry adders, comparators by subtraction, mux trees), following the semantics of
yosys' own simulation models (Debian: ``/usr/share/yosys/simlib.v``): operands are extended to
the result width, with sign extension only when every operand of the cell is signed (the
Verilog rule), then the result is truncated to ``Y_WIDTH``. Registers and latches
(``$dff``, ``$adffe``, ``$sdff``, ``$dffsr``, ``$dlatch``, ``$sr``, ...) become one
gate-level cell of :mod:`hazlint.elaborate.cells_yosys` per bit, named after the net their output drives.

Cells hazlint cannot model (division, memories, formal cells, ...) become black boxes with a
warning that names the cell type; formal properties and timing checks, which drive nothing, are
skipped with a note. Bits that yosys' models leave undefined (``x``: an out-of-range
``$shiftx``, a ``$pmux`` with two selects active) are given a definite value; the note for
constants says the same for ``x`` written in the source.
"""
from __future__ import annotations

import re
from typing import Callable

from . import cells_yosys
from .. import limits as _limits
from ..diagnostics import Severity
from ..errors import ElaborationError
from ..findings.words import number
from .. import ir
from .common import named_connections
from .common import where as _where

# cells that drive nothing a glitch analysis needs
IGNORED = {
    "$assert": "formal property", "$assume": "formal property", "$live": "formal property",
    "$fair": "formal property", "$cover": "formal property",
    "$specify2": "timing path", "$specify3": "timing path", "$specrule": "timing check",
}
# cells with outputs that hazlint does not model, and why
UNMODELLED = {
    "$div": "division", "$mod": "modulo", "$divfloor": "division", "$modfloor": "modulo",
    "$pow": "power", "$macc": "multiply-accumulate",
    "$mem": "memory", "$mem_v2": "memory", "$memrd": "memory read port",
    "$memrd_v2": "memory read port", "$memwr": "memory write port",
    "$memwr_v2": "memory write port", "$meminit": "memory initialisation",
    "$meminit_v2": "memory initialisation", "$fsm": "extracted state machine",
    "$ff": "flip-flop on the formal global clock", "$anyconst": "formal free value",
    "$anyseq": "formal free value", "$allconst": "formal free value",
    "$allseq": "formal free value", "$anyinit": "formal free value",
    "$initstate": "formal initial-state flag",
    **cells_yosys.UNMODELLED,
}
_AUTO_NAME = re.compile(r"_\d+_$|\$")
_INDEX = re.compile(r"(.*?)((?:\[\d+\])*)$")


def elaborate_cell(el, scope, inst: ir.Instance) -> bool:
    """Elaborate instance ``inst`` of a yosys cell; False when ``inst.cell`` is not one."""
    cell = inst.cell
    gate = cells_yosys.lookup(cell)
    if gate is not None:
        el.elab_cell(scope, inst, gate, register_name(el, scope, inst, gate))
        return True
    if cell in IGNORED:
        el.note(f"yosys {IGNORED[cell]} cell '{cell}' drives no logic and is skipped",
                inst.loc, f"{scope.instance}.{inst.name}", key=("yosys-ignored", cell))
        return True
    if cell in UNMODELLED:
        _unmodelled(el, scope, inst, UNMODELLED[cell])
        return True
    handler = _HANDLERS.get(cell)
    if handler is None:
        return False
    handler(_Word(el, scope, inst))
    return True


def _unmodelled(el, scope, inst, what: str) -> None:
    path = f"{scope.instance}.{inst.name}"
    el.note(f"yosys cell '{inst.cell}' ({what}) is not modelled: instance '{inst.name}' is a "
            f"black box and its outputs are free inputs for analysis", inst.loc, path,
            severity=Severity.WARNING)
    el.blackbox(scope, inst, f"yosys cell '{inst.cell}' ({what}) is not modelled", note=False)


def register_name(el, scope, inst: ir.Instance, cell) -> str | None:
    """The name of the register of a cell instance (yosys' or a library's) whose instance name
    yosys made up (``_123_``, ``$auto$...``, or its ``write_verilog`` name ``q_reg[3]`` for the
    register driving ``q[3]``): the net its Q drives, as the always-block spelling of the same
    netlist names it. None (the instance name) otherwise; the instance path stays."""
    seq = cell.sequential
    q_pins = [] if seq is None else [p for p, w in seq.state_outputs.items() if w == "Q"] + [
        p for p, f in cell.functions.items() if f in (("var", "IQ"), ("not", ("var", "IQN")))]
    if not q_pins or not (_AUTO_NAME.match(inst.name) or "_reg" in inst.name):
        return None
    order = getattr(cell, "pin_order", None) or (cell.outputs + cell.inputs)
    conns = dict((p if p is not None else order[i], e)
                 for i, (p, e) in enumerate(inst.connections) if p is not None or i < len(order))
    e = conns.get(q_pins[0])
    bits = el.conn_bits(scope, e, inst.loc) if e is not None else None
    if not bits or len(bits) != 1 or bits[0] in el.const_bits(2, 2):
        return None
    q = _local(scope, bits[0])
    base, index = _INDEX.match(q).groups()
    if not (_AUTO_NAME.match(inst.name) or inst.name == f"{base}_reg{index}"):
        return None
    return q


def _local(scope, bit: str) -> str:
    return bit[len(scope.prefix):] if bit.startswith(scope.prefix) else bit


# ------------------------------------------------------------------------------------------------
class _Word:
    """One word-level cell instance: its parameters, its pins as bit lists, gate builders."""

    def __init__(self, el, scope, inst: ir.Instance):
        self.el, self.scope, self.inst, self.loc = el, scope, inst, inst.loc
        self.C0, self.C1 = el.const_bits(2, 2)
        self.params: dict[str, int] = {}
        for name, e in inst.params:
            if name is None:
                raise ElaborationError(f"yosys cell '{inst.cell}' needs named parameters "
                                       f"(#(.WIDTH(8)) ...)", *_where(inst.loc),
                                       construct=inst.name)
            if isinstance(e, tuple) and e and e[0] == "num":
                self.params[name] = e[2] & ~e[3]        # x/z bits of a parameter taken as 0
            else:
                self.params[name] = el.const(e, scope, inst.loc)
        order = _PORTS.get(inst.cell, ())
        self.conns: dict[str, object] = {}
        for pname, e in named_connections(inst, order):
            if order and pname not in order:
                raise ElaborationError(f"yosys cell '{inst.cell}' has no pin '{pname}' (pins: "
                                       f"{', '.join(order)})", *_where(inst.loc),
                                       construct=f".{pname}")
            self.conns[pname] = e

    # parameters and pins -------------------------------------------------------------------
    def p(self, name: str, default: int | None = None) -> int:
        if name in self.params:
            v = self.params[name]
            if name.endswith("WIDTH") or name == "DEPTH":
                # a width builds that many bits (and a LUT or decoder 2**width of them)
                if v < 0:
                    raise ElaborationError(f"yosys cell '{self.inst.cell}' parameter {name} is "
                                           f"negative ({number(v)})", *_where(self.loc),
                                           construct=self.inst.name)
                _limits.check("vector_width", v, f"parameter {name} of '{self.inst.name}'",
                              _where(self.loc))
            return v
        if default is None:
            raise ElaborationError(f"yosys cell '{self.inst.cell}' instance '{self.inst.name}' "
                                   f"needs parameter {name}", *_where(self.loc),
                                   construct=self.inst.name)
        return default

    def pin(self, name: str, width: int) -> list[str]:
        """The bits connected to input pin ``name``, zero-extended or cut to ``width``."""
        e = self.conns.get(name)
        bits = self.el.conn_bits(self.scope, e, self.loc) if e is not None else []
        return self.ext(bits or [], width, False)

    def out_bits(self, name: str) -> list[str]:
        """The net bits output pin ``name`` drives."""
        e = self.conns.get(name)
        if e is None:
            return []
        if isinstance(e, tuple) and e and e[0] == "_bits":
            return list(e[1])
        return self.el.lvalue_bits(e, self.scope, self.loc)

    def out(self, name: str, bits: list[str]) -> None:
        for d, s in zip(self.out_bits(name), bits):
            if d not in (self.C0, self.C1):
                self.el.connect(self.scope, d, s, self.loc)

    def ext(self, bits: list[str], width: int, signed: bool) -> list[str]:
        if len(bits) >= width:
            return list(bits[:width])
        fill = bits[-1] if signed and bits else self.C0
        return list(bits) + [fill] * (width - len(bits))

    def operand(self, name: str, width: int, signed: bool) -> list[str]:
        """Pin ``name`` (``<name>_WIDTH`` bits) extended to ``width`` as Verilog does."""
        return self.ext(self.pin(name, self.p(f"{name}_WIDTH")), width, signed)

    @property
    def both_signed(self) -> bool:
        return bool(self.p("A_SIGNED", 0) and self.p("B_SIGNED", 0))

    # gates ---------------------------------------------------------------------------------
    def g(self, op: str, *ins: str) -> str:
        return self.el.gate(self.scope, op, list(ins), self.loc)

    def reduce(self, op: str, bits: list[str]) -> str:
        if not bits:
            return self.C1 if op == "and" else self.C0
        return self.el.reduce(self.scope, op, bits, self.loc)

    def mux(self, s: str, when1: list[str], when0: list[str]) -> list[str]:
        return self.el.mux_bits(self.scope, s, when1, when0, self.loc)

    def shift(self, a: list[str], amount: list[str], left: bool, fill: str) -> list[str]:
        """Barrel shifter, one mux stage per amount bit; vacated bits take ``fill``."""
        cur = list(a)
        n = len(cur)
        for k, s in enumerate(amount):
            d = 1 << k if k < 64 else n
            if d >= n:
                shifted = [fill] * n
            elif left:
                shifted = [self.C0] * d + cur[:n - d]
            else:
                shifted = cur[d:] + [fill] * d
            if s == self.C0:
                continue
            cur = self.mux(s, shifted, cur)
        return cur

    def negate(self, bits: list[str]) -> list[str]:
        return self.el.adder(self.scope, [self.C0] * len(bits), bits, self.loc,
                             subtract=True)[0]


# ------------------------------------------------------------------------------------------------
# combinational word cells (simlib.v)

def _unary(w: _Word) -> None:
    yw = w.p("Y_WIDTH")
    a = w.operand("A", yw, bool(w.p("A_SIGNED", 0)))
    cell = w.inst.cell
    if cell == "$not":
        w.out("Y", [w.g("not", x) for x in a])
    elif cell == "$pos":
        w.out("Y", a)
    else:                                    # $neg
        w.out("Y", w.negate(a))


_BITWISE = {"$and": "and", "$or": "or", "$xor": "xor", "$xnor": "xnor"}


def _bitwise(w: _Word) -> None:
    yw = w.p("Y_WIDTH")
    s = w.both_signed
    a, b = w.operand("A", yw, s), w.operand("B", yw, s)
    op = _BITWISE[w.inst.cell]
    w.out("Y", [w.g(op, x, y) for x, y in zip(a, b)])


def _one_bit(w: _Word, bit: str) -> None:
    w.out("Y", w.ext([bit], w.p("Y_WIDTH", 1), False))


def _reduction(w: _Word) -> None:
    a = w.pin("A", w.p("A_WIDTH"))
    cell = w.inst.cell
    if cell == "$reduce_and":
        r = w.reduce("and", a)
    elif cell in ("$reduce_or", "$reduce_bool"):
        r = w.reduce("or", a)
    else:
        r = w.reduce("xor", a)
        if cell == "$reduce_xnor":
            r = w.g("not", r)
    _one_bit(w, r)


def _logic(w: _Word) -> None:
    cell = w.inst.cell
    a = w.reduce("or", w.pin("A", w.p("A_WIDTH")))
    if cell == "$logic_not":
        _one_bit(w, w.g("not", a))
        return
    b = w.reduce("or", w.pin("B", w.p("B_WIDTH")))
    _one_bit(w, w.g("and" if cell == "$logic_and" else "or", a, b))


_COMPARE = {"$lt": "<", "$le": "<=", "$gt": ">", "$ge": ">=", "$eq": "==", "$ne": "!=",
            "$eqx": "==", "$nex": "!="}


def _compare(w: _Word) -> None:
    s = w.both_signed
    width = max(w.p("A_WIDTH"), w.p("B_WIDTH"))
    a, b = w.operand("A", width, s), w.operand("B", width, s)
    op = _COMPARE[w.inst.cell]
    if s and op not in ("==", "!=") and width:
        # two's complement order is unsigned order with the sign bits inverted
        a[-1], b[-1] = w.g("not", a[-1]), w.g("not", b[-1])
    _one_bit(w, w.el.compare(w.scope, op, a, b, w.loc))


def _arith(w: _Word) -> None:
    yw = w.p("Y_WIDTH")
    s = w.both_signed
    a, b = w.operand("A", yw, s), w.operand("B", yw, s)
    if w.inst.cell == "$mul":
        w.out("Y", w.el.multiplier(w.scope, a, b, yw, w.loc))
    else:
        w.out("Y", w.el.adder(w.scope, a, b, w.loc, subtract=w.inst.cell == "$sub")[0])


def _shift(w: _Word) -> None:
    cell = w.inst.cell
    yw = w.p("Y_WIDTH")
    a_signed = bool(w.p("A_SIGNED", 0)) and cell != "$shiftx"
    width = max(w.p("A_WIDTH"), yw)
    a = w.operand("A", width, a_signed)
    b = w.pin("B", w.p("B_WIDTH"))
    if cell in ("$shl", "$sshl"):
        y = w.shift(a, b, True, w.C0)
    elif cell in ("$shr", "$sshr"):
        fill = a[-1] if cell == "$sshr" and a_signed and a else w.C0
        y = w.shift(a, b, False, fill)
    else:
        # $shift / $shiftx: right by B, or left by -B when B is signed and negative
        right = w.shift(a, b, False, w.C0)
        if w.p("B_SIGNED", 0) and b:
            left = w.shift(a, w.negate(b), True, w.C0)
            y = w.mux(b[-1], left, right)
        else:
            y = right
    w.out("Y", w.ext(y, yw, False))


def _mux(w: _Word) -> None:
    width = w.p("WIDTH")
    s = w.pin("S", 1)[0]
    w.out("Y", w.mux(s, w.pin("B", width), w.pin("A", width)))


def _pmux(w: _Word) -> None:
    # as yosys' own techmap.v maps it: |S ? OR_i (B_i & S_i) : A
    width, n = w.p("WIDTH"), w.p("S_WIDTH")
    a, b, s = w.pin("A", width), w.pin("B", width * n), w.pin("S", n)
    picked = [w.reduce("or", [w.g("and", b[i * width + j], s[i]) for i in range(n)])
              for j in range(width)]
    w.out("Y", w.mux(w.reduce("or", s), picked, a))


def _bmux(w: _Word) -> None:
    width, n = w.p("WIDTH"), w.p("S_WIDTH")
    a, s = w.pin("A", width << n), w.pin("S", n)
    w.out("Y", [w.el.select_mux(w.scope, a[j::width], s, w.loc) for j in range(width)])


def _decoded(w: _Word, n: int) -> int:
    """2**n (the outputs of a decoder, the entries of a LUT), within the width limit."""
    _limits.check("vector_width", 1 << min(n, 64), f"2**{n} entries of '{w.inst.name}'",
                  _where(w.loc))
    return 1 << n


def _demux(w: _Word) -> None:
    width, n = w.p("WIDTH"), w.p("S_WIDTH")
    a, s = w.pin("A", width), w.pin("S", n)
    ns = [w.g("not", x) for x in s]
    y = []
    for i in range(_decoded(w, n)):
        hit = w.reduce("and", [s[k] if (i >> k) & 1 else ns[k] for k in range(n)])
        y += [w.g("and", x, hit) for x in a]
    w.out("Y", y)


def _lut(w: _Word) -> None:
    width, table = w.p("WIDTH"), w.p("LUT")
    consts = [w.C1 if (table >> i) & 1 else w.C0 for i in range(_decoded(w, width))]
    w.out("Y", [w.el.select_mux(w.scope, consts, w.pin("A", width), w.loc)])


def _sop(w: _Word) -> None:
    width, depth, table = w.p("WIDTH"), w.p("DEPTH"), w.p("TABLE")
    a = w.pin("A", width)
    terms = []
    for i in range(depth):
        lits = []
        for j in range(width):
            if (table >> (2 * width * i + 2 * j)) & 1:       # the term needs A[j] == 0
                lits.append(w.g("not", a[j]))
            if (table >> (2 * width * i + 2 * j + 1)) & 1:   # the term needs A[j] == 1
                lits.append(a[j])
        terms.append(w.reduce("and", lits))
    w.out("Y", [w.reduce("or", terms)])


def _slice(w: _Word) -> None:
    a = w.pin("A", w.p("A_WIDTH"))
    off, yw = w.p("OFFSET"), w.p("Y_WIDTH")
    w.out("Y", w.ext(a[off:], yw, False))


def _concat(w: _Word) -> None:
    w.out("Y", w.pin("A", w.p("A_WIDTH")) + w.pin("B", w.p("B_WIDTH")))


def _equiv(w: _Word) -> None:
    w.out("Y", w.pin("A", 1))


def _tribuf(w: _Word) -> None:
    width = w.p("WIDTH")
    a, en = w.pin("A", width), w.pin("EN", 1)[0]
    _per_bit(w, "$_TBUF_", {"A": a, "E": [en] * width}, "Y", width)


def _fa(w: _Word) -> None:
    width = w.p("WIDTH")
    a, b, c = w.pin("A", width), w.pin("B", width), w.pin("C", width)
    t1 = [w.g("xor", x, y) for x, y in zip(a, b)]
    w.out("Y", [w.g("xor", t, z) for t, z in zip(t1, c)])
    w.out("X", [w.g("or", w.g("and", x, y), w.g("and", z, t))
                for x, y, z, t in zip(a, b, c, t1)])


def _lcu(w: _Word) -> None:
    width = w.p("WIDTH")
    p, g, carry = w.pin("P", width), w.pin("G", width), w.pin("CI", 1)[0]
    co = []
    for pi, gi in zip(p, g):
        carry = w.g("or", gi, w.g("and", pi, carry))
        co.append(carry)
    w.out("CO", co)


def _alu(w: _Word) -> None:
    yw = w.p("Y_WIDTH")
    s = w.both_signed
    a, b = w.operand("A", yw, s), w.operand("B", yw, s)
    bi, carry = w.pin("BI", 1)[0], w.pin("CI", 1)[0]
    bb = (b if bi == w.C0 else [w.g("not", x) for x in b] if bi == w.C1
          else [w.g("xor", x, bi) for x in b])
    x_bits, y_bits, co = [], [], []
    for ai, bi_ in zip(a, bb):
        p = w.g("xor", ai, bi_)
        x_bits.append(p)
        y_bits.append(w.g("xor", p, carry))
        carry = w.g("or", w.g("and", ai, bi_), w.g("and", p, carry))
        co.append(carry)
    w.out("X", x_bits)
    w.out("Y", y_bits)
    w.out("CO", co)


# ------------------------------------------------------------------------------------------------
# registers and latches: one gate-level cell per bit

def _register(w: _Word) -> None:
    """One gate-level flip-flop or latch per bit; its name letters in the family's order:
    clock edge (or latch enable level), reset level and value / load level / set and clear
    levels, then the flip-flop's enable level."""
    cell = w.inst.cell
    width = w.p("WIDTH")
    prefix, clocked = _REGISTERS[cell]
    pins: dict[str, list[str]] = {}
    letters: list[list[str]] = [[] for _ in range(width)]

    def control(pin: str, src: str, *polarities: str, wide: bool = False) -> None:
        bits = w.pin(src, width if wide else 1)
        pins[pin] = bits if wide else bits * width
        for x in letters:
            x.extend(_pol(w, p) for p in polarities)

    if clocked:
        control("C", "CLK", "CLK_POLARITY")
    else:
        if cell != "$sr":
            control("E", "EN", "EN_POLARITY")
    if cell in ("$adff", "$adffe", "$adlatch", "$sdff", "$sdffe", "$sdffce"):
        rst = "ARST" if cell in ("$adff", "$adffe", "$adlatch") else "SRST"
        control("R", rst, f"{rst}_POLARITY")
        value = w.p(f"{rst}_VALUE", 0)
        for i, x in enumerate(letters):
            x.append("1" if (value >> i) & 1 else "0")
    if cell in ("$aldff", "$aldffe"):
        control("L", "ALOAD", "ALOAD_POLARITY")
        control("AD", "AD", wide=True)
    if cell in ("$dffsr", "$dffsre", "$dlatchsr", "$sr"):
        control("S", "SET", "SET_POLARITY", wide=True)
        control("R", "CLR", "CLR_POLARITY", wide=True)
    if clocked and cell in ("$dffe", "$adffe", "$aldffe", "$dffsre", "$sdffe", "$sdffce"):
        control("E", "EN", "EN_POLARITY")
    if cell != "$sr":
        control("D", "D", wide=True)
    for i in range(width):
        _per_bit_one(w, f"{prefix}{''.join(letters[i])}_",
                     {p: [bits[i]] for p, bits in pins.items()}, "Q", i)


def _pol(w: _Word, name: str) -> str:
    return "P" if w.p(name, 1) else "N"


# cell -> (gate-level family prefix, clocked)
_REGISTERS = {
    "$dff": ("$_DFF_", True), "$dffe": ("$_DFFE_", True), "$adff": ("$_DFF_", True),
    "$adffe": ("$_DFFE_", True), "$sdff": ("$_SDFF_", True), "$sdffe": ("$_SDFFE_", True),
    "$sdffce": ("$_SDFFCE_", True), "$aldff": ("$_ALDFF_", True),
    "$aldffe": ("$_ALDFFE_", True), "$dffsr": ("$_DFFSR_", True),
    "$dffsre": ("$_DFFSRE_", True), "$dlatch": ("$_DLATCH_", False),
    "$adlatch": ("$_DLATCH_", False), "$dlatchsr": ("$_DLATCHSR_", False),
    "$sr": ("$_SR_", False),
}


def _per_bit(w: _Word, cell: str, pins: dict[str, list[str]], out: str, width: int) -> None:
    for i in range(width):
        _per_bit_one(w, cell, {p: [bits[i]] for p, bits in pins.items()}, out, i)


def _per_bit_one(w: _Word, cell: str, pins: dict[str, list[str]], out: str, i: int) -> None:
    """Instance ``name[i]`` of gate-level cell ``cell`` for bit ``i``; a register among them
    is named after the net it drives."""
    outs = w.out_bits(out)
    dst = outs[i] if i < len(outs) else None
    conns = [(p, ("_bits", bits)) for p, bits in pins.items()]
    reg_name = None
    if dst is not None and dst not in (w.C0, w.C1):
        conns.append((out, ("_bits", [dst])))
        reg_name = _local(w.scope, dst)
    one = ir.Instance(cell=cell, name=f"{w.inst.name}[{i}]", connections=conns, loc=w.loc,
                      attrs=w.inst.attrs)
    gate = cells_yosys.lookup(cell)
    w.el.elab_cell(w.scope, one, gate, reg_name if gate.sequential else None)


# ------------------------------------------------------------------------------------------------
_HANDLERS: dict[str, Callable[[_Word], None]] = {
    "$not": _unary, "$pos": _unary, "$neg": _unary,
    **{c: _bitwise for c in _BITWISE},
    **{c: _reduction for c in ("$reduce_and", "$reduce_or", "$reduce_xor", "$reduce_xnor",
                               "$reduce_bool")},
    "$logic_not": _logic, "$logic_and": _logic, "$logic_or": _logic,
    **{c: _compare for c in _COMPARE},
    "$add": _arith, "$sub": _arith, "$mul": _arith,
    **{c: _shift for c in ("$shl", "$shr", "$sshl", "$sshr", "$shift", "$shiftx")},
    "$mux": _mux, "$pmux": _pmux, "$bmux": _bmux, "$demux": _demux,
    "$lut": _lut, "$sop": _sop, "$slice": _slice, "$concat": _concat, "$equiv": _equiv,
    "$tribuf": _tribuf, "$fa": _fa, "$lcu": _lcu, "$alu": _alu,
    **{c: _register for c in _REGISTERS},
}

# port order of each cell as its simlib.v module header lists it (for positional connections)
_PORTS: dict[str, tuple[str, ...]] = {
    **{c: ("A", "Y") for c in ("$not", "$pos", "$neg", "$reduce_and", "$reduce_or",
                               "$reduce_xor", "$reduce_xnor", "$reduce_bool", "$logic_not",
                               "$slice", "$lut", "$sop")},
    **{c: ("A", "B", "Y") for c in (*_BITWISE, *_COMPARE, "$add", "$sub", "$mul", "$shl",
                                    "$shr", "$sshl", "$sshr", "$shift", "$shiftx",
                                    "$logic_and", "$logic_or", "$concat", "$equiv")},
    "$mux": ("A", "B", "S", "Y"), "$pmux": ("A", "B", "S", "Y"), "$bmux": ("A", "S", "Y"),
    "$demux": ("A", "S", "Y"), "$tribuf": ("A", "EN", "Y"), "$fa": ("A", "B", "C", "X", "Y"),
    "$lcu": ("P", "G", "CI", "CO"), "$alu": ("A", "B", "CI", "BI", "X", "Y", "CO"),
    "$sr": ("SET", "CLR", "Q"), "$dff": ("CLK", "D", "Q"), "$dffe": ("CLK", "EN", "D", "Q"),
    "$dffsr": ("CLK", "SET", "CLR", "D", "Q"), "$dffsre": ("CLK", "SET", "CLR", "EN", "D", "Q"),
    "$adff": ("CLK", "ARST", "D", "Q"), "$aldff": ("CLK", "ALOAD", "AD", "D", "Q"),
    "$sdff": ("CLK", "SRST", "D", "Q"), "$adffe": ("CLK", "ARST", "EN", "D", "Q"),
    "$aldffe": ("CLK", "ALOAD", "AD", "EN", "D", "Q"), "$sdffe": ("CLK", "SRST", "EN", "D", "Q"),
    "$sdffce": ("CLK", "SRST", "EN", "D", "Q"), "$dlatch": ("EN", "D", "Q"),
    "$adlatch": ("EN", "ARST", "D", "Q"), "$dlatchsr": ("EN", "SET", "CLR", "D", "Q"),
}


REGISTER_CELLS = frozenset(_REGISTERS)


def port_order(cell: str) -> tuple[str, ...]:
    """The pins of word-level cell ``cell`` in positional order."""
    return _PORTS[cell]


def word_cells() -> list[str]:
    """Every word-level cell modelled here."""
    return sorted(_HANDLERS)
