"""LSP diagnostics: the language server's conversion of findings, and the ``lsp`` report format.

A finding becomes an LSP ``Diagnostic`` (LSP 3.17 ``textDocument/publishDiagnostics``): its
range runs from the reported column to the end of that line's text, its evidence (the fanout
stem, the gates along the reconvergent paths, the loop) becomes ``relatedInformation``, at most
:data:`MAX_RELATED` locations (the rest counted), and the fix follows the message. Each text a
location points into is read and split into lines once per conversion (:class:`TextIndex`).
``hazlint lsp`` (:mod:`hazlint.lsp`) publishes these per open document;
``hazlint check --format lsp`` writes the same conversion for every file with findings, one
``publishDiagnostics`` parameter object per line (JSON, sorted by URI), for editors and tools
that run a command rather than a server. Findings without a file (none of the built-in rules
make one) cannot be placed in an editor and are left out, as the server leaves them out.
"""
from __future__ import annotations

import json
import os
from typing import Any, Iterable

from lsprotocol import types
from pygls.uris import from_fs_path

from ..diagnostics import Diagnostic, Severity
from ..errors import HazlintError, excerpt
from ..findings.fold import describes_loop
from ..findings.words import evidence_unit
from .registry import ReportOptions
from .sarif import hop_message

NAME = "lsp"
SUMMARY = "LSP publishDiagnostics parameters as JSON, one object per file (what an editor gets)"
SOURCE = "hazlint"
_SEVERITY = {Severity.ERROR: types.DiagnosticSeverity.Error,
             Severity.WARNING: types.DiagnosticSeverity.Warning,
             Severity.INFO: types.DiagnosticSeverity.Information}


MAX_RELATED = 100        # related locations shown per diagnostic (the rest are counted)


def same_file(path: str) -> str:
    """A key equal for two spellings of the same file (real path, case as the system has it)."""
    try:
        return os.path.normcase(os.path.realpath(path))
    except (ValueError, OSError):       # a NUL in the name: keep it apart from every file
        return path


def usable_path(path: str | None) -> bool:
    """Whether ``path`` (from a document URI) can name a file at all."""
    return bool(path) and "\0" not in path


class TextLines:
    """The lines of one text, split once (a conversion asks for one line per location)."""

    def __init__(self, text: str | None):
        self.lines = text.splitlines() if text is not None else []

    def line(self, line0: int) -> str:
        return self.lines[line0] if 0 <= line0 < len(self.lines) else ""


class TextIndex:
    """Per conversion run: the line index of every document and file a location points into,
    each read and split once."""

    def __init__(self, texts: dict[str, str]):
        self.texts = texts
        self.index: dict[str, TextLines] = {}

    def of(self, path: str, text: str | None = None) -> TextLines:
        got = self.index.get(path)
        if got is None:
            if text is None:
                text = self.texts.get(path)
            if text is None:
                try:
                    with open(path, encoding="utf-8", errors="replace") as fh:
                        text = fh.read()
                except (OSError, ValueError):
                    text = None
            got = self.index[path] = TextLines(text)
        return got


def absolute(p: str, root: str) -> str:
    """``p`` made absolute against ``root`` (when it is not already)."""
    return p if os.path.isabs(p) else os.path.join(root, p)


def _line_text(text, line0: int) -> str:
    if text is None:
        return ""
    if isinstance(text, TextLines):
        return text.line(line0)
    lines = text.splitlines()
    return lines[line0] if 0 <= line0 < len(lines) else ""


def text_range(line: int, column: int, text) -> types.Range:
    """From the reported column to the end of the line's text (the gate or statement);
    ``text`` is the document's text or its :class:`TextLines`."""
    l0 = max(0, (line or 1) - 1)
    c0 = max(0, (column or 1) - 1)
    content = _line_text(text, l0)
    end = len(content.rstrip())
    if end <= c0:
        end = c0 + 1
    return types.Range(start=types.Position(line=l0, character=c0),
                       end=types.Position(line=l0, character=end))


def _location(path: str, line: int, column: int, root: str | None, texts,
              uris: dict | None = None):
    ap = absolute(path, root or os.getcwd())
    index = texts if isinstance(texts, TextIndex) else TextIndex(texts)
    uri = uris.get(ap) if uris is not None else None
    if uri is None:
        uri = from_fs_path(ap)
        if uris is not None:
            uris[ap] = uri
    return types.Location(uri=uri, range=text_range(line, column, index.of(ap)))


