"""The skeleton every workflow shares: plan the run's files, refuse existing
ones before computing, write everything through one output set, tally what
the sensor saw, and return typed summaries.

A workflow (maps, camera views, image masks, survey plans, each scene of a
batch) runs like this::

    plan = plan_outputs(scene, outdir, {"geotiff": "_glint.tif"}, overwrite=overwrite)
    # existing files were refused here, before any computation
    with plan.output_set as out:                 # one set: all files of all times
        for files in plan.times:                 # one TimeFiles per scene time
            w = out.writer(files.key("geotiff"), lambda p: GeoTiffWriter(p, ...))
            tally = GlintTally(scene.classes.names)
            for rows, strip in ...:              # the engine's strips
                w.write(rows, strip)
                tally.add(strip["glint_reflectance"], strip["glint_class"], seen)
            tally.require_seen("the sensor sees none of ...")
            w.close()
    result = SomeResult(files=list(out.files), summaries=[...])

If anything fails, or the run is stopped by SIGINT/SIGTERM, the set removes
every temporary file: a stopped run leaves nothing, and a re-run needs no
``--overwrite``.
"""

from __future__ import annotations

import math
import os
import queue
import threading
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, ClassVar, Generic, Protocol, TypeVar, cast

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint._version import __version__
from glint.errors import SensorError
from glint.io.naming import output_stem
from glint.io.outputset import OutputSet
from glint.io.quicklook import CAUTION, FLIGHT_CAUTION
from glint.variables import CLASS_NODATA

__all__ = [
    "TimeFiles",
    "OutputPlan",
    "plan_outputs",
    "GlintTally",
    "TimeSummary",
    "JobResult",
    "seen_mask",
    "computed_ahead",
    "LOW_SUN_ELEVATION",
    "sun_note",
    "run_cautions",
    "run_metadata",
    "RUN_RECORD_SUFFIX",
]

#: Sun elevation [°] below which a summary warns that the sun is low: below
#: it refraction, wave shadowing and hiding, which the slope statistics treat
#: only roughly, dominate the glint (common practice puts the limit of the
#: Cox-Munk statistics at a few degrees of elevation).
LOW_SUN_ELEVATION = 5.0

#: File-name suffix of the run record written beside every run's outputs.
RUN_RECORD_SUFFIX = "_run.toml"


def sun_note(sun_zenith: float) -> str | None:
    """A warning when the sun is below the horizon or low, else None.

    Examples
    --------
    >>> sun_note(95.0)
    'the sun is below the horizon (elevation -5.0 deg): no sun glint, the maps are all zero'
    >>> sun_note(30.0) is None
    True
    """
    elevation = 90.0 - float(sun_zenith)
    if not math.isfinite(elevation):
        return None
    if elevation <= 0.0:
        return (f"the sun is below the horizon (elevation {elevation:.1f} deg): no sun glint, "
                "the maps are all zero")
    if elevation < LOW_SUN_ELEVATION:
        return (f"the sun is low (elevation {elevation:.1f} deg, below {LOW_SUN_ELEVATION:g} deg): "
                "glint estimates are least reliable there")
    return None


def run_cautions(scene: Any) -> tuple[str, ...]:
    """The cautions of a run: always :data:`CAUTION`; with a drone camera
    (a frame camera that is not a fixed shore or mast camera) also
    :data:`FLIGHT_CAUTION`."""
    from glint.sensors import FixedCamera, FrameCamera

    sensor = getattr(scene, "sensor", None)
    drone = isinstance(sensor, FrameCamera) and not isinstance(sensor, FixedCamera)
    return (CAUTION, FLIGHT_CAUTION) if drone else (CAUTION,)


def run_metadata(scene: Any, time: np.datetime64, command: str | None) -> dict[str, str]:
    """What every output file records about its run: glint's version, the
    command, the cautions and the resolved scene (as a scene file that
    reproduces the run, :func:`glint.scene.scene_toml`)."""
    from glint.scene import scene_toml

    cmd = command or "glint Python interface"
    return {
        "glint_version": __version__,
        "glint_command": cmd,
        "caution": " ".join(run_cautions(scene)),
        "glint_run_record": scene_toml(scene, command=cmd, version=__version__, times=(time,)),
    }



T = TypeVar("T")


