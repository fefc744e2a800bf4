"""Run a batch on dask.distributed: one task per scene, nothing lost.

* Each scene is one task that writes the scene's output sets (through
  :func:`glint.workflows.maps.write_maps`, hence
  :class:`glint.io.outputset.OutputSet`) and then its state file, in one
  process: no file is ever written by two processes (HDF5, behind NetCDF,
  locks files against that).
* A scene larger than ``split_pixels`` is spread over the workers by strips
  of rows; the strips come back to this process, which alone writes the
  scene's files, in row order, with a bounded number of strips in flight.
* A scene that fails is recorded (state file and summary) and the others go
  on; SIGINT or SIGTERM stops the run: unfinished tasks are cancelled, the
  local workers stopped, their temporary files removed, and the summary
  written; finished scenes stay and the next run resumes.
"""

from __future__ import annotations

import contextlib
import dataclasses
import logging
import math
import os
import sys
import time
import traceback
from collections import OrderedDict
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

import numpy as np
from numpy.typing import NDArray

from glint._version import __version__
from glint.engine import compute
from glint.errors import GlintError, OutputError
from glint.io.outputset import clean_stale, stop_on_signals
from glint.scene import Scene, scene_from_dict
from glint.times import format_time
from glint.workflows.batch.manifest import Manifest, ResolvedScene, load_manifest
from glint.workflows.batch.state import Decision, Inputs, decide, read_state, scene_inputs, write_state
from glint.workflows.maps import MapResult, Strip, strip_variables, write_maps

__all__ = [
    "ClusterError",
    "PlannedScene",
    "SceneOutcome",
    "BatchResult",
    "plan_batch",
    "run_batch",
    "run_scene_task",
    "SPLIT_PIXELS",
    "CONNECT_TIMEOUT_S",
]

log = logging.getLogger(__name__)

#: Scenes with more pixels than this (per time) are spread over the workers
#: by strips of rows when the cluster has more than one worker.
SPLIT_PIXELS = 16_000_000
#: Seconds to wait for a scheduler given by address before giving up.
CONNECT_TIMEOUT_S = 10.0
#: Seconds to wait for a scheduler to have at least one worker.
WORKER_TIMEOUT_S = 60.0

Outcome = Literal["done", "skipped", "failed", "stopped", "not run"]


class ClusterError(GlintError, ConnectionError):
    """The dask scheduler cannot be reached or has no usable workers."""


@dataclass(frozen=True)
class PlannedScene:
    """A scene of a batch with its output folder, inputs and what to do."""

    resolved: ResolvedScene
    folder: Path
    inputs: Inputs
    decision: Decision

    @property
    def name(self) -> str:
        return self.resolved.name

    @property
    def pixels(self) -> int:
        return int(self.resolved.scene.grid.height) * int(self.resolved.scene.grid.width)


@dataclass
class SceneOutcome:
    """How one scene of a batch went.

    ``status`` is ``done`` (computed now), ``skipped`` (unchanged since a
    finished run), ``failed`` (``error`` says why), ``stopped`` (cut short
    by a stop signal; nothing of it was kept) or ``not run`` (not started
    before a stop). ``summaries`` holds one entry per scene time.
    """

    name: str
    status: Outcome
    reason: str = ""
    seconds: float = float("nan")
    error: str = ""
    files: list[str] = field(default_factory=list)
    summaries: list[dict[str, Any]] = field(default_factory=list)


@dataclass
class BatchResult:
    """The outcome of every scene, in manifest order, and the summary files."""

    outdir: Path
    outcomes: list[SceneOutcome]
    summary_files: list[Path] = field(default_factory=list)
    seconds: float = 0.0

    @property
    def failed(self) -> list[SceneOutcome]:
        return [o for o in self.outcomes if o.status == "failed"]

    @property
    def ok(self) -> bool:
        """True when no scene failed or was left unfinished."""
        return all(o.status in ("done", "skipped") for o in self.outcomes)

    def counts(self) -> dict[str, int]:
        out: dict[str, int] = {}
        for o in self.outcomes:
            out[o.status] = out.get(o.status, 0) + 1
        return out


