"""One way to write the files of a job: an output set, all or nothing.

Every workflow (maps, camera views, image masks and corrections, survey
plans, each scene of a batch) writes its files through :class:`OutputSet`:

1. **plan**: the set's file names are known before anything is computed;
   existing files are refused unless ``overwrite`` (checked by
   :meth:`OutputSet.check`, also before the work starts);
2. **write**: each file is written under a temporary name in the output
   directory (``.glint-part-<host>-<pid>-<token>-<name>``), by a writer that
   follows :class:`OutputWriter` or by any code given :meth:`OutputSet.temp`;
3. **commit**: when the block ends normally and every planned file exists,
   the temporaries are renamed into place together. A small journal
   (``.glint-set-<host>-<pid>-<token>.json``) lists the renames first, so
   that even a process killed in the middle of the renames (SIGKILL, power
   loss) leaves a set that the next run in that directory completes;
4. **discard**: on any exception, and on SIGINT or SIGTERM (see
   :func:`stop_on_signals`), the temporaries are removed, and a directory
   the set created is removed again when it stays empty.

Temporaries and journals of a process that no longer runs (on this host) or
older than :data:`STALE_AFTER_S` (another host sharing the directory) are
cleaned up when a later set is opened in the same directory.

Signals never interrupt the renames: a stop that arrives while a set is
being committed is acted on right after it, so a stopped run leaves either
the whole set or none of it.
"""

from __future__ import annotations

import contextlib
import json
import os
import re
import secrets
import signal
import socket
import threading
import time
from collections.abc import Callable, Iterator, Mapping
from pathlib import Path
from types import FrameType, TracebackType
from typing import Protocol, TypeVar, runtime_checkable

import numpy as np
from numpy.typing import NDArray

from glint.errors import OutputError, RunStopped

__all__ = [
    "OutputSet",
    "OutputWriter",
    "TEMP_PREFIX",
    "JOURNAL_PREFIX",
    "STALE_AFTER_S",
    "clean_stale",
    "stop_on_signals",
    "deferred_stop",
]

#: Prefix of every temporary file of an output set.
TEMP_PREFIX = ".glint-part-"
#: Prefix of the rename journal of an output set being committed.
JOURNAL_PREFIX = ".glint-set-"
#: Age [s] after which a temporary file of another host is taken as stale
#: (a day: no single set takes that long to write).
STALE_AFTER_S = 86400.0
#: Signals that stop a run cleanly.
STOP_SIGNALS: tuple[signal.Signals, ...] = (signal.SIGINT, signal.SIGTERM)

_HOST = re.sub(r"[^A-Za-z0-9]+", "", socket.gethostname())[:24] or "host"
_OWNER = re.compile(rf"^(?:{re.escape(TEMP_PREFIX)}|{re.escape(JOURNAL_PREFIX)})"
                    r"(?P<host>[A-Za-z0-9]+)-(?P<pid>\d+)-(?P<token>[0-9a-f]+)")

W = TypeVar("W", bound="OutputWriter")


@runtime_checkable
class OutputWriter(Protocol):
    """What every file writer of glint does (GeoTIFF, NetCDF, PNG, GeoJSON).

    A writer is built on the temporary path an :class:`OutputSet` gives it,
    receives the grid's strips (or windows of strips, left to right) in
    order with :meth:`write` (a writer that
    needs no strips, such as a GeoJSON footprint, ignores them), finishes its
    file in :meth:`close`, and releases what it holds in :meth:`abort` (the
    output set removes the file).
    """

    path: Path

    def write(self, rows: slice, arrays: Mapping[str, NDArray[np.generic]],
              cols: slice | None = None) -> None:
        """Take the strip ``rows`` of each named variable (or, with ``cols``,
        the window ``rows x cols`` of it)."""

    def close(self) -> None:
        """Finish the file at :attr:`path`."""

    def abort(self) -> None:
        """Release resources after a failure; the file is removed by the set."""


# ------------------------------------------------------------------ signals
_state = threading.local()
_lock = threading.Lock()
_defer_depth = 0
_pending: list[int] = []


def _raise_stop(signum: int, frame: FrameType | None) -> None:
    if _defer_depth > 0:
        _pending.append(signum)
        return
    raise RunStopped(signum)