def computed_ahead(items: Iterable[T], depth: int = 1) -> Iterator[T]:
    """The items of ``items``, computed in a background thread at most
    ``depth`` items ahead of the one the consumer holds.

    While the caller writes one strip (GDAL and netCDF compress in native
    code, without Python's lock), the next is computed (the compiled kernels
    release it too), so both cores are busy. At most ``depth + 1`` items
    are alive at once (the consumer's and those computed or being computed
    ahead of it): the thread computes the next item only once the consumer
    is done with the one before. An exception in the computation is raised
    here, in the consumer; when the consumer stops early (an error, SIGINT
    or SIGTERM) the computation stops after its current item.
    """
    q: queue.Queue[tuple[str, Any]] = queue.Queue()
    slots = threading.Semaphore(max(int(depth), 1) + 1)  # items alive
    stop = threading.Event()

    def produce() -> None:
        try:
            it = iter(items)
            while True:
                while not slots.acquire(timeout=0.1):
                    if stop.is_set():
                        return
                if stop.is_set():
                    return
                try:
                    item = next(it)
                except StopIteration:
                    q.put(("end", None))
                    return
                q.put(("item", item))
                del item
        except BaseException as exc:  # handed to the consumer
            q.put(("error", exc))

    worker = threading.Thread(target=produce, name="glint-compute", daemon=True)
    worker.start()
    try:
        while True:
            kind, value = q.get()
            if kind == "end":
                return
            if kind == "error":
                raise value
            yield value
            del value
            slots.release()  # the consumer is done with it
    finally:
        stop.set()
        while worker.is_alive():
            worker.join(timeout=0.05)
        while True:  # drop what was computed ahead
            try:
                q.get_nowait()
            except queue.Empty:
                break


class _SceneLike(Protocol):
    @property
    def file_stem(self) -> str: ...

    @property
    def times(self) -> tuple[np.datetime64, ...]: ...


# ------------------------------------------------------------------ planning
@dataclass(frozen=True)
class TimeFiles:
    """The planned files of one scene time.

    Attributes
    ----------
    time : numpy.datetime64
        The scene time.
    stem : str
        File-name stem of the time (:func:`glint.io.naming.output_stem`).
    keys : dict of str to str
        Kind of file (e.g. ``"geotiff"``) -> key of the file in the output set.
    """

    time: np.datetime64
    stem: str
    keys: dict[str, str]

    def key(self, kind: str) -> str:
        """Output-set key of the file ``kind`` of this time."""
        return self.keys[kind]

    def has(self, kind: str) -> bool:
        """Whether the file ``kind`` is planned for this time."""
        return kind in self.keys


@dataclass(frozen=True)
class OutputPlan:
    """Every file of one run, planned before anything is computed.

    ``output_set`` holds the files of all times (one set per run: a stopped
    run leaves none of them); ``times`` lists them per scene time.
    """

    output_set: OutputSet
    times: tuple[TimeFiles, ...]

    @property
    def paths(self) -> list[Path]:
        """Final paths of every planned file, in plan order."""
        return list(self.output_set.paths.values())


def plan_outputs(scene: _SceneLike, outdir: str | os.PathLike[str], suffixes: Mapping[str, str],
                 *, overwrite: bool = False, parents: bool = False,
                 times: Sequence[Any] | None = None) -> OutputPlan:
    """Plan the files of a run and refuse existing ones (before any work).

    Parameters
    ----------
    scene : glint.scene.Scene
        Gives the file stem and, by default, the times.
    outdir : path-like
        Output directory (created when the set opens, if its parent exists
        or ``parents`` is true).
    suffixes : mapping of str to str
        Kind of file -> suffix after the time's stem, e.g.
        ``{"geotiff": "_glint.tif", "png": "_glint.png"}``.
    overwrite : bool, optional
        Replace existing files (default: refuse them).
    parents : bool, optional
        Create missing parent directories too.
    times : sequence of datetime-like, optional
        Default: ``scene.times``.

    Returns
    -------
    OutputPlan

    Raises
    ------
    OutputError
        A planned file exists (without ``overwrite``), a planned path is a
        directory, or ``outdir`` is a file.

    Examples
    --------
    >>> import tempfile
    >>> class S:
    ...     file_stem = "bay"
    ...     times = (np.datetime64("2026-06-14T10:30:00"),)
    >>> plan = plan_outputs(S(), tempfile.mkdtemp(), {"png": "_glint.png"})
    >>> plan.times[0].stem, [p.name for p in plan.paths]
    ('bay_20260614T103000Z', ['bay_20260614T103000Z_glint.png'])
    """
    names: dict[str, str] = {}
    per_time = []
    for time in (scene.times if times is None else times):
        t = cast(np.datetime64, np.asarray(time, dtype="datetime64[ns]")[()])
        stem = output_stem(scene, t)
        keys = {}
        for kind, suffix in suffixes.items():
            key = f"{kind}:{stem}"
            names[key] = f"{stem}{suffix}"
            keys[kind] = key
        per_time.append(TimeFiles(t, stem, keys))
    out = OutputSet(outdir, names, overwrite=overwrite, parents=parents)
    out.check()
    return OutputPlan(out, tuple(per_time))


