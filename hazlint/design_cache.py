"""A cache of flattened designs: skip reading *and* elaborating on an unchanged rerun.

The parse cache (:mod:`hazlint.cache`) saves the parsing of each file, but a warm run still
rebuilt the IR and flattened the hierarchy. This cache stores the finished
:class:`~hazlint.design.Design` (after SDF back-annotation) as compact JSON, keyed by everything
elaboration depends on (:func:`design_key`):

* every input file's path and content digest (editor buffers in ``texts`` included); files
  pulled in through ``include`` are recorded in the entry with their digests and re-checked on
  load, so an edited header is a miss even though no input file changed;
* the top module(s), include directories, ``defines``, the include root;
* the cell library: the configured ``cells`` table and the contents of every Liberty file;
* the SDF files' contents and the annotation corner; the default gate delay;
* the hazlint version and a stamp of every source file of ``hazlint`` and ``hazlint_rules``
  (name, size, mtime), the networkx version (the graph is rebuilt through its internals).

Format (``data`` of a :class:`hazlint.cache.ParseCache` entry in namespace ``design``)::

    {"format": 1, "deps": {"<include path>": "<sha256 of its text>"},
     "codec": ..., "classes": [...], "strings": [...], "shared": [...],   # Codec header
     "ids": [node id, ...],
     "shapes": [[attribute key, ...], ...],        # distinct key lists of node/edge dicts
     "nodes": [[shape, value, ...], ...],          # per node, in graph order
     "inputs": [[node index, ...] or null, ...],   # node "inputs" as indices
     "succ": [[node index, [shape, value...], ...], ...],   # out-edges in adjacency order
     "pred": [[node index, ...], ...],             # in-edges in adjacency order
     "graph": {...}, "fields": {"top": ..., "registers": ..., ...}}

A node's ``name`` equal to its id is written as the key ``"=name"`` without a value, and its
``inputs`` as ``"#inputs"`` (the indices in ``inputs``). Delays and locations are shared values
(one object per distinct value, as the flattener itself shares the unit delay). Both adjacency
orders are stored, so iteration over successors *and* predecessors is the same as on a freshly
built graph. Like every cache entry it is plain JSON: nothing in it is executed on load.
"""
from __future__ import annotations

import dataclasses
import gc
import hashlib
import importlib.util
import json
import os
from pathlib import Path
from typing import Any, Iterable, Mapping, Sequence


from . import __version__
from .cache import Codec, CodecError, ParseCache, default_cache_dir
from .filestore import atomic_write, digest_file, digest_stream, open_private, private_dirs

DESIGN_FORMAT = 1
NAMESPACE = "design"

_NAME = "=name"
_INPUTS = "#inputs"
_INTERNED = ("path",)      # node attributes whose text repeats on every node: a string table
_AT = {k: "@" + k for k in _INTERNED}


# ---------------------------------------------------------------------------------------------
# key

_STAMP: str | None = None


def _networkx_version() -> str:
    # from the installed distribution's metadata: a cached report needs no networkx import
    from importlib import metadata
    try:
        return metadata.version("networkx")
    except metadata.PackageNotFoundError:
        import networkx
        return networkx.__version__


def code_stamp() -> str:
    """hazlint's version plus a stamp (file name, size, mtime) of every ``.py`` file of the
    ``hazlint`` package and of the built-in rules package: an entry written by other code is a
    miss, even in a development checkout that keeps its version number."""
    global _STAMP
    if _STAMP is None:
        h = hashlib.sha256(__version__.encode())
        h.update(_networkx_version().encode())
        roots = [Path(__file__).resolve().parent]
        spec = importlib.util.find_spec("hazlint_rules")
        if spec is not None and spec.submodule_search_locations:
            roots += [Path(p) for p in spec.submodule_search_locations]
        for root in roots:
            h.update(b"\0root\0" + str(root).encode("utf-8", "surrogateescape"))
            for dirpath, dirnames, filenames in os.walk(root):
                dirnames[:] = sorted(d for d in dirnames if d != "__pycache__")
                for name in sorted(filenames):
                    if name.endswith(".py"):
                        try:
                            st = os.stat(os.path.join(dirpath, name))
                        except OSError:
                            continue
                        rel = os.path.relpath(os.path.join(dirpath, name), root)
                        h.update(f"{rel}\0{st.st_size}\0{st.st_mtime_ns}\0".encode(
                            "utf-8", "surrogateescape"))
        _STAMP = f"{__version__}+{h.hexdigest()[:16]}"
    return _STAMP


