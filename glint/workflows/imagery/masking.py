"""Masking glint in an analyst's image.

A water pixel is glint-affected when its predicted glint passes a threshold
in one of four variables (:data:`DEFAULT_THRESHOLDS`):

* ``glint_radiance`` (normalised radiance L/E) >= 0.005 sr⁻¹, the level above
  which Wang and Bailey (2001) mask glint in ocean-colour imagery rather
  than correct it (value from memory of the paper;
  doi:10.1364/AO.40.004790). The default;
* ``glint_reflectance`` >= pi x 0.005 = 0.0157: the same level as a
  reflectance factor for a sun overhead (``rho = pi L / (E cos sun_zenith)``);
* ``glint_fraction`` >= 1.7e-5: the same level as a share of the pixel's
  water area, through ``fraction = radiance x sun solid angle / Fresnel
  reflectance`` with 6.8e-5 sr and 0.02 (water at normal incidence; Born and
  Wolf), i.e. an order-of-magnitude translation;
* ``glint_angle`` <= 20°: pixels seen within 20° of the flat-water mirror
  direction (common practice; from memory).

:func:`glint_mask` works on arrays; :func:`mask_image` on files, writing the
glint prediction, the class raster, the masked copy of the image (its
profile kept) and a report, all or nothing through
:class:`glint.io.outputset.OutputSet`.
"""

from __future__ import annotations

import logging
import math
import os
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint._version import __version__
from glint.engine import compute
from glint.errors import InputError
from glint.geo.image import ImageInfo, open_image
from glint.geo.wind_field import WindField
from glint.io.image import BANDS, ProfileWriter, copy_profile, grid_profile, with_raster_env
from glint.io.outputset import OutputSet
from glint.io.quicklook import CAUTION
from glint.io.tables import write_json
from glint.scene import Scene
from glint.times import format_time
from glint.variables import CLASS_NODATA, VARIABLES
from glint.workflows.imagery import report
from glint.workflows.imagery.align import GLINT_VARIABLES, image_scene, iter_strips
from glint.workflows.imagery.watermask import WaterSource
from glint.workflows.maps import class_colormap

__all__ = ["THRESHOLD_VARIABLES", "DEFAULT_THRESHOLDS", "glint_mask", "check_threshold",
           "MaskResult", "mask_image"]

log = logging.getLogger(__name__)

#: Variables a mask threshold may be given in.
THRESHOLD_VARIABLES: tuple[str, ...] = GLINT_VARIABLES
#: Default threshold of each variable (see the module docstring for sources).
DEFAULT_THRESHOLDS: dict[str, float] = {
    "glint_radiance": 5e-3,
    "glint_reflectance": math.pi * 5e-3,
    "glint_fraction": 1.7e-5,
    "glint_angle": 20.0,
}


def check_threshold(variable: str, threshold: float | None) -> float:
    """The threshold of ``variable`` (its default when None), checked."""
    if variable not in THRESHOLD_VARIABLES:
        raise InputError(f"threshold variable {variable!r} is not one of "
                         f"{', '.join(THRESHOLD_VARIABLES)}")
    if threshold is None:
        return DEFAULT_THRESHOLDS[variable]
    t = float(threshold)
    high = 180.0 if variable == "glint_angle" else (1.0 if variable == "glint_fraction" else math.inf)
    if not (math.isfinite(t) and 0.0 < t <= high):
        raise InputError(f"threshold {threshold!r} of {variable} must lie in (0, {high:g}]"
                         f" ({VARIABLES[variable].units})")
    return t


def glint_mask(values: ArrayLike, *, variable: str = "glint_radiance",
               threshold: float | None = None, water: ArrayLike | None = None) -> NDArray[np.bool_]:
    """Glint-affected pixels (True) from predicted glint.

    Parameters
    ----------
    values : array_like
        The predicted ``variable`` per pixel (NaN = no prediction).
    variable : str
        One of :data:`THRESHOLD_VARIABLES`.
    threshold : float, optional
        Default :data:`DEFAULT_THRESHOLDS` of ``variable``.
    water : array_like of bool, optional
        Water pixels; others are never masked.

    Examples
    --------
    >>> glint_mask([1e-3, 1e-2, np.nan]).tolist()
    [False, True, False]
    >>> glint_mask([5.0, 30.0], variable="glint_angle").tolist()
    [True, False]
    """
    t = check_threshold(variable, threshold)
    v = np.asarray(values, dtype=float)
    with np.errstate(invalid="ignore"):
        m = v <= t if variable == "glint_angle" else v >= t
    if water is not None:
        m &= np.asarray(water, dtype=bool)
    return np.asarray(m)


@dataclass
class MaskResult:
    """Files written by :func:`mask_image` and its summary (also in the JSON report)."""

    files: list[Path] = field(default_factory=list)
    summary: dict[str, Any] = field(default_factory=dict)