def to_lsp(d: Diagnostic, text, root: str | None, texts) -> types.Diagnostic:
    """The LSP diagnostic of a finding; ``texts`` is the open documents' texts (or the run's
    :class:`TextIndex`). Evidence becomes related information, at most :data:`MAX_RELATED`
    locations (the first ones: the fast path, then the slow path), the rest counted."""
    index = texts if isinstance(texts, TextIndex) else TextIndex(texts)
    uris: dict[str, str] = {}
    related: list[types.DiagnosticRelatedInformation] = []
    left = 0
    places = [(r.location, r.message) for r in d.related if r.location.path]
    unit = evidence_unit(d.evidence)
    loop = describes_loop(d)
    for i, flow in enumerate(d.flows):
        label = "loop" if loop else f"path {i + 1}"
        places += [(h.location, f"{label}: {hop_message(h, unit)}") for h in flow
                   if h.location is not None and h.location.path]
    if len(places) > MAX_RELATED:
        left = len(places) - (MAX_RELATED - 1)
        places = places[:MAX_RELATED - 1]
    for loc, msg in places:
        related.append(types.DiagnosticRelatedInformation(
            location=_location(loc.path, loc.line, loc.column, root, index, uris), message=msg))
    if left and places:
        loc = places[-1][0]
        related.append(types.DiagnosticRelatedInformation(
            location=_location(loc.path, loc.line, loc.column, root, index, uris),
            message=f"... {left} more evidence locations (the command line report lists "
                    "them all)"))
    message = d.message
    if d.fix:
        message += f"\nfix: {d.fix}"
    return types.Diagnostic(
        range=text_range(d.line, d.column, text if not isinstance(text, str) else
                     index.of(absolute(d.location.path, root or os.getcwd()), text)),
        message=message,
        severity=_SEVERITY.get(d.severity, types.DiagnosticSeverity.Warning),
        code=d.rule, source=SOURCE,
        related_information=related or None,
        data={"kind": d.kind, "instance": d.instance})


def error_to_lsp(exc: HazlintError, text: str | None) -> types.Diagnostic:
    return types.Diagnostic(range=text_range(exc.line or 1, exc.column or 1, text),
                            message=excerpt(exc.message, 2000),
                            severity=types.DiagnosticSeverity.Error,
                            source=SOURCE, code="input-error")


def diagnostics_by_document(path: str, diags: Iterable[Diagnostic], root: str | None, error,
                            texts: dict[str, str], files: Iterable[str] = ()
                            ) -> dict[str, list[types.Diagnostic]]:
    """LSP diagnostics from one lint run for ``path`` and the open documents among ``files``
    (the run's sources); other open documents keep what they had."""
    in_run = {same_file(f) for f in files}
    want = {same_file(p): p for p in texts if same_file(p) in in_run}
    want[same_file(path)] = path
    out: dict[str, list[types.Diagnostic]] = {p: [] for p in want.values()}
    if error is not None:
        epath = error.path and same_file(absolute(error.path, root or os.path.dirname(path)))
        open_docs = {same_file(p): p for p in texts}
        target = (want.get(epath) or open_docs.get(epath)) if epath else None
        target = target or path
        # an error elsewhere in the design is shown on this document's first line
        e = error if target != path or epath == same_file(path) else HazlintError(
            str(error), line=1)
        out[target] = [error_to_lsp(e, texts.get(target))]
        return out
    index = TextIndex(texts)
    keys: dict[str, str] = {}
    for d in diags:
        if not d.location.path:
            continue
        key = keys.get(d.location.path)
        if key is None:
            key = keys[d.location.path] = same_file(absolute(d.location.path,
                                                     root or os.path.dirname(path)))
        if key in want:
            p = want[key]
            out[p].append(to_lsp(d, index.of(p), root, index))
    return out


def write(result: Any, stream, options: ReportOptions | None = None) -> None:
    """One ``publishDiagnostics`` parameter object per file with findings, sorted by URI."""
    from pygls.protocol import default_converter
    root = getattr(result, "root", None) or os.getcwd()
    by_file: dict[str, list[Diagnostic]] = {}
    for d in getattr(result, "diagnostics", ()) or ():
        if d.location.path and d.waived is None:
            by_file.setdefault(absolute(d.location.path, root), []).append(d)
    index = TextIndex({})
    convert = default_converter()
    for uri, p in sorted((from_fs_path(p), p) for p in by_file):
        params = types.PublishDiagnosticsParams(
            uri=uri, diagnostics=[to_lsp(d, index.of(p), root, index) for d in by_file[p]])
        stream.write(json.dumps(convert.unstructure(params), sort_keys=True,
                                ensure_ascii=False) + "\n")
