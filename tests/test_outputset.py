"""The output-set writer: all or nothing, also when stopped by a signal."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from glint.errors import OutputError, RunStopped
from glint.io import outputset
from glint.io.outputset import JOURNAL_PREFIX, TEMP_PREFIX, OutputSet, clean_stale

ROOT = Path(__file__).resolve().parents[1]


def _names(d: Path) -> list[str]:
    return sorted(p.name for p in d.iterdir())


def test_set_is_renamed_into_place_together(tmp_path):
    with OutputSet(tmp_path / "out", {"a": "a.txt", "b": "b.txt"}) as out:
        out.temp("a").write_text("1")
        out.temp("b").write_text("2")
        assert _names(tmp_path / "out") == sorted([out.temp("a").name, out.temp("b").name])
    assert _names(tmp_path / "out") == ["a.txt", "b.txt"]
    assert out.files == [tmp_path / "out" / "a.txt", tmp_path / "out" / "b.txt"]


def test_failure_leaves_nothing_and_removes_created_directory(tmp_path):
    with pytest.raises(ValueError, match="half"):
        with OutputSet(tmp_path / "out", {"a": "a.txt", "b": "b.txt"}) as out:
            out.temp("a").write_text("1")
            raise ValueError("half-way")
    assert not (tmp_path / "out").exists()


def test_incomplete_set_is_refused_and_discarded(tmp_path):
    with pytest.raises(OutputError, match="b.txt not written"):
        with OutputSet(tmp_path, {"a": "a.txt", "b": "b.txt"}) as out:
            out.temp("a").write_text("1")
    assert _names(tmp_path) == []


def test_dropped_file_is_not_required(tmp_path):
    with OutputSet(tmp_path, {"a": "a.txt", "b": "b.txt"}) as out:
        out.temp("a").write_text("1")
        out.drop("b")
    assert _names(tmp_path) == ["a.txt"]


def test_existing_output_refused_before_work_unless_overwrite(tmp_path):
    (tmp_path / "a.txt").write_text("old")
    s = OutputSet(tmp_path, {"a": "a.txt"})
    with pytest.raises(OutputError, match=r"a\.txt.*exists.*--overwrite"):
        s.check()
    with OutputSet(tmp_path, {"a": "a.txt"}, overwrite=True) as out:
        out.temp("a").write_text("new")
    assert (tmp_path / "a.txt").read_text() == "new"


def test_sidecars_follow_their_file_and_stale_ones_go(tmp_path):
    (tmp_path / "m.tif").write_text("old")
    (tmp_path / "m.tif.aux.xml").write_text("old categories")
    with OutputSet(tmp_path, {"m": "m.tif", "n": "n.tif"}, overwrite=True) as out:
        out.temp("m").write_text("new")
        out.temp("n").write_text("new")
        Path(str(out.temp("n")) + ".aux.xml").write_text("n categories")
    assert _names(tmp_path) == ["m.tif", "n.tif", "n.tif.aux.xml"]


@pytest.mark.parametrize("name", ["", "..", "a/b.txt", TEMP_PREFIX + "x"])
def test_bad_file_names_refused(tmp_path, name):
    with pytest.raises(OutputError, match="plain file name"):
        OutputSet(tmp_path, {"a": name})


def test_missing_parent_refused_unless_parents(tmp_path):
    # refused by check(), which workflows call before any work
    with pytest.raises(OutputError, match="parent does not exist"):
        OutputSet(tmp_path / "x" / "y", {"a": "a.txt"}).check()
    with pytest.raises(OutputError, match="parent does not exist"):
        with OutputSet(tmp_path / "x" / "y", {"a": "a.txt"}):
            pass
    with OutputSet(tmp_path / "x" / "y", {"a": "a.txt"}, parents=True) as out:
        out.temp("a").write_text("1")
    assert (tmp_path / "x" / "y" / "a.txt").exists()


def _dead_pid() -> int:
    p = subprocess.Popen([sys.executable, "-c", "pass"])
    p.wait()
    return p.pid


def test_stale_temporaries_of_dead_processes_are_removed(tmp_path):
    host = outputset._HOST
    dead = tmp_path / f"{TEMP_PREFIX}{host}-{_dead_pid()}-abcd1234-a.txt"
    alive = tmp_path / f"{TEMP_PREFIX}{host}-{os.getppid()}-abcd1234-b.txt"
    foreign = tmp_path / ".someone-else.tmp"
    for p in (dead, alive, foreign):
        p.write_text("x")
    assert clean_stale(tmp_path) == [dead]
    assert _names(tmp_path) == sorted([alive.name, foreign.name])


def test_temporaries_of_an_unreaped_process_are_stale(tmp_path):
    # A killed process whose parent has not reaped it yet (a zombie) still
    # answers kill(pid, 0) but writes nothing any more.
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    try:
        deadline = 0
        while not outputset._is_zombie(proc.pid) and deadline < 200:
            time.sleep(0.05)
            deadline += 1
        tmp = tmp_path / f"{TEMP_PREFIX}{outputset._HOST}-{proc.pid}-abcd1234-a.txt"
        tmp.write_text("x")
        assert clean_stale(tmp_path) == [tmp]
    finally:
        proc.wait()


def test_journal_of_a_killed_commit_is_completed(tmp_path):
    # A process killed between two renames: one file in place, one temporary
    # and the journal left. The next set in the directory completes it.
    host, pid = outputset._HOST, _dead_pid()
    tmp_b = f"{TEMP_PREFIX}{host}-{pid}-abcd1234-b.txt"
    (tmp_path / "a.txt").write_text("a")
    (tmp_path / tmp_b).write_text("b")
    (tmp_path / f"{JOURNAL_PREFIX}{host}-{pid}-abcd1234.json").write_text(json.dumps(
        {"renames": [[f"{TEMP_PREFIX}{host}-{pid}-abcd1234-a.txt", "a.txt"], [tmp_b, "b.txt"]]}))
    with OutputSet(tmp_path, {"c": "c.txt"}) as out:
        out.temp("c").write_text("c")
    assert _names(tmp_path) == ["a.txt", "b.txt", "c.txt"]
    assert (tmp_path / "b.txt").read_text() == "b"


def test_stop_during_commit_is_deferred_until_the_set_is_whole(tmp_path, monkeypatch):
    real = outputset._move_with_sidecars
    calls = []

    def move_and_signal(tmp, final):
        real(tmp, final)
        calls.append(final.name)
        if len(calls) == 1:
            os.kill(os.getpid(), signal.SIGTERM)

    monkeypatch.setattr(outputset, "_move_with_sidecars", move_and_signal)
    with pytest.raises(RunStopped) as stop:
        with OutputSet(tmp_path, {"a": "a.txt", "b": "b.txt"}) as out:
            out.temp("a").write_text("1")
            out.temp("b").write_text("2")
    assert stop.value.exit_code == 143
    assert _names(tmp_path) == ["a.txt", "b.txt"]


_SLOW_WRITER = textwrap.dedent("""
    import sys, time
    from glint.io.outputset import OutputSet
    with OutputSet(sys.argv[1], {"a": "a.bin", "b": "b.bin"}) as out:
        out.temp("a").write_bytes(b"1" * 1000)
        print("writing", flush=True)
        time.sleep(60)
        out.temp("b").write_bytes(b"2")
