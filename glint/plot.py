"""PNG quicklooks of glint maps (matplotlib).

A quicklook is for looking, not for measuring: the GeoTIFF and NetCDF
outputs carry the values.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["quicklook", "decimation_step"]

CAUTION = "Statistical estimate, not a safety clearance. Never look at the sun or its reflection."


def decimation_step(shape: tuple[int, int], max_pixels: int = 1200) -> int:
    """Row/column step that keeps a quicklook within ``max_pixels`` per side."""
    return max(1, int(np.ceil(max(shape) / max_pixels)))


def quicklook(
    values: np.ndarray,
    extent: tuple[float, float, float, float],
    path: str | Path,
    *,
    title: str,
    label: str,
    axis_units: str = "m",
    cmap: str = "magma",
    vmax: float | None = None,
    subtitle: str = "",
    xlabel: str | None = None,
    ylabel: str | None = None,
) -> Path:
    """Write a PNG map of ``values`` with a colour bar and axis coordinates.

    Parameters
    ----------
    values : (rows, cols) array
        The (possibly decimated) field, first row at the top (north-up).
    extent : (left, right, bottom, top)
        Outer edges of the field in the grid's CRS.
    path : path-like
        Where to write; the caller handles atomic renaming.
    title, label : str
        Figure title and colour-bar label.
    axis_units : str
        Unit of the CRS axes, shown in the axis labels.
    xlabel, ylabel : str, optional
        Axis labels; default ``x [unit]`` and ``y [unit]``.
    vmax : float, optional
        Top of the colour scale; default the 99.5th percentile of finite
        values (so one hot pixel does not flatten the map).
    """
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    v = np.asarray(values, dtype=float)
    finite = v[np.isfinite(v)]
    if vmax is None:
        vmax = float(np.percentile(finite, 99.5)) if finite.size else 1.0
        if not vmax > 0:
            vmax = float(finite.max()) if finite.size and finite.max() > 0 else 1.0
    left, right, bottom, top = extent
    scale, unit = (1000.0, "km") if axis_units == "m" and max(right - left, top - bottom) > 5000 else (1.0, axis_units)
    fig, ax = plt.subplots(figsize=(7.5, 6.5), dpi=110, layout="constrained")
    cmap_obj = matplotlib.colormaps[cmap].with_extremes(bad="#b8c4cc")
    im = ax.imshow(
        np.ma.masked_invalid(v), extent=(left / scale, right / scale, bottom / scale, top / scale),
        origin="upper", cmap=cmap_obj, vmin=0.0, vmax=vmax, interpolation="nearest",
    )
    cb = fig.colorbar(im, ax=ax, shrink=0.85, extend="max")
    cb.set_label(label)
    ax.ticklabel_format(useOffset=False, style="plain")
    ax.set_xlabel(xlabel or f"x [{unit}]")
    ax.set_ylabel(ylabel or f"y [{unit}]")
    ax.set_title(title + (f"\n{subtitle}" if subtitle else ""), fontsize=10)
    fig.text(0.01, 0.005, CAUTION, fontsize=7, color="#555555", ha="left", va="bottom")
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)
