"""Verilog lexer: pyverilog's lexer with the tokens hazlint needs added.

Additions over :class:`pyverilog.vparser.lexer.VerilogLexer`:

* keywords ``primitive``/``endprimitive``, ``specify``/``endspecify``/``specparam``/``ifnone``,
  ``automatic``, ``repeat``, the net types ``wand wor tri0 tri1 triand trior trireg uwire``,
  drive strengths (``strong0`` ...);
* a UDP ``table ... endtable`` body is one ``TABLE`` token holding its raw text (the rows are
  split in :mod:`hazlint.frontends.verilog.build_ir`; table symbols do not lex as Verilog tokens);
* specify timing checks (``$setup(...);`` ...) are one ``TIMINGCHECK`` token, so the parser can
  skip them whatever their arguments (``&&&`` conditions, edge lists);
* module path operators ``=>`` and ``*>``; ``^~`` as XNOR (the stock lexer knows only ``~^``);
* attribute instances ``(* name = value, flag *)`` are taken out of the token stream and kept in
  :attr:`HzLexer.attrs_at`, keyed by the position of the token that follows them, so the IR
  builder can attach them to the construct that starts there;
* escaped identifiers come out without the backslash (``\\a[0] `` -> ``a[0]``);
* nesting of ``( [ {`` is limited (:data:`MAX_NESTING`) so pathological input gives a clear
  error instead of exhausting the recursion limit later on.

ply orders function rules by their line number, so *every* function rule is defined here (in
the intended order), shadowing the base class ones.
"""
from __future__ import annotations

import functools
import re

from ply.lex import TOKEN, LexToken, lex
from pyverilog.vparser.lexer import VerilogLexer

MAX_NESTING = 1000

_EXTRA_KEYWORDS = (
    "PRIMITIVE", "ENDPRIMITIVE", "SPECIFY", "ENDSPECIFY", "SPECPARAM", "IFNONE",
    "WAND", "WOR", "TRI0", "TRI1", "TRIAND", "TRIOR", "TRIREG", "UWIRE", "DEFPARAM",
    "AUTOMATIC", "REPEAT",
)
_STRENGTHS = ("strong0", "strong1", "pull0", "pull1", "weak0", "weak1", "highz0", "highz1")

_TIMING_CHECKS = ("setuphold", "setup", "hold", "recrem", "recovery", "removal", "skew",
                  "timeskew", "fullskew", "period", "width", "nochange")


class LexError(Exception):
    """Raised by the lexer; carries the preprocessed-text position (converted by the parser)."""

    def __init__(self, message, lineno, lexpos, construct):
        super().__init__(message)
        self.message = message
        self.lineno = lineno
        self.lexpos = lexpos
        self.construct = construct


