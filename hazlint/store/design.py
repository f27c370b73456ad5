"""A cache of flattened designs: skip reading *and* elaborating on an unchanged rerun.

The parse cache (:mod:`hazlint.store.parse`) saves the parsing of each file, but a warm run still
rebuilt the IR and flattened the hierarchy. This cache stores the finished
:class:`~hazlint.netlist.design.Design` (after SDF back-annotation) as compact JSON, keyed by everything
elaboration depends on (:func:`design_key`):

* every input file's path and content digest (editor buffers in ``texts`` included); files
  pulled in through ``include`` are recorded in the entry with their digests and re-checked on
  load, so an edited header is a miss even though no input file changed;
* the top module(s), include directories, ``defines``, the include root;
* the cell library: the configured ``cells`` table and the contents of every Liberty file;
* the SDF files' contents and the annotation corner; the default gate delay;
* the hazlint version and a stamp of every source file of ``hazlint`` and ``hazlint_rules``
  (name, size, mtime), the networkx version (the graph is rebuilt through its internals).

Format (``data`` of a :class:`hazlint.store.parse.ParseCache` entry in namespace ``design``)::

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
import hashlib
import json
import os
from typing import Any, Iterable, Mapping, Sequence


from ..gcpause import collector_paused
from ..options import SDF_CORNER
from .codec import Codec, CodecError, EncodeState
from .files import digest_file
from .namespace import Namespace

DESIGN_FORMAT = 1
NAMESPACE = "design"

_NAME = "=name"
_INPUTS = "#inputs"
_INTERNED = ("path",)      # node attributes whose text repeats on every node: a string table
_AT = {k: "@" + k for k in _INTERNED}


def design_key(paths: Sequence[str], *, texts: Mapping[str, str] | None = None, top=None,
               include_dirs: Iterable[str] = (), defines: Mapping[str, Any] | None = None,
               root: str | None = None, cells: Mapping[str, Any] | None = None,
               cells_source: str | None = None, liberty: Iterable[str] = (),
               sdf: Iterable[str] = (), sdf_corner: str = SDF_CORNER,
               default_delay: Any = None, memory_max_bits: int | None = None,
               frontend: str = "auto") -> str | None:
    """sha256 over every input of reading, elaborating and annotating a design, or None when
    one of them cannot be read (the uncached load then reports the problem)."""
    from ..frontends.files import digest_text, read_text
    from ..errors import HazlintError
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
    from ..frontends.registry import key_material
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


def design_codec() -> Codec:
    global _CODEC
    if _CODEC is None:
        from ..netlist.design import BlackBox, Register
        from ..diagnostics import Diagnostic, Hop, Location, Related, Severity
        from ..findings.evidence import CLASSES as EVIDENCE
        from ..netlist.library import Delay
        _CODEC = Codec([Delay, Location, Hop, Related, Diagnostic, Severity, Register, BlackBox,
                        *EVIDENCE], shared=[Delay, Location, Hop])
    return _CODEC


def _has_graph_internals(g) -> bool:
    import networkx as nx
    return (type(g) is nx.DiGraph and isinstance(getattr(g, "_node", None), dict)
            and isinstance(getattr(g, "_succ", None), dict)
            and isinstance(getattr(g, "_pred", None), dict) and g._adj is g._succ)


def encode_design(design) -> dict:
    """The design as a compact JSON document (see the module docstring). Raises
    :class:`~hazlint.store.codec.CodecError` for anything it cannot represent exactly."""
    g = design.graph
    if not _has_graph_internals(g):
        raise CodecError("the gate graph is not a plain networkx.DiGraph")
    codec = design_codec()
    st = EncodeState()
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
    """Rebuild the :class:`~hazlint.netlist.design.Design` of :func:`encode_design`, filling the
    networkx adjacency dictionaries directly. Raises ``ValueError`` (or a subclass) on an
    entry that does not fit."""
    from ..netlist.design import Design
    if not isinstance(doc, Mapping) or doc.get("format") != DESIGN_FORMAT:
        raise CodecError("not a design entry of this format")
    dec = design_codec().decoder(doc)
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



class DesignCache(Namespace):
    """``load(key, texts) -> Design | None`` and ``store(key, design, includes, texts)`` over a
    :class:`~hazlint.store.parse.ParseCache` in namespace ``design``, stamped with :func:`code_stamp`.
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
        from ..errors import HazlintError
        from ..frontends.files import digest_text, read_text
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
        try:
            with collector_paused():     # many small acyclic objects: no cyclic GC passes
                design = decode_design(data)
        except (ValueError, RecursionError, LookupError, TypeError, AttributeError):
            design = None
        if design is None:
            self.store_.discard(key)     # well-formed JSON that is not a usable entry
        return design

    def store(self, key: str, design, includes: Iterable[str] = (),
              texts: Mapping[str, str] | None = None) -> bool:
        """Write the entry; False when the design cannot be represented exactly or an include
        cannot be read back (nothing is written then)."""
        from ..errors import HazlintError
        from ..frontends.files import digest_text, read_text
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
