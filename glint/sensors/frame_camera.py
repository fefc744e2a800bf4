"""Sensor kind ``frame-camera``: a camera (typically on a drone) taking one
frame from a known position and attitude.

Camera axes, rotation order and signs
-------------------------------------
Image coordinates: ``col`` increases to the right, ``row`` downwards; pixel
``(row, col)`` has its centre at ``(col + 0.5, row + 0.5)`` from the image's
top-left corner, and the optical axis meets the image at its centre
``(cols / 2, rows / 2)`` (no lens distortion). The camera frame is
right-handed: ``x`` to the image right, ``y`` to the image bottom, ``z``
along the optical axis (forward).

The attitude is built in the local east-north-up frame at the camera from
three angles, applied in this order:

1. ``heading`` [° true]: the horizontal direction the camera faces; for a
   camera pointing straight down, the direction the *top of the image*
   faces.
2. ``pitch`` [°]: elevation of the optical axis, 0 = horizontal,
   -90 = straight down (nadir), positive upwards.
3. ``roll`` [°]: rotation about the optical axis; positive turns the image's
   right edge downwards (clockwise as seen from behind the camera).

With heading ``psi`` and pitch ``p`` the optical axis is
``f = (sin psi cos p, cos psi cos p, sin p)`` (east, north, up), the image's
"up" is ``u = (-sin p sin psi, -sin p cos psi, cos p)``, the image's right is
``r0 = f x u`` and its bottom ``d0 = -u``; the roll ``phi`` gives
``r = cos phi r0 + sin phi d0`` and ``d = -sin phi r0 + cos phi d0``.

Water surface
-------------
For this sensor the water is a plane at height 0: the tangent plane under
the camera, onto which ground points are placed by an azimuthal equidistant
projection centred under the camera (their geodesic distance and azimuth
are kept). Within the few hundred metres a drone sees this differs from the
curved water by less than a centimetre in height per 300 m of range. View
angles are then computed on the ellipsoid with
:func:`~glint.sensors.base.angles_to_position`, like every other sensor
(the difference from the flat-plane angles is ``range / R``: 0.005° at
600 m). Use ``fixed-camera`` for long ranges.
"""

from __future__ import annotations

import logging
from typing import Any, NamedTuple

import numpy as np
from pyproj import Transformer

from glint.errors import SensorError
from glint.validation import check_number
from glint.sensors.base import (
    GroundPoints,
    TableReader,
    ViewAngles,
    angles_to_position,
    ecef_from_lonlat,
    register_sensor_kind,
)
from glint.sensors.kernels import view_from_camera

__all__ = ["FrameCamera", "CameraImage", "camera_image_geometry", "camera_axes"]

log = logging.getLogger(__name__)


def camera_axes(heading: float, pitch: float, roll: float) -> np.ndarray:
    """Camera axes in the local east-north-up frame.

    Parameters
    ----------
    heading, pitch, roll : float
        Attitude [°] (see the module notes for the conventions).

    Returns
    -------
    numpy.ndarray, shape (3, 3)
        Rows: the image right (camera ``x``), image bottom (``y``) and optical
        axis (``z``), each as (east, north, up) components. A vector ``v``
        in ENU has camera components ``axes @ v``.

    Examples
    --------
    >>> camera_axes(0.0, -90.0, 0.0).round(12) + 0.0
    array([[ 1.,  0.,  0.],
           [ 0., -1.,  0.],
           [ 0.,  0., -1.]])
    """
    psi, p, phi = np.radians([heading, pitch, roll])
    f = np.array([np.sin(psi) * np.cos(p), np.cos(psi) * np.cos(p), np.sin(p)])
    up = np.array([-np.sin(p) * np.sin(psi), -np.sin(p) * np.cos(psi), np.cos(p)])
    r0, d0 = np.cross(f, up), -up
    r = np.cos(phi) * r0 + np.sin(phi) * d0
    d = -np.sin(phi) * r0 + np.cos(phi) * d0
    return np.vstack([r, d, f])


