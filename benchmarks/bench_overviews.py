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
* ``direct``: the overview structure created on the empty file, each strip
  averaged 2 x 2 in memory into every level as it is written, and the levels
  written into their overview directories (``rasterio.open(path, "r+",
  overview_level=i)``) once the base is closed (held in memory here, a
  third of the base's size), with the check that they equal GDAL's own
  averages.

Printed: times, peak memory, file sizes, and the ratios to the floor. The
direct path shows what averaging from the strips saves, and what it costs
today: GDAL opens overview levels for update at the compression library's
default level (ZSTD 9 here: no open option sets it), which costs about as
much as the re-reading it avoids. See docs/architecture.md (performance).
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


def _halve(a: np.ndarray) -> np.ndarray:
    """NaN-ignoring mean of each 2 x 2 block (partial blocks at odd edges)."""
    b, h, w = a.shape
    hp, wp = h + h % 2, w + w % 2
    pad = np.full((b, hp, wp), np.nan, np.float32)
    pad[:, :h, :w] = a
    blocks = pad.reshape(b, hp // 2, 2, wp // 2, 2)
    with np.errstate(invalid="ignore"):
        n = np.isfinite(blocks).sum(axis=(2, 4))
        s = np.nansum(blocks, axis=(2, 4), dtype=np.float64)
        return np.where(n > 0, s / np.maximum(n, 1), np.nan).astype(np.float32)


def run(way: str, size: int, outdir: Path, cache: Path) -> dict:
    import rasterio
    from rasterio.enums import Resampling
    from rasterio.windows import Window

    bands = _bands(size, cache)
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
        levels: list[list[np.ndarray]] = [[] for _ in factors]
        carry: list[np.ndarray | None] = [None] * len(factors)
        with rasterio.Env(GDAL_NUM_THREADS="ALL_CPUS", GDAL_CACHEMAX=64):
            # The structure on the empty, sparse file: a finite nodata while it
            # is built (NaN makes GDAL's empty-block handling slow).
            with rasterio.open(path, "w", **(prof | {"sparse_ok": True, "nodata": 0})) as dst:
                dst.build_overviews(factors, Resampling.nearest)
                dst.nodata = float("nan")
                for r0 in range(0, size, 512):
                    part = np.ascontiguousarray(bands[:, r0:r0 + 512])
                    dst.write(part, window=Window(0, r0, size, part.shape[1]))
                    last = r0 + 512 >= size
                    for k in range(len(factors)):
                        if carry[k] is not None:
                            part = np.concatenate([carry[k], part], axis=1)
                            carry[k] = None
                        if part.shape[1] % 2 and not last:
                            carry[k], part = part[:, -1:], part[:, :-1]
                        if not part.shape[1]:
                            break
                        part = _halve(part)
                        levels[k].append(part)
            for k in range(len(factors)):
                data = np.concatenate(levels[k], axis=1)
                with rasterio.open(path, "r+", overview_level=k) as ov:
                    ov.write(data, window=Window(0, 0, data.shape[2], data.shape[1]))
    seconds = time.perf_counter() - t0
    return {"seconds": seconds, "peak_gb": peak_rss_gb(), "bytes": path.stat().st_size,
            "path": str(path)}


def _max_overview_difference(a: str, b: str, levels: int) -> float:
    import rasterio

    worst = 0.0
    for k in range(levels):
        with rasterio.open(a, overview_level=k) as fa, rasterio.open(b, overview_level=k) as fb:
            x, y = fa.read().astype(float), fb.read().astype(float)
        both = np.isfinite(x) & np.isfinite(y)
        if (np.isfinite(x) != np.isfinite(y)).any():
            return float("inf")
        rel = np.abs(x[both] - y[both]) / np.maximum(np.abs(x[both]), 1e-30)
        worst = max(worst, float(rel.max()) if rel.size else 0.0)
    return worst


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
        diff = _max_overview_difference(res["floor"]["path"], res["direct"]["path"],
                                        len(_factors(args.size)))
    print(f"{args.size} x {args.size}, {len(VARIABLES)} float32 bands, overview factors "
          f"{_factors(args.size)}")
    for way, r in res.items():
        print(f"  {way:8s} {r['seconds']:7.2f} s  {r['peak_gb']:5.2f} GB  {r['bytes'] / 1e6:7.1f} MB  "
              f"{r['seconds'] / res['floor']['seconds']:.2f}x the floor")
    print(f"  direct overviews vs GDAL's average: max relative difference {diff:.2e}")
    return emit([
        Result("overviews.bounded_cache_vs_floor", res["bounded"]["seconds"] / res["floor"]["seconds"], "x"),
        Result("overviews.direct_vs_floor", res["direct"]["seconds"] / res["floor"]["seconds"], "x",
               "<=", 1.0),
        Result("overviews.direct_equal_to_gdal_average", diff, "rel", "<=", 1e-6),
        Result("overviews.floor_peak_memory", res["floor"]["peak_gb"], "GB"),
    ])


if __name__ == "__main__":
    raise SystemExit(main())
