"""Glint predicted on an analyst's own image, strip by strip.

:func:`image_scene` turns a scene (file or :class:`~glint.scene.Scene`) into
one on the image's grid, with the image's time when the scene gives none.
:func:`iter_strips` then walks the image in strips of whole rows and yields,
for each, the image's bands as read, where it has data, where the water is,
and the glint variables computed by the engine
(:func:`glint.engine.compute.compute_window`, the fused kernel of
:mod:`glint.physics.reflect`), NaN on land and on no-data pixels.
:func:`align` does the same into whole arrays for images that fit in memory.

Options:

* ``resolution``: compute on a coarser grid aligned with the image (its
  pixel size a whole multiple of the image's) and interpolate bilinearly to
  the image's pixel centres: for large images whose glint varies slowly;
* ``wind``: a :class:`~glint.geo.wind_field.WindField` of eastward and
  northward components, interpolated in space (on a lattice of nodes every
  :data:`WIND_NODE_STEP` pixels, then bilinearly) and in time, converted to
  the slope model's own height with the logarithmic profile
  (inside :func:`glint.physics.surface.slope_variances`) and into per-pixel
  slope variances and wind directions.

Memory is bounded by the strip size whatever the image size.
"""

from __future__ import annotations

import dataclasses
import logging
import math
import os
import tomllib
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from glint.engine import compute
from glint.errors import InputError, InputFileError
from glint.geo.grid import Grid, interpolate_nodes
from glint.geo.image import TIME_TAG, ImageInfo, open_image, valid_pixels
from glint.geo.wind_field import WindField, wind_from_components
from glint.physics.surface import SLOPE_VARIANCE_FLOOR, slope_variances
from glint.scene import Scene, load_scene
from glint.times import parse_time
from glint.workflows.imagery.watermask import WaterSource

__all__ = ["Strip", "image_scene", "iter_strips", "align", "coarse_grid", "GLINT_VARIABLES",
           "WIND_NODE_STEP"]

log = logging.getLogger(__name__)

#: Glint variables computed on images.
GLINT_VARIABLES: tuple[str, ...] = ("glint_reflectance", "glint_radiance", "glint_fraction",
                                    "glint_angle")
#: Spacing [pixels of the computing grid] of the nodes at which a wind field
#: is interpolated exactly; wind grids are kilometres apart, so bilinear
#: interpolation between nodes changes nothing that matters.
WIND_NODE_STEP = 32


@dataclass
class Strip:
    """One strip of whole rows of an image.

    Attributes
    ----------
    rows : slice
        Image rows.
    bands : numpy.ndarray
        ``(count, rows, width)`` in the image's data type, as read.
    valid : numpy.ndarray
        True where the image has data.
    water : numpy.ndarray
        True on water pixels with data.
    glint : dict of numpy.ndarray
        float32 glint variables (NaN off water) and ``glint_class`` (uint8,
        255 off water); empty when no scene is given.
    """

    rows: slice
    bands: NDArray[Any]
    valid: NDArray[np.bool_]
    water: NDArray[np.bool_]
    glint: dict[str, NDArray[Any]]


def _scene_has_time(path: Path) -> bool:
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return True  # let the scene loader report the problem
    table = data.get("scene", {})
    return isinstance(table, dict) and ("time" in table or "times" in table)


def image_scene(image: ImageInfo, scene: Scene | str | os.PathLike[str], *, time: Any = None,
                **overrides: Any) -> Scene:
    """The scene on the image's grid, at one time.

    The time is, in order: ``time``; the scene's own time (its first);
    the image's :data:`~glint.geo.image.TIME_TAG` tag.

    Parameters
    ----------
    image : ImageInfo
    scene : Scene or path-like
        A scene, or a scene file whose ``[grid]`` may be omitted (the image's
        grid is used either way).
    time : datetime-like or str, optional
        Acquisition time (UTC).
    **overrides
        Passed to :func:`glint.scene.load_scene` (``wind_speed=...``).

    Raises
    ------
    InputError
        No time anywhere.
    SceneError
        The scene file has problems.
    """
    t = None if time is None else parse_time(time, "time")
    if isinstance(scene, Scene):
        if t is None:
            t = scene.times[0]
        return dataclasses.replace(scene, grid=image.grid, times=(t,))
    path = Path(scene).expanduser()
    if not path.is_file():
        raise InputFileError(f"scene file {str(path)!r} does not exist or is not a file")
    if t is None and not _scene_has_time(path):
        if image.time is None:
            raise InputError(
                f"no acquisition time for image {str(image.path)!r}: none given, none in "
                f"scene {str(path)!r} and no {TIME_TAG} tag in the image; allowed: --time "
                f"2026-06-14T10:30:00Z, scene.time in the scene file, or an {TIME_TAG} tag "
                "(ISO 8601 with Z or an offset)")
        t = image.time
    sc = load_scene(path, grid=image.grid, time=None if t is None else str(_iso(t)), **overrides)
    return dataclasses.replace(sc, times=(sc.times[0],))