def _mask_files(stem: str) -> dict[str, str]:
    return {"glint": f"{stem}_glint.tif", "classes": f"{stem}_glint_class.tif",
            "masked": f"{stem}_masked.tif", "report": f"{stem}_mask.json",
            "quicklook": f"{stem}_mask.png"}


def _glint_writer(path: Path, image: ImageInfo, scene: Scene, variables: Sequence[str],
                  attrs: dict[str, Any]) -> ProfileWriter:
    return ProfileWriter(
        path, grid_profile(image.grid, dtype="float32", count=len(variables), nodata=float("nan")),
        descriptions=list(variables), units=[VARIABLES[v].units for v in variables],
        band_tags=[{"long_name": VARIABLES[v].long_name, "comment": VARIABLES[v].comment}
                   for v in variables],
        tags=attrs)


def _class_writer(path: Path, image: ImageInfo, scene: Scene, attrs: dict[str, Any]) -> ProfileWriter:
    c = scene.classes
    return ProfileWriter(
        path, grid_profile(image.grid, dtype="uint8", nodata=CLASS_NODATA),
        descriptions=["glint_class"], units=["1"],
        tags={**attrs, "glint_class_names": " ".join(n.replace(" ", "_") for n in c.names),
              "glint_class_thresholds": " ".join(f"{x:g}" for x in c.thresholds),
              "glint_class_variable": c.variable},
        colormap=class_colormap(len(c.names)))


def image_copy_writer(path: Path, image: ImageInfo, *, extra_tags: dict[str, Any],
                      count: int | None = None, keep: Sequence[int] | None = None) -> ProfileWriter:
    """A writer of a copy of ``image`` with its profile, descriptions, units,
    tags, scales and colour interpretation (``keep``: the 1-based bands
    kept, default all). Images without a no-data value get a per-dataset
    mask instead."""
    idx = [b - 1 for b in (keep or range(1, image.count + 1))]

    def pick(seq: Sequence[Any]) -> list[Any]:
        return [seq[i] for i in idx] if len(seq) == image.count else list(seq)

    return ProfileWriter(
        path, copy_profile(image, count=len(idx)), descriptions=pick(image.descriptions),
        units=pick(image.units), tags={**image.tags, **extra_tags},
        band_tags=pick(image.band_tags), scales=pick(image.scales), offsets=pick(image.offsets),
        colorinterp=pick(image.colorinterp), mask=image.nodata is None)


def run_attributes(scene: Scene, image: ImageInfo, water: WaterSource,
                   wind: WindField | None) -> dict[str, Any]:
    """Metadata of a run recorded in tags and reports."""
    t = scene.times[0]
    centre = compute.scene_center_summary(scene, t)
    s = scene.surface
    return {
        "glint_version": __version__,
        "image": str(image.path),
        "scene_name": scene.name,
        "time": format_time(t),
        "sun_zenith_deg_at_centre": round(centre["sun_zenith"], 4),
        "sun_azimuth_deg_at_centre": round(centre["sun_azimuth"], 4),
        "wind": (f"field {wind.source} at {wind.height:g} m" if wind is not None else
                 f"{s.wind_speed:g} m/s at {s.wind_height:g} m from "
                 + ("unknown direction" if s.wind_direction is None else f"{s.wind_direction:g} deg")),
        "slope_model": s.slope_model,
        "water": water.describe(),
    }