def design_key(paths: Sequence[str], *, texts: Mapping[str, str] | None = None, top=None,
               include_dirs: Iterable[str] = (), defines: Mapping[str, Any] | None = None,
               root: str | None = None, cells: Mapping[str, Any] | None = None,
               cells_source: str | None = None, liberty: Iterable[str] = (),
               sdf: Iterable[str] = (), sdf_corner: str = "minmax",
               default_delay: Any = None, memory_max_bits: int | None = None,
               frontend: str = "auto") -> str | None:
    """sha256 over every input of reading, elaborating and annotating a design, or None when
    one of them cannot be read (the uncached load then reports the problem)."""
    from .frontend.preprocess import digest_text, read_text
    from .errors import HazlintError
    try:
        files = [[os.path.abspath(p), digest_text(read_text(p, texts))] for p in paths]
    except HazlintError:
        return None
    libs, sdfs = [], []
    for p in liberty:
        d = digest_file(p)
        if d is None:
            return None
        libs.append([os.path.abspath(p), d])
    for p in sdf:
        d = digest_file(p)
        if d is None:
            return None
        sdfs.append([os.path.abspath(p), d])
    material = {
        "format": DESIGN_FORMAT, "files": files,
        "top": top if top is None or isinstance(top, str) else list(top),
        "include_dirs": [os.path.abspath(d) for d in include_dirs],
        "defines": sorted((str(k), None if v is None else str(v))
                          for k, v in (defines or {}).items()),
        "root": os.path.abspath(root) if root else None,
        "cells": cells or {}, "cells_source": cells_source, "liberty": libs,
        "sdf": sdfs, "sdf_corner": sdf_corner,
        "default_delay": default_delay, "memory_max_bits": memory_max_bits,
    }
    from .frontend.registry import key_material
    reader = key_material(paths, frontend)
    if reader is not None:
        material["front_end"] = reader
    try:
        text = json.dumps(material, sort_keys=True, default=repr)
    except (TypeError, ValueError):
        return None
    return hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()


# ---------------------------------------------------------------------------------------------
# encoding

_CODEC: Codec | None = None


def _codec() -> Codec:
    global _CODEC
    if _CODEC is None:
        from .design import BlackBox, Register
        from .diagnostics import Diagnostic, Hop, Location, Related, Severity
        from .library import Delay
        _CODEC = Codec([Delay, Location, Hop, Related, Diagnostic, Severity, Register, BlackBox],
                       shared=[Delay, Location, Hop])
    return _CODEC


def _has_graph_internals(g) -> bool:
    import networkx as nx
    return (type(g) is nx.DiGraph and isinstance(getattr(g, "_node", None), dict)
            and isinstance(getattr(g, "_succ", None), dict)
            and isinstance(getattr(g, "_pred", None), dict) and g._adj is g._succ)