@contextlib.contextmanager
def stop_on_signals() -> Iterator[None]:
    """Turn SIGINT and SIGTERM into :class:`~glint.errors.RunStopped` while
    the block runs, so ``finally`` blocks remove temporaries.

    Python turns SIGINT into ``KeyboardInterrupt`` but lets SIGTERM kill the
    process at once, leaving temporaries behind; inside this block both raise
    :class:`~glint.errors.RunStopped` (a ``KeyboardInterrupt``) carrying the
    signal, whose ``exit_code`` is 130 or 143. Outside the main thread
    (signals are delivered there only) the block does nothing. The previous
    handlers are restored on exit.

    Examples
    --------
    >>> import os, signal
    >>> from glint.errors import RunStopped
    >>> try:
    ...     with stop_on_signals():
    ...         os.kill(os.getpid(), signal.SIGTERM)
    ... except RunStopped as stop:
    ...     print(stop.exit_code)
    143
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = {s: signal.getsignal(s) for s in STOP_SIGNALS}
    try:
        for s in STOP_SIGNALS:
            signal.signal(s, _raise_stop)
        yield
    finally:
        for s, handler in previous.items():
            signal.signal(s, handler)


@contextlib.contextmanager
def deferred_stop() -> Iterator[None]:
    """Hold a stop signal (installed by :func:`stop_on_signals`) until the
    block is done, then raise it: for work that must not be cut in half,
    such as renaming a set's files into place."""
    global _defer_depth
    with _lock:
        _defer_depth += 1
    try:
        yield
    finally:
        with _lock:
            _defer_depth -= 1
            pending = _pending[:] if _defer_depth == 0 else []
            if _defer_depth == 0:
                _pending.clear()
    if pending:
        raise RunStopped(pending[0])


# ------------------------------------------------------------- stale files
def _owner_gone(name: str, path: Path, now: float) -> bool:
    """True when the process that made ``name`` no longer runs."""
    m = _OWNER.match(name)
    if m is None:
        return False
    if m["host"] != _HOST:
        try:
            return now - path.stat().st_mtime > STALE_AFTER_S
        except FileNotFoundError:
            return False
    pid = int(m["pid"])
    if pid == os.getpid():
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    except PermissionError:
        return False
    return _is_zombie(pid)


def _is_zombie(pid: int) -> bool:
    """A process that has ended but was not yet reaped (Linux ``/proc``): it
    writes nothing any more."""
    try:
        stat = Path(f"/proc/{pid}/stat").read_text()
    except OSError:
        return False
    return stat.rpartition(")")[2].split()[:1] == ["Z"]


def _roll_forward(journal: Path) -> None:
    """Finish the renames a killed process had started (all its files were
    complete before it wrote the journal)."""
    try:
        pairs = json.loads(journal.read_text())["renames"]
    except (OSError, ValueError, KeyError, TypeError):
        pairs = []
    for tmp_name, final_name in pairs:
        _move_with_sidecars(journal.parent / tmp_name, journal.parent / final_name)
    with contextlib.suppress(FileNotFoundError):
        journal.unlink()


def clean_stale(directory: str | Path) -> list[Path]:
    """Complete or remove what stopped runs left in ``directory``.

    A rename journal of a dead process is completed (its set was whole);
    temporary files of a dead process are removed. Files of running
    processes and files not named by glint are never touched.

    Returns
    -------
    list of pathlib.Path
        The temporary files removed.
    """
    d = Path(directory)
    if not d.is_dir():
        return []
    now = time.time()
    entries = sorted(d.iterdir(), key=lambda p: p.name)
    for p in entries:
        if p.name.startswith(JOURNAL_PREFIX) and _owner_gone(p.name, p, now):
            _roll_forward(p)
    removed = []
    for p in d.iterdir():
        if p.name.startswith(TEMP_PREFIX) and _owner_gone(p.name, p, now):
            with contextlib.suppress(FileNotFoundError, IsADirectoryError):
                p.unlink()
                removed.append(p)
    return removed


def _companions(tmp: Path) -> list[Path]:
    """``tmp`` and the sidecars GDAL wrote beside it (``.aux.xml``, ``.ovr``)."""
    d = tmp.parent
    return [p for p in d.iterdir() if p.name == tmp.name or p.name.startswith(tmp.name + ".")] \
        if d.is_dir() else []


