"""Draw the angle-convention diagrams of docs/sensors.md.

Run from the repository root:

    python docs/draw_sensor_diagrams.py

writes docs/img/sensor-<kind>.png for every sensor kind. The drawings are
schematic (not to scale) and use only matplotlib.
"""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.patches import Arc, FancyArrowPatch, Polygon, Rectangle  # noqa: E402

OUT = Path(__file__).resolve().parent / "img"
SENSOR = "#c0392b"
GROUND = "#1f618d"
NOTE = "#555555"


def _arrow(ax, p, q, color="k", lw=1.5, style="-|>", ls="-"):
    ax.add_patch(FancyArrowPatch(p, q, arrowstyle=style, mutation_scale=12, color=color, lw=lw,
                                 linestyle=ls))


def _angle(ax, centre, r, a0, a1, label, color="k", offset=1.25):
    """Arc from math angle a0 to a1 [deg] with a label."""
    lo, hi = min(a0, a1), max(a0, a1)
    ax.add_patch(Arc(centre, 2 * r, 2 * r, theta1=lo, theta2=hi, color=color, lw=1.2))
    mid = np.radians((lo + hi) / 2)
    ax.text(centre[0] + offset * r * np.cos(mid), centre[1] + offset * r * np.sin(mid), label,
            ha="center", va="center", color=color, fontsize=10)


def _water(ax, x0, x1, y=0.0):
    ax.fill_between([x0, x1], [y - 0.5, y - 0.5], [y, y], color="#d6eaf8", zorder=0)
    ax.plot([x0, x1], [y, y], color=GROUND, lw=1.5)


def _finish(fig, axes, name, title):
    for ax in np.atleast_1d(axes):
        ax.set_aspect("equal")
        ax.axis("off")
    fig.suptitle(title, fontsize=12)
    fig.tight_layout()
    OUT.mkdir(parents=True, exist_ok=True)
    fig.savefig(OUT / f"sensor-{name}.png", dpi=110)
    plt.close(fig)


def _plan_azimuth(ax, az_deg, label="view azimuth", gamma=None):
    """Top view: true north up, azimuth clockwise to the sensor."""
    ax.set_title("top view", fontsize=10)
    o = (0.0, 0.0)
    _arrow(ax, o, (0, 2.2), color="k")
    ax.text(0, 2.4, "true north", ha="center", fontsize=9)
    if gamma is not None:
        g = np.radians(gamma)
        _arrow(ax, o, (2.0 * np.sin(g), 2.0 * np.cos(g)), color=NOTE, ls="--")
        ax.text(2.2 * np.sin(g) + 0.15, 2.1 * np.cos(g), "grid north", fontsize=9, color=NOTE)
        _angle(ax, o, 1.5, 90 - gamma, 90, "γ", color=NOTE, offset=1.15)
    a = np.radians(az_deg)
    _arrow(ax, o, (2.0 * np.sin(a), 2.0 * np.cos(a)), color=SENSOR, lw=2)
    ax.text(2.2 * np.sin(a), 2.2 * np.cos(a) - 0.3, "to sensor", color=SENSOR, fontsize=9,
            ha="center")
    _angle(ax, o, 0.8, 90 - az_deg, 90, f"{label}\n(clockwise)", color=SENSOR, offset=1.9)
    ax.plot(*o, "o", color=GROUND)
    ax.text(0.1, -0.35, "ground point", fontsize=9, color=GROUND)
    ax.set_xlim(-2.6, 2.8)
    ax.set_ylim(-2.6, 2.8)


def _side_zenith(ax, vz_deg, dist=2.8):
    ax.set_title("side view", fontsize=10)
    _water(ax, -1.0, 3.5)
    p = (0.0, 0.0)
    _arrow(ax, p, (0, 2.6), color="k", ls="--")
    ax.text(-0.1, 2.75, "ellipsoid normal (up)", fontsize=9, ha="center")
    a = np.radians(vz_deg)
    s = (dist * np.sin(a), dist * np.cos(a))
    _arrow(ax, p, s, color=SENSOR, lw=2)
    ax.add_patch(Rectangle((s[0] - 0.12, s[1] - 0.08), 0.24, 0.16, color=SENSOR))
    ax.text(s[0] + 0.2, s[1], "sensor", color=SENSOR, fontsize=9)
    _angle(ax, p, 0.9, 90 - vz_deg, 90, "view\nzenith", color=SENSOR, offset=1.45)
    ax.plot(*p, "o", color=GROUND)
    ax.set_xlim(-1.2, 3.6)
    ax.set_ylim(-0.6, 3.1)


