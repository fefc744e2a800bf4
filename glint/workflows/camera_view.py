"""Glint as a camera will see it: maps in the camera's own image coordinates.

For a scene whose sensor is a frame camera (drone) or a fixed camera, every
image pixel's ray is intersected with the water (see
:func:`glint.sensors.camera_image_geometry`) and the glint variables are
computed at those ground points (:func:`glint.engine.compute.compute_points`). The
result shows where glint will fall in the photo, which is what a survey
planner checks before choosing a time, heading or gimbal pitch.

Glint maps are statistical estimates, not safety clearances. Flights follow
local regulations and licensed practice.
"""

from __future__ import annotations

import logging
import math
import os
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from glint.engine import compute
from glint.errors import InputError, SensorError
from glint.io.geojson import FootprintWriter
from glint.io.netcdf import ClassFlags, ImageGrid, NetCDFWriter
from glint.io.outputset import OutputSet
from glint.io.quicklook import QuicklookStyle, QuicklookWriter
from glint.scene import Scene
from glint.sensors import CameraImage, FrameCamera, camera_image_geometry
from glint.times import format_time
from glint.variables import VARIABLES
from glint.workflows.job import (
    RUN_RECORD_SUFFIX,
    GlintTally,
    JobResult,
    TimeFiles,
    TimeSummary,
    plan_outputs,
    run_cautions,
    run_metadata,
    sun_note,
)

__all__ = ["CameraViewSummary", "CameraViewResult", "camera_view", "write_camera_view",
           "PREVIEW_LONG_SIDE", "STRIP_ROWS", "default_step"]

log = logging.getLogger(__name__)

#: Long side [pixels] of a camera view computed with the default step: what
#: a person wants from a preview; ``step=1`` computes every pixel.
PREVIEW_LONG_SIDE = 1000

#: Output rows :func:`write_camera_view` computes and writes at a time: its
#: peak memory grows with this times the image width, not with the image.
STRIP_ROWS = 256

_SUFFIXES = {"png": "_camera_view.png", "class_png": "_camera_view_class.png",
             "netcdf": "_camera_view.nc", "footprint": "_footprint.geojson",
             "run": RUN_RECORD_SUFFIX}


def default_step(camera: FrameCamera) -> int:
    """Pixel step that brings the image's long side to about
    :data:`PREVIEW_LONG_SIDE` pixels (1 for small images).

    Examples
    --------
    >>> cam = FrameCamera(lon=0.0, lat=50.0, altitude=100.0, image_size=(4000, 3000),
    ...                   horizontal_fov=70.0)
    >>> default_step(cam)
    4
    """
    return max(1, math.ceil(max(camera.cols, camera.rows) / PREVIEW_LONG_SIDE))


@dataclass(frozen=True)
class CameraViewSummary(TimeSummary):
    """Summary of the camera view of one scene time (sun angles below the
    camera).

    Adds ``pixel_step`` (every how many image pixels were computed),
    ``footprint`` (``None`` when the footprint was written, else why it was
    not) and ``ground_sampling_distance`` (metres from column to column and
    from row to row at the image centre; ``None`` when the centre looks at
    or above the horizon).
    """

    sun_at: ClassVar[str] = "below the camera"

    pixel_step: int
    footprint: str | None
    ground_sampling_distance: tuple[float, float] | None


@dataclass
class CameraViewResult(JobResult[CameraViewSummary]):
    """Files written by :func:`write_camera_view` and a summary per time."""


def _kind_name(sensor: object) -> str:
    """The scene-file ``kind`` of a sensor object."""
    from glint.sensors import SENSOR_KINDS

    for kind, spec in SENSOR_KINDS.items():
        built = getattr(spec.builder, "__module__", None)
        if built == type(sensor).__module__:
            return kind
    return type(sensor).__name__


def _camera(scene: Scene) -> FrameCamera:
    cam = scene.sensor
    if not isinstance(cam, FrameCamera):
        raise SensorError(
            f"camera views need a sensor of kind 'frame-camera' or 'fixed-camera'; "
            f"this scene's sensor is of kind {_kind_name(cam)!r}"
        )
    return cam