#: Sidecars GDAL may keep beside a raster; an old one is removed when its
#: raster is replaced, so that stale category names or overviews never
#: describe a new file.
_SIDECARS = (".aux.xml", ".ovr", ".msk")


def _move_with_sidecars(tmp: Path, final: Path) -> None:
    if tmp.exists():
        for suffix in _SIDECARS:
            with contextlib.suppress(FileNotFoundError):
                (final.parent / (final.name + suffix)).unlink()
    for p in _companions(tmp):
        os.replace(p, final.parent / (final.name + p.name[len(tmp.name):]))


def _fsync_dir(directory: Path) -> None:
    with contextlib.suppress(OSError):
        fd = os.open(directory, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


# --------------------------------------------------------------- the set
class OutputSet:
    """The files of one job, written all or nothing.

    Parameters
    ----------
    directory : path-like
        Output directory. Created when missing if its parent exists (or
        with all missing parents when ``parents`` is true).
    files : mapping of str to str
        Key (for :meth:`temp` and :meth:`path`) -> file name inside
        ``directory`` (no path separators).
    overwrite : bool, optional
        Replace existing files of the same names (default: refuse them).
    parents : bool, optional
        Create missing parent directories too.

    Raises
    ------
    OutputError
        A file name is empty or not a plain name, a file exists (without
        ``overwrite``), the directory cannot be created or written, or a
        planned file was not written when the block ended.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> with OutputSet(d, {"a": "a.txt", "b": "b.txt"}) as out:
    ...     _ = out.temp("a").write_text("first")
    ...     _ = out.temp("b").write_text("second")
    >>> sorted(os.listdir(d))
    ['a.txt', 'b.txt']
    >>> try:
    ...     with OutputSet(d, {"c": "c.txt", "d": "d.txt"}) as out:
    ...         _ = out.temp("c").write_text("half")
    ...         raise RuntimeError("failed half-way")
    ... except RuntimeError:
    ...     pass
    >>> sorted(os.listdir(d))
    ['a.txt', 'b.txt']
    """

    def __init__(self, directory: str | os.PathLike[str], files: Mapping[str, str], *,
                 overwrite: bool = False, parents: bool = False) -> None:
        self.directory = Path(directory)
        self.overwrite = bool(overwrite)
        self.parents = bool(parents)
        self._names: dict[str, str] = {}
        for key, name in files.items():
            name = str(name)
            if not name or name in (".", "..") or "/" in name or os.sep in name \
                    or name.startswith((TEMP_PREFIX, JOURNAL_PREFIX)):
                raise OutputError(f"output file name {name!r} (for {key!r}) must be a plain file name "
                                  f"inside the output directory")
            self._names[key] = name
        if len(set(self._names.values())) != len(self._names):
            raise OutputError(f"two outputs of one set share a file name: {sorted(self._names.values())!r}")
        self._token = secrets.token_hex(4)
        self._dropped: set[str] = set()
        self._writers: list[OutputWriter] = []
        self._created_dirs: list[Path] = []
        self._stack: contextlib.ExitStack | None = None
        self.files: list[Path] = []

    # -- plan
    @property
    def paths(self) -> dict[str, Path]:
        """Final path of each planned file."""
        return {k: self.directory / n for k, n in self._names.items()}

    def path(self, key: str) -> Path:
        """Final path of the file ``key``."""
        return self.directory / self._names[self._key(key)]

    def check(self) -> None:
        """Refuse files that exist (unless ``overwrite``) and paths that are
        directories; call it before the work starts to fail early."""
        if self.directory.exists() and not self.directory.is_dir():
            raise OutputError(f"output directory {str(self.directory)!r} is a file, not a directory")
        parent = self.directory.resolve().parent
        if not self.directory.exists() and not self.parents and not parent.is_dir():
            raise OutputError(f"cannot create output directory {str(self.directory)!r}: its parent "
                              "does not exist")
        for p in self.paths.values():
            if p.is_dir():
                raise OutputError(f"output path {str(p)!r} is a directory")
            if p.exists() and not self.overwrite:
                raise OutputError(f"output {str(p)!r} exists; use --overwrite (overwrite=True from "
                                  "Python) to replace it")

    def _key(self, key: str) -> str:
        if key not in self._names:
            raise OutputError(f"output {key!r} is not part of this set; planned: {', '.join(self._names)}")
        return key

    # -- write
    def temp(self, key: str) -> Path:
        """The temporary path to write the file ``key`` to."""
        name = self._names[self._key(key)]
        return self.directory / f"{TEMP_PREFIX}{_HOST}-{os.getpid()}-{self._token}-{name}"

    def writer(self, key: str, make: Callable[[Path], W]) -> W:
        """Build a writer on the temporary path of ``key``; the set closes it
        before the commit and aborts it on failure."""
        w = make(self.temp(key))
        self._writers.append(w)
        return w

    def drop(self, key: str) -> None:
        """Leave the planned file ``key`` out of this set (e.g. a footprint
        that cannot exist); a temporary already written for it is removed."""
        self._dropped.add(self._key(key))
        for p in _companions(self.temp(key)):
            p.unlink()

    # -- context
    def __enter__(self) -> OutputSet:
        self.check()
        self._make_directory()
        self._stack = contextlib.ExitStack()
        self._stack.enter_context(stop_on_signals())
        try:
            clean_stale(self.directory)
            probe = self.directory / f"{TEMP_PREFIX}{_HOST}-{os.getpid()}-{self._token}-probe"
            try:  # os.access is wrong for root: try to create a file
                with open(probe, "xb"):
                    pass
                probe.unlink()
            except OSError as exc:
                raise OutputError(f"output directory {str(self.directory)!r} is not writable: "
                                  f"{exc.strerror}") from exc
        except BaseException:
            self._stack.close()
            self._remove_created_dirs()
            raise
        return self

    def __exit__(self, exc_type: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        assert self._stack is not None
        try:
            if exc_type is None:
                try:
                    self._close_writers()
                    self._commit()
                except BaseException:
                    self._discard()
                    raise
            else:
                self._discard()
        finally:
            self._stack.close()

    def _make_directory(self) -> None:
        missing = []
        d = self.directory
        while not d.exists():
            missing.append(d)
            if d.parent == d:
                break
            d = d.parent
        if len(missing) > 1 and not self.parents:
            raise OutputError(f"cannot create output directory {str(self.directory)!r}: its parent "
                              "does not exist")
        for d in reversed(missing):
            try:
                d.mkdir()
            except FileExistsError:
                continue
            except OSError as exc:
                raise OutputError(f"cannot create output directory {str(d)!r}: {exc.strerror}") from exc
            self._created_dirs.append(d)

    def _remove_created_dirs(self) -> None:
        for d in reversed(self._created_dirs):
            with contextlib.suppress(OSError):
                d.rmdir()  # only when empty

    def _close_writers(self) -> None:
        while self._writers:
            self._writers.pop(0).close()

    def _commit(self) -> None:
        keys = [k for k in self._names if k not in self._dropped]
        missing = [self._names[k] for k in keys if not self.temp(k).is_file()]
        if missing:
            raise OutputError(f"output set in {str(self.directory)!r} is incomplete: "
                              f"{', '.join(missing)} not written")
        journal = self.directory / f"{JOURNAL_PREFIX}{_HOST}-{os.getpid()}-{self._token}.json"
        with deferred_stop():
            if len(keys) > 1:
                journal.write_text(json.dumps(
                    {"renames": [[self.temp(k).name, self._names[k]] for k in keys]}))
                with contextlib.suppress(OSError):
                    fd = os.open(journal, os.O_RDONLY)
                    os.fsync(fd)
                    os.close(fd)
            for k in keys:
                _move_with_sidecars(self.temp(k), self.path(k))
            with contextlib.suppress(FileNotFoundError):
                journal.unlink()
            _fsync_dir(self.directory)
        self.files = [self.path(k) for k in keys]

    def _discard(self) -> None:
        for w in self._writers:
            with contextlib.suppress(Exception):
                w.abort()
        self._writers.clear()
        for k in self._names:
            for p in _companions(self.temp(k)):
                with contextlib.suppress(FileNotFoundError):
                    p.unlink()
        self._remove_created_dirs()
