"""Sines and cosines without a library call, for compiled per-pixel loops.

:func:`sincos` gives ``sin a`` and ``cos a`` from a table of the multiples
``a0`` of 1/64 rad and the angle-sum formula
``sin(a0 + d) = sin a0 cos d + cos a0 sin d`` with the Taylor series of
``sin d`` and ``cos d`` to ``d**7`` and ``d**8``: for ``|d| <= 1/128`` the
truncation is below 1e-21, so the result equals ``math.sin``/``math.cos``
to within a few units in the last place (checked in the tests). The
reference angle depends on ``a`` alone, so a point's value does not depend
on which other points are computed with it. Angles beyond +-6.28 rad (and
NaN) go to the library functions.

Pass :data:`SIN_TABLE` and :data:`COS_TABLE` into the compiled function
that calls :func:`sincos` (numba treats global arrays as constants, which
would freeze them into every cached compilation).
"""

from __future__ import annotations

import math

import numba
import numpy as np
from numpy.typing import NDArray

__all__ = ["SIN_TABLE", "COS_TABLE", "sincos"]

_SCALE = 64.0
_OFFSET = 403  # 2 pi * 64 = 402.1
_ANGLES = (np.arange(2 * _OFFSET + 1) - _OFFSET) / _SCALE
#: sin and cos of the multiples of 1/64 rad in [-6.3, 6.3].
SIN_TABLE: NDArray[np.float64] = np.sin(_ANGLES)
COS_TABLE: NDArray[np.float64] = np.cos(_ANGLES)
_S3, _S5, _S7 = 1.0 / 6.0, 1.0 / 20.0, 1.0 / 42.0
_C4, _C6, _C8 = 1.0 / 12.0, 1.0 / 30.0, 1.0 / 56.0


@numba.njit(inline="always")
def sincos(a: float, sin_table: NDArray[np.float64],
           cos_table: NDArray[np.float64]) -> tuple[float, float]:  # pragma: no cover - compiled
    """``(sin a, cos a)`` of an angle ``a`` [rad] (see the module notes).

    Examples
    --------
    >>> s, c = sincos(0.3, SIN_TABLE, COS_TABLE)
    >>> abs(s - math.sin(0.3)) < 1e-15 and abs(c - math.cos(0.3)) < 1e-15
    True
    """
    if not abs(a) < 6.28:
        return math.sin(a), math.cos(a)
    k = int(math.floor(a * _SCALE + 0.5))
    d = a - k / _SCALE
    s0 = sin_table[k + _OFFSET]
    c0 = cos_table[k + _OFFSET]
    d2 = d * d
    sd = d * (1.0 - d2 * _S3 * (1.0 - d2 * _S5 * (1.0 - d2 * _S7)))
    cd = 1.0 - d2 * 0.5 * (1.0 - d2 * _C4 * (1.0 - d2 * _C6 * (1.0 - d2 * _C8)))
    return s0 * cd + c0 * sd, c0 * cd - s0 * sd