# ------------------------------------------------------------------ summaries
def summary_record(summary: Any) -> dict[str, Any]:
    """One time's map summary (a mapping or a dataclass from ``write_maps``)
    as plain JSON-ready values."""
    d = dict(summary) if isinstance(summary, Mapping) else dataclasses.asdict(summary)

    def num(v: Any) -> float | None:
        try:
            f = float(v)
        except (TypeError, ValueError):
            return None
        return f if math.isfinite(f) else None

    shares = d.get("class_shares") or {}
    return {
        "time": format_time(d["time"]) if d.get("time") is not None else "",
        "sun_zenith": num(d.get("sun_zenith")),
        "sun_azimuth": num(d.get("sun_azimuth")),
        "mean_glint_reflectance": num(d.get("mean_glint_reflectance")),
        "max_glint_reflectance": num(d.get("max_glint_reflectance")),
        "class_shares": {str(k): num(v) for k, v in shares.items()},
        "unseen_pixels": int(d["unseen_pixels"]) if d.get("unseen_pixels") is not None else None,
    }


def _error_text(exc: BaseException) -> str:
    if isinstance(exc, GlintError):
        return " ".join(str(exc).split())
    return f"{type(exc).__name__}: {' '.join(str(exc).split())}"


# ------------------------------------------------------------- the scene task
def _write_maps(scene: Scene, folder: Path, blocks: Iterable[Strip] | None = None) -> MapResult:
    """Every file of a scene, one output set, replacing an earlier run's."""
    return write_maps(scene, folder, overwrite=True, blocks=blocks)


def _finish(folder: Path, spec: Mapping[str, Any], result_files: Sequence[Path],
            summaries: Sequence[Any], seconds: float) -> dict[str, Any]:
    files = [Path(p).name for p in result_files]
    for old in spec.get("previous_files", []):
        if old not in files and "/" not in old and old != "":
            # A changed scene (e.g. another time) named its files differently:
            # the old ones no longer describe it.
            with contextlib.suppress(FileNotFoundError, IsADirectoryError):
                (folder / old).unlink()
    records = [summary_record(s) for s in summaries]
    state = {"name": spec["name"], "status": "done", "seconds": round(seconds, 3), "error": "",
             "files": files, "summaries": records, "inputs": spec["inputs"],
             "finished": format_time(np.datetime64(int(time.time()), "s"))}
    write_state(folder, state)
    return {"name": spec["name"], "status": "done", "seconds": seconds, "error": "",
            "files": files, "summaries": records}


def _record_failure(folder: Path, spec: Mapping[str, Any], error: str, seconds: float) -> dict[str, Any]:
    with contextlib.suppress(Exception):
        write_state(folder, {"name": spec["name"], "status": "failed", "seconds": round(seconds, 3),
                             "error": error, "files": [], "summaries": [], "inputs": spec["inputs"],
                             "finished": format_time(np.datetime64(int(time.time()), "s"))})
    return {"name": spec["name"], "status": "failed", "seconds": seconds, "error": error,
            "files": [], "summaries": []}


def run_scene_task(spec: Mapping[str, Any]) -> dict[str, Any]:
    """Compute one scene of a batch and write its files and state (the task
    run on a worker; also usable in-process).

    ``spec`` holds ``name``, ``file`` (the scene file), ``data`` (the
    resolved scene-file structure), ``folder``, ``inputs`` (the state's
    input record) and ``previous_files``. Errors of the scene are caught
    and returned as a failed outcome; a stop signal is not.
    """
    t0 = time.perf_counter()
    folder = Path(spec["folder"])
    try:
        file = Path(spec["file"])
        scene = scene_from_dict(spec["data"], base_dir=file.parent, source=file)
        folder.mkdir(parents=True, exist_ok=True)
        result = _write_maps(scene, folder)
        return _finish(folder, spec, result.files, result.summaries, time.perf_counter() - t0)
    except Exception as exc:  # one scene's failure must not stop the batch
        log.debug("scene %s failed:\n%s", spec["name"], traceback.format_exc())
        return _record_failure(folder, spec, _error_text(exc), time.perf_counter() - t0)