@with_raster_env
def mask_image(
    image: str | os.PathLike[str] | ImageInfo,
    scene: Scene | str | os.PathLike[str],
    outdir: str | os.PathLike[str],
    *,
    time: Any = None,
    water: WaterSource | None = None,
    wind: WindField | None = None,
    variable: str = "glint_radiance",
    threshold: float | None = None,
    resolution: float | None = None,
    rgb: Sequence[int] | None = None,
    overwrite: bool = False,
    block_rows: int = 512,
    **overrides: Any,
) -> MaskResult:
    """Predict glint on an image, mask it and write the results.

    Writes, in ``outdir`` (``<stem>`` = the image's file stem):

    * ``<stem>_glint.tif``: glint reflectance, radiance, fraction and angle
      (float32, NaN off water and on no-data pixels);
    * ``<stem>_glint_class.tif``: the scene's glint classes (uint8, 255 off
      water);
    * ``<stem>_masked.tif``: a copy of the image with glint-affected water
      pixels set to the image's no-data value (or, for an image without one,
      marked invalid in a per-dataset mask); same dtype, no-data, band
      count, descriptions, tags, CRS, transform, tiling and compression;
    * ``<stem>_mask.json``: threshold, counts and the share of water pixels
      masked; ``<stem>_mask.png``: quicklook.

    Parameters
    ----------
    image : path-like or ImageInfo
    scene : Scene or path-like
        Time, sensor, wind, water optics (its grid is replaced by the image's).
    outdir : path-like
    time : datetime-like, optional
        Overrides the scene's time (default the scene's, else the image's tag).
    water : WaterSource, optional
        Default: all pixels with data are water.
    wind : WindField, optional
        Gridded wind instead of the scene's constant wind.
    variable, threshold
        Threshold (:data:`DEFAULT_THRESHOLDS`).
    resolution : float, optional
        Compute glint on a coarser aligned grid.
    rgb : sequence of int, optional
        Quicklook bands (default :func:`report.default_rgb`).
    overwrite : bool
        Replace existing outputs.
    **overrides
        Scene overrides for :func:`glint.scene.load_scene`.

    Returns
    -------
    MaskResult
    """
    info = image if isinstance(image, ImageInfo) else open_image(image)
    thr = check_threshold(variable, threshold)
    water = water or WaterSource("all")
    water.check(info)
    shown = report.check_rgb(info, rgb)
    sc = image_scene(info, scene, time=time, **overrides)
    attrs = run_attributes(sc, info, water, wind)
    attrs.update(mask_variable=variable, mask_threshold=thr)
    out = OutputSet(outdir, _mask_files(info.path.stem), overwrite=overwrite)
    out.check()
    nodata = info.nodata
    counts = {"pixels": 0, "no_data_pixels": 0, "water_pixels": 0, "masked_pixels": 0}
    quick = report.Decimated.for_image(info)
    with out:
        gw = out.writer("glint", lambda p: _glint_writer(p, info, sc, GLINT_VARIABLES, attrs))
        cw = out.writer("classes", lambda p: _class_writer(p, info, sc, attrs))
        mw = out.writer("masked", lambda p: image_copy_writer(
            p, info, extra_tags={"GLINT_MASK": f"{variable} {'<=' if variable == 'glint_angle' else '>='} "
                                 f"{thr:g}; glint {__version__}"}))
        for s in iter_strips(info, sc, water=water, wind=wind, resolution=resolution,
                             block_rows=block_rows):
            m = glint_mask(s.glint[variable], variable=variable, threshold=thr, water=s.water)
            gw.write(s.rows, {BANDS: np.stack([s.glint[v] for v in GLINT_VARIABLES])})
            cw.write(s.rows, {BANDS: s.glint["glint_class"]})
            if nodata is not None:
                masked = s.bands.copy()
                masked[:, m] = np.asarray(nodata).astype(info.dtype)
                mw.write(s.rows, {BANDS: masked})
            else:
                mw.write(s.rows, {BANDS: s.bands, "mask": s.valid & ~m})
            counts["pixels"] += s.valid.size
            counts["no_data_pixels"] += int(np.count_nonzero(~s.valid))
            counts["water_pixels"] += int(np.count_nonzero(s.water))
            counts["masked_pixels"] += int(np.count_nonzero(m))
            quick.add(s.rows, rgb=s.bands[[b - 1 for b in shown]], valid=s.valid,
                      glint=s.glint[variable], masked=m)
        share = counts["masked_pixels"] / counts["water_pixels"] if counts["water_pixels"] else 0.0
        summary = {**attrs, **counts, "masked_share_of_water": share,
                   "threshold_default": DEFAULT_THRESHOLDS[variable],
                   "files": {k: str(p) for k, p in out.paths.items()}, "caution": CAUTION}
        write_json(out.temp("report"), summary)
        _mask_quicklook(out.temp("quicklook"), info, quick, variable, thr, share, attrs)
    log.info("masked %.1f %% of %d water pixels", 100 * share, counts["water_pixels"])
    return MaskResult(out.files, summary)


def _mask_quicklook(path: Path, info: ImageInfo, quick: report.Decimated, variable: str,
                    thr: float, share: float, attrs: dict[str, Any]) -> None:
    valid = quick.get("valid")
    rgb, limits = report.stretch(quick.get("rgb"), valid)
    rgb[~valid] = np.nan
    masked_rgb = rgb.copy()
    masked_rgb[quick.get("masked")] = (1.0, 0.0, 1.0)  # magenta: masked
    left, bottom, right, top = info.grid.bounds
    var = VARIABLES[variable]
    report.side_by_side(
        [("image (true colour)", np.nan_to_num(rgb, nan=0.75)),
         (f"predicted {var.long_name}", {"values": quick.get("glint"),
                                         "label": f"{variable} [{var.units}]",
                                         "cmap": "magma_r" if variable == "glint_angle" else "magma"}),
         (f"masked ({100 * share:.1f} % of water, magenta)", np.nan_to_num(masked_rgb, nan=0.75))],
        path, title=f"{info.path.name}: glint mask, {attrs['time']}",
        extent=(left, right, bottom, top),
        footer=f"threshold {variable} {'<=' if variable == 'glint_angle' else '>='} {thr:g}.")
