"""Position of the sun seen from points on or above the Earth.

The solar position algorithm (SPA) of Reda and Andreas (2004), vectorised
over times and observer positions. The work is split in two:

* :func:`time_terms` computes everything that depends on the time alone
  (Julian dates, the Earth's heliocentric position, nutation, obliquity,
  aberration, apparent sidereal time, the sun's geocentric right ascension
  and declination, the equation of time, the Earth-sun distance) once per
  distinct time;
* the observer part (hour angle, parallax, topocentric coordinates,
  refraction, zenith and azimuth) runs per point, in a fused compiled loop
  (numba) or, for reference, in plain numpy.

The compiled loop calls no library function and has no branch per point,
so the compiler vectorises it: the sines and cosines of the latitude and of
the hour angle come from :func:`glint.physics.trig.sincosd` and the
elevation and azimuth from :func:`glint.physics.trig.atan2` (both within
1e-15 rad of the math library), the other sines and cosines from algebra
(square roots of ``1 - s**2`` where that is well conditioned), and the small
angles (the parallax shifts below 1e-4 rad, the refraction's offset below
0.042 rad) from short series whose truncation is below 1e-16. Choices such
as the SPA's refraction switch are selects. It agrees with the numpy path
to about 1e-12° (tested to 1e-9°) and with pvlib's implementation of the
same algorithm to about 6e-8° (tested in ``tests/test_sun.py``), far below
the SPA's stated uncertainty of ±0.0003°.

Times are UTC instants. Never look at the sun or at its reflection on water.
"""

from __future__ import annotations

from typing import Any, Literal, NamedTuple

import numba
import numpy as np
from numba import njit, prange
from numpy.typing import ArrayLike, NDArray

from glint.validation import (
    ASTRONOMICAL_UNIT,
    SOLAR_RADIUS,
    as_float_array,
    broadcast_inputs,
    check_range,
)
from glint.errors import InputError
from glint.physics.threads import threads_for
from glint.physics.trig import atan2, sincosd
from glint.physics.spa_time import (
    DELTA_T_YEARS,
    MAX_YEAR,
    MIN_YEAR,
    TimeTerms,
    _check_years,
    _unique_times,
    delta_t,
    time_terms,
)
from glint.times import to_utc_datetime64

__all__ = [
    "SolarPosition",
    "TimeTerms",
    "solar_position",
    "time_terms",
    "delta_t",
    "earth_sun_distance",
    "sun_angular_radius",
    "sun_solid_angle",
    "MIN_YEAR",
    "MAX_YEAR",
    "ATMOSPHERIC_REFRACTION_AT_HORIZON",
    "SUN_RADIUS_DEG_SPA",
    "DELTA_T_YEARS",
]
#: Atmospheric refraction at the horizon [°] used by the SPA's refraction
#: switch (Reda and Andreas 2004, section 3.14 with eq. 42; 0.5667° is the SPA
#: default).
ATMOSPHERIC_REFRACTION_AT_HORIZON = 0.5667
#: Sun's apparent radius [°] used by the SPA's refraction switch (Reda and
#: Andreas 2004, section 3.14).
SUN_RADIUS_DEG_SPA = 0.26667

#: Earth's equatorial radius [m] and polar/equatorial axis ratio used by the
#: SPA's parallax correction (Reda and Andreas 2004, eqs. 34-36).
_SPA_EARTH_RADIUS = 6378140.0
_SPA_AXIS_RATIO = 0.99664719


class SolarPosition(NamedTuple):
    """Sun position seen by an observer; every field is a numpy array.

    Attributes
    ----------
    zenith : ndarray
        Topocentric zenith angle [°], refraction included unless switched off.
    azimuth : ndarray
        Topocentric azimuth [°], from the observer to the sun, clockwise from
        true north, in [0, 360).
    elevation : ndarray
        Topocentric elevation angle [°] above the horizon, refraction
        included unless switched off (``90 - zenith``).
    declination : ndarray
        Topocentric declination [°].
    right_ascension : ndarray
        Topocentric right ascension [°], in [0, 360).
    hour_angle : ndarray
        Topocentric local hour angle [°], in [-180, 180); negative before
        and positive after the sun's transit.
    equation_of_time : ndarray
        Equation of time [min]: apparent minus mean solar time.
    earth_sun_distance : ndarray
        Earth-sun distance [AU].

    The last two depend on the time only: for a single time they are
    read-only broadcasts of one value (copy them before writing into them).
    """

    zenith: np.ndarray
    azimuth: np.ndarray
    elevation: np.ndarray
    declination: np.ndarray
    right_ascension: np.ndarray
    hour_angle: np.ndarray
    equation_of_time: np.ndarray
    earth_sun_distance: np.ndarray

