"""The main job: a scene, computed once, written as GeoTIFF, NetCDF and PNG.

One pass over the grid's strips feeds every writer, so the maps of a scene
are computed once whatever the number of formats. All files of all scene
times form one output set (:mod:`glint.io.outputset`): they are renamed into
place together when everything is written, and a failure or a stop (Ctrl-C,
SIGTERM) leaves none of them.
"""

from __future__ import annotations

import logging
import math
import os
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Optional

import numpy as np
from numpy.typing import NDArray

from glint._version import __version__
from glint.engine import compute
from glint.errors import InputError
from glint.geo.grid import Grid
from glint.io.geotiff import GeoTiffWriter
from glint.io.naming import check_free_space
from glint.io.netcdf import CHUNK_ROWS, ClassFlags, NetCDFWriter
from glint.io.outputset import OutputSet, OutputWriter
from glint.io.quicklook import (
    QuicklookStyle,
    QuicklookWriter,
    check_quicklook_variables,
    class_palette,
)
from glint.scene import OUTPUT_FORMATS, Scene
from glint.times import format_time
from glint.variables import CLASS_NODATA, DEFAULT_VARIABLES, VARIABLES, bytes_per_pixel
from glint.workflows.job import (
    RUN_RECORD_SUFFIX,
    GlintTally,
    JobResult,
    TimeFiles,
    TimeSummary,
    computed_ahead,
    plan_outputs,
    run_cautions,
    run_metadata,
    sun_note,
)

__all__ = ["FORMATS", "MapSummary", "MapResult", "Strip", "write_maps", "strip_variables",
           "class_colormap"]

log = logging.getLogger(__name__)

#: Output formats understood by :func:`write_maps` (those of scene files).
FORMATS = OUTPUT_FORMATS

#: One strip of a map: whole grid rows and an array per variable.
Strip = tuple[slice, Mapping[str, NDArray[Any]]]
#: A strip or a window of one: rows, columns (None: all), arrays.
_Piece = tuple[slice, Optional[slice], Mapping[str, NDArray[Any]]]

#: Variables the summary and the quicklook need besides the written ones.
_ALWAYS = ("glint_reflectance", "view_zenith", "glint_class")

#: File-name suffix of each kind of map file (PNG quicklooks: ``png:<variable>``).
_SUFFIXES = {"geotiff": "_glint.tif", "classes": "_glint_class.tif", "netcdf": "_glint.nc",
             "run": RUN_RECORD_SUFFIX}

#: The quicklooks written when the variables are the defaults: the glint
#: reflectance, and the classes whenever they are written.
DEFAULT_QUICKLOOKS = ("glint_reflectance", "glint_class")


def _png_suffix(variable: str) -> str:
    """``_glint.png`` for the reflectance (the headline quicklook),
    ``_glint_class.png`` for the classes, ``_<variable>.png`` otherwise."""
    return {"glint_reflectance": "_glint.png", "glint_class": "_glint_class.png"}.get(
        variable, f"_{variable}.png")


@dataclass(frozen=True)
class MapSummary(TimeSummary):
    """Summary of the maps of one scene time (sun angles at the grid centre).

    Adds ``tie_point_step``: the spacing [pixels] of the tie-point lattice
    the sun angles (and, for sensors far from the grid, the view angles) were
    interpolated from (0 = the sun computed at every pixel).
    """

    tie_point_step: int


@dataclass
class MapResult(JobResult[MapSummary]):
    """What :func:`write_maps` wrote and a :class:`MapSummary` per time."""


def strip_variables(scene: Scene, variables: Sequence[str] | None = None) -> tuple[str, ...]:
    """Variables each strip given to :func:`write_maps` (``blocks``) must hold:
    those written plus what the summary and the quicklook need.

    Examples
    --------
    >>> from glint.scene import load_scene
    >>> scene = load_scene("example_scenes/coastal_inlet_morning.toml")
    >>> strip_variables(scene, ["glint_angle"])
    ('glint_angle', 'glint_reflectance', 'view_zenith', 'glint_class')
    """
    names = compute.check_variables(variables or scene.outputs.variables)
    return tuple(dict.fromkeys([*names, *_ALWAYS]))


