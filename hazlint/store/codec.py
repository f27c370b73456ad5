"""Positional JSON encoding of a closed set of classes (the IR, the flattened design): the
one codec of the cache. Loading never executes code: only the listed classes are rebuilt."""
from __future__ import annotations

from typing import Any, Iterable, Mapping

CODEC_FORMAT = 1

# tags: the first element of a JSON list, when it is an int (never a bool)
#   i >= 0        instance of class i: [i, field values in the class table's order...]
#                 (an enum: [i, value])
#   T_LIST        a Python list:    [-1, items...]
#   T_TUPLE       a tuple whose first item is an int: [-2, items...]; any other tuple is the
#                 plain JSON list of its items (expressions, the common case, carry no tag)
#   T_DICT        a dict:           [-3, key, value, key, value...]
#   T_SHARED      a shared value:   [-4, index into the entry's "shared" table]
T_LIST, T_TUPLE, T_DICT, T_SHARED = -1, -2, -3, -4


class CodecError(ValueError):
    """An object the codec cannot encode, or an encoded document it cannot decode."""


class Codec:
    """Encode and decode plain data plus instances of ``classes`` as compact JSON values.

    Field names are written once per document (a class table ``[[name, [field, ...]], ...]``),
    never per object, so an instance is a JSON list ``[class index, value, ...]``. Lists,
    tuples and dicts keep their Python type through a round trip. Instances of ``shared``
    classes (frozen, hashable values such as delays) are written once into a table and
    referenced by index; decoding gives one object per distinct value. ``interned`` maps a
    class to field names whose string values go through a string table (file paths repeated
    in every location).

    Decoding builds only the registered classes (by table lookup, never by a name taken from
    the document to import something) and calls nothing else: loading an entry cannot run
    code. An entry written when a class had other fields is decoded by field name when the
    current class still has every field it names, and rejected (:class:`CodecError`) otherwise.
    """

    def __init__(self, classes: Iterable[type], shared: Iterable[type] = (),
                 interned: Mapping[type, Iterable[str]] | None = None):
        import dataclasses
        import enum
        self.classes = list(classes)
        self.index = {c: i for i, c in enumerate(self.classes)}
        self.by_name = {c.__name__: c for c in self.classes}
        self.shared = frozenset(shared)
        self.is_enum = {c: isinstance(c, type) and issubclass(c, enum.Enum) for c in self.classes}
        self.fields = {c: () if self.is_enum[c] else tuple(f.name for f in dataclasses.fields(c))
                       for c in self.classes}
        interned = interned or {}
        self.interned = {c: tuple(self.fields[c].index(n) for n in interned.get(c, ()))
                         for c in self.classes}

    # ------------------------------------------------------------------------------------------
    def encode(self, obj: Any) -> dict:
        """``{"codec": n, "classes": [...], "strings": [...], "shared": [...], "root": ...}``"""
        state = EncodeState()
        root = self._enc(obj, state)
        return {"codec": CODEC_FORMAT,
                "classes": [[c.__name__, list(self.fields[c])] for c in self.classes],
                "strings": state.strings, "shared": state.shared, "root": root}

    def encode_value(self, obj: Any, state: "EncodeState") -> Any:
        return self._enc(obj, state)

    def header(self, state: "EncodeState") -> dict:
        return {"codec": CODEC_FORMAT,
                "classes": [[c.__name__, list(self.fields[c])] for c in self.classes],
                "strings": state.strings, "shared": state.shared}

    def _enc(self, x: Any, st: "EncodeState") -> Any:
        t = type(x)
        if t is str or t is int or t is float or t is bool or x is None:
            return x
        if t is tuple:
            items = [self._enc(v, st) for v in x]
            if items and type(x[0]) is int:
                items.insert(0, T_TUPLE)
            return items
        if t is list:
            return [T_LIST, *[self._enc(v, st) for v in x]]
        if t is dict:
            out = [T_DICT]
            for k, v in x.items():
                out.append(self._enc(k, st))
                out.append(self._enc(v, st))
            return out
        i = self.index.get(t)
        if i is None and getattr(t, "encode_as", None) in self.index:
            t = t.encode_as             # a subclass stored as its base (a lazily read module)
            i = self.index[t]
        if i is None:
            raise CodecError(f"cannot encode a {t.__name__} value")
        if self.is_enum[t]:
            return [i, x.value]
        if t in self.shared:
            j = st.shared_index.get(x)
            if j is None:
                # fields first: a shared value inside gets the lower index, so decoding the
                # table in order always finds what an entry refers to
                encoded = self._enc_fields(x, t, i, st)
                j = st.shared_index[x] = len(st.shared)
                st.shared.append(encoded)
            return [T_SHARED, j]
        return self._enc_fields(x, t, i, st)

    def _enc_fields(self, x, t, i, st) -> list:
        out = [i]
        interned = self.interned[t]
        for k, name in enumerate(self.fields[t]):
            v = getattr(x, name)
            if k in interned and type(v) is str:
                out.append(st.string(v))
            else:
                out.append(self._enc(v, st))
        return out

    # ------------------------------------------------------------------------------------------
    def decoder(self, doc: Mapping[str, Any]) -> "Decoder":
        """A decoder for values encoded with the header ``doc`` (class table, strings,
        shared values). Raises :class:`CodecError` when the document does not fit."""
        return Decoder(self, doc)

    def decode(self, doc: Mapping[str, Any]) -> Any:
        dec = self.decoder(doc)
        return dec(doc.get("root"))