# ------------------------------------------------------------------ tallies
class GlintTally:
    """What a run saw, accumulated strip by strip: largest and mean glint
    reflectance over the seen pixels, pixels per glint class, unseen pixels.

    Parameters
    ----------
    class_names : sequence of str
        The scene's glint class names (class ``k`` is ``class_names[k]``).

    Examples
    --------
    >>> t = GlintTally(["low", "high"])
    >>> t.add(np.array([[0.0, 0.2, np.nan]]), np.array([[0, 1, 255]], np.uint8),
    ...       np.array([[True, True, False]]))
    >>> t.max_reflectance, t.mean_reflectance, t.unseen, t.class_shares
    (0.2, 0.1, 1, {'low': 0.5, 'high': 0.5})
    """

    def __init__(self, class_names: Sequence[str]) -> None:
        self.class_names = tuple(class_names)
        self.counts = np.zeros(len(self.class_names), dtype=np.int64)
        self.unseen = 0
        self.pixels = 0
        self._max = -math.inf
        self._sum = 0.0
        self._n = 0

    def add(self, reflectance: ArrayLike, classes: ArrayLike, seen: ArrayLike) -> None:
        """Count one strip (or a whole field).

        Parameters
        ----------
        reflectance : array
            Glint reflectance factor (NaN where there is none).
        classes : uint8 array
            Glint classes (``CLASS_NODATA`` where there is none).
        seen : bool array
            Pixels the sensor sees.
        """
        refl = np.asarray(reflectance)
        cls = np.asarray(classes)
        ok = np.asarray(seen, dtype=bool)
        self.pixels += int(ok.size)
        self.unseen += int(ok.size - np.count_nonzero(ok))
        values = refl[ok & np.isfinite(refl)]
        if values.size:
            self._max = max(self._max, float(values.max()))
            self._sum += float(values.sum(dtype=np.float64))
            self._n += int(values.size)
        n = len(self.class_names)
        self.counts += np.bincount(cls.ravel(), minlength=CLASS_NODATA + 1)[:n]

    @property
    def seen(self) -> int:
        """Pixels the sensor sees."""
        return self.pixels - self.unseen

    @property
    def max_reflectance(self) -> float:
        """Largest glint reflectance factor of the seen pixels (NaN if none)."""
        return self._max if self._n else math.nan

    @property
    def mean_reflectance(self) -> float:
        """Mean glint reflectance factor of the seen pixels (NaN if none)."""
        return self._sum / self._n if self._n else math.nan

    @property
    def class_shares(self) -> dict[str, float]:
        """Share of each glint class among the classified pixels."""
        total = int(self.counts.sum())
        return {name: (float(c) / total if total else 0.0)
                for name, c in zip(self.class_names, self.counts)}

    def require_seen(self, message: str) -> None:
        """Raise :class:`~glint.errors.SensorError` with ``message`` when the
        sensor sees none of the pixels (raised inside the output set, so
        nothing is written)."""
        if self.pixels and self.seen == 0:
            raise SensorError(message)


# ---------------------------------------------------------------- summaries
@dataclass(frozen=True)
class TimeSummary:
    """What a workflow found at one scene time (the fields every workflow
    reports; workflows extend it).

    Attributes
    ----------
    time : numpy.datetime64
    sun_zenith, sun_azimuth : float
        Sun angles [°] at the place named by :attr:`sun_at`.
    max_glint_reflectance, mean_glint_reflectance : float
        Largest and mean glint reflectance factor over the seen pixels.
    class_shares : dict of str to float
        Share of each glint class among the classified pixels.
    unseen_pixels : int
        Pixels the sensor does not see.
    """

    #: Where the sun angles are taken (shown with them).
    sun_at: ClassVar[str] = "grid centre"

    @property
    def sun_note(self) -> str | None:
        """A warning when the sun is below the horizon or low (:func:`sun_note`)."""
        return sun_note(self.sun_zenith)

    time: np.datetime64
    sun_zenith: float
    sun_azimuth: float
    max_glint_reflectance: float
    mean_glint_reflectance: float
    class_shares: dict[str, float]
    unseen_pixels: int

    @staticmethod
    def tallied(tally: GlintTally) -> dict[str, Any]:
        """The fields a :class:`GlintTally` gives, as keyword arguments."""
        return {
            "max_glint_reflectance": tally.max_reflectance,
            "mean_glint_reflectance": tally.mean_reflectance,
            "class_shares": tally.class_shares,
            "unseen_pixels": tally.unseen,
        }


S = TypeVar("S", bound=TimeSummary)


@dataclass
class JobResult(Generic[S]):
    """What a workflow wrote and a summary per scene time."""

    files: list[Path] = field(default_factory=list)
    summaries: list[S] = field(default_factory=list)

    @property
    def summary(self) -> S:
        """Summary of the first time (most scenes have one)."""
        return self.summaries[0]


def seen_mask(view_zenith: NDArray[Any]) -> NDArray[np.bool_]:
    """Pixels a sensor sees: those with a view zenith angle."""
    return np.isfinite(view_zenith)