# ----------------------------------------------------- strips of large scenes
_STRIP_CACHE: OrderedDict[str, tuple[Scene, Any, Any]] = OrderedDict()


def _strip_context(key: str, file: str, data: Mapping[str, Any],
                   t: np.datetime64) -> tuple[Scene, Any, Any]:
    """Scene, tie-point plan and kernel parameters of one scene time, built
    once per worker process (the plan is the one write_maps would make)."""
    hit = _STRIP_CACHE.get(key)
    if hit is None:
        scene = scene_from_dict(data, base_dir=Path(file).parent, source=Path(file))
        hit = (scene, compute.plan_geometry(scene, t), compute.kernel_parameters(scene, t))
        _STRIP_CACHE[key] = hit
        while len(_STRIP_CACHE) > 4:
            _STRIP_CACHE.popitem(last=False)
    return hit


def compute_strip(key: str, file: str, data: Mapping[str, Any], t: np.datetime64, row_start: int,
                  row_stop: int, variables: Sequence[str]) -> dict[str, NDArray[Any]]:
    """One strip of rows of one time of a large scene (a worker task)."""
    scene, plan, params = _strip_context(key, file, data, t)
    return compute.compute_window(scene, plan, params, slice(row_start, row_stop), None, variables)


# ------------------------------------------------------------------ planning
def plan_batch(manifest: Manifest | str | Path, outdir: str | Path, *, force: bool = False,
               confirm: bool = False) -> list[PlannedScene]:
    """Validate every scene of a manifest and decide, per scene, whether it
    runs (new, changed, failed before, outputs missing, forced) or is done.

    Raises
    ------
    ManifestError
        Listing every bad entry with its position.
    """
    if not isinstance(manifest, Manifest):
        manifest = load_manifest(manifest, confirm=confirm)
    outdir = Path(outdir)
    planned = []
    for rs in manifest.resolve():
        folder = outdir / rs.name
        inputs = scene_inputs(rs.data, rs.base_dir)
        planned.append(PlannedScene(rs, folder, inputs, decide(folder, inputs, force=force)))
    return planned


# ------------------------------------------------------------------ the cluster
def _worker_glint_version() -> str:
    import glint

    return str(glint.__version__)


@contextlib.contextmanager
def _cluster(client: Any, scheduler: str | None, workers: int | None,
             connect_timeout: float) -> Iterator[tuple[Any, bool]]:
    """A client: the one given, one of the scheduler at ``scheduler``, or one
    of a new local cluster. Yields (client, local) where ``local`` says the
    workers are ours to stop."""
    if client is not None:
        yield client, False
        return
    from distributed import Client, LocalCluster

    if scheduler:
        try:
            c = Client(scheduler, timeout=f"{connect_timeout}s", set_as_default=False)
        except Exception as exc:
            raise ClusterError(
                f"cannot reach the dask scheduler at {scheduler!r} within {connect_timeout:g} s "
                f"({_error_text(exc)}); check the address (e.g. tcp://HOST:8786) and that "
                "`dask scheduler` runs there") from None
        try:
            try:
                c.wait_for_workers(1, timeout=WORKER_TIMEOUT_S)
            except Exception:
                raise ClusterError(f"the dask scheduler at {scheduler!r} has no workers after "
                                   f"{WORKER_TIMEOUT_S:g} s; start some with `dask worker "
                                   f"{scheduler}`") from None
            versions = c.run(_worker_glint_version)
            odd = {w: v for w, v in versions.items() if v != __version__}
            if odd:
                raise ClusterError(f"worker(s) run another glint version than this one "
                                   f"({__version__!r}): {odd!r}; install the same version on "
                                   "every node")
            yield c, False
        finally:
            c.close()
        return
    n = workers or _cores()
    cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, host="127.0.0.1",
                           dashboard_address=None, silence_logs=logging.ERROR,
                           env=worker_environment(n))
    try:
        c = Client(cluster, set_as_default=False)
        try:
            yield c, True
        finally:
            with contextlib.suppress(Exception):
                c.close()
    finally:
        with contextlib.suppress(Exception):
            cluster.close()


