"""The hazlint language server (LSP over stdio, built on pygls 2.x).

Diagnostics are published when a document is opened or saved, and after a pause in typing
(``debounce`` seconds after the last ``didChange``). The design is loaded the way the command
line loads it: configuration is discovered from the document's folder upwards (so a project's
configuration file, its file list and top module apply); without a configuration the document
is linted on its own. The text of every open document is used in place of the file on disk, so
unsaved edits count. Each published diagnostic carries its evidence (the fanout stem, the gates
along the reconvergent paths, the loop) as ``relatedInformation``.

Linting runs in a worker thread, one run at a time; the result is published from the event loop.
A run superseded by a newer edit of the same document is dropped instead of published.

Robustness: a document whose URI does not name a file (``%00`` in it) gets one diagnostic
saying so and is left out of every other document's run; converting findings reads each text
once per run through a line index (:class:`TextLines`) and shows at most
:data:`MAX_RELATED` related locations per diagnostic, so a megabyte netlist with findings of
thousands of hops is published in seconds. Malformed frames are handled before pygls sees
them (:mod:`hazlint.lsp_framing`).
"""
from __future__ import annotations

import asyncio
import logging
import os
import threading
from typing import Any, Iterable

from lsprotocol import types
from pygls.lsp.server import LanguageServer
from pygls.uris import from_fs_path, to_fs_path

from . import __version__
from .diagnostics import Diagnostic, Severity
from .errors import HazlintError
from .findings.words import evidence_unit
from .report.sarif import hop_message

log = logging.getLogger("hazlint.lsp")

SOURCE = "hazlint"
VERILOG_SUFFIXES = (".v", ".vh", ".vg", ".verilog", ".vlib", ".sv", ".svh")
_SEVERITY = {Severity.ERROR: types.DiagnosticSeverity.Error,
             Severity.WARNING: types.DiagnosticSeverity.Warning,
             Severity.INFO: types.DiagnosticSeverity.Information}


MAX_RELATED = 100        # related locations shown per diagnostic (the rest are counted)


def _norm(path: str) -> str:
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


class _Texts:
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


# ---------------------------------------------------------------------------------------------
# linting a document (pure: no protocol objects involved until the conversion below)


def lint_document(path: str, texts: dict[str, str], workspace_root: str | None = None
                  ) -> tuple[list[Diagnostic], str | None, Any, list[str]]:
    """Lint the design containing ``path``; returns (findings, root, error, files).

    ``texts`` maps absolute paths of open documents to their current text. ``error`` is a
    :class:`HazlintError` when the design could not be loaded (syntax error while typing), else
    None. ``files`` are the design's source files (absolute), the documents this run speaks for.
    """
    from .api import lint
    folder = os.path.dirname(os.path.abspath(path))
    try:
        result = _lint_with_config(lint, path, folder, texts, workspace_root)
    except HazlintError as exc:
        return [], None, exc, [path]
    root = getattr(result, "root", None) or folder
    files = [_abs(f, root) for f in
             list(getattr(result, "files", None) or []) + _result_files(result)]
    return list(getattr(result, "diagnostics", ()) or ()), root, None, files or [path]


def _lint_with_config(lint, path, folder, texts, workspace_root):
    """Same discovery as the CLI: configuration from the document's folder upwards. When the
    configuration names the design's files, load that design and keep the findings touching
    this document; otherwise lint the document alone."""
    config = _discover_config(folder, workspace_root)
    if config is not None and _config_files(config):
        result = lint(None, config=config, cwd=folder, texts=texts, changed=[path])
        files = {_norm(_abs(f, getattr(result, "root", None) or folder))
                 for f in _result_files(result)}
        if not files or _norm(path) in files:
            return result
    return lint([path], config=config, cwd=folder, texts=texts)


def _discover_config(folder: str, workspace_root: str | None):
    """The configuration the CLI would use when run from the document's folder. A broken
    configuration file is reported like any input error."""
    from .config import find_config, load_config
    if find_config(folder) is None and workspace_root and find_config(workspace_root):
        return load_config(workspace_root)
    return load_config(folder)


def _config_files(config) -> list:
    files = config.get("files") if isinstance(config, dict) else getattr(config, "files", None)
    return list(files or [])


def _result_files(result) -> list:
    design = getattr(result, "design", None)
    return list(getattr(design, "files", None) or [])


def _abs(p: str, root: str) -> str:
    return p if os.path.isabs(p) else os.path.join(root, p)


def _line_text(text, line0: int) -> str:
    if text is None:
        return ""
    if isinstance(text, TextLines):
        return text.line(line0)
    lines = text.splitlines()
    return lines[line0] if 0 <= line0 < len(lines) else ""


def _range(line: int, column: int, text) -> types.Range:
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
    ap = _abs(path, root or os.getcwd())
    index = texts if isinstance(texts, _Texts) else _Texts(texts)
    uri = uris.get(ap) if uris is not None else None
    if uri is None:
        uri = from_fs_path(ap)
        if uris is not None:
            uris[ap] = uri
    return types.Location(uri=uri, range=_range(line, column, index.of(ap)))