# ------------------------------------------------------------- the request
@dataclass(frozen=True)
class _Request:
    """The checked options of one :func:`write_maps` call."""

    formats: tuple[str, ...]
    float_vars: tuple[str, ...]
    with_classes: bool
    cog: bool
    needed: tuple[str, ...]
    quicklooks: tuple[str, ...]

    @classmethod
    def check(cls, scene: Scene, formats: Sequence[str] | None, variables: Sequence[str] | None,
              cog: bool | None) -> _Request:
        fmts = tuple(formats or scene.outputs.formats)
        bad = [f for f in fmts if f not in FORMATS]
        if bad:
            raise InputError(f"unknown output format(s) {bad!r}; allowed: {', '.join(FORMATS)}")
        names = compute.check_variables(variables or scene.outputs.variables)
        # Glint variables first, in the table's order: band 1 of the float
        # GeoTIFF is then the glint reflectance whenever it is written.
        order = {v: i for i, v in enumerate(VARIABLES)}
        floats = tuple(sorted((v for v in names if VARIABLES[v].dtype != "uint8"),
                              key=order.__getitem__))
        quicklooks: tuple[str, ...] = ()
        if "png" in fmts:
            if tuple(sorted(names, key=order.__getitem__)) == tuple(DEFAULT_VARIABLES):
                quicklooks = tuple(v for v in DEFAULT_QUICKLOOKS if v in names)
            else:  # the variables named are the quicklooks drawn
                quicklooks = check_quicklook_variables(names)
        return cls(
            formats=fmts,
            float_vars=floats,
            with_classes="glint_class" in names,
            cog=scene.outputs.cog if cog is None else bool(cog),
            needed=strip_variables(scene, names),
            quicklooks=quicklooks,
        )

    def suffixes(self) -> dict[str, str]:
        """Kind of file -> file-name suffix, for the files this request writes."""
        kinds = []
        if "geotiff" in self.formats:
            kinds += (["geotiff"] if self.float_vars else []) + (["classes"] if self.with_classes else [])
        kinds += [f for f in ("netcdf",) if f in self.formats]
        out = {k: _SUFFIXES[k] for k in kinds}
        out.update({f"png:{v}": _png_suffix(v) for v in self.quicklooks})
        out["run"] = _SUFFIXES["run"]
        return out

    def estimated_bytes(self, grid: Grid) -> int:
        """Raw size of one time's files: a safe upper bound for the space
        check (compressed outputs are usually several times smaller)."""
        per_pixel = bytes_per_pixel(self.float_vars + (("glint_class",) if self.with_classes else ()))
        copies = sum(1 for f in ("geotiff", "netcdf") if f in self.formats)
        return grid.size * per_pixel * max(copies, 1)


# ----------------------------------------------------------- one scene time
@dataclass(frozen=True)
class _TimeContext:
    """What one scene time needs before its strips: geometry plan, kernel
    parameters, metadata and the sun at the grid centre."""

    time: np.datetime64
    plan: compute.GeometryPlan
    params: compute.KernelParameters
    attrs: dict[str, Any]
    sun_zenith: float
    sun_azimuth: float
    run: dict[str, str]

    @classmethod
    def build(cls, scene: Scene, t: np.datetime64, command: str | None) -> _TimeContext:
        plan = compute.plan_geometry(scene, t)
        params = compute.kernel_parameters(scene, t)
        centre = compute.scene_center_summary(scene, t)
        attrs = compute.scene_attributes(scene, t, plan, params)
        note = sun_note(float(centre["sun_zenith"]))
        if note:
            attrs["sun_condition"] = note
        run = run_metadata(scene, t, command)
        attrs.update(run)  # version, command, cautions and the resolved scene
        return cls(t, plan, params, attrs, float(centre["sun_zenith"]),
                   float(centre["sun_azimuth"]), run)


@dataclass(frozen=True)
class _Feed:
    """A writer and the variables it takes from each strip."""

    writer: OutputWriter
    variables: tuple[str, ...]

    def write(self, rows: slice, strip: Mapping[str, NDArray[Any]], cols: slice | None = None) -> None:
        self.writer.write(rows, {n: strip[n] for n in self.variables}, cols)


