"""Locations of pyslang tokens as the original ``file:line:col``.

slang's source manager already knows the preprocessor's line map: ```line`` directives rename
the file and renumber its lines, tokens from an ```include`` live in the included file's buffer,
and a token that came out of a macro expansion is reported at the macro's use (its fully
expanded location), which is the line the pyverilog front end gives it too. File names are
written the way the rest of hazlint expects them: the main file as it was given, an included
file as its absolute path, a ```line`` file name as written in the directive.
"""
from __future__ import annotations

import os

from pyslang import SourceLocation

from ... import errors
from .. import ir


_UNKNOWN = object()


class Locator:
    def __init__(self, sm, main_path: str, main_buffer):
        self.sm = sm
        self.main_path = main_path
        self.main_id = main_buffer.id
        self._names: dict = {}          # (buffer id, name slang reports) -> our path
        self._utf8: dict = {}           # buffer id -> its UTF-8 bytes, None when ASCII
        # bound methods, looked up once: these run once per construct of a large netlist
        self._is_macro = sm.isMacroLoc
        self._expanded = sm.getFullyExpandedLoc
        self._file = sm.getFileName
        self._line = sm.getLineNumber
        self._col = sm.getColumnNumber
        self._odd: set = set()          # buffers with a `line directive slang cannot place

    def _real(self, loc):
        return self._expanded(loc) if self._is_macro(loc) else loc

    def path(self, loc) -> str:
        name = self._file(loc)
        buf = loc.buffer.id
        key = (buf, name)
        p = self._names.get(key)
        if p is None:
            # the name at the buffer's start is the file's own; a different one here comes
            # from a `line directive
            own = self._file(SourceLocation(loc.buffer, 0))
            if name != own and os.path.basename(name):
                p = name
            elif name != own:
                # `line 0 "" 0 and the like: the physical file and line (see _line_of)
                self._odd.add(buf)
                p = self.main_path if buf == self.main_id else os.path.abspath(
                    os.fspath(self.sm.getFullPath(loc.buffer)) or own)
            elif buf == self.main_id:
                p = self.main_path
            else:
                p = os.path.abspath(os.fspath(self.sm.getFullPath(loc.buffer)) or name)
            self._names[key] = p
        return p

    def _line_of(self, loc) -> int:
        """The line of ``loc``: the ```line`` directive's numbering where it gives one a
        location can have (a file name and a line from 1), else the physical line."""
        n = self._line(loc)
        if n >= 1 and (loc.buffer.id not in self._odd
                       or os.path.basename(self._file(loc))):
            return n
        text = self.sm.getSourceText(loc.buffer) or ""
        return text.count("\n", 0, loc.offset) + 1

    def loc(self, tok) -> ir.Loc:
        """Where ``tok`` (a token) is in the original file."""
        loc = self._real(tok.location)
        return ir.Loc(self.path(loc), self._line_of(loc), self.column(loc))

    def column(self, loc) -> int:
        """1-based column in characters (slang counts bytes: they differ after non-ASCII
        text on the same line)."""
        data = self._utf8.get(loc.buffer.id, _UNKNOWN)
        if data is _UNKNOWN:
            try:
                text = self.sm.getSourceText(loc.buffer)
            except Exception:
                text = None
            data = None if text is None or text.isascii() else text.encode("utf-8")
            self._utf8[loc.buffer.id] = data
        if data is None:
            return self._col(loc)
        off = loc.offset
        start = data.rfind(b"\n", 0, off) + 1
        return len(data[start:off].decode("utf-8", "replace")) + 1

    def loc_line_only(self, tok) -> ir.Loc:
        """``file:line`` of ``tok`` with column 1 (where the pyverilog front end has no column)."""
        loc = self._real(tok.location)
        return ir.Loc(self.path(loc), self._line_of(loc), 1)

    def line(self, tok) -> int:
        loc = self._real(tok.location)
        self.path(loc)
        return self._line_of(loc)

    def where(self, loc) -> tuple[str, int, int]:
        """(path, line, column) of a slang ``SourceLocation``."""
        loc = self._real(loc)
        p = self.path(loc)
        return p, self._line_of(loc), self.column(loc)

    def error(self, message: str, what, construct=None):
        """Raise a :class:`ParseError` at ``what`` (a token or a syntax node)."""
        tok = what.getFirstToken() if hasattr(what, "getFirstToken") else what
        p, line, col = self.where(tok.location)
        raise errors.ParseError(message, path=p, line=line, column=col, construct=construct)