def to_lsp(d: Diagnostic, text, root: str | None, texts) -> types.Diagnostic:
    """The LSP diagnostic of a finding; ``texts`` is the open documents' texts (or the run's
    :class:`_Texts`). Evidence becomes related information, at most :data:`MAX_RELATED`
    locations (the first ones: the fast path, then the slow path), the rest counted."""
    index = texts if isinstance(texts, _Texts) else _Texts(texts)
    uris: dict[str, str] = {}
    related: list[types.DiagnosticRelatedInformation] = []
    left = 0
    places = [(r.location, r.message) for r in d.related if r.location.path]
    unit = evidence_unit(d.evidence)
    for i, flow in enumerate(d.flows):
        label = "loop" if d.kind in ("combinational-loop", "oscillation") else f"path {i + 1}"
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
        range=_range(d.line, d.column, text if not isinstance(text, str) else
                     index.of(_abs(d.location.path, root or os.getcwd()), text)),
        message=message,
        severity=_SEVERITY.get(d.severity, types.DiagnosticSeverity.Warning),
        code=d.rule, source=SOURCE,
        related_information=related or None,
        data={"kind": d.kind, "instance": d.instance})


def error_to_lsp(exc: HazlintError, text: str | None) -> types.Diagnostic:
    from .errors import excerpt
    return types.Diagnostic(range=_range(exc.line or 1, exc.column or 1, text),
                            message=excerpt(exc.message, 2000),
                            severity=types.DiagnosticSeverity.Error,
                            source=SOURCE, code="input-error")


def diagnostics_by_document(path: str, diags: Iterable[Diagnostic], root: str | None, error,
                            texts: dict[str, str], files: Iterable[str] = ()
                            ) -> dict[str, list[types.Diagnostic]]:
    """LSP diagnostics from one lint run for ``path`` and the open documents among ``files``
    (the run's sources); other open documents keep what they had."""
    in_run = {_norm(f) for f in files}
    want = {_norm(p): p for p in texts if _norm(p) in in_run}
    want[_norm(path)] = path
    out: dict[str, list[types.Diagnostic]] = {p: [] for p in want.values()}
    if error is not None:
        epath = error.path and _norm(_abs(error.path, root or os.path.dirname(path)))
        open_docs = {_norm(p): p for p in texts}
        target = (want.get(epath) or open_docs.get(epath)) if epath else None
        target = target or path
        # an error elsewhere in the design is shown on this document's first line
        e = error if target != path or epath == _norm(path) else HazlintError(
            str(error), line=1)
        out[target] = [error_to_lsp(e, texts.get(target))]
        return out
    index = _Texts(texts)
    keys: dict[str, str] = {}
    for d in diags:
        if not d.location.path:
            continue
        key = keys.get(d.location.path)
        if key is None:
            key = keys[d.location.path] = _norm(_abs(d.location.path,
                                                     root or os.path.dirname(path)))
        if key in want:
            p = want[key]
            out[p].append(to_lsp(d, index.of(p), root, index))
    return out


# ---------------------------------------------------------------------------------------------
# the server


class HazlintServer(LanguageServer):
    def __init__(self, debounce: float = 0.4):
        super().__init__("hazlint", __version__,
                         text_document_sync_kind=types.TextDocumentSyncKind.Incremental)
        self.debounce = debounce
        self.generation: dict[str, int] = {}       # uri -> edit counter
        self.pending: dict[str, asyncio.TimerHandle] = {}
        self._lint_lock = threading.Lock()

    # paths and texts of the open documents
    def open_texts(self) -> dict[str, str]:
        """Path -> text of every open document whose URI names a file (others are left out:
        one bad URI must not touch any other document's run)."""
        texts = {}
        for uri, doc in list(self.workspace.text_documents.items()):
            try:
                p = to_fs_path(uri)
            except Exception:          # noqa: BLE001 - a URI pygls cannot take apart
                continue
            if usable_path(p):
                texts[os.path.abspath(p)] = doc.source
        return texts

    def workspace_root(self) -> str | None:
        try:
            return self.workspace.root_path
        except Exception:
            return None

    def _lint_blocking(self, path: str, texts: dict[str, str]):
        with self._lint_lock:
            return lint_document(path, texts, self.workspace_root())

    async def lint_and_publish(self, uri: str) -> None:
        try:
            path = to_fs_path(uri)
        except Exception:              # noqa: BLE001 - a URI pygls cannot take apart
            path = None
        if not usable_path(path):
            self._publish(uri, [types.Diagnostic(
                range=_range(1, 1, None), severity=types.DiagnosticSeverity.Error,
                source=SOURCE, code="input-error",
                message="hazlint cannot lint this document: its URI does not name a file "
                        "(it holds a NUL character or is not a file: URI)")])
            return
        path = os.path.abspath(path)
        gen = self.generation.get(uri, 0)
        texts = self.open_texts()
        loop = asyncio.get_running_loop()
        try:
            diags, root, error, files = await loop.run_in_executor(
                None, self._lint_blocking, path, texts)
        except Exception as exc:   # a bug must not take the editor session down
            log.exception("lint failed")
            self.window_log_message(types.LogMessageParams(
                type=types.MessageType.Error, message=f"hazlint: internal error: {exc}"))
            return
        if self.generation.get(uri, 0) != gen:
            return                 # the document changed meanwhile; a newer run will publish
        try:
            by_doc = diagnostics_by_document(path, diags, root, error, texts, files)
        except Exception as exc:   # noqa: BLE001 - one document's trouble stays its own
            log.exception("converting diagnostics failed")
            self.window_log_message(types.LogMessageParams(
                type=types.MessageType.Error, message=f"hazlint: internal error: {exc}"))
            return
        for p, items in by_doc.items():
            self._publish(from_fs_path(p), items)

    def _publish(self, doc_uri: str, items) -> None:
        version = None
        try:
            # (pygls keys documents by a normalised URI: ask it, do not look the key up)
            version = self.workspace.get_text_document(doc_uri).version
        except Exception:          # noqa: BLE001 - no version is still a valid publish
            version = None
        self.text_document_publish_diagnostics(types.PublishDiagnosticsParams(
            uri=doc_uri, diagnostics=items, version=version))

    def schedule(self, uri: str, delay: float) -> None:
        self.generation[uri] = self.generation.get(uri, 0) + 1
        old = self.pending.pop(uri, None)
        if old is not None:
            old.cancel()
        loop = asyncio.get_running_loop()

        def fire():
            self.pending.pop(uri, None)
            asyncio.ensure_future(self.lint_and_publish(uri))

        if delay <= 0:
            fire()
        else:
            self.pending[uri] = loop.call_later(delay, fire)


