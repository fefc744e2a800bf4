"""Scene -> per-pixel glint arrays, block by block.

This module is the one place that walks a grid. For each scene time it

1. plans the geometry: sun and (for smooth sensors) view angles are computed
   exactly on a lattice of tie-point nodes and interpolated bilinearly to the
   pixels (azimuths through their sine and cosine). The node spacing is chosen
   per scene and time so that the interpolation error, measured against exact
   values at the centres of lattice cells, stays below
   ``scene.tie_point_tolerance`` (1e-4 degrees by default; see
   :func:`plan_geometry` for where it is checked). The error is the
   angle between the interpolated and the exact direction of the sun (and of
   the sensor), so an azimuth error near the zenith, where azimuth is
   meaningless, counts only as much as the direction moves. When no spacing
   meets the bound every pixel is computed exactly;
2. evaluates, strip by strip, the fused glint kernel of :mod:`glint.physics.reflect`;
3. classes the result.

:func:`iter_blocks` streams strips (bounded memory at any grid size);
:func:`compute_dataset` returns an :class:`xarray.Dataset`, eager or, with
``chunks``, lazy and dask-backed.
"""

from __future__ import annotations

import logging
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numba
import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError, MemoryLimitError
from glint.geo.grid import Grid
from glint.geo.lattice import MAX_NODES, NODE_STEPS, LatticePlan, interpolate_field, plan_lattice
from glint.physics.reflect import glint_kernel
from glint.physics.threads import threads_for
from glint.physics.sun import SolarPosition, earth_sun_distance, solar_position, sun_solid_angle
from glint.physics.surface import (
    SLOPE_VARIANCE_FLOOR,
    SlopeDistribution,
    gram_charlier_coefficients,
    slope_variances,
)
from glint.scene.model import GlintClasses, Scene, SunOptions, Surface, Water
from glint.sensors import GroundPoints, ViewAngles
from glint.times import format_time
from glint.variables import CLASS_NODATA, DEFAULT_VARIABLES, VARIABLES, bytes_per_pixel

if TYPE_CHECKING:
    import xarray

__all__ = [
    "GeometryPlan",
    "KernelParameters",
    "kernel_parameters",
    "surface_kernel_parameters",
    "plan_geometry",
    "direction_error",
    "compute_window",
    "iter_blocks",
    "iter_windows",
    "WINDOW_PIXELS",
    "WINDOW_BYTES",
    "available_memory",
    "check_memory",
    "window_memory",
    "MEMORY_LIMIT_VARIABLE",
    "compute_dataset",
    "compute_points",
    "check_variables",
    "classify",
    "scene_center_summary",
    "sun_angles",
    "point_glint",
    "variable_attributes",
]

log = logging.getLogger(__name__)

FloatArray = NDArray[np.float64]
#: Angle arrays by name (``sun_zenith``, ``sun_azimuth``, ``view_zenith``, ``view_azimuth``).
Angles = dict[str, NDArray[np.floating]]

_KERNEL_OUTPUTS = ("glint_angle", "glint_reflectance", "glint_radiance", "glint_fraction")


@dataclass(frozen=True)
class KernelParameters:
    """Scene-wide inputs of the glint kernel for one time."""

    refractive_index: float
    sigma2_crosswind: float
    sigma2_upwind: float
    wind_direction: float
    sun_solid_angle: float
    distribution: SlopeDistribution
    gram_charlier: dict[str, float] | None
    shadowing: bool


@dataclass(frozen=True)
class GeometryPlan:
    """Where the angles of one scene time come from.

    ``step`` is the node spacing in pixels (0 = every pixel exact).
    ``nodes`` holds node-lattice arrays (``sun_zenith``, ``sun_azimuth`` and,
    for smooth sensors, ``view_zenith``, ``view_azimuth``) of shape
    ``(len(node_rows), len(node_cols))``. ``max_error`` is the largest
    interpolation error found when the spacing was chosen [°].
    """

    time: np.datetime64
    step: int
    node_rows: FloatArray | None
    node_cols: FloatArray | None
    nodes: dict[str, FloatArray]
    views_interpolated: bool
    max_error: float
    #: For view angles evaluated at every pixel: the lattice of the ground
    #: positions (``lon``, ``lat``, ``convergence``) they are evaluated from,
    #: or None (ground positions transformed exactly at every pixel).
    ground: LatticePlan | None = None


def kernel_parameters(scene: Scene, time: np.datetime64) -> KernelParameters:
    """Scene-wide kernel inputs (optics, slope statistics, sun disc) at ``time``."""
    return surface_kernel_parameters(scene.surface, scene.water, time)


def surface_kernel_parameters(surf: Surface, water: Water, time: np.datetime64) -> KernelParameters:
    """Kernel inputs from a surface and water description alone (no grid or
    sensor), for workflows that evaluate the kernel at their own points."""
    # Calm water: the variances are floored as in surface.slope_pdf, so a
    # zero wind gives a very narrow glint instead of a division by zero.
    # Without a wind direction, the model's own isotropic fit in two equal
    # halves (Cox and Munk's 0.003 + 5.12e-3 W for "cox-munk").
    s2c, s2u = (max(float(v), SLOPE_VARIANCE_FLOOR) for v in slope_variances(
        surf.wind_speed, model=surf.slope_model, wind_height=surf.wind_height,
        isotropic=surf.wind_direction is None))
    gc = None
    if surf.distribution == "gram-charlier":
        # Cox and Munk's skewness and kurtosis fits use their 12.5 m wind,
        # whichever model gives the variances.
        gc = {k: float(v) for k, v in gram_charlier_coefficients(
            surf.wind_speed, wind_height=surf.wind_height).items()}
    return KernelParameters(
        refractive_index=float(water.refractive_index_value()),
        sigma2_crosswind=float(s2c),
        sigma2_upwind=float(s2u),
        wind_direction=float("nan") if surf.wind_direction is None else float(surf.wind_direction),
        sun_solid_angle=float(sun_solid_angle(earth_sun_distance(time))),
        distribution=surf.distribution,
        gram_charlier=gc,
        shadowing=bool(surf.shadowing),
    )