def _iso(t: np.datetime64) -> str:
    return str(np.datetime_as_string(np.asarray(t, dtype="datetime64[ns]"), unit="ns")) + "Z"


def coarse_grid(grid: Grid, resolution: float) -> tuple[Grid, int]:
    """A grid aligned with ``grid`` whose pixels are ``factor`` x ``factor``
    of its own (``resolution`` a whole multiple of its pixel size).

    Raises
    ------
    InputError
        ``resolution`` is not a positive whole multiple of the pixel size.
    """
    from affine import Affine

    xres, yres = grid.res
    factor = resolution / xres if np.isfinite(resolution) and resolution > 0 else float("nan")
    if not np.isfinite(factor) or factor < 1 or abs(factor - round(factor)) > 1e-6 \
            or abs(xres - yres) > 1e-9 * xres:
        raise InputError(f"resolution {resolution!r} must be a whole multiple (1, 2, 3, ...) of "
                         f"the image's square pixel size {xres:g} x {yres:g} (CRS units)")
    f = int(round(factor))
    shape = (math.ceil(grid.height / f), math.ceil(grid.width / f))
    return Grid(grid.crs, grid.transform @ Affine.scale(f), shape), f


class _WindOnGrid:
    """A wind field at the nodes of the computing grid, for one time."""

    def __init__(self, field: WindField, grid: Grid, time: np.datetime64) -> None:
        self.field = field
        step = min(WIND_NODE_STEP, max(1, min(grid.shape) - 1))
        self.node_rows, self.node_cols = grid.nodes(step)
        rr, cc = np.meshgrid(self.node_rows, self.node_cols, indexing="ij")
        lon, lat = grid.lonlat(*grid.xy(rr, cc))
        self.u, self.v = field.components(time, longitude=lon, latitude=lat)

    def strip(self, rows: slice, width: int) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        r = np.arange(rows.start, rows.stop, dtype=float)
        c = np.arange(width, dtype=float)
        u = interpolate_nodes(self.u, self.node_rows, self.node_cols, r, c)
        v = interpolate_nodes(self.v, self.node_rows, self.node_cols, r, c)
        return wind_from_components(u, v)


def _wind_parameters(params: compute.KernelParameters, scene: Scene, wind: _WindOnGrid,
                     rows: slice, width: int) -> compute.KernelParameters:
    speed, direction = wind.strip(rows, width)
    # slope_variances converts the field's wind from its height to the
    # model's own (log profile)
    s2c, s2u = slope_variances(speed, model=scene.surface.slope_model,
                               wind_height=wind.field.height)
    f32 = np.float32
    per_pixel: dict[str, Any] = {
        "sigma2_crosswind": np.ascontiguousarray(np.maximum(s2c, SLOPE_VARIANCE_FLOOR), dtype=f32),
        "sigma2_upwind": np.ascontiguousarray(np.maximum(s2u, SLOPE_VARIANCE_FLOOR), dtype=f32),
        "wind_direction": np.ascontiguousarray(direction, dtype=f32),
    }
    return dataclasses.replace(params, **per_pixel)


