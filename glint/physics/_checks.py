"""Checks of scalar options shared by the glint formulas and the kernel."""

from __future__ import annotations

import math

import numpy as np

from glint.errors import InputError
from glint.validation import as_float_array

__all__: list[str] = []


def _check_bool(value: object, name: str) -> bool:
    if not isinstance(value, (bool, np.bool_)):
        raise InputError(f"{name} must be True or False; got {value!r}")
    return bool(value)


def _positive_scalar(value: object, name: str, *, high: float | None = None) -> float:
    arr = as_float_array(value, name)
    if arr.ndim != 0:
        raise InputError(f"{name} must be a scalar; got an array of shape {arr.shape}")
    x = float(arr)
    if not (math.isfinite(x) and x > 0.0 and (high is None or x <= high)):
        bound = f" and <= {high:g}" if high is not None else ""
        raise InputError(f"{name} must be finite, > 0{bound}; got {value!r}")
    return x