class HzLexer(VerilogLexer):
    keywords = VerilogLexer.keywords + _EXTRA_KEYWORDS
    reserved = dict(VerilogLexer.reserved)
    for _kw in _EXTRA_KEYWORDS:
        reserved[_kw.lower()] = _kw
    for _kw in _STRENGTHS:
        reserved[_kw] = "STRENGTH"
    reserved["macromodule"] = "MODULE"
    del _kw

    tokens = tuple(VerilogLexer.tokens) + _EXTRA_KEYWORDS + (
        "STRENGTH", "TABLE", "TIMINGCHECK", "PATH_PARALLEL", "PATH_FULL")

    t_PATH_PARALLEL = r"=>"
    t_PATH_FULL = r"\*>"
    # IEEE 1364-2005 5.1: ``^~`` is the XNOR operator as ``~^`` is (binary and reduction);
    # the stock rule knows only ``~^`` and reads ``a ^~ b`` as ``a ^ (~b)``
    t_XNOR = r"~\^|\^~"

    # blanks as one regex match per run (ply's t_ignore steps one character per loop turn)
    t_ignore = ""
    t_ignore_BLANKS = r"[ \t\r\f\v]+"

    def __init__(self, error_func=None):
        super().__init__(error_func or self._raise)
        self.attrs_at: dict[int, list] = {}

    def build(self, **kwargs):
        self.lexer = lex(object=self, **kwargs)

    def input(self, data):
        self.attrs_at = {}
        self.lexer.input(data)
        self.lexer.lineno = 1

    def token(self):
        return self.lexer.token()

    def fast_tokens(self):
        """A token function for the LR driver over the text given to :meth:`input`.

        Blanks, newlines, identifiers, keywords and ``, ; ( )`` (the bulk of a netlist) are
        matched here with one small regular expression; at any other character the ply lexer
        takes over for one token (comments, numbers, operators, attributes, UDP tables, timing
        checks), so both paths produce the same tokens as the ply rules alone would.
        """
        return functools.partial(next, self._fast(), None)

    def _fast(self):
        lx = self.lexer
        data = lx.lexdata
        match = _FAST.match
        reserved = self.reserved
        n = len(data)
        pos = 0
        lineno = 1
        ply_token = lx.token
        Tok = LexToken
        while pos < n:
            m = match(data, pos)
            kind = m.lastgroup
            end = m.end()
            if kind == "id":
                v = m.group()
                ty = reserved.get(v, "ID")
                if v == "table":
                    kind = "other"
                else:
                    t = Tok()
                    t.type, t.value, t.lineno, t.lexpos = ty, v, lineno, pos
                    pos = end
                    yield t
                    continue
            elif kind == "ws":
                pos = end
                continue
            elif kind == "nl":
                lineno += end - pos
                pos = end
                continue
            elif kind == "punct":
                v = m.group()
                t = Tok()
                t.type, t.value, t.lineno, t.lexpos = _PUNCT[v], v, lineno, pos
                pos = end
                yield t
                continue
            elif kind == "esc":
                t = Tok()
                t.type, t.value, t.lineno, t.lexpos = "ID", m.group()[1:], lineno, pos
                pos = end
                yield t
                continue
            # anything else: one token (or skipped text) from the ply rules
            lx.lexpos = pos
            lx.lineno = lineno
            t = ply_token()
            pos = lx.lexpos
            lineno = lx.lineno
            if t is None:
                if pos >= n:
                    return
                continue
            yield t

    def check_nesting(self, data: str) -> None:
        """Refuse bracket nesting deeper than :data:`MAX_NESTING` (quick scan first; comments
        and strings are only taken out when the quick scan finds deep nesting)."""
        if _max_depth(data) <= MAX_NESTING:
            return
        clean = _COMMENTS_STRINGS.sub(lambda m: re.sub(r"[^\n]", " ", m.group()), data)
        depth = 0
        for m in _BRACKETS.finditer(clean):
            if m.group() in "([{":
                depth += 1
                if depth > MAX_NESTING:
                    raise LexError("brackets nested deeper than %d levels" % MAX_NESTING,
                                   clean.count("\n", 0, m.start()) + 1, m.start(), m.group())
            else:
                depth -= 1

    @staticmethod
    def _raise(msg, line, column):  # pragma: no cover - replaced by _fail
        raise LexError(msg, line, 0, None)

    def _fail(self, msg, t, construct=None):
        raise LexError(msg, t.lexer.lineno, t.lexpos, construct if construct is not None
                       else t.value[:20])

    # --- function rules, in matching order ------------------------------------------------------

    def t_TABLE(self, t):
        r"table\b[\s\S]*?\bendtable\b"
        t.lineno = t.lexer.lineno
        t.lexer.lineno += t.value.count("\n")
        return t

    def t_ATTRIBUTE(self, t):
        r"\(\*(?!\s*\))[\s\S]*?\*\)"
        lineno = t.lexer.lineno
        t.lexer.lineno += t.value.count("\n")
        entries = [(lineno, _split_attribute(t.value[2:-2]))]
        # key: where the next token starts (after blanks and comments); an attribute right
        # before this one was keyed at our start, so carry it along
        end = _SKIP.match(t.lexer.lexdata, t.lexpos + len(t.value)).end()
        before = self.attrs_at.pop(t.lexpos, None)
        self.attrs_at[end] = (before or []) + entries
        return None

    def t_DIRECTIVE(self, t):
        r"\`[A-Za-z_][A-Za-z_0-9$]*"
        self._fail("compiler directive left after preprocessing", t)

    def t_LINECOMMENT(self, t):
        r"//[^\n]*"
        return None

    def t_COMMENTOUT(self, t):
        r"/\*(.|\n)*?\*/"
        t.lexer.lineno += t.value.count("\n")
        return None

    @TOKEN(r"\$(" + "|".join(_TIMING_CHECKS) + r")\b")
    def t_TIMINGCHECK(self, t):
        data = t.lexer.lexdata
        i = t.lexer.lexpos
        m = re.compile(r"\s*\(").match(data, i)
        if not m:
            self._fail("timing check without an argument list", t)
        depth = 0
        j = m.end() - 1
        pat = re.compile(r"[()]")
        while True:
            m2 = pat.search(data, j)
            if m2 is None:
                self._fail("unterminated timing check", t)
            depth += 1 if m2.group() == "(" else -1
            j = m2.end()
            if depth == 0:
                break
        m3 = re.compile(r"\s*;").match(data, j)
        if not m3:
            self._fail("timing check not ended by ';'", t)
        end = m3.end()
        t.lineno = t.lexer.lineno
        t.lexer.lineno += data.count("\n", t.lexpos, end)
        t.value = data[t.lexpos:end]
        t.lexer.lexpos = end
        return t

    @TOKEN(VerilogLexer.string_literal)
    def t_STRING_LITERAL(self, t):
        return t

    @TOKEN(VerilogLexer.float_number)
    def t_FLOATNUMBER(self, t):
        return t

    @TOKEN(VerilogLexer.signed_bin_number)
    def t_SIGNED_INTNUMBER_BIN(self, t):
        return t

    @TOKEN(VerilogLexer.bin_number)
    def t_INTNUMBER_BIN(self, t):
        return t

    @TOKEN(VerilogLexer.signed_octal_number)
    def t_SIGNED_INTNUMBER_OCT(self, t):
        return t

    @TOKEN(VerilogLexer.octal_number)
    def t_INTNUMBER_OCT(self, t):
        return t

    @TOKEN(VerilogLexer.signed_hex_number)
    def t_SIGNED_INTNUMBER_HEX(self, t):
        return t

    @TOKEN(VerilogLexer.hex_number)
    def t_INTNUMBER_HEX(self, t):
        return t

    @TOKEN(VerilogLexer.signed_decimal_number)
    def t_SIGNED_INTNUMBER_DEC(self, t):
        return t

    @TOKEN(VerilogLexer.decimal_number)
    def t_INTNUMBER_DEC(self, t):
        return t

    @TOKEN(VerilogLexer.identifier)
    def t_ID(self, t):
        v = t.value
        if v[0] == "\\":
            t.value = v[1:]          # escaped identifier: never a keyword
            t.type = "ID"
        else:
            t.type = self.reserved.get(v, "ID")
        return t

    def t_NEWLINE(self, t):
        r"\n+"
        t.lexer.lineno += len(t.value)

    def t_error(self, t):
        self._fail("illegal character %r" % t.value[0], t, t.value[0])

    # ---------------------------------------------------------------------------------------------
    def column(self, lexpos: int) -> int:
        data = self.lexer.lexdata
        return lexpos - (data.rfind("\n", 0, lexpos) + 1) + 1


