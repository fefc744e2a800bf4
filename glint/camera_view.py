"""Glint as a camera will see it: maps in the camera's own image coordinates.

For a scene whose sensor is a frame camera (drone) or a fixed camera, every
image pixel's ray is intersected with the water (see
:func:`glint.sensors.camera_image_geometry`) and the glint variables are
computed at those ground points (:func:`glint.compute.compute_points`). The
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

from glint import compute, io, plot
from glint.errors import OutputError, SensorError
from glint.sensors import FrameCamera, camera_image_geometry
from glint.variables import CLASS_NODATA, DEFAULT_VARIABLES, VARIABLES

__all__ = ["CameraViewResult", "camera_view", "write_camera_view"]


@dataclass
class CameraViewResult:
    """Files written by :func:`write_camera_view` and a summary per time."""

    files: list[Path] = field(default_factory=list)
    summaries: list[dict] = field(default_factory=list)


def _camera(scene) -> FrameCamera:
    cam = scene.sensor
    if not isinstance(cam, FrameCamera):
        raise SensorError(
            f"camera views need a sensor of kind 'frame-camera' or 'fixed-camera'; "
            f"this scene's sensor is {type(cam).__name__}"
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
    names = tuple(variables or DEFAULT_VARIABLES)
    res = compute.compute_points(scene, t, geo.lon, geo.lat, geo.view_zenith, geo.view_azimuth, names)
    rows = np.arange(0, cam.rows, step)
    cols = np.arange(0, cam.cols, step)
    data = {}
    for v in names:
        var = VARIABLES[v]
        attrs = {"long_name": var.long_name, "units": var.units}
        if var.standard_name:
            attrs["standard_name"] = var.standard_name
        if var.dtype == "uint8":
            attrs["flag_values"] = np.arange(len(scene.classes.names), dtype=np.uint8)
            attrs["flag_meanings"] = " ".join(n.replace(" ", "_") for n in scene.classes.names)
        data[v] = (("row", "col"), res[v], attrs)
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
    ds.attrs.update(compute.scene_attributes(scene, t))
    ds.attrs["unseen_pixels"] = int(geo.unseen)
    ds.attrs["image_size"] = f"{cam.cols} x {cam.rows}"
    return ds


def write_camera_view(scene, outdir, *, step: int = 1, overwrite: bool = False) -> CameraViewResult:
    """Write, per scene time, the camera-view PNG, NetCDF and footprint.

    Files (``<stem>`` is the scene's file stem, with the time appended when
    the scene has several): ``<stem>_camera_view.png`` (glint reflectance in
    image coordinates), ``<stem>_camera_view.nc`` (every variable, image
    coordinates, lon/lat of each pixel) and ``<stem>_footprint.geojson``
    (the image's ground polygon; omitted when part of the image looks at or
    above the horizon). Every file is written atomically; an existing file
    is an error unless ``overwrite``.
    """
    from glint.maps import output_stem, prepare_outdir

    cam = _camera(scene)
    outdir = Path(outdir)
    prepare_outdir(outdir)
    result = CameraViewResult()
    for t in scene.times:
        stem = output_stem(scene, t, len(scene.times))
        paths = {
            "png": outdir / f"{stem}_camera_view.png",
            "netcdf": outdir / f"{stem}_camera_view.nc",
            "footprint": outdir / f"{stem}_footprint.geojson",
        }
        for p in paths.values():
            if p.exists() and not overwrite:
                raise OutputError(f"output {str(p)!r} exists; use overwrite (--overwrite) to replace it")
        ds = camera_view(scene, time=t, step=step)
        summary = _summary(ds, scene, t)
        with io.atomic_path(paths["netcdf"], overwrite=overwrite) as tmp:
            ds.to_netcdf(tmp, engine="netcdf4")
        with io.atomic_path(paths["png"], overwrite=overwrite) as tmp:
            time_txt = np.datetime_as_string(np.datetime64(t, "s"), unit="s").replace("T", " ")
            plot.quicklook(
                ds.glint_reflectance.values, (-0.5, cam.cols - 0.5, cam.rows - 0.5, -0.5), tmp,
                title=f"{scene.name}: glint reflectance in the camera image",
                subtitle=f"{time_txt} UTC   sun zenith {summary['sun_zenith']:.1f}°, "
                         f"azimuth {summary['sun_azimuth']:.1f}°",
                label="glint reflectance factor [1]", axis_units="px",
                xlabel="image column [px]", ylabel="image row [px]",
            )
        result.files += [paths["png"], paths["netcdf"]]
        try:
            lon, lat = cam.footprint()
        except SensorError as exc:
            summary["footprint"] = f"not written: {exc}"
        else:
            feature = {
                "type": "Feature",
                "properties": {"scene": scene.name, "time": str(np.datetime64(t, "s")) + "Z"},
                "geometry": {"type": "Polygon", "coordinates": [
                    [[float(x), float(y)] for x, y in zip(np.append(lon, lon[0]), np.append(lat, lat[0]))]
                ]},
            }
            with io.atomic_path(paths["footprint"], overwrite=overwrite) as tmp:
                Path(tmp).write_text(json.dumps({"type": "FeatureCollection", "features": [feature]}))
            result.files.append(paths["footprint"])
        try:
            gsd = cam.ground_sampling_distance()
        except SensorError:
            pass  # the image centre looks at or above the horizon
        else:
            summary["ground_sampling_distance"] = f"{gsd[0]:.3g} m x {gsd[1]:.3g} m at the image centre"
        result.summaries.append(summary)
    return result


def _summary(ds, scene, t) -> dict:
    """Sun angles below the camera, largest glint, class shares, unseen pixels."""
    cls = ds.glint_class.values
    valid = cls != CLASS_NODATA
    n = int(valid.sum())
    counts = np.bincount(cls[valid].ravel(), minlength=len(scene.classes.names))
    refl = ds.glint_reflectance.values
    cam = scene.sensor
    sun = compute.compute_points(scene, t, [cam.lon], [cam.lat], [0.0], [0.0], ["sun_zenith", "sun_azimuth"])
    return {
        "time": t,
        "sun_zenith": float(sun["sun_zenith"][0]),
        "sun_azimuth": float(sun["sun_azimuth"][0]),
        "sun_at": "below the camera",
        "max_glint_reflectance": float(np.nanmax(refl)) if np.isfinite(refl).any() else float("nan"),
        "class_shares": {name: (float(c) / n if n else 0.0) for name, c in zip(scene.classes.names, counts)},
        "unseen_pixels": int(ds.attrs["unseen_pixels"]),
    }
