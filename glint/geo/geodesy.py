"""Geodesy of a grid's CRS: the UTM zone of a point, transformations to WGS 84 longitude/latitude
and the meridian convergence that turns grid azimuths into true azimuths.

``true_azimuth = (grid_azimuth + gamma) % 360`` where ``gamma`` is
:func:`meridian_convergence`.
"""

from __future__ import annotations

import math
import threading

import numpy as np
from numpy.typing import ArrayLike, NDArray
from pyproj import CRS, Proj, Transformer

from glint.errors import GridError

__all__ = ["utm_crs_for", "transformer_to_lonlat", "meridian_convergence"]

# Transformer objects are not thread-safe: keep one per thread and CRS.
_LOCAL = threading.local()


def utm_crs_for(lon: float, lat: float) -> CRS:
    """WGS 84 / UTM CRS whose zone contains a point.

    Parameters
    ----------
    lon, lat : float
        Longitude and latitude of the point [°].

    Returns
    -------
    pyproj.CRS
        EPSG:326zz north of the equator (latitude >= 0), EPSG:327zz south.

    Raises
    ------
    GridError
        If the point lies outside UTM's latitude band (80° S to 84° N) or the
        coordinates are not valid longitude/latitude.

    Notes
    -----
    Zone ``zz = floor((lon + 180) / 6) + 1``, with the two exceptions of the
    UTM system: zone 32V is widened to 3° E-12° E between 56° N and 64° N
    (south-west Norway), and between 72° N and 84° N zones 31X, 33X, 35X and
    37X cover 0-9° E, 9-21° E, 21-33° E and 33-42° E (Svalbard).

    References
    ----------
    Snyder, J.P. (1987) Map Projections: A Working Manual. U.S. Geological
    Survey Professional Paper 1395, pp. 57-64, doi:10.3133/pp1395.

    Examples
    --------
    >>> utm_crs_for(5.0, 52.0).to_epsg()
    32631
    >>> utm_crs_for(5.0, 60.0).to_epsg()   # Norway exception
    32632
    """
    if not (np.isfinite(lon) and -180.0 <= lon <= 180.0):
        raise GridError(f"longitude must lie in [-180, 180] degrees; got {lon!r}")
    if not (np.isfinite(lat) and -80.0 <= lat <= 84.0):
        raise GridError(
            f"latitude {lat!r} lies outside the UTM band [-80, 84] degrees; "
            "give a CRS explicitly (for example a polar stereographic one)"
        )
    zone = min(int(math.floor((lon + 180.0) / 6.0)) + 1, 60)
    if 56.0 <= lat < 64.0 and 3.0 <= lon < 12.0:
        zone = 32
    elif lat >= 72.0 and 0.0 <= lon < 42.0:
        zone = 31 if lon < 9.0 else 33 if lon < 21.0 else 35 if lon < 33.0 else 37
    return CRS.from_epsg((32600 if lat >= 0.0 else 32700) + zone)


def transformer_to_lonlat(crs: CRS) -> Transformer:
    """A per-thread, per-CRS cached transformer from ``crs`` to WGS 84
    longitude/latitude (``always_xy=True``)."""
    cache = getattr(_LOCAL, "to_lonlat", None)
    if cache is None:
        cache = _LOCAL.to_lonlat = {}
    key = crs.to_wkt()
    tr = cache.get(key)
    if tr is None:
        tr = cache[key] = Transformer.from_crs(crs, "EPSG:4326", always_xy=True)
    return tr


def _transverse_mercator_parameters(crs: CRS) -> tuple[float, float] | None:
    """(central meridian [°], first eccentricity squared) of a TM CRS, else None."""
    op = crs.coordinate_operation if crs.is_projected else None
    if op is None or op.method_name != "Transverse Mercator":
        return None
    lon0 = None
    for p in op.params:
        if p.name == "Longitude of natural origin" and p.unit_name == "degree":
            lon0 = float(p.value)
    ell = crs.ellipsoid
    if lon0 is None or ell is None or not ell.inverse_flattening:
        return None
    f = 1.0 / ell.inverse_flattening
    return lon0, f * (2.0 - f)


def meridian_convergence(crs: CRS, longitude: ArrayLike, latitude: ArrayLike) -> NDArray[np.float64]:
    """Meridian convergence gamma [°]: ``true = (grid + gamma) % 360``.

    Parameters
    ----------
    crs : pyproj.CRS
        The grid's CRS.
    longitude, latitude : array_like
        Longitude and latitude [°] of the points.

    Returns
    -------
    numpy.ndarray
        Angle [°] from true north clockwise to grid north (the grid's
        +y direction); 0 for geographic grids.

    Notes
    -----
    For transverse Mercator CRSs (UTM included) within 10° of the central
    meridian, the series in ``dl = lon - lon0``

    .. math::

       \\gamma = \\Delta\\lambda \\sin\\varphi \\left[1 + \\frac{(\\Delta\\lambda\\cos
       \\varphi)^2}{3}(1 + 3\\eta^2 + 2\\eta^4) + \\frac{(\\Delta\\lambda\\cos
       \\varphi)^4}{15}(2 - \\tan^2\\varphi)\\right],\\quad
       \\eta^2 = \\frac{e^2}{1 - e^2}\\cos^2\\varphi

    is used; elsewhere ``pyproj.Proj(crs).get_factors(lon, lat)
    .meridian_convergence``. Both carry the sign convention above (positive
    east of the central meridian in the northern hemisphere).

    References
    ----------
    Snyder, J.P. (1987) Map Projections: A Working Manual. U.S. Geological
    Survey Professional Paper 1395, doi:10.3133/pp1395.

    Examples
    --------
    >>> round(float(meridian_convergence(CRS.from_epsg(32631), 5.5, 52.0)), 3)
    1.971
    """
    lon, lat = np.broadcast_arrays(np.asarray(longitude, dtype=float),
                                   np.asarray(latitude, dtype=float))
    if crs.is_geographic:
        return np.where(np.isnan(lon) | np.isnan(lat), np.nan, 0.0)
    tm = _transverse_mercator_parameters(crs)
    if tm is not None:
        lon0, e2 = tm
        dl = np.radians((lon - lon0 + 180.0) % 360.0 - 180.0)
        if np.all(np.abs(dl[np.isfinite(dl)]) <= np.radians(10.0)):
            phi = np.radians(lat)
            c, s = np.cos(phi), np.sin(phi)
            eta2 = e2 / (1.0 - e2) * c * c
            u = (dl * c) ** 2
            gamma = dl * s * (
                1.0 + u / 3.0 * (1.0 + 3.0 * eta2 + 2.0 * eta2 * eta2)
                + u * u / 15.0 * (2.0 - (s / c) ** 2)
            )
            return np.degrees(gamma)
    factors = Proj(crs).get_factors(lon, lat, errcheck=False)
    gamma = np.asarray(factors.meridian_convergence, dtype=float)
    return np.where(np.isfinite(gamma), gamma, np.nan)

