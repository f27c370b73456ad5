"""A cache nobody can poison: tampered, swapped, foreign and odd entries are never served.

Every case ends with the same observable fact: the rerun prints the true findings of the
design (the cold run's report, byte for byte, and its exit code), and the bad entry is gone.
The second user is a real account (``useradd``) when the tests run as root; elsewhere that
test is skipped and says why.
"""
from __future__ import annotations

import json
import os
import pwd
import shutil
import stat
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest

from hazlint.store.parse import ParseCache
from hazlint.cli import main

REPO = Path(__file__).resolve().parents[1]
NAMESPACES = ("parse", "design", "result", "report")

HAZARD = """\
module press_valve(guard_closed, two_hand, maint_key, valve_enable);
  input guard_closed, two_hand, maint_key;
  (* hazlint_async *) output valve_enable;     // a glitch here does harm: listed by default
  wire n_guard, run, bypass;
  not g_inv (n_guard, guard_closed);
  and g_run (run, two_hand, guard_closed);
  and g_byp (bypass, maint_key, n_guard);
  or  g_out (valve_enable, run, bypass);
endmodule
"""
CLEAN = """\
module press_valve(input guard_closed, input two_hand, input maint_key, output valve_enable);
  wire run;
  and g_run (run, two_hand, guard_closed);
  and g_out (valve_enable, run, maint_key);
endmodule
"""


def check(capsys, cache, path, *extra):
    code = main(["check", "--no-prove", "--cache-dir", str(cache), *extra, str(path)])
    out, err = capsys.readouterr()
    return code, out


def entries(cache: Path, ns: str) -> set[Path]:
    return set((cache / ns).rglob("*.json")) if (cache / ns).exists() else set()


def _key(p: Path) -> str:
    return p.stem


@pytest.fixture
def two_designs(tmp_path, capsys):
    """The cache after linting a hazardous design, then a clean one: per namespace the entry
    of each, and the hazardous run's report and exit code."""
    cache = tmp_path / "cache"
    hz, ok = tmp_path / "hazard.v", tmp_path / "clean.v"
    hz.write_text(HAZARD)
    ok.write_text(CLEAN)
    cold = check(capsys, cache, hz)
    assert cold[0] == 1 and "unbalanced-reconvergence" in cold[1]
    mine = {ns: entries(cache, ns) for ns in NAMESPACES}
    assert check(capsys, cache, ok)[0] == 0
    theirs = {ns: entries(cache, ns) - mine[ns] for ns in NAMESPACES}
    for ns in NAMESPACES:
        assert len(mine[ns]) == 1 and len(theirs[ns]) == 1, ns
    return cache, hz, cold, {ns: (next(iter(mine[ns])), next(iter(theirs[ns])))
                             for ns in NAMESPACES}


@pytest.mark.parametrize("rewrite_key", [False, True], ids=["copied", "copied-and-rekeyed"])
def test_an_entry_under_another_key_is_never_served(capsys, two_designs, rewrite_key):
    cache, hz, cold, pairs = two_designs
    for ns, (victim, donor) in pairs.items():
        raw = donor.read_bytes()
        if rewrite_key:
            raw = raw.replace(_key(donor).encode(), _key(victim).encode())
        victim.write_bytes(raw)
        if ns == "report":            # the clean design's report text too
            victim.with_suffix(".txt").write_bytes(donor.with_suffix(".txt").read_bytes())
    assert check(capsys, cache, hz) == cold      # the hazard, not "0 findings"
    for ns, (victim, _donor) in pairs.items():
        assert victim.read_bytes() != _donor.read_bytes(), ns     # rewritten from scratch


def test_a_report_entry_edited_to_no_findings_is_dropped(capsys, two_designs):
    cache, hz, cold, pairs = two_designs
    entry = pairs["report"][0]
    text = entry.read_text()
    assert '"worst":2' in text          # an error: the output is declared asynchronous
    entry.write_text(text.replace('"worst":2', '"worst":null'))
    assert check(capsys, cache, hz) == cold
    assert '"worst":2' in entry.read_text()


def test_random_bytes_in_a_kept_report_are_dropped(capsys, two_designs):
    cache, hz, cold, pairs = two_designs
    txt = pairs["report"][0].with_suffix(".txt")
    size = txt.stat().st_size
    txt.write_bytes(os.urandom(size))            # same size: only the digest can tell
    assert check(capsys, cache, hz) == cold
    assert check(capsys, cache, hz) == cold
    assert txt.read_text() == cold[1]


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes (POSIX)")
def test_a_fifo_in_place_of_an_entry_does_not_hang_the_run(tmp_path, two_designs):
    cache, hz, cold, pairs = two_designs
    fifos = []
    for ns, (victim, _donor) in pairs.items():
        targets = [victim] + ([victim.with_suffix(".txt")] if ns == "report" else [])
        for t in targets:
            t.unlink()
            os.mkfifo(t)
            fifos.append(t)
    # a process of its own: a hang would be a timeout here, not a stuck test session
    p = subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-prove",
                        "--cache-dir", str(cache), str(hz)], capture_output=True, text=True,
                       timeout=300, env=dict(os.environ, PYTHONPATH=str(REPO)))
    assert (p.returncode, p.stdout) == cold, p.stderr
    for t in fifos:
        assert not stat.S_ISFIFO(os.lstat(t).st_mode) if os.path.lexists(t) else True


