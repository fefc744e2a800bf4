"""PNG quicklooks of glint maps (matplotlib).

A quicklook is for looking, not for measuring: the GeoTIFF and NetCDF
outputs carry the values. Every quicklook of a variable uses the same fixed
colour scale (:data:`QUICKLOOK_SCALES`; logarithmic for the glint
quantities), so maps of different scenes, times and sensors compare at a
glance; the class thresholds are marked on the colour bar. Map grids get
their CRS on the axes, a scale bar and a north arrow (true north); the
cautions are drawn in a framed box under the map.

:func:`quicklook` draws one field, :func:`class_quicklook` the glint classes
with a legend; :class:`QuicklookWriter` follows
:class:`glint.io.outputset.OutputWriter`, keeps a decimated copy of one
variable as the strips go by and draws it at close.
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError
from glint.io.strips import col_range, row_range
from glint.variables import CLASS_NODATA

__all__ = ["quicklook", "class_quicklook", "decimation_step", "QuicklookWriter",
           "QuicklookStyle", "QuicklookScale", "QUICKLOOK_SCALES", "CAUTION", "FLIGHT_CAUTION",
           "class_palette", "check_quicklook_variables"]

#: The caution printed on every quicklook and after every command.
CAUTION = ("Glint maps are statistical estimates, not safety clearances; "
           "never look at the sun or its reflection.")

#: The caution of every output that concerns a drone flight.
FLIGHT_CAUTION = ("Fly only where and when local aviation rules allow, under licensed practice; "
                  "a glint forecast is no flight clearance.")

#: Colour of pixels without a value (not seen by the sensor).
_UNSEEN = "#9aa5ad"


@dataclass(frozen=True)
class QuicklookScale:
    """The fixed colour scale of one variable's quicklooks."""

    kind: str      # "log" or "linear"
    vmin: float
    vmax: float
    cmap: str
    label: str


#: The one colour scale of each variable, used by every quicklook (maps and
#: camera views). Glint quantities span orders of magnitude, so their scale
#: is logarithmic, from 1e-4 (reflectance) or 1e-5 (radiance, fraction) to
#: 1; values below the scale are drawn in its darkest colour, values above
#: in its brightest (the colour bar shows an arrow).
QUICKLOOK_SCALES: dict[str, QuicklookScale] = {
    "glint_reflectance": QuicklookScale("log", 1e-4, 1.0, "magma", "glint reflectance factor [1]"),
    "glint_radiance": QuicklookScale("log", 1e-5, 1.0, "magma",
                                     "normalised glint radiance L/E [sr⁻¹]"),
    "glint_fraction": QuicklookScale("log", 1e-5, 1.0, "magma", "glint fraction [1]"),
    "glint_angle": QuicklookScale("linear", 0.0, 90.0, "viridis_r", "glint angle [°]"),
    "sun_zenith": QuicklookScale("linear", 0.0, 90.0, "cividis", "sun zenith angle [°]"),
    "view_zenith": QuicklookScale("linear", 0.0, 90.0, "cividis", "view zenith angle [°]"),
    "sun_azimuth": QuicklookScale("linear", 0.0, 360.0, "twilight",
                                  "sun azimuth [°, clockwise from true north]"),
    "view_azimuth": QuicklookScale("linear", 0.0, 360.0, "twilight",
                                   "view azimuth [°, clockwise from true north]"),
}

#: Variables a quicklook can show: every scale above, and the classes.
QUICKLOOK_VARIABLES: tuple[str, ...] = (*QUICKLOOK_SCALES, "glint_class")


def check_quicklook_variables(variables: Sequence[str]) -> tuple[str, ...]:
    """The variables as a tuple, or an InputError naming one that cannot be drawn."""
    for v in variables:
        if v not in QUICKLOOK_VARIABLES:
            raise InputError(f"no quicklook can show variable {v!r}; drawable: "
                             f"{', '.join(QUICKLOOK_VARIABLES)}")
    return tuple(variables)


def decimation_step(shape: tuple[int, int], max_pixels: int = 1200) -> int:
    """Row/column step that keeps a quicklook within ``max_pixels`` per side."""
    return max(1, int(np.ceil(max(shape) / max_pixels)))


