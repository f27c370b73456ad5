"""LALR tables of the grammar, kept as a JSON entry of the hazlint cache.

Tables are generated once per grammar signature and kept under the namespace ``parser`` of the
same folder as every other entry (``--cache-dir``, ``cache_dir``, ``HAZLINT_CACHE_DIR``, else
the per-user cache folder), with their key and digest checked like any entry; nothing is written
to the working directory and no pickle is used. Tables read back are validated (every state,
action, goto and production refers to something that exists) and rebuilt when they are not
valid. With ``tables=False`` (``--no-cache``) or an unusable cache folder they are built in
memory.
"""
from __future__ import annotations

import hashlib
import os
import types

import ply
import ply.yacc as yacc

from ... import __version__

_HERE = os.path.dirname(os.path.abspath(__file__))


def build(parser, tables, source_file: str):
    """Give ``parser`` (an :class:`~hazlint.frontends.verilog.grammar.HzParser`) its ply
    parser: LALR tables from ``tables`` (a cache with ``load``/``store``/``discard``; None: the
    default cache folder; False: none), else generated (and stored). Sets ``parser.parser``,
    ``parser.tables_source`` ("cache" or "generated") and ``parser.tables_path``."""
    pdict = {k: getattr(parser, k) for k in dir(parser)}
    pdict["__file__"] = source_file
    reflect = yacc.ParserReflect(pdict, log=yacc.NullLogger())
    reflect.get_all()
    signature = reflect.signature()
    key = hashlib.sha256("\0".join([__version__, ply.__version__, yacc.__tabversion__,
                                    signature]).encode()).hexdigest()
    store = _table_store(tables)
    tabmod = None
    if store is not None:
        try:
            tabmod = _tables_module(store.load(key), signature, pdict)
        except Exception:          # a broken cache never stops a run
            tabmod = None
        if tabmod is None:
            store.discard(key)
    try:
        parser.parser = _yacc(parser, tabmod)
    except Exception:
        if tabmod is None:
            raise
        store.discard(key)         # valid-looking tables that ply cannot use: rebuild
        tabmod = None
        parser.parser = _yacc(parser, None)
    if tabmod is not None and tabmod._lr_action is parser.parser.action:
        parser.tables_source = "cache"
    else:
        parser.tables_source = "generated"
        if store is not None:
            store.store(key, _tables_data(parser.parser, signature))
    if store is not None:
        parser.tables_path = str(store._entry_path(key))


def _table_store(tables):
    """The cache the tables live in: ``tables`` itself, the default cache folder (None) or
    none (False, or a cache folder hazlint may not use)."""
    if tables is False:
        return None
    if tables is not None:
        return tables
    from ...store.parse import open_cache
    return open_cache(namespace="parser", version=f"{__version__}+tables")


def _yacc(module, tabmod):
    if tabmod is None:
        tabmod = types.ModuleType("hazlint_parsetab_missing")
        tabmod._tabversion = "none"
    return yacc.yacc(module=module, method="LALR", tabmodule=tabmod, debug=False,
                     write_tables=False, optimize=False, outputdir=_HERE,
                     errorlog=yacc.NullLogger(), start=module.start)


def _tables_module(data, signature: str, pdict: dict):
    """The tables of a cache entry as the module ply reads, or None when they are not valid
    for this grammar: other version or signature, or any state, action, goto or production
    that refers to something that does not exist (a corrupted entry must cost a rebuild,
    never a crash)."""
    if not isinstance(data, dict) or data.get("signature") != signature \
            or data.get("tabversion") != yacc.__tabversion__ or data.get("method") != "LALR":
        return None
    prods, action, goto = data.get("productions"), data.get("action"), data.get("goto")
    if not (isinstance(prods, list) and isinstance(action, list) and isinstance(goto, list)
            and prods and action):
        return None
    for pr in prods:
        if not (isinstance(pr, list) and len(pr) == 6 and isinstance(pr[0], str)
                and isinstance(pr[1], str) and type(pr[2]) is int and pr[2] >= 0
                and (pr[3] is None or isinstance(pr[3], str) and callable(pdict.get(pr[3])))
                and isinstance(pr[4], str) and type(pr[5]) is int):
            return None
    n_states, n_prods = len(action), len(prods)

    def table(rows, ok):
        out = {}
        for row in rows:
            if not (isinstance(row, list) and len(row) == 2 and type(row[0]) is int
                    and 0 <= row[0] < n_states and row[0] not in out
                    and isinstance(row[1], list)):
                return None
            entries = {}
            for item in row[1]:
                if not (isinstance(item, list) and len(item) == 2 and isinstance(item[0], str)
                        and type(item[1]) is int and ok(item[1])):
                    return None
                entries[item[0]] = item[1]
            out[row[0]] = entries
        return out
    act = table(action, lambda a: (0 < a < n_states) or (-n_prods < a <= 0))
    got = table(goto, lambda g: 0 <= g < n_states)
    if act is None or got is None or len(act) != n_states:
        return None
    mod = types.ModuleType("hazlint_parsetab")
    mod._tabversion = data["tabversion"]
    mod._lr_method = data["method"]
    mod._lr_signature = data["signature"]
    mod._lr_action = act
    mod._lr_goto = got
    mod._lr_productions = [tuple(p) for p in prods]
    return mod


def _tables_data(parser, signature: str) -> dict:
    return {
        "tabversion": yacc.__tabversion__,
        "method": "LALR",
        "signature": signature,
        "action": [[s, list(a.items())] for s, a in parser.action.items()],
        "goto": [[s, list(g.items())] for s, g in parser.goto.items()],
        "productions": [[pr.str, pr.name, pr.len, pr.func, os.path.basename(pr.file or ""),
                         pr.line] for pr in parser.productions],
    }
