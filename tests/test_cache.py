"""Parse cache: JSON entries, atomic writes, keys, invalidation, corruption handling."""
from __future__ import annotations

import json
import os

import pytest

from hazlint.store.keys import make_key
from hazlint.store.parse import ParseCache, open_cache
from hazlint import ir


def sample_ir(path):
    m = ir.Module(name="press_top", port_order=["a", "y"],
                  ports={"a": ir.Port("a", "input", loc=ir.Loc(path, 2)),
                         "y": ir.Port("y", "output", width=(("num", None, 3, 0, False),
                                                            ("num", None, 0, 0, False)))},
                  items=[ir.Assign(("id", "y"), ("unop", "~", ("id", "a")),
                                   loc=ir.Loc(path, 4, 3), attrs={"keep": 1})],
                  loc=ir.Loc(path, 1))
    return ir.SourceFile(path=path, modules=[m], notes=[(ir.Loc(path, 5), "note")],
                         digest="abc")


def test_round_trip_of_ir(tmp_path):
    c = ParseCache(tmp_path / "c")
    src = sample_ir(str(tmp_path / "a.v"))
    k = make_key("module press_top; endmodule")
    assert c.load(k) is None and c.misses == 1
    c.store(k, ir.to_json(src))
    got = ParseCache(tmp_path / "c").load(k)
    assert ir.from_json(got) == src
    # entries are plain JSON on disk (never pickle)
    files = list((tmp_path / "c").rglob("*.json"))
    assert len(files) == 1 and json.loads(files[0].read_text())["key"] == k
    assert not list((tmp_path / "c").rglob(".tmp-*"))      # atomic write left no temp file


def test_key_covers_all_inputs():
    base = make_key("x", defines={"A": "1"}, include_dirs=["inc"], included={"h.vh": "1"})
    assert base == make_key("x", defines={"A": "1"}, include_dirs=["inc"],
                            included={"h.vh": "1"})
    variants = [make_key("y", defines={"A": "1"}, include_dirs=["inc"], included={"h.vh": "1"}),
                make_key("x", defines={"A": "2"}, include_dirs=["inc"], included={"h.vh": "1"}),
                make_key("x", defines={"A": "1"}, include_dirs=["inc2"], included={"h.vh": "1"}),
                make_key("x", defines={"A": "1"}, include_dirs=["inc"], included={"h.vh": "2"}),
                make_key("x", defines={"A": "1"}, include_dirs=["inc"], included={"h.vh": "1"},
                         version="9.9")]
    assert len(set(variants) | {base}) == 6


def test_included_file_change_invalidates(tmp_path):
    inc = tmp_path / "defs.vh"
    inc.write_text("`define W 4\n")
    c = ParseCache(tmp_path / "c")
    k = make_key("`include \"defs.vh\"")
    c.store(k, {"path": "a.v"}, deps=[str(inc)])
    assert c.load(k) is not None
    inc.write_text("`define W 8\n")
    assert c.load(k) is None
    inc.unlink()
    assert c.load(k) is None


def test_corrupted_entries_are_ignored_and_removed(tmp_path):
    c = ParseCache(tmp_path / "c")
    for i, junk in enumerate([b"{trunc", b"\xff\xfe", b"[1, 2]",
                              json.dumps({"format": 1, "key": "wrong", "data": {}}).encode()]):
        k = make_key(f"file {i}")
        c.store(k, {"x": i})
        entry = c._entry_path(k)
        entry.write_bytes(junk)
        assert c.load(k) is None
        assert not entry.exists()
    assert c.dropped == 4


def test_disabled_and_odd_keys(tmp_path):
    assert open_cache(tmp_path, enabled=False) is None
    c = ParseCache(tmp_path / "c", enabled=False)
    c.store(make_key("a"), {"a": 1})
    assert not (tmp_path / "c").exists()
    c = ParseCache(tmp_path / "c")
    c.store("../../escape", {"a": 1})     # not hex: hashed, stays inside the cache folder
    assert c.load("../../escape") == {"a": 1}
    assert all(str(p).startswith(str(tmp_path / "c")) for p in tmp_path.rglob("*.json"))


