"""Tie-point lattices: node spacings, bilinear interpolation from nodes, and
the one tie-point planner.

A lattice is a set of node rows and node columns of a :class:`~glint.geo.grid.Grid`
(every ``step`` pixels, always ending on the last pixel centre). Values
computed exactly at the nodes are interpolated bilinearly to the pixels
(azimuth-like fields across north without a jump) by compiled loops.

:func:`plan_lattice` is the one place that chooses a spacing: it walks the
candidate spacings coarsest first and keeps the first whose interpolation
error, checked against exact values where it is largest, stays below
:data:`PLAN_MARGIN` times the tolerance. Both tie-point plans use it: the
sun and view angles of :func:`glint.engine.compute.plan_geometry` and the
longitude/latitude of :meth:`glint.geo.grid.Grid.lonlat_rows`.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Collection, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numba
import numpy as np
from numpy.typing import ArrayLike, DTypeLike, NDArray

from glint.errors import GridError
from glint.physics.threads import threads_for

if TYPE_CHECKING:
    from glint.geo.grid import Grid

__all__ = [
    "NODE_STEPS",
    "PLAN_MARGIN",
    "MAX_NODES",
    "CHECK_CELLS",
    "LatticePlan",
    "plan_lattice",
    "node_axes",
    "lattices",
    "cell_centres",
    "check_points",
    "interpolate_nodes",
    "interpolate_azimuth_nodes",
    "interpolate_field",
]

#: Node spacings tried by the tie-point plans, coarsest first [pixels].
NODE_STEPS: tuple[int, ...] = (64, 32, 16, 8, 4, 2)
#: A spacing is kept when the largest error found at the check points is at
#: most this fraction of the tolerance: the margin covers points between
#: those checked (cell centres understate the largest error of smooth
#: azimuth fields by up to about 10 %).
PLAN_MARGIN = 0.8
#: Largest lattice a plan tries [nodes]: the exact fields of every node are
#: held in memory, so finer spacings on large grids would make memory grow
#: with the grid (a lattice of a quarter of the pixels costs more than
#: computing the pixels). Spacings giving more nodes are skipped.
MAX_NODES = 1 << 18
#: A plan stops trying finer spacings when the error expected at the finest
#: (quadratic fall with the spacing) is this many times above the bound.
_GIVE_UP = 4.0
#: Rows (and columns) of lattice cells whose centres are checked: every cell
#: of lattices up to this size, this many evenly spread cells on larger ones.
CHECK_CELLS = 400

FloatArray = NDArray[np.float64]
#: Exact values of every field at pixel indices (2-D rows, 2-D cols).
ExactFields = Callable[[FloatArray, FloatArray], dict[str, FloatArray]]
#: Largest error of interpolated fields against exact ones.
FieldError = Callable[[Mapping[str, NDArray[np.floating]], Mapping[str, FloatArray]], float]
#: Node ``(row index, col index)`` around which to check densely, from the node values.
FocusNodes = Callable[[Mapping[str, FloatArray]], Sequence[tuple[int, int]]]


@dataclass(frozen=True)
class LatticePlan:
    """The spacing chosen by :func:`plan_lattice`.

    ``step`` is the node spacing [pixels], 0 when no spacing met the
    tolerance (then ``node_rows``/``node_cols`` are None and ``nodes`` is
    empty: compute every pixel exactly). ``nodes`` maps each field to its
    values at the nodes, shape ``(len(node_rows), len(node_cols))``;
    ``max_error`` is the largest error found at the check points.
    """

    step: int
    node_rows: FloatArray | None
    node_cols: FloatArray | None
    nodes: dict[str, FloatArray] = field(default_factory=dict)
    max_error: float = 0.0
    periodic: frozenset[str] = frozenset()

    def interpolate(self, name: str, rows: ArrayLike, cols: ArrayLike,
                    dtype: DTypeLike = np.float64) -> NDArray[np.floating]:
        """Field ``name`` interpolated to 1-D ``rows`` x ``cols`` (a 2-D array)."""
        if self.node_rows is None or self.node_cols is None:
            raise GridError("this plan has no lattice (step 0): compute the pixels exactly")
        return interpolate_field(self.nodes[name], self.node_rows, self.node_cols, rows, cols,
                                 periodic=name in self.periodic, dtype=dtype)


def node_axes(shape: tuple[int, int], step: int) -> tuple[FloatArray, FloatArray]:
    """Node rows and columns of a lattice of spacing ``step`` on a grid of
    ``shape`` (see :meth:`glint.geo.grid.Grid.nodes`)."""
    if int(step) != step or step <= 0:
        raise GridError(f"node step must be a positive integer; got {step!r}")
    return _node_axis(shape[0], int(step)), _node_axis(shape[1], int(step))


def lattices(grid: Grid, steps: Sequence[int] = NODE_STEPS, *, max_nodes: int = MAX_NODES
             ) -> Iterator[tuple[int, FloatArray, FloatArray]]:
    """``(step, node_rows, node_cols)`` for each spacing in ``steps`` that
    gives a lattice of at least 2 x 2 nodes and at most ``max_nodes`` nodes
    (coarser and finer ones are skipped)."""
    for step in steps:
        if step >= max(grid.shape):
            continue
        node_rows, node_cols = node_axes(grid.shape, step)
        if len(node_rows) >= 2 and len(node_cols) >= 2 and len(node_rows) * len(node_cols) <= max_nodes:
            yield step, node_rows, node_cols


def cell_centres(node_axis: FloatArray, max_cells: int = CHECK_CELLS) -> FloatArray:
    """Centres of the cells along one node axis: of every cell, or of
    ``max_cells`` evenly spread cells on longer axes. These are the points
    farthest from the nodes, where interpolation is checked."""
    n = len(node_axis)
    k = np.unique(np.linspace(0, n - 2, min(max_cells, n - 1)).round().astype(int))
    return np.asarray(0.5 * (node_axis[k] + node_axis[k + 1]), dtype=float)


def check_points(node_axis: FloatArray, around: int | None = None) -> FloatArray:
    """Fractional indices at which interpolation is checked along one axis.

    Without ``around``: the centres of every cell (of :data:`CHECK_CELLS`
    evenly spread cells on long axes). With ``around`` (a node index): the
    nodes, edge midpoints and quarter points of the three cells on either side.
    """
    if around is None:
        return cell_centres(node_axis)
    n = len(node_axis)
    lo, hi = max(around - 3, 0), min(around + 3, n - 1)
    seg = node_axis[lo:hi + 1]
    mids = 0.5 * (seg[:-1] + seg[1:])
    return np.sort(np.concatenate([seg, mids, 0.5 * (seg[:-1] + mids), 0.5 * (mids + seg[1:])]))


def plan_lattice(
    grid: Grid,
    exact: ExactFields,
    error: FieldError,
    tolerance: float,
    *,
    steps: Sequence[int] = NODE_STEPS,
    periodic: Collection[str] = (),
    focus: FocusNodes | None = None,
    require_finite: bool = False,
) -> LatticePlan:
    """Choose the coarsest node spacing whose interpolation error meets ``tolerance``.

    For each spacing in ``steps`` (coarsest first) the fields are computed
    exactly at the nodes (``exact(rows, cols)``), interpolated to the check
    points and compared there with exact values by ``error(approx, exact)``.
    The check points are the centres of the lattice cells (the points
    farthest from the nodes) and, for each node returned by ``focus``, a
    dense set of points in the cells around it (where a field turns fastest).
    A spacing is kept when the largest error is at most
    :data:`PLAN_MARGIN` ``* tolerance``. Lattices of more than
    :data:`MAX_NODES` nodes are not tried, so that planning costs bounded
    memory whatever the grid size; finer spacings are not tried once the
    error expected at the finest one (falling with the square of the
    spacing, as bilinear interpolation errors of smooth fields do) is still
    four times over the bound.

    Parameters
    ----------
    grid : glint.geo.grid.Grid
    exact : callable
        ``exact(rows, cols) -> {name: values}`` at 2-D fractional pixel indices.
    error : callable
        ``error(approx, exact) -> float``: the largest error, in the units of
        ``tolerance``.
    tolerance : float
        Largest error allowed.
    steps : sequence of int, optional
        Spacings tried [pixels]; default :data:`NODE_STEPS`.
    periodic : collection of str, optional
        Fields that are angles in [0, 360) (azimuths, longitudes), interpolated
        across 0/360 without a jump.
    focus : callable, optional
        ``focus(nodes) -> [(node_row_index, node_col_index), ...]``.
    require_finite : bool, optional
        Give up (step 0) when a node value is not finite, instead of letting
        NaN spread to the cells around it.

    Returns
    -------
    LatticePlan
        Step 0 (no lattice) when no spacing meets the tolerance.
    """
    per = frozenset(periodic)
    candidates = list(lattices(grid, steps))
    for n, (step, node_rows, node_cols) in enumerate(candidates):
        nr, nc = np.meshgrid(node_rows, node_cols, indexing="ij")
        nodes = exact(nr, nc)
        if require_finite and not all(np.isfinite(v).all() for v in nodes.values()):
            break
        plan = LatticePlan(step, node_rows, node_cols, nodes, 0.0, per)
        checks = [(check_points(node_rows), check_points(node_cols))]
        for ir, ic in (focus(nodes) if focus is not None else ()):
            checks.append((check_points(node_rows, ir), check_points(node_cols, ic)))
        err = 0.0
        for rows, cols in checks:
            rr, cc = np.meshgrid(rows, cols, indexing="ij")
            approx = {name: plan.interpolate(name, rows, cols) for name in nodes}
            err = max(err, error(approx, exact(rr, cc)))
        if err <= PLAN_MARGIN * tolerance:
            return LatticePlan(step, node_rows, node_cols, nodes, err, per)
        # Bilinear interpolation errors of smooth fields fall with the square
        # of the spacing; fields that are not smooth (an azimuth around a
        # nadir) do not improve at all. When even the finest spacing left
        # would miss the bound by 4x on that rule, stop trying.
        finest = min((c[0] for c in candidates[n + 1:]), default=None)
        if finest is None or err * (finest / step) ** 2 > _GIVE_UP * PLAN_MARGIN * tolerance:
            break
    return LatticePlan(0, None, None, {}, 0.0, per)


def _node_axis(n: int, step: int) -> FloatArray:
    nodes = np.arange(0, n - 1, step, dtype=float)
    return np.append(nodes, float(n - 1)) if n > 1 else np.zeros(1)


def _axis_weights(nodes: FloatArray, at: FloatArray) -> tuple[NDArray[np.intp], FloatArray]:
    """Interval index and fractional weight of ``at`` along a node axis."""
    if nodes.size == 1:
        return np.zeros(at.shape, dtype=np.intp), np.zeros(at.shape)
    i = np.clip(np.searchsorted(nodes, at, side="right") - 1, 0, nodes.size - 2)
    return i, (at - nodes[i]) / (nodes[i + 1] - nodes[i])


def _lattice_weights(
    v: NDArray[np.floating], node_rows: ArrayLike, node_cols: ArrayLike, rows: ArrayLike,
    cols: ArrayLike,
) -> tuple[FloatArray, NDArray[np.intp], FloatArray, NDArray[np.intp], FloatArray]:
    """Validate a node lattice and return ``(v, ir, tr, ic, tc)`` for the
    compiled loops; a single-node axis is padded to two equal nodes."""
    nr, nc = np.asarray(node_rows, dtype=float), np.asarray(node_cols, dtype=float)
    r, c = np.atleast_1d(np.asarray(rows, dtype=float)), np.atleast_1d(np.asarray(cols, dtype=float))
    if nr.ndim != 1 or nc.ndim != 1 or v.shape != (nr.size, nc.size):
        raise GridError(
            f"values_at_nodes has shape {v.shape!r}; expected "
            f"(len(node_rows), len(node_cols)) = ({nr.size}, {nc.size})"
        )
    if np.any(np.diff(nr) <= 0) or np.any(np.diff(nc) <= 0):
        raise GridError("node_rows and node_cols must be strictly increasing")
    ir, tr = _axis_weights(nr, r)
    ic, tc = _axis_weights(nc, c)
    v = np.asarray(v, dtype=np.float64)
    if nr.size == 1:
        v = np.concatenate([v, v], axis=0)
    if nc.size == 1:
        v = np.concatenate([v, v], axis=1)
    return (np.ascontiguousarray(v), ir.astype(np.intp), tr.astype(np.float64),
            ic.astype(np.intp), tc.astype(np.float64))


@numba.njit(parallel=True, cache=True, nogil=True)
def _bilinear_loop(v: FloatArray, ir: NDArray[np.intp], tr: FloatArray, ic: NDArray[np.intp],
                   tc: FloatArray, out: NDArray[np.floating]) -> None:  # pragma: no cover - compiled
    """Bilinear interpolation over the output, row by row: the two node
    rows around an output row are first blended into one line of node
    values (the node columns the row needs), then each pixel is a linear
    blend of two values of that line, read from a short array in cache."""
    k0 = ic.min()
    line_size = ic.max() + 2 - k0
    for i in numba.prange(ir.size):
        r0 = ir[i]
        t = tr[i]
        line = np.empty(line_size)
        for k in range(line_size):
            line[k] = v[r0, k0 + k] * (1.0 - t) + v[r0 + 1, k0 + k] * t
        for j in range(ic.size):
            c = ic[j] - k0
            u = tc[j]
            out[i, j] = line[c] * (1.0 - u) + line[c + 1] * u


@numba.njit(inline="always")
def _near(a: float, ref: float) -> float:  # pragma: no cover - compiled
    """``a`` shifted by a multiple of 360 into [ref - 180, ref + 180)."""
    return a - 360.0 * math.floor((a - ref + 180.0) / 360.0)


@numba.njit(parallel=True, cache=True, nogil=True)
def _bilinear_azimuth_loop(v: FloatArray, ir: NDArray[np.intp], tr: FloatArray,
                           ic: NDArray[np.intp], tc: FloatArray,
                           out: NDArray[np.floating]) -> None:  # pragma: no cover - compiled
    """Bilinear interpolation of azimuths: the four corners of each cell are
    taken within 180° of its first corner, interpolated, folded to [0, 360).
    Row by row as :func:`_bilinear_loop`: per cell, its left and right
    edges at the output row; per pixel, a blend of the two (folded only
    when it leaves [0, 360))."""
    k0 = ic.min()
    cells = ic.max() + 1 - k0
    for i in numba.prange(ir.size):
        r0 = ir[i]
        t = tr[i]
        left = np.empty(cells)
        right = np.empty(cells)
        for k in range(cells):
            a00 = v[r0, k0 + k]
            a01 = _near(v[r0, k0 + k + 1], a00)
            a10 = _near(v[r0 + 1, k0 + k], a00)
            a11 = _near(v[r0 + 1, k0 + k + 1], a00)
            left[k] = a00 * (1.0 - t) + a10 * t
            right[k] = a01 * (1.0 - t) + a11 * t
        for j in range(ic.size):
            c = ic[j] - k0
            u = tc[j]
            a = left[c] * (1.0 - u) + right[c] * u
            if not (a >= 0.0 and a < 360.0):
                a = a - 360.0 * math.floor(a / 360.0)
                if a >= 360.0:
                    a -= 360.0
            out[i, j] = a


def interpolate_nodes(
    values_at_nodes: ArrayLike, node_rows: ArrayLike, node_cols: ArrayLike, rows: ArrayLike,
    cols: ArrayLike, *, dtype: DTypeLike | None = None,
) -> NDArray[np.floating]:
    """Bilinear interpolation from a node lattice to pixel rows and columns.

    Parameters
    ----------
    values_at_nodes : array_like, shape (len(node_rows), len(node_cols))
        Values at the nodes.
    node_rows, node_cols : array_like
        Increasing 1-D node indices (from :meth:`glint.geo.grid.Grid.nodes`).
    rows, cols : array_like
        1-D requested rows and columns (fractional allowed). Points outside
        the node range are extrapolated linearly from the edge interval.
    dtype : numpy dtype, optional
        Output type (the arithmetic is float64 either way); default the
        dtype of ``values_at_nodes`` if floating, else float64.

    Returns
    -------
    numpy.ndarray, shape (len(rows), len(cols))
        Interpolated values. NaN at a node spreads to the cells touching it.

    Raises
    ------
    GridError
        If the shapes do not match or the node axes are not increasing.

    Notes
    -----
    ``v = (1 - t)[(1 - u) V[i, j] + u V[i, j + 1]] + t[(1 - u) V[i + 1, j] +
    u V[i + 1, j + 1]]`` with ``t = (r - R[i]) / (R[i + 1] - R[i])`` and
    ``u`` likewise along columns: exact for fields linear in row and column
    (and for bilinear ones). One compiled pass over the output (numba), so a
    strip of a large grid costs no full-size temporaries.

    Examples
    --------
    >>> v = np.array([[0.0, 10.0], [20.0, 30.0]])
    >>> interpolate_nodes(v, [0, 10], [0, 10], [5], [0, 5, 10])
    array([[10., 15., 20.]])
    """
    v = np.asarray(values_at_nodes)
    if dtype is None:
        dtype = v.dtype if np.issubdtype(v.dtype, np.floating) else np.float64
    v, ir, tr, ic, tc = _lattice_weights(v, node_rows, node_cols, rows, cols)
    out = np.empty((ir.size, ic.size), dtype=dtype)
    if out.size:
        with threads_for(out.size):
            _bilinear_loop(v, ir, tr, ic, tc, out)
    return out


def interpolate_azimuth_nodes(
    azimuth_at_nodes: ArrayLike, node_rows: ArrayLike, node_cols: ArrayLike, rows: ArrayLike,
    cols: ArrayLike, *, dtype: DTypeLike = np.float64,
) -> NDArray[np.floating]:
    """Bilinear interpolation of azimuths [°] across north without a jump.

    Same arguments as :func:`interpolate_nodes`. In each lattice cell the
    corner azimuths are taken within 180° of the cell's first corner,
    interpolated bilinearly and folded back into [0, 360): 350° and 10°
    average to 0°, not 180°.

    Notes
    -----
    For a smooth azimuth field this is bilinear interpolation of the angle
    itself. Where the field turns by 180° or more across one cell (around the
    nadir of a low sensor, or the sun near the zenith) the result is wrong;
    callers check interpolated angles against exact values (as
    :func:`glint.engine.compute.plan_geometry` does) and refine the lattice.

    Examples
    --------
    >>> a = np.array([[350.0, 10.0]])
    >>> float(interpolate_azimuth_nodes(a, [0], [0, 2], [0], [1])[0, 0]) % 360 < 1e-9
    True
    """
    a = np.asarray(azimuth_at_nodes, dtype=float)
    v, ir, tr, ic, tc = _lattice_weights(a, node_rows, node_cols, rows, cols)
    out = np.empty((ir.size, ic.size), dtype=dtype)
    if out.size:
        with threads_for(out.size):
            _bilinear_azimuth_loop(v, ir, tr, ic, tc, out)
    return out


def interpolate_field(
    values_at_nodes: ArrayLike, node_rows: ArrayLike, node_cols: ArrayLike, rows: ArrayLike,
    cols: ArrayLike, *, periodic: bool = False, dtype: DTypeLike = np.float64,
) -> NDArray[np.floating]:
    """:func:`interpolate_azimuth_nodes` when ``periodic`` (angles in degrees),
    else :func:`interpolate_nodes`."""
    if periodic:
        return interpolate_azimuth_nodes(values_at_nodes, node_rows, node_cols, rows, cols,
                                         dtype=dtype)
    return interpolate_nodes(values_at_nodes, node_rows, node_cols, rows, cols, dtype=dtype)