def _image_axes(cam: FrameCamera, step: int) -> tuple[np.ndarray, np.ndarray]:
    """Image row and column of each output row and column."""
    return np.arange(0, cam.rows, step), np.arange(0, cam.cols, step)


def _view_strip(scene: Scene, cam: FrameCamera, t: np.datetime64, step: int,
                rows: slice | None, names: Sequence[str],
                params: compute.KernelParameters) -> tuple[CameraImage, dict[str, np.ndarray]]:
    """Geometry and glint variables of the output rows ``rows`` (None: all)."""
    geo = camera_image_geometry(cam, step=step, rows=rows)
    res = compute.compute_points(scene, t, longitude=geo.lon, latitude=geo.lat,
                                 view_zenith=geo.view_zenith, view_azimuth=geo.view_azimuth,
                                 variables=names, params=params)
    return geo, res


def _view_attributes(scene: Scene, cam: FrameCamera, t: np.datetime64,
                     params: compute.KernelParameters, unseen: int) -> dict[str, Any]:
    """Attributes of a camera view (the dataset's and the NetCDF's)."""
    return {**compute.scene_attributes(scene, t, params=params),
            "unseen_pixels": int(unseen), "image_size": f"{cam.cols} x {cam.rows}"}


def camera_view(scene: Scene, *, time: Any = None, step: int = 1,
                variables: Sequence[str] | None = None) -> Any:
    """Glint variables for every pixel of the scene's camera image.

    The whole image is computed at once; :func:`write_camera_view` writes
    the same values strip by strip in bounded memory.

    Parameters
    ----------
    scene : glint.scene.Scene
        A scene whose sensor is a frame camera or a fixed camera.
    time : datetime-like, optional
        One of the scene's times (default: the first).
    step : int, optional
        Take every ``step``-th image pixel in both directions.
    variables : sequence of str, optional
        Names from :data:`glint.variables.VARIABLES` (default: all).

    Returns
    -------
    xarray.Dataset
        Dimensions ``(row, col)`` in image pixels (row 0 at the top of the
        image), 2-D ``lon``/``lat`` of each pixel's ground point, NaN (class
        255) where the pixel's ray does not reach the water. The attribute
        ``unseen_pixels`` counts those pixels.

    Raises
    ------
    SensorError
        If the scene's sensor is not a camera.
    """
    import xarray as xr

    cam = _camera(scene)
    t = scene.times[0] if time is None else np.datetime64(time, "ns")
    names = compute.check_variables(variables)
    params = compute.kernel_parameters(scene, t)
    geo, res = _view_strip(scene, cam, t, step, None, names, params)
    rows, cols = _image_axes(cam, step)
    data = {v: (("row", "col"), res[v], compute.variable_attributes(v, scene)) for v in names}
    ds = xr.Dataset(
        data,
        coords={
            "row": ("row", rows, {"long_name": "image row (0 at the top)", "units": "1"}),
            "col": ("col", cols, {"long_name": "image column (0 at the left)", "units": "1"}),
            "lon": (("row", "col"), geo.lon, {"standard_name": "longitude", "units": "degrees_east"}),
            "lat": (("row", "col"), geo.lat, {"standard_name": "latitude", "units": "degrees_north"}),
            "time": t,
        },
    )
    ds.attrs.update(_view_attributes(scene, cam, t, params, geo.unseen))
    return ds


# ------------------------------------------------------------- the files
def _netcdf_attrs(attrs: dict[str, Any], scene: Scene, step: int) -> dict[str, Any]:
    return {
        **attrs,
        "title": f"Sun glint in the camera image: {scene.name}",
        "summary": "Glint variables for each pixel of a camera image; lon/lat give the point "
                   "where each pixel's ray meets the water.",
        "comment": " ".join(run_cautions(scene)),
        "pixel_step": int(step),
    }


def _class_flags(scene: Scene) -> ClassFlags:
    names = [n.replace(" ", "_") for n in scene.classes.names]
    return ClassFlags(np.arange(len(names), dtype=np.uint8), names,
                      tuple(scene.classes.thresholds), scene.classes.variable)


