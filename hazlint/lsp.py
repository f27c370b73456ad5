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
once per run through a line index (:class:`hazlint.report.lsp.TextIndex`) and shows at most
:data:`MAX_RELATED` related locations per diagnostic, so a megabyte netlist with findings of
thousands of hops is published in seconds. Malformed frames are handled before pygls sees
them (:mod:`hazlint.lsp_framing`).
"""
from __future__ import annotations

import asyncio
import logging
import os
import threading
from typing import Any

from lsprotocol import types
from pygls.lsp.server import LanguageServer
from pygls.uris import from_fs_path, to_fs_path

from . import __version__
from .diagnostics import Diagnostic
from .errors import HazlintError
from .report.lsp import (MAX_RELATED, SOURCE, absolute, diagnostics_by_document,  # noqa: F401
                         same_file, text_range, usable_path)

log = logging.getLogger("hazlint.lsp")

VERILOG_SUFFIXES = (".v", ".vh", ".vg", ".verilog", ".vlib", ".sv", ".svh")


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
    files = [absolute(f, root) for f in
             list(getattr(result, "files", None) or []) + _result_files(result)]
    return list(getattr(result, "diagnostics", ()) or ()), root, None, files or [path]


def _lint_with_config(lint, path, folder, texts, workspace_root):
    """Same discovery as the CLI: configuration from the document's folder upwards. When the
    configuration names the design's files, load that design and keep the findings touching
    this document; otherwise lint the document alone."""
    config = _discover_config(folder, workspace_root)
    if config is not None and _config_files(config):
        result = lint(None, config=config, cwd=folder, texts=texts, changed=[path])
        files = {same_file(absolute(f, getattr(result, "root", None) or folder))
                 for f in _result_files(result)}
        if not files or same_file(path) in files:
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
                range=text_range(1, 1, None), severity=types.DiagnosticSeverity.Error,
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