def encode_design(design) -> dict:
    """The design as a compact JSON document (see the module docstring). Raises
    :class:`~hazlint.cache.CodecError` for anything it cannot represent exactly."""
    g = design.graph
    if not _has_graph_internals(g):
        raise CodecError("the gate graph is not a plain networkx.DiGraph")
    codec = _codec()
    from .cache import _EncodeState
    st = _EncodeState()
    enc = codec.encode_value
    ids = list(g._node)
    index = {n: i for i, n in enumerate(ids)}
    if len(index) != len(ids) or not all(type(n) is str for n in ids):
        raise CodecError("node ids must be distinct strings")
    shapes: dict[tuple, int] = {}

    def shape_of(keys: tuple) -> int:
        s = shapes.get(keys)
        if s is None:
            s = shapes[keys] = len(shapes)
        return s

    nodes, inputs = [], []
    for n, d in g._node.items():
        keys, row = [], [0]
        ins = None
        for k, v in d.items():
            if type(k) is not str or k[:1] in ("=", "#", "@"):
                raise CodecError(f"unexpected node attribute key {k!r}")
            if k == "name" and v == n and type(v) is str:
                keys.append(_NAME)
                row.append(0)
            elif k == "inputs" and type(v) is list and all(type(x) is str and x in index
                                                            for x in v):
                keys.append(_INPUTS)
                row.append(0)
                ins = [index[x] for x in v]
            elif k in _AT and type(v) is str:
                keys.append(_AT[k])
                row.append(st.string(v))
            else:
                keys.append(k)
                row.append(enc(v, st))
        row[0] = shape_of(tuple(keys))
        nodes.append(row)
        inputs.append(ins)
    edges = _derived_edges(g, ids, index, inputs, enc, st, shape_of)
    if edges is None:
        succ = []
        for n, nbrs in g._succ.items():
            out = []
            for v, ed in nbrs.items():
                keys = tuple(ed)
                if not all(type(k) is str for k in keys):
                    raise CodecError("edge attribute keys must be strings")
                out.append(index[v])
                out.append([shape_of(keys), *[enc(x, st) for x in ed.values()]])
            succ.append(out)
        edges = {"succ": succ, "pred": [[index[u] for u in g._pred[n]] for n in ids]}
    fields = {}
    for f in dataclasses.fields(design):
        if f.name != "graph":
            fields[f.name] = enc(getattr(design, f.name), st)
    doc = codec.header(st)
    doc.update({"format": DESIGN_FORMAT, "ids": ids,
                "shapes": [list(k) for k in shapes], "nodes": nodes, "inputs": inputs,
                "edges": edges, "graph": enc(dict(g.graph), st), "fields": fields})
    return doc


def _derived_edges(g, ids, index, inputs, enc, st, shape_of):
    """``{"derived": [[u, v, extra attribute row], ...]}`` when the edges are exactly what the
    flattener builds from the nodes' ``inputs`` (node order, then pin order; attribute ``pins``
    first, listing the pin indices), plus extra attributes such as SDF ``wire`` delays;
    None when they are not (the caller then writes both adjacency orders explicitly)."""
    if any(ins is None for ins, n in zip(inputs, ids) if g._pred[n]):
        return None
    succ_order: dict = {n: [] for n in ids}
    n_edges = 0
    for j, v in enumerate(ids):
        ins = inputs[j]
        if ins is None:
            continue
        want: dict = {}
        for pos, i in enumerate(ins):
            want.setdefault(ids[i], []).append(pos)
        pred = g._pred[v]
        if list(pred) != list(want):
            return None
        for u, pins in want.items():
            ed = pred[u]
            if next(iter(ed), None) != "pins" or ed["pins"] != pins or type(ed["pins"]) is not list:
                return None
            succ_order[u].append(v)
        n_edges += len(want)
    if n_edges != g.number_of_edges():
        return None
    extra = []
    for u in ids:
        if list(g._succ[u]) != succ_order[u]:
            return None
        for v, ed in g._succ[u].items():
            if len(ed) > 1:
                keys = tuple(ed)[1:]
                if not all(type(k) is str for k in keys):
                    raise CodecError("edge attribute keys must be strings")
                extra.append([index[u], index[v],
                              [shape_of(keys), *[enc(ed[k], st) for k in keys]]])
    return {"derived": extra}