def test_env_var_and_default_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("HAZLINT_CACHE_DIR", str(tmp_path / "env"))
    assert ParseCache().directory == tmp_path / "env"
    monkeypatch.delenv("HAZLINT_CACHE_DIR")
    d = ParseCache(enabled=False).directory
    assert "hazlint" in str(d) and os.path.isabs(d)


def test_progress_only_after_delay_and_only_on_terminal():
    import io

    from hazlint.progress import Progress

    class Tty(io.StringIO):
        def isatty(self):
            return True

    now = [0.0]
    out = Tty()
    p = Progress(out, delay=2.0, clock=lambda: now[0])
    p(1, 10, "rtl/a.v")
    assert out.getvalue() == ""            # a short run never draws
    now[0] = 3.0
    p(2, 10, "rtl/b.v")
    assert "2/10" in out.getvalue() and "b.v" in out.getvalue()
    p.close()
    assert out.getvalue().endswith("\r")
    pipe = io.StringIO()                   # not a terminal: nothing, whatever the time
    q = Progress(pipe, delay=0.0, clock=lambda: now[0])
    q(5, 10, "x.v")
    q.close()
    assert pipe.getvalue() == ""


def test_entry_from_other_reader_code_is_a_miss(tmp_path):
    # the entry records which reader code wrote it (version + source stamp)
    k = make_key("module m; endmodule")
    ParseCache(tmp_path, version="0.1.0+aaaa").store(k, {"a": 1})
    assert ParseCache(tmp_path, version="0.1.0+bbbb").load(k) is None
    assert ParseCache(tmp_path, version="0.1.0+aaaa").load(k) == {"a": 1}
    assert ParseCache(tmp_path).version.startswith("0.1.0+")


# ---------------------------------------------------------------------------------------------
# through the command line

VALVE = """\
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire n_guard, run, bypass;
  not g_inv (n_guard, guard_closed);
  and g_run (run, two_hand, guard_closed);
  and g_byp (bypass, maint_key, n_guard);
  or  g_out (valve_enable, run, bypass);
endmodule
"""


def cli(cwd, *args):
    import subprocess
    import sys
    env = dict(os.environ)
    env.pop("HAZLINT_CACHE_DIR", None)
    # (the valve drives a plain output: listed at the wider scope)
    return subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-prove",
                           "--scope", "outputs", "--format", "json", *args], cwd=cwd,
                          capture_output=True, text=True,
                          env=env)


@pytest.mark.slow
def test_cli_cache_dir_no_cache_jobs_and_corruption(tmp_path):
    (tmp_path / "valve.v").write_text(VALVE)
    (tmp_path / "top.v").write_text(
        "module top(input g, input h, input k, output v);\n"
        "  press_valve u (.guard_closed(g), .two_hand(h), .maint_key(k), .valve_enable(v));\n"
        "endmodule\n")
    cache = tmp_path / "cache"
    cold = cli(tmp_path, "--cache-dir", str(cache), "top.v", "valve.v")
    assert cold.returncode == 1, cold.stderr
    entries = sorted((cache / "parse").rglob("*.json"))
    assert len(entries) == 2                       # one entry per source file
    assert len(list((cache / "design").rglob("*.json"))) == 1     # and one for the design
    stamp = [p.stat().st_mtime_ns for p in entries]
    warm = cli(tmp_path, "--cache-dir", str(cache), "top.v", "valve.v")
    assert warm.stdout == cold.stdout
    assert [p.stat().st_mtime_ns for p in entries] == stamp     # served, not rewritten
    # corrupted entries (the report's, the design's and a file's) are dropped and rebuilt;
    # same result
    (design_entry,) = (cache / "design").rglob("*.json")
    design_entry.write_bytes(design_entry.read_bytes()[:200])
    entries[0].write_text('{"format": 1, "key": "')
    (report_text,) = (cache / "report").rglob("*.txt")
    report_text.write_text(cold.stdout[:-10])                   # truncated
    again = cli(tmp_path, "--cache-dir", str(cache), "top.v", "valve.v")
    assert again.stdout == cold.stdout and again.returncode == 1
    assert json.loads(entries[0].read_text())["format"] == 2
    assert json.loads(design_entry.read_text())["format"] == 2
    assert report_text.read_text() == cold.stdout
    # parallel parsing gives the same findings
    par = cli(tmp_path, "--no-cache", "-j", "2", "top.v", "valve.v")
    assert par.stdout == cold.stdout, par.stderr
    # --no-cache writes nothing, anywhere under the given folder
    nc = tmp_path / "unused"
    cli(tmp_path, "--no-cache", "--cache-dir", str(nc), "top.v", "valve.v")
    assert not nc.exists()


