"""Quicklooks of imagery runs: the image, the predicted glint and the result
side by side, with the deep-water sample outlined.

Images are decimated while they stream past (every ``step``-th row and
column, at most :data:`QUICKLOOK_PIXELS` per side), so a quicklook never
holds the whole image. True colour is stretched per band between the 2nd and
98th percentiles of the pixels with data (common practice).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from glint.errors import InputError
from glint.geo.image import ImageInfo
from glint.io.quicklook import CAUTION, decimation_step

__all__ = ["default_rgb", "check_rgb", "Decimated", "stretch", "side_by_side", "QUICKLOOK_PIXELS"]

#: Longest side of each quicklook panel [pixels].
QUICKLOOK_PIXELS = 700
#: Percentiles of the true-colour stretch.
STRETCH_PERCENTILES = (2.0, 98.0)


def default_rgb(image: ImageInfo) -> tuple[int, ...]:
    """Bands shown as red, green, blue: from the image's colour
    interpretation when it names them, else bands 1, 2, 3 (one grey band
    for images with fewer than three)."""
    names = [getattr(c, "name", str(c)) for c in image.colorinterp]
    if all(n in names for n in ("red", "green", "blue")):
        return tuple(names.index(n) + 1 for n in ("red", "green", "blue"))
    return (1, 2, 3) if image.count >= 3 else (1,)


def check_rgb(image: ImageInfo, rgb: Sequence[int] | None) -> tuple[int, ...]:
    """The quicklook bands, checked against the image."""
    if rgb is None:
        return default_rgb(image)
    if len(rgb) not in (1, 3):
        raise InputError(f"quicklook bands {tuple(rgb)!r} must be three (R,G,B) or one band")
    return tuple(image.check_band(b, "quicklook band") for b in rgb)


@dataclass
class Decimated:
    """Every ``step``-th row and column of named fields, collected strip by strip."""

    step: int
    fields: dict[str, list[NDArray[Any]]] = field(default_factory=dict)

    @classmethod
    def for_image(cls, image: ImageInfo) -> Decimated:
        return cls(decimation_step(image.grid.shape, QUICKLOOK_PIXELS))

    def add(self, rows: slice, **arrays: NDArray[Any]) -> None:
        first = (-rows.start) % self.step
        for name, a in arrays.items():
            # a copy: a view would keep the whole strip alive
            self.fields.setdefault(name, []).append(
                np.array(np.asarray(a)[..., first::self.step, ::self.step]))

    def get(self, name: str) -> NDArray[Any]:
        parts = self.fields[name]
        return np.concatenate(parts, axis=-2)


def stretch(bands: NDArray[Any], valid: NDArray[np.bool_],
            limits: Sequence[tuple[float, float]] | None = None) -> tuple[NDArray[np.float64], list[tuple[float, float]]]:
    """(rows, cols, 3) display image in [0, 1] from (k, rows, cols) bands,
    percentile-stretched per band (grey for one band); returns the limits
    used so that a second image can share them."""
    b = np.asarray(bands, dtype=float)
    used = []
    out = np.zeros(b.shape[1:] + (3,))
    for i in range(b.shape[0]):
        vals = b[i][valid & np.isfinite(b[i])]
        if limits is not None:
            lo, hi = limits[i]
        elif vals.size:
            lo, hi = (float(v) for v in np.percentile(vals, STRETCH_PERCENTILES))
        else:
            lo, hi = 0.0, 1.0
        hi = hi if hi > lo else lo + 1.0
        used.append((lo, hi))
        chan = np.clip((b[i] - lo) / (hi - lo), 0.0, 1.0)
        if b.shape[0] == 1:
            out[...] = chan[..., None]
        else:
            out[..., i] = chan
    return out, used


def side_by_side(panels: Sequence[tuple[str, Any]], path: str | Path, *, title: str,
                 extent: tuple[float, float, float, float], sample: NDArray[np.bool_] | None = None,
                 footer: str = "", sample_points: bool = False) -> Path:
    """A PNG of panels side by side.

    Parameters
    ----------
    panels : sequence of (title, data)
        ``data`` is a (rows, cols, 3) display image in [0, 1] (RGBA with
        NaN shown grey) or a dict ``{"values": 2-D array, "label": str,
        "cmap": str}`` drawn with a colour bar.
    path : path-like
        PNG to write (a temporary path of an output set).
    title : str
    extent : (left, right, bottom, top)
        Edges in the image's CRS units.
    sample : 2-D bool array, optional
        Deep-water sample, outlined in cyan on every panel (drawn as dots
        with ``sample_points``, for scattered automatic samples).
    footer : str
        Extra text before the caution.
    """
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    n = len(panels)
    fig, axes = plt.subplots(1, n, figsize=(4.6 * n, 4.9), dpi=100, layout="constrained",
                             squeeze=False)
    fig.get_layout_engine().set(rect=(0.0, 0.05, 1.0, 0.95))  # type: ignore[union-attr,call-arg]
    for ax, (name, data) in zip(axes[0], panels):
        if isinstance(data, dict):
            v = np.asarray(data["values"], dtype=float)
            finite = v[np.isfinite(v)]
            vmax = data.get("vmax") or (float(np.percentile(finite, 99.5)) if finite.size else 1.0)
            cmap = matplotlib.colormaps[data.get("cmap", "magma")].with_extremes(bad="#b8c4cc")
            im = ax.imshow(np.ma.masked_invalid(v), extent=extent, cmap=cmap, vmin=0.0,
                           vmax=max(vmax, 1e-12), interpolation="nearest")
            fig.colorbar(im, ax=ax, shrink=0.75, label=data.get("label", ""))
        else:
            ax.imshow(np.asarray(data), extent=extent, interpolation="nearest")
        if sample is not None and np.any(sample) and sample_points:
            r, c = np.nonzero(sample)
            h, w = sample.shape
            x = extent[0] + (c + 0.5) / w * (extent[1] - extent[0])
            y = extent[3] - (r + 0.5) / h * (extent[3] - extent[2])
            ax.scatter(x, y, s=0.6, c="cyan", marker=".", linewidths=0)
        elif sample is not None and np.any(sample):
            ax.contour(np.asarray(sample, dtype=float), levels=[0.5], colors="cyan",
                       linewidths=1.2, extent=extent, origin="upper")
        ax.set_title(name, fontsize=10)
        ax.ticklabel_format(useOffset=False, style="plain")
        ax.tick_params(labelsize=7)
    fig.suptitle(title, fontsize=11)
    text = (footer + "  " if footer else "") + CAUTION
    fig.text(0.01, 0.01, text, fontsize=7, color="#555555", ha="left", va="bottom")
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)
