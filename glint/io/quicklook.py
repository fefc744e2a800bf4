"""PNG quicklooks of glint maps (matplotlib).

A quicklook is for looking, not for measuring: the GeoTIFF and NetCDF
outputs carry the values. :func:`quicklook` draws one field;
:class:`QuicklookWriter` follows :class:`glint.io.outputset.OutputWriter`,
keeps a decimated copy of one variable as the strips go by and draws it at
close.
"""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.io.strips import col_range, row_range

__all__ = ["quicklook", "decimation_step", "QuicklookWriter", "QuicklookStyle", "CAUTION",
           "MIN_REFLECTANCE_SCALE"]

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
    values: ArrayLike,
    extent: tuple[float, float, float, float],
    path: str | os.PathLike[str],
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
        Where to write (inside an output set: the set's temporary path).
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
    engine: Any = fig.get_layout_engine()
    engine.set(rect=(0.0, 0.04, 1.0, 0.96))  # room for the footer
    cmap_obj = matplotlib.colormaps[cmap].with_extremes(bad="#b8c4cc")
    im = ax.imshow(
        np.ma.masked_invalid(v), extent=(left / scale, right / scale, bottom / scale, top / scale),
        origin="upper", cmap=cmap_obj, vmin=0.0, vmax=vmax, interpolation="nearest",
    )
    over = finite.size and float(finite.max()) > vmax
    cax = ax.inset_axes((1.04, 0.0, 0.04, 1.0))  # exactly as tall as the map
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


@dataclass(frozen=True)
class QuicklookStyle:
    """How a quicklook is drawn: the keyword options of :func:`quicklook`."""

    title: str
    label: str
    subtitle: str = ""
    axis_units: str = "m"
    cmap: str = "magma"
    vmax: float | None = None
    xlabel: str | None = None
    ylabel: str | None = None
    geographic: bool = False


class QuicklookWriter:
    """A PNG quicklook of one variable, fed the grid's strips in row order.

    Parameters
    ----------
    path : path-like
        The PNG to write (inside an output set: the set's temporary path).
    shape : (rows, cols)
        Shape of the full field.
    extent : (left, right, bottom, top)
        Outer edges of the field in the axis coordinates.
    variable : str
        The variable drawn.
    style : QuicklookStyle
        Titles, labels and colour scale.
    max_pixels : int, optional
        Largest number of pixels per side; the field is decimated to fit.

    Examples
    --------
    >>> import tempfile, os
    >>> p = os.path.join(tempfile.mkdtemp(), "q.png")
    >>> w = QuicklookWriter(p, (4, 6), (0, 6, 0, 4), "glint_reflectance",
    ...                     QuicklookStyle(title="t", label="l"))
    >>> w.write(slice(0, 4), {"glint_reflectance": np.zeros((4, 6))})
    >>> w.close()
    >>> open(p, "rb").read(4)
    b'\\x89PNG'
    """

    def __init__(self, path: str | os.PathLike[str], shape: tuple[int, int],
                 extent: tuple[float, float, float, float], variable: str, style: QuicklookStyle,
                 *, max_pixels: int = 1200) -> None:
        self.path = Path(path)
        self.shape = (int(shape[0]), int(shape[1]))
        self.extent = extent
        self.variable = variable
        self.style = style
        self.step = decimation_step(self.shape, max_pixels)
        # The decimated copy (every step-th row and column), filled as
        # strips or windows arrive.
        self._field: NDArray[np.float32] | None = np.full(
            (-(-self.shape[0] // self.step), -(-self.shape[1] // self.step)), np.nan, np.float32)
        self._done = False

    def write(self, rows: slice | Sequence[int], arrays: Mapping[str, ArrayLike],
              cols: slice | Sequence[int] | None = None) -> None:
        """Keep every ``step``-th row and column of the strip's (or window's) variable."""
        r0, r1 = row_range(rows, self.shape[0])
        c0, c1 = col_range(cols, self.shape[1])
        if self._field is None:
            return
        values = np.asarray(arrays[self.variable])
        fr, fc = (-r0) % self.step, (-c0) % self.step
        part = values[fr::self.step, fc::self.step]
        i0, j0 = (r0 + fr) // self.step, (c0 + fc) // self.step
        self._field[i0:i0 + part.shape[0], j0:j0 + part.shape[1]] = part

    def close(self) -> None:
        """Draw the PNG."""
        if self._done:
            return
        field = self._field if self._field is not None else np.full((1, 1), np.nan)
        s = self.style
        quicklook(field, self.extent, self.path, title=s.title, label=s.label, subtitle=s.subtitle,
                  axis_units=s.axis_units, cmap=s.cmap, vmax=s.vmax, xlabel=s.xlabel,
                  ylabel=s.ylabel, geographic=s.geographic)
        self._done = True
        self._field = None

    def abort(self) -> None:
        """Drop the decimated copy; the file is removed by the output set."""
        self._field = None
        self._done = True