def iter_strips(
    image: ImageInfo,
    scene: Scene | None = None,
    *,
    water: WaterSource | None = None,
    wind: WindField | None = None,
    resolution: float | None = None,
    block_rows: int = 512,
    variables: Sequence[str] = GLINT_VARIABLES,
) -> Iterator[Strip]:
    """Walk an image in strips: bands, data mask, water mask and glint.

    Parameters
    ----------
    image : ImageInfo
        From :func:`glint.geo.image.open_image`.
    scene : Scene, optional
        On the image's grid (:func:`image_scene`); without it no glint is
        computed.
    water : WaterSource, optional
        Default: every pixel with data is water.
    wind : WindField, optional
        Gridded wind replacing the scene's constant wind.
    resolution : float, optional
        Compute glint on a coarser aligned grid of this pixel size.
    block_rows : int
        Rows per strip.
    variables : sequence of str
        Glint variables (plus ``glint_class``, always given).

    Yields
    ------
    Strip
    """
    water = water or WaterSource("all")
    water.check(image)
    g = image.grid
    need = list(dict.fromkeys(list(variables) + [scene.classes.variable] if scene else []))
    calc: Scene | None = None
    factor = 1
    if scene is not None:
        if scene.grid != g:
            raise InputError("the scene must lie on the image's grid; build it with image_scene()")
        if wind is not None and scene.surface.distribution == "gram-charlier":
            raise InputError("distribution 'gram-charlier' cannot be used with a wind field "
                             "(its skewness coefficients take one wind); allowed: 'gaussian'")
        calc = scene
        if resolution is not None:
            cg, factor = coarse_grid(g, resolution)
            calc = dataclasses.replace(scene, grid=cg)
        t = calc.times[0]
        plan = compute.plan_geometry(calc, t)
        params = compute.kernel_parameters(calc, t)
        wind_nodes = _WindOnGrid(wind, calc.grid, t) if wind is not None else None
    masked = image.has_mask_band
    for r0, r1 in g.blocks(block_rows):
        rows = slice(r0, r1)
        bands = image.read(rows)
        valid = image.read_mask(rows) if masked else valid_pixels(bands, image.nodata)
        wet = water.strip(image, rows, bands) & valid
        glint: dict[str, NDArray[Any]] = {}
        if calc is not None:
            glint = _glint_strip(calc, plan, params, wind_nodes, rows, factor, g.width, need)
            off = ~wet
            for name in need:
                glint[name][off] = np.nan
            glint["glint_class"] = compute.classify(glint[calc.classes.variable],
                                                    calc.classes.thresholds)
            glint = {k: v for k, v in glint.items() if k in variables or k == "glint_class"}
        yield Strip(rows, bands, valid, wet, glint)


def _glint_strip(calc: Scene, plan: compute.GeometryPlan, params: compute.KernelParameters,
                 wind: _WindOnGrid | None, rows: slice, factor: int, width: int,
                 need: Sequence[str]) -> dict[str, NDArray[Any]]:
    if factor == 1:
        p = params if wind is None else _wind_parameters(params, calc, wind, rows, width)
        return compute.compute_window(calc, plan, params=p, row_slice=rows, variables=need)
    # Coarse pixel k covers image pixels k*f .. k*f+f-1: its centre is at
    # image row (k + 0.5) f - 0.5.
    f = factor
    cg = calc.grid
    q = (np.arange(rows.start, rows.stop) + 0.5) / f - 0.5
    c0 = int(np.clip(np.floor(q[0]), 0, cg.height - 1))
    c1 = int(np.clip(np.ceil(q[-1]), 0, cg.height - 1)) + 1
    cs = slice(c0, c1)
    p = params if wind is None else _wind_parameters(params, calc, wind, cs, cg.width)
    coarse = compute.compute_window(calc, plan, params=p, row_slice=cs, variables=need)
    node_r = np.arange(c0, c1, dtype=float)
    node_c = np.arange(cg.width, dtype=float)
    qc = (np.arange(width) + 0.5) / f - 0.5
    out = {}
    for name in need:
        out[name] = interpolate_nodes(coarse[name], node_r, node_c, q, qc, dtype=np.float32)
        if name != "glint_angle":
            np.maximum(out[name], 0.0, out=out[name])
    return out


def align(
    image: str | os.PathLike[str] | ImageInfo,
    scene: Scene | str | os.PathLike[str],
    *,
    time: Any = None,
    water: WaterSource | None = None,
    wind: WindField | None = None,
    resolution: float | None = None,
    variables: Sequence[str] = GLINT_VARIABLES,
) -> dict[str, NDArray[Any]]:
    """Glint predicted on every pixel of an image, as whole arrays.

    For images that fit in memory; :func:`iter_strips` streams large ones.

    Parameters
    ----------
    image : path-like or ImageInfo
    scene : Scene or path-like
        Scene (file) giving time, sensor, wind and water optics; its grid is
        replaced by the image's.
    time : datetime-like, optional
        Overrides the scene's time (default: the scene's, else the image's
        time tag).
    water, wind, resolution, variables
        As in :func:`iter_strips`.

    Returns
    -------
    dict of numpy.ndarray
        The glint variables (float32, NaN off water and on no-data pixels),
        ``glint_class`` (uint8, 255 there), ``water`` and ``valid`` (bool).
    """
    info = image if isinstance(image, ImageInfo) else open_image(image)
    sc = image_scene(info, scene, time=time)
    g = info.grid
    out: dict[str, NDArray[Any]] = {v: np.empty(g.shape, np.float32) for v in variables}
    out["glint_class"] = np.empty(g.shape, np.uint8)
    out["water"] = np.empty(g.shape, bool)
    out["valid"] = np.empty(g.shape, bool)
    for s in iter_strips(info, sc, water=water, wind=wind, resolution=resolution,
                         variables=variables):
        for k, v in s.glint.items():
            out[k][s.rows] = v
        out["water"][s.rows] = s.water
        out["valid"][s.rows] = s.valid
    return out