def _class_flags(scene: Scene) -> ClassFlags:
    names = [n.replace(" ", "_") for n in scene.classes.names]
    return ClassFlags(np.arange(len(names), dtype=np.uint8), names,
                      tuple(scene.classes.thresholds), scene.classes.variable)


def _class_tags(attrs: Mapping[str, Any], flags: ClassFlags) -> dict[str, Any]:
    return {
        **attrs,
        "glint_class_values": " ".join(str(int(v)) for v in np.asarray(flags.values)),
        "glint_class_names": " ".join(flags.meanings),
        "glint_class_thresholds": " ".join(f"{x:g}" for x in np.asarray(flags.thresholds)),
        "glint_class_variable": flags.variable,
    }


def _acdd(scene: Scene, attrs: Mapping[str, Any]) -> dict[str, Any]:
    """ACDD-1.3 global attributes of a scene's NetCDF."""
    return {
        "title": f"Sun glint estimate: {scene.name}",
        "summary": scene.description or (
            "Per-pixel sun glint reflectance, normalised radiance, glint fraction and glint angle "
            "predicted from sun position, view geometry, water optics and a wave-slope distribution."
        ),
        "keywords": "sun glint, glint angle, Cox-Munk, Fresnel reflectance, remote sensing",
        "source": f"glint {__version__}",
        "history": f"{format_time(np.datetime64('now', 's'))} {attrs.get('glint_command', '')}",
        "comment": " ".join(run_cautions(scene)),
        **{k: v for k, v in attrs.items() if k not in ("caution",)},
    }


def _axis_units(g: Grid) -> str:
    try:
        return str(g.crs.axis_info[0].unit_name).replace("metre", "m")
    except (AttributeError, IndexError):
        return ""


def _threshold_marks(scene: Scene, variable: str, sun_zenith: float) -> tuple[tuple[float, str], ...]:
    """The class thresholds in the unit of ``variable`` (for its colour bar).

    Thresholds on the normalised radiance L/E are drawn on a reflectance
    scale as pi L/E / cos(sun zenith) at the grid centre (and the other way
    round), the relation of the two quantities (docs/theory.md).
    """
    c = scene.classes
    names = c.names[1:]
    if variable == c.variable:
        return tuple(zip(c.thresholds, names))
    cos_s = math.cos(math.radians(sun_zenith))
    if cos_s <= 0:
        return ()
    if (c.variable, variable) == ("glint_radiance", "glint_reflectance"):
        return tuple((math.pi * t / cos_s, n) for t, n in zip(c.thresholds, names))
    if (c.variable, variable) == ("glint_reflectance", "glint_radiance"):
        return tuple((t * cos_s / math.pi, n) for t, n in zip(c.thresholds, names))
    return ()


def _crs_name(g: Grid) -> str:
    epsg = g.crs.to_epsg()
    return f"{g.crs.name} (EPSG:{epsg})" if epsg else str(g.crs.name)


def _grid_convergence(g: Grid) -> float:
    x, y = g.xy(np.array([(g.height - 1) / 2.0]), np.array([(g.width - 1) / 2.0]))
    lon, lat = g.lonlat(x, y)
    return float(np.asarray(g.meridian_convergence(lon, lat)).ravel()[0])


def _quicklook_style(scene: Scene, ctx: _TimeContext, variable: str) -> QuicklookStyle:
    g = scene.grid
    c = scene.classes
    what = VARIABLES[variable].long_name
    subtitle = (f"{format_time(ctx.time, 'text')}   sun zenith {ctx.sun_zenith:.1f}°, "
                f"azimuth {ctx.sun_azimuth:.1f}° (grid centre)")
    note = sun_note(ctx.sun_zenith)
    if note:
        subtitle += f"\n{note[0].upper()}{note[1:]}"
    return QuicklookStyle(
        title=f"{scene.name}: {what}", subtitle=subtitle, crs_name=_crs_name(g),
        axis_units=_axis_units(g), geographic=g.crs.is_geographic,
        convergence=_grid_convergence(g),
        marks=_threshold_marks(scene, variable, ctx.sun_zenith),
        cautions=run_cautions(scene),
        class_names=tuple(c.names), class_thresholds=tuple(c.thresholds),
        class_variable_label=f"{c.variable} [{VARIABLES[c.variable].units}]",
    )


