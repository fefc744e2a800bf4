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

import json
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from glint.engine import compute
from glint.io import quicklook as plot
from glint.io import writers as io
from glint.errors import SensorError
from glint.sensors import FrameCamera, camera_image_geometry
from glint.variables import CLASS_NODATA

__all__ = ["CameraViewResult", "camera_view", "write_camera_view"]


@dataclass
class CameraViewResult:
    """Files written by :func:`write_camera_view` and a summary per time."""

    files: list[Path] = field(default_factory=list)
    summaries: list[dict] = field(default_factory=list)


def _kind_name(sensor) -> str:
    """The scene-file ``kind`` of a sensor object."""
    from glint.sensors import SENSOR_KINDS

    for kind, spec in SENSOR_KINDS.items():
        built = getattr(spec.builder, "__module__", None)
        if built == type(sensor).__module__:
            return kind
    return type(sensor).__name__


def _camera(scene) -> FrameCamera:
    cam = scene.sensor
    if not isinstance(cam, FrameCamera):
        raise SensorError(
            f"camera views need a sensor of kind 'frame-camera' or 'fixed-camera'; "
            f"this scene's sensor is of kind {_kind_name(cam)!r}"
        )
    return cam


def camera_view(scene, *, time=None, step: int = 1, variables=None):
    """Glint variables for every pixel of the scene's camera image.

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
    geo = camera_image_geometry(cam, step=step)
    names = compute.check_variables(variables)
    params = compute.kernel_parameters(scene, t)
    res = compute.compute_points(scene, t, longitude=geo.lon, latitude=geo.lat, view_zenith=geo.view_zenith, view_azimuth=geo.view_azimuth, variables=names, params=params)
    rows = np.arange(0, cam.rows, step)
    cols = np.arange(0, cam.cols, step)
    data = {}
    for v in names:
        data[v] = (("row", "col"), res[v], compute.variable_attributes(v, scene))
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
    ds.attrs.update(compute.scene_attributes(scene, t, params=params))
    ds.attrs["unseen_pixels"] = int(geo.unseen)
    ds.attrs["image_size"] = f"{cam.cols} x {cam.rows}"
    return ds


#: Fixed top of the camera-view colour scale (glint reflectance factor), so
#: that views of different times, headings and pitches compare directly.
VIEW_SCALE_MAX = 0.1


def _paths(outdir: Path, stem: str) -> dict[str, Path]:
    return {
        "png": outdir / f"{stem}_camera_view.png",
        "netcdf": outdir / f"{stem}_camera_view.nc",
        "footprint": outdir / f"{stem}_footprint.geojson",
    }


def write_camera_view(scene, outdir, *, step: int = 1, overwrite: bool = False) -> CameraViewResult:
    """Write, per scene time, the camera-view PNG, NetCDF and footprint.

    Files (``<stem>`` is the scene's file stem followed by the time, as for
    maps): ``<stem>_camera_view.png`` (glint reflectance in image
    coordinates on a fixed colour scale from 0 to ``VIEW_SCALE_MAX``),
    ``<stem>_camera_view.nc`` (every variable, image coordinates, lon/lat of
    each pixel, zlib-compressed) and ``<stem>_footprint.geojson`` (the
    image's ground polygon; omitted when part of the image looks at or above
    the horizon). Every file is written atomically. Existing outputs are an
    error unless ``overwrite``; all are checked before anything is computed.
    """
    cam = _camera(scene)
    outdir = Path(outdir)
    plans = [(t, _paths(outdir, io.output_stem(scene, t))) for t in scene.times]
    io.refuse_existing((p for _, paths in plans for p in paths.values()), overwrite)
    result = CameraViewResult()
    with io.output_directory(outdir):
        for t, paths in plans:
            result.summaries.append(_write_one_view(scene, cam, t, paths, step, overwrite, result.files))
    return result


def _write_one_view(scene, cam, t, paths: dict, step: int, overwrite: bool, files: list) -> dict:
    """Compute and write the camera view of one time; returns its summary."""
    ds = camera_view(scene, time=t, step=step)
    if ds.attrs["unseen_pixels"] == ds.glint_class.size:
        raise SensorError(
            f"no pixel of the camera image sees the water (pitch={cam.pitch!r} deg, "
            f"vertical_fov={cam.vertical_fov:.3f} deg): point the camera below the horizon")
    summary = _summary(ds, scene, t)
    _write_netcdf(ds, scene, paths["netcdf"], overwrite, step)
    with io.atomic_path(paths["png"], overwrite=overwrite) as tmp:
        time_txt = np.datetime_as_string(np.datetime64(t, "s"), unit="s").replace("T", " ")
        plot.quicklook(
            ds.glint_reflectance.values, (-0.5, cam.cols - 0.5, cam.rows - 0.5, -0.5), tmp,
            title=f"{scene.name}: glint reflectance in the camera image",
            subtitle=f"{time_txt} UTC   sun zenith {summary['sun_zenith']:.1f}°, "
                     f"azimuth {summary['sun_azimuth']:.1f}°",
            label="glint reflectance factor [1] (fixed scale)", axis_units="px",
            vmax=VIEW_SCALE_MAX, xlabel="image column [px]", ylabel="image row [px]",
        )
    files += [paths["png"], paths["netcdf"]]
    try:
        lon, lat = cam.footprint()
    except SensorError as exc:
        summary["footprint"] = f"not written: {exc}"
    else:
        with io.atomic_path(paths["footprint"], overwrite=overwrite) as tmp:
            Path(tmp).write_text(json.dumps(_footprint_geojson(lon, lat, scene, t)))
        files.append(paths["footprint"])
    try:
        gsd = cam.ground_sampling_distance()
    except SensorError:
        pass  # the image centre looks at or above the horizon
    else:
        summary["ground_sampling_distance"] = (
            f"{gsd[0]:.3g} m from column to column x {gsd[1]:.3g} m from row to row, "
            "at the image centre")
    return summary


def _write_netcdf(ds, scene, path: Path, overwrite: bool, step: int) -> None:
    """The camera view as a compressed CF NetCDF (image coordinates)."""
    from glint._version import __version__

    ds = ds.copy()
    ds.attrs.update({
        "Conventions": "CF-1.11, ACDD-1.3",
        "title": f"Sun glint in the camera image: {scene.name}",
        "summary": "Glint variables for each pixel of a camera image; lon/lat give the point "
                   "where each pixel's ray meets the water.",
        "source": f"glint {__version__}",
        "history": f"{np.datetime_as_string(np.datetime64('now', 's'), unit='s')}Z glint camera-view",
        "comment": plot.CAUTION,
        "pixel_step": int(step),
    })
    ds["time"].attrs.update({"standard_name": "time", "long_name": "scene time",
                             "units_metadata": "leap_seconds: none"})
    encoding = {v: {"zlib": True, "complevel": 4} for v in ds.data_vars}
    for v in ds.data_vars:
        if ds[v].dtype == np.uint8:
            encoding[v]["_FillValue"] = np.uint8(CLASS_NODATA)
        else:
            encoding[v]["_FillValue"] = np.float32(np.nan)
    for c in ("lon", "lat"):
        encoding[c] = {"zlib": True, "complevel": 4, "_FillValue": np.nan}
    for c in ("row", "col"):
        encoding[c] = {"_FillValue": None}
    encoding["time"] = {"units": "seconds since 1970-01-01 00:00:00", "calendar": "proleptic_gregorian"}
    with io.atomic_path(path, overwrite=overwrite) as tmp:
        ds.to_netcdf(tmp, engine="netcdf4", encoding=encoding)


def _footprint_geojson(lon: np.ndarray, lat: np.ndarray, scene, t) -> dict:
    """A GeoJSON FeatureCollection of the footprint polygon, its ring counter-
    clockwise as RFC 7946 asks for outer rings."""
    x, y = np.asarray(lon, float), np.asarray(lat, float)
    signed_area = 0.5 * np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y)
    if signed_area < 0:
        x, y = x[::-1], y[::-1]
    ring = [[float(a), float(b)] for a, b in zip(np.append(x, x[0]), np.append(y, y[0]))]
    feature = {
        "type": "Feature",
        "properties": {"scene": scene.name, "time": str(np.datetime64(t, "s")) + "Z",
                       "corners": "image corners, counter-clockwise"},
        "geometry": {"type": "Polygon", "coordinates": [ring]},
    }
    return {"type": "FeatureCollection", "features": [feature]}


def _summary(ds, scene, t) -> dict:
    """Sun angles below the camera, largest glint, class shares, unseen pixels."""
    cls = ds.glint_class.values
    valid = cls != CLASS_NODATA
    n = int(valid.sum())
    counts = np.bincount(cls[valid].ravel(), minlength=len(scene.classes.names))
    refl = ds.glint_reflectance.values
    cam = scene.sensor
    sun = compute.sun_angles(scene, t, longitude=cam.lon, latitude=cam.lat)
    return {
        "time": t,
        "sun_zenith": float(sun.zenith),
        "sun_azimuth": float(sun.azimuth),
        "sun_at": "below the camera",
        "max_glint_reflectance": float(np.nanmax(refl)) if np.isfinite(refl).any() else float("nan"),
        "class_shares": {name: (float(c) / n if n else 0.0) for name, c in zip(scene.classes.names, counts)},
        "unseen_pixels": int(ds.attrs["unseen_pixels"]),
    }
