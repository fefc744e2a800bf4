"""What every strip writer checks: variable names, row ranges and the shape
of each strip's arrays, and the strips of an in-memory (or dask-backed)
dataset.

A *strip* is a run of whole grid rows, ``(rows, {variable: array})``, as
:func:`glint.engine.compute.iter_blocks` yields them; writers also take a
*window* of a strip (its rows and a run of columns, ``cols=``), as
:func:`glint.engine.compute.iter_windows` yields them, so that memory does
not grow with the grid's width.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError
from glint.variables import VARIABLES

__all__ = ["check_variables", "row_range", "col_range", "strip_arrays", "dataset_strips",
           "dataset_variables"]

#: What a writer accepts as the arrays of a strip: one array per variable,
#: by name or in the writer's variable order.
StripArrays = Mapping[str, ArrayLike] | Sequence[ArrayLike]


def check_variables(variables: Sequence[str] | str) -> list[str]:
    """The variable names of a writer, checked against the variable table.

    Examples
    --------
    >>> check_variables("glint_angle")
    ['glint_angle']
    """
    if isinstance(variables, str):
        variables = [variables]
    names = list(variables)
    if not names:
        raise InputError("no variables to write; give at least one of " + ", ".join(VARIABLES))
    unknown = [v for v in names if v not in VARIABLES]
    if unknown:
        raise InputError(
            f"unknown output variable(s) {unknown!r}; valid names: {', '.join(VARIABLES)}"
        )
    if len(set(names)) != len(names):
        raise InputError(f"variables listed twice: {names!r}")
    return names


def row_range(row_slice: slice | Sequence[int], height: int) -> tuple[int, int]:
    """``(row_start, row_stop)`` of a strip, checked against the grid height.

    Examples
    --------
    >>> row_range(slice(0, 5), 10), row_range((5, 10), 10)
    ((0, 5), (5, 10))
    """
    if isinstance(row_slice, slice):
        r0, r1, step = row_slice.indices(height)
        if step != 1:
            raise InputError(f"row_slice must have step 1; got {row_slice!r}")
    else:
        try:
            r0, r1 = (int(v) for v in row_slice)
        except (TypeError, ValueError) as exc:
            raise InputError(
                f"row_slice must be a slice or (row_start, row_stop); got {row_slice!r}"
            ) from exc
    if not 0 <= r0 < r1 <= height:
        raise InputError(f"rows {row_slice!r} outside the grid's 0..{height} rows")
    return r0, r1


def col_range(cols: slice | Sequence[int] | None, width: int) -> tuple[int, int]:
    """``(col_start, col_stop)`` of a window of a strip (``None``: every
    column), checked against the grid width.

    Examples
    --------
    >>> col_range(None, 10), col_range(slice(4, 8), 10)
    ((0, 10), (4, 8))
    """
    if cols is None:
        return 0, width
    try:
        return row_range(cols, width)
    except InputError as exc:
        raise InputError(f"columns {cols!r}: must be a slice (step 1) within the grid's "
                         f"0..{width} columns") from exc


def strip_arrays(names: Sequence[str], arrays: StripArrays,
                 shape: tuple[int, int]) -> list[NDArray[Any]]:
    """The arrays of ``names`` in a strip, each checked to have ``shape``."""
    if isinstance(arrays, Mapping):
        missing = [n for n in names if n not in arrays]
        if missing:
            raise InputError(f"write() is missing variable(s) {missing!r}; got {list(arrays)!r}")
        out = [np.asarray(arrays[n]) for n in names]
    else:
        out = [np.asarray(a) for a in arrays]
        if len(out) != len(names):
            raise InputError(f"write() got {len(out)} arrays for {len(names)} variables "
                             f"{list(names)!r}")
    for n, a in zip(names, out):
        if a.shape != shape:
            raise InputError(f"array for {n!r} has shape {a.shape!r}; expected {shape!r}")
    return out


def dataset_strips(ds: Any, variables: Sequence[str],
                   block_rows: int) -> Iterator[tuple[slice, dict[str, NDArray[Any]]]]:
    """Strips of 2-D variables of an ``xarray.Dataset`` (computed strip by
    strip when dask-backed)."""
    missing = [v for v in variables if v not in ds.data_vars]
    if missing:
        raise InputError(f"dataset has no variable(s) {missing!r}; it has {list(ds.data_vars)!r}")
    for v in variables:
        if ds[v].ndim != 2:
            raise InputError(f"variable {v!r} has dims {ds[v].dims!r}; expected 2-D (y, x)")
    ydim = ds[variables[0]].dims[0]
    height = int(ds.sizes[ydim])
    for r0 in range(0, height, block_rows):
        rows = slice(r0, min(r0 + block_rows, height))
        strip = ds[list(variables)].isel({ydim: rows}).compute()
        yield rows, {v: strip[v].values for v in variables}


def dataset_variables(ds: Any, dtype_kind: str | None) -> list[str]:
    """Table variables present in ``ds``, optionally of one dtype kind."""
    names = [str(v) for v in ds.data_vars if v in VARIABLES]
    if dtype_kind is not None:
        names = [v for v in names if np.dtype(VARIABLES[v].dtype).kind == dtype_kind]
    return names