def test_broken_entries_are_mentioned_once_at_debug_level(tmp_path, two_designs):
    cache, hz, cold, pairs = two_designs
    for victim, _donor in pairs.values():
        victim.write_bytes(b"\x00garbage")
    p = subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-prove",
                        "--cache-dir", str(cache), str(hz)], capture_output=True, text=True,
                       timeout=300, env=dict(os.environ, PYTHONPATH=str(REPO),
                                             HAZLINT_DEBUG="1"))
    assert (p.returncode, p.stdout) == cold
    said = [line for line in p.stderr.splitlines() if "ignored and removed" in line]
    # one line per cache (namespace) that met a broken entry, each naming the entry
    assert 1 <= len(said) <= len(NAMESPACES)
    assert len({line.split(" (")[0] for line in said}) == len(said)


def test_umask_000_still_gives_private_folders(tmp_path):
    cache = tmp_path / "deep" / "cache"
    src = tmp_path / "hazard.v"
    src.write_text(HAZARD)
    p = subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-prove",
                        "--cache-dir", str(cache), str(src)], capture_output=True, text=True,
                       timeout=300, preexec_fn=lambda: os.umask(0),
                       env=dict(os.environ, PYTHONPATH=str(REPO)))
    assert p.returncode == 1, p.stderr
    folders = [cache.parent, cache] + [d for d in cache.rglob("*") if d.is_dir()]
    files = [f for f in cache.rglob("*") if f.is_file()]
    assert len(folders) > 6 and files
    assert all(stat.S_IMODE(d.stat().st_mode) == 0o700 for d in folders), \
        [(d, oct(d.stat().st_mode)) for d in folders]
    assert all(stat.S_IMODE(f.stat().st_mode) & 0o077 == 0 for f in files)


def test_folders_of_ours_left_open_are_made_private_again(capsys, tmp_path):
    cache = tmp_path / "cache"
    src = tmp_path / "hazard.v"
    src.write_text(HAZARD)
    check(capsys, cache, src, "--format", "json")
    before = entries(cache, "report")
    for d in [cache] + [d for d in cache.rglob("*") if d.is_dir()]:
        os.chmod(d, 0o777)          # as an older version made them under umask 000
    # another format: the findings come from the design and result entries, a new report
    # is stored; every folder on those paths is checked, and made private again
    assert check(capsys, cache, src)[0] == 1
    (new_report,) = entries(cache, "report") - before
    used = [cache, new_report.parent.parent, new_report.parent] + [
        d for ns in ("design", "result") for e in entries(cache, ns)
        for d in (e.parent.parent, e.parent)]
    assert all(stat.S_IMODE(d.stat().st_mode) == 0o700 for d in used), \
        [(d, oct(d.stat().st_mode)) for d in used]


# ---------------------------------------------------------------------------------------------
# a real second user

OTHER = "hazlintfoe"


def _other_user():
    if not hasattr(os, "geteuid") or os.geteuid() != 0:
        pytest.skip("a second user can only be created when the tests run as root "
                    "(useradd); run the suite as root to exercise it")
    if shutil.which("useradd") is None:
        pytest.skip("useradd is not installed, so no second user can be created")
    try:
        return pwd.getpwnam(OTHER), False
    except KeyError:
        subprocess.run(["useradd", "--no-create-home", "--shell", "/usr/sbin/nologin", OTHER],
                       check=True, capture_output=True)
        return pwd.getpwnam(OTHER), True


def _as(user, *argv):
    """Run ``argv`` as ``user`` (a plain program: the other user needs no Python of ours)."""
    def drop():
        os.setgid(user.pw_gid)
        os.setgroups([])
        os.setuid(user.pw_uid)
    return subprocess.run(list(argv), capture_output=True, text=True, preexec_fn=drop,
                          timeout=300, env={"PATH": "/usr/bin:/bin"})


def _forged_report(key: str, text: str) -> tuple[bytes, bytes]:
    """A report entry and its text as hazlint itself would write them (key, digests and all
    right): what someone who can write into the folder could plant."""
    import hashlib
    from hazlint.store.entries import entry_text as _entry_text
    from hazlint.store.keys import code_stamp
    from hazlint.store.report import REPORT_FORMAT
    body = text.encode()
    payload = json.dumps({"format": REPORT_FORMAT, "worst": None, "size": len(body),
                          "digest": hashlib.sha256(body).hexdigest()},
                         separators=(",", ":"))
    return _entry_text(key, code_stamp(), {}, payload).encode(), body