def class_palette(n_classes: int) -> list[tuple[int, int, int]]:
    """Colours of the glint classes, ordered by severity (our own choice).

    The lowest class is a pale blue-grey; higher classes run from light
    yellow through orange to a saturated bright red for the highest, each
    darker and more saturated than the one below, so the most severe class
    is also the most conspicuous.

    Examples
    --------
    >>> class_palette(3)
    [(217, 227, 234), (253, 174, 97), (215, 25, 28)]
    """
    if n_classes < 1:
        raise InputError(f"n_classes must be >= 1; got {n_classes!r}")
    low = (217, 227, 234)
    if n_classes == 1:
        return [low]
    stops = [(254, 224, 139), (253, 174, 97), (244, 109, 67), (215, 25, 28)]
    if n_classes == 2:
        return [low, stops[-1]]
    if n_classes == 3:
        return [low, stops[1], stops[-1]]
    out = [low]
    for k in range(n_classes - 1):
        x = k / (n_classes - 2) * (len(stops) - 1)
        i = min(int(x), len(stops) - 2)
        f = x - i
        (r0, g0, b0), (r1, g1, b1) = stops[i], stops[i + 1]
        out.append((round(r0 + (r1 - r0) * f), round(g0 + (g1 - g0) * f),
                    round(b0 + (b1 - b0) * f)))
    return out


@dataclass(frozen=True)
class QuicklookStyle:
    """How a quicklook is drawn.

    Attributes
    ----------
    title, subtitle : str
        Figure title and second title line.
    crs_name : str or None
        Name of the map's CRS, shown on both axes; None for image axes.
    axis_units : str
        Unit of the CRS axes (``"m"`` axes are labelled in km).
    geographic : bool
        The axes are longitude and latitude.
    convergence : float
        Meridian convergence at the map centre [°] (true north is this far
        anticlockwise from grid north): turns the north arrow.
    image_axes : bool
        The axes are image columns and rows (camera views): no scale bar or
        north arrow.
    marks : tuple of (value, name)
        Class thresholds in the drawn variable's unit, marked on the colour
        bar.
    cautions : tuple of str
        Cautions printed in the framed box under the map.
    class_names, class_thresholds, class_variable_label
        The glint classes (for :func:`class_quicklook`).
    """

    title: str
    subtitle: str = ""
    crs_name: str | None = None
    axis_units: str = "m"
    geographic: bool = False
    convergence: float = 0.0
    image_axes: bool = False
    marks: tuple[tuple[float, str], ...] = ()
    cautions: tuple[str, ...] = (CAUTION,)
    class_names: tuple[str, ...] = ()
    class_thresholds: tuple[float, ...] = ()
    class_variable_label: str = ""
    extra: dict[str, Any] = field(default_factory=dict)


def _pyplot() -> Any:
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


def _figure(shape: tuple[int, ...], extra_height: float = 0.0) -> tuple[Any, Any, Any]:
    plt = _pyplot()
    aspect = shape[0] / max(shape[1], 1)
    height = min(max(6.4 * aspect, 3.0), 8.0) + 2.2 + extra_height
    fig, ax = plt.subplots(figsize=(8.4, height), dpi=110, layout="constrained")
    return plt, fig, ax


def _caution_box(fig: Any, lines: Sequence[str], below: float = 0.0) -> float:
    """The cautions, legible: 9.5 pt dark text in a framed yellow box at the
    bottom; the map keeps the space above it and ``below`` inches more.
    Returns the height of the box as a fraction of the figure."""
    import textwrap

    text = "\n".join(w for line in lines for w in textwrap.wrap(line, 105))
    n = text.count("\n") + 1
    frac = (0.25 + 0.17 * n) / fig.get_figheight()
    extra = below / fig.get_figheight()
    fig.get_layout_engine().set(rect=(0.0, frac + extra, 1.0, 1.0 - frac - extra))
    fig.text(0.5, 0.008, text, ha="center", va="bottom", fontsize=9.5, color="#3a2a00",
             bbox={"boxstyle": "round,pad=0.4", "fc": "#fff4c2", "ec": "#b38f00", "lw": 1.0})
    return frac


