"""Parse cache: JSON entries, atomic writes, keys, invalidation, corruption handling."""
from __future__ import annotations

import json
import os

import pytest

from hazlint.cache import ParseCache, make_key, open_cache
from hazlint.frontend import ir


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
    return subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-prove",
                           "--format", "json", *args], cwd=cwd, capture_output=True, text=True,
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
    entries = sorted(cache.rglob("*.json"))
    assert len(entries) == 2                       # one entry per source file
    stamp = [p.stat().st_mtime_ns for p in entries]
    warm = cli(tmp_path, "--cache-dir", str(cache), "top.v", "valve.v")
    assert warm.stdout == cold.stdout
    assert [p.stat().st_mtime_ns for p in entries] == stamp     # served, not rewritten
    # a corrupted entry is dropped and rebuilt; the result does not change
    entries[0].write_text('{"format": 1, "key": "')
    again = cli(tmp_path, "--cache-dir", str(cache), "top.v", "valve.v")
    assert again.stdout == cold.stdout and again.returncode == 1
    assert json.loads(entries[0].read_text())["format"] == 1
    # parallel parsing gives the same findings
    par = cli(tmp_path, "--no-cache", "-j", "2", "top.v", "valve.v")
    assert par.stdout == cold.stdout, par.stderr
    # --no-cache writes nothing, anywhere under the given folder
    nc = tmp_path / "unused"
    cli(tmp_path, "--no-cache", "--cache-dir", str(nc), "top.v", "valve.v")
    assert not nc.exists()