# ---------------------------------------------------------------------------
# Observer terms (Reda and Andreas 2004, sections 3.9-3.15)
# ---------------------------------------------------------------------------

_REFRACTION_LIMIT = -(SUN_RADIUS_DEG_SPA + ATMOSPHERIC_REFRACTION_AT_HORIZON)


def _observer_numpy(lat: NDArray[np.float64], lon: NDArray[np.float64],
                    elev: NDArray[np.float64], press: NDArray[np.float64],
                    temp: NDArray[np.float64], idx: NDArray[np.intp],
                    nu: NDArray[np.float64], alpha: NDArray[np.float64],
                    delta: NDArray[np.float64], xi: NDArray[np.float64],
                    refraction: bool) -> tuple[NDArray[np.float64], ...]:
    """Reference numpy path, written equation by equation."""
    rad = np.radians
    with np.errstate(invalid="ignore", divide="ignore"):
        phi = rad(lat)
        h = (nu[idx] + lon - alpha[idx]) % 360.0  # eq. 32
        h_r, d_r, xi_r = rad(h), rad(delta[idx]), rad(xi[idx])
        u = np.arctan(_SPA_AXIS_RATIO * np.tan(phi))  # eq. 34
        x = np.cos(u) + elev / _SPA_EARTH_RADIUS * np.cos(phi)  # eq. 35
        y = _SPA_AXIS_RATIO * np.sin(u) + elev / _SPA_EARTH_RADIUS * np.sin(phi)  # eq. 36
        den = np.cos(d_r) - x * np.sin(xi_r) * np.cos(h_r)
        dalpha = np.arctan2(-x * np.sin(xi_r) * np.sin(h_r), den)  # eq. 37
        alpha_p = (alpha[idx] + np.degrees(dalpha)) % 360.0  # eq. 38
        delta_p = np.arctan2((np.sin(d_r) - y * np.sin(xi_r)) * np.cos(dalpha), den)  # eq. 39
        h_p = h_r - dalpha  # eq. 40
        e0 = np.degrees(np.arcsin(np.clip(
            np.sin(phi) * np.sin(delta_p)
            + np.cos(phi) * np.cos(delta_p) * np.cos(h_p), -1.0, 1.0)))  # eq. 41
        de = (press / 1010.0) * (283.0 / (273.0 + temp)) * 1.02 / (
            60.0 * np.tan(rad(e0 + 10.3 / (e0 + 5.11))))  # eq. 42
        if refraction:
            e = np.where(e0 >= _REFRACTION_LIMIT, e0 + de, e0)  # eq. 43
        else:
            e = e0
        gamma = np.degrees(np.arctan2(
            np.sin(h_p),
            np.cos(h_p) * np.sin(phi) - np.tan(delta_p) * np.cos(phi)))  # eq. 45
        azimuth = (gamma + 180.0) % 360.0  # eq. 46
        azimuth = np.where(azimuth >= 360.0, azimuth - 360.0, azimuth)
        hour = (np.degrees(h_p) + 180.0) % 360.0 - 180.0
    return (90.0 - e, azimuth, e, np.degrees(delta_p), alpha_p, hour)


#: Points per chunk of the compiled loop: the chunk buffers (9 arrays of
#: 1024 doubles, 72 kB) stay in the level-2 cache.
_CHUNK = 1024