def _nice_length(target: float) -> float:
    exp = 10.0 ** math.floor(math.log10(target))
    return max(m * exp for m in (1.0, 2.0, 5.0) if m * exp <= target)


def _map_axes(ax: Any, style: QuicklookStyle, scale: float, unit: str) -> None:
    """Axis labels with the CRS; on map grids a scale bar and a north arrow."""
    import matplotlib.patheffects as pe
    from matplotlib.ticker import MaxNLocator

    ax.ticklabel_format(useOffset=False, style="plain")
    ax.xaxis.set_major_locator(MaxNLocator(nbins=6))
    ax.yaxis.set_major_locator(MaxNLocator(nbins=6))
    if style.image_axes:
        ax.set_xlabel("image column [px]")
        ax.set_ylabel("image row [px]")
        return
    crs = f", {style.crs_name}" if style.crs_name else ""
    if style.geographic:
        ax.set_xlabel(f"longitude [°]{crs}")
        ax.set_ylabel(f"latitude [°]{crs}")
    else:
        ax.set_xlabel(f"x (easting) [{unit}]{crs}")
        ax.set_ylabel(f"y (northing) [{unit}]{crs}")
    # Scale bar, in metres on the ground.
    x0, x1 = ax.get_xlim()
    y0, y1 = ax.get_ylim()
    metres_per_unit = scale
    if style.geographic:  # degrees of longitude at the map's middle latitude
        metres_per_unit = 111_320.0 * math.cos(math.radians(0.5 * (y0 + y1)))
    if not style.geographic and style.axis_units not in ("m", "km"):
        metres_per_unit = 0.0  # unknown unit (feet, ...): no scale bar
    if metres_per_unit > 0:
        from mpl_toolkits.axes_grid1.anchored_artists import (  # type: ignore[import-untyped]
            AnchoredSizeBar,
        )

        length_m = _nice_length(abs(x1 - x0) * metres_per_unit / 5.0)
        text = f"{length_m / 1000:g} km" if length_m >= 1000 else f"{length_m:g} m"
        bar = AnchoredSizeBar(ax.transData, length_m / metres_per_unit, text, "lower left",
                              pad=0.5, color="white", frameon=True,
                              size_vertical=abs(y1 - y0) / 150, fontproperties={"size": 9})
        bar.patch.set(facecolor="black", alpha=0.55, edgecolor="none")
        ax.add_artist(bar)
    # North arrow: true north, gamma anticlockwise from grid north.
    g = math.radians(style.convergence)
    cx, cy, ln = 0.93, 0.84, 0.10
    dx, dy = -math.sin(g) * ln, math.cos(g) * ln
    stroke = [pe.withStroke(linewidth=4, foreground="black")]
    ax.annotate("", xy=(cx + dx / 2, cy + dy / 2), xytext=(cx - dx / 2, cy - dy / 2),
                xycoords="axes fraction",
                arrowprops={"arrowstyle": "-|>,head_width=0.45,head_length=0.9",
                            "color": "white", "lw": 2.2, "path_effects": stroke})
    ax.text(cx + dx * 0.8, cy + dy * 0.8, "N", transform=ax.transAxes, ha="center",
            va="center", color="white", fontsize=12, fontweight="bold",
            path_effects=[pe.withStroke(linewidth=3, foreground="black")])


def _extent_scale(extent: tuple[float, float, float, float],
                  style: QuicklookStyle) -> tuple[tuple[float, float, float, float], float, str]:
    """Extent in axis units, metres per axis unit and the unit's name."""
    left, right, bottom, top = extent
    if style.image_axes or style.geographic:
        return (left, right, bottom, top), 1.0, ("px" if style.image_axes else "°")
    if style.axis_units == "m":
        return (left / 1000, right / 1000, bottom / 1000, top / 1000), 1000.0, "km"
    return (left, right, bottom, top), (1000.0 if style.axis_units == "km" else 1.0), \
        style.axis_units