def sun_angles(scene: Scene, time: np.datetime64 | NDArray[np.datetime64],
               longitude: ArrayLike, latitude: ArrayLike) -> SolarPosition:
    """Exact sun position (:func:`glint.physics.sun.solar_position`) with the scene's
    sun options (pressure, air temperature, refraction, delta T, height of
    the water surface).

    Per-pixel imaging times (line scanners) are rounded down to whole
    milliseconds first, so that the SPA's time-only terms are computed once
    per millisecond rather than once per pixel: the sun moves by at most
    0.0042° per second across the sky, so this changes its direction by less
    than 5e-6°.
    """
    if np.ndim(time) and np.size(time) > 1:
        t = np.asarray(time)
        if np.issubdtype(t.dtype, np.datetime64):
            time = t.astype("datetime64[ms]")
    return _solar_position(scene.sun, time, longitude=longitude, latitude=latitude)


def _solar_position(o: SunOptions, time: Any, *, longitude: ArrayLike,
                    latitude: ArrayLike) -> SolarPosition:
    # Coordinates by keyword: the SPA's argument order is not ours to rely on.
    return solar_position(time, longitude=longitude, latitude=latitude,
                          elevation=o.surface_elevation, pressure=o.pressure,
                          temperature=o.air_temperature, delta_t=o.delta_t,
                          refraction=o.refraction)


def point_glint(time: Any, longitude: float, latitude: float, view_zenith: float,
                view_azimuth: float, *, surface: Surface, water: Water,
                sun: SunOptions) -> dict[str, float]:
    """Sun position and glint for one place, time and view direction.

    Parameters
    ----------
    time : datetime-like
        UTC instant.
    longitude, latitude : float
        Place on the water [°].
    view_zenith, view_azimuth : float
        Direction from the water to the sensor [°], true north.
    surface, water, sun : glint.scene.Surface, glint.scene.Water, glint.scene.SunOptions
        Wind and slope model, water optics, sun options (as in a scene).

    Returns
    -------
    dict
        ``sun_zenith``, ``sun_azimuth`` [°], ``earth_sun_distance`` [AU],
        ``refractive_index`` and, from the fused kernel, ``glint_angle``,
        ``glint_reflectance``, ``glint_radiance``, ``glint_fraction``.
    """
    t = np.datetime64(time, "ns")
    pos = _solar_position(sun, t, longitude=longitude, latitude=latitude)
    params = surface_kernel_parameters(surface, water, t)
    ang = {
        "sun_zenith": np.array([pos.zenith], dtype=np.float32).reshape(1),
        "sun_azimuth": np.array([pos.azimuth], dtype=np.float32).reshape(1),
        "view_zenith": np.array([view_zenith], dtype=np.float32),
        "view_azimuth": np.array([view_azimuth], dtype=np.float32),
    }
    out = _kernel_outputs(ang, params, None, ("glint_angle", "glint_reflectance", "glint_radiance",
                                              "glint_fraction"))
    result = {k: float(v[0]) for k, v in out.items()}
    result.update(sun_zenith=float(pos.zenith), sun_azimuth=float(pos.azimuth),
                  earth_sun_distance=float(earth_sun_distance(t)),
                  refractive_index=params.refractive_index)
    return result


def _exact_angles(scene: Scene, time: np.datetime64, rows: ArrayLike, cols: ArrayLike, *,
                  views: bool = True) -> dict[str, FloatArray]:
    """Sun (and view) angles computed exactly at pixel indices."""
    pts = GroundPoints.from_pixels(scene.grid, rows, cols)
    va = scene.sensor.view_angles(pts, time) if views else None
    out = _sun_at(scene, _imaging_times(scene, pts, time, va), pts)
    if va is not None:
        out["view_zenith"] = np.asarray(va.view_zenith, float)
        out["view_azimuth"] = np.asarray(va.view_azimuth, float)
    return out


def _imaging_times(scene: Scene, pts: GroundPoints, time: np.datetime64,
                   va: ViewAngles | None = None) -> np.datetime64 | NDArray[np.datetime64]:
    """When each point is imaged: the sensor's smooth field of imaging times
    if it has one (line scanners: also where the point is not seen, so that
    sun angles at those times can be interpolated), else the per-point times
    of its view angles, else the scene time."""
    smooth_times = getattr(scene.sensor, "imaging_times", None)
    if smooth_times is not None:
        return np.asarray(smooth_times(pts, time))
    if va is None:
        va = scene.sensor.view_angles(pts, time)
    return time if va.time is None else np.asarray(va.time)


#: Spacing of the times at which the sun is computed exactly when points are
#: imaged at many different times [ns]; in between, linear in time.
_SUN_KNOT_NS = 1_000_000_000


