"""Verilog preprocessor with a line map back to the original files.

Handles ```define`` (with arguments, no defaults; ``\\`` line continuation), ```undef``,
```ifdef/`ifndef/`elsif/`else/`endif`` (nested), ```include "file"``, ```timescale``,
```celldefine/`endcelldefine``, ```default_nettype``, ```resetall``, ```line`` (honoured),
and macro uses ```NAME`` / ```NAME(args)`` with nested parentheses and commas. Standard
directives with no effect on structure (```unconnected_drive``, ```nounconnected_drive``,
```begin_keywords``, ```end_keywords``, ```pragma``) are skipped; any other directive that is
not a defined macro is an error naming it.

Line count is kept stable: directive lines become empty lines, a multi-line macro body is
expanded onto the single line of its use, and lines consumed by a use whose arguments span
lines become empty lines. Every output line maps to ``(original path, original line)`` through
includes (:class:`LineMap`).

Speed: a file without a backtick is passed through in one step; other lines without a backtick
or a comment opener are copied as they are, and only the rest is scanned with regular
expressions.

Counting only (:meth:`Preprocessor.check_limits`): the same walk over the directives, macro
uses and includes, with the same errors and the same limits (``macro_expansion``,
``include_fanout``), but no output text, line map or file digests are kept: what the slang
front end needs before slang preprocesses the file itself.
"""
from __future__ import annotations

import os
import re
from array import array
from bisect import bisect_right
from dataclasses import dataclass, field

from ... import budget as _budget
from ... import limits as _limits
from ...errors import ParseError
from ..files import digest_text, read_text, repository_root

MAX_INCLUDE_DEPTH = 40
MAX_MACRO_DEPTH = 64

_TIME_UNITS = {"s": 1.0, "ms": 1e-3, "us": 1e-6, "ns": 1e-9, "ps": 1e-12, "fs": 1e-15}
_IDENT = r"[A-Za-z_][A-Za-z0-9_$]*"
_SCAN = re.compile(r'(?P<str>"(?:[^"\\\n]|\\.)*")|(?P<lc>//)|(?P<bc>/\*)|(?P<esc>\\\S+)'
                   r"|(?P<dir>`" + _IDENT + r")")
_IDENT_AFTER = re.compile(r"[ \t]+(" + _IDENT + r")")
_TIMESCALE = re.compile(r"[ \t]*(1|10|100)[ \t]*(s|ms|us|ns|ps|fs)[ \t]*/[ \t]*"
                        r"(1|10|100)[ \t]*(s|ms|us|ns|ps|fs)\b")
_LINE_DIR = re.compile(r'[ \t]+(\d+)[ \t]+"([^"\n]*)"(?:[ \t]+([0-2]))?')
_INCLUDE = re.compile(r'[ \t]*(?:"([^"\n]+)"|<([^>\n]+)>)')
_DEFINE_HEAD = re.compile(r"[ \t]+(" + _IDENT + r")(\()?")
_BODY_TOKENS = re.compile(r'"(?:[^"\\\n]|\\.)*"|' + _IDENT + r"|\\\S+|[\s\S]")
_COMMENT_IN_BODY = re.compile(r'"(?:[^"\\\n]|\\.)*"|//[^\n]*|/\*[\s\S]*?\*/')

_CONDITIONALS = {"ifdef", "ifndef", "elsif", "else", "endif"}
_SKIPPED = {"unconnected_drive", "nounconnected_drive", "begin_keywords", "end_keywords",
            "pragma"}
_DIRECTIVES = _CONDITIONALS | _SKIPPED | {
    "define", "undef", "include", "timescale", "celldefine", "endcelldefine",
    "default_nettype", "resetall", "line", "undefineall"}
_NETTYPES = {"wire", "tri", "tri0", "tri1", "wand", "triand", "wor", "trior", "trireg",
             "uwire", "none"}


