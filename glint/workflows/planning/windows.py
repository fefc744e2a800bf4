"""When, in which direction and at what camera tilt a survey photo stays
free of glint.

For each time step, each candidate heading and each gimbal pitch the
planner predicts the share of the photo, in the camera's own image
coordinates, whose glint reflectance factor exceeds the survey's threshold,
with the wave-slope spread of the wind at that time. From those shares it
finds the best heading and pitch per time and the continuous time windows
that meet every limit (sun elevation, wind, glint share), each flown with
one heading (and its reverse, unless lines are flown one way) and one pitch.

How the shares are computed
---------------------------
* The view geometry of each pose (heading, pitch) does not change with
  time: the rays through the centres of a coarse lattice of image cells
  (``survey.lattice``, 24 x 18 by default) are intersected with the water
  once (:class:`glint.sensors.FrameCamera`, :func:`glint.sensors.angles_to_position`).
* The sun is computed once per time step at the site
  (:func:`glint.physics.sun.solar_position`); across a drone photo's
  footprint of a few hundred metres its direction changes by less than
  0.005°, far below the angular width of glint.
* The glint reflectance factor of every lattice point of every pose comes
  from the fused kernel :func:`glint.physics.reflect.glint_kernel` with the
  kernel parameters of :func:`glint.engine.compute.kernel_parameters`
  (Cox and Munk 1954 slope variances of the wind at that time).
* The share of the photo is the share of lattice cells whose centre exceeds
  the threshold (the midpoint rule over equal cells). Its difference from
  the share counted over every pixel is at most :data:`SHARE_ERROR_BOUND`
  for the default lattice (tested against the per-pixel camera view).
* Night steps (sun below the horizon) are never evaluated.

Never look at the sun or its reflection. A plan is a glint estimate only,
not a flight clearance.

References
----------
Cox, C. and Munk, W. (1954) Measurement of the roughness of the sea surface
from photographs of the sun's glitter. JOSA 44(11), 838-850,
doi:10.1364/JOSA.44.000838.

Mount, R. (2005) Acquisition of through-water aerial survey images: surface
effects and the prediction of sun glitter and subsurface illumination.
Photogrammetric Engineering and Remote Sensing 71(12), 1407-1415.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, cast

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.engine import compute
from glint.errors import InputError
from glint.physics.reflect import glint_kernel
from glint.physics.sun import solar_position
from glint.scene import Scene, scene_from_dict
from glint.sensors import angles_to_position, ecef_from_lonlat
from glint.workflows.planning.survey import Survey, WindSeries, scan_times, to_local

__all__ = [
    "SHARE_ERROR_BOUND",
    "PoseGeometry",
    "Window",
    "SurveyScan",
    "pose_geometry",
    "photo_glint_shares",
    "scan_survey",
    "find_windows",
    "survey_scene",
]

#: Largest difference between a photo share computed on the default 24 x 18
#: lattice and the share counted over every pixel of the photo, found over
#: sun positions, winds, headings and pitches in the test-suite (shares are
#: fractions of the photo, 0-1).
SHARE_ERROR_BOUND = 0.01

#: Steps evaluated per kernel call (bounds memory: about 16 bytes per point).
_CHUNK_POINTS = 1_500_000


@dataclass(frozen=True)
class PoseGeometry:
    """View angles of the lattice points of every pose.

    ``view_zenith``/``view_azimuth`` have shape ``(headings, pitches,
    points)`` [°]; ``col``/``row`` are the points' image positions [px].
    """

    headings: NDArray[np.float64]
    pitches: NDArray[np.float64]
    view_zenith: NDArray[np.float32]
    view_azimuth: NDArray[np.float32]
    col: NDArray[np.float64]
    row: NDArray[np.float64]


@dataclass(frozen=True)
class Window:
    """A continuous time window flown with one heading and one pitch.

    ``start``/``end`` are the first and last checked time steps (UTC);
    ``reverse_heading`` is None when lines are flown one way.
    """

    date: _dt.date
    start: np.datetime64
    end: np.datetime64
    start_local: _dt.datetime
    end_local: _dt.datetime
    steps: int
    heading: float
    reverse_heading: float | None
    pitch: float
    worst_glint_share: float
    sun_elevation_min: float
    sun_elevation_max: float
    wind_max: float

    def as_dict(self) -> dict[str, Any]:
        """JSON/CSV-ready values (times as ISO 8601 text)."""
        from glint.times import format_time

        return {
            "date": self.date.isoformat(),
            "start_local": self.start_local.isoformat(),
            "end_local": self.end_local.isoformat(),
            "start_utc": format_time(self.start),
            "end_utc": format_time(self.end),
            "duration_minutes": round(float((self.end - self.start) / np.timedelta64(1, "m")), 1),
            "steps": self.steps,
            "heading": self.heading,
            "reverse_heading": self.reverse_heading,
            "pitch": self.pitch,
            "worst_glint_share": round(self.worst_glint_share, 4),
            "sun_elevation_min": round(self.sun_elevation_min, 2),
            "sun_elevation_max": round(self.sun_elevation_max, 2),
            "wind_max": round(self.wind_max, 2),
        }


@dataclass(frozen=True)
class SurveyScan:
    """Photo shares of every time step, heading and pitch of a survey.

    Attributes
    ----------
    survey : Survey
    times : ndarray of datetime64[ns]
        UTC time steps.
    sun_elevation, sun_azimuth : ndarray
        Sun at the site [°] per step.
    wind_speed, wind_direction : ndarray
        Wind at 10 m [m s⁻¹] and direction [°] per step (NaN where not needed).
    shares : ndarray, shape (times, headings, pitches)
        Share of the photo above the glint threshold; NaN at night.
    line_shares : ndarray, shape (times, headings, pitches)
        The larger share of a heading and its reverse (the heading's own
        share when lines are flown one way).
    acceptable : ndarray of bool, shape (times, headings, pitches)
        Every limit met with that heading (and its reverse) and pitch.
    best_share : ndarray
        Smallest line share per step (NaN at night).
    best_heading, best_pitch : ndarray
        Heading and pitch of ``best_share`` (NaN at night).
    windows : list of Window
    """

    survey: Survey
    times: NDArray[np.datetime64]
    sun_elevation: NDArray[np.float64]
    sun_azimuth: NDArray[np.float64]
    wind_speed: NDArray[np.float64]
    wind_direction: NDArray[np.float64]
    headings: NDArray[np.float64]
    pitches: NDArray[np.float64]
    shares: NDArray[np.float64]
    line_shares: NDArray[np.float64]
    acceptable: NDArray[np.bool_]
    best_share: NDArray[np.float64]
    best_heading: NDArray[np.float64]
    best_pitch: NDArray[np.float64]
    windows: list[Window]

    @property
    def conditions_met(self) -> NDArray[np.bool_]:
        """Steps whose sun elevation and wind meet the limits."""
        lim = self.survey.limits
        lo, hi = lim.sun_elevation
        return ((self.sun_elevation >= lo) & (self.sun_elevation <= hi)
                & (self.wind_speed <= lim.max_wind))


def lattice_points(cols: int, rows: int, lattice: tuple[int, int]) -> tuple[NDArray[np.float64], ...]:
    """Image positions [px] (fractional pixel indices) of the centres of a
    ``lattice = (nc, nr)`` of equal cells covering a ``cols x rows`` image."""
    nc, nr = lattice
    c = (np.arange(nc) + 0.5) * cols / nc - 0.5
    r = (np.arange(nr) + 0.5) * rows / nr - 0.5
    rr, cc = np.meshgrid(r, c, indexing="ij")
    return cc.ravel(), rr.ravel()


def pose_geometry(survey: Survey, *, headings: Sequence[float] | None = None,
                  pitches: Sequence[float] | None = None,
                  lattice: tuple[int, int] | None = None) -> PoseGeometry:
    """View angles of the lattice points of every (heading, pitch) pose.

    Raises
    ------
    InputError
        If a lattice point of some pose does not see the water.
    """
    hs = np.asarray(survey.headings if headings is None else headings, float)
    ps = np.asarray(survey.pitches if pitches is None else pitches, float)
    lat_ = survey.lattice if lattice is None else lattice
    base = survey.frame_camera(0.0, -90.0)
    col, row = lattice_points(base.cols, base.rows, lat_)
    x, y, z = ecef_from_lonlat(lon=survey.longitude, lat=survey.latitude,
                               height=float(survey.camera["altitude"]))
    vz = np.empty((hs.size, ps.size, col.size), np.float32)
    va = np.empty_like(vz)
    for j, p in enumerate(ps):
        # Turning the camera about the vertical turns its rays, and so the
        # view azimuths of their ground points, by the same angle: one
        # camera per pitch (the meridian convergence across a footprint,
        # below 0.01 deg, is left out).
        cam = survey.frame_camera(0.0, float(p))
        lon, lat = cam.image_to_world(col, row)
        zen, azi, _ = angles_to_position(lon=lon, lat=lat, height=0.0, x=x, y=y, z=z)
        if not np.all(np.isfinite(zen) & (zen < 90.0)):
            raise InputError(f"camera pitch {p!r} deg: part of the photo does not see the water; "
                             "use a steeper (more negative) pitch")
        for i, h in enumerate(hs):
            vz[i, j] = zen
            va[i, j] = (azi + h) % 360.0
    return PoseGeometry(hs, ps, vz, va, col, row)


def survey_scene(survey: Survey, *, heading: float = 0.0, pitch: float = -90.0,
                 time: Any = None, wind_speed: float | None = None,
                 wind_direction: float | None = None) -> Scene:
    """A scene of the survey camera at one pose (for the camera view and the
    kernel parameters): the survey's water, slope model and winds."""
    t = survey.preview_time if time is None else time
    if t is None:
        t = scan_times(survey.start_date, survey.start_date, survey.tz, 60)[12]
    from glint.times import format_time

    if wind_speed is None:
        ws, wd = survey.wind.at(np.asarray([t], dtype="datetime64[ns]"))
        wind_speed, wind_direction = float(ws[0]), (None if np.isnan(wd[0]) else float(wd[0]))
    surface: dict[str, Any] = {"wind_speed": float(wind_speed), "slope_model": survey.slope_model}
    if wind_direction is not None and np.isfinite(wind_direction):
        surface["wind_direction"] = float(wind_direction)
    water = {k: v for k, v in dataclasses.asdict(survey.water).items() if v is not None}
    half = 0.001
    sensor = {"kind": "frame-camera", "lon": survey.longitude, "lat": survey.latitude,
              "heading": float(heading) % 360.0, "pitch": float(pitch), **survey.camera}
    sensor["image_size"] = list(sensor["image_size"])
    return scene_from_dict({
        "scene": {"name": survey.name, "time": format_time(t)},
        "grid": {"west": survey.longitude - half, "east": survey.longitude + half,
                 "south": survey.latitude - half, "north": survey.latitude + half,
                 "resolution": 50.0},
        "sensor": sensor,
        "surface": surface,
        "water": water,
    }, base_dir=".")