def _sun_at(scene: Scene, times: np.datetime64 | NDArray[np.datetime64],
            pts: GroundPoints) -> dict[str, FloatArray]:
    """Sun zenith and azimuth [°] at ground points and their imaging times.

    One time: the SPA directly. Many times (line scanners): the SPA at the
    whole seconds on either side of each point's time and linear
    interpolation between them (azimuths along the shorter arc). The sun's
    direction turns with an angular acceleration of at most about 5e-9
    rad s^-2 (the Earth's rotation rate squared), so over one second the
    interpolation is off by less than 1e-7 degrees; near the zenith the
    azimuth turns faster, but there an azimuth error moves the direction by
    the azimuth error times the sine of the zenith angle, which stays as
    small. NaT times give NaN.
    """
    lon, lat = np.asarray(pts.lon, float), np.asarray(pts.lat, float)
    t = np.asarray(times)
    if t.ndim == 0 or t.size == 1:
        sp = sun_angles(scene, t.reshape(()) if t.ndim else t, longitude=lon, latitude=lat)
        return {"sun_zenith": np.broadcast_to(np.asarray(sp.zenith, float), lon.shape).copy(),
                "sun_azimuth": np.broadcast_to(np.asarray(sp.azimuth, float), lon.shape).copy()}
    t = np.broadcast_to(t.astype("datetime64[ns]"), lon.shape)
    ns = t.astype(np.int64)
    valid = ~np.isnat(t)
    zen = np.full(lon.shape, np.nan)
    azi = np.full(lon.shape, np.nan)
    knot = np.floor_divide(ns, _SUN_KNOT_NS)
    for k in np.unique(knot[valid]):
        sel = valid & (knot == k)
        w = (ns[sel] - k * _SUN_KNOT_NS) / _SUN_KNOT_NS
        a = sun_angles(scene, np.datetime64(int(k * _SUN_KNOT_NS), "ns"), longitude=lon[sel],
                       latitude=lat[sel])
        if not np.any(w):
            zen[sel], azi[sel] = a.zenith, a.azimuth
            continue
        b = sun_angles(scene, np.datetime64(int((k + 1) * _SUN_KNOT_NS), "ns"),
                       longitude=lon[sel], latitude=lat[sel])
        zen[sel] = (1.0 - w) * a.zenith + w * b.zenith
        da = (np.asarray(b.azimuth) - np.asarray(a.azimuth) + 180.0) % 360.0 - 180.0
        azi[sel] = (np.asarray(a.azimuth) + w * da) % 360.0
    return {"sun_zenith": zen, "sun_azimuth": azi}


def direction_error(zenith_a: ArrayLike, azimuth_a: ArrayLike, zenith_b: ArrayLike,
                    azimuth_b: ArrayLike) -> FloatArray:
    """Angle between two directions given as zenith/azimuth pairs [°].

    The haversine form, accurate for tiny angles:
    ``hav d = hav(dz) + sin za sin zb hav(da)``. An azimuth error matters only
    in proportion to the sine of the zenith (at the zenith it is no error).
    """
    za, zb = np.radians(np.asarray(zenith_a, float)), np.radians(np.asarray(zenith_b, float))
    dz = za - zb
    da = np.radians(np.asarray(azimuth_a, float) - np.asarray(azimuth_b, float))
    h = np.sin(dz / 2) ** 2 + np.sin(za) * np.sin(zb) * np.sin(da / 2) ** 2
    return np.degrees(2 * np.arcsin(np.sqrt(np.clip(h, 0.0, 1.0))))


def _max_direction_error(approx: Mapping[str, NDArray[np.floating]],
                         exact: Mapping[str, FloatArray]) -> float:
    err = 0.0
    for who in ("sun", "view"):
        if f"{who}_zenith" not in approx:
            continue
        d = direction_error(approx[f"{who}_zenith"], approx[f"{who}_azimuth"],
                            exact[f"{who}_zenith"], exact[f"{who}_azimuth"])
        d = d[np.isfinite(d)]
        if d.size:
            err = max(err, float(d.max()))
    return err


def _nearest_overhead(nodes: Mapping[str, FloatArray]) -> list[tuple[int, int]]:
    """Nodes where the sensor and the sun are most nearly overhead: the
    direction fields turn fastest there (their azimuths are singular at the
    nadir and at the subsolar point), so errors concentrate there."""
    out: list[tuple[int, int]] = []
    for zen in ("view_zenith", "sun_zenith"):
        if zen in nodes and np.isfinite(nodes[zen]).any():
            ir, ic = np.unravel_index(np.nanargmin(nodes[zen]), nodes[zen].shape)
            out.append((int(ir), int(ic)))
    return out