def fixed_direction():
    fig, ax = plt.subplots(1, 2, figsize=(9, 4.2))
    _side_zenith(ax[0], 35.0)
    _plan_azimuth(ax[1], 60.0, gamma=-15.0)
    ax[1].text(-2.5, -2.5, "azimuth_reference = \"grid\":\ntrue = (grid + γ) mod 360",
               fontsize=9, color=NOTE)
    _finish(fig, ax, "fixed-direction", "fixed-direction: one view direction for every pixel")


def nadir_point():
    fig, ax = plt.subplots(figsize=(8, 4.2))
    _water(ax, -4, 4)
    s = (0.0, 3.0)
    ax.add_patch(Rectangle((s[0] - 0.15, s[1] - 0.1), 0.3, 0.2, color=SENSOR))
    ax.text(0.25, 3.05, "sensor (lon, lat, altitude)", color=SENSOR, fontsize=9)
    ax.plot([0, 0], [0, 3], color=NOTE, ls=":")
    ax.text(0.1, 1.4, "altitude", color=NOTE, fontsize=9, rotation=90)
    for x in (-2.5, 2.5):
        _arrow(ax, (x, 0), (x * 0.08, 2.9), color=SENSOR)
        ax.plot([x, x], [0, 1.5], color="k", ls="--", lw=1)
        ax.plot(x, 0, "o", color=GROUND)
        vz = np.degrees(np.arctan(abs(x) / 3.0))
        if x < 0:
            _angle(ax, (x, 0), 0.8, 90 - vz, 90, "vz", color=SENSOR, offset=1.35)
        else:
            _angle(ax, (x, 0), 0.8, 90, 90 + vz, "vz", color=SENSOR, offset=1.35)
    ax.text(-3.9, -0.4, "symmetric points: equal view zenith, view azimuths 180° apart",
            fontsize=9, color=NOTE)
    ax.set_xlim(-4, 4)
    ax.set_ylim(-0.6, 3.6)
    _finish(fig, ax, "nadir-point", "nadir-point: a sensor at one position above the water")


def angle_rasters():
    fig, ax = plt.subplots(figsize=(7, 4.5))
    for i in range(6):
        for j in range(8):
            ax.add_patch(Rectangle((j, -i), 1, 1, fill=False, color=NOTE, lw=0.8))
    ax.plot(3.5, -1.5, "s", color=SENSOR)
    ax.plot(3.3, -1.2, "x", color=GROUND, ms=9)
    ax.text(8.2, 0.6, "scene grid = angle rasters\n(same CRS, transform, shape)", fontsize=9)
    ax.text(8.2, -1.7, "× requested point\n■ nearest pixel used", fontsize=9)
    ax.text(0, -5.8, "band 1: view zenith [°]   band 2: view azimuth [°]\n"
            "azimuth_reference: \"true-north\" (default) or \"grid\"", fontsize=9)
    ax.set_xlim(-0.2, 12.5)
    ax.set_ylim(-6.2, 1.4)
    _finish(fig, ax, "angle-rasters", "angle-rasters: view angles per pixel, read from rasters")