def _png_writer(out: OutputSet, key: str, shape: tuple[int, int], scene: Scene,
                cam: FrameCamera, summary_sun: tuple[float, float], t: np.datetime64,
                step: int, variable: str = "glint_reflectance") -> QuicklookWriter:
    """A quicklook of the camera image on the maps' scale (or its classes)."""
    c = scene.classes
    subtitle = (f"{format_time(t, 'text')}   sun zenith {summary_sun[0]:.1f}°, azimuth "
                f"{summary_sun[1]:.1f}°\ncamera heading {cam.heading:g}°, pitch {cam.pitch:g}°, "
                f"roll {cam.roll:g}°, {cam.altitude:g} m up; every {step} pixel(s)")
    note = sun_note(summary_sun[0])
    if note:
        subtitle += f"\n{note[0].upper()}{note[1:]}"
    marks: tuple[tuple[float, str], ...] = ()
    if variable == c.variable:
        marks = tuple(zip(c.thresholds, c.names[1:]))
    elif (c.variable, variable) == ("glint_radiance", "glint_reflectance") and summary_sun[0] < 90:
        cos_s = math.cos(math.radians(summary_sun[0]))
        marks = tuple((math.pi * th / cos_s, n) for th, n in zip(c.thresholds, c.names[1:]))
    style = QuicklookStyle(
        title=f"{scene.name}: {VARIABLES[variable].long_name} in the camera image",
        subtitle=subtitle, image_axes=True, marks=marks, cautions=run_cautions(scene),
        class_names=tuple(c.names), class_thresholds=tuple(c.thresholds),
        class_variable_label=f"{c.variable} [{VARIABLES[c.variable].units}]",
    )
    return out.writer(key, lambda p: QuicklookWriter(
        p, shape, (-0.5, cam.cols - 0.5, cam.rows - 0.5, -0.5), variable, style))


def _write_footprint(out: OutputSet, key: str, cam: FrameCamera, scene: Scene,
                     t: np.datetime64, command: str | None) -> str | None:
    """Write the footprint; returns why it was not written, or None."""
    try:
        lon, lat = cam.footprint()
    except SensorError as exc:
        out.drop(key)
        return f"not written: {exc}"
    run = run_metadata(scene, t, command)
    props = {"scene": scene.name, "time": format_time(t), "corners": "image corners, counter-clockwise",
             "camera": {"lon": cam.lon, "lat": cam.lat, "altitude": cam.altitude,
                        "heading": cam.heading, "pitch": cam.pitch, "roll": cam.roll,
                        "image_size": [cam.cols, cam.rows]},
             **run}
    out.writer(key, lambda p: FootprintWriter(p, lon, lat, props)).close()
    return None


def _ground_sampling_distance(cam: FrameCamera) -> tuple[float, float] | None:
    try:
        gsd = cam.ground_sampling_distance()
    except SensorError:
        return None  # the image centre looks at or above the horizon
    return float(gsd[0]), float(gsd[1])