def plan_geometry(scene: Scene, time: np.datetime64, *,
                  steps: Sequence[int] = NODE_STEPS) -> GeometryPlan:
    """Choose the node spacings for one scene time (see module docstring).

    The spacings are chosen by :func:`glint.geo.lattice.plan_lattice`, the one
    tie-point planner (also used for longitude/latitude by
    :meth:`glint.geo.grid.Grid.lonlat_rows`): for each spacing, coarsest
    first, interpolated values are compared with exact ones at

    * the centres of the lattice cells (the points farthest from the nodes;
      every cell, or 400 x 400 evenly spread cells on larger lattices), and
    * a dense set of points in the cells around the node where the sensor is
      most nearly overhead and around the node where the sun is highest.

    The error is the angle between interpolated and exact directions
    (:func:`direction_error`); a spacing is kept when its largest error is at
    most :data:`glint.geo.lattice.PLAN_MARGIN` times
    ``scene.tie_point_tolerance``.

    * Sensors far from the grid (``scene.sensor.smooth``): sun and view
      angles from one lattice, when a spacing meets the bound.
    * Otherwise (sensors near the grid: their view azimuth turns through
      360 degrees around the nadir, and images and swaths have sharp edges)
      the view angles are evaluated at every pixel, by the sensor's compiled
      loops, from ground positions (longitude, latitude, meridian
      convergence) interpolated from a second lattice. That lattice is
      checked by the error it causes in the *view directions*: a ground
      position off by ``d`` turns the view by about ``d / range``, so a
      sensor 30 m away needs positions right to 5e-5 m, one 800 km away
      only to 1 m. The sun angles come from their own lattice, at each
      point's imaging time for sensors that image points at different
      times (line scanners).
    """
    tol = float(scene.tie_point_tolerance)
    if scene.sensor.smooth:
        def exact(rows: FloatArray, cols: FloatArray) -> dict[str, FloatArray]:
            return _exact_angles(scene, time, rows, cols, views=True)

        plan = plan_lattice(scene.grid, exact, _max_direction_error, tol, steps=steps,
                            periodic=("sun_azimuth", "view_azimuth"), focus=_nearest_overhead)
        if plan.step:
            log.debug("tie-point step %d: max interpolation error %.3g deg", plan.step,
                      plan.max_error)
            return GeometryPlan(time, plan.step, plan.node_rows, plan.node_cols, plan.nodes, True,
                                plan.max_error)

    def exact_sun(rows: FloatArray, cols: FloatArray) -> dict[str, FloatArray]:
        return _exact_angles(scene, time, rows, cols, views=False)

    sun = plan_lattice(scene.grid, exact_sun, _max_direction_error, tol, steps=steps,
                       periodic=("sun_azimuth",), focus=_nearest_overhead)
    ground = _plan_ground(scene, time, steps, tol)
    if not sun.step:
        log.info("no tie-point spacing meets %.3g deg for the sun; computing it at every pixel", tol)
    log.debug("sun step %d (%.3g deg), ground step %s", sun.step, sun.max_error,
              ground.step if ground else "exact")
    err = max(sun.max_error, ground.max_error if ground else 0.0)
    return GeometryPlan(time, sun.step, sun.node_rows, sun.node_cols, sun.nodes, False, err,
                        ground=ground)


#: Prefix of a sensor's own ground terms among the ground-lattice fields.
_TERM = "term:"


def _ground_fields(scene: Scene, rows: FloatArray, cols: FloatArray) -> dict[str, FloatArray]:
    """Exact ground positions at pixel indices (longitude in [0, 360)) and
    the sensor's own smooth ground terms there."""
    grid = scene.grid
    x, y = grid.xy(rows, cols)
    lon, lat = grid.lonlat(x, y)
    conv = grid.meridian_convergence(longitude=lon, latitude=lat)
    out = {"lon": np.mod(lon, 360.0), "lat": lat, "convergence": conv}
    terms = getattr(scene.sensor, "ground_terms", None)
    if terms is not None:
        out.update({_TERM + k: np.asarray(v, float)
                    for k, v in terms(longitude=lon, latitude=lat).items()})
    return out


def _points(grid: Grid, fields: Mapping[str, NDArray[np.floating]], rows: FloatArray,
            cols: FloatArray) -> GroundPoints:
    """Ground points from ground-position fields on 2-D pixel indices (or on
    read-only broadcasts of a column of rows and a row of columns, which
    give broadcast x and y: the grid is north-up)."""
    if rows.ndim == 2 and rows.strides[1] == 0 and cols.strides[0] == 0:
        x = np.broadcast_to(grid.xy(np.zeros(cols.shape[1]), cols[0])[0][None, :], rows.shape)
        y = np.broadcast_to(grid.xy(rows[:, 0], np.zeros(rows.shape[0]))[1][:, None], rows.shape)
    else:
        x, y = grid.xy(rows, cols)
    lon = np.asarray(fields["lon"], float)
    terms = {k[len(_TERM):]: np.asarray(v, float) for k, v in fields.items() if k.startswith(_TERM)}
    return GroundPoints(x=x, y=y, lon=np.where(lon >= 180.0, lon - 360.0, lon),
                        lat=np.asarray(fields["lat"], float), row=rows, col=cols,
                        convergence=np.asarray(fields["convergence"], float), grid=grid,
                        terms=terms)


def _plan_ground(scene: Scene, time: np.datetime64, steps: Sequence[int],
                 tol: float) -> LatticePlan | None:
    """Lattice of ground positions whose interpolation turns no view
    direction (nor the meridian convergence) by more than the tolerance;
    None when no spacing does."""
    g = scene.grid
    sensor = scene.sensor

    def exact(rows: FloatArray, cols: FloatArray) -> dict[str, FloatArray]:
        return {**_ground_fields(scene, rows, cols), "row": rows, "col": cols}

    def error(approx: Mapping[str, NDArray[np.floating]], exact_f: Mapping[str, FloatArray]) -> float:
        rows, cols = exact_f["row"], exact_f["col"]
        a = sensor.view_angles(_points(g, approx, rows, cols), time)
        b = sensor.view_angles(_points(g, exact_f, rows, cols), time)
        d = direction_error(a.view_zenith, a.view_azimuth, b.view_zenith, b.view_azimuth)
        d = d[np.isfinite(d)]
        conv = np.abs(np.asarray(approx["convergence"]) - exact_f["convergence"])
        conv = conv[np.isfinite(conv)]
        return max(float(d.max()) if d.size else 0.0, float(conv.max()) if conv.size else 0.0)

    def focus(nodes: Mapping[str, FloatArray]) -> list[tuple[int, int]]:
        # The node nearest the sensor's nadir: the view direction is most
        # sensitive to the ground position there.
        vz = np.asarray(sensor.view_angles(_points(g, nodes, nodes["row"], nodes["col"]),
                                           time).view_zenith, float)
        if not np.isfinite(vz).any():
            return []
        ir, ic = np.unravel_index(np.nanargmin(vz), vz.shape)
        return [(int(ir), int(ic))]

    plan = plan_lattice(g, exact, error, tol, steps=steps, periodic=("lon",), focus=focus,
                        require_finite=True)
    return plan if plan.step else None