def _open_writers(out: OutputSet, files: TimeFiles, scene: Scene, request: _Request,
                  ctx: _TimeContext, whole_chunks: bool) -> list[_Feed]:
    """One writer per planned file of the time, each on its temporary path.
    ``whole_chunks``: every piece fills whole NetCDF chunks, so one chunk
    per variable is cached (not a row of them, which grows with the width)."""
    g, comp, flags = scene.grid, scene.outputs.compression, _class_flags(scene)
    feeds: list[_Feed] = []
    if files.has("geotiff"):
        feeds.append(_Feed(out.writer(files.key("geotiff"), lambda p: GeoTiffWriter(
            p, g, request.float_vars, cog=request.cog, compress=comp, tags=ctx.attrs)),
            request.float_vars))
    if files.has("classes"):
        feeds.append(_Feed(out.writer(files.key("classes"), lambda p: GeoTiffWriter(
            p, g, ["glint_class"], cog=request.cog, compress=comp,
            tags=_class_tags(ctx.attrs, flags),
            colormap=class_colormap(len(scene.classes.names)),
            categories=scene.classes.names)), ("glint_class",)))
    if files.has("netcdf"):
        nc_vars = request.float_vars + (("glint_class",) if request.with_classes else ())
        feeds.append(_Feed(out.writer(files.key("netcdf"), lambda p: NetCDFWriter(
            p, g, nc_vars, time=ctx.time, class_flags=flags,
            attrs={**_acdd(scene, ctx.attrs), "id": out.path(files.key("netcdf")).stem},
            cache_chunks=1 if whole_chunks else None)),
            nc_vars))
    left, bottom, right, top = g.bounds

    def quicklook_writer(variable: str) -> Callable[[Path], QuicklookWriter]:
        style = _quicklook_style(scene, ctx, variable)
        return lambda p: QuicklookWriter(p, g.shape, (left, right, bottom, top), variable, style)

    for v in request.quicklooks:
        feeds.append(_Feed(out.writer(files.key(f"png:{v}"), quicklook_writer(v)), (v,)))
    record = out.temp(files.key("run"))
    record.write_text(ctx.run["glint_run_record"], encoding="utf-8")
    return feeds


def _write_time(out: OutputSet, files: TimeFiles, scene: Scene, request: _Request,
                pieces: Iterable[_Piece], progress: Callable[[int, int], None] | None,
                ctx: _TimeContext, whole_chunks: bool) -> MapSummary:
    """Feed one time's strips (or windows of strips) to its writers; returns
    the time's summary."""
    g = scene.grid
    feeds = _open_writers(out, files, scene, request, ctx, whole_chunks)
    tally = GlintTally(scene.classes.names)
    for rows, cols, strip in pieces:
        for feed in feeds:
            feed.write(rows, strip, cols)
        tally.add(strip["glint_reflectance"], strip["glint_class"],
                  np.isfinite(strip["view_zenith"]))
        if progress is not None and (cols is None or cols.stop >= g.width):
            progress(rows.stop, g.height)
    # Raised inside the output set: nothing is left on disk.
    tally.require_seen(f"the sensor sees none of the grid's {tally.unseen} pixels; check the "
                       "sensor's position and pointing against the grid")
    for feed in feeds:  # finish this time's files now, not at the end of the run
        feed.writer.close()
    return MapSummary(time=ctx.time, sun_zenith=ctx.sun_zenith, sun_azimuth=ctx.sun_azimuth,
                      tie_point_step=int(ctx.plan.step), **MapSummary.tallied(tally))


