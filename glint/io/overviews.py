"""GeoTIFF overviews computed from the windows as they are written.

GDAL builds the internal overviews of a GeoTIFF (``build_overviews``) by
reading the finished file back, decompressing every tile and compressing
the levels; for a large map that re-read costs about as much as writing the
map. :class:`OverviewLevels` instead takes every window the writer writes,
reduces it in memory into every level, and streams each level into a tiled
GeoTIFF of its own (``<file>.level<k>.tif``, same compression, predictor and
tile size). When the map is finished, :func:`append_overviews` moves the
levels' compressed tiles into the map as reduced-resolution images (plain
TIFF structure: no decompression, no recompression), which GDAL and every
GeoTIFF reader take as internal overviews.

The levels are those GDAL computes (checked against GDAL's
``build_overviews`` in the tests):

* sizes: level ``k`` is ``ceil(height / 2**k) x ceil(width / 2**k)``, as
  GDAL's GeoTIFF driver sizes overviews of factor ``2**k``;
* ``average`` (floating-point maps, NaN nodata): each level is computed
  from the previous one, as GDAL "cascades" averages; each overview pixel is the
  area-weighted mean of the valid (non-NaN) source pixels it covers, NaN when
  none is valid. When a side is even, that is the plain mean of 2 x 2
  pixels; when it is odd the overview pixel spans a little less than two
  source pixels (``n / ceil(n / 2)``), and the pixels at its edges count
  with the fraction they overlap, as GDAL 3.10 does;
* ``nearest`` (class maps): each level picks from the map itself (as GDAL
  does for band-interleaved files) pixel ``int(i * r + 0.5)`` of each axis,
  ``r = n_map / n_overview`` (the top-left pixel of each cell when the side
  is a multiple of the factor).

Where a side is not a multiple of the factor, GDAL's own overviews differ
from these on a few rows: GDAL reduces the source in blocks of rows and,
for the first overview row of a block whose source pixels start above the
block, leaves the rows above out (average: the partial row's weight goes to
the next row; nearest: the pick moves to the block's first row). Those rows
depend on GDAL's block sizes; here every row has its exact area weights and
picks.

The writer's thread reduces each window into level 1 (average) or picks
every level from it (nearest) and hands the result to a thread of its own,
which reduces level 1's block into level 2, that into level 3 and so on,
window by window, and writes each level's block (GDAL compresses it
meanwhile); one window is in flight at a time. A level's rows go to its
file as soon as they complete a row of its tiles (:func:`level_tile`: a
512-row strip of the map gives whole rows of tiles of levels 1 to 3),
the others wait, every column of them, for the next strip. Memory hardly
grows with the map: the window in flight, per level at most two source
rows carried from one strip to the next and two source columns from one
window to the next, and the waiting rows of levels 4 and coarser, less
than two rows of their 64-pixel tiles at a sixteenth of the map's width
or less (about 2 MB for 8 float bands 11000 columns wide). Other resamplings, nodata
values other than NaN for averages, and windows that do not arrive as
strips of rows from top to bottom (each from left to right) are not
handled here: the writer falls back to GDAL's ``build_overviews`` (:attr:`OverviewLevels.usable`
turns False).
"""

from __future__ import annotations

import contextlib
import math
import os
import struct
import warnings
from collections.abc import Callable, Mapping, Sequence
from concurrent.futures import Future, ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any, BinaryIO

import numba
import numpy as np
from numpy.typing import NDArray

from glint.errors import InputError, OutputError

__all__ = ["OverviewLevels", "append_overviews", "level_shapes", "level_tile", "overview_supported"]

#: Resamplings computed here (the others are left to GDAL).
RESAMPLINGS = ("average", "nearest")

#: Smallest tile side of the overview levels [pixels] (unless the map's
#: tiles are smaller).
MIN_LEVEL_TILE = 64


