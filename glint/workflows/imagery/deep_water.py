"""An automatic deep-water sample for the NIR-regression correction.

Over optically deep water the visible bands are as dark as the water gets,
and what remains varies with glint, i.e. with NIR. So, among water pixels
with data, unsaturated NIR and (with a scene) predicted glint reflectance
below the reliability limit:

1. the NIR range (its 1st to 99th percentiles) is cut into
   :data:`NIR_BINS` bins of equal pixel count;
2. in each bin the pixels darkest in the visible bands (mean of the bands
   other than NIR), the lowest :data:`DARK_SHARE` of the bin, are kept.

The sample then spans the whole range of NIR with pixels that are dark for
their glint level, the condition of the regression of Hedley et al. (2005)
(doi:10.1080/01431160500034086). Candidates are taken on a regular lattice
of at most about :data:`MAX_CANDIDATES` pixels, read strip by strip, so
memory stays bounded on any image. The choice is a heuristic of our own:
inspect the sample raster written beside the corrected image.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from glint.errors import InputError
from glint.workflows.imagery.align import Strip

__all__ = ["AutoSample", "auto_sample_pixels", "NIR_BINS", "DARK_SHARE", "MAX_CANDIDATES"]

#: Bins of NIR across which the sample is spread.
NIR_BINS = 20
#: Share of each bin's darkest pixels kept.
DARK_SHARE = 0.1
#: Largest number of candidate pixels examined.
MAX_CANDIDATES = 2_000_000


@dataclass
class AutoSample:
    """The pixels of an automatic deep-water sample."""

    rows: NDArray[np.intp]
    cols: NDArray[np.intp]
    nir: NDArray[np.float64]
    bands: NDArray[np.float64]  # (count, n) every band of the image
    saturated: int
    step: int

    def mask_rows(self, rows: slice, width: int) -> NDArray[np.bool_]:
        """The sample as a boolean strip of the image."""
        out = np.zeros((rows.stop - rows.start, width), bool)
        sel = (self.rows >= rows.start) & (self.rows < rows.stop)
        out[self.rows[sel] - rows.start, self.cols[sel]] = True
        return out


def auto_sample_pixels(strips: Iterable[Strip], *, nir_band: int, saturation: float,
                       glint_limit: float, shape: tuple[int, int]) -> AutoSample:
    """Choose a deep-water sample from the strips of an image (see module notes).

    Raises
    ------
    InputError
        Too few candidate pixels (no water, all saturated).
    """
    step = max(1, math.ceil(math.sqrt(shape[0] * shape[1] / MAX_CANDIDATES)))
    rows_l, cols_l, vals_l = [], [], []
    saturated = 0
    for s in strips:
        first = (-s.rows.start) % step
        sub = (slice(first, None, step), slice(None, None, step))
        ok = s.water[sub]
        nir = s.bands[nir_band - 1][sub].astype(float)
        sat = ok & (nir >= saturation)
        saturated += int(np.count_nonzero(sat))
        ok = ok & ~sat & np.isfinite(nir)
        if s.glint:
            with np.errstate(invalid="ignore"):
                ok &= s.glint["glint_reflectance"][sub] <= glint_limit
        r, c = np.nonzero(ok)
        rows_l.append(r * step + first + s.rows.start)
        cols_l.append(c * step)
        vals_l.append(s.bands[:, sub[0], sub[1]][:, r, c].astype(float))
    rows = np.concatenate(rows_l) if rows_l else np.zeros(0, np.intp)
    cols = np.concatenate(cols_l) if cols_l else np.zeros(0, np.intp)
    vals = np.concatenate(vals_l, axis=1) if vals_l else np.zeros((1, 0))
    count = vals.shape[0]
    if rows.size < NIR_BINS * 10:
        raise InputError(f"only {rows.size} candidate water pixels (with data, NIR below "
                         f"saturation {saturation:g}, glint below {glint_limit:g}) for an "
                         f"automatic deep-water sample; allowed: at least {NIR_BINS * 10}; "
                         "give a sample polygon (--deep-water) or check the water mask")
    nir = vals[nir_band - 1]
    visible = np.mean(np.delete(vals, nir_band - 1, axis=0), axis=0)
    lo, hi = np.percentile(nir, [1.0, 99.0])
    inside = (nir >= lo) & (nir <= hi)
    edges = np.quantile(nir[inside], np.linspace(0, 1, NIR_BINS + 1))
    which = np.clip(np.searchsorted(edges, nir, side="right") - 1, 0, NIR_BINS - 1)
    keep = np.zeros(nir.size, bool)
    for k in range(NIR_BINS):
        idx = np.flatnonzero(inside & (which == k))
        if idx.size == 0:
            continue
        cut = np.quantile(visible[idx], DARK_SHARE)
        keep[idx[visible[idx] <= cut]] = True
    del count
    return AutoSample(rows[keep], cols[keep], nir[keep], vals[:, keep], saturated, step)