def angle_grid():
    fig, ax = plt.subplots(figsize=(7.5, 5))
    # scene grid outline (projected), node grid rotated (another CRS)
    ax.add_patch(Rectangle((1, 1), 6, 4, fill=False, color=GROUND, lw=1.5))
    ax.text(1.05, 5.15, "scene grid (e.g. UTM)", color=GROUND, fontsize=9)
    t = np.radians(8)
    rot = np.array([[np.cos(t), -np.sin(t)], [np.sin(t), np.cos(t)]])
    nodes = np.array([[x, y] for x in np.arange(0.7, 7.8, 1.4) for y in np.arange(0.8, 5.6, 1.2)])
    pts = nodes @ rot.T + [0.4, -0.5]
    ax.plot(pts[:, 0], pts[:, 1], "o", color=SENSOR, ms=5)
    ext = np.array([[0.7, 0.8], [6.3, 0.8], [6.3, 4.4], [0.7, 4.4]])
    ax.add_patch(Polygon(ext @ rot.T + [0.4, -0.5], fill=False, color=SENSOR, ls="-"))
    big = np.array([[-0.7, -0.4], [7.7, -0.4], [7.7, 5.6], [-0.7, 5.6]])
    ax.add_patch(Polygon(big @ rot.T + [0.4, -0.5], fill=False, color=SENSOR, ls=":"))
    ax.text(7.9, 5.9, "nodes (own CRS, e.g. lon/lat)", color=SENSOR, fontsize=9)
    ax.text(7.9, 5.3, "solid: node extent (bilinear)", color=SENSOR, fontsize=9)
    ax.text(7.9, 4.7, "dotted: + one node spacing\n(linear extrapolation);\nbeyond: NaN",
            color=SENSOR, fontsize=9)
    ax.text(-0.5, -1.3, "zenith: bilinear; azimuth: atan2(bilinear sin, bilinear cos), "
            "no jump at 0/360", fontsize=9)
    ax.set_xlim(-1, 12.5)
    ax.set_ylim(-1.6, 6.6)
    _finish(fig, ax, "angle-grid", "angle-grid: coarse view-angle grid, interpolated")


def push_broom():
    fig, ax = plt.subplots(1, 2, figsize=(10, 4.8))
    a = ax[0]
    a.set_title("top view", fontsize=10)
    a.plot([0.5, -0.5], [4, -4], color=SENSOR, lw=2)
    _arrow(a, (0.2, 1.6), (-0.1, -0.8), color=SENSOR, lw=2)
    a.text(-1.6, -4.3, "ground track (heading at scene centre)", color=SENSOR, fontsize=9)
    a.add_patch(Rectangle((0.8, -2), 3.5, 4, fill=False, color=GROUND))
    a.text(2.55, 0.1, "+", ha="center", va="center", fontsize=12, color=GROUND)
    a.text(2.6, 0.35, "scene centre, t_c", fontsize=8, color=GROUND)
    p = (3.4, 1.3)
    a.plot(*p, "o", color=GROUND)
    foot = (0.0 + 0.5 * 1.3 / 4 * 0.25 - 0.16, 1.3)
    a.plot([foot[0], p[0]], [p[1], p[1]], color=NOTE, ls="--")
    a.plot(*foot, "s", color=SENSOR)
    a.text(-2.6, 1.5, "satellite abeam\nat t = t_c + s / v", fontsize=8, color=SENSOR)
    a.annotate("", xy=(0.9, 1.3), xytext=(0.9, 0.0),
               arrowprops=dict(arrowstyle="<->", color=NOTE))
    a.text(1.0, 0.55, "s", color=NOTE, fontsize=10)
    a.set_xlim(-3, 5)
    a.set_ylim(-4.6, 4.4)
    b = ax[1]
    b.set_title("across-track plane (zero-Doppler)", fontsize=10)
    th = np.linspace(np.radians(60), np.radians(120), 100)
    R = 6.0
    b.plot(R * np.cos(th), R * np.sin(th) - R, color=GROUND, lw=1.5)
    sat = (0.0, 3.0)
    b.add_patch(Rectangle((sat[0] - 0.15, sat[1] - 0.1), 0.3, 0.2, color=SENSOR))
    b.text(0.25, 3.1, "satellite at altitude h", color=SENSOR, fontsize=9)
    b.plot([0, 0], [0, 3], color=NOTE, ls=":")
    lam = np.radians(18)
    gp = (R * np.sin(lam), R * np.cos(lam) - R)
    b.plot(*gp, "o", color=GROUND)
    b.plot([sat[0], gp[0]], [sat[1], gp[1]], color=SENSOR)
    n = (np.sin(lam), np.cos(lam))
    b.plot([gp[0], gp[0] + 2.2 * n[0]], [gp[1], gp[1] + 2.2 * n[1]], "k--", lw=1)
    vz = np.degrees(np.arctan2(sat[0] - gp[0], sat[1] - gp[1]))
    _angle(b, gp, 0.8, 90 - np.degrees(lam), 90 - vz, "vz", color=SENSOR, offset=1.4)
    eta = np.degrees(np.arctan2(gp[0], sat[1] - gp[1]))
    _angle(b, sat, 0.9, -90, -90 + eta, "η", color=SENSOR, offset=1.3)
    b.text(-2.8, -1.5, "sin vz = (R + h)/R · sin η\n"
           "tilt > 0: looks right of the motion", fontsize=9, color=NOTE)
    b.set_xlim(-3, 3.5)
    b.set_ylim(-1.9, 3.6)
    _finish(fig, ax, "push-broom", "push-broom: satellite imaging line by line")