# inline="always": the chunk is compiled into the body of the parallel loop
# of _observer_kernel, whose arrays numba declares free of overlaps; compiled
# on its own, the loops over 15 arrays are not vectorised (the compiler
# cannot rule out that an output overlaps an input). The body is therefore
# compiled with the kernel's options.
@njit(fastmath={"afn"}, error_model="numpy", inline="always")
def _observer_chunk(lo, m, lat, lon, elev, press, temp, idx, step, h0, alpha,  # type: ignore[no-untyped-def]
                    delta, sin_d, cos_d, sin_xi, refraction, zen, azi, elv, dec, ra,
                    ha):  # pragma: no cover
    """Points ``lo .. lo + m - 1``: the same maths as :func:`_observer_numpy`
    in straight-line loops without a branch or a library call per point, so
    that the compiler vectorises them.

    The inputs are first gathered into contiguous chunk buffers (an input
    shared by all points has step 0, the time terms are looked up through
    ``idx``). The sines and cosines of the latitude and of the hour angle
    come from :func:`glint.physics.trig.sincosd`, the elevation and the
    azimuth from :func:`glint.physics.trig.atan2`, the other sines and
    cosines from algebra, and the small angles (parallax shifts, the
    refraction offset, the shift of the declination) from short series;
    every choice (the clip of ``sin e0``, the SPA's refraction switch, the
    wrap of the azimuth) is a select.
    """
    d2r = np.pi / 180.0
    r2d = 180.0 / np.pi
    b2 = _SPA_AXIS_RATIO * _SPA_AXIS_RATIO
    limit = _REFRACTION_LIMIT
    # step[j] is 1 for a per-point input and 0 for one value shared by all.
    s0, s1, s2, s3, s4, s5 = step[0], step[1], step[2], step[3], step[4], step[5]
    g_lat = np.empty(m)
    g_h = np.empty(m)
    g_hr = np.empty(m)
    g_refr = np.empty(m)
    g_alpha = np.empty(m)
    g_delta = np.empty(m)
    g_sd = np.empty(m)
    g_cd = np.empty(m)
    g_sx = np.empty(m)
    for j in range(m):
        i = lo + j
        k = idx[i * s5]
        g_lat[j] = lat[i * s0]
        g_h[j] = h0[k] + lon[i * s1]  # eq. 32 (h0 = nu - alpha)
        g_hr[j] = elev[i * s2] * (1.0 / _SPA_EARTH_RADIUS)
        # Pressure and temperature factor of eq. 42 (1.02/60 deg per unit
        # cot): P/1010 * 283/(273 + T) * 1.02/60.
        g_refr[j] = press[i * s3] * (283.0 * 1.02 / 60.0) / (1010.0 * (273.0 + temp[i * s4]))
        g_alpha[j] = alpha[k]
        g_delta[j] = delta[k]
        g_sd[j] = sin_d[k]
        g_cd[j] = cos_d[k]
        g_sx[j] = sin_xi[k]
    for j in range(m):
        i = lo + j
        sphi, cphi = sincosd(g_lat[j])
        h_deg = g_h[j]
        h_deg = h_deg - 360.0 * np.floor((h_deg + 180.0) * (1.0 / 360.0))  # [-180, 180)
        sh, ch = sincosd(h_deg)
        # tan u = b tan(phi), |u| <= 90 deg  (eqs. 34-36)
        q = 1.0 / np.sqrt(cphi * cphi + b2 * sphi * sphi)
        hr = g_hr[j]
        x = cphi * q + hr * cphi
        y = b2 * sphi * q + hr * sphi
        sx = g_sx[j]
        num = -x * sx * sh
        den = g_cd[j] - x * sx * ch
        # eq. 37: den >= cos(delta) - sin(xi) x > 0.9 and |num/den| < 1e-4,
        # so atan2(num, den) == atan(z) == z - z**3/3 + z**5/5 to 1e-24 rad.
        z = num / den
        z2 = z * z
        dalpha = z * (1.0 - z2 * (1.0 / 3.0 - z2 * 0.2)) * r2d
        cda = 1.0 - z2 * (0.5 - z2 * 0.375)  # cos(atan z) = (1 + z**2)**-0.5
        sda = z * cda
        n2 = (g_sd[j] - y * sx) * cda  # eq. 39
        inv_r2 = 1.0 / np.sqrt(n2 * n2 + den * den)
        sdp = n2 * inv_r2  # sin(delta')
        cdp = den * inv_r2  # cos(delta'); tan(delta') = n2/den
        chp = ch * cda + sh * sda  # cos(H - dalpha)
        shp = sh * cda - ch * sda  # sin(H - dalpha)
        s = min(max(sphi * sdp + cphi * cdp * chp, -1.0), 1.0)
        ce = np.sqrt((1.0 - s) * (1.0 + s))  # cos e0 >= 0
        e0 = atan2(s, ce) * r2d  # eq. 41
        # eqs. 42-43: 1/tan(e0 + c) from sin/cos e0 (known) and short series
        # of the small c = 10.3/(e0 + 5.11) deg <= 0.042 rad (errors < 1e-16)
        # where the switch applies; elsewhere the value is not used.
        c = 10.3 / (e0 + 5.11) * d2r
        c2 = c * c
        sc = c * (1.0 - c2 * (1.0 / 6.0) * (1.0 - c2 * (1.0 / 20.0) * (1.0 - c2 * (1.0 / 42.0))))
        cc = 1.0 - c2 * 0.5 * (1.0 - c2 * (1.0 / 12.0) * (
            1.0 - c2 * (1.0 / 30.0) * (1.0 - c2 * (1.0 / 56.0))))
        cot = (ce * cc - s * sc) / (s * cc + ce * sc)
        e = e0 + g_refr[j] * cot if refraction & (e0 >= limit) else e0
        zen[i] = 90.0 - e
        elv[i] = e
        az = atan2(shp, chp * sphi - (n2 / den) * cphi) * r2d + 180.0  # eqs. 45-46
        azi[i] = az - 360.0 if az >= 360.0 else az
        # delta' - delta is below 1e-3 rad: asin(w) == w + w**3/6 to 1e-17.
        w = sdp * g_cd[j] - cdp * g_sd[j]
        dec[i] = g_delta[j] + w * (1.0 + w * w * (1.0 / 6.0)) * r2d
        a = g_alpha[j] + dalpha
        ra[i] = a - 360.0 * np.floor(a * (1.0 / 360.0))
        hp = h_deg - dalpha + 180.0  # eq. 40
        ha[i] = hp - 360.0 * np.floor(hp * (1.0 / 360.0)) - 180.0