class LineMap:
    """Output line (1-based) -> (original path, original line)."""

    def __init__(self):
        self.paths: list[str] = []
        self._path_index: dict[str, int] = {}
        self.file_of = array("i")
        self.line_of = array("i")

    def _pid(self, path: str) -> int:
        i = self._path_index.get(path)
        if i is None:
            i = self._path_index[path] = len(self.paths)
            self.paths.append(path)
        return i

    def add(self, path: str, line: int) -> None:
        self.file_of.append(self._pid(path))
        self.line_of.append(line)

    def add_range(self, path: str, first: int, count: int) -> None:
        pid = self._pid(path)
        self.file_of.extend([pid] * count)
        self.line_of.extend(range(first, first + count))

    def __len__(self):
        return len(self.line_of)

    def lookup(self, out_line: int) -> tuple[str, int]:
        if not self.line_of:
            return ("", out_line)
        i = min(max(out_line, 1), len(self.line_of)) - 1
        return self.paths[self.file_of[i]], self.line_of[i]


@dataclass
class Macro:
    name: str
    params: list | None          # None: object-like macro
    body: str
    path: str = ""
    line: int = 0


@dataclass
class DirectiveState:
    """Changes of `timescale / `celldefine / `default_nettype, by output line."""

    lines: dict = field(default_factory=lambda: {"timescale": [], "celldefine": [],
                                                 "default_nettype": []})
    values: dict = field(default_factory=lambda: {"timescale": [], "celldefine": [],
                                                  "default_nettype": []})

    def record(self, out_line: int, key: str, value) -> None:
        self.lines[key].append(out_line)
        self.values[key].append(value)

    def at(self, out_line: int) -> dict:
        defaults = {"timescale": None, "celldefine": False, "default_nettype": "wire"}
        out = {}
        for key, default in defaults.items():
            i = bisect_right(self.lines[key], out_line)
            out[key] = self.values[key][i - 1] if i else default
        return out


@dataclass
class PreprocessResult:
    text: str
    line_map: LineMap
    state: DirectiveState
    includes: list                         # resolved paths, in order of first inclusion
    digests: dict                          # path -> sha256 hex of its content (main + includes)
    notes: list                            # [(path, line, message)]


class _LineCount:
    """Stands in for the output lines when only counting: their number, not their text."""

    __slots__ = ("n",)

    def __init__(self):
        self.n = 0

    def append(self, line: str) -> None:
        self.n += 1

    def extend(self, lines) -> None:
        self.n += len(lines)

    def __len__(self) -> int:
        return self.n


class _NoLineMap:
    """Stands in for the :class:`LineMap` when only counting."""

    def add(self, path: str, line: int) -> None:
        pass

    def add_range(self, path: str, first: int, count: int) -> None:
        pass