def quicklook(values: ArrayLike, extent: tuple[float, float, float, float],
              path: str | os.PathLike[str], *, variable: str, style: QuicklookStyle) -> Path:
    """Write a PNG of one variable on its fixed scale (:data:`QUICKLOOK_SCALES`).

    Parameters
    ----------
    values : (rows, cols) array
        The (possibly decimated) field, first row at the top (north-up).
    extent : (left, right, bottom, top)
        Outer edges of the field in the grid's CRS (or image pixels).
    path : path-like
        Where to write (inside an output set: the set's temporary path).
    variable : str
        Name of the variable: selects the colour scale.
    style : QuicklookStyle
        Titles, axes, threshold marks and cautions.

    Raises
    ------
    InputError
        A variable without a quicklook scale.
    """
    import matplotlib
    import matplotlib.colors as mc

    if variable not in QUICKLOOK_SCALES:
        check_quicklook_variables([variable])
        raise InputError(f"{variable!r} is drawn by class_quicklook, not quicklook")
    s = QUICKLOOK_SCALES[variable]
    v = np.asarray(values, dtype=float)
    plt, fig, ax = _figure(v.shape)
    finite = v[np.isfinite(v)]
    if s.kind == "log":
        norm: Any = mc.LogNorm(s.vmin, s.vmax, clip=False)
        shown = np.where(np.isfinite(v) & (v <= 0.0), 0.5 * s.vmin, v)  # zero glint: darkest
    else:
        norm = mc.Normalize(s.vmin, s.vmax)
        shown = v
    cmap = matplotlib.colormaps[s.cmap].with_extremes(bad=_UNSEEN)
    (left, right, bottom, top), scale, unit = _extent_scale(extent, style)
    im = ax.imshow(np.ma.masked_invalid(shown), extent=(left, right, bottom, top), origin="upper",
                   cmap=cmap, norm=norm, interpolation="nearest")
    below = bool(finite.size) and float(finite.min()) < s.vmin
    over = bool(finite.size) and float(finite.max()) > s.vmax
    extend = {(True, True): "both", (True, False): "min", (False, True): "max"}.get(
        (below, over), "neither")
    cax = ax.inset_axes([1.03, 0.0, 0.04, 1.0])
    cb = fig.colorbar(im, cax=cax, extend=extend)
    cb.set_label(s.label + (" (log scale)" if s.kind == "log" else ""))
    for value, name in style.marks:
        if s.vmin <= value <= s.vmax:
            cb.ax.axhline(value, color="#00e5ff", lw=2.0)
            cb.ax.text(-0.25, value, f"{name} ≥ {value:.2g}", transform=cb.ax.get_yaxis_transform(),
                       ha="right", va="center", fontsize=8, color="black",
                       bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "#00a5b8",
                             "alpha": 0.85})
    _map_axes(ax, style, scale, unit)
    ax.set_title(style.title + (f"\n{style.subtitle}" if style.subtitle else ""), fontsize=10)
    lines = list(style.cautions)
    if finite.size < v.size:
        lines.insert(0, "Grey: not seen by the sensor.")
    _caution_box(fig, lines)
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)