def line_scanner():
    fig, ax = plt.subplots(1, 2, figsize=(10, 4.5))
    a = ax[0]
    a.set_title("top view", fontsize=10)
    a.add_patch(Rectangle((-1.5, 0), 3, 6, color="#fdebd0"))
    _arrow(a, (0, 0), (0, 6), color=SENSOR, lw=2)
    a.text(0.1, -0.4, "start (t0)", fontsize=9, color=SENSOR)
    a.text(0.1, 6.1, "end", fontsize=9, color=SENSOR)
    a.plot(1.0, 3.5, "o", color=GROUND)
    a.plot([0, 1.0], [3.5, 3.5], color=NOTE, ls="--")
    a.plot(0, 3.5, "s", color=SENSOR)
    a.text(-2.9, 3.2, "foot: t = t0 + s / v", fontsize=9, color=SENSOR)
    a.text(1.7, 1.0, "swath:\nscan angle\n≤ half-angle", fontsize=9, color=NOTE)
    a.plot(2.3, 6.6, "x", color=NOTE)
    a.text(1.6, 7.0, "beyond the end: NaN", fontsize=8, color=NOTE)
    a.set_xlim(-3, 4)
    a.set_ylim(-0.8, 7.5)
    b = ax[1]
    b.set_title("across-track view", fontsize=10)
    _water(b, -3, 3)
    s = (0, 3)
    b.add_patch(Rectangle((-0.15, 2.9), 0.3, 0.2, color=SENSOR))
    half = np.radians(40)
    for sgn in (-1, 1):
        b.plot([0, sgn * 3 * np.tan(half)], [3, 0], color=NOTE, ls=":")
    b.plot([0, 0], [0, 3], color=NOTE, ls="--")
    gp = (1.3, 0)
    b.plot([0, gp[0]], [3, 0], color=SENSOR)
    b.plot(*gp, "o", color=GROUND)
    sc = np.degrees(np.arctan(1.3 / 3))
    _angle(b, s, 1.0, -90, -90 + sc, "scan\nangle", color=SENSOR, offset=1.6)
    b.text(-2.9, 3.3, "altitude above the water", fontsize=9, color=NOTE)
    b.set_xlim(-3, 3)
    b.set_ylim(-0.6, 3.8)
    _finish(fig, ax, "line-scanner", "line-scanner: airborne across-track scanner")


