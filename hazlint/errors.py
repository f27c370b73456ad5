"""Errors that reach the user as ``file:line: error: ...`` with exit code 2, never a traceback."""
from __future__ import annotations

import re

EXIT_CLEAN = 0
EXIT_FINDINGS = 1
EXIT_INPUT_ERROR = 2
EXIT_INTERNAL_ERROR = 3    # a bug in hazlint itself


class HazlintError(Exception):
    """A problem with the user's input or invocation.

    ``path`` and ``line`` name the construct at fault where there is one; ``construct`` is a short
    quotation of it (the offending token, the directive, the cell name).
    """

    exit_code = EXIT_INPUT_ERROR

    def __init__(self, message: str, path: str | None = None, line: int | None = None,
                 column: int | None = None, construct: str | None = None):
        super().__init__(message)
        self.message = message
        self.path = path
        self.line = line
        self.column = column
        self.construct = construct

    def __str__(self) -> str:
        where = ""
        if self.path:
            where = excerpt(str(self.path), 400)
            if self.line:
                where += f":{self.line}"
                if self.column:
                    where += f":{self.column}"
            where += ": "
        text = f"{where}error: {excerpt(self.message, 2000)}"
        if self.construct and self.construct not in self.message:
            text += f" (at '{excerpt(self.construct, 60)}')"
        return text


_LONG_WORD = re.compile(r"\S{121,}")


def excerpt(text: str, limit: int) -> str:
    """``text`` with every run of more than 120 non-blank characters (an identifier, a
    literal) cut to its first 60, then cut to ``limit`` characters, each cut saying how much
    it left out: an error line quotes the input, it never reproduces it."""
    text = str(text)
    total = len(text)
    text = _LONG_WORD.sub(lambda m: f"{m.group()[:60]}...({len(m.group())} characters)", text)
    if len(text) > limit:
        text = f"{text[:limit]}...({total} characters)"
    return text.replace("\n", " ")


class ParseError(HazlintError):
    """Syntax error in a Verilog, Liberty, SDF or configuration file."""


class ElaborationError(HazlintError):
    """The design parses but cannot be elaborated (unknown top, unsupported construct, ...)."""


class ConfigError(HazlintError):
    """Bad configuration: unknown key, wrong type, missing file."""