def photo_glint_shares(sun_zenith: ArrayLike, sun_azimuth: ArrayLike, geometry: PoseGeometry, *,
                       threshold: float, params: compute.KernelParameters) -> NDArray[np.float64]:
    """Share of each pose's photo above the glint threshold, per sun position.

    Parameters
    ----------
    sun_zenith, sun_azimuth : array_like, shape (n,)
        Sun positions [°] (one kernel parameter set for all of them).
    geometry : PoseGeometry
        From :func:`pose_geometry`.
    threshold : float
        Glint reflectance factor above which a pixel counts as glinted.
    params : glint.engine.compute.KernelParameters
        Optics and slope statistics (:func:`glint.engine.compute.kernel_parameters`).

    Returns
    -------
    ndarray, shape (n, headings, pitches)
        Shares in [0, 1]; 0 where the sun is below the horizon.
    """
    sz = np.asarray(sun_zenith, np.float32).reshape(-1)
    sa = np.asarray(sun_azimuth, np.float32).reshape(-1)
    nh, npch, npts = geometry.view_zenith.shape
    per = nh * npch * npts
    out = np.empty((sz.size, nh, npch))
    step = max(1, _CHUNK_POINTS // per)
    vz = geometry.view_zenith.reshape(1, -1)
    va = geometry.view_azimuth.reshape(1, -1)
    for a in range(0, sz.size, step):
        b = min(a + step, sz.size)
        n = b - a
        res = glint_kernel(
            np.ascontiguousarray(np.broadcast_to(sz[a:b, None], (n, per))),
            np.ascontiguousarray(np.broadcast_to(sa[a:b, None], (n, per))),
            np.ascontiguousarray(np.broadcast_to(vz, (n, per))),
            np.ascontiguousarray(np.broadcast_to(va, (n, per))),
            refractive_index=params.refractive_index, sigma2_crosswind=params.sigma2_crosswind,
            sigma2_upwind=params.sigma2_upwind, wind_direction=params.wind_direction,
            sun_solid_angle=params.sun_solid_angle, distribution=cast(Any, params.distribution),
            gram_charlier=params.gram_charlier, shadowing=params.shadowing,
        )["glint_reflectance"].reshape(n, nh, npch, npts)
        out[a:b] = np.mean(res > threshold, axis=-1)
    return out


def _reverse_index(headings: NDArray[np.float64]) -> NDArray[np.intp]:
    """Index of each heading's reverse (itself when the reverse is absent)."""
    rev = (headings + 180.0) % 360.0
    idx = np.arange(headings.size)
    for i, r in enumerate(rev):
        d = np.abs((headings - r + 180.0) % 360.0 - 180.0)
        if d.min() < 1e-6:
            idx[i] = int(np.argmin(d))
    return idx


def scan_survey(survey: Survey, *, geometry: PoseGeometry | None = None) -> SurveyScan:
    """Photo shares, best pose per time and the time windows of a survey.

    Parameters
    ----------
    survey : Survey
    geometry : PoseGeometry, optional
        Precomputed :func:`pose_geometry` of the survey.

    Returns
    -------
    SurveyScan

    Raises
    ------
    InputError
        If a wind series does not cover the daylight steps of the dates.
    """
    times = scan_times(survey.start_date, survey.end_date, survey.tz, survey.step_minutes)
    sun = solar_position(times, longitude=survey.longitude, latitude=survey.latitude)
    elev = np.asarray(sun.elevation, float)
    azim = np.asarray(sun.azimuth, float)
    day = elev > 0.0
    geo = geometry or pose_geometry(survey)
    nh, npch = geo.headings.size, geo.pitches.size
    shares = np.full((times.size, nh, npch), np.nan)
    wind_speed = np.full(times.size, np.nan)
    wind_dir = np.full(times.size, np.nan)
    if np.any(day):
        ws, wd = survey.wind.at(times[day])
        wind_speed[day], wind_dir[day] = ws, wd
        base = survey_scene(survey, time=times[np.flatnonzero(day)[0]],
                            wind_speed=float(ws[0]), wind_direction=None)
        # One kernel call per distinct wind (a steady wind: one per day, for
        # the sun's solid angle).
        idx = np.flatnonzero(day)
        keys = np.column_stack([np.round(ws, 6), np.nan_to_num(np.round(wd, 4), nan=-1.0),
                                (times[idx].astype("datetime64[D]").astype(np.int64))])
        _, group = np.unique(keys, axis=0, return_inverse=True)
        group = np.asarray(group).reshape(-1)
        for g in range(int(group.max()) + 1):
            sel = idx[group == g]
            k = int(np.flatnonzero(group == g)[0])
            w_dir = None if np.isnan(wd[k]) else float(wd[k])
            scene = dataclasses.replace(base, surface=dataclasses.replace(
                base.surface, wind_speed=float(ws[k]), wind_direction=w_dir, wind_height=10.0))
            params = compute.kernel_parameters(scene, times[sel[0]])
            shares[sel] = photo_glint_shares(90.0 - elev[sel], azim[sel], geo,
                                             threshold=survey.limits.glint_threshold, params=params)
    rev = _reverse_index(geo.headings)
    line = shares if survey.one_way_lines else np.maximum(shares, shares[:, rev, :])
    lim = survey.limits
    ok_cond = (day & (elev >= lim.sun_elevation[0]) & (elev <= lim.sun_elevation[1])
               & (wind_speed <= lim.max_wind))
    with np.errstate(invalid="ignore"):
        acceptable = ok_cond[:, None, None] & (line <= lim.max_glint_share)
    flat = line.reshape(times.size, -1)
    best = np.full(times.size, np.nan)
    best_h = np.full(times.size, np.nan)
    best_p = np.full(times.size, np.nan)
    if np.any(day):
        # Prefer the pose nearest nadir among equal shares (pitches are
        # ordered as given; headings by their order).
        k = np.nanargmin(np.where(np.isnan(flat[day]), np.inf, flat[day]), axis=1)
        best[day] = flat[day][np.arange(k.size), k]
        best_h[day] = geo.headings[k // npch]
        best_p[day] = geo.pitches[k % npch]
    scan = SurveyScan(survey, times, elev, azim, wind_speed, wind_dir, geo.headings, geo.pitches,
                      shares, line, acceptable, best, best_h, best_p, [])
    return dataclasses.replace(scan, windows=find_windows(scan))


def find_windows(scan: SurveyScan) -> list[Window]:
    """Continuous runs of time steps meeting every limit, each with one pose.

    A run of consecutive steps in which some pose is acceptable is split
    greedily: from its first step, the pose that stays acceptable for the
    most steps (ties: the lowest worst share) makes a window; the next
    window starts where that pose stops being acceptable.
    """
    s = scan.survey
    acc = scan.acceptable.reshape(scan.times.size, -1)
    any_ok: NDArray[np.bool_] = np.asarray(acc.any(axis=1), dtype=bool)
    npch = scan.pitches.size
    rev = _reverse_index(scan.headings)
    line = scan.line_shares.reshape(scan.times.size, -1)
    windows: list[Window] = []
    i, n = 0, scan.times.size
    while i < n:
        if not any_ok[i]:
            i += 1
            continue
        # length of the acceptable run of each pose from step i
        length = np.zeros(acc.shape[1], int)
        alive = acc[i].copy()
        j = i
        while j < n and alive.any():
            length[alive] += 1
            j += 1
            if j < n:
                alive &= acc[j]
        longest = length.max()
        cands = np.flatnonzero(length == longest)
        worst = np.array([np.nanmax(line[i:i + longest, c]) for c in cands])
        # Among equally long: lowest worst share; then a heading below 180
        # (the line direction) is named first.
        order = np.lexsort((scan.headings[cands // npch] >= 180.0, worst))
        c = int(cands[order[0]])
        h_i, p_i = c // npch, c % npch
        a, b = i, i + longest - 1
        heading = float(scan.headings[h_i])
        reverse = None if s.one_way_lines else float(scan.headings[rev[h_i]])
        if reverse is not None and heading >= 180.0 and reverse < 180.0:
            heading, reverse = reverse, heading
        tz = s.tz
        windows.append(Window(
            date=to_local(scan.times[a], tz).date(), start=scan.times[a], end=scan.times[b],
            start_local=to_local(scan.times[a], tz), end_local=to_local(scan.times[b], tz),
            steps=int(longest), heading=heading, reverse_heading=reverse,
            pitch=float(scan.pitches[p_i]), worst_glint_share=float(np.nanmax(line[a:b + 1, c])),
            sun_elevation_min=float(scan.sun_elevation[a:b + 1].min()),
            sun_elevation_max=float(scan.sun_elevation[a:b + 1].max()),
            wind_max=float(np.nanmax(scan.wind_speed[a:b + 1])),
        ))
        i = b + 1
    return windows


def wind_of(series: WindSeries, time: Any) -> tuple[float, float | None]:
    """Speed and direction (None when unknown) of a wind series at one time."""
    ws, wd = series.at(np.asarray([time], dtype="datetime64[ns]"))
    return float(ws[0]), (None if np.isnan(wd[0]) else float(wd[0]))
