"""Time-only terms of the solar position algorithm (SPA).

Everything of Reda and Andreas (2004) that depends on the time alone (Julian
dates, the Earth's heliocentric position, nutation, obliquity, aberration,
apparent sidereal time, the sun's geocentric right ascension and declination,
the equation of time, the Earth-sun distance) and the Delta T estimate of
Espenak and Meeus (2006); computed once per distinct time. The per-point
observer part and :func:`glint.physics.sun.solar_position` are in
:mod:`glint.physics.sun`, which re-exports :func:`time_terms`,
:func:`delta_t` and :class:`TimeTerms`.
"""

from __future__ import annotations

import warnings
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from glint.errors import InputError, ValidityWarning
from glint.validation import as_float_array
from glint.physics.spa_tables import B_TERMS, L_TERMS, NUTATION_TERMS, R_TERMS
from glint.times import to_utc_datetime64

__all__ = [
    "TimeTerms",
    "time_terms",
    "delta_t",
    "MIN_YEAR",
    "MAX_YEAR",
    "DELTA_T_YEARS",
]

#: First and last year for which the SPA states its accuracy (Reda and
#: Andreas 2004, abstract: -2000 to 6000).
MIN_YEAR = -2000
MAX_YEAR = 6000

#: Years covered by the Delta T expressions of Espenak and Meeus (2006).
DELTA_T_YEARS = (-1999, 3000)

_J2000_NS = np.datetime64("2000-01-01T12:00:00", "ns").astype(np.int64)
_NS_PER_DAY = 86_400_000_000_000
_J2000_JD = 2451545.0

# Periodic terms: Reda and Andreas (2004), Tables A4.2 and A4.3 (glint/physics/spa_tables.py).
_L_ARRAYS = tuple(np.array(t, dtype=np.float64) for t in L_TERMS)
_B_ARRAYS = tuple(np.array(t, dtype=np.float64) for t in B_TERMS)
_R_ARRAYS = tuple(np.array(t, dtype=np.float64) for t in R_TERMS)
_NUT = np.array(NUTATION_TERMS, dtype=np.float64)
_NUT_Y = _NUT[:, :5]
_NUT_ABCD = _NUT[:, 5:]


class TimeTerms(NamedTuple):
    """Time-only quantities of the SPA (arrays shaped like the times).

    Angles in degrees. ``jd``/``jde`` are Julian (ephemeris) days,
    ``jce``/``jme`` Julian ephemeris centuries/millennia since J2000.0.
    """

    jd: np.ndarray
    jde: np.ndarray
    jce: np.ndarray
    jme: np.ndarray
    heliocentric_longitude: np.ndarray  # L
    heliocentric_latitude: np.ndarray  # B
    earth_sun_distance: np.ndarray  # R [AU]
    geocentric_longitude: np.ndarray  # Theta
    geocentric_latitude: np.ndarray  # beta
    nutation_longitude: np.ndarray  # delta psi
    nutation_obliquity: np.ndarray  # delta epsilon
    true_obliquity: np.ndarray  # epsilon
    aberration: np.ndarray  # delta tau
    apparent_sun_longitude: np.ndarray  # lambda
    apparent_sidereal_time: np.ndarray  # nu
    right_ascension: np.ndarray  # alpha (geocentric)
    declination: np.ndarray  # delta (geocentric)
    equation_of_time: np.ndarray  # E [min]
    horizontal_parallax: np.ndarray  # xi
    delta_t: np.ndarray  # [s]


# ---------------------------------------------------------------------------
# Times
# ---------------------------------------------------------------------------

def _days_since_j2000(t: np.ndarray) -> np.ndarray:
    """Days since J2000.0 (2000-01-01T12:00 UT) as float; NaT -> NaN."""
    unit = np.datetime_data(t.dtype)[0]
    if unit != "ns":
        t = t.astype("datetime64[us]")
        v = t.astype(np.int64)
        nat = v == np.iinfo(np.int64).min
        ref = _J2000_NS // 1000
        per_day = _NS_PER_DAY // 1000
    else:
        v = t.astype(np.int64)
        nat = v == np.iinfo(np.int64).min
        ref = _J2000_NS
        per_day = _NS_PER_DAY
    d = v - ref
    whole = np.floor_divide(d, per_day)
    days = whole.astype(np.float64) + (d - whole * per_day).astype(np.float64) / per_day
    return np.where(nat, np.nan, days)