def decode_design(doc: Mapping[str, Any]):
    """Rebuild the :class:`~hazlint.design.Design` of :func:`encode_design`, filling the
    networkx adjacency dictionaries directly. Raises ``ValueError`` (or a subclass) on an
    entry that does not fit."""
    from .design import Design
    if not isinstance(doc, Mapping) or doc.get("format") != DESIGN_FORMAT:
        raise CodecError("not a design entry of this format")
    dec = _codec().decoder(doc)
    try:
        ids = doc["ids"]
        shapes = doc["shapes"]
        rows, inputs, edges = doc["nodes"], doc["inputs"], doc["edges"]
        strings = doc["strings"]
        if not (len(rows) == len(inputs) == len(ids)):
            raise CodecError("node tables of different lengths")
        plans = []
        for keys in shapes:
            keys = tuple(keys)
            plans.append((keys, keys.index(_NAME) + 1 if _NAME in keys else 0,
                          keys.index(_INPUTS) + 1 if _INPUTS in keys else 0,
                          tuple(k[1:] if k[:1] in ("=", "#", "@") else k for k in keys),
                          tuple(i + 1 for i, k in enumerate(keys) if k[:1] == "@")))
        import networkx as nx
        g = nx.DiGraph()
        g.graph.update(dec(doc["graph"]))
        if not _has_graph_internals(g):
            raise CodecError("this networkx has other graph internals")
        _node, _succ, _pred = g._node, g._succ, g._pred
        _list = list
        for j, n in enumerate(ids):
            row = rows[j]
            keys, name_at, inputs_at, names, interned = plans[row[0]]
            if len(row) != len(keys) + 1:
                raise CodecError("node row does not fit its shape")
            vals = [dec(v) if type(v) is _list else v for v in row]
            if name_at:
                vals[name_at] = n
            if inputs_at:
                vals[inputs_at] = [ids[i] for i in inputs[j]]
            for k in interned:
                vals[k] = strings[vals[k]]
            it = iter(vals)
            next(it)
            _node[n] = dict(zip(names, it))
            _succ[n] = {}
            _pred[n] = {}
        if "derived" in edges:
            _derive_edges(ids, inputs, _node, _succ, _pred)
            for u, v, row in edges["derived"]:
                keys = plans[row[0]][3]
                if len(row) != len(keys) + 1:
                    raise CodecError("edge row does not fit its shape")
                ed = _succ[ids[u]][ids[v]]
                ed.update(zip(keys, [dec(x) if type(x) is _list else x for x in row[1:]]))
        else:
            _explicit_edges(ids, edges["succ"], edges["pred"], plans, dec, _succ, _pred)
        fields = {k: dec(v) for k, v in doc["fields"].items()}
    except (KeyError, IndexError, TypeError, AttributeError) as exc:
        raise CodecError(f"malformed design entry ({type(exc).__name__}: {exc})") from None
    known = {f.name for f in dataclasses.fields(Design)}
    if not set(fields) <= known:
        raise CodecError("the entry has design fields this code does not know")
    try:
        return Design(graph=g, **fields)
    except TypeError as exc:
        raise CodecError(f"cannot rebuild the design: {exc}") from None


def _derive_edges(ids, inputs, _node, _succ, _pred) -> None:
    """Edges from the nodes' ``inputs``, in the order (and with the ``pins`` lists) the
    flattener's own edge loop produces."""
    for j, n in enumerate(ids):
        if not inputs[j]:
            continue
        ins = _node[n]["inputs"]
        into = _pred[n]
        for pos, u in enumerate(ins):
            ed = into.get(u)
            if ed is None:
                ed = into[u] = {"pins": [pos]}
                _succ[u][n] = ed
            else:
                ed["pins"].append(pos)