class EncodeState:
    def __init__(self):
        self.strings: list[str] = []
        self.string_index: dict[str, int] = {}
        self.shared: list = []
        self.shared_index: dict = {}

    def string(self, s: str) -> int:
        i = self.string_index.get(s)
        if i is None:
            i = self.string_index[s] = len(self.strings)
            self.strings.append(s)
        return i


class Decoder:
    def __init__(self, codec: Codec, doc: Mapping[str, Any]):
        if not isinstance(doc, Mapping) or doc.get("codec") != CODEC_FORMAT:
            raise CodecError("not an entry of this codec format")
        table = doc.get("classes")
        strings = doc.get("strings", [])
        if not isinstance(table, list) or not isinstance(strings, list):
            raise CodecError("malformed class table")
        self.strings = strings
        # per class index of the document: (constructor taking the positional values)
        makers = []
        for row in table:
            if (not isinstance(row, list) or len(row) != 2 or not isinstance(row[0], str)
                    or not isinstance(row[1], list)):
                raise CodecError("malformed class table")
            cls = codec.by_name.get(row[0])
            if cls is None:
                raise CodecError(f"unknown class '{row[0]}'")
            makers.append(self._maker(codec, cls, tuple(row[1])))
        self.makers = makers
        self.shared: list = []
        self._dec = self._make_dec()
        shared = doc.get("shared", [])
        if not isinstance(shared, list):
            raise CodecError("malformed shared table")
        for v in shared:
            # shared values may refer to earlier shared values only (encode order)
            self.shared.append(self(v))

    def _maker(self, codec: Codec, cls, names: tuple):
        if codec.is_enum[cls]:
            def make_enum(args, _c=cls):
                try:
                    return _c(args[0])
                except (ValueError, IndexError):
                    raise CodecError(f"{_c.__name__}: bad value") from None
            return make_enum
        have = codec.fields[cls]
        strings = self.strings
        if names == have:
            positions = codec.interned[cls]
        else:
            if not set(names) <= set(have):
                raise CodecError(f"{cls.__name__}: the entry names fields this code lacks")
            positions = tuple(k for k, nm in enumerate(names)
                              if have.index(nm) in codec.interned[cls])
        n = len(names)

        def make(args, _n=n, _new=object.__new__, _c=cls, _names=names, _pos=positions,
                 _exact=names == have):
            if len(args) != _n:
                raise CodecError(f"{_c.__name__}: wrong number of fields")
            for k in _pos:
                try:
                    args[k] = strings[args[k]]
                except (IndexError, TypeError):
                    raise CodecError("string index out of range") from None
            if _exact:
                # every field is given: fill the instance directly (what the generated
                # __init__ would do, without its per-call overhead)
                obj = _new(_c)
                obj.__dict__.update(zip(_names, args))
                return obj
            # another layout of the class: the constructor gives new fields their defaults
            return _c(**dict(zip(_names, args)))
        return make

    def __call__(self, x: Any) -> Any:
        if type(x) is not list:
            return x
        return self._dec(x)

    def _make_dec(self):
        # the hot loop of a warm run: a closure over locals, scalars never recursed into
        makers = self.makers
        shared = self.shared
        _list, _int, _tuple = list, int, tuple

        def dec(x):
            if not x:
                return ()
            h = x[0]
            if type(h) is _int:
                vals = [dec(v) if type(v) is _list else v for v in x]
                if h >= 0:
                    vals[0:1] = ()
                    try:
                        return makers[h](vals)
                    except IndexError:
                        raise CodecError("class index out of range") from None
                del vals[0]
                if h == T_LIST:
                    return vals
                if h == T_TUPLE:
                    return _tuple(vals)
                if h == T_DICT:
                    if len(vals) % 2:
                        raise CodecError("a dict with a key but no value")
                    it = iter(vals)
                    return {(_hashable(k) if type(k) is _list else k): v for k, v in zip(it, it)}
                if h == T_SHARED:
                    try:
                        return shared[x[1]]
                    except (IndexError, TypeError):
                        raise CodecError("shared index out of range") from None
                raise CodecError(f"unknown tag {h}")
            return _tuple([dec(v) if type(v) is _list else v for v in x])
        return dec


def _hashable(x):
    return tuple(_hashable(i) for i in x) if isinstance(x, list) else x