def worker_environment(workers_per_host: int) -> dict[str, str]:
    """Environment of the local workers: the compiled kernels and GDAL's
    compression threads of each worker use the cores left to it (the
    workers already run in parallel; more threads than cores make each
    worker's threads wait for the other workers').

    Examples
    --------
    >>> env = worker_environment(10_000)
    >>> env["NUMBA_NUM_THREADS"], env["GDAL_NUM_THREADS"]
    ('1', '1')
    """
    share = str(max(1, _cores() // max(1, workers_per_host)))
    return {"NUMBA_NUM_THREADS": share, "GDAL_NUM_THREADS": share}


def _cores() -> int:
    """Cores this process may use."""
    if hasattr(os, "sched_getaffinity"):
        return max(1, len(os.sched_getaffinity(0)))
    return max(1, os.cpu_count() or 1)


def _n_workers(client: Any) -> int:
    try:
        return max(1, len(client.scheduler_info(n_workers=-1)["workers"]))
    except TypeError:
        return max(1, len(client.scheduler_info()["workers"]))


# ------------------------------------------------------------------ the run
class _Run:
    """State of one run: futures, outcomes, progress."""

    def __init__(self, client: Any, planned: list[PlannedScene], bar: Any,
                 on_outcome: Callable[[SceneOutcome], None] | None) -> None:
        self.client = client
        self.bar = bar
        self.on_outcome = on_outcome
        self.outcomes: dict[str, SceneOutcome] = {}
        self.pending: dict[Any, PlannedScene] = {}
        self.started: set[str] = set()
        self.done = self.failed = 0
        for p in planned:
            if not p.decision.run:
                st = read_state(p.folder) or {}
                self.outcomes[p.name] = SceneOutcome(
                    p.name, "skipped", p.decision.reason, float(st.get("seconds", float("nan"))),
                    "", list(st.get("files", [])), list(st.get("summaries", [])))

    def spec(self, p: PlannedScene) -> dict[str, Any]:
        st = read_state(p.folder) or {}
        return {"name": p.name, "file": str(p.resolved.entry.file), "data": p.resolved.data,
                "folder": str(p.folder), "inputs": p.inputs.to_json(),
                "previous_files": list(st.get("files", []))}

    def record(self, p: PlannedScene, res: Mapping[str, Any]) -> None:
        o = SceneOutcome(p.name, res["status"], p.decision.reason, float(res["seconds"]),
                         res.get("error", ""), list(res.get("files", [])),
                         list(res.get("summaries", [])))
        self.outcomes[p.name] = o
        if o.status == "failed":
            self.failed += 1
        else:
            self.done += 1
        if self.bar is not None:
            self.bar.set_postfix_str(f"done {self.done}, failed {self.failed}", refresh=False)
            self.bar.update(1)
        if self.on_outcome is not None:
            self.on_outcome(o)

    def harvest(self, block: bool) -> None:
        """Record finished scene tasks (all of them when ``block``)."""
        if not self.pending:
            return
        if block:
            from distributed import as_completed

            for fut in as_completed(list(self.pending), loop=self.client.loop):
                self._take(fut)
        else:
            for fut in [f for f in self.pending if f.done()]:
                self._take(fut)

    def _take(self, fut: Any) -> None:
        p = self.pending.pop(fut)
        try:
            res = fut.result()
        except Exception as exc:  # the worker died or the task was lost
            res = _record_failure(p.folder, self.spec(p), f"the task was lost: {_error_text(exc)}", float("nan"))
        self.record(p, res)


def _strips(run: _Run, p: PlannedScene, block_rows: int, ahead: int) -> Iterator[Strip]:
    """The strips of every time of a large scene, computed on the workers and
    yielded in order (time by time, rows from 0), at most ``ahead`` in
    flight; finished scene tasks are recorded between strips."""
    scene = p.resolved.scene
    variables = strip_variables(scene)
    file = str(p.resolved.entry.file)
    rows = [(int(b[0]), int(b[1])) for b in scene.grid.blocks(block_rows)]
    work = [(t, r0, r1) for t in scene.times for r0, r1 in rows]
    futures: list[Any] = []
    try:
        for i, (t, r0, r1) in enumerate(work):
            while len(futures) < len(work) and len(futures) < i + ahead:
                tt, a, b = work[len(futures)]
                key = f"{p.inputs.digest}-{tt}"
                futures.append(run.client.submit(
                    compute_strip, key, file, p.resolved.data, tt, a, b,
                    variables, pure=False, priority=10, retries=0))
            arrays = futures[i].result()
            futures[i] = None
            run.harvest(block=False)
            yield slice(r0, r1), arrays
    finally:
        left = [f for f in futures if f is not None]
        if left:
            with contextlib.suppress(Exception):
                run.client.cancel(left)


def _run_split(run: _Run, p: PlannedScene, block_rows: int, ahead: int) -> dict[str, Any]:
    """Write a large scene here (one output set) from strips computed on the
    workers."""
    spec = run.spec(p)
    t0 = time.perf_counter()
    try:
        p.folder.mkdir(parents=True, exist_ok=True)
        result = _write_maps(p.resolved.scene, p.folder, blocks=_strips(run, p, block_rows, ahead))
        return _finish(p.folder, spec, result.files, result.summaries, time.perf_counter() - t0)
    except Exception as exc:
        return _record_failure(p.folder, spec, _error_text(exc), time.perf_counter() - t0)


def _progress_bar(total: int, show: bool | None) -> Any:
    from tqdm.auto import tqdm

    disable = (not sys.stderr.isatty() or total == 0) if show is None else not show
    return tqdm(total=total, unit="scene", desc="glint batch", disable=disable, dynamic_ncols=True,
                file=sys.stderr)


def run_batch(
    manifest: Manifest | str | Path,
    outdir: str | Path,
    *,
    workers: int | None = None,
    scheduler: str | None = None,
    client: Any = None,
    force: bool = False,
    confirm: bool = False,
    progress: bool | None = None,
    split_pixels: int = SPLIT_PIXELS,
    block_rows: int = 512,
    connect_timeout: float = CONNECT_TIMEOUT_S,
    on_outcome: Callable[[SceneOutcome], None] | None = None,
) -> BatchResult:
    """Compute every scene of a batch manifest on a dask cluster.

    Parameters
    ----------
    manifest : Manifest or path-like
        The batch manifest (see :mod:`glint.workflows.batch.manifest`).
    outdir : path-like
        Output directory (created if its parent exists); one folder per
        scene, named after the scene, plus the summary files.
    workers : int, optional
        Workers of the local cluster (default: one per core). Ignored with
        ``scheduler`` or ``client``.
    scheduler : str, optional
        Address of a running dask scheduler (``tcp://host:8786``); its
        workers must see ``outdir`` and the scene files at the same paths.
    client : distributed.Client, optional
        An existing client to use (not closed here).
    force : bool
        Run every scene, also those done and unchanged.
    confirm : bool
        Allow tile grids larger than the limit
        (:data:`~glint.workflows.batch.tiles.MAX_TILE_SCENES`).
    progress : bool, optional
        Show a progress bar on standard error; default: when it is a terminal.
    split_pixels : int
        Scenes with more pixels than this are spread over the workers by
        strips of ``block_rows`` rows and written by this process.
    connect_timeout : float
        Seconds to wait for the scheduler at ``scheduler``.
    on_outcome : callable(SceneOutcome), optional
        Called as each scene finishes.

    Returns
    -------
    BatchResult
        Outcomes in manifest order; ``result.ok`` is false when a scene
        failed. The summary is written to ``batch-summary.csv`` and
        ``batch-summary.json`` in ``outdir``.

    Raises
    ------
    ManifestError
        Before any work, listing every bad entry with its position.
    ClusterError
        The scheduler cannot be reached (within ``connect_timeout``) or has
        no workers.
    RunStopped
        SIGINT or SIGTERM: running scenes were stopped and their temporary
        files removed; finished scenes and the summary are kept.
    """
    from glint.workflows.batch.summary import write_summary

    t_start = time.perf_counter()
    outdir = Path(outdir)
    planned = plan_batch(manifest, outdir, force=force, confirm=confirm)
    _make_outdir(outdir)
    to_run = [p for p in planned if p.decision.run]
    bar = _progress_bar(len(to_run), progress)
    result = BatchResult(outdir, [])
    local = False
    run: _Run | None = None
    try:
        with stop_on_signals():
            try:
                if to_run:
                    with _cluster(client, scheduler, workers, connect_timeout) as (c, local):
                        run = _Run(c, planned, bar, on_outcome)
                        _execute(run, to_run, split_pixels, block_rows)
                else:
                    run = _Run(None, planned, None, on_outcome)
            except BaseException:
                # A stop signal, or an error of the run itself: leave no
                # temporaries, keep what finished, and write the summary.
                _after_stop(run, to_run, local)
                result.outcomes = _ordered(planned, run)
                result.seconds = time.perf_counter() - t_start
                with contextlib.suppress(Exception):
                    result.summary_files = write_summary(outdir, result.outcomes)
                raise
    finally:
        bar.close()
    result.outcomes = _ordered(planned, run)
    result.seconds = time.perf_counter() - t_start
    result.summary_files = write_summary(outdir, result.outcomes)
    return result


def _make_outdir(outdir: Path) -> None:
    """Create the output directory (its parent must exist)."""
    if outdir.exists() and not outdir.is_dir():
        raise OutputError(f"output directory {str(outdir)!r} is a file, not a directory")
    try:
        outdir.mkdir(exist_ok=True)
    except FileNotFoundError:
        raise OutputError(f"cannot create output directory {str(outdir)!r}: its parent does "
                          "not exist") from None
    except OSError as exc:
        raise OutputError(f"cannot create output directory {str(outdir)!r}: {exc.strerror}") from None


def _execute(run: _Run, to_run: list[PlannedScene], split_pixels: int, block_rows: int) -> None:
    n_workers = _n_workers(run.client)
    can_split = n_workers > 1
    large = [p for p in to_run if can_split and p.pixels > split_pixels]
    small = [p for p in to_run if p not in large]
    for p in small:
        fut = run.client.submit(run_scene_task, run.spec(p), key=f"glint-scene-{p.name}-{os.urandom(4).hex()}",
                                pure=False, retries=0)
        run.pending[fut] = p
        run.started.add(p.name)
    for p in large:
        run.started.add(p.name)
        run.record(p, _run_split(run, p, block_rows, ahead=2 * n_workers))
    run.harvest(block=True)


def _after_stop(run: _Run | None, to_run: list[PlannedScene], local: bool) -> None:
    """Cancel what runs, and remove the temporaries of scenes cut short."""
    if run is None:
        return
    if run.pending and run.client is not None:
        with contextlib.suppress(Exception):
            run.client.cancel(list(run.pending))
    # A local cluster is closed on the way out of _cluster (its workers are
    # stopped); their temporaries are removed here once they are gone.
    for p in to_run:
        if p.name in run.started and p.name not in run.outcomes:
            began = p.folder.exists()
            with contextlib.suppress(OSError):
                clean_stale(p.folder)
                if p.folder.is_dir() and not any(p.folder.iterdir()):
                    p.folder.rmdir()
            st = read_state(p.folder) or {}
            if decide(p.folder, p.inputs).status == "done":  # finished while stopping
                run.outcomes[p.name] = SceneOutcome(
                    p.name, "done", p.decision.reason, float(st.get("seconds", float("nan"))), "",
                    list(st.get("files", [])), list(st.get("summaries", [])))
            else:
                run.outcomes[p.name] = SceneOutcome(p.name, "stopped" if began else "not run",
                                                    p.decision.reason)


def _ordered(planned: list[PlannedScene], run: _Run | None) -> list[SceneOutcome]:
    got = run.outcomes if run is not None else {}
    return [got.get(p.name) or SceneOutcome(p.name, "not run", p.decision.reason) for p in planned]