def frame_camera():
    fig, ax = plt.subplots(1, 3, figsize=(12, 4.3))
    a = ax[0]
    a.set_title("side view: pitch", fontsize=10)
    _water(a, -0.5, 4.5)
    c = (0.0, 2.5)
    a.add_patch(Rectangle((c[0] - 0.2, c[1] - 0.12), 0.4, 0.24, color=SENSOR))
    a.plot([0, 3], [2.5, 2.5], "k--", lw=1)
    a.text(3.05, 2.55, "horizontal (pitch 0)", fontsize=8)
    p = np.radians(-40)
    _arrow(a, c, (c[0] + 2.4 * np.cos(p), c[1] + 2.4 * np.sin(p)), color=SENSOR, lw=2)
    a.text(1.9, 0.75, "optical axis", color=SENSOR, fontsize=8)
    _arrow(a, c, (0, 0.3), color=NOTE, ls=":")
    a.text(0.1, 0.9, "pitch -90\n(nadir)", fontsize=8, color=NOTE)
    _angle(a, c, 1.0, -40, 0, "pitch\n< 0", color=SENSOR, offset=1.5)
    a.set_xlim(-0.6, 4.5)
    a.set_ylim(-0.6, 3.2)
    b = ax[1]
    b.set_title("top view: heading", fontsize=10)
    _arrow(b, (0, 0), (0, 2), color="k")
    b.text(0, 2.2, "true north", ha="center", fontsize=9)
    h = np.radians(50)
    _arrow(b, (0, 0), (2 * np.sin(h), 2 * np.cos(h)), color=SENSOR, lw=2)
    b.text(1.7, 1.0, "heading:\ndirection the camera\nfaces (for nadir: the\ntop of the image)",
           fontsize=8, color=SENSOR)
    _angle(b, (0, 0), 0.8, 40, 90, "", color=SENSOR)
    b.set_xlim(-1, 3.8)
    b.set_ylim(-0.6, 2.6)
    c3 = ax[2]
    c3.set_title("image axes and roll", fontsize=10)
    c3.add_patch(Rectangle((0, 0), 4, 3, fill=False, color="k"))
    _arrow(c3, (0, 3), (1.2, 3), color=GROUND)
    c3.text(1.25, 3.1, "col (x)", fontsize=9, color=GROUND)
    _arrow(c3, (0, 3), (0, 1.9), color=GROUND)
    c3.text(-0.7, 1.8, "row (y)", fontsize=9, color=GROUND)
    c3.plot(2, 1.5, "+", color=SENSOR, ms=10)
    c3.text(2.1, 1.6, "principal point\n(cols/2, rows/2)", fontsize=8, color=SENSOR)
    c3.add_patch(Arc((2, 1.5), 2.6, 2.6, theta1=-30, theta2=10, color=SENSOR))
    c3.text(3.0, 0.35, "roll > 0: right\nedge goes down", fontsize=8, color=SENSOR)
    c3.text(0, -0.6, "order: heading, then pitch, then roll", fontsize=8, color=NOTE)
    c3.set_xlim(-0.9, 4.6)
    c3.set_ylim(-0.9, 3.5)
    _finish(fig, ax, "frame-camera", "frame-camera: camera position, attitude and image axes")


def fixed_camera():
    fig, ax = plt.subplots(figsize=(9, 4.2))
    th = np.linspace(np.radians(70), np.radians(110), 200)
    R = 12.0
    ax.plot(R * np.cos(th), R * np.sin(th) - R, color=GROUND, lw=1.5)
    c = (-3.0, R * np.sin(np.arccos(-3 / R)) - R + 0.9)
    ax.add_patch(Rectangle((c[0] - 0.15, c[1] - 0.1), 0.3, 0.2, color=SENSOR))
    ax.text(c[0] - 1.0, c[1] + 0.3, "camera at height h", color=SENSOR, fontsize=9)
    # tangent ray to the horizon
    r0 = np.hypot(c[0], c[1] + R)
    ang_c = np.arctan2(c[1] + R, c[0])
    ang_t = ang_c - np.arccos(R / r0)
    tp = (R * np.cos(ang_t), R * np.sin(ang_t) - R)
    ax.plot([c[0], tp[0] + 1.5 * (tp[0] - c[0]) / 3], [c[1], tp[1] + 1.5 * (tp[1] - c[1]) / 3],
            color=SENSOR, ls="--")
    ax.plot(*tp, "o", color=GROUND)
    ax.text(tp[0] - 0.6, tp[1] + 0.35, "horizon ≈ √(2Rh) away", fontsize=9, color=GROUND)
    hx = -1.2
    ax.plot([c[0], hx], [c[1], np.sqrt(R * R - hx * hx) - R], color=SENSOR)
    ax.plot(hx, np.sqrt(R * R - hx * hx) - R, "o", color=SENSOR, ms=4)
    ax.plot([c[0], 5.5], [c[1], c[1] + 0.3], color=NOTE, ls=":")
    ax.text(5.6, c[1] + 0.3, "rays above the horizon:\nno water, pixel NaN", fontsize=9,
            color=NOTE)
    ax.text(-5.5, -2.2, "rays meet the WGS 84 ellipsoid (curved water);\n"
            "ground points beyond the horizon are not seen", fontsize=9, color=NOTE)
    ax.set_xlim(-6, 9)
    ax.set_ylim(-2.6, 2.0)
    _finish(fig, ax, "fixed-camera", "fixed-camera: oblique camera over curved water")


def main() -> None:
    for draw in (fixed_direction, nadir_point, angle_rasters, angle_grid, push_broom,
                 line_scanner, frame_camera, fixed_camera):
        draw()
    print(f"wrote {len(list(OUT.glob('sensor-*.png')))} diagrams to {OUT}")


if __name__ == "__main__":
    main()