class CameraImage(NamedTuple):
    """Per-pixel geometry of a camera image (see :func:`camera_image_geometry`)."""

    view_zenith: np.ndarray
    view_azimuth: np.ndarray
    lon: np.ndarray
    lat: np.ndarray
    valid: np.ndarray

    @property
    def unseen(self) -> int:
        """Number of pixels whose ray does not reach the water."""
        return int(np.sum(~self.valid))


class FrameCamera:
    """A frame camera above flat water (drone survey camera).

    Parameters
    ----------
    lon, lat : float
        Camera position [°].
    altitude : float
        Height of the camera above the water [m], > 0.
    image_size : (int, int)
        ``(cols, rows)`` of the image [px].
    focal_length : float, optional
        Focal length [mm], > 0; with ``sensor_width`` (and optionally
        ``sensor_height``) [mm].
    sensor_width, sensor_height : float, optional
        Size of the image sensor [mm]; ``sensor_height`` defaults to square
        pixels.
    horizontal_fov, vertical_fov : float, optional
        Full fields of view [°] in (0, 180), instead of focal length and
        sensor size; ``vertical_fov`` defaults to square pixels.
    heading, pitch, roll : float, optional
        Attitude [°]: defaults 0 (north), -90 (straight down), 0.

    Raises
    ------
    SensorError
        Naming the bad value: non-positive altitude or focal length, fields
        of view outside (0, 180), angles out of range, missing or doubled
        intrinsics.

    Examples
    --------
    >>> cam = FrameCamera(lon=10.0, lat=60.0, altitude=100.0, image_size=(400, 300),
    ...                   horizontal_fov=90.0)
    >>> col, row = cam.world_to_image(*cam.image_to_world(12.25, 80.5))
    >>> round(float(col), 6), round(float(row), 6)
    (12.25, 80.5)
    """

    smooth = False
    #: The sensor follows the scene time (see :class:`~glint.sensors.base.Sensor`).
    time_key: str | None = None
    fixed_time: np.datetime64 | None = None
    surface = "plane"

    def __init__(self, *, lon: float, lat: float, altitude: float, image_size: tuple[int, int],
                 focal_length: float | None = None, sensor_width: float | None = None,
                 sensor_height: float | None = None, horizontal_fov: float | None = None,
                 vertical_fov: float | None = None, heading: float = 0.0, pitch: float = -90.0,
                 roll: float = 0.0) -> None:
        self.lon = check_number(lon, "lon", -180.0, 180.0, unit="deg", error=SensorError)
        self.lat = check_number(lat, "lat", -90.0, 90.0, unit="deg", error=SensorError)
        self.altitude = check_number(altitude, "altitude", 0.0, None, low_open=True, unit="m", error=SensorError)
        try:
            cols, rows = image_size
            if int(cols) != cols or int(rows) != rows or cols < 1 or rows < 1:
                raise ValueError
        except (TypeError, ValueError) as exc:
            raise SensorError(f"image_size must be two positive whole numbers (cols, rows); "
                              f"got {image_size!r}") from exc
        self.cols, self.rows = int(cols), int(rows)
        self.heading = check_number(heading, "heading", -360.0, 360.0, unit="deg", error=SensorError) % 360.0
        self.pitch = check_number(pitch, "pitch", -90.0, 90.0, unit="deg", error=SensorError)
        self.roll = check_number(roll, "roll", -180.0, 180.0, unit="deg", error=SensorError)
        if (focal_length is None) == (horizontal_fov is None):
            raise SensorError("give either focal_length with sensor_width [mm], or horizontal_fov "
                              f"[deg]; got focal_length={focal_length!r}, "
                              f"horizontal_fov={horizontal_fov!r}")
        if focal_length is not None:
            f = check_number(focal_length, "focal_length", 0.0, None, low_open=True, unit="mm", error=SensorError)
            if sensor_width is None:
                raise SensorError("focal_length needs sensor_width [mm]")
            w = check_number(sensor_width, "sensor_width", 0.0, None, low_open=True, unit="mm", error=SensorError)
            self.fx = f * self.cols / w
            self.fy = (f * self.rows / check_number(sensor_height, "sensor_height", 0.0, None, low_open=True, unit="mm", error=SensorError)
                       if sensor_height is not None else self.fx)
        else:
            h = check_number(horizontal_fov, "horizontal_fov", 0.0, 180.0, low_open=True, high_open=True, unit="deg", error=SensorError)
            self.fx = (self.cols / 2.0) / np.tan(np.radians(h) / 2.0)
            self.fy = ((self.rows / 2.0) / np.tan(np.radians(
                check_number(vertical_fov, "vertical_fov", 0.0, 180.0, low_open=True, high_open=True, unit="deg", error=SensorError)) / 2.0)
                if vertical_fov is not None else self.fx)
        self.axes = camera_axes(self.heading, self.pitch, self.roll)
        self._xyz = ecef_from_lonlat(self.lon, self.lat, self.altitude)
        self._setup_surface()

    # --- surface model (plane here; the ellipsoid in FixedCamera) ----------
    def _setup_surface(self) -> None:
        aeqd = (f"+proj=aeqd +lat_0={self.lat!r} +lon_0={self.lon!r} +x_0=0 +y_0=0 "
                "+ellps=WGS84 +units=m +no_defs")
        self._fwd = Transformer.from_crs("EPSG:4326", aeqd, always_xy=True)
        self._inv = Transformer.from_crs(aeqd, "EPSG:4326", always_xy=True)

    def _local_vectors(self, lon: Any, lat: Any) -> tuple[np.ndarray, ...]:
        """ENU components (at the camera) of the vectors camera -> ground points."""
        t = self.ground_terms(lon, lat)
        e, n = t["plane_east"], t["plane_north"]
        return e, n, np.full(e.shape, -self.altitude)

    def ground_terms(self, longitude: Any, latitude: Any) -> dict[str, np.ndarray]:
        """Coordinates of ground points on the water plane [m]: east and
        north of the point below the camera (azimuthal equidistant
        projection). Smooth: the engine may interpolate them (see
        :class:`~glint.sensors.base.Sensor`)."""
        e, n = self._fwd.transform(np.asarray(longitude, float), np.asarray(latitude, float))
        return {"plane_east": np.asarray(e, float), "plane_north": np.asarray(n, float)}

    def _image_coords(self, v: tuple[np.ndarray, ...]) -> tuple[np.ndarray, np.ndarray]:
        xc, yc, zc = (self.axes[i, 0] * v[0] + self.axes[i, 1] * v[1] + self.axes[i, 2] * v[2]
                      for i in range(3))
        with np.errstate(divide="ignore", invalid="ignore"):
            col = np.where(zc > 0.0, self.fx * xc / zc + self.cols / 2.0 - 0.5, np.nan)
            row = np.where(zc > 0.0, self.fy * yc / zc + self.rows / 2.0 - 0.5, np.nan)
        return col, row

    def _intersect(self, de: np.ndarray, dn: np.ndarray, du: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """lon, lat of ray/water intersections (NaN where the ray misses)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(du < 0.0, self.altitude / -du, np.nan)
        lon, lat = self._inv.transform(t * de, t * dn)
        return np.asarray(lon, float), np.asarray(lat, float)

    # --- projections -------------------------------------------------------
    @property
    def horizontal_fov(self) -> float:
        """Full horizontal field of view [°]."""
        return float(2.0 * np.degrees(np.arctan(self.cols / 2.0 / self.fx)))

    @property
    def vertical_fov(self) -> float:
        """Full vertical field of view [°]."""
        return float(2.0 * np.degrees(np.arctan(self.rows / 2.0 / self.fy)))

    def pixel_rays(self, col: Any, row: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Unit ENU directions (at the camera) of the rays through image points.

        ``col``, ``row`` are fractional pixel indices (pixel centres whole).
        """
        x = (np.asarray(col, float) + 0.5 - self.cols / 2.0) / self.fx
        y = (np.asarray(row, float) + 0.5 - self.rows / 2.0) / self.fy
        x, y = np.broadcast_arrays(x, y)
        norm = np.sqrt(x * x + y * y + 1.0)
        a = self.axes
        return tuple((x * a[0, k] + y * a[1, k] + a[2, k]) / norm for k in range(3))

    def world_to_image(self, lon: Any, lat: Any) -> tuple[np.ndarray, np.ndarray]:
        """Fractional ``(col, row)`` of ground points on the water.

        Points behind the camera give NaN; points in front but outside the
        image give indices outside ``[-0.5, cols - 0.5]`` / ``[-0.5, rows - 0.5]``.
        """
        return self._image_coords(self._local_vectors(lon, lat))

    def image_to_world(self, col: Any, row: Any) -> tuple[np.ndarray, np.ndarray]:
        """Longitude and latitude [°] where the rays through image points meet
        the water; NaN for rays at or above the horizon."""
        dx, dy, dz = self.pixel_rays(col, row)
        return self._intersect(dx, dy, dz)

    def in_image(self, col: Any, row: Any) -> np.ndarray:
        """True where fractional indices fall on the image."""
        with np.errstate(invalid="ignore"):
            return ((col >= -0.5) & (col <= self.cols - 0.5) & (row >= -0.5)
                    & (row <= self.rows - 0.5))

    def view_angles(self, points: GroundPoints, time: np.datetime64 | None) -> ViewAngles:
        """View angles of points inside the image; NaN elsewhere.

        ``extras``: ``image_col``, ``image_row`` (fractional pixel indices),
        ``slant_range`` [m], ``unseen`` (points outside the image).
        """
        rotation, plane = self._view_frame(points)
        vz, va, d, col, row = view_from_camera(points.lon, points.lat, self._xyz, rotation,
                                               (self.fx, self.fy), (self.cols, self.rows),
                                               **plane)
        return ViewAngles(vz, va, None, {"image_col": col, "image_row": row, "slant_range": d,
                                         "unseen": int(np.count_nonzero(np.isnan(vz)))})

    def _view_frame(self, points: GroundPoints) -> tuple[np.ndarray, dict[str, Any]]:
        """Rotation and vectors of :func:`~glint.sensors.kernels.view_from_camera`:
        over flat water the camera's axes and the points' local east and
        north (interpolated by the engine when it has them)."""
        terms = points.terms if "plane_east" in points.terms else \
            self.ground_terms(points.lon, points.lat)
        return self.axes, {"east": terms["plane_east"], "north": terms["plane_north"],
                           "plane_up": -self.altitude}

    def footprint(self) -> tuple[np.ndarray, np.ndarray]:
        """Ground polygon of the image: lon, lat [°] of the four corner rays.

        Corners in the order top-left, top-right, bottom-right, bottom-left.

        Raises
        ------
        SensorError
            If a corner ray does not reach the water (at or above the
            horizon): the footprint is then unbounded. Use
            :func:`camera_image_geometry` to map the part that is seen.
        """
        c = np.array([-0.5, self.cols - 0.5, self.cols - 0.5, -0.5])
        r = np.array([-0.5, -0.5, self.rows - 0.5, self.rows - 0.5])
        lon, lat = self.image_to_world(c, r)
        if not np.all(np.isfinite(lon)):
            names = np.array(["top-left", "top-right", "bottom-right", "bottom-left"])
            raise SensorError(
                f"image corner ray(s) {', '.join(names[~np.isfinite(lon)])} do not reach the "
                f"water (pitch={self.pitch!r} deg, vertical_fov={self.vertical_fov:.3f} deg): "
                "the footprint is unbounded")
        return lon, lat

    def ground_sampling_distance(self) -> tuple[float, float]:
        """Ground sampling distance at the image centre [m]: the distances on
        the water between the rays through the centre -0.5 and +0.5 pixel,
        along the image columns and along the image rows.

        Raises
        ------
        SensorError
            If the central ray does not reach the water.
        """
        from pyproj import Geod

        c0, r0 = self.cols / 2.0 - 0.5, self.rows / 2.0 - 0.5
        lon, lat = self.image_to_world(np.array([c0 - 0.5, c0 + 0.5, c0, c0]),
                                       np.array([r0, r0, r0 - 0.5, r0 + 0.5]))
        if not np.all(np.isfinite(lon)):
            raise SensorError("the central ray of the image does not reach the water")
        g = Geod(ellps="WGS84")
        _, _, dx = g.inv(lon[0], lat[0], lon[1], lat[1])
        _, _, dy = g.inv(lon[2], lat[2], lon[3], lat[3])
        return float(dx), float(dy)

    def __repr__(self) -> str:
        return (f"{type(self).__name__}(lon={self.lon!r}, lat={self.lat!r}, altitude="
                f"{self.altitude!r}, image_size=({self.cols}, {self.rows}), horizontal_fov="
                f"{self.horizontal_fov:.3f}, heading={self.heading!r}, pitch={self.pitch!r}, "
                f"roll={self.roll!r})")


def camera_image_geometry(camera: FrameCamera, *, step: int = 1,
                          rows: slice | None = None) -> CameraImage:
    """View angles and ground positions of every pixel of a camera image.

    For glint maps in the camera's own image coordinates: feed
    ``view_zenith``/``view_azimuth`` (with the sun angles at ``lon``/``lat``)
    to the glint functions.

    Parameters
    ----------
    camera : FrameCamera or FixedCamera
    step : int, optional
        Take every ``step``-th pixel in both directions (pixels
        ``0, step, 2 step, ...``).
    rows : slice, optional
        Only these output rows (in units of the ``ceil(rows / step)``
        output rows, step 1), for computing a large image strip by strip;
        default all. Bounds are clipped to the image as in Python slicing.

    Returns
    -------
    CameraImage
        ``view_zenith``, ``view_azimuth`` [°], ``lon``, ``lat`` [°] and
        ``valid`` (ray reaches the water), each of shape
        ``(ceil(rows / step), ceil(cols / step))`` (fewer rows with
        ``rows``). Pixels whose ray points at or above the horizon are NaN
        and not valid; their number is ``result.unseen`` (logged for a
        whole image).

    Raises
    ------
    SensorError
        If ``step`` is not a positive whole number, or ``rows`` is not a
        slice with step 1.

    Examples
    --------
    >>> cam = FrameCamera(lon=10.0, lat=60.0, altitude=50.0, image_size=(40, 30),
    ...                   horizontal_fov=60.0, pitch=-5.0)
    >>> geo = camera_image_geometry(cam, step=2)
    >>> geo.view_zenith.shape, 0 < geo.unseen < geo.valid.size
    ((15, 20), True)
    >>> camera_image_geometry(cam, step=2, rows=slice(4, 8)).lon.shape
    (4, 20)
    """
    if isinstance(step, bool) or not isinstance(step, (int, np.integer)) or step < 1:
        raise SensorError(f"step must be a positive whole number; got {step!r}")
    if rows is not None and (not isinstance(rows, slice) or rows.step not in (None, 1)):
        raise SensorError(f"rows must be a slice of output rows with step 1 (or None); "
                          f"got {rows!r}")
    image_rows = np.arange(0, camera.rows, step, dtype=float)
    if rows is not None:
        try:
            image_rows = image_rows[rows]
        except (TypeError, IndexError) as exc:
            raise SensorError(f"rows must be a slice of whole numbers; got {rows!r}") from exc
    cols = np.arange(0, camera.cols, step, dtype=float)
    rr, cc = np.meshgrid(image_rows, cols, indexing="ij")
    lon, lat = camera.image_to_world(cc, rr)
    vz, va, _ = angles_to_position(lon, lat, 0.0, *camera._xyz)
    valid = np.isfinite(lon) & np.isfinite(lat) & (vz < 90.0)
    result = CameraImage(np.where(valid, vz, np.nan), np.where(valid, va, np.nan),
                         np.where(valid, lon, np.nan), np.where(valid, lat, np.nan), valid)
    if result.unseen and rows is None:
        log.info("%d of %d image pixels look at or above the horizon and are left empty",
                 result.unseen, valid.size)
    return result


#: Scene-file keys shared by the two camera kinds.
CAMERA_KEYS = ("lon", "lat", "altitude", "image_size", "focal_length", "sensor_width",
               "sensor_height", "horizontal_fov", "vertical_fov", "heading", "pitch", "roll")


def read_camera_table(r: TableReader, *, attitude_required: bool) -> dict | None:
    """Keyword arguments of a camera from its scene-file table."""
    kw: dict[str, Any] = {}
    kw["altitude"] = r.number("altitude", low=0.0, low_open=True, unit="m")
    if r.has("lon") or r.has("lat"):
        kw["lon"] = r.number("lon", low=-180.0, high=180.0, unit="deg")
        kw["lat"] = r.number("lat", low=-90.0, high=90.0, unit="deg")
    else:
        centre = r.grid_centre("lon")
        kw["lon"], kw["lat"] = centre if centre else (None, None)
    size = r.numbers("image_size", 2, what="[cols, rows] in pixels")
    if size is not None and not all(v >= 1 and v == int(v) for v in size):
        r.problem("image_size", f"must be two positive whole numbers [cols, rows]; got {size!r}")
        size = None
    kw["image_size"] = None if size is None else (int(size[0]), int(size[1]))
    by_lens = r.has("focal_length") or r.has("sensor_width") or r.has("sensor_height")
    by_fov = r.has("horizontal_fov") or r.has("vertical_fov")
    if by_lens and by_fov:
        r.problem("focal_length", "give either focal_length + sensor_width [mm] or "
                  "horizontal_fov [deg], not both")
        return None
    if by_fov:
        kw["horizontal_fov"] = r.number("horizontal_fov", low=0.0, high=180.0, low_open=True,
                                        high_open=True, unit="deg")
        kw["vertical_fov"] = r.number("vertical_fov", default=None, low=0.0, high=180.0,
                                      low_open=True, high_open=True, unit="deg")
    elif by_lens:
        kw["focal_length"] = r.number("focal_length", low=0.0, low_open=True, unit="mm")
        kw["sensor_width"] = r.number("sensor_width", low=0.0, low_open=True, unit="mm")
        kw["sensor_height"] = r.number("sensor_height", default=None, low=0.0, low_open=True,
                                       unit="mm")
    else:
        r.problem("focal_length", "required: give focal_length + sensor_width [mm] or "
                  "horizontal_fov [deg]")
        return None
    dflt: dict[str, Any] = {} if attitude_required else {"heading": 0.0, "pitch": -90.0}
    kw["heading"] = r.number("heading", low=0.0, high=360.0, high_open=True, unit="deg",
                             **({"default": dflt["heading"]} if dflt else {}))
    kw["pitch"] = r.number("pitch", low=-90.0, high=90.0, unit="deg",
                           **({"default": dflt["pitch"]} if dflt else {}))
    kw["roll"] = r.number("roll", default=0.0, low=-180.0, high=180.0, unit="deg")
    if r.problems:
        return None
    if any(kw[k] is None for k in ("altitude", "lon", "lat", "image_size", "heading", "pitch")):
        return None
    return {k: v for k, v in kw.items() if v is not None}


@register_sensor_kind("frame-camera", keys=CAMERA_KEYS,
                      summary="drone frame camera over locally flat water")
def _build(r: TableReader) -> FrameCamera | None:
    kw = read_camera_table(r, attitude_required=False)
    return None if kw is None else FrameCamera(**kw)