_FAST = re.compile(r"(?P<ws>[ \t\r\f\v]+)|(?P<nl>\n+)|(?P<id>[a-zA-Z_][a-zA-Z_0-9$]*)"
                   r"|(?P<punct>[,;)]|\((?!\*))|(?P<esc>\\\S+)|(?P<other>[\s\S])")
_PUNCT = {",": "COMMA", ";": "SEMICOLON", "(": "LPAREN", ")": "RPAREN"}
_SKIP = re.compile(r"(?:\s+|//[^\n]*|/\*[\s\S]*?\*/)*")
_BRACKETS = re.compile(r"[()\[\]{}]")
_COMMENTS_STRINGS = re.compile(r'//[^\n]*|/\*[\s\S]*?\*/|"(?:[^"\\\n]|\\.)*"')


def _max_depth(data: str) -> int:
    depth = best = 0
    for ch in _BRACKETS.findall(data):
        if ch in "([{":
            depth += 1
            if depth > best:
                best = depth
        else:
            depth -= 1
    return best


_ATTR_ITEM = re.compile(r"\s*([A-Za-z_][A-Za-z_0-9$]*)\s*(?:=\s*(.*?))?\s*$", re.S)


def _split_attribute(body: str) -> list:
    """``name = value, flag`` -> [(name, value_text or None)]; commas inside strings, parentheses
    and braces do not split."""
    parts, depth, cur, in_str = [], 0, [], False
    i = 0
    while i < len(body):
        c = body[i]
        if in_str:
            cur.append(c)
            if c == "\\" and i + 1 < len(body):
                cur.append(body[i + 1])
                i += 1
            elif c == '"':
                in_str = False
        elif c == '"':
            in_str = True
            cur.append(c)
        elif c in "({[":
            depth += 1
            cur.append(c)
        elif c in ")}]":
            depth -= 1
            cur.append(c)
        elif c == "," and depth == 0:
            parts.append("".join(cur))
            cur = []
        else:
            cur.append(c)
        i += 1
    parts.append("".join(cur))
    out = []
    for part in parts:
        if not part.strip():
            continue
        m = _ATTR_ITEM.match(part)
        if not m:
            out.append((None, part.strip()))
        else:
            out.append((m.group(1), m.group(2)))
    return out