def _explicit_edges(ids, succ, pred, plans, dec, _succ, _pred) -> None:
    if not (len(succ) == len(pred) == len(ids)):
        raise CodecError("edge tables of different lengths")
    _list = list
    for j, n in enumerate(ids):
        out = succ[j]
        if out:
            nbrs = _succ[n]
            for k in range(0, len(out), 2):
                row = out[k + 1]
                keys = plans[row[0]][3]
                if len(row) != len(keys) + 1:
                    raise CodecError("edge row does not fit its shape")
                it = iter([dec(v) if type(v) is _list else v for v in row])
                next(it)
                nbrs[ids[out[k]]] = dict(zip(keys, it))
    for j, n in enumerate(ids):
        p = pred[j]
        if p:
            into = _pred[n]
            for i in p:
                u = ids[i]
                into[u] = _succ[u][n]           # one attribute dict per edge, as networkx keeps


# ---------------------------------------------------------------------------------------------
# the cache

class _Store:
    """One namespace of the cache folder, stamped with :func:`code_stamp`."""

    NAMESPACE = ""

    def __init__(self, directory: str | os.PathLike | None = None, *, version: str | None = None,
                 limit_mb: int | None = None):
        self.store_ = ParseCache(directory, namespace=self.NAMESPACE,
                                 version=version if version is not None else code_stamp(),
                                 limit_mb=limit_mb)

    @property
    def enabled(self) -> bool:
        return self.store_.enabled

    def _entry(self, key: str) -> dict | None:
        """The entry's data, or None on a miss; a broken cache never stops a lint run."""
        try:
            return self.store_.load(key)
        except Exception:
            return None


class DesignCache(_Store):
    """``load(key, texts) -> Design | None`` and ``store(key, design, includes, texts)`` over a
    :class:`~hazlint.cache.ParseCache` in namespace ``design``, stamped with :func:`code_stamp`.
    Counters ``hits``/``misses``/``stores``/``dropped`` come from the underlying store."""

    NAMESPACE = NAMESPACE

    @property
    def hits(self) -> int:
        return self.store_.hits

    @property
    def misses(self) -> int:
        return self.store_.misses

    @property
    def stores(self) -> int:
        return self.store_.stores

    @property
    def dropped(self) -> int:
        return self.store_.dropped

    def load(self, key: str, texts: Mapping[str, str] | None = None):
        try:
            data = self.store_.load(key)
        except Exception:           # a broken cache must never stop a lint run
            return None
        if data is None:
            return None
        from .errors import HazlintError
        from .frontend.preprocess import digest_text, read_text
        deps = data.get("deps")
        if not isinstance(deps, dict):
            self.store_.discard(key)
            return None
        for dep, want in deps.items():
            try:
                if digest_text(read_text(dep, texts)) != want:
                    return None      # an included file changed: a miss, not corruption
            except HazlintError:
                return None
        gc_was_enabled = gc.isenabled()
        gc.disable()                 # many small acyclic objects: no cyclic GC passes
        try:
            design = decode_design(data)
        except (ValueError, RecursionError, LookupError, TypeError, AttributeError):
            design = None
        finally:
            if gc_was_enabled:
                gc.enable()
        if design is None:
            self.store_.discard(key)     # well-formed JSON that is not a usable entry
        return design

    def store(self, key: str, design, includes: Iterable[str] = (),
              texts: Mapping[str, str] | None = None) -> bool:
        """Write the entry; False when the design cannot be represented exactly or an include
        cannot be read back (nothing is written then)."""
        from .errors import HazlintError
        from .frontend.preprocess import digest_text, read_text
        deps = {}
        for p in dict.fromkeys(includes):
            try:
                deps[p] = digest_text(read_text(p, texts))
            except HazlintError:
                return False
        try:
            doc = encode_design(design)
        except (CodecError, RecursionError):
            return False
        doc["deps"] = deps
        before = self.store_.stores
        self.store_.store(key, doc)
        return self.store_.stores > before


def open_design_cache(directory: str | os.PathLike | None = None, *,
                      enabled: bool = True, limit_mb: int | None = None) -> DesignCache | None:
    if not enabled:
        return None
    c = DesignCache(directory, limit_mb=limit_mb)
    return c if c.enabled else None