# ------------------------------------------------------------------ strips
def _check_strip(strip: Any, expected_start: int, height: int,
                 needed: Sequence[str]) -> Strip:
    try:
        rows, arrays = strip
    except (TypeError, ValueError) as exc:
        raise InputError(f"blocks must yield (row_slice, {{variable: array}}) pairs; got "
                         f"{type(strip).__name__}") from exc
    if not isinstance(rows, slice) or not isinstance(arrays, Mapping):
        raise InputError(f"blocks must yield (row_slice, {{variable: array}}) pairs; got "
                         f"({type(rows).__name__}, {type(arrays).__name__})")
    r0, r1, step = rows.indices(height)
    if r0 != expected_start or r1 <= r0 or step != 1:
        raise InputError(f"blocks must cover the grid's rows in order, from 0 to {height}: "
                         f"expected a strip starting at row {expected_start}; got {rows!r}")
    missing = [v for v in needed if v not in arrays]
    if missing:
        raise InputError(f"a strip of blocks lacks variable(s) {missing!r}; compute "
                         f"glint.workflows.maps.strip_variables(scene, variables): {list(needed)!r}")
    return slice(r0, r1), arrays


def _given_strips(blocks: Iterable[Any], times: int, height: int,
                  needed: Sequence[str]) -> Iterator[Iterator[Strip]]:
    """Split a caller's strip stream into one row-ordered pass per time."""
    stream = iter(blocks)

    def one_time(k: int) -> Iterator[Strip]:
        start = 0
        while start < height:
            try:
                strip = next(stream)
            except StopIteration:
                raise InputError(f"blocks ended at row {start} of {height} of time {k + 1} of "
                                 f"{times}; give every row of every scene time") from None
            rows, arrays = _check_strip(strip, start, height, needed)
            start = rows.stop
            yield rows, arrays

    for k in range(times):
        yield one_time(k)
    extra = next(stream, None)
    if extra is not None:
        raise InputError(f"blocks gave more strips than the {times} scene time(s) x {height} rows")