# ---------------------------------------------------------------------------------------------
# positional encoding (Codec) and the compact IR

from dataclasses import dataclass, field  # noqa: E402
import enum  # noqa: E402

from hazlint.store.codec import Codec, CodecError  # noqa: E402


@dataclass
class _Pt:
    name: str
    at: tuple = ()
    tags: list = field(default_factory=list)


@dataclass(frozen=True)
class _Val:
    lo: float
    hi: float


class _Level(enum.IntEnum):
    LOW = 0
    HIGH = 1


def _through_json(doc):
    return json.loads(json.dumps(doc, separators=(",", ":")))


def test_codec_keeps_python_types():
    codec = Codec([_Pt, _Val, _Level], shared=[_Val], interned={_Pt: ("name",)})
    v = _Val(1.0, 2.5)
    obj = {"pts": [_Pt("p", (3, "x"), [v, v, ()]), _Pt("p", ((1,), [2]), [])],
           (1, "k"): (True, None, 0.1, -3),     # a tuple key, a tuple starting with a bool
           "empty": ([], (), {}), "lvl": [_Level.HIGH, _Level.LOW],
           "ints": (1, 2), "neg": (-1, -4), "nested": [[-3, 1], (-2,)]}
    doc = _through_json(codec.encode(obj))
    back = codec.decode(doc)
    assert back == obj
    # exact types, not only equality (1 == True, [] != () but check the insides too)
    assert type(back["empty"][0]) is list and type(back["empty"][1]) is tuple
    assert type(back["ints"]) is tuple and type(back["nested"][0]) is list
    assert back[(1, "k")][0] is True and type(back["lvl"][0]) is _Level
    # shared values are written once and come back as one object
    assert len(doc["shared"]) == 1
    assert back["pts"][0].tags[0] is back["pts"][0].tags[1]
    assert doc["strings"] == ["p"]      # interned field: one string for both points


@dataclass(frozen=True)
class _Pair:
    a: _Val
    b: _Val


def test_codec_shared_values_inside_shared_values():
    codec = Codec([_Pair, _Val], shared=[_Pair, _Val])
    v, w = _Val(1.0, 2.0), _Val(3.0, 4.0)
    obj = [_Pair(v, w), _Pair(w, v), _Pair(v, w)]
    doc = _through_json(codec.encode(obj))
    assert len(doc["shared"]) == 4
    back = codec.decode(doc)
    assert back == obj and back[0] is back[2] and back[0].a is back[1].b


def test_codec_rejects_what_it_does_not_know():
    codec = Codec([_Pt])
    with pytest.raises(CodecError):
        codec.encode({"s": {1, 2}})          # a set is not plain data
    with pytest.raises(CodecError):
        codec.encode(_Val(1, 2))             # not a registered class
    doc = _through_json(codec.encode(_Pt("a")))
    bad_docs = []
    for mutate in (lambda d: d.update(codec=99),
                   lambda d: d["classes"][0].__setitem__(0, "os.system"),
                   lambda d: d["classes"][0][1].append("extra"),
                   lambda d: d.update(root=[7, "a"]),
                   lambda d: d.update(root=[-9]),
                   lambda d: d.update(root=[-3, "odd"]),
                   lambda d: d.update(root=[0, "a", []])):
        d = json.loads(json.dumps(doc))
        mutate(d)
        bad_docs.append(d)
    for d in bad_docs:
        with pytest.raises(CodecError):
            codec.decode(d)


def test_codec_reads_an_older_class_layout_by_name():
    codec = Codec([_Pt])
    doc = _through_json(codec.encode(_Pt("a", (1,), ["t"])))
    # an entry written when the class had fields in another order and no 'tags'
    doc["classes"] = [["_Pt", ["at", "name"]]]
    doc["root"] = [0, [-2, 1], "a"]
    assert codec.decode(doc) == _Pt("a", (1,), [])


def _bench_netlists():
    import importlib.resources
    base = importlib.resources.files("circuitgraph")
    return [base.joinpath(f"netlists/{n}") for n in ("c7552.v", "sin.v", "c17.v")]