def load_cached(paths: Sequence[str], config, *, texts=None, top=None, include_dirs=(),
                defines=None, root=None, load_fresh, cache: DesignCache | None = None,
                info: dict | None = None):
    """The design for ``paths`` from ``cache`` when an entry matches, else ``load_fresh()``
    (returning ``(design, sources)``), stored for the next run. Entries are not written for
    unsaved editor text (``texts``): each keystroke would leave one behind."""
    if cache is None:
        return load_fresh()[0]
    key = design_key(paths, texts=texts, top=top, include_dirs=include_dirs, defines=defines,
                     root=root, cells=config.cells, cells_source=config.path,
                     liberty=config.liberty, sdf=config.sdf, sdf_corner="minmax",
                     memory_max_bits=config.memory_as_registers_max_bits,
                     frontend=getattr(config, "frontend", "auto"))
    if info is not None:
        info["design_key"] = key
    if key is not None:
        design = cache.load(key, texts)
        if design is not None:
            return design
    design, sources = load_fresh()
    if key is not None and not texts:
        includes = [p for sf in sources for p in getattr(sf, "includes", ())]
        cache.store(key, design, includes)
    return design


# ---------------------------------------------------------------------------------------------
# findings of a run (before waivers, baseline and the changed-files filter)

RESULT_FORMAT = 1
RESULT_NAMESPACE = "result"


def result_key(design_key: str, config, *, select, ignore, prove: bool,
               options: Mapping[str, Any], rules: Iterable[Any]) -> str | None:
    """sha256 over what decides the findings of a design: the design key, the whole
    configuration table plus the resolved rule options, the selection, whether the prover ran
    (and its options), and which rules ran with a stamp of each rule's module file (rules from
    other distributions are not covered by :func:`code_stamp`)."""
    import sys
    ran = []
    for r in rules:
        mod = sys.modules.get(getattr(r.check, "__module__", ""), None)
        f = getattr(mod, "__file__", None)
        try:
            st = os.stat(f) if f else None
        except OSError:
            st = None
        ran.append([r.id, r.origin, str(r.severity), f,
                    [st.st_size, st.st_mtime_ns] if st else None])
    material = {
        "format": RESULT_FORMAT, "design": design_key, "raw": config.raw,
        "config_path": config.path, "root": config.root, "severity": config.severity,
        "async_outputs": config.async_outputs, "static_inputs": config.static_inputs,
        "prove_options": config.prove, "select": None if select is None else list(select),
        "ignore": list(ignore), "prove": bool(prove), "options": options, "rules": ran,
    }
    try:
        text = json.dumps(material, sort_keys=True, default=repr)
    except (TypeError, ValueError):
        return None
    return hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()


class ResultCache(_Store):
    """Findings (a list of :class:`~hazlint.diagnostics.Diagnostic`) by :func:`result_key`,
    in namespace ``result``, stamped with :func:`code_stamp`."""

    NAMESPACE = RESULT_NAMESPACE

    def load(self, key: str):
        data = self._entry(key)
        if data is None:
            return None
        from .diagnostics import Diagnostic
        try:
            if data.get("format") != RESULT_FORMAT:
                raise CodecError("not a result entry of this format")
            diags = _codec().decode(data)
            if not isinstance(diags, list) or not all(isinstance(d, Diagnostic) for d in diags):
                raise CodecError("not a list of findings")
        except (ValueError, RecursionError, AttributeError):
            self.store_.discard(key)
            return None
        return diags

    def store(self, key: str, diagnostics) -> bool:
        try:
            doc = _codec().encode(list(diagnostics))
        except (CodecError, RecursionError):
            return False
        doc["format"] = RESULT_FORMAT
        before = self.store_.stores
        self.store_.store(key, doc)
        return self.store_.stores > before