def class_quicklook(classes: ArrayLike, extent: tuple[float, float, float, float],
                    path: str | os.PathLike[str], *, style: QuicklookStyle) -> Path:
    """Write a PNG of the glint classes with a legend of names, ranges and shares.

    Parameters
    ----------
    classes : (rows, cols) uint8 array
        Class numbers (``CLASS_NODATA`` = not seen).
    extent, path
        As :func:`quicklook`.
    style : QuicklookStyle
        Needs ``class_names``, ``class_thresholds`` and
        ``class_variable_label`` (the classified variable and its unit).
    """
    import matplotlib.colors as mc
    from matplotlib.patches import Patch

    names = list(style.class_names)
    n = len(names)
    if n == 0 or len(style.class_thresholds) != n - 1:
        raise InputError(f"class_quicklook needs one more class name than thresholds; got "
                         f"{names!r} and {list(style.class_thresholds)!r}")
    colours = [(r / 255, g / 255, b / 255) for r, g, b in class_palette(n)]
    cmap = mc.ListedColormap(colours).with_extremes(bad=_UNSEEN)
    norm = mc.BoundaryNorm(np.arange(-0.5, n + 0.5), n)
    c = np.asarray(classes)
    valid = c != CLASS_NODATA
    plt, fig, ax = _figure(c.shape, 1.1 + 0.22 * ((n + 2) // 2))
    (left, right, bottom, top), scale, unit = _extent_scale(extent, style)
    ax.imshow(np.ma.masked_where(~valid, c), extent=(left, right, bottom, top), origin="upper",
              cmap=cmap, norm=norm, interpolation="nearest")
    counts = np.bincount(c[valid].ravel().astype(np.int64), minlength=n)[:n]
    total = max(int(valid.sum()), 1)
    t = style.class_thresholds
    handles = []
    for i, name in enumerate(names):
        if n == 1:
            rng = "all values"
        elif i == 0:
            rng = f"< {t[0]:g}"
        elif i == n - 1:
            rng = f"≥ {t[-1]:g}"
        else:
            rng = f"{t[i - 1]:g} – {t[i]:g}"
        handles.append(Patch(facecolor=colours[i], edgecolor="#444444",
                             label=f"{name}: {rng}  ({100.0 * counts[i] / total:.1f} %)"))
    if (~valid).any():
        handles.append(Patch(facecolor=_UNSEEN, edgecolor="#444444", label="not seen"))
    _map_axes(ax, style, scale, unit)
    ax.set_title(style.title + (f"\n{style.subtitle}" if style.subtitle else ""), fontsize=10)
    legend_rows = (len(handles) + 1) // 2
    box = _caution_box(fig, list(style.cautions), below=0.45 + 0.2 * legend_rows)
    fig.legend(handles=handles, title=f"glint class of {style.class_variable_label} "
               "(share of seen pixels)", loc="lower center", bbox_to_anchor=(0.5, box + 0.01),
               ncol=2, fontsize=9, title_fontsize=9, frameon=True)
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)


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
        The variable drawn: one of :data:`QUICKLOOK_SCALES`, or
        ``"glint_class"`` for the class map with its legend.
    style : QuicklookStyle
        Titles, axes, marks and cautions.
    max_pixels : int, optional
        Largest number of pixels per side; the field is decimated to fit.

    Examples
    --------
    >>> import tempfile, os
    >>> p = os.path.join(tempfile.mkdtemp(), "q.png")
    >>> w = QuicklookWriter(p, (4, 6), (0, 6, 0, 4), "glint_reflectance",
    ...                     QuicklookStyle(title="t", image_axes=True))
    >>> w.write(slice(0, 4), {"glint_reflectance": np.zeros((4, 6))})
    >>> w.close()
    >>> open(p, "rb").read(4)
    b'\\x89PNG'
    """

    def __init__(self, path: str | os.PathLike[str], shape: tuple[int, int],
                 extent: tuple[float, float, float, float], variable: str, style: QuicklookStyle,
                 *, max_pixels: int = 1200) -> None:
        check_quicklook_variables([variable])
        self.path = Path(path)
        self.shape = (int(shape[0]), int(shape[1]))
        self.extent = extent
        self.variable = variable
        self.style = style
        self.step = decimation_step(self.shape, max_pixels)
        # The decimated copy (every step-th row and column), filled as
        # strips or windows arrive.
        classes = variable == "glint_class"
        self._field: NDArray[Any] | None = np.full(
            (-(-self.shape[0] // self.step), -(-self.shape[1] // self.step)),
            CLASS_NODATA if classes else np.nan, np.uint8 if classes else np.float32)
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
        if self._field is not None:
            data = self._field
        elif self.variable == "glint_class":
            data = np.full((1, 1), CLASS_NODATA, dtype=np.uint8)
        else:
            data = np.full((1, 1), np.nan)
        if self.variable == "glint_class":
            class_quicklook(data, self.extent, self.path, style=self.style)
        else:
            quicklook(data, self.extent, self.path, variable=self.variable, style=self.style)
        self._done = True
        self._field = None

    def abort(self) -> None:
        """Drop the decimated copy; the file is removed by the output set."""
        self._field = None
        self._done = True