class Preprocessor:
    def __init__(self, include_dirs=(), defines: dict | None = None, root: str | None = None,
                 texts: dict | None = None):
        self.include_dirs = [os.path.abspath(d) for d in include_dirs]
        # without a root, the repository holding each main file (else its folder) is the root
        # for its includes; never the working directory
        self.root = os.path.realpath(root) if root else None
        self._dirs_real = [os.path.realpath(d) for d in self.include_dirs]
        self.texts = {os.path.abspath(k): v for k, v in (texts or {}).items()}
        self.macros: dict[str, Macro] = {}
        for name, value in (defines or {}).items():
            self.macros[name] = Macro(name, None, "" if value is None else str(value))
        self._initial_macros = dict(self.macros)

    # ------------------------------------------------------------------------------------------
    def run(self, path: str, text: str | None = None) -> PreprocessResult:
        text = self._start(path, text, counting=False)
        return PreprocessResult("\n".join(self.out) + "\n", self.lmap, self.state,
                                self.includes, self.digests, self.notes)

    def check_limits(self, path: str, text: str | None = None) -> int:
        """Walk the file as :meth:`run` does (the same errors, the same limits, includes
        followed) without building the output text, the line map or the digests; returns the
        number of lines :meth:`run` would output."""
        self._start(path, text, counting=True)
        return len(self.out)

    def _start(self, path: str, text: str | None, counting: bool) -> str:
        if text is None:
            text = read_text(path, self.texts)
        self._counting = counting
        self.out = _LineCount() if counting else []
        self.lmap = _NoLineMap() if counting else LineMap()
        self.state = DirectiveState()
        self.includes: list[str] = []
        self._included: set[str] = set()
        self.digests = {} if counting else {path: digest_text(text)}
        self.notes: list = []
        self._stack: list[str] = [os.path.realpath(path)]
        root = self.root or repository_root(path) or os.path.dirname(self._stack[0])
        self._allowed = [root] + self._dirs_real
        self._include_count = 0
        self._include_texts: dict[str, str] = {}
        self._expansion_left = _limits.current().macro_expansion
        self._process(path, text)
        return text

    # ------------------------------------------------------------------------------------------
    def _process(self, path: str, text: str) -> None:
        _budget.check_loading("reading the sources", path, 1)
        if text.startswith("\ufeff"):
            text = text[1:]            # a UTF-8 byte-order mark: not part of the source
        lines = text.split("\n")
        if lines and lines[-1] == "":
            lines.pop()
        if "`" not in text:
            self.out.extend(lines)
            self.lmap.add_range(path, 1, len(lines))
            return
        out, lmap = self.out, self.lmap
        cond: list[list] = []           # [parent_active, taken, seen_else, line]
        active = True
        in_comment = False
        map_path, line_delta = path, 0  # `line directive changes these
        n = len(lines)
        i = 0
        while i < n:
            line = lines[i]
            lineno = i + 1
            if not in_comment and "`" not in line and "/*" not in line:
                out.append(line if active else "")
                lmap.add(map_path, lineno + line_delta)
                i += 1
                continue
            parts: list[str] = []
            pos = 0
            consumed = 0                # lines used beyond this one (define body, macro args)
            length = len(line)
            while pos < length:
                if in_comment:
                    j = line.find("*/", pos)
                    if j < 0:
                        if active:
                            parts.append(line[pos:])
                        pos = length
                        break
                    if active:
                        parts.append(line[pos:j + 2])
                    pos = j + 2
                    in_comment = False
                    continue
                m = _SCAN.search(line, pos)
                if m is None:
                    if active:
                        parts.append(line[pos:])
                    break
                if active:
                    parts.append(line[pos:m.start()])
                kind = m.lastgroup
                if kind in ("str", "esc"):
                    if active:
                        parts.append(m.group())
                    pos = m.end()
                    continue
                if kind == "lc":
                    if active:
                        parts.append(line[m.start():])
                    break
                if kind == "bc":
                    in_comment = True
                    if active:
                        parts.append("/*")
                    pos = m.end()
                    continue
                # a directive or macro use
                name = m.group()[1:]
                rest_at = m.end()
                if name in _CONDITIONALS:
                    if name in ("ifdef", "ifndef", "elsif"):
                        a = _IDENT_AFTER.match(line, rest_at)
                        if not a:
                            self._error(f"`{name} needs a macro name", path, lineno, m.group())
                        arg = a.group(1)
                        pos = a.end()
                        if name == "elsif":
                            if not cond or cond[-1][2]:
                                self._error("`elsif without `ifdef", path, lineno, "`elsif")
                            top = cond[-1]
                            if top[1]:
                                active = False
                            else:
                                active = top[0] and arg in self.macros
                                top[1] = active
                        else:
                            parent = active
                            defined = arg in self.macros
                            take = defined if name == "ifdef" else not defined
                            active = parent and take
                            cond.append([parent, active, False, lineno])
                    elif name == "else":
                        if not cond or cond[-1][2]:
                            self._error("`else without `ifdef", path, lineno, "`else")
                        top = cond[-1]
                        top[2] = True
                        active = top[0] and not top[1]
                        top[1] = True
                        pos = rest_at
                    else:  # endif
                        if not cond:
                            self._error("`endif without `ifdef", path, lineno, "`endif")
                        active = cond.pop()[0]
                        pos = rest_at
                    continue
                if not active:
                    pos = rest_at
                    continue
                out_line = len(out) + 1
                if name == "define":
                    consumed += self._define(path, lines, i + consumed, rest_at)
                    pos = length
                    break
                if name == "undef":
                    a = _IDENT_AFTER.match(line, rest_at)
                    if not a:
                        self._error("`undef needs a macro name", path, lineno, m.group())
                    self.macros.pop(a.group(1), None)
                    pos = a.end()
                elif name == "include":
                    a = _INCLUDE.match(line, rest_at)
                    if not a:
                        self._error('`include needs a "file name"', path, lineno, m.group())
                    target = a.group(1) or a.group(2)
                    # the text before the directive stays on its own line
                    out.append("".join(parts))
                    lmap.add(map_path, lineno + line_delta)
                    parts = []
                    self._include(path, lineno, target)
                    pos = a.end()
                elif name == "timescale":
                    a = _TIMESCALE.match(line, rest_at)
                    if not a:
                        self._error("malformed `timescale (expected e.g. 1ns/1ps)", path,
                                    lineno, line[m.start():].strip())
                    unit = int(a.group(1)) * _TIME_UNITS[a.group(2)]
                    prec = int(a.group(3)) * _TIME_UNITS[a.group(4)]
                    self.state.record(out_line, "timescale", (unit, prec))
                    pos = a.end()
                elif name == "celldefine":
                    self.state.record(out_line, "celldefine", True)
                    pos = rest_at
                elif name == "endcelldefine":
                    self.state.record(out_line, "celldefine", False)
                    pos = rest_at
                elif name == "default_nettype":
                    a = _IDENT_AFTER.match(line, rest_at)
                    if not a or a.group(1) not in _NETTYPES:
                        self._error("`default_nettype needs a net type", path, lineno,
                                    line[m.start():].strip())
                    self.state.record(out_line, "default_nettype", a.group(1))
                    pos = a.end()
                elif name == "resetall":
                    self.state.record(out_line, "timescale", None)
                    self.state.record(out_line, "celldefine", False)
                    self.state.record(out_line, "default_nettype", "wire")
                    pos = rest_at
                elif name == "undefineall":
                    self.macros = dict(self._initial_macros)
                    pos = rest_at
                elif name == "line":
                    a = _LINE_DIR.match(line, rest_at)
                    if not a:
                        self._error('malformed `line (expected `line N "file" level)', path,
                                    lineno, line[m.start():].strip())
                    if int(a.group(1)) < 1 or len(a.group(1)) > 9:
                        self._error("`line needs a line number from 1 to 999999999", path,
                                    lineno, line[m.start():].strip())
                    map_path = a.group(2) or map_path
                    line_delta = int(a.group(1)) - (lineno + 1)
                    pos = a.end()
                elif name in _SKIPPED:
                    pos = length
                elif name in ("__FILE__", "__LINE__"):
                    parts.append(f'"{path}"' if name == "__FILE__" else str(lineno))
                    pos = rest_at
                elif name in self.macros:
                    body, pos, used = self._use_macro(name, path, lines, i + consumed, rest_at)
                    done = self._expand_text(body, path, lineno, 1, {name}, {})
                    self._expansion_left -= len(done)
                    parts.append(done)
                    if used:
                        # arguments spanned lines: go on with the tail of the last one
                        consumed += used
                        line = lines[i + consumed]
                        length = len(line)
                else:
                    self._error(f"unknown compiler directive or undefined macro `{name}",
                                path, lineno, "`" + name)
            out.append("".join(parts))
            lmap.add(map_path, lineno + line_delta)
            for k in range(consumed):
                out.append("")
                lmap.add(map_path, lineno + k + 1 + line_delta)
            i += 1 + consumed
        if cond:
            self._error("unterminated `ifdef (no matching `endif)", path, cond[-1][3],
                        "`ifdef")

    # ------------------------------------------------------------------------------------------
    def _define(self, path, lines, i, rest_at) -> int:
        """Parse a `define starting at ``lines[i][rest_at:]``; returns the extra lines used."""
        line = lines[i]
        h = _DEFINE_HEAD.match(line, rest_at)
        if not h:
            self._error("`define needs a macro name", path, i + 1, line.strip())
        name = h.group(1)
        if name in _DIRECTIVES:
            self._error(f"cannot redefine the compiler directive `{name}", path, i + 1, name)
        # collect the body with line continuations
        body_lines = [line[h.end():]]
        extra = 0
        while body_lines[-1].endswith("\\") and i + extra + 1 < len(lines):
            body_lines[-1] = body_lines[-1][:-1]
            extra += 1
            body_lines.append(lines[i + extra])
        body = "\n".join(body_lines)
        params = None
        if h.group(2):
            close = body.find(")")
            if close < 0:
                self._error(f"`define {name}: unterminated parameter list", path, i + 1, name)
            plist = body[:close]
            params = [p.strip() for p in plist.split(",")] if plist.strip() else []
            for p in params:
                if not re.fullmatch(_IDENT, p):
                    self._error(f"`define {name}: bad parameter name '{p}' (defaults are not"
                                " supported)", path, i + 1, p)
            body = body[close + 1:]
        body = _COMMENT_IN_BODY.sub(lambda mm: mm.group() if mm.group().startswith('"') else
                                    " ", body)
        body = " ".join(body.split("\n")).strip()
        self.macros[name] = Macro(name, params, body, path, i + 1)
        return extra

    def _use_macro(self, name, path, lines, i, at):
        """Expand the use of ``name`` at ``lines[i][at:]``; returns (text, end position in the
        last line used, number of extra lines consumed)."""
        macro = self.macros[name]
        if macro.params is None:
            return macro.body, at, 0
        args, end_line, end_pos = self._collect_args(name, path, lines, i, at)
        if len(args) == 1 and args[0].strip() == "" and not macro.params:
            args = []
        if len(args) != len(macro.params):
            self._error(f"macro `{name} takes {len(macro.params)} argument(s), got {len(args)}",
                        path, i + 1, "`" + name)
        return _substitute(macro, [a.strip() for a in args]), end_pos, end_line - i

    def _collect_args(self, name, path, lines, i, at):
        line = lines[i]
        m = re.compile(r"[ \t]*\(").match(line, at)
        if not m:
            self._error(f"macro `{name} needs arguments in parentheses", path, i + 1, "`" + name)
        args, cur, depth = [], [], 1
        li, pos = i, m.end()
        tok = re.compile(r'"(?:[^"\\\n]|\\.)*"|[(){}\[\],]|[^"(){}\[\],]+|"')
        while True:
            text = lines[li]
            while pos < len(text):
                t = tok.match(text, pos)
                s = t.group()
                pos = t.end()
                if s in "([{" and len(s) == 1:
                    depth += 1
                elif s in ")]}" and len(s) == 1:
                    depth -= 1
                    if depth == 0:
                        args.append("".join(cur))
                        return args, li, pos
                elif s == "," and depth == 1:
                    args.append("".join(cur))
                    cur = []
                    continue
                cur.append(s)
            li += 1
            pos = 0
            cur.append(" ")
            if li >= len(lines) or li - i > 1000:
                self._error(f"unterminated argument list of macro `{name}", path, i + 1,
                            "`" + name)

    def _expand_text(self, text: str, path: str, lineno: int, depth: int, active: set,
                     memo: dict) -> str:
        """Rescan an expansion for further macro uses (on one line). ``memo`` keeps the
        expansion of each object-like macro of this use: it does not depend on where it
        appears, so a macro used many times is expanded once (a definition that doubles at
        every level costs its output size, not its call tree)."""
        if len(text) > self._expansion_left:
            self._too_much(path, lineno, text)
        if "`" not in text:
            return text
        if depth > MAX_MACRO_DEPTH:
            self._error("macro expansion nested too deeply (recursive macro?)", path, lineno,
                        text[:40])
        out, pos, size = [], 0, 0
        pat = re.compile(r'"(?:[^"\\\n]|\\.)*"|`(' + _IDENT + r")")
        while True:
            m = pat.search(text, pos)
            if m is None or size > self._expansion_left:
                out.append(text[pos:] if m is None else "")
                done = "".join(out)
                if len(done) > self._expansion_left:
                    self._too_much(path, lineno, text)
                return done
            out.append(text[pos:m.start()])
            name = m.group(1)
            if name is None:
                out.append(m.group())
                pos = m.end()
                continue
            if name in ("__FILE__", "__LINE__"):
                out.append(f'"{path}"' if name == "__FILE__" else str(lineno))
                pos = m.end()
                continue
            if name not in self.macros:
                self._error(f"undefined macro `{name}", path, lineno, "`" + name)
            if name in active:
                self._error(f"recursive macro `{name}", path, lineno, "`" + name)
            macro = self.macros[name]
            if macro.params is None:
                pos = m.end()
                done = memo.get(name)
                if done is None:
                    done = memo[name] = self._expand_text(macro.body, path, lineno, depth + 1,
                                                          active | {name}, memo)
                out.append(done)
                size += len(done)
                continue
            else:
                args, _, end = self._collect_args(name, path, [text], 0, m.end())
                if len(args) == 1 and args[0].strip() == "" and not macro.params:
                    args = []
                if len(args) != len(macro.params):
                    self._error(f"macro `{name} takes {len(macro.params)} argument(s), got "
                                f"{len(args)}", path, lineno, "`" + name)
                body, pos = _substitute(macro, [a.strip() for a in args]), end
            done = self._expand_text(body, path, lineno, depth + 1, active | {name}, memo)
            out.append(done)
            size += len(done)

    @staticmethod
    def _too_much(path, lineno, text):
        raise _limits.LimitExceeded("macro_expansion", "the text produced by macro expansion "
                                    "while reading this file", path=path, line=lineno,
                                    construct=text[:40])

    def _include(self, path: str, lineno: int, target: str) -> None:
        if len(self._stack) > MAX_INCLUDE_DEPTH:
            self._error("includes nested too deeply", path, lineno, target)
        candidates = []
        if os.path.isabs(target):
            candidates.append(target)
        else:
            candidates.append(os.path.join(os.path.dirname(os.path.abspath(path)), target))
            candidates.extend(os.path.join(d, target) for d in self.include_dirs)
        found = None
        for c in candidates:
            c = os.path.abspath(c)
            if c in self.texts or os.path.isfile(c):
                found = c
                break
        if found is None:
            self._error(f'include file "{target}" not found (searched the including file\'s '
                        "directory and the include directories)", path, lineno, target)
        real = os.path.realpath(found)
        if not any(_inside(real, base) for base in self._allowed):
            self._error(f'include "{target}" refused: it resolves outside the project root '
                        "and every include directory", path, lineno, target)
        if real in self._stack:
            self._error(f'recursive include of "{target}"', path, lineno, target)
        self._include_count += 1
        if self._include_count > _limits.current().include_fanout:
            raise _limits.LimitExceeded("include_fanout", "the number of `include directives "
                                        "followed for this file", path=path, line=lineno,
                                        construct=target[:60])
        text = self._include_texts.get(found)
        if text is None:
            text = self._include_texts[found] = read_text(found, self.texts)
        rel = found
        if rel not in self._included:
            self._included.add(rel)
            if not self._counting:
                self.digests[rel] = digest_text(text)
            self.includes.append(rel)
        self._stack.append(real)
        try:
            self._process(rel, text)
        finally:
            self._stack.pop()

    @staticmethod
    def _error(message, path, line, construct):
        raise ParseError(message, path=path, line=line, construct=construct)


def _inside(path: str, base: str) -> bool:
    try:
        return os.path.commonpath([path, base]) == base
    except ValueError:
        return False


def _substitute(macro: Macro, args: list) -> str:
    if not macro.params:
        return macro.body
    table = dict(zip(macro.params, args))
    return "".join(table.get(t, t) for t in _BODY_TOKENS.findall(macro.body))


def preprocess(path: str, text: str | None = None, include_dirs=(), defines=None, root=None,
               texts=None) -> PreprocessResult:
    """Preprocess one file (``text`` overrides its contents)."""
    return Preprocessor(include_dirs, defines, root, texts).run(path, text)