def classify(values: ArrayLike, thresholds: Sequence[float]) -> NDArray[np.uint8]:
    """Glint class per pixel: the number of thresholds at or below the value.

    Class ``k`` holds ``thresholds[k-1] <= value < thresholds[k]``; NaN gets
    :data:`~glint.variables.CLASS_NODATA`.

    Examples
    --------
    >>> classify(np.array([np.nan, 0.0, 1e-3, 1.0]), (1e-4, 5e-3))
    array([255,   0,   1,   2], dtype=uint8)
    """
    v = np.asarray(values)
    out = np.empty(v.shape, dtype=np.uint8)
    with threads_for(v.size):
        _classify_loop(v.reshape(-1), np.asarray(thresholds, dtype=np.float64), out.reshape(-1))
    return out


@numba.njit(parallel=True, cache=True, nogil=True)
def _classify_loop(v: NDArray[np.floating], thresholds: FloatArray,
                   out: NDArray[np.uint8]) -> None:  # pragma: no cover - compiled
    for i in numba.prange(v.size):
        x = v[i]
        if not np.isfinite(x):
            out[i] = CLASS_NODATA
            continue
        k = 0
        while k < thresholds.size and x >= thresholds[k]:
            k += 1
        out[i] = k


#: Pixels computed in one pass of :func:`compute_window` (larger windows are
#: computed in column chunks of at most this size): bounds the float64
#: temporaries of per-pixel view geometry (about 100 bytes per pixel).
WINDOW_PIXELS = 1 << 20


