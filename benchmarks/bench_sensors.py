"""Benchmark: sensors near the grid (aircraft, drones, masts) against the
satellite-like tile, in speed and in peak memory, at two grid sizes.

Usage::

    python benchmarks/bench_sensors.py               # 16 and 120 Mpx
    python benchmarks/bench_sensors.py --quick       # 1 and 4 Mpx (smoke test)
    python benchmarks/bench_sensors.py --sizes 16 --kinds nadir-point

The airborne case is the bundled ``example_scenes/coastal_inlet_morning.toml``
(an invented 3 km x 3 km inlet) with the resolution changed to give the
requested number of pixels, seen by each near sensor kind placed over it:

* ``nadir-point``: the scene's own sensor, 3000 m above the water;
* ``frame-camera``: a survey camera 3000 m up looking straight down;
* ``fixed-camera``: an oblique camera on a 300 m cliff south of the inlet;
* ``line-scanner``: an aircraft at 3000 m flying west to east across it.

The baseline of the same run is a satellite-like sensor (786 km up, far from
the grid: its angles come from tie points) on a square UTM tile of the same
number of pixels. Every run is ``glint.workflows.maps.write_maps`` with all
the scene's variables, in a fresh process after a warm-up on a small grid
(compiled kernels loaded), timed from the call to the files on disk.

Targets (from the project's performance notes):

* each near sensor at >= 0.5x the satellite tile's Mpx/s (GeoTIFF);
* peak resident memory <= 0.6 GB, and the larger grid within 10 % of the
  smaller, for every sensor kind and for every format (GeoTIFF, NetCDF, PNG;
  the formats are run with ``nadir-point``).

Printed: a table and ``RESULT`` lines (see ``_results.py``). The machines are
shared and noisy: compare within one run only.
"""

from __future__ import annotations

import argparse
import copy
import json
import math
import sys
import tempfile
import time
import tomllib
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from _results import Result, emit, peak_rss_gb, run_child  # noqa: E402

EXAMPLE = HERE.parent / "example_scenes" / "coastal_inlet_morning.toml"
KINDS = ("nadir-point", "frame-camera", "fixed-camera", "line-scanner")
SPEED_TARGET = 0.5       # x the satellite tile's Mpx/s
MEMORY_TARGET_GB = 0.6
FLATNESS_TARGET = 1.10   # peak at the larger size / peak at the smaller

#: Invented sensors over the inlet (west -8.0070, east -7.9730, south
#: 37.0015, north 37.0285).
NEAR_SENSORS = {
    "frame-camera": {"kind": "frame-camera", "lon": -7.9900, "lat": 37.0150, "altitude": 3000.0,
                     "image_size": [6000, 4000], "horizontal_fov": 60.0, "heading": 0.0,
                     "pitch": -90.0},
    "fixed-camera": {"kind": "fixed-camera", "lon": -7.9900, "lat": 36.9990, "altitude": 300.0,
                     "image_size": [4000, 3000], "horizontal_fov": 70.0, "heading": 0.0,
                     "pitch": -12.0},
    "line-scanner": {"kind": "line-scanner", "start": [-8.0100, 37.0140], "end": [-7.9700, 37.0160],
                     "altitude": 3000.0, "ground_speed": 60.0, "scan_half_angle": 40.0},
}


def airborne_data(kind: str, mpx: float, fmt: str) -> dict:
    """Scene-file data of the airborne case with about ``mpx`` Mpx."""
    data = tomllib.loads(EXAMPLE.read_text())
    g = data["grid"]
    # The bundled 10 m grid; the side scales with the square root of the pixels.
    from glint.geo.grid import Grid

    base = Grid.from_lonlat_box(g["west"], g["south"], g["east"], g["north"], g["resolution"])
    g["resolution"] = g["resolution"] * math.sqrt(base.size / (mpx * 1e6))
    if kind != "nadir-point":
        data["sensor"] = copy.deepcopy(NEAR_SENSORS[kind])
    data["outputs"] = {"formats": [fmt]}
    return data


def satellite_data(mpx: float, fmt: str) -> dict:
    """A square 10 m UTM tile of about ``mpx`` Mpx seen from 786 km."""
    size = int(round(math.sqrt(mpx * 1e6)))
    left, top = 600000.0, 5800020.0  # an invented offshore tile in UTM 31N
    return {
        "scene": {"name": "Benchmark tile", "time": "2026-06-21T10:30:00Z"},
        "grid": {"bounds": [left, top - 10.0 * size, left + 10.0 * size, top],
                 "resolution": 10.0, "crs": "EPSG:32631"},
        "sensor": {"kind": "nadir-point", "altitude": 786000.0, "lon": 1.5, "lat": 51.9},
        "surface": {"wind_speed": 6.0, "wind_direction": 230.0},
        "water": {"wavelength": 560.0},
        "outputs": {"formats": [fmt]},
    }


