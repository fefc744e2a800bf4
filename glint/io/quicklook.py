"""PNG quicklooks of glint maps (matplotlib).

A quicklook is for looking, not for measuring: the GeoTIFF and NetCDF
outputs carry the values.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["quicklook", "decimation_step"]

#: The caution printed on every quicklook and after every command.
CAUTION = ("Glint maps are statistical estimates, not safety clearances; "
           "never look at the sun or its reflection.")


def decimation_step(shape: tuple[int, int], max_pixels: int = 1200) -> int:
    """Row/column step that keeps a quicklook within ``max_pixels`` per side."""
    return max(1, int(np.ceil(max(shape) / max_pixels)))


#: Smallest top of the colour scale of a glint reflectance quicklook: a map
#: whose glint stays far below this is drawn dark, not stretched into a
#: misleading hot spot.
MIN_REFLECTANCE_SCALE = 0.01


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
    min_vmax: float = MIN_REFLECTANCE_SCALE,
    subtitle: str = "",
    xlabel: str | None = None,
    ylabel: str | None = None,
    geographic: bool = False,
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
        Unit of the CRS axes: ``"m"`` axes are labelled in km.
    vmax : float, optional
        Top of the colour scale. Default: the 99.5th percentile of finite
        values (so one hot pixel does not flatten the map), but at least
        ``min_vmax``.
    min_vmax : float
        Lowest default top of the colour scale.
    xlabel, ylabel : str, optional
        Axis labels; default ``x [km]``/``y [km]`` (or longitude/latitude
        for a geographic grid).
    geographic : bool
        The axes are longitude and latitude.

    Notes
    -----
    Pixels without a value (not seen by the sensor) are drawn grey, and the
    footer says so when there are any.
    """
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt
    from matplotlib.ticker import MaxNLocator

    v = np.asarray(values, dtype=float)
    finite = v[np.isfinite(v)]
    if vmax is None:
        vmax = float(np.percentile(finite, 99.5)) if finite.size else min_vmax
        vmax = max(vmax, min_vmax)
    left, right, bottom, top = extent
    scale, unit = (1000.0, "km") if axis_units == "m" else (1.0, axis_units)
    fig, ax = plt.subplots(figsize=(7.5, 6.5), dpi=110, layout="constrained")
    fig.get_layout_engine().set(rect=(0.0, 0.04, 1.0, 0.96))  # room for the footer
    cmap_obj = matplotlib.colormaps[cmap].with_extremes(bad="#b8c4cc")
    im = ax.imshow(
        np.ma.masked_invalid(v), extent=(left / scale, right / scale, bottom / scale, top / scale),
        origin="upper", cmap=cmap_obj, vmin=0.0, vmax=vmax, interpolation="nearest",
    )
    over = finite.size and float(finite.max()) > vmax
    cax = ax.inset_axes([1.04, 0.0, 0.04, 1.0])  # exactly as tall as the map
    cb = fig.colorbar(im, cax=cax, extend="max" if over else "neither")
    cb.set_label(label)
    ax.ticklabel_format(useOffset=False, style="plain")
    ax.xaxis.set_major_locator(MaxNLocator(nbins=6))
    ax.yaxis.set_major_locator(MaxNLocator(nbins=6))
    if geographic:
        xlabel, ylabel = xlabel or "longitude [°]", ylabel or "latitude [°]"
    ax.set_xlabel(xlabel or f"x [{unit}]")
    ax.set_ylabel(ylabel or f"y [{unit}]")
    ax.set_title(title + (f"\n{subtitle}" if subtitle else ""), fontsize=10)
    footer = CAUTION
    if finite.size < v.size:
        footer = "Grey: not seen by the sensor.  " + footer
    fig.text(0.01, 0.005, footer, fontsize=7, color="#555555", ha="left", va="bottom")
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)
