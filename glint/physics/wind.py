"""Wind near the sea surface: the logarithmic profile between heights, and
whitecap cover.

Wind speeds are in m s⁻¹; ``wind_speed`` without a height is the 10 m wind
(see ``docs/conventions.md``).
"""

from __future__ import annotations

from typing import Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError
from glint.validation import as_float_array, check_choice, check_range

__all__ = [
    "ROUGHNESS_LENGTH",
    "WHITECAP_METHODS",
    "wind_speed_at_height",
    "whitecap_fraction",
]

FloatArray = NDArray[np.float64]
WhitecapMethod = Literal["monahan-ocmuircheartaigh", "stramska-petelski"]

#: Aerodynamic roughness length of the open sea used by the logarithmic wind
#: profile [m] (common practice; see :func:`wind_speed_at_height`).
ROUGHNESS_LENGTH = 2e-4

#: Names accepted by ``method=`` of :func:`whitecap_fraction`.
WHITECAP_METHODS: tuple[str, ...] = ("monahan-ocmuircheartaigh", "stramska-petelski")


def _wind(wind_speed: ArrayLike, name: str = "wind_speed") -> FloatArray:
    """A wind speed array, checked to be >= 0 (NaN passes)."""
    w = as_float_array(wind_speed, name)
    check_range(w, name, 0.0, None, unit="m s⁻¹")
    return w


def wind_speed_at_height(
    wind_speed: ArrayLike,
    height: ArrayLike,
    *,
    target_height: ArrayLike = 10.0,
    roughness_length: ArrayLike = ROUGHNESS_LENGTH,
) -> FloatArray:
    """Convert a wind speed between heights with the logarithmic profile.

    Parameters
    ----------
    wind_speed : array_like
        Wind speed [m s⁻¹] measured at ``height``.
    height : array_like
        Height of the measurement above the water [m].
    target_height : array_like
        Height to convert to [m]; 10 m by default.
    roughness_length : array_like
        Aerodynamic roughness length z0 [m]; 2e-4 m, a common value for the
        open sea (common practice).

    Returns
    -------
    numpy.ndarray
        Wind speed [m s⁻¹] at ``target_height``.

    Raises
    ------
    InputError
        Negative wind speed, roughness length <= 0, or a height at or below
        the roughness length.

    Notes
    -----
    Neutral surface layer (Stull 1988, ch. 9):
    :math:`U(z_2) = U(z_1) \\ln(z_2/z_0) / \\ln(z_1/z_0)`. Stability and
    wave-dependent roughness are ignored. For example a 12.5 m wind is about
    2 % faster than the 10 m wind.

    References
    ----------
    Stull, R.B. (1988). An Introduction to Boundary Layer Meteorology.
    Kluwer, doi:10.1007/978-94-009-3027-8.

    Examples
    --------
    >>> round(float(wind_speed_at_height(10.0, 10.0, target_height=12.5)), 3)
    10.206
    """
    w = _wind(wind_speed)
    z1 = as_float_array(height, "height")
    z2 = as_float_array(target_height, "target_height")
    z0 = as_float_array(roughness_length, "roughness_length")
    check_range(z0, "roughness_length", 0.0, None, low_inclusive=False, unit="m")
    z0min = float(np.nanmax(z0)) if np.any(np.isfinite(z0)) else 0.0
    for z, name in ((z1, "height"), (z2, "target_height")):
        arr = np.asarray(z, dtype=float)
        bad = np.isfinite(arr) & np.isfinite(z0) & (arr <= z0)
        if np.any(bad):
            raise InputError(
                f"{name} must exceed the roughness length ({z0min:g} m); got "
                f"{float(np.broadcast_to(arr, bad.shape)[bad].flat[0])!r}"
            )
    return np.asarray(w * np.log(z2 / z0) / np.log(z1 / z0), dtype=float)


def whitecap_fraction(
    wind_speed: ArrayLike, *, method: WhitecapMethod = "monahan-ocmuircheartaigh"
) -> FloatArray:
    """Fraction of the sea surface covered by whitecaps.

    Parameters
    ----------
    wind_speed : array_like
        Wind speed at 10 m [m s⁻¹].
    method : {"monahan-ocmuircheartaigh", "stramska-petelski"}
        Power law of Monahan and O'Muircheartaigh (1980), or the law of
        Stramska and Petelski (2003) for undeveloped seas.

    Returns
    -------
    numpy.ndarray
        Whitecap cover [1], clipped to [0, 1].

    Raises
    ------
    InputError
        Negative wind speed or unknown method.

    Notes
    -----
    Monahan and O'Muircheartaigh (1980): :math:`W = 3.84\\times10^{-6}
    U_{10}^{3.41}`. Stramska and Petelski (2003), undeveloped seas (from
    memory): :math:`W = 8.75\\times10^{-5} (U_{10} - 6.33)^3` above
    6.33 m/s, 0 below.

    References
    ----------
    Monahan, E.C. and O'Muircheartaigh, I. (1980). Optimal power-law
    description of oceanic whitecap coverage dependence on wind speed.
    J. Phys. Oceanogr. 10, 2094-2099,
    doi:10.1175/1520-0485(1980)010<2094:OPLDOW>2.0.CO;2.

    Stramska, M. and Petelski, T. (2003). Observations of oceanic whitecaps
    in the north polar waters of the Atlantic. JGR 108(C3), 3086,
    doi:10.1029/2002JC001378.

    Examples
    --------
    >>> round(float(whitecap_fraction(10.0)), 5)
    0.00987
    """
    check_choice(method, "method", WHITECAP_METHODS)
    w = _wind(wind_speed)
    if method == "monahan-ocmuircheartaigh":
        f = 3.84e-6 * w**3.41
    else:
        f = 8.75e-5 * np.maximum(w - 6.33, 0.0) ** 3
    return np.asarray(np.clip(f, 0.0, 1.0), dtype=float)