def compute_window(
    scene: Scene,
    plan: GeometryPlan,
    params: KernelParameters,
    row_slice: slice,
    col_slice: slice | None = None,
    variables: Sequence[str] = DEFAULT_VARIABLES,
) -> dict[str, np.ndarray]:
    """Every requested variable for one window of the grid.

    Returns float32 arrays (uint8 for ``glint_class``) of the window's shape.
    Windows of more than :data:`WINDOW_PIXELS` pixels are computed in column
    chunks, so the temporaries stay bounded whatever the window's width.
    """
    g = scene.grid
    col_slice = col_slice or slice(0, g.width)
    r0, r1, _ = row_slice.indices(g.height)
    c0, c1, _ = col_slice.indices(g.width)
    width = max(WINDOW_PIXELS // max(r1 - r0, 1), 512)
    if c1 - c0 <= width:
        return _compute_chunk(scene, plan, params, r0, r1, c0, c1, variables)
    out: dict[str, np.ndarray] = {}
    for a in range(c0, c1, width):
        b = min(a + width, c1)
        part = _compute_chunk(scene, plan, params, r0, r1, a, b, variables)
        for name, arr in part.items():
            if name not in out:
                out[name] = np.empty((r1 - r0, c1 - c0), dtype=arr.dtype)
            out[name][:, a - c0:b - c0] = arr
    return out


def _compute_chunk(scene: Scene, plan: GeometryPlan, params: KernelParameters, r0: int, r1: int,
                   c0: int, c1: int, variables: Sequence[str]) -> dict[str, np.ndarray]:
    rows = np.arange(r0, r1, dtype=float)
    cols = np.arange(c0, c1, dtype=float)
    ang: Angles = {}
    if plan.step and plan.node_rows is not None and plan.node_cols is not None:
        for name, vals in plan.nodes.items():
            ang[name] = interpolate_field(vals, plan.node_rows, plan.node_cols, rows, cols,
                                          periodic=name.endswith("azimuth"), dtype=np.float32)
    if not plan.views_interpolated:
        # Row and column indices (and from them x and y) as broadcasts: no
        # per-pixel memory.
        rr, cc = np.broadcast_arrays(rows[:, None], cols[None, :])
        if plan.ground is not None:
            ground = plan.ground
            fields = {k: ground.interpolate(k, rows, cols) for k in ground.nodes
                      if k not in ("row", "col")}
            pts = _points(scene.grid, fields, rr, cc)
        else:
            pts = GroundPoints.from_pixels(scene.grid, rr, cc)
        va = scene.sensor.view_angles(pts, plan.time)
        ang["view_zenith"] = np.asarray(va.view_zenith, np.float32)
        ang["view_azimuth"] = np.asarray(va.view_azimuth, np.float32)
        if not plan.step:
            # No sun lattice met the bound: the sun at every pixel, at its
            # imaging time.
            sun = _sun_at(scene, _imaging_times(scene, pts, plan.time, va), pts)
            ang["sun_zenith"] = sun["sun_zenith"]
            ang["sun_azimuth"] = sun["sun_azimuth"]
        del pts, va

    f32 = {k: np.ascontiguousarray(v, dtype=np.float32) for k, v in ang.items()}
    return _kernel_outputs(f32, params, scene.classes, variables)


def _kernel_outputs(f32: Mapping[str, NDArray[np.float32]], params: KernelParameters,
                    classes: GlintClasses | None, variables: Sequence[str]) -> dict[str, NDArray[Any]]:
    """Run the fused kernel on float32 angle arrays and pick the variables."""
    out = glint_kernel(
        f32["sun_zenith"], f32["sun_azimuth"], f32["view_zenith"], f32["view_azimuth"],
        refractive_index=params.refractive_index,
        sigma2_crosswind=params.sigma2_crosswind,
        sigma2_upwind=params.sigma2_upwind,
        wind_direction=params.wind_direction,
        sun_solid_angle=params.sun_solid_angle,
        distribution=params.distribution,
        gram_charlier=params.gram_charlier,
        shadowing=params.shadowing,
    )
    result: dict[str, NDArray[Any]] = {}
    for name in variables:
        if name in f32:
            result[name] = f32[name]
        elif name in out:
            result[name] = out[name]
        elif name == "glint_class" and classes is not None:
            result[name] = classify(out[classes.variable], classes.thresholds)
        else:  # pragma: no cover - guarded by check_variables
            raise InputError(f"unknown variable {name!r}")
    return result


def check_variables(variables: Sequence[str] | None) -> tuple[str, ...]:
    """The variable names as a tuple (all by default); InputError naming any unknown one."""
    if variables is None:
        return DEFAULT_VARIABLES
    bad = [v for v in variables if v not in VARIABLES]
    if bad:
        raise InputError(f"unknown variable(s) {bad!r}; allowed: {', '.join(VARIABLES)}")
    return tuple(variables)


def _scene_time(scene: Scene, time: Any) -> np.datetime64:
    if time is None:
        return scene.times[0]
    return np.datetime64(time, "ns")


def iter_blocks(
    scene: Scene,
    *,
    time: Any = None,
    block_rows: int = 512,
    variables: Sequence[str] | None = None,
    plan: GeometryPlan | None = None,
    params: KernelParameters | None = None,
) -> Iterator[tuple[slice, dict[str, np.ndarray]]]:
    """Stream full-width strips of the grid: ``(row_slice, {name: array})``.

    Memory stays bounded by the strip size whatever the grid size.
    ``time`` defaults to the scene's first time.
    """
    variables = check_variables(variables)
    t = _scene_time(scene, time)
    plan = plan or plan_geometry(scene, t)
    params = params or kernel_parameters(scene, t)
    for r0, r1 in scene.grid.blocks(block_rows):
        rs = slice(r0, r1)
        yield rs, compute_window(scene, plan, params, rs, None, variables)


#: Largest window of output arrays :func:`iter_windows` yields [bytes]:
#: strips up to this size stay whole (GDAL writes whole strips fastest;
#: larger windows were measured faster but let memory grow with the width),
#: wider ones are cut into windows of whole tiles below it.
WINDOW_BYTES = 32 * 2**20


def _window_width(width: int, block_rows: int, max_pixels: int) -> int:
    """Columns of the windows :func:`iter_windows` cuts a strip of
    ``block_rows`` x ``width`` pixels into.

    The whole width when the strip holds at most ``max_pixels`` pixels;
    otherwise the strip is cut into the fewest windows of equal width, each
    a whole number of ``block_rows``-wide tiles and never wider than the
    widest whole number of tiles within ``max_pixels`` (at least one tile).
    The bound is fixed by ``max_pixels`` alone, so the windows (and the
    buffers sized by them: the computation's temporaries, the writers'
    caches) do not grow with the grid: a grid of 4000 and one of 11000
    columns both get windows of 1536 columns at the default size.
    """
    if block_rows * width <= max_pixels:
        return width
    widest = max(max_pixels // (block_rows * block_rows), 1) * block_rows
    pieces = -(-width // widest)
    per_piece = -(-width // pieces)
    return -(-per_piece // block_rows) * block_rows


def iter_windows(
    scene: Scene,
    *,
    time: Any = None,
    block_rows: int = 512,
    max_pixels: int | None = None,
    variables: Sequence[str] | None = None,
    plan: GeometryPlan | None = None,
    params: KernelParameters | None = None,
) -> Iterator[tuple[slice, slice, dict[str, np.ndarray]]]:
    """Stream windows of the grid: ``(row_slice, col_slice, {name: array})``.

    The strips of :func:`iter_blocks`, cut (when they hold more than
    ``max_pixels`` pixels; default: :data:`WINDOW_BYTES` of the variables)
    into the fewest windows of equal width, left to right, each a whole
    number of ``block_rows`` wide (so that GeoTIFF tiles and NetCDF chunks of
    that size are written whole) and at most ``max_pixels`` (one tile at
    least; see :func:`_window_width`): memory stays bounded whatever the
    grid's size *and* width.
    """
    variables = check_variables(variables)
    t = _scene_time(scene, time)
    plan = plan or plan_geometry(scene, t)
    params = params or kernel_parameters(scene, t)
    if max_pixels is None:
        max_pixels = WINDOW_BYTES // max(bytes_per_pixel(variables), 1)
    width = scene.grid.width
    step = _window_width(width, block_rows, max(int(max_pixels), 1))
    for r0, r1 in scene.grid.blocks(block_rows):
        rs = slice(r0, r1)
        for c0 in range(0, width, step):
            cs = slice(c0, min(c0 + step, width))
            yield rs, cs, compute_window(scene, plan, params, rs, cs, variables)


#: Environment variable capping the memory glint may use [MiB] (batch jobs on
#: shared machines); without it, the memory the system reports available.
MEMORY_LIMIT_VARIABLE = "GLINT_MEMORY_LIMIT_MB"


def available_memory() -> int | None:
    """Memory this process may still use [bytes], or None when unknown.

    The smallest of: the system's available memory (``MemAvailable`` of
    ``/proc/meminfo``), what is left under a cgroup (container) limit, what
    is left under the process's address-space limit (``ulimit -v``), and
    :data:`MEMORY_LIMIT_VARIABLE` (minus what the process already holds).
    """
    import os
    import resource

    limits: list[int] = []
    rss = 0
    try:
        with open("/proc/self/statm") as f:
            fields = f.read().split()
        page = os.sysconf("SC_PAGE_SIZE")
        vsize, rss = int(fields[0]) * page, int(fields[1]) * page
        soft, _ = resource.getrlimit(resource.RLIMIT_AS)
        if soft != resource.RLIM_INFINITY:
            limits.append(max(soft - vsize, 0))
    except (OSError, ValueError, IndexError, AttributeError):
        pass
    try:
        with open("/proc/meminfo") as f:
            for line in f:
                if line.startswith("MemAvailable:"):
                    limits.append(int(line.split()[1]) * 1024)
                    break
    except (OSError, ValueError, IndexError):
        pass
    try:
        with open("/sys/fs/cgroup/memory.max") as f:
            cap = f.read().strip()
        with open("/sys/fs/cgroup/memory.current") as f:
            used = int(f.read().strip())
        if cap != "max":
            limits.append(max(int(cap) - used, 0))
    except (OSError, ValueError):
        pass
    env = os.environ.get(MEMORY_LIMIT_VARIABLE)
    if env:
        try:
            limits.append(max(int(float(env) * 2**20) - rss, 0))
        except ValueError as exc:
            raise InputError(f"{MEMORY_LIMIT_VARIABLE} must be a number of MiB; got {env!r}") from exc
    return min(limits) if limits else None


def check_memory(nbytes: int, what: str) -> None:
    """Raise :class:`~glint.errors.MemoryLimitError` before computing when
    ``what`` needs more memory (``nbytes``) than :func:`available_memory`."""
    avail = available_memory()
    if avail is not None and nbytes > avail:
        raise MemoryLimitError(
            f"{what} needs about {nbytes / 2**20:,.0f} MiB of memory, but only "
            f"{avail / 2**20:,.0f} MiB are still available to this process (system, "
            f"container, ulimit or {MEMORY_LIMIT_VARIABLE}); free memory or raise the limit")


def window_memory(variables: Sequence[str]) -> int:
    """Memory a streamed run of the engine needs beyond the interpreter and
    its libraries [bytes]: two windows of the variables (one written, one
    computed ahead: :func:`glint.workflows.job.computed_ahead`; at most
    :data:`WINDOW_BYTES` each),
    the per-pixel temporaries of a chunk (about 120 bytes per pixel) and the
    tie-point lattices. The same whatever the grid's size."""
    return 2 * WINDOW_BYTES + WINDOW_PIXELS * 120 + MAX_NODES * 8 * 12


def compute_dataset(
    scene: Scene,
    *,
    time: Any = None,
    variables: Sequence[str] | None = None,
    chunks: int | tuple[int, int] | None = None,
) -> xarray.Dataset:
    """The scene's glint variables as an :class:`xarray.Dataset`.

    Parameters
    ----------
    scene : glint.scene.Scene
    time : datetime-like, optional
        One of the scene's times (default: the first).
    variables : sequence of str, optional
        Names from :data:`glint.variables.VARIABLES` (default: all).
    chunks : int or (int, int), optional
        With chunks, the variables are lazy dask arrays computed window by
        window when asked for (requires dask); without, numpy arrays computed
        strip by strip now.

    Returns
    -------
    xarray.Dataset
        Dimensions ``(y, x)`` with projection coordinates of pixel centres, a
        scalar ``time`` coordinate, and CF attributes from
        :data:`glint.variables.VARIABLES`.
    """
    import xarray as xr

    variables = check_variables(variables)
    t = _scene_time(scene, time)
    g = scene.grid
    plan = plan_geometry(scene, t)
    params = kernel_parameters(scene, t)
    data: dict[str, Any]
    if chunks is None:
        check_memory(g.size * bytes_per_pixel(variables)
                     + window_memory(variables),
                     f"an in-memory dataset of {g.height} x {g.width} pixels (give chunks= for a "
                     "lazy one, or write maps strip by strip)")
        data = {v: np.empty(g.shape, dtype=VARIABLES[v].dtype) for v in variables}
        for rs, block in iter_blocks(scene, time=t, variables=variables, plan=plan):
            for v in variables:
                data[v][rs] = block[v]
    else:
        data = _lazy_arrays(scene, plan, params, variables, chunks)
    xs = g.xy(np.zeros(g.width), np.arange(g.width, dtype=float))[0]
    ys = g.xy(np.arange(g.height, dtype=float), np.zeros(g.height))[1]
    ds = xr.Dataset(
        {
            v: (("y", "x"), data[v], variable_attributes(v, scene))
            for v in variables
        },
        coords={"y": ys, "x": xs, "time": t},
    )
    ds.attrs.update(scene_attributes(scene, t, plan, params))
    return ds


def variable_attributes(name: str, scene: Scene) -> dict[str, Any]:
    """CF attributes of one output variable (classes from the scene)."""
    var = VARIABLES[name]
    a: dict[str, Any] = {"long_name": var.long_name, "units": var.units}
    if var.standard_name:
        a["standard_name"] = var.standard_name
    if var.comment:
        a["comment"] = var.comment
    if name == "glint_class":
        a["flag_values"] = np.arange(len(scene.classes.names), dtype=np.uint8)
        a["flag_meanings"] = " ".join(n.replace(" ", "_") for n in scene.classes.names)
        a["glint_class_thresholds"] = np.asarray(scene.classes.thresholds, dtype=float)
        a["glint_class_variable"] = scene.classes.variable
    return a


def scene_attributes(scene: Scene, time: np.datetime64, plan: GeometryPlan | None = None,
                     params: KernelParameters | None = None) -> dict[str, Any]:
    """Scene-level metadata recorded with every output."""
    params = params or kernel_parameters(scene, time)
    s = scene.surface
    attrs: dict[str, Any] = {
        "scene_name": scene.name,
        "scene_time": format_time(time),
        "wind_speed": float(s.wind_speed),
        "wind_height": float(s.wind_height),
        "wind_from_direction": "unknown (isotropic slopes)" if s.wind_direction is None else float(s.wind_direction),
        "slope_model": s.slope_model,
        "slope_distribution": s.distribution,
        "shadowing": int(bool(s.shadowing)),
        "refractive_index": params.refractive_index,
        "wavelength_nm": float(scene.water.wavelength),
    }
    if plan is not None:
        attrs["tie_point_step"] = int(plan.step)
        attrs["tie_point_max_error_deg"] = float(plan.max_error)
    return attrs


def _lazy_arrays(scene: Scene, plan: GeometryPlan, params: KernelParameters,
                 variables: Sequence[str], chunks: int | tuple[int, int]) -> dict[str, Any]:
    """Dask arrays computing every float variable of a chunk in one kernel call."""
    try:
        import dask.array as da
    except ImportError as exc:  # pragma: no cover - depends on extras
        raise ImportError("lazy computation needs dask: pip install 'glint[dask]'") from exc
    g = scene.grid
    if isinstance(chunks, int):
        chunks = (chunks, chunks)
    floats = [v for v in variables if v != "glint_class"]
    if "glint_class" in variables and scene.classes.variable not in floats:
        floats.append(scene.classes.variable)
    template = da.zeros(g.shape, chunks=chunks, dtype=np.float32)

    def _stack(block: NDArray[np.float32],
               block_info: list[dict[str, Any]] | None = None) -> NDArray[np.float32]:
        assert block_info is not None
        (r0, r1), (c0, c1) = block_info[0]["array-location"]
        res = compute_window(scene, plan, params, slice(r0, r1), slice(c0, c1), floats)
        return np.stack([res[v] for v in floats])

    stacked = da.map_blocks(
        _stack, template, dtype=np.float32, new_axis=0,
        chunks=((len(floats),),) + template.chunks, name="glint-block",
    )
    out = {v: stacked[i] for i, v in enumerate(floats) if v in variables}
    if "glint_class" in variables:
        src = stacked[floats.index(scene.classes.variable)]
        out["glint_class"] = da.map_blocks(
            classify, src, scene.classes.thresholds, dtype=np.uint8, name="glint-class"
        )
    return out


def compute_points(
    scene: Scene,
    time: Any,
    longitude: ArrayLike,
    latitude: ArrayLike,
    view_zenith: ArrayLike,
    view_azimuth: ArrayLike,
    variables: Sequence[str] | None = None,
    params: KernelParameters | None = None,
) -> dict[str, np.ndarray]:
    """Glint variables at arbitrary ground points (not on the scene grid).

    Used for maps in a camera's own image coordinates. The sun is computed
    exactly at each point (no tie points); the kernel and classes are those
    of :func:`compute_window`.

    Parameters
    ----------
    scene : glint.scene.Scene
        Supplies the surface, water, sun options and class thresholds.
    time : datetime-like
        Scene time (UTC).
    longitude, latitude : array_like
        Ground points [°]; NaN where nothing is seen.
    view_zenith, view_azimuth : array_like
        Direction from each point to the sensor [°], true north.
    variables : sequence of str, optional
        Names from :data:`glint.variables.VARIABLES` (default: all).
    params : KernelParameters, optional
        From :func:`kernel_parameters` (computed when not given).

    Returns
    -------
    dict of numpy.ndarray
        float32 arrays (uint8 for ``glint_class``) of the points' shape.
    """
    variables = check_variables(variables)
    t = np.datetime64(time, "ns")
    lon, lat, vz, va = np.broadcast_arrays(
        *(np.asarray(a, float) for a in (longitude, latitude, view_zenith, view_azimuth)))
    sp = sun_angles(scene, t, longitude=lon, latitude=lat)
    ang = {
        "sun_zenith": np.ascontiguousarray(sp.zenith, dtype=np.float32),
        "sun_azimuth": np.ascontiguousarray(sp.azimuth, dtype=np.float32),
        "view_zenith": np.ascontiguousarray(vz, dtype=np.float32),
        "view_azimuth": np.ascontiguousarray(va, dtype=np.float32),
    }
    return _kernel_outputs(ang, params or kernel_parameters(scene, t), scene.classes, variables)


def scene_center_summary(scene: Scene, time: np.datetime64) -> dict[str, float]:
    """Sun angles at the grid centre at ``time`` (for titles and reports)."""
    g = scene.grid
    rc = np.array([(g.height - 1) / 2.0]), np.array([(g.width - 1) / 2.0])
    ang = _exact_angles(scene, time, rc[0], rc[1], views=False)
    return {"sun_zenith": float(ang["sun_zenith"][0]), "sun_azimuth": float(ang["sun_azimuth"][0])}