""")


@pytest.mark.parametrize("sig, code", [(signal.SIGINT, 130), (signal.SIGTERM, 143)])
def test_signal_mid_write_leaves_no_temporary_and_no_partial_set(tmp_path, sig, code):
    # A real process stopped with a real signal (as Ctrl-C and a scheduler's
    # SIGTERM do); Python's default would leave the temporary of "a".
    script = (
        "import sys\nfrom glint.errors import RunStopped\n"
        "try:\n    exec(compile(" + repr(_SLOW_WRITER) + ", 'w', 'exec'))\n"
        "except RunStopped as s:\n    sys.exit(s.exit_code)\n"
    )
    out = tmp_path / "out"
    proc = subprocess.Popen([sys.executable, "-c", script, str(out)], cwd=ROOT,
                            stdout=subprocess.PIPE, text=True,
                            env={**os.environ, "PYTHONPATH": str(ROOT)},
                            preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    assert proc.stdout is not None
    assert proc.stdout.readline().strip() == "writing"
    proc.send_signal(sig)
    assert proc.wait(timeout=30) == code
    assert not out.exists() or _names(out) == []
    # the same set written again, without overwrite, works
    with OutputSet(out, {"a": "a.bin", "b": "b.bin"}) as again:
        again.temp("a").write_bytes(b"1")
        again.temp("b").write_bytes(b"2")
    assert _names(out) == ["a.bin", "b.bin"]


def test_runstopped_is_not_an_exception():
    # Workflows' `except Exception` must not swallow a stop.
    assert not issubclass(RunStopped, Exception)
    assert RunStopped(signal.SIGINT).exit_code == 130
    assert "SIGTERM" in str(RunStopped(signal.SIGTERM))

