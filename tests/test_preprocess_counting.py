"""The preprocessor's counting-only mode (``Preprocessor.check_limits``), which the slang front
end runs before slang preprocesses a file: the same walk as ``run`` (same errors, same limits,
includes followed) without the output text, line map or digests.

Oracle: ``Preprocessor.run`` itself, over every fixture with a compiler directive and the
hostile-input reproducers (a define bomb, an include fan-out); memory by :mod:`tracemalloc`.
"""
from __future__ import annotations

import tracemalloc
from pathlib import Path

import pytest

from hazlint.errors import HazlintError
from hazlint.frontends.verilog.preprocess import Preprocessor
from hazlint.limits import DEFAULT, using

FIX = Path(__file__).resolve().parent.parent / "fixtures"
FANOUT = FIX / "hostile" / "include_fanout" / "top.v"
# the include fan-out is walked once below, under a lowered limit (the default takes seconds)
WITH_DIRECTIVES = sorted(p for p in FIX.rglob("*.v")
                         if "`" in p.read_text(errors="replace") and p != FANOUT)


def outcome(mode: str, path: Path):
    """What ``mode`` gives for ``path``: the line count, or the error (class, text, place)."""
    pp = Preprocessor(include_dirs=[str(path.parent / "include")] if (
        path.parent / "include").is_dir() else ())
    try:
        got = getattr(pp, mode)(str(path))
    except HazlintError as exc:
        return (type(exc).__name__, str(exc), exc.path, exc.line)
    return len(got.line_map) if mode == "run" else got


def test_there_are_fixtures_with_directives():
    assert len(WITH_DIRECTIVES) >= 10
    assert FIX / "hostile" / "define_bomb.v" in WITH_DIRECTIVES


@pytest.mark.parametrize("path", WITH_DIRECTIVES, ids=lambda p: str(p.relative_to(FIX)))
def test_counting_walk_matches_the_full_run(path):
    assert outcome("check_limits", path) == outcome("run", path)


def test_hostile_limits_stop_the_counting_walk_where_they_stop_the_run():
    bomb = outcome("check_limits", FIX / "hostile" / "define_bomb.v")
    assert bomb[0] == "LimitExceeded" and "macro_expansion" in bomb[1] and bomb[3] == 17
    with using(DEFAULT.with_values({"include_fanout": 200})):
        fan = outcome("check_limits", FANOUT)
        assert fan == outcome("run", FANOUT)
    assert fan[0] == "LimitExceeded" and "include_fanout = 200" in fan[1]
    assert fan[2].endswith(".vh")


def test_counting_keeps_no_output_text():
    # a netlist with one directive at the top (the usual `timescale): the full run keeps the
    # output text and a line map, the counting walk neither (tracemalloc counts allocations,
    # which do not depend on the machine's load)
    body = [f"  wire w{i}; assign w{i} = a;" for i in range(20000)]
    text = "\n".join(["`timescale 1ns/1ps", "module m(input a, output y);", *body,
                      "endmodule"]) + "\n"
    peaks = {}
    for mode in ("run", "check_limits"):
        tracemalloc.start()
        try:
            getattr(Preprocessor(), mode)("/press/m.v", text)
            peaks[mode] = tracemalloc.get_traced_memory()[1]
        finally:
            tracemalloc.stop()
    # the full run also holds the joined output (about the input's size) and the line map
    assert peaks["run"] - peaks["check_limits"] > len(text)