def _scene(data: dict):
    from glint.scene import scene_from_dict

    return scene_from_dict(data, base_dir=EXAMPLE.parent)


def child(kind: str, mpx: float, fmt: str, outdir: Path) -> dict:
    """One timed run in this (fresh) process."""
    from glint.workflows import maps

    make = satellite_data if kind == "satellite" else (lambda m, f: airborne_data(kind, m, f))
    # Warm-up: compile or load the kernels on a small grid of the same kind.
    warm = _scene(make(0.05, fmt))
    maps.write_maps(warm, outdir / "warm", overwrite=True)
    scene = _scene(make(mpx, fmt))
    t0 = time.perf_counter()
    res = maps.write_maps(scene, outdir / "run", overwrite=True)
    dt = time.perf_counter() - t0
    n = scene.grid.size
    return {"kind": kind, "format": fmt, "pixels": n, "seconds": dt, "mpx_per_s": n / dt / 1e6,
            "peak_gb": peak_rss_gb(), "step": getattr(res.summary, "tie_point_step", None),
            "bytes": sum(p.stat().st_size for p in res.files)}


def measure(kind: str, mpx: float, fmt: str) -> dict:
    with tempfile.TemporaryDirectory(prefix="glint-bench-") as tmp:
        return run_child(Path(__file__), ["--role", kind, "--mpx", str(mpx), "--format", fmt,
                                          "--outdir", tmp])


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="1 and 4 Mpx: a smoke test, not the targets")
    ap.add_argument("--sizes", type=float, nargs=2, metavar=("SMALL", "LARGE"),
                    help="grid sizes [Mpx] (default 16 120)")
    ap.add_argument("--kinds", nargs="+", choices=KINDS, default=list(KINDS))
    ap.add_argument("--formats", nargs="+", choices=["geotiff", "netcdf", "png"],
                    default=["geotiff", "netcdf", "png"])
    ap.add_argument("--role", help=argparse.SUPPRESS)
    ap.add_argument("--mpx", type=float, help=argparse.SUPPRESS)
    ap.add_argument("--format", help=argparse.SUPPRESS)
    ap.add_argument("--outdir", type=Path, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.role:
        print(json.dumps(child(args.role, args.mpx, args.format, args.outdir)))
        return 0

    small, large = args.sizes or ((1.0, 4.0) if args.quick else (16.0, 120.0))
    runs: dict[tuple[str, str, float], dict] = {}
    plan = [("satellite", "geotiff")] + [(k, "geotiff") for k in args.kinds]
    plan += [("nadir-point", f) for f in args.formats if f != "geotiff"]
    print(f"{'sensor':14s} {'format':8s} {'Mpx':>6s} {'s':>7s} {'Mpx/s':>7s} {'peak GB':>8s} {'step':>5s}")
    for kind, fmt in plan:
        for mpx in (small, large):
            r = measure(kind, mpx, fmt)
            runs[(kind, fmt, mpx)] = r
            print(f"{kind:14s} {fmt:8s} {r['pixels'] / 1e6:6.1f} {r['seconds']:7.2f} "
                  f"{r['mpx_per_s']:7.2f} {r['peak_gb']:8.3f} {r['step']!s:>5s}", flush=True)

    results: list[Result] = []
    for mpx in (small, large):
        sat = runs[("satellite", "geotiff", mpx)]["mpx_per_s"]
        results.append(Result(f"sensors.satellite.geotiff.{mpx:g}Mpx.speed", sat, "Mpx/s"))
        for kind in args.kinds:
            r = runs[(kind, "geotiff", mpx)]
            results.append(Result(f"sensors.{kind}.geotiff.{mpx:g}Mpx.speed_vs_satellite",
                                  r["mpx_per_s"] / sat, "x", ">=", SPEED_TARGET))
    for kind, fmt in plan:
        a, b = runs[(kind, fmt, small)], runs[(kind, fmt, large)]
        peak = max(a["peak_gb"], b["peak_gb"])
        results.append(Result(f"sensors.{kind}.{fmt}.peak_memory", peak, "GB", "<=", MEMORY_TARGET_GB))
        results.append(Result(f"sensors.{kind}.{fmt}.memory_{large:g}_vs_{small:g}Mpx",
                              b["peak_gb"] / a["peak_gb"], "x", "<=", FLATNESS_TARGET))
    if args.quick:
        print("(--quick: small grids; the targets are meant for 16 and 120 Mpx)")
    return emit(results)


if __name__ == "__main__":
    raise SystemExit(main())