def level_tile(map_tile: int, k: int) -> int:
    """Tile side of overview level ``k`` (1, 2, ...) of a map tiled
    ``map_tile`` x ``map_tile``: the map's tile side over ``2**k`` (a
    multiple of 16, as TIFF requires), at least :data:`MIN_LEVEL_TILE`.

    A strip of the map one tile high then gives whole rows of tiles of
    the first levels, which go to their files as they come; a level waits
    in memory only for the rows of its tiles not yet complete, so that
    memory is a few coarse levels' tile rows (each TIFF directory has its
    own tile size). Smaller tiles cost time, as GDAL works tile by tile:
    128-pixel tiles on level 1 of a 120 Mpx map took about 2 s more than
    256 in one comparison.

    Examples
    --------
    >>> [level_tile(512, k) for k in (1, 2, 3, 4)]
    [256, 128, 64, 64]
    """
    return max((map_tile >> k) // 16 * 16, min(map_tile, MIN_LEVEL_TILE))


def level_shapes(shape: tuple[int, int], count: int) -> list[tuple[int, int]]:
    """Shapes of overview levels 1..count of factors 2, 4, 8, ... (GDAL's
    GeoTIFF driver: ``ceil(side / factor)``).

    Examples
    --------
    >>> level_shapes((601, 700), 3)
    [(301, 350), (151, 175), (76, 88)]
    """
    h, w = shape
    return [(-(-h // 2**k), -(-w // 2**k)) for k in range(1, count + 1)]


def overview_supported(resampling: str, dtype: np.dtype[Any], nodata: float | None) -> bool:
    """Whether :class:`OverviewLevels` computes these overviews (else GDAL does)."""
    if resampling == "nearest":
        return True
    return (resampling == "average" and bool(np.issubdtype(dtype, np.floating))
            and nodata is not None and math.isnan(nodata))


# ------------------------------------------------------------- resampling
@dataclass(frozen=True)
class _Axis:
    """How one axis of a level is reduced from its source (GDAL's rules).

    ``left``/``right``: first and one-past-last source index of each
    overview pixel; ``weights``: (3, n) weights of the (at most three)
    source pixels ``left + t``, 0 where unused (computed for halving
    only: ratios up to 2); ``nearest``: the source pixel GDAL's nearest
    picks; ``exact``: the ratio is 2.
    """

    n_src: int
    n_dst: int
    left: NDArray[np.intp]
    right: NDArray[np.intp]
    weights: NDArray[np.float64]
    nearest: NDArray[np.intp]

    @property
    def exact(self) -> bool:
        return self.n_src == 2 * self.n_dst

    @classmethod
    def of(cls, n_src: int, n_dst: int) -> _Axis:
        r = n_src / n_dst
        i = np.arange(n_dst, dtype=np.float64)
        a, b = i * r, (i + 1) * r
        left = (a + 1e-8).astype(np.intp)
        right = np.ceil(b - 1e-8).astype(np.intp)
        right = np.where(right == left, right + 1, right)
        right = np.minimum(right, n_src)
        span = right - left
        w = np.zeros((3, n_dst))
        if (span <= 3).all():  # halving (r <= 2); nearest picks from further
            w[0] = np.where(span == 1, 1.0, 1.0 - (a - left))
            last = 1.0 - (right - b)
            w[1] = np.where(span == 2, last, np.where(span == 3, 1.0, 0.0))
            w[2] = np.where(span == 3, last, 0.0)
        nearest = np.minimum((i * r + 0.5).astype(np.intp), n_src - 1)
        return cls(n_src, n_dst, left, right, w, nearest)

    def first_needing(self, n_rows: int) -> int:
        """Number of overview pixels whose sources all lie below ``n_rows``."""
        return int(np.searchsorted(self.right, n_rows, side="right"))


@numba.njit(cache=True, nogil=True)
def _halve_kernel(a: Any, out: Any) -> None:  # pragma: no cover - compiled
    for i in range(out.shape[0]):
        for j in range(out.shape[1]):
            total = 0.0
            n = 0
            for v in (a[2 * i, 2 * j], a[2 * i, 2 * j + 1],
                      a[2 * i + 1, 2 * j], a[2 * i + 1, 2 * j + 1]):
                if not np.isnan(v):
                    total += v
                    n += 1
            out[i, j] = total / n if n else np.nan


def _halve_average(a: NDArray[Any]) -> NDArray[Any]:
    """NaN-aware 2 x 2 mean of a 2-D float array with even sides: the valid
    pixels of each cell summed in double precision and divided by their
    number (GDAL's average with a nodata mask), NaN where all four are NaN.
    Compiled: one pass over the map instead of a handful of numpy passes
    (about 3 s less on four bands of a 10980 x 10980 tile).

    Examples
    --------
    >>> _halve_average(np.array([[1, 2, 5, np.nan], [3, 4, np.nan, np.nan]], "f4"))
    array([[2.5, 5. ]], dtype=float32)
    """
    h, w = a.shape
    if h % 2 or w % 2:
        raise ValueError(f"2 x 2 means need even sides; got {a.shape}")
    out = np.empty((h // 2, w // 2), a.dtype)
    _halve_kernel(a, out)
    return out


@numba.njit(cache=True, nogil=True)
def _weighted_kernel(a: Any, yl: Any, yw: Any, xl: Any, xw: Any,
                     out: Any) -> None:  # pragma: no cover - compiled
    for i in range(out.shape[0]):
        for j in range(out.shape[1]):
            total = 0.0
            weight = 0.0
            n = 0
            for ty in range(3):
                wy = yw[ty, i]
                if wy == 0.0:
                    continue
                y = yl[i] + ty
                line = 0.0
                line_weight = 0.0
                for tx in range(3):
                    wx = xw[tx, j]
                    if wx == 0.0:
                        continue
                    v = a[y, xl[j] + tx]
                    if not np.isnan(v):
                        line += v * wx
                        line_weight += wx
                        n += 1
                total += line * wy
                weight += line_weight * wy
            out[i, j] = total / weight if n else np.nan


def _reduce_average(a: NDArray[Any], ys: _Axis, rows: slice, xs: _Axis,
                    cols: slice, row0: int, col0: int) -> NDArray[Any]:
    """Overview rows ``rows`` x columns ``cols`` of a NaN-aware area-weighted
    mean, from source ``a`` whose first row/column is ``row0``/``col0``:
    along each axis the (at most three) source pixels an overview pixel
    covers, weighted by the fraction covered, summed row by row in double
    precision in GDAL's order (left, middle, right; top to bottom)."""
    yl, yw = ys.left[rows] - row0, ys.weights[:, rows]
    xl, xw = xs.left[cols] - col0, xs.weights[:, cols]
    if ys.exact and xs.exact:
        r0, c0 = int(yl[0]) if yl.size else 0, int(xl[0]) if xl.size else 0
        return _halve_average(a[r0:r0 + 2 * len(yl), c0:c0 + 2 * len(xl)])
    out = np.empty((len(yl), len(xl)), a.dtype)
    _weighted_kernel(a, yl, yw, xl, xw, out)
    return out


# ----------------------------------------------------------------- levels
class _Disorder(Exception):
    """A block that does not follow the strip order (internal)."""


class _Stage:
    """One level computed from its source (the level above, or the map),
    both in blocks: the source is fed in strips of rows from top to bottom,
    each strip's blocks from left to right, and each block gives the
    level's block it completes, again in that order (all blocks of a strip
    share their rows). Between blocks it keeps only the source pixels the
    level's next pixels still need: up to two source rows above the strip
    (every column) and up to two source columns left of the block."""

    #: The reduction of a block of the source (see :func:`_reduce_average`).
    reduce = staticmethod(_reduce_average)

    def __init__(self, src_shape: tuple[int, int], shape: tuple[int, int],
                 dtype: np.dtype[Any]) -> None:
        self.src_shape = src_shape
        self.ys = _Axis.of(src_shape[0], shape[0])
        self.xs = _Axis.of(src_shape[1], shape[1])
        self.dtype = dtype
        self.done = 0            # level rows given by the finished strips
        self.strip = (0, 0)      # source rows of the strip being fed
        self.row = 0             # first source row of the next strip
        self.col = 0             # next source column of the strip
        self.carry: NDArray[Any] | None = None  # source rows above the strip still needed
        self.carry0 = 0
        self.next_carry: NDArray[Any] | None = None
        self.col_carry: list[NDArray[Any]] | None = None  # source columns left of the block
        self.col_carry0 = 0
        self.dcol = 0            # next level column of the strip

    def _order(self, r0: int, r1: int, c0: int) -> None:
        if c0 == 0 and r0 == self.row and self.col == 0:
            self.strip = (r0, r1)
        if (r0, r1) != self.strip or c0 != self.col:
            raise _Disorder

    def feed(self, r0: int, r1: int, c0: int, c1: int,
             data: Sequence[NDArray[Any]] | NDArray[Any]
             ) -> tuple[int, int, int, int, NDArray[Any]]:
        """Take source rows ``r0:r1`` x columns ``c0:c1`` (one 2-D array per
        band); return the level's rows ``i0:i1`` x columns ``d0:d1`` whose
        source pixels are now all known, as ``(i0, i1, d0, d1, block)``."""
        self._order(r0, r1, c0)
        h, w = self.src_shape
        ys, xs = self.ys, self.xs
        i0 = self.done
        i1 = max(ys.n_dst if r1 == h else ys.first_needing(r1), i0)
        row0 = r0 if self.carry is None else self.carry0
        keep_from = int(ys.left[i1]) if i1 < ys.n_dst else r1  # rows the next strip needs
        bands = len(data)
        if keep_from < r1 and self.next_carry is None:
            self.next_carry = np.empty((bands, r1 - keep_from, w), self.dtype)
        d0 = 0 if c0 == 0 else self.dcol
        d1 = max(xs.n_dst if c1 == w else xs.first_needing(c1), d0)
        keep_col = int(xs.left[d1]) if d1 < xs.n_dst else c1  # columns the next block needs
        col0 = c0 if c0 == 0 or self.col_carry is None else self.col_carry0
        out = np.empty((bands, i1 - i0, d1 - d0), self.dtype)
        col_carry = []
        for b in range(bands):
            src = data[b] if self.carry is None else np.concatenate(
                [self.carry[b, :, c0:c1], data[b]], axis=0)
            if keep_from < r1:
                assert self.next_carry is not None
                self.next_carry[b, :, c0:c1] = src[keep_from - row0:]
            if col0 < c0:
                assert self.col_carry is not None
                src = np.concatenate([self.col_carry[b], src], axis=1)
            if i1 > i0 and d1 > d0:
                out[b] = self.reduce(src, ys, slice(i0, i1), xs, slice(d0, d1), row0, col0)
            if keep_col < c1:
                col_carry.append(src[:, keep_col - col0:].copy())
        self.col_carry = col_carry or None
        self.col_carry0, self.dcol, self.col = keep_col, d1, c1
        if c1 == w:  # the strip is complete
            self.carry, self.carry0, self.next_carry = self.next_carry, keep_from, None
            self.done, self.row, self.col = i1, r1, 0
        return i0, i1, d0, d1, out


class _Picks(_Stage):
    """Nearest: a level's pixels picked from the map's blocks (the map's
    pixel ``nearest`` of each axis), given in the same block order."""

    def feed(self, r0: int, r1: int, c0: int, c1: int,
             data: Sequence[NDArray[Any]] | NDArray[Any]
             ) -> tuple[int, int, int, int, NDArray[Any]]:
        self._order(r0, r1, c0)
        ry, rx = self.ys.nearest, self.xs.nearest
        i0, i1 = (int(i) for i in np.searchsorted(ry, [r0, r1]))
        d0, d1 = (int(j) for j in np.searchsorted(rx, [c0, c1]))
        out = np.empty((len(data), i1 - i0, d1 - d0), self.dtype)
        if i1 > i0 and d1 > d0:
            rows, cols = np.ix_(ry[i0:i1] - r0, rx[d0:d1] - c0)
            for b, band in enumerate(data):
                out[b] = band[rows, cols]
        self.col = c1
        if c1 == self.src_shape[1]:
            self.done, self.row, self.col = i1, r1, 0
        return i0, i1, d0, d1, out


class _Level:
    """One overview level: its stage (how it is computed), the GeoTIFF it
    is written to, and its rows waiting for a whole row of tiles."""

    def __init__(self, stage: _Stage, shape: tuple[int, int], tile: int, path: Path) -> None:
        self.stage = stage
        self.shape = shape
        self.tile = tile
        self.path = path
        self.written = 0         # rows written to the file (whole rows of tiles)
        self.pending: NDArray[Any] | None = None  # rows written..: every column
        self.next_pending: NDArray[Any] | None = None  # filled by the strip's blocks
        self.dst: Any = None


class OverviewLevels:
    """Overview levels of a GeoTIFF fed with the windows written to it.

    Parameters
    ----------
    path : Path
        The GeoTIFF being written; the levels go to ``<path>.level<k>.tif``.
    shape : (int, int)
        Rows and columns of the map.
    count : int
        Number of levels (factors 2, 4, ..., ``2**count``).
    bands : int
        Bands of the map.
    dtype : numpy dtype
        The map's data type.
    resampling : {"average", "nearest"}
        See the module docstring (and :func:`overview_supported`).
    profile : mapping
        rasterio creation options of the levels (compression, predictor,
        tiles, nodata); width, height and count are set here.
    env : callable
        Returns the GDAL environment (a context manager) around GDAL calls.
    """

    def __init__(self, path: Path, shape: tuple[int, int], count: int, bands: int,
                 dtype: np.dtype[Any], resampling: str, profile: Mapping[str, Any],
                 env: Callable[[], Any]) -> None:
        if resampling not in RESAMPLINGS:
            raise InputError(f"resampling must be one of {RESAMPLINGS!r}; got {resampling!r}")
        self.path = Path(path)
        self.shape = shape
        self.bands = bands
        self.dtype = np.dtype(dtype)
        self.resampling = resampling
        self.profile = dict(profile)
        map_tile = int(self.profile.get("blockysize", 512))
        self.env = env
        shapes = [shape, *level_shapes(shape, count)]
        # average: each level from the one above; nearest: each from the map
        self.cascade = resampling == "average"
        self.levels = [
            _Level(_Stage(shapes[k - 1], shapes[k], self.dtype) if self.cascade
                   else _Picks(shape, shapes[k], self.dtype),
                   shapes[k], level_tile(map_tile, k), Path(f"{self.path}.level{k}.tif"))
            for k in range(1, count + 1)]
        #: False once the windows stopped fitting (GDAL builds the overviews).
        self.usable = bool(self.levels)
        self._pool: ThreadPoolExecutor | None = None  # writes the level files
        self._future: Future[None] | None = None

    @property
    def paths(self) -> list[Path]:
        """The level files (existing or not)."""
        return [lv.path for lv in self.levels]

    # ------------------------------------------------------------ feeding
    def add(self, r0: int, r1: int, c0: int, c1: int, data: Sequence[NDArray[Any]]) -> None:
        """Take the window rows ``r0:r1`` x columns ``c0:c1`` (one array per
        band, already of the map's data type). Windows must come as strips
        of rows from top to bottom, each strip's windows from left to right
        (the writers' contract); any other order drops the levels
        (:attr:`usable` turns False and the writer lets GDAL build them).

        Average: this thread reduces the window into level 1 and the levels'
        thread the coarser levels; nearest: this thread picks every level's
        pixels. The levels' thread writes them (one window in flight)."""
        if not self.usable:
            return
        stages = self.levels if not self.cascade else self.levels[:1]
        try:
            blocks = [lv.stage.feed(r0, r1, c0, c1, data) for lv in stages]
        except _Disorder:
            self.discard()
            return
        try:
            self._submit(self._produced_each, blocks)
        except BaseException:
            self.discard()
            raise

    def _submit(self, fn: Callable[..., None], *args: Any) -> None:
        """Run ``fn(*args)`` in the thread that writes the levels, once the
        previous call is done (so at most one window is in flight): GDAL
        compresses the levels while this thread goes on with the map."""
        self._wait()
        if self._pool is None:
            self._open_levels()
            self._pool = ThreadPoolExecutor(1, thread_name_prefix="glint-overviews")
        self._future = self._pool.submit(fn, *args)

    def _produced_each(self, blocks: list[tuple[int, int, int, int, NDArray[Any]]]) -> None:
        for k, block in enumerate(blocks):
            self._produced(k, *block)

    def _produced(self, k: int, i0: int, i1: int, d0: int, d1: int, block: NDArray[Any]) -> None:
        """Level ``k`` (0-based) produced rows ``i0:i1`` x columns ``d0:d1``:
        store them and reduce them into the next level (in the levels'
        thread). Empty blocks change nothing downstream and are dropped: the
        block that completes a strip's columns (``d1`` = the level's width,
        which :meth:`_store` waits for) is never empty."""
        if i1 == i0 or d1 == d0:
            return
        self._store(self.levels[k], i0, i1, d0, d1, block)
        if self.cascade and k + 1 < len(self.levels):
            self._produced(k + 1, *self.levels[k + 1].stage.feed(i0, i1, d0, d1, block))

    def _store(self, lv: _Level, i0: int, i1: int, d0: int, d1: int, block: NDArray[Any]) -> None:
        """Write a level's block: the rows that complete whole rows of its
        tiles go to the file now (with the rows pending above them), the
        others wait, every column of them, for the next strip."""
        h, w = lv.shape
        written = lv.written
        end = h if i1 == h else written + (i1 - written) // lv.tile * lv.tile
        if end > written:
            top = block[:, :end - i0]
            if i0 > written:
                assert lv.pending is not None
                top = np.concatenate([lv.pending[:, :, d0:d1], top], axis=1)
            self._write(lv, top, written, d0)
        start = max(end, written)
        if i1 > start:  # rows start:i1 wait
            if lv.next_pending is None:
                lv.next_pending = np.empty((self.bands, i1 - start, w), self.dtype)
            n_old = max(i0 - start, 0)
            if n_old:
                assert lv.pending is not None
                lv.next_pending[:, :n_old, d0:d1] = lv.pending[:, start - written:, d0:d1]
            lv.next_pending[:, n_old:, d0:d1] = block[:, max(start - i0, 0):]
        if d1 == w:  # the strip's last block
            lv.written, lv.pending, lv.next_pending = start, lv.next_pending, None

    def _write(self, lv: _Level, data: NDArray[Any], row: int, col: int) -> None:
        """Write a block of a level at ``row``, ``col`` (in the levels'
        thread: no GDAL configuration is touched here, the files were opened
        by the writer's thread)."""
        from rasterio.windows import Window

        lv.dst.write(data, window=Window(col, row, data.shape[2], data.shape[1]))

    def _open_levels(self) -> None:
        """Create the level files (in the writer's thread, in its GDAL
        environment: GDAL's configuration is global, and setting it from two
        threads would leave the wrong values behind)."""
        import rasterio
        from rasterio.errors import NotGeoreferencedWarning

        with self.env(), warnings.catch_warnings():
            warnings.simplefilter("ignore", NotGeoreferencedWarning)
            for lv in self.levels:
                if lv.dst is None:
                    lv.dst = rasterio.open(
                        lv.path, "w", **(self.profile | dict(
                            driver="GTiff", width=lv.shape[1], height=lv.shape[0],
                            blockxsize=lv.tile, blockysize=lv.tile,
                            count=self.bands, dtype=self.dtype.name)))

    def _wait(self) -> None:
        """Wait for the level rows being written (raising what failed)."""
        future, self._future = self._future, None
        if future is not None:
            future.result()

    # ---------------------------------------------------------- finishing
    @property
    def complete(self) -> bool:
        """Every level written to its last row."""
        return self.usable and all(lv.written == lv.shape[0] for lv in self.levels)

    def finish(self) -> list[Path]:
        """Close the level files; return their paths (empty when the levels
        are not complete: then nothing is kept and GDAL builds them)."""
        try:
            self._wait()
        except BaseException:
            self.discard()
            raise
        if not self.complete:
            self.discard()
            return []
        try:
            with self.env():
                for lv in self.levels:
                    lv.dst.close()
                    lv.dst = None
        except BaseException:
            self.discard()
            raise
        self._stop()
        return self.paths

    def _stop(self) -> None:
        if self._pool is not None:
            self._pool.shutdown(wait=True)
            self._pool = None

    def discard(self) -> None:
        """Drop the levels and remove their files (the writer falls back to
        GDAL's ``build_overviews``)."""
        self.usable = False
        with contextlib.suppress(Exception):
            self._wait()  # the level being written is closed below
        self._stop()
        for lv in self.levels:
            lv.pending = lv.next_pending = None
            lv.stage.carry = lv.stage.next_carry = lv.stage.col_carry = None
            if lv.dst is not None:
                with contextlib.suppress(Exception):
                    lv.dst.close()
                lv.dst = None
            with contextlib.suppress(FileNotFoundError):
                lv.path.unlink()


# ------------------------------------------------------ TIFF assembling
_TYPE_SIZES = {1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8,
               13: 4, 16: 8, 17: 8, 18: 8}
_NEW_SUBFILE_TYPE, _TILE_OFFSETS, _TILE_BYTE_COUNTS = 254, 324, 325
#: Tags not copied to overview directories: georeferencing (GeoTIFF keys,
#: pixel scale, tie points, transformation) and GDAL's metadata, which
#: belong to the full-resolution image.
_DROPPED_TAGS = frozenset({33550, 33922, 34264, 34735, 34736, 34737, 42112})
_CLASSIC_LIMIT = 2**32


@dataclass
class _Tiff:
    """Header facts of a little-endian classic or BigTIFF file."""

    big: bool
    first_ifd: int

    @property
    def entry_size(self) -> int:
        return 20 if self.big else 12

    def fmt(self, what: str) -> str:
        return {"count": "<Q" if self.big else "<H", "offset": "<Q" if self.big else "<I"}[what]


def _header(f: BinaryIO, path: Path) -> _Tiff:
    head = f.read(16)
    if head[:4] == b"II*\x00":
        return _Tiff(False, struct.unpack_from("<I", head, 4)[0])
    if head[:4] == b"II+\x00" and struct.unpack_from("<HH", head, 4) == (8, 0):
        return _Tiff(True, struct.unpack_from("<Q", head, 8)[0])
    raise OutputError(
        f"{str(path)!r} is not a little-endian TIFF or BigTIFF (header {head[:4]!r}); "
        "overviews are appended only to GeoTIFFs written by GDAL on this machine")


def _read_ifd(f: BinaryIO, t: _Tiff, offset: int, path: Path
              ) -> tuple[dict[int, tuple[int, int, bytes]], int, int]:
    """Entries ``{tag: (type, count, value bytes)}`` of the IFD at ``offset``,
    the position of its next-IFD pointer and that pointer."""
    f.seek(offset)
    cfmt, ofmt = t.fmt("count"), t.fmt("offset")
    (n,) = struct.unpack(cfmt, f.read(struct.calcsize(cfmt)))
    raw = f.read(n * t.entry_size)
    next_pos = f.tell()
    (nxt,) = struct.unpack(ofmt, f.read(struct.calcsize(ofmt)))
    inline = 8 if t.big else 4
    entries: dict[int, tuple[int, int, bytes]] = {}
    for i in range(n):
        e = raw[i * t.entry_size:(i + 1) * t.entry_size]
        if t.big:
            tag, typ, count = struct.unpack_from("<HHQ", e)
            value = e[12:20]
        else:
            tag, typ, count = struct.unpack_from("<HHI", e)
            value = e[8:12]
        if typ not in _TYPE_SIZES:
            raise OutputError(f"{str(path)!r}: TIFF tag {tag} has unknown type {typ}")
        size = _TYPE_SIZES[typ] * count
        if size > inline:
            (pos,) = struct.unpack(ofmt, value[:struct.calcsize(ofmt)])
            here = f.tell()
            f.seek(pos)
            data = f.read(size)
            f.seek(here)
        else:
            data = value[:size]
        entries[tag] = (typ, count, data)
    return entries, next_pos, nxt


def _ints(entry: tuple[int, int, bytes], path: Path) -> list[int]:
    typ, count, data = entry
    code = {3: "H", 4: "I", 16: "Q", 13: "I", 18: "Q"}.get(typ)
    if code is None:
        raise OutputError(f"{str(path)!r}: TIFF tile offsets of type {typ}; expected "
                          "SHORT, LONG or LONG8")
    return list(struct.unpack(f"<{count}{code}", data))


def _write_ifd(f: BinaryIO, t: _Tiff, entries: dict[int, tuple[int, int, bytes]]) -> int:
    """Append an IFD (values first, then the directory) at the end of the
    file; return its offset. Its next-IFD pointer is 0."""
    inline = 8 if t.big else 4
    ofmt = t.fmt("offset")
    f.seek(0, os.SEEK_END)
    if f.tell() % 2:
        f.write(b"\0")
    placed: dict[int, bytes] = {}
    for tag, (typ, count, data) in sorted(entries.items()):
        if len(data) > inline:
            pos = f.tell()
            f.write(data)
            if f.tell() % 2:
                f.write(b"\0")
            placed[tag] = struct.pack(ofmt, pos).ljust(inline, b"\0")
        else:
            placed[tag] = data.ljust(inline, b"\0")
    ifd = f.tell()
    f.write(struct.pack(t.fmt("count"), len(entries)))
    for tag, (typ, count, _) in sorted(entries.items()):
        f.write(struct.pack("<HHQ" if t.big else "<HHI", tag, typ, count) + placed[tag])
    f.write(struct.pack(ofmt, 0))
    return ifd


def _convert(entries: dict[int, tuple[int, int, bytes]], big: bool, path: Path
             ) -> dict[int, tuple[int, int, bytes]]:
    """Entries of one TIFF flavour written for the other (LONG8 <-> LONG)."""
    if big:
        return dict(entries)
    out = {}
    for tag, (typ, count, data) in entries.items():
        if typ in (16, 17, 18):
            values = struct.unpack(f"<{count}{'q' if typ == 17 else 'Q'}", data)
            if any(v >= _CLASSIC_LIMIT or v < -(2**31) for v in values):
                raise OutputError(f"{str(path)!r}: TIFF tag {tag} does not fit a classic TIFF")
            typ = {16: 4, 17: 9, 18: 13}[typ]
            data = struct.pack(f"<{count}{'i' if typ == 9 else 'I'}", *values)
        out[tag] = (typ, count, data)
    return out


def append_overviews(path: str | os.PathLike[str], level_paths: Sequence[str | os.PathLike[str]]
                     ) -> bool:
    """Append the first image of each level file to the GeoTIFF at ``path``
    as a reduced-resolution image (an internal overview), largest first.

    The levels' compressed tiles are copied as they are, after the file's
    last byte; each gets a directory with NewSubfileType 1 (reduced
    resolution) and its own tags (compression, predictor, sample format,
    GDAL nodata, ...) except georeferencing and GDAL metadata, linked from
    the last directory of the file. Both files must be little-endian TIFF or
    BigTIFF (as GDAL writes them on every platform glint runs on).

    Returns
    -------
    bool
        True when appended; False, with the file untouched, when a classic
        TIFF would outgrow its 4 GiB offsets (then GDAL builds the overviews).

    Raises
    ------
    OutputError
        A file that is not a little-endian (Big)TIFF, or a level file that is
        not tiled.
    """
    path = Path(path)
    levels = [Path(p) for p in level_paths]
    with open(path, "r+b") as f:
        t = _header(f, path)
        # the last IFD of the chain
        offset, last_next_pos, seen = t.first_ifd, -1, set()
        while offset:
            if offset in seen:
                raise OutputError(f"{str(path)!r}: its TIFF directories form a loop")
            seen.add(offset)
            _, last_next_pos, offset = _read_ifd(f, t, offset, path)
        f.seek(0, os.SEEK_END)
        end = f.tell()
        if not t.big:
            extra = sum(p.stat().st_size for p in levels) + 4096 * len(levels)
            if end + extra >= _CLASSIC_LIMIT:
                return False
        prev_next_pos = last_next_pos
        for lp in levels:
            with open(lp, "rb") as g:
                lt = _header(g, lp)
                entries, _, _ = _read_ifd(g, lt, lt.first_ifd, lp)
                if _TILE_OFFSETS not in entries or _TILE_BYTE_COUNTS not in entries:
                    raise OutputError(f"{str(lp)!r} is not a tiled TIFF")
                offsets = _ints(entries[_TILE_OFFSETS], lp)
                counts = _ints(entries[_TILE_BYTE_COUNTS], lp)
                f.seek(0, os.SEEK_END)
                new_offsets = []
                for off, cnt in zip(offsets, counts, strict=True):
                    if cnt == 0:
                        new_offsets.append(0)
                        continue
                    if f.tell() % 2:
                        f.write(b"\0")
                    new_offsets.append(f.tell())
                    g.seek(off)
                    f.write(g.read(cnt))
            kept = {tag: e for tag, e in entries.items() if tag not in _DROPPED_TAGS}
            kept = _convert(kept, t.big, lp)
            kept[_NEW_SUBFILE_TYPE] = (4, 1, struct.pack("<I", 1))
            n = len(new_offsets)
            if t.big:
                kept[_TILE_OFFSETS] = (16, n, struct.pack(f"<{n}Q", *new_offsets))
                kept[_TILE_BYTE_COUNTS] = (16, n, struct.pack(f"<{n}Q", *counts))
            else:
                kept[_TILE_OFFSETS] = (4, n, struct.pack(f"<{n}I", *new_offsets))
                kept[_TILE_BYTE_COUNTS] = (4, n, struct.pack(f"<{n}I", *counts))
            ifd = _write_ifd(f, t, kept)
            f.seek(prev_next_pos)
            f.write(struct.pack(t.fmt("offset"), ifd))
            prev_next_pos = ifd + struct.calcsize(t.fmt("count")) + len(kept) * t.entry_size
        f.flush()
    return True
