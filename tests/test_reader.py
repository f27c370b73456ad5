"""read_sources: IR round trip, editor buffers, the parse cache, parallel reading, progress."""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from hazlint.store.parse import ParseCache
from hazlint.errors import ParseError
from hazlint import ir
from hazlint.frontends.verilog.reader import read_sources

FIXTURES = Path(__file__).resolve().parent.parent / "fixtures" / "frontend"
ALL = ["delays.v", "udp.v", "specify.v", "press_ports.v", "include_main.v"]
INC = [str(FIXTURES / "inc")]


def _paths():
    return [str(FIXTURES / f) for f in ALL]


def test_ir_round_trips_through_json():
    for sf in read_sources(_paths(), include_dirs=INC):
        data = json.loads(json.dumps(ir.to_json(sf)))
        back = ir.from_json(data)
        assert isinstance(back, ir.SourceFile)
        assert ir.to_json(back) == data
        assert [m.name for m in back.modules] == [m.name for m in sf.modules]
        assert back.digest == sf.digest and len(sf.digest) == 64


def test_texts_override_file_and_include_contents(tmp_path):
    top = tmp_path / "top.v"
    top.write_text('`include "h.vh"\nmodule on_disk; endmodule\n')
    (tmp_path / "h.vh").write_text("module from_header_disk; endmodule\n")
    (sf,) = read_sources([str(top)])
    assert [m.name for m in sf.modules] == ["from_header_disk", "on_disk"]
    buffers = {str(top): '`include "h.vh"\n\nmodule unsaved; endmodule\n',
               str(tmp_path / "h.vh"): "module header_buffer; endmodule\n"}
    (sf,) = read_sources([str(top)], texts=buffers)
    assert [m.name for m in sf.modules] == ["header_buffer", "unsaved"]
    assert sf.modules[1].loc.line == 3 and sf.modules[0].loc.path == str(tmp_path / "h.vh")


def test_parse_cache_hit_and_invalidation_by_include(tmp_path):
    top = tmp_path / "top.v"
    hdr = tmp_path / "h.vh"
    top.write_text('`include "h.vh"\nmodule top(input a, output y); assign y = `INV(a); '
                   'endmodule\n')
    hdr.write_text("`define INV(x) ~x\n")
    cache = ParseCache(tmp_path / "cache")
    (first,) = read_sources([str(top)], cache=cache)
    assert (cache.hits, cache.stores) == (0, 1)
    (second,) = read_sources([str(top)], cache=cache)
    assert cache.hits == 1
    assert ir.to_json(second) == ir.to_json(first)
    hdr.write_text("`define INV(x) x\n")          # the header changes: the entry is stale
    (third,) = read_sources([str(top)], cache=cache)
    assert cache.stores == 2                      # re-parsed and stored again
    (assign,) = [it for it in third.modules[0].items if isinstance(it, ir.Assign)]
    assert assign.rhs == ("id", "a")
    (_,) = read_sources([str(top)], cache=cache, defines={"OTHER": "1"})
    assert cache.stores == 3                      # defines are key material


def test_parallel_read_keeps_input_order_and_reports_progress():
    calls = []
    paths = _paths()
    serial = read_sources(paths, include_dirs=INC)
    parallel = read_sources(paths, include_dirs=INC, jobs=2,
                            progress=lambda done, total, path: calls.append((done, total, path)))
    assert [sf.path for sf in parallel] == paths
    assert [ir.to_json(a) for a in parallel] == [ir.to_json(b) for b in serial]
    assert [c[0] for c in calls] == list(range(1, len(paths) + 1))
    assert {c[2] for c in calls} == set(paths) and {c[1] for c in calls} == {len(paths)}


def test_parallel_read_reports_the_first_bad_file_with_its_line(tmp_path):
    good = tmp_path / "good.v"
    good.write_text("module good; endmodule\n")
    bad = tmp_path / "bad.v"
    bad.write_text("module bad;\n  wire;\nendmodule\n")
    with pytest.raises(ParseError) as err:
        read_sources([str(good), str(bad), str(good)], jobs=2)
    assert (err.value.path, err.value.line, err.value.construct) == (str(bad), 2, ";")


def test_unreadable_file_is_a_parse_error(tmp_path):
    with pytest.raises(ParseError) as err:
        read_sources([str(tmp_path / "missing.v")])
    assert err.value.path == str(tmp_path / "missing.v") and "cannot read" in err.value.message


def test_fixtures_are_accepted_by_icarus_verilog(tmp_path):
    # reference: Icarus Verilog (Debian iverilog) compiles each fixture without error, so the
    # reader tests above assert on legal Verilog
    import subprocess
    for f in _paths():
        res = subprocess.run(["iverilog", "-o", str(tmp_path / "a.out"), "-I", INC[0], f],
                             capture_output=True, text=True)
        assert res.returncode == 0, (f, res.stderr)