@njit(parallel=True, fastmath={"afn"}, error_model="numpy", cache=True, nogil=True)
def _observer_kernel(lat, lon, elev, press, temp, idx, step, h0, alpha, delta,  # type: ignore[no-untyped-def]
                     sin_d, cos_d, sin_xi, refraction, zen, azi, elv, dec, ra,
                     ha):  # pragma: no cover
    """All points, in chunks of :data:`_CHUNK` shared out among the threads
    (see :func:`_observer_chunk`). ``fastmath={"afn"}`` only allows
    approximate library functions (none are left in the loop); NaN, signed
    zeros and the rounding of every operation are kept."""
    n = zen.shape[0]
    for c in prange((n + _CHUNK - 1) // _CHUNK):
        lo = c * _CHUNK
        _observer_chunk(lo, min(_CHUNK, n - lo), lat, lon, elev, press, temp, idx, step,
                        h0, alpha, delta, sin_d, cos_d, sin_xi, refraction, zen, azi,
                        elv, dec, ra, ha)


def _observer_numba(lat: NDArray[np.float64], lon: NDArray[np.float64],
                    elev: NDArray[np.float64], press: NDArray[np.float64],
                    temp: NDArray[np.float64], idx: NDArray[np.intp],
                    nu: NDArray[np.float64], alpha: NDArray[np.float64],
                    delta: NDArray[np.float64], xi: NDArray[np.float64],
                    refraction: bool) -> tuple[NDArray[np.float64], ...]:
    n = max(np.size(v) for v in (lat, lon, elev, press, temp, idx))
    step = np.array([int(np.size(v) > 1) for v in (lat, lon, elev, press, temp, idx)])
    outs = tuple(np.empty(n) for _ in range(6))
    d_r, xi_r = np.radians(delta), np.radians(xi)
    # Chunks handed out dynamically keep both cores busy when one of them is
    # also serving another process (static halves wait for the slower one).
    chunks = -(-n // _CHUNK)
    with threads_for(n), numba.parallel_chunksize(max(4, chunks // (16 * numba.get_num_threads()))):
        _observer_kernel(lat, lon, elev, press, temp, idx, step, nu - alpha, alpha,
                         delta, np.sin(d_r), np.cos(d_r), np.sin(xi_r),
                         bool(refraction), *outs)
    return outs


def _per_point(arrays: dict[str, np.ndarray], shape: tuple[int, ...], name: str,
               dtype: Any = np.float64) -> np.ndarray:
    """1-D contiguous values of one input: all points, or just one value when
    the input is a single value shared by every point."""
    a = np.asarray(arrays[name])
    if a.size == 1:
        return np.ascontiguousarray(a, dtype=dtype).reshape(1)
    return np.ascontiguousarray(np.broadcast_to(a, shape), dtype=dtype).ravel()


def _check_limits(value: np.ndarray, name: str, low: float | None,
                  high: float | None, **kw: Any) -> None:
    """check_range, after a cheap min/max test so large valid arrays pass
    quickly."""
    if value.size > 1 and np.isfinite(value).any():
        lo, hi = np.nanmin(value), np.nanmax(value)
        if (low is None or lo > low) and (high is None or hi < high):
            return
    check_range(value, name, low, high, **kw)


def _solar_position(time: Any, longitude: ArrayLike, latitude: ArrayLike, *,
                    elevation: ArrayLike = 0.0, pressure: ArrayLike = 1013.25,
                    temperature: ArrayLike = 12.0, delta_t: ArrayLike | None = None,
                    refraction: bool = True,
                    backend: Literal["numba", "numpy"] = "numba") -> SolarPosition:
    if backend not in ("numba", "numpy"):
        raise InputError(f"backend must be one of 'numba', 'numpy'; got {backend!r}")
    if not isinstance(refraction, (bool, np.bool_)):
        raise InputError(f"refraction must be True or False; got {refraction!r}")
    t = to_utc_datetime64(time)
    lat = as_float_array(latitude, "latitude")
    lon = as_float_array(longitude, "longitude")
    elev = as_float_array(elevation, "elevation")
    press = as_float_array(pressure, "pressure")
    temp = as_float_array(temperature, "temperature")
    _check_limits(lat, "latitude", -90.0, 90.0, unit="°")
    _check_limits(lon, "longitude", -180.0, 360.0, unit="°")
    _check_limits(elev, "elevation", -12_000.0, 1e8, unit="m")
    _check_limits(press, "pressure", 0.0, None, low_inclusive=False, unit="hPa")
    _check_limits(temp, "temperature", -273.15, None, unit="°C")
    _check_years(t)
    terms, inverse = _unique_times(t, delta_t)
    # broadcast_inputs checks the shapes (and names them); the arrays that
    # are a single value are then passed as one value, not copied per point.
    inputs = dict(time=inverse, latitude=lat, longitude=lon, elevation=elev,
                  pressure=press, temperature=temp)
    shape = broadcast_inputs(**inputs)["latitude"].shape
    idx = _per_point(inputs, shape, "time", np.intp)
    args = [_per_point(inputs, shape, k) for k in
            ("latitude", "longitude", "elevation", "pressure", "temperature")]
    if backend == "numpy":  # the reference path takes full arrays
        args = [np.broadcast_to(a, (int(np.prod(shape)),)) for a in args]
        idx = np.broadcast_to(idx, (int(np.prod(shape)),))
    observer = _observer_numba if backend == "numba" else _observer_numpy
    zen, azi, elv, dec, ra, ha = observer(
        args[0], args[1], args[2], args[3], args[4], idx, terms.apparent_sidereal_time,
        terms.right_ascension, terms.declination, terms.horizontal_parallax, bool(refraction))
    if terms.jd.size == 1:
        # One time: the same value at every point, as read-only broadcasts.
        eot = np.broadcast_to(terms.equation_of_time[0], shape)
        dist = np.broadcast_to(terms.earth_sun_distance[0], shape)
    else:
        full_idx = np.broadcast_to(inverse, shape)
        eot = terms.equation_of_time[full_idx]
        dist = terms.earth_sun_distance[full_idx]
    return SolarPosition(*(np.asarray(a).reshape(shape)
                           for a in (zen, azi, elv, dec, ra, ha, eot, dist)))


def solar_position(
    time: Any,
    longitude: ArrayLike,
    latitude: ArrayLike,
    *,
    elevation: ArrayLike = 0.0,
    pressure: ArrayLike = 1013.25,
    temperature: ArrayLike = 12.0,
    delta_t: ArrayLike | None = None,
    refraction: bool = True,
) -> SolarPosition:
    """Topocentric position of the sun by the NREL SPA.

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants (see :func:`to_utc_datetime64`); broadcasts against the
        other inputs.
    longitude : array_like
        Longitude [°], positive east, in [-180, 360] (values above 180 are
        read as east longitudes, so 270 == -90).
    latitude : array_like
        Geodetic latitude [°], in [-90, 90].
    elevation : array_like, optional
        Observer height [m] above the ellipsoid, in [-12000, 1e8]. Default 0.
    pressure : array_like, optional
        Air pressure at the observer [hPa], > 0. Default 1013.25 (standard
        atmosphere at sea level).
    temperature : array_like, optional
        Air temperature at the observer [°C], >= -273.15. Default 12 °C, the
        default of common SPA implementations such as pvlib (the standard
        atmosphere has 15 °C at sea level); it only enters the refraction.
    delta_t : float or array_like, optional
        TT - UT1 [s], broadcastable to ``time``. ``None`` (default) takes the
        Espenak-Meeus polynomials of :func:`delta_t`.
    refraction : bool, optional
        Correct the elevation for atmospheric refraction (SPA eq. 42).
        Default True.

    Returns
    -------
    SolarPosition
        Named tuple of arrays with the common broadcast shape: ``zenith``,
        ``azimuth`` (clockwise from true north, [0, 360)), ``elevation``
        (refraction included unless switched off) [°], topocentric
        ``declination``, ``right_ascension`` and ``hour_angle`` [°],
        ``equation_of_time`` [min], ``earth_sun_distance`` [AU].

    Raises
    ------
    InputError
        For naive or unreadable times, years outside -2000..6000, latitude,
        longitude, elevation, pressure or temperature out of range, shapes
        that do not broadcast, or a non-boolean ``refraction``.

    Warns
    -----
    ValidityWarning
        When ``delta_t`` is None and a year lies outside -1999..3000, where
        the Delta T expressions are a rough extrapolation.

    Notes
    -----
    Time-only terms (eqs. 4-33) are evaluated once per distinct time; the
    observer terms (eqs. 34-46) per point in a compiled loop. The hour angle
    is ``H = nu + longitude - alpha`` (eq. 32); parallax gives the
    topocentric ``alpha'``, ``delta'`` and ``H'`` (eqs. 37-40); the
    elevation ``e0 = asin(sin(phi) sin(delta') + cos(phi) cos(delta')
    cos(H'))`` (eq. 41) gets the refraction

    ``de = P/1010 * 283/(273 + T) * 1.02 / (60 tan(e0 + 10.3/(e0 + 5.11)))``

    (eq. 42, degrees) when ``e0 >= -(0.26667 + 0.5667)``, i.e. while any part
    of the refracted disc can be above the horizon (the SPA's own switch);
    the azimuth is ``atan2(sin H', cos H' sin(phi) - tan(delta') cos(phi))
    + 180`` (eqs. 45-46). NaN latitude or longitude and NaT times give NaN.
    The stated accuracy is ±0.0003° for years -2000 to 6000 given the right
    Delta T.

    References
    ----------
    Reda, I. and Andreas, A. (2004) Solar position algorithm for solar
    radiation applications. Solar Energy 76(5), 577-589,
    doi:10.1016/j.solener.2003.12.003. Revised as NREL/TP-560-34302 (2008).

    Examples
    --------
    The worked example of Reda and Andreas (2004):

    >>> import numpy as np
    >>> sp = solar_position(np.datetime64("2003-10-17T19:30:30"),
    ...                     longitude=-105.1786, latitude=39.742476,
    ...                     elevation=1830.14, pressure=820.0,
    ...                     temperature=11.0, delta_t=67.0)
    >>> round(float(sp.zenith), 5), round(float(sp.azimuth), 5)
    (50.11162, 194.34024)
    """
    return _solar_position(time, longitude, latitude, elevation=elevation,
                           pressure=pressure, temperature=temperature,
                           delta_t=delta_t, refraction=refraction,
                           backend="numba")


# ---------------------------------------------------------------------------
# Earth-sun distance and the sun's disc
# ---------------------------------------------------------------------------


def earth_sun_distance(time: Any) -> np.ndarray:
    """Earth-sun distance [AU] (SPA radius vector R, eqs. 9-11).

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants.

    Returns
    -------
    ndarray
        Distance [AU], shaped like ``time``.

    Raises
    ------
    InputError
        For unreadable or naive times and years outside -2000..6000.

    Notes
    -----
    ``R = sum_i R_i JME**i / 1e8`` with ``R_i = sum_j A cos(B + C JME)``
    (Reda and Andreas 2004, Table A4.2). Delta T from :func:`delta_t`.

    References
    ----------
    Reda, I. and Andreas, A. (2004) Solar Energy 76(5), 577-589,
    doi:10.1016/j.solener.2003.12.003.

    Examples
    --------
    >>> import numpy as np
    >>> bool(earth_sun_distance(np.datetime64("2024-01-03")) < 0.984)
    True
    """
    return time_terms(time).earth_sun_distance


def sun_angular_radius(distance: ArrayLike) -> NDArray[np.float64]:
    """Apparent angular radius of the sun's disc [°].

    Parameters
    ----------
    distance : array_like
        Earth-sun distance [AU], > 0.

    Returns
    -------
    ndarray
        Angular radius [°].

    Raises
    ------
    InputError
        For distances <= 0.

    Notes
    -----
    ``asin(R_sun / (d * au))`` with the IAU 2015 nominal solar radius
    ``R_sun = 695 700 km`` and the astronomical unit 149 597 870 700 m;
    about 0.2665° (959.2 arcsec) at 1 AU.

    References
    ----------
    Prsa, A. et al. (2016) Nominal values for selected solar and planetary
    quantities: IAU 2015 Resolution B3. Astronomical Journal 152(2), 41,
    doi:10.3847/0004-6256/152/2/41.

    Examples
    --------
    >>> round(float(sun_angular_radius(1.0)), 4)
    0.2665
    """
    d = as_float_array(distance, "distance")
    check_range(d, "distance", 0.0, None, low_inclusive=False, unit="AU")
    with np.errstate(invalid="ignore"):
        return np.degrees(np.arcsin(np.clip(
            SOLAR_RADIUS / (d * ASTRONOMICAL_UNIT), -1.0, 1.0)))


def sun_solid_angle(distance: ArrayLike) -> NDArray[np.float64]:
    """Solid angle of the sun's disc [sr].

    Parameters
    ----------
    distance : array_like
        Earth-sun distance [AU], > 0.

    Returns
    -------
    ndarray
        Solid angle [sr].

    Raises
    ------
    InputError
        For distances <= 0.

    Notes
    -----
    A spherical cap of angular radius ``r`` (:func:`sun_angular_radius`)
    subtends ``2 pi (1 - cos r)``, about 6.8e-5 sr at 1 AU; it varies as
    ``1/d**2``: the distance swings about ±1.7 % over the year, the solid
    angle about ±3.4 %.

    References
    ----------
    Prsa, A. et al. (2016) Astronomical Journal 152(2), 41,
    doi:10.3847/0004-6256/152/2/41.

    Examples
    --------
    >>> print(f"{float(sun_solid_angle(1.0)):.3e}")
    6.794e-05
    """
    r = np.radians(sun_angular_radius(distance))
    # 1 - cos r written as 2 sin^2(r/2) to keep its digits.
    return 2.0 * np.pi * 2.0 * np.sin(r / 2.0) ** 2
