"""Benchmark: ways of giving a GeoTIFF its internal overviews.

Usage::

    python benchmarks/bench_overviews.py              # 6000 x 6000, four float bands
    python benchmarks/bench_overviews.py --quick      # 2048 x 2048
    python benchmarks/bench_overviews.py --size 10980

The same four float32 bands (glint computed on a satellite-like tile, held
in memory beforehand) are written in 512-row strips, ZSTD level 1 with the
floating-point predictor and GDAL's threads, each way in a process of its
own:

* ``floor``: rasterio + GDAL as a user would: write, then
  ``build_overviews(average)`` with GDAL's default block cache (5 % of the
  machine's memory, so much of the file is still cached when GDAL reads it
  back);
* ``bounded``: the same with a 64 MB block cache (GDAL re-reads and
  decompresses more of the file);
* ``direct``: glint's :class:`~glint.io.geotiff.GeoTiffWriter`: each strip
  reduced in memory into every overview level as it is written (GDAL's
  cascaded average with NaN nodata), the levels streamed into GeoTIFFs of
  their own with the same compression, and their compressed tiles appended
  to the map as its internal overviews at close (``glint.io.overviews``):
  no re-reading of the map (glint's compiled kernels are loaded before the
  timing, as ``bench_tile.py`` compiles the engine's). Compared with GDAL's
  own averages: equal on
  levels reduced from even sides; where a side of the source level is odd
  (1373 from 2745 on the 10980 tile) GDAL, reducing a block of rows at a
  time without a nodata mask, leaves the partial source row above each
  block out of the block's first overview row and gives the next row its
  weight; glint keeps the exact area weights there (reported apart).

Printed: times, peak memory, file sizes, and the ratios to the floor (target
for ``direct``: <= 1.0). See docs/architecture.md (performance).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _results import Result, emit, peak_rss_gb, run_child  # noqa: E402

VARIABLES = ["glint_reflectance", "glint_radiance", "glint_fraction", "glint_angle"]


def _bands(size: int, cache: Path) -> np.ndarray:
    """The four bands of the satellite-like tile, computed once per size."""
    path = cache / f"bands_{size}.npy"
    if path.exists():
        return np.load(path)
    from bench_tile import _scene

    from glint.engine import compute

    scene = _scene(size)
    out = np.empty((len(VARIABLES), size, size), np.float32)
    for rs, block in compute.iter_blocks(scene, variables=VARIABLES):
        for i, v in enumerate(VARIABLES):
            out[i, rs] = block[v]
    np.save(path, out)
    return out


def _profile(size: int) -> dict:
    from rasterio.crs import CRS
    from rasterio.transform import from_origin

    return dict(driver="GTiff", width=size, height=size, count=len(VARIABLES), dtype="float32",
                crs=CRS.from_epsg(32631), transform=from_origin(600000.0, 5800020.0, 10.0, 10.0),
                nodata=float("nan"), tiled=True, blockxsize=512, blockysize=512, interleave="band",
                bigtiff="IF_SAFER", compress="ZSTD", zstd_level=1, predictor=3,
                num_threads="ALL_CPUS")


def _factors(size: int) -> list[int]:
    out, f = [], 2
    while size / (f // 2) > 512:
        out.append(f)
        f *= 2
    return out


def run(way: str, size: int, outdir: Path, cache: Path) -> dict:
    import rasterio
    from rasterio.enums import Resampling
    from rasterio.windows import Window

    from glint.geo.grid import Grid
    from glint.io.geotiff import GeoTiffWriter

    bands = _bands(size, cache)
    if way == "direct":  # load glint's compiled overview kernels outside the timing
        small = Grid(32631, _profile(size)["transform"], (64, 2060))
        with GeoTiffWriter(outdir / "warm-up.tif", small, VARIABLES[:1]) as w:
            w.write(slice(0, 64), [np.zeros((64, 2060), np.float32)])
        (outdir / "warm-up.tif").unlink()
    path = outdir / f"{way}.tif"
    prof = _profile(size)
    factors = _factors(size)
    t0 = time.perf_counter()
    if way in ("floor", "bounded"):
        env = {"GDAL_NUM_THREADS": "ALL_CPUS"} | ({"GDAL_CACHEMAX": 64} if way == "bounded" else {})
        with rasterio.Env(**env):
            with rasterio.open(path, "w", **prof) as dst:
                for r0 in range(0, size, 512):
                    part = bands[:, r0:r0 + 512]
                    dst.write(part, window=Window(0, r0, size, part.shape[1]))
                dst.build_overviews(factors, Resampling.average)
    else:
        grid = Grid(32631, prof["transform"], (size, size))
        with GeoTiffWriter(path, grid, VARIABLES) as w:
            for r0 in range(0, size, 512):
                w.write(slice(r0, min(r0 + 512, size)), list(bands[:, r0:r0 + 512]))
        if w.overviews_from != "windows":
            raise RuntimeError(f"the overviews were built by {w.overviews_from!r}, not from "
                               "the windows: the benchmark would measure GDAL's way")
    seconds = time.perf_counter() - t0
    return {"seconds": seconds, "peak_gb": peak_rss_gb(), "bytes": path.stat().st_size,
            "path": str(path)}


def _overview_differences(a: str, b: str, size: int) -> tuple[float, float, float]:
    """Largest relative difference between the overviews of two files: over
    the levels reduced from a source with even sides (2 x 2 means), and over
    the others (a side of the source is odd); and the share of pixels of the
    latter that differ at all."""
    import rasterio

    even, odd, n_odd, n_diff = 0.0, 0.0, 0, 0
    src = size
    for k in range(len(_factors(size))):
        with rasterio.open(a, overview_level=k) as fa, rasterio.open(b, overview_level=k) as fb:
            x, y = fa.read().astype(float), fb.read().astype(float)
        if (np.isfinite(x) != np.isfinite(y)).any():
            return float("inf"), float("inf"), 1.0
        both = np.isfinite(x) & np.isfinite(y)
        rel = np.abs(x[both] - y[both]) / np.maximum(np.abs(x[both]), 1e-30)
        worst = float(rel.max()) if rel.size else 0.0
        if src % 2:
            odd = max(odd, worst)
            n_odd += rel.size
            n_diff += int((rel > 0).sum())
        else:
            even = max(even, worst)
        src = -(-src // 2)
    return even, odd, n_diff / max(n_odd, 1)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--size", type=int, default=6000)
    ap.add_argument("--quick", action="store_true", help="a 2048 x 2048 tile: a smoke test")
    ap.add_argument("--role", help=argparse.SUPPRESS)
    ap.add_argument("--outdir", type=Path, help=argparse.SUPPRESS)
    ap.add_argument("--cache", type=Path, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.quick:
        args.size = min(args.size, 2048)
    if args.role:
        print(json.dumps(run(args.role, args.size, args.outdir, args.cache)))
        return 0
    with tempfile.TemporaryDirectory(prefix="glint-bench-") as tmp:
        cache = Path(tmp)
        _bands(args.size, cache)  # computed once, outside the timed runs
        res = {}
        for way in ("floor", "bounded", "direct"):
            res[way] = run_child(Path(__file__), ["--role", way, "--size", str(args.size),
                                                  "--outdir", tmp, "--cache", tmp])
        even, odd, share = _overview_differences(res["floor"]["path"], res["direct"]["path"],
                                                 args.size)
    print(f"{args.size} x {args.size}, {len(VARIABLES)} float32 bands, overview factors "
          f"{_factors(args.size)}")
    for way, r in res.items():
        print(f"  {way:8s} {r['seconds']:7.2f} s  {r['peak_gb']:5.2f} GB  {r['bytes'] / 1e6:7.1f} MB  "
              f"{r['seconds'] / res['floor']['seconds']:.2f}x the floor")
    print(f"  direct overviews vs GDAL's average: max relative difference {even:.2e} on levels "
          f"from even sides; {odd:.2e} on levels from odd sides ({share:.2%} of their pixels "
          "differ: the first row of each block of rows GDAL reduces at a time, where GDAL "
          "leaves out the partial source row)")
    return emit([
        Result("overviews.bounded_cache_vs_floor", res["bounded"]["seconds"] / res["floor"]["seconds"], "x"),
        Result("overviews.direct_vs_floor", res["direct"]["seconds"] / res["floor"]["seconds"], "x",
               "<=", 1.0),
        Result("overviews.direct_equal_to_gdal_average", even, "rel", "<=", 1e-6),
        Result("overviews.direct_vs_gdal_odd_sides", odd, "rel"),
        Result("overviews.floor_peak_memory", res["floor"]["peak_gb"], "GB"),
    ])


if __name__ == "__main__":
    raise SystemExit(main())