def _year_month(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Calendar year and month (proleptic Gregorian) as floats; NaT -> NaN."""
    nat = np.isnat(t)
    years = t.astype("datetime64[Y]").astype(np.int64).astype(np.float64) + 1970.0
    months = t.astype("datetime64[M]").astype(np.int64) % 12 + 1.0
    return np.where(nat, np.nan, years), np.where(nat, np.nan, months)


def _check_years(t: np.ndarray) -> None:
    years, _ = _year_month(t)
    bad = np.isfinite(years) & ((years < MIN_YEAR) | (years > MAX_YEAR))
    if np.any(bad):
        first = np.asarray(t).ravel()[np.asarray(bad).ravel()][0]
        raise InputError(
            f"time {first!r} lies outside the years {MIN_YEAR}..{MAX_YEAR} "
            "for which the solar position algorithm is valid"
        )


def _delta_t_years(year: np.ndarray, month: np.ndarray) -> np.ndarray:
    """Espenak and Meeus (2006) polynomials; see :func:`delta_t`."""
    outside = (year < DELTA_T_YEARS[0]) | (year > DELTA_T_YEARS[1])
    if np.any(outside):
        first = np.asarray(year)[outside].flat[0]
        warnings.warn(
            f"Delta T for the year {first:.0f} is extrapolated: the Espenak-Meeus "
            f"expressions cover {DELTA_T_YEARS[0]}..{DELTA_T_YEARS[1]}; pass "
            "delta_t explicitly for a better value",
            ValidityWarning, stacklevel=4)
    y = year + (month - 0.5) / 12.0
    # Each piece: (first year, end year, formula). The calendar year picks
    # the piece, y = decimal year enters the formula.
    u = (y - 1820.0) / 100.0
    out = np.full(np.shape(y), np.nan)
    pieces = [
        (-np.inf, -500, lambda: -20.0 + 32.0 * u**2),
        (-500, 500, lambda: np.polynomial.polynomial.polyval(
            y / 100.0, [10583.6, -1014.41, 33.78311, -5.952053, -0.1798452,
                        0.022174192, 0.0090316521])),
        (500, 1600, lambda: np.polynomial.polynomial.polyval(
            (y - 1000.0) / 100.0, [1574.2, -556.01, 71.23472, 0.319781,
                                   -0.8503463, -0.005050998, 0.0083572073])),
        (1600, 1700, lambda: np.polynomial.polynomial.polyval(
            y - 1600.0, [120.0, -0.9808, -0.01532, 1.0 / 7129.0])),
        (1700, 1800, lambda: np.polynomial.polynomial.polyval(
            y - 1700.0, [8.83, 0.1603, -0.0059285, 0.00013336, -1.0 / 1174000.0])),
        (1800, 1860, lambda: np.polynomial.polynomial.polyval(
            y - 1800.0, [13.72, -0.332447, 0.0068612, 0.0041116, -0.00037436,
                         0.0000121272, -0.0000001699, 0.000000000875])),
        (1860, 1900, lambda: np.polynomial.polynomial.polyval(
            y - 1860.0, [7.62, 0.5737, -0.251754, 0.01680668, -0.0004473624,
                         1.0 / 233174.0])),
        (1900, 1920, lambda: np.polynomial.polynomial.polyval(
            y - 1900.0, [-2.79, 1.494119, -0.0598939, 0.0061966, -0.000197])),
        (1920, 1941, lambda: np.polynomial.polynomial.polyval(
            y - 1920.0, [21.20, 0.84493, -0.076100, 0.0020936])),
        (1941, 1961, lambda: np.polynomial.polynomial.polyval(
            y - 1950.0, [29.07, 0.407, -1.0 / 233.0, 1.0 / 2547.0])),
        (1961, 1986, lambda: np.polynomial.polynomial.polyval(
            y - 1975.0, [45.45, 1.067, -1.0 / 260.0, -1.0 / 718.0])),
        (1986, 2005, lambda: np.polynomial.polynomial.polyval(
            y - 2000.0, [63.86, 0.3345, -0.060374, 0.0017275, 0.000651814,
                         0.00002373599])),
        (2005, 2050, lambda: np.polynomial.polynomial.polyval(
            y - 2000.0, [62.92, 0.32217, 0.005589])),
        (2050, 2150, lambda: -20.0 + 32.0 * u**2 - 0.5628 * (2150.0 - y)),
        (2150, np.inf, lambda: -20.0 + 32.0 * u**2),
    ]
    with np.errstate(invalid="ignore", over="ignore"):
        for lo, hi, formula in pieces:
            sel = (year >= lo) & (year < hi)
            if np.any(sel):
                out = np.where(sel, formula(), out)
    return out


def delta_t(time: Any) -> np.ndarray:
    """Difference TT - UT1 (Delta T) [s] from the Espenak-Meeus polynomials.

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants (see :func:`to_utc_datetime64`).

    Returns
    -------
    ndarray
        Delta T [s], shaped like ``time``; NaN for NaT.

    Raises
    ------
    InputError
        For times that :func:`to_utc_datetime64` rejects.

    Warns
    -----
    ValidityWarning
        For years outside -1999..3000, where the expressions are a rough
        extrapolation.

    Notes
    -----
    With the decimal year ``y = year + (month - 0.5) / 12``, Delta T is a
    piecewise polynomial in ``y`` (Espenak and Meeus 2006): e.g.
    for 2005-2050 ``62.92 + 0.32217 t + 0.005589 t**2`` with
    ``t = y - 2000``; for 2050-2150 ``-20 + 32 u**2 - 0.5628 (2150 - y)``
    with ``u = (y - 1820) / 100``; before -500 and after 2150 the long-term
    parabola ``-20 + 32 u**2``. The calendar year selects the piece. The
    polynomials are fitted to observations up to 2005 and are an
    extrapolation after that and drift from the measured Delta T by a few
    seconds in the 2020s. Delta T only shifts the ephemeris time (the sun's
    place on the ecliptic); the hour angle uses UT. One second of error in
    Delta T therefore moves the sun by about 1.1e-5° (its motion along the
    ecliptic), and the polynomials' bias of about 6 s in 2026 by under
    1e-4°, a quarter of the SPA's stated uncertainty. Give ``delta_t``
    explicitly to :func:`solar_position` only when the full accuracy is
    wanted. Outside -1999..3000 the
    expressions are only rough. The coefficients were written down from
    the published expressions as remembered and cross-checked against an
    independent implementation (pvlib) for 1900-2100.

    References
    ----------
    Espenak, F. and Meeus, J. (2006) Five Millennium Canon of Solar Eclipses:
    -1999 to +3000. NASA Technical Publication NASA/TP-2006-214141.

    Examples
    --------
    >>> import numpy as np
    >>> float(np.round(delta_t(np.datetime64("2020-06-01")), 2))
    71.85
    """
    t = to_utc_datetime64(time)
    year, month = _year_month(t)
    return _delta_t_years(year, month)


# ---------------------------------------------------------------------------
# Time-only terms (Reda and Andreas 2004, sections 3.1-3.8 and A.1)
# ---------------------------------------------------------------------------


def _earth_series(arrays: tuple[np.ndarray, ...], jme: np.ndarray) -> np.ndarray:
    """Sum_i (sum_j A cos(B + C JME)) JME**i / 1e8 (SPA eqs. 9-11) [rad]."""
    total = np.zeros_like(jme)
    power = np.ones_like(jme)
    for terms in arrays:
        a, b, c = terms[:, 0], terms[:, 1], terms[:, 2]
        s = np.sum(a * np.cos(b + c * jme[..., None]), axis=-1)
        total += s * power
        power = power * jme
    return total / 1e8


def _nutation(jce: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Nutation in longitude and obliquity [°] (SPA eqs. 15-23)."""
    x = np.stack(
        [
            297.85036 + 445267.111480 * jce - 0.0019142 * jce**2 + jce**3 / 189474.0,
            357.52772 + 35999.050340 * jce - 0.0001603 * jce**2 - jce**3 / 300000.0,
            134.96298 + 477198.867398 * jce + 0.0086972 * jce**2 + jce**3 / 56250.0,
            93.27191 + 483202.017538 * jce - 0.0036825 * jce**2 + jce**3 / 327270.0,
            125.04452 - 1934.136261 * jce + 0.0020708 * jce**2 + jce**3 / 450000.0,
        ],
        axis=-1,
    )
    arg = np.radians(x @ _NUT_Y.T)  # (..., 63)
    a, b, c, d = _NUT_ABCD.T
    jc = jce[..., None]
    dpsi = np.sum((a + b * jc) * np.sin(arg), axis=-1) / 36_000_000.0
    deps = np.sum((c + d * jc) * np.cos(arg), axis=-1) / 36_000_000.0
    return dpsi, deps


def _mean_obliquity_arcsec(jme: np.ndarray) -> np.ndarray:
    """Mean obliquity of the ecliptic [arcsec] (SPA eq. 24, Laskar 1986)."""
    u = jme / 10.0
    return np.polynomial.polynomial.polyval(
        u, [84381.448, -4680.93, -1.55, 1999.25, -51.38, -249.67, -39.05,
            7.12, 27.87, 5.79, 2.45])


_TIME_BLOCK = 16384  # distinct times per pass: bounds the (times x terms) temporaries


def _time_terms_flat(days: np.ndarray, dt: np.ndarray) -> TimeTerms:
    """All SPA time-only terms for 1-D arrays of days since J2000.0 (UT)
    and Delta T [s], in blocks of distinct times."""
    days = np.asarray(days, dtype=np.float64)
    dt = np.broadcast_to(np.asarray(dt, dtype=np.float64), days.shape)
    if days.size <= _TIME_BLOCK:
        return _time_terms_block(days, dt)
    parts = [_time_terms_block(days[i:i + _TIME_BLOCK], dt[i:i + _TIME_BLOCK])
             for i in range(0, days.size, _TIME_BLOCK)]
    return TimeTerms(*(np.concatenate(f) for f in zip(*parts)))


def _time_terms_block(days: np.ndarray, dt: np.ndarray) -> TimeTerms:
    """SPA eqs. 4-33 and A1-A2 for one block of distinct times."""
    days = np.asarray(days, dtype=np.float64)
    dt = np.broadcast_to(np.asarray(dt, dtype=np.float64), days.shape)
    jd = _J2000_JD + days  # eq. 4
    days_e = days + dt / 86400.0  # eq. 5
    jde = _J2000_JD + days_e
    jc = days / 36525.0  # eq. 6
    jce = days_e / 36525.0  # eq. 7
    jme = jce / 10.0  # eq. 8
    with np.errstate(invalid="ignore"):
        l_deg = np.degrees(_earth_series(_L_ARRAYS, jme)) % 360.0  # eqs. 9-12
        b_deg = np.degrees(_earth_series(_B_ARRAYS, jme))  # as eqs. 9-12
        r_au = _earth_series(_R_ARRAYS, jme)  # as eqs. 9-11
        theta = (l_deg + 180.0) % 360.0  # eq. 13
        beta = -b_deg  # eq. 14
        dpsi, deps = _nutation(jce)
        eps = _mean_obliquity_arcsec(jme) / 3600.0 + deps  # eqs. 24-25
        dtau = -20.4898 / (3600.0 * r_au)  # eq. 26
        lam = theta + dpsi + dtau  # eq. 27
        nu0 = (
            280.46061837 + 360.98564736629 * days + 0.000387933 * jc**2
            - jc**3 / 38710000.0
        ) % 360.0  # eq. 28
        eps_r = np.radians(eps)
        nu = nu0 + dpsi * np.cos(eps_r)  # eq. 29
        lam_r, beta_r = np.radians(lam), np.radians(beta)
        alpha = np.degrees(np.arctan2(
            np.sin(lam_r) * np.cos(eps_r) - np.tan(beta_r) * np.sin(eps_r),
            np.cos(lam_r))) % 360.0  # eq. 30
        delta = np.degrees(np.arcsin(np.clip(
            np.sin(beta_r) * np.cos(eps_r)
            + np.cos(beta_r) * np.sin(eps_r) * np.sin(lam_r), -1.0, 1.0)))  # eq. 31
        xi = 8.794 / (3600.0 * r_au)  # eq. 33
        # Equation of time (SPA section A.1, eqs. A1-A2).
        m = np.polynomial.polynomial.polyval(
            jme, [280.4664567, 360007.6982779, 0.03032028, 1.0 / 49931.0,
                  -1.0 / 15300.0, -1.0 / 2000000.0]) % 360.0
        eot = 4.0 * (m - 0.0057183 - alpha + dpsi * np.cos(eps_r))
        eot = np.where(eot > 20.0, eot - 1440.0, eot)
        eot = np.where(eot < -20.0, eot + 1440.0, eot)
    return TimeTerms(
        jd=jd, jde=jde, jce=jce, jme=jme, heliocentric_longitude=l_deg,
        heliocentric_latitude=b_deg, earth_sun_distance=r_au,
        geocentric_longitude=theta, geocentric_latitude=beta,
        nutation_longitude=dpsi, nutation_obliquity=deps, true_obliquity=eps,
        aberration=dtau, apparent_sun_longitude=lam, apparent_sidereal_time=nu,
        right_ascension=alpha, declination=delta, equation_of_time=eot,
        horizontal_parallax=xi, delta_t=dt.copy(),
    )


def _unique_times(
    t: np.ndarray, dt: ArrayLike | None
) -> tuple[TimeTerms, np.ndarray]:
    """Time terms of the distinct (time, Delta T) pairs and the index that
    maps each element of ``t`` (shape kept) onto them."""
    flat = t.ravel()
    if dt is None:
        uniq, inverse = np.unique(flat, return_inverse=True)
        year, month = _year_month(uniq)
        dt_u = _delta_t_years(year, month)
    else:
        dt_arr = as_float_array(dt, "delta_t")
        try:
            dt_b = np.broadcast_to(dt_arr, t.shape).ravel()
        except ValueError as exc:
            raise InputError(
                f"delta_t of shape {dt_arr.shape} does not broadcast to the "
                f"shape of time {t.shape}"
            ) from exc
        if dt_arr.ndim == 0:
            uniq, inverse = np.unique(flat, return_inverse=True)
            dt_u = np.full(uniq.shape, float(dt_arr))
        else:
            keys = np.stack([flat.view(np.int64), dt_b.view(np.int64)], axis=1)
            ukeys, inverse = np.unique(keys, axis=0, return_inverse=True)
            uniq = ukeys[:, 0].copy().view(flat.dtype)
            dt_u = ukeys[:, 1].copy().view(np.float64)
    terms = _time_terms_flat(_days_since_j2000(uniq), dt_u)
    return terms, np.asarray(inverse).reshape(t.shape)


def time_terms(time: Any, *, delta_t: ArrayLike | None = None) -> TimeTerms:
    """Every time-only quantity of the SPA, computed once per distinct time.

    Parameters
    ----------
    time : datetime64, aware datetime, pandas time, or array of those
        UTC instants (see :func:`to_utc_datetime64`).
    delta_t : float or array_like, optional
        TT - UT1 [s], broadcastable to ``time``. ``None`` (default) uses
        :func:`delta_t`.

    Returns
    -------
    TimeTerms
        Named tuple of arrays shaped like ``time``: Julian day ``jd``,
        Julian ephemeris day ``jde``, century ``jce`` and millennium ``jme``,
        heliocentric longitude L, latitude B [°] and radius R [AU],
        geocentric longitude Theta and latitude beta, nutation in longitude
        and obliquity, true obliquity, aberration, apparent sun longitude
        lambda, apparent sidereal time nu, geocentric right ascension alpha
        and declination delta [°], equation of time [min], equatorial
        horizontal parallax xi [°] and the Delta T used [s].

    Raises
    ------
    InputError
        For unreadable or naive times and years outside -2000..6000.

    Notes
    -----
    Equations 1-33 and A1-A2 of Reda and Andreas (2004). The distinct times
    are found with :func:`numpy.unique`, so a million pixels seen at one
    instant cost one evaluation of the periodic series.

    References
    ----------
    Reda, I. and Andreas, A. (2004) Solar position algorithm for solar
    radiation applications. Solar Energy 76(5), 577-589,
    doi:10.1016/j.solener.2003.12.003.

    Examples
    --------
    >>> import numpy as np
    >>> tt = time_terms(np.datetime64("2003-10-17T19:30:30"), delta_t=67.0)
    >>> round(float(tt.jd), 6)
    2452930.312847
    """
    t = to_utc_datetime64(time)
    _check_years(t)
    terms, inverse = _unique_times(t, delta_t)
    return TimeTerms(*(np.asarray(f)[inverse] for f in terms))