def _fixture_files():
    from pathlib import Path
    root = Path(__file__).resolve().parent.parent / "fixtures"
    return sorted(p for p in root.rglob("*.v") if "inc" not in p.parts)


@pytest.mark.slow
def test_compact_ir_round_trip_on_benchmarks_and_fixtures():
    import importlib.resources

    from hazlint.errors import HazlintError
    from hazlint.frontends.verilog.reader import read_sources
    sources = []
    for p in _bench_netlists():
        with importlib.resources.as_file(p) as f:
            sources += read_sources([str(f)])
    n_fixtures = 0
    for p in _fixture_files():
        try:
            sources += read_sources([str(p)], include_dirs=[str(p.parent / "inc")])
            n_fixtures += 1
        except HazlintError:
            pass           # fixtures that show a reader error have no IR to round-trip
    assert n_fixtures >= 20
    for sf in sources:
        doc = ir.to_compact(sf)
        text = json.dumps(doc, separators=(",", ":"))
        back = ir.from_compact(json.loads(text))
        assert back == sf, sf.path
        if sum(len(m.items) for m in sf.modules) > 1000:
            # on a netlist the old named form is several times larger (field names per object)
            assert 2 * len(text) < len(json.dumps(ir.to_json(sf), separators=(",", ":")))


def test_corrupted_compact_entry_is_removed_by_the_reader(tmp_path):
    from hazlint.frontends.verilog.reader import read_sources
    src = tmp_path / "valve.v"
    src.write_text(VALVE)
    c = ParseCache(tmp_path / "c")
    first = read_sources([str(src)], cache=c)
    (entry,) = (tmp_path / "c").rglob("*.json")
    doc = json.loads(entry.read_text())
    doc["data"]["ir"]["root"] = [99, "junk"]          # valid JSON, not an IR we can use
    entry.write_text(json.dumps(doc))
    again = read_sources([str(src)], cache=ParseCache(tmp_path / "c"))
    assert again == first                              # parsed afresh
    doc = json.loads(entry.read_text())                # and the entry was rewritten
    assert ir.from_compact(doc["data"]["ir"]) == first[0]
    entry.write_bytes(entry.read_bytes()[:100])        # truncated
    c3 = ParseCache(tmp_path / "c")
    assert read_sources([str(src)], cache=c3) == first and c3.dropped == 1


def test_size_limit_removes_least_recently_used_entries(tmp_path, monkeypatch):
    import time as _time
    from hazlint.store import entries as C, files, parse
    monkeypatch.setattr(C, "PRUNE_INTERVAL", 0.0)
    c = parse.ParseCache(tmp_path, namespace="parse", limit_mb=1)
    blob = "x" * 300_000                          # about 0.3 MB per entry
    keys = [files.digest_bytes(str(i).encode()) for i in range(3)]
    for i, k in enumerate(keys):
        c.store(k, {"blob": blob})
        p = c._entry_path(k)
        t = _time.time() - 1000 + i * 10          # distinct ages, oldest first
        os.utime(p, (t, t))
    assert c.pruned == 0 and all(c._entry_path(k).exists() for k in keys)   # 0.9 MB: under
    assert c.load(keys[0]) is not None            # a hit: entry 0 is now the most recent
    new = files.digest_bytes(b"new")
    c.store(new, {"blob": blob})                  # 1.2 MB: over the limit, prune to 0.8 MB
    assert c.pruned == 2
    assert c._entry_path(new).exists() and c._entry_path(keys[0]).exists()
    assert not c._entry_path(keys[1]).exists() and not c._entry_path(keys[2]).exists()
    # 0 means no limit
    assert C.prune(tmp_path, 0) == 0


def test_cache_limit_from_configuration_and_environment(tmp_path, monkeypatch):
    from hazlint.store import entries as C
    from hazlint.config import load_config
    monkeypatch.setenv(C.ENV_LIMIT, "17")
    assert C.cache_limit_mb() == 17 and C.cache_limit_mb(5) == 5
    monkeypatch.delenv(C.ENV_LIMIT)
    assert C.cache_limit_mb() == C.DEFAULT_LIMIT_MB
    (tmp_path / "hazlint.toml").write_text("cache_limit_mb = 64\n")
    assert load_config(cwd=tmp_path).cache_limit_mb == 64