def _wanted(uri: str) -> bool:
    try:
        p = to_fs_path(uri) or ""
    except Exception:                  # noqa: BLE001
        p = uri
    return p.lower().endswith(VERILOG_SUFFIXES)


CONFIG_NAMES = ("hazlint.toml", "pyproject.toml")


def _is_config(uri: str) -> bool:
    """A file whose saving can change every open document's findings: a configuration file,
    or any TOML file (waiver files are TOML and may be named anything)."""
    try:
        p = to_fs_path(uri) or ""
    except Exception:                  # noqa: BLE001
        return False
    return os.path.basename(p) in CONFIG_NAMES or p.lower().endswith(".toml")


def _relint_all(ls: "HazlintServer") -> None:
    for uri in list(ls.workspace.text_documents):
        if _wanted(uri):
            ls.schedule(uri, 0)


def create_server(debounce: float = 0.4) -> HazlintServer:
    server = HazlintServer(debounce=debounce)

    @server.feature(types.TEXT_DOCUMENT_DID_OPEN)
    async def did_open(ls: HazlintServer, params: types.DidOpenTextDocumentParams):
        if _wanted(params.text_document.uri):
            ls.schedule(params.text_document.uri, 0)

    @server.feature(types.TEXT_DOCUMENT_DID_SAVE,
                    types.TextDocumentSaveRegistrationOptions(include_text=False))
    async def did_save(ls: HazlintServer, params: types.DidSaveTextDocumentParams):
        if _wanted(params.text_document.uri):
            ls.schedule(params.text_document.uri, 0)
        elif _is_config(params.text_document.uri):
            _relint_all(ls)      # configuration or waivers changed: every open design

    @server.feature(types.WORKSPACE_DID_CHANGE_WATCHED_FILES)
    async def did_change_watched(ls: HazlintServer, params: types.DidChangeWatchedFilesParams):
        # clients that watch files tell us about configuration edits made outside the editor,
        # and about Verilog files (includes, other modules of the design) changed on disk
        if any(_is_config(ch.uri) or _wanted(ch.uri) for ch in params.changes):
            _relint_all(ls)

    @server.feature(types.WORKSPACE_DID_CHANGE_CONFIGURATION)
    async def did_change_configuration(ls: HazlintServer,
                                       params: types.DidChangeConfigurationParams):
        # hazlint reads its settings from the project's files, not from the client; a
        # settings change still means "look again"
        _relint_all(ls)

    @server.feature(types.TEXT_DOCUMENT_DID_CHANGE)
    async def did_change(ls: HazlintServer, params: types.DidChangeTextDocumentParams):
        if _wanted(params.text_document.uri):
            ls.schedule(params.text_document.uri, ls.debounce)

    @server.feature(types.TEXT_DOCUMENT_DID_CLOSE)
    async def did_close(ls: HazlintServer, params: types.DidCloseTextDocumentParams):
        uri = params.text_document.uri
        ls.generation[uri] = ls.generation.get(uri, 0) + 1
        old = ls.pending.pop(uri, None)
        if old is not None:
            old.cancel()
        ls.text_document_publish_diagnostics(types.PublishDiagnosticsParams(uri=uri,
                                                                           diagnostics=[]))

    return server