def open_result_cache(directory: str | os.PathLike | None = None, *,
                      limit_mb: int | None = None) -> ResultCache | None:
    c = ResultCache(directory, limit_mb=limit_mb)
    return c if c.enabled else None


# ---------------------------------------------------------------------------------------------
# finished reports of the command line

REPORT_FORMAT = 2
REPORT_NAMESPACE = "report"


class ReportCache(_Store):
    """The rendered report of a ``check`` run and the worst severity in it, by
    :func:`hazlint.api.report_key`, in namespace ``report``, stamped with :func:`code_stamp`.

    The report text is a file of its own beside the entry (``<key>.txt``; the entry records
    its size), written once by the renderer and copied from there, so a report of hundreds of
    megabytes is never held in memory or escaped into JSON. Files the design pulled in through
    ``include`` are dependencies of the entry: when one of them changed the entry is a miss. A
    hit lets a rerun on unchanged inputs print the same bytes without decoding the design or
    the findings. A report larger than a quarter of the cache's size limit is written, copied
    out and removed again (it would push everything else out of the cache)."""

    NAMESPACE = REPORT_NAMESPACE

    def _text_path(self, key: str) -> Path:
        return self.store_._entry_path(key).with_suffix(".txt")

    def load(self, key: str):
        """``(file, worst)``: the report opened for reading (text, UTF-8) and the highest
        severity (an int of :class:`~hazlint.diagnostics.Severity`) among its findings, None
        for none; or None on a miss. The report file must be a regular file of ours with the
        size and digest the entry recorded; otherwise entry and file are removed."""
        import io
        data = self._entry(key)
        if data is None:
            return None
        size, worst, digest = data.get("size"), data.get("worst"), data.get("digest")
        if (data.get("format") != REPORT_FORMAT or type(size) is not int
                or not (worst is None or type(worst) is int and 0 <= worst <= 2)
                or type(digest) is not str):
            self._drop_both(key)
            return None
        path = self._text_path(key)
        try:
            raw = open_private(path)
        except OSError:
            self._drop_both(key)
            return None
        try:
            if os.fstat(raw.fileno()).st_size != size or digest_stream(raw) != digest:
                raise OSError("the report file is not the one recorded")
            raw.seek(0)
            os.utime(path)
        except OSError:
            raw.close()
            self._drop_both(key)
            return None
        return io.TextIOWrapper(raw, encoding="utf-8", newline=""), worst

    def _drop_both(self, key: str) -> None:
        self.store_.discard(key)
        try:
            self._text_path(key).unlink()
        except OSError:
            pass

    def store(self, key: str, write, worst: int | None, deps: Iterable[str] = ()):
        """Run ``write(stream)`` into the report file for ``key`` and record the entry.
        Returns ``(path, keep)``: where the report is, and False when it is not to be kept
        (too large: the caller removes it after copying it out); None when nothing could be
        written (read-only or full disk) and the caller should render directly."""
        path = self._text_path(key)
        try:
            private_dirs(self.store_.directory, path.parent, create=True)
            atomic_write(path, write)
            size = path.stat().st_size
        except OSError:
            return None
        limit = self.store_.limit_mb * 1024 * 1024
        if limit and size > limit // 4:
            return path, False
        digest = digest_file(path)
        if digest is not None:
            self.store_.store(key, {"format": REPORT_FORMAT, "worst": worst, "size": size,
                                    "digest": digest}, deps=list(dict.fromkeys(deps)))
        return path, True


def open_report_cache(directory: str | os.PathLike | None = None, *,
                      limit_mb: int | None = None) -> ReportCache | None:
    c = ReportCache(directory, limit_mb=limit_mb)
    return c if c.enabled else None


__all__ = ["DesignCache", "ReportCache", "ResultCache", "open_report_cache", "result_key", "open_result_cache", "code_stamp", "decode_design", "design_key", "encode_design",
           "load_cached", "open_design_cache", "default_cache_dir"]