def _write_one_view(out: OutputSet, files: TimeFiles, scene: Scene, cam: FrameCamera,
                    step: int, strip_rows: int, command: str | None) -> CameraViewSummary:
    """Compute and write the camera view of one time, ``strip_rows`` output
    rows at a time (the NetCDF, the PNGs and the tally are fed each strip);
    returns its summary."""
    t = files.time
    names = compute.check_variables(None)
    params = compute.kernel_parameters(scene, t)
    sun = compute.sun_angles(scene, t, longitude=cam.lon, latitude=cam.lat)
    sun_zenith, sun_azimuth = float(sun.zenith), float(sun.azimuth)
    run = run_metadata(scene, t, command)
    note = sun_note(sun_zenith)
    # unseen_pixels is counted as the strips go by and set before the file is closed
    attrs = {**_view_attributes(scene, cam, t, params, 0), **run}
    if note:
        attrs["sun_condition"] = note
    rows, cols = _image_axes(cam, step)
    height = rows.size
    writers: list[QuicklookWriter | NetCDFWriter] = [
        _png_writer(out, files.key("png"), (height, cols.size), scene, cam,
                    (sun_zenith, sun_azimuth), t, step),
        _png_writer(out, files.key("class_png"), (height, cols.size), scene, cam,
                    (sun_zenith, sun_azimuth), t, step, "glint_class"),
    ]
    nc = out.writer(files.key("netcdf"), lambda p: NetCDFWriter(
        p, ImageGrid(rows, cols), names, time=t,
        attrs={**_netcdf_attrs(attrs, scene, step), "id": out.path(files.key("netcdf")).stem},
        class_flags=_class_flags(scene)))
    writers.append(nc)
    tally = GlintTally(scene.classes.names)
    for r0 in range(0, height, strip_rows):
        band = slice(r0, min(r0 + strip_rows, height))
        geo, res = _view_strip(scene, cam, t, step, band, names, params)
        tally.add(res["glint_reflectance"], res["glint_class"], geo.valid)
        strip = {**res, "lon": geo.lon, "lat": geo.lat}
        for w in writers:
            w.write(band, strip)
        del geo, res, strip
    tally.require_seen(
        f"no pixel of the camera image sees the water (pitch={cam.pitch!r} deg, "
        f"vertical_fov={cam.vertical_fov:.3f} deg): point the camera below the horizon")
    if tally.unseen:
        log.info("%d of %d image pixels look at or above the horizon and are left empty",
                 tally.unseen, tally.pixels)
    nc.add_attributes({"unseen_pixels": tally.unseen})
    for w in writers:
        w.close()
    footprint = _write_footprint(out, files.key("footprint"), cam, scene, t, command)
    out.temp(files.key("run")).write_text(run["glint_run_record"], encoding="utf-8")
    fields = TimeSummary.tallied(tally)
    return CameraViewSummary(time=t, sun_zenith=sun_zenith, sun_azimuth=sun_azimuth,
                             pixel_step=int(step), footprint=footprint,
                             ground_sampling_distance=_ground_sampling_distance(cam), **fields)


def write_camera_view(scene: Scene, outdir: str | os.PathLike[str], *, step: int | None = None,
                      overwrite: bool = False, command: str | None = None,
                      strip_rows: int = STRIP_ROWS) -> CameraViewResult:
    """Write, per scene time, the camera-view PNG, NetCDF and footprint.

    Files (``<stem>`` is the scene's file stem followed by the time, as for
    maps): ``<stem>_camera_view.png`` (glint reflectance in image
    coordinates on the maps' fixed logarithmic scale),
    ``<stem>_camera_view_class.png`` (the glint classes with a legend),
    ``<stem>_run.toml`` (the resolved scene, with the camera pose),
    ``<stem>_camera_view.nc`` (every variable, image coordinates, lon/lat of
    each pixel, CF-1.11, zlib-compressed) and ``<stem>_footprint.geojson``
    (the image's ground polygon; omitted when part of the image looks at or
    above the horizon). All files of all times form one output set, written
    all or nothing. Existing outputs are an error unless ``overwrite``; all
    are checked before anything is computed.

    Each time's view is computed and written ``strip_rows`` output rows at a
    time (default :data:`STRIP_ROWS`), so the peak memory stays bounded
    whatever the image size; the files hold the values :func:`camera_view`
    gives for the whole image.

    Raises
    ------
    SensorError
        The sensor is not a camera, or no pixel sees the water.
    OutputError
        An output exists (without ``overwrite``) or cannot be written.
    """
    cam = _camera(scene)
    if step is None:
        step = default_step(cam)
    if isinstance(step, bool) or not isinstance(step, (int, np.integer)) or step < 1:
        raise InputError(f"step must be a whole number >= 1 (1: every pixel); got {step!r}")
    step = int(step)
    if isinstance(strip_rows, bool) or not isinstance(strip_rows, (int, np.integer)) \
            or strip_rows < 1:
        raise InputError(f"strip_rows must be a whole number >= 1; got {strip_rows!r}")
    plan = plan_outputs(scene, outdir, _SUFFIXES, overwrite=overwrite)
    summaries: list[CameraViewSummary] = []
    with plan.output_set as out:
        for files in plan.times:
            summaries.append(_write_one_view(out, files, scene, cam, step, int(strip_rows),
                                             command))
    return CameraViewResult(files=list(out.files), summaries=summaries)