def test_entries_planted_by_another_user_are_refused(capsys, tmp_path):
    user, created = _other_user()
    src = tmp_path / "hazard.v"
    src.write_text(HAZARD)
    # a cache folder that another user can write into (as older versions left it), in a
    # place both users can reach
    base = Path(tempfile.mkdtemp(prefix="hazlint-shared-", dir="/tmp"))
    try:
        cache = base / "cache"
        cache.mkdir()
        os.chmod(base, 0o755)
        cold = check(capsys, cache, src)
        (report_entry,) = entries(cache, "report")
        for d in [cache] + [d for d in cache.rglob("*") if d.is_dir()]:
            os.chmod(d, 0o777)
        report_entry.unlink()
        report_entry.with_suffix(".txt").unlink()
        entry_bytes, text_bytes = _forged_report(_key(report_entry),
                                                 "hazlint: 0 findings in 1 file\n")
        for data, dest in ((entry_bytes, report_entry),
                           (text_bytes, report_entry.with_suffix(".txt"))):
            staged = base / dest.name
            staged.write_bytes(data)
            os.chmod(staged, 0o644)
            planted = _as(user, "cp", str(staged), str(dest))
            assert planted.returncode == 0, planted.stderr
        assert report_entry.stat().st_uid == user.pw_uid        # really theirs
        # the owner's next run: the planted "0 findings" report is not served
        assert check(capsys, cache, src) == cold
        assert not report_entry.exists() or report_entry.stat().st_uid == os.getuid()
        assert stat.S_IMODE(cache.stat().st_mode) == 0o700        # closed again
        # a namespace folder of theirs (made while the root was open): not used at all, and
        # the run still right
        shutil.rmtree(cache / "result")
        os.chmod(cache, 0o777)
        made = _as(user, "mkdir", "-m", "777", str(cache / "result"))
        assert made.returncode == 0, made.stderr
        assert check(capsys, cache, src) == cold
        assert not any((cache / "result").iterdir())            # nothing of ours put there
    finally:
        shutil.rmtree(base, ignore_errors=True)
        if created:
            subprocess.run(["userdel", OTHER], capture_output=True)


# ---------------------------------------------------------------------------------------------
# parser tables

def _tables(cache: Path) -> list[Path]:
    return sorted((cache / "parser").rglob("*.json")) if (cache / "parser").exists() else []


def _fresh_process(args, env_extra=None, cwd=None):
    env = dict(os.environ, PYTHONPATH=str(REPO))
    env.pop("HAZLINT_CACHE_DIR", None)
    env.update(env_extra or {})
    return subprocess.run([sys.executable, "-m", "hazlint.cli", "check", "--no-prove", *args],
                          capture_output=True, text=True, timeout=300, env=env, cwd=cwd)


@pytest.mark.slow
def test_parser_tables_follow_the_cache_folder_and_no_cache_writes_nothing(tmp_path):
    src = tmp_path / "hazard.v"
    src.write_text(HAZARD)
    home = tmp_path / "home-cache"            # the per-user default, which must stay empty
    env = {"XDG_CACHE_HOME": str(home)}
    given = tmp_path / "given"
    assert _fresh_process(["--cache-dir", str(given), str(src)], env).returncode == 1
    assert len(_tables(given)) == 1 and not home.exists()
    by_env = tmp_path / "by-env"
    assert _fresh_process([str(src)], dict(env, HAZLINT_CACHE_DIR=str(by_env))).returncode == 1
    assert len(_tables(by_env)) == 1 and not home.exists()
    nothing = tmp_path / "nothing"
    assert _fresh_process(["--no-cache", "--cache-dir", str(nothing), str(src)],
                          env).returncode == 1
    assert not nothing.exists() and not home.exists()
    # corrupted tables: the run is right, and the entry is rebuilt
    (table,) = _tables(given)
    table.write_bytes(os.urandom(4096))
    src.write_text(HAZARD.replace("g_byp", "g_bypass"))        # a file to parse again
    again = _fresh_process(["--cache-dir", str(given), str(src)], env)
    assert again.returncode == 1, again.stderr
    assert json.loads(table.read_text())["format"] == 2


@pytest.mark.slow
def test_tables_that_pass_the_digest_but_do_not_fit_the_grammar_are_rebuilt(tmp_path):
    from hazlint.frontends.verilog.grammar import HzParser
    cache = ParseCache(tmp_path, namespace="parser", version="t")
    first = HzParser(tables=cache)
    assert first.tables_source == "generated"
    (entry,) = _tables(tmp_path)
    key = entry.stem
    good = cache.load(key)
    assert HzParser(tables=cache).tables_source == "cache"

    def broken():
        d = json.loads(json.dumps(good))
        d["productions"][3][3] = "p_no_such_rule"         # a reduction with no action
        yield d
        d = json.loads(json.dumps(good))
        d["action"][0][1][0][1] = 10 ** 6                 # a shift to a state that is not
        yield d
        d = json.loads(json.dumps(good))
        d["goto"] = "x"
        yield d
        d = json.loads(json.dumps(good))
        del d["action"][-1]                               # a state missing
        yield d
    for bad in broken():
        cache.store(key, bad)                             # a valid entry of wrong tables
        p = HzParser(tables=cache)
        assert p.tables_source == "generated"
        assert p.parse("module m(input a, output y); assign y = a; endmodule\n") is not None
        assert cache.load(key) == good                    # rebuilt and stored again
