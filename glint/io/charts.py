"""PNG charts of survey plans and glint calendars (matplotlib).

Charts are for choosing, not for measuring: the CSV and JSON files beside
them carry the values. Every chart carries the caution it is given in its
footer.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["day_chart", "plan_calendar_chart", "satellite_calendar_chart"]


def _pyplot() -> Any:
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


def _footer(fig: Any, text: str) -> None:
    import textwrap

    fig.text(0.01, 0.005, "\n".join(textwrap.wrap(text, 150)), fontsize=6.5, color="#555555",
             ha="left", va="bottom")


def day_chart(path: str | Path, hours: ArrayLike, best_share: ArrayLike, sun_elevation: ArrayLike,
              windows: Sequence[tuple[float, float, str]], *, title: str, max_share: float,
              elevation_limits: tuple[float, float], timezone_label: str, caution: str) -> Path:
    """One day of a survey plan: best photo glint share against local time.

    Parameters
    ----------
    path : path-like
        Where to write the PNG (the caller handles atomic renaming).
    hours : array_like
        Local time of each step [h since local midnight].
    best_share : array_like
        Smallest predicted share of the photo above the glint threshold over
        the candidate poses (0-1; NaN at night).
    sun_elevation : array_like
        Sun elevation [°] at each step.
    windows : sequence of (start_hour, end_hour, label)
        Time windows to shade.
    title : str
    max_share : float
        The survey's largest acceptable share (drawn as a line).
    elevation_limits : (float, float)
        The survey's sun-elevation limits [°] (drawn on the second axis).
    timezone_label : str
        Shown in the x-axis label.
    caution : str
        Footer text.
    """
    plt = _pyplot()
    h = np.asarray(hours, float)
    share = np.asarray(best_share, float) * 100.0
    elev = np.asarray(sun_elevation, float)
    fig, ax = plt.subplots(figsize=(9.0, 4.8), dpi=110, layout="constrained")
    fig.get_layout_engine().set(rect=(0.0, 0.05, 1.0, 0.95))
    for k, (a, b, label) in enumerate(windows):
        ax.axvspan(a, max(b, a + 0.05), color="#7fc97f", alpha=0.35, lw=0,
                   label="window meeting every limit" if k == 0 else None)
        ax.text((a + b) / 2, 0.98, label, transform=ax.get_xaxis_transform(), ha="center",
                va="top", fontsize=7, color="#1b5e20")
    ax.plot(h, share, color="#c2185b", lw=1.6, label="best predicted glint share of the photo")
    ax.axhline(max_share * 100.0, color="#c2185b", lw=0.9, ls="--",
               label=f"largest acceptable share ({max_share * 100:g} %)")
    top = np.nanmax(share) if np.isfinite(share).any() else 10.0
    ax.set_ylim(0.0, max(5.0, min(100.0, top * 1.1), max_share * 130.0))
    ax.set_xlim(0, 24)
    ax.set_xticks(range(0, 25, 2))
    ax.set_xlabel(f"local time [h] ({timezone_label})")
    ax.set_ylabel("share of the photo above the glint threshold [%]")
    ax.grid(alpha=0.3)
    ax2 = ax.twinx()
    ax2.plot(h, elev, color="#f9a825", lw=1.2, label="sun elevation")
    for lim in elevation_limits:
        ax2.axhline(lim, color="#f9a825", lw=0.8, ls=":")
    ax2.set_ylim(0, 90)
    ax2.set_ylabel("sun elevation [°] (dotted: limits)")
    lines = ax.get_legend_handles_labels()
    lines2 = ax2.get_legend_handles_labels()
    ax.legend(lines[0] + lines2[0], lines[1] + lines2[1], loc="upper left", fontsize=7,
              framealpha=0.85)
    ax.set_title(title, fontsize=10)
    _footer(fig, caution)
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)


def plan_calendar_chart(path: str | Path, dates: Sequence[Any], slot_hours: ArrayLike,
                        best_share: ArrayLike, outside_limits: ArrayLike,
                        windows: Sequence[tuple[int, float, float]], *, title: str,
                        max_share: float, timezone_label: str, caution: str) -> Path:
    """Date against local time of day, coloured by the best achievable share.

    Parameters
    ----------
    dates : sequence of datetime.date
        One per column.
    slot_hours : array_like, shape (slots,)
        Local time of day of each row [h].
    best_share : array_like, shape (slots, dates)
        Best predicted share (0-1); NaN at night.
    outside_limits : array_like of bool, shape (slots, dates)
        Sun elevation or wind outside the limits (drawn hatched grey).
    windows : sequence of (date_index, start_hour, end_hour)
        Outlined.
    """
    plt = _pyplot()
    from matplotlib.colors import BoundaryNorm, ListedColormap
    from matplotlib.patches import Patch, Rectangle

    v = np.asarray(best_share, float) * 100.0
    out = np.asarray(outside_limits, bool)
    hrs = np.asarray(slot_hours, float)
    nd = len(dates)
    dh = float(hrs[1] - hrs[0]) if hrs.size > 1 else 1.0
    fig, ax = plt.subplots(figsize=(min(16.0, max(9.0, 5.0 + 0.28 * nd)), 6.0), dpi=110,
                           layout="constrained")
    fig.get_layout_engine().set(rect=(0.0, 0.05, 1.0, 0.95))
    m = max_share * 100.0
    bounds = [0.0, m / 4, m / 2, m, 2 * m, 5 * m, 100.0]
    bounds = sorted(set(b for b in bounds if b <= 100.0))
    cmap: Any = ListedColormap(["#1a9850", "#91cf60", "#d9ef8b", "#fdae61", "#f46d43",
                                "#a50026"][:len(bounds) - 1]).with_extremes(bad="#263238")
    norm = BoundaryNorm(bounds, cmap.N)
    extent = (-0.5, nd - 0.5, hrs[-1] + dh / 2, hrs[0] - dh / 2)
    im = ax.imshow(np.ma.masked_invalid(v), aspect="auto", extent=extent, cmap=cmap, norm=norm,
                   interpolation="nearest")
    shade = np.ma.masked_where(~(out & np.isfinite(v)), np.ones_like(v))
    ax.imshow(shade, aspect="auto", extent=extent, cmap=ListedColormap(["#cfd8dc"]), alpha=0.75,
              interpolation="nearest")
    for di, a, b in windows:
        ax.add_patch(Rectangle((di - 0.45, a - dh / 2), 0.9, b - a + dh, fill=False, lw=1.2,
                               ec="#0d47a1"))
    ax.set_ylim(24, 0)
    ax.set_yticks(range(0, 25, 2))
    ax.set_ylabel(f"local time of day [h] ({timezone_label})")
    step = max(1, nd // 15)
    ax.set_xticks(range(0, nd, step))
    ax.set_xticklabels([dates[i].isoformat() for i in range(0, nd, step)], rotation=45, ha="right",
                       fontsize=8)
    ax.set_xlabel("local date")
    cb = fig.colorbar(im, ax=ax, pad=0.01)
    cb.set_label("best predicted share of the photo above the glint threshold [%]")
    ax.legend(handles=[Patch(fc="#263238", label="night"),
                       Patch(fc="#cfd8dc", label="sun elevation or wind outside the limits"),
                       Patch(fill=False, ec="#0d47a1", label="window meeting every limit")],
              loc="lower left", fontsize=7, framealpha=0.9)
    ax.set_title(title, fontsize=10)
    _footer(fig, caution)
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)


def satellite_calendar_chart(path: str | Path, dates: Sequence[Any], offsets_km: ArrayLike,
                             reflectance: ArrayLike, share_above: ArrayLike, *, threshold: float,
                             title: str, caution: str) -> Path:
    """Glint at a site for each day and each across-track position.

    Parameters
    ----------
    dates : sequence of datetime.date
    offsets_km : array_like, shape (positions,)
        Signed distance of the site from the ground track [km], positive to
        the right of the direction of flight.
    reflectance : array_like, shape (positions, dates)
        Predicted glint reflectance factor.
    share_above : array_like, shape (dates,)
        Share of the positions above ``threshold`` (0-1).
    """
    plt = _pyplot()
    from matplotlib.colors import LogNorm

    r = np.asarray(reflectance, float)
    off = np.asarray(offsets_km, float)
    nd = len(dates)
    fig, (ax, ax2) = plt.subplots(2, 1, figsize=(min(16.0, max(9.0, 6.0 + 0.12 * nd)), 7.0), dpi=110,
                                  height_ratios=[3, 1], sharex=True, layout="constrained")
    fig.get_layout_engine().set(rect=(0.0, 0.05, 1.0, 0.95))
    lo = max(1e-5, threshold / 100.0)
    clipped = np.clip(np.where(np.isfinite(r), r, np.nan), lo, None)
    im = ax.imshow(np.ma.masked_invalid(clipped), aspect="auto", origin="lower",
                   extent=(-0.5, nd - 0.5, off[0], off[-1]), cmap="magma",
                   norm=LogNorm(vmin=lo, vmax=max(threshold * 10.0, float(np.nanmax(clipped))
                                if np.isfinite(clipped).any() else threshold * 10.0)),
                   interpolation="nearest")
    if np.isfinite(r).any() and nd > 1:
        ax.contour(np.arange(nd), off, r, levels=[threshold], colors="#4fc3f7", linewidths=1.0)
    cb = fig.colorbar(im, ax=ax, pad=0.01)
    cb.set_label("glint reflectance factor at the site [1]")
    ax.set_ylabel("site's distance from the ground track [km]\n(+ right of the flight direction)")
    ax.set_title(title + f"\nblue line: glint threshold {threshold:g}", fontsize=10)
    share = np.asarray(share_above, float) * 100.0
    ax2.bar(np.arange(nd), share, color="#c2185b", width=0.8)
    ax2.set_ylim(0, 100)
    ax2.set_ylabel("swath positions\nabove threshold [%]")
    step = max(1, nd // 15)
    ax2.set_xticks(range(0, nd, step))
    ax2.set_xticklabels([dates[i].isoformat() for i in range(0, nd, step)], rotation=45,
                        ha="right", fontsize=8)
    ax2.set_xlabel("date of the overpass")
    ax2.grid(axis="y", alpha=0.3)
    _footer(fig, caution)
    fig.savefig(path, format="png")
    plt.close(fig)
    return Path(path)