# --------------------------------------------------------------------- API
def write_maps(
    scene: Scene,
    outdir: str | os.PathLike[str],
    *,
    formats: Sequence[str] | None = None,
    variables: Sequence[str] | None = None,
    overwrite: bool = False,
    cog: bool | None = None,
    block_rows: int = 512,
    progress: Callable[[int, int], None] | None = None,
    blocks: Iterable[Strip] | None = None,
    command: str | None = None,
) -> MapResult:
    """Compute a scene's glint maps and write them, all or nothing.

    Parameters
    ----------
    scene : glint.scene.Scene
    outdir : path-like
        Output directory (created if missing, when its parent exists).
    formats : sequence of {"geotiff", "netcdf", "png"}, optional
        Default: the scene's ``outputs.formats``.
    variables : sequence of str, optional
        Variables to write (names of :data:`glint.variables.VARIABLES`);
        default the scene's ``outputs.variables``.
    overwrite : bool
        Replace existing outputs. Without it an existing output is an error,
        raised before anything is computed.
    cog : bool, optional
        Write Cloud Optimized GeoTIFFs (default: the scene's setting).
    block_rows : int
        Rows per strip when the engine computes the strips.
    progress : callable(done_rows, total_rows), optional
        Called after each strip.
    blocks : iterable of (row_slice, {variable: array}), optional
        Strips computed elsewhere (e.g. on dask workers), replacing the
        engine's own :func:`glint.engine.compute.iter_blocks`: for each scene
        time in ``scene.times`` order, full-width strips covering the grid's
        rows in order from row 0. Each strip holds at least
        :func:`strip_variables` ``(scene, variables)``. They are written as
        they arrive, so the stream can be lazy.
    command : str, optional
        The command line that made the run, recorded in every file and in
        the run record (default: "glint Python interface").

    Files
    -----
    Per scene time: ``<stem>_glint.tif`` (float variables, glint variables
    first: band 1 is the glint reflectance), ``<stem>_glint_class.tif``
    (classes, with a palette and GDAL category names in its ``.aux.xml``),
    ``<stem>_glint.nc``, PNG quicklooks (``<stem>_glint.png`` of the
    reflectance and ``<stem>_glint_class.png`` of the classes with the
    default variables; one per variable named otherwise) and
    ``<stem>_run.toml``, the resolved scene that reproduces the run.

    Returns
    -------
    MapResult
        The files written and a :class:`MapSummary` per time: sun angles at
        the grid centre, largest and mean glint reflectance of the seen
        pixels, share of classified pixels per glint class, pixels the
        sensor does not see and the tie-point step.

    Raises
    ------
    InputError
        Unknown format or variable; ``blocks`` out of order, short, too long
        or lacking a variable.
    OutputError
        An output exists (without ``overwrite``) or cannot be written.
    SensorError
        The sensor sees none of the grid (nothing is written).
    RunStopped
        SIGINT or SIGTERM arrived; nothing is written.

    Examples
    --------
    Strips computed by the caller (here by the engine itself):

    >>> import tempfile
    >>> from glint.scene import load_scene
    >>> scene = load_scene("example_scenes/coastal_inlet_morning.toml")
    >>> names = strip_variables(scene, ["glint_reflectance"])
    >>> strips = compute.iter_blocks(scene, variables=names)
    >>> res = write_maps(scene, tempfile.mkdtemp(), formats=["geotiff"],
    ...                  variables=["glint_reflectance"], blocks=strips)
    >>> [p.name.split('Z_')[1] for p in res.files]
    ['glint.tif', 'run.toml']
    """
    request = _Request.check(scene, formats, variables, cog)
    plan = plan_outputs(scene, outdir, request.suffixes(), overwrite=overwrite)
    g = scene.grid
    given = None if blocks is None else _given_strips(blocks, len(plan.times), g.height,
                                                        request.needed)
    # The engine's windows are whole tiles of block_rows: they fill whole
    # NetCDF chunks when block_rows is a multiple of the chunk size. A
    # caller's strips may be of any height.
    whole_chunks = given is None and block_rows % CHUNK_ROWS == 0
    summaries: list[MapSummary] = []
    with plan.output_set as out:
        check_free_space(out.directory, request.estimated_bytes(g) * len(plan.times))
        # Refused before computing rather than stopped by the system: a
        # streamed run needs the same memory whatever the grid's size.
        compute.check_memory(_memory_needed(request), f"writing the maps of {scene.name!r}")
        for files in plan.times:
            ctx = _TimeContext.build(scene, files.time, command)
            pieces: Iterable[_Piece]
            if given is not None:
                pieces = ((rows, None, strip) for rows, strip in next(given))
            else:
                # Windows of strips (memory independent of the grid's width),
                # computed one ahead of the writers so both cores are busy.
                pieces = computed_ahead(compute.iter_windows(
                    scene, time=files.time, block_rows=block_rows, variables=request.needed,
                    plan=ctx.plan, params=ctx.params))
            summaries.append(_write_time(out, files, scene, request, pieces, progress, ctx,
                                         whole_chunks))
        if given is not None:
            next(given, None)  # refuses strips beyond the last time
    return MapResult(files=list(out.files), summaries=summaries)


#: GDAL's block cache while a GeoTIFF is written (GeoTiffWriter's default).
_GDAL_CACHE = 256 * 2**20


def _memory_needed(request: _Request) -> int:
    """Memory a map run needs beyond the interpreter and its libraries
    [bytes]: the engine's windows (:func:`glint.engine.compute.window_memory`),
    GDAL's block cache when GeoTIFFs are written, the NetCDF chunk cache (one
    chunk of each variable and of lat/lon) and the PNG's decimated copy."""
    need = compute.window_memory(request.needed)
    suffixes = request.suffixes()
    if any(k in suffixes for k in ("geotiff", "classes")):
        need += _GDAL_CACHE
    if "netcdf" in suffixes:
        need += CHUNK_ROWS * CHUNK_ROWS * (bytes_per_pixel(request.needed) + 16)
    return need + 1200 * 1200 * 4


def class_colormap(n_classes: int) -> dict[int, tuple[int, int, int, int]]:
    """Palette of the class raster: the quicklook's colours, ordered by
    severity (:func:`glint.io.quicklook.class_palette`); no data transparent."""
    colours = {k: (*rgb, 255) for k, rgb in enumerate(class_palette(n_classes))}
    colours[CLASS_NODATA] = (0, 0, 0, 0)
    return colours
