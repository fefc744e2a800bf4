"""Imagery benchmark: mask and correct a large four-band image, against the
I/O floor of reading and writing the same image with rasterio alone.

Usage: python benchmarks/bench_imagery.py [--size 10980]

An invented four-band uint16 image (512 x 512 tiles, ZSTD) of ``size`` x
``size`` pixels at 10 m is made first (not timed). Then, each in a fresh
process so that peak memory is its own:

* floor: rasterio reads the image strip by strip and writes a copy with the
  same profile;
* mask: ``glint.workflows.imagery.mask_image`` (glint prediction on every
  pixel, glint GeoTIFF, class raster, masked copy, report, quicklook);
* correct: ``glint.workflows.imagery.correction.correct_image`` with a
  deep-water polygon (two passes over the image: regression, then the
  corrected copy, quality flags and sample raster).

Printed: each time, its ratio to the floor (target <= 2 for each step) and
peak resident memory (target <= 1.5 GB). Compare within one run only: the
machines are noisy.
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

RATIO_TARGET = 2.0
MEMORY_TARGET_GB = 1.5
LEFT, TOP, RES, CRS = 600000.0, 5800020.0, 10.0, "EPSG:32631"

SCENE = """
[scene]
name = "Benchmark image"
time = 2026-06-21T10:30:00Z
[sensor]
kind = "nadir-point"
altitude = 786000.0
lon = 1.5
lat = 51.9
[surface]
wind_speed = 6.0
wind_direction = 230.0
"""


def _peak_gb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024**2


def make_image(size: int, path: Path) -> None:
    import numpy as np
    import rasterio
    from affine import Affine
    from rasterio.windows import Window

    rng = np.random.default_rng(1)
    profile = dict(driver="GTiff", width=size, height=size, count=4, dtype="uint16", nodata=0,
                   crs=CRS, transform=Affine(RES, 0, LEFT, 0, -RES, TOP), tiled=True,
                   blockxsize=512, blockysize=512, compress="zstd", zstd_level=1, predictor=2,
                   interleave="band", bigtiff="IF_SAFER", num_threads="ALL_CPUS")
    cols = np.arange(size)
    with rasterio.open(path, "w", **profile) as dst:
        for r0 in range(0, size, 512):
            r1 = min(r0 + 512, size)
            rows = np.arange(r0, r1)[:, None]
            glint = 300 * (1 + np.sin(cols / 97.0) * np.cos(rows / 131.0)) \
                + rng.integers(0, 40, (r1 - r0, size))
            base = (200, 150, 40, 10)
            for i in range(4):
                dst.write((base[i] + glint).astype(np.uint16), i + 1,
                          window=Window(0, r0, size, r1 - r0))
    (path.parent / "scene.toml").write_text(SCENE)
    (path.parent / "deep.geojson").write_text(json.dumps({
        "type": "Polygon", "crs": {"type": "name", "properties": {"name": CRS}},
        "coordinates": [[[LEFT + 1000, TOP - 6000], [LEFT + 6000, TOP - 6000],
                         [LEFT + 6000, TOP - 1000], [LEFT + 1000, TOP - 1000],
                         [LEFT + 1000, TOP - 6000]]]}))


def run_floor(tmp: Path) -> dict:
    import rasterio

    src_path = tmp / "image.tif"
    t0 = time.perf_counter()
    # The same bounded GDAL block cache as glint's imagery runs.
    with rasterio.Env(GDAL_NUM_THREADS="ALL_CPUS", GDAL_CACHEMAX=256):
        with rasterio.open(src_path) as src:
            profile = dict(src.profile, num_threads="ALL_CPUS")
            with rasterio.open(tmp / "copy.tif", "w", **profile) as dst:
                for r0 in range(0, src.height, 512):
                    w = rasterio.windows.Window(0, r0, src.width, min(512, src.height - r0))
                    dst.write(src.read(window=w), window=w)
    return {"seconds": time.perf_counter() - t0, "peak_gb": _peak_gb()}


def _warm_up(tmp: Path) -> None:
    """Compile the kernels (numba) on a small image so timing excludes it."""
    from glint.workflows.imagery import align

    small = tmp / "warm" / "image.tif"
    small.parent.mkdir(exist_ok=True)
    make_image(256, small)
    align(small, small.parent / "scene.toml")


def run_mask(tmp: Path) -> dict:
    from glint.workflows.imagery import mask_image

    _warm_up(tmp)
    t0 = time.perf_counter()
    res = mask_image(tmp / "image.tif", tmp / "scene.toml", tmp / "mask", overwrite=True)
    return {"seconds": time.perf_counter() - t0, "peak_gb": _peak_gb(),
            "masked_share": res.summary["masked_share_of_water"]}


def run_correct(tmp: Path) -> dict:
    from glint.workflows.imagery.correction import correct_image

    _warm_up(tmp)
    t0 = time.perf_counter()
    res = correct_image(tmp / "image.tif", tmp / "correct", nir_band=4,
                        deep_water=tmp / "deep.geojson", overwrite=True)
    return {"seconds": time.perf_counter() - t0, "peak_gb": _peak_gb(),
            "sample": res.fits[0].n}


def _child(role: str, tmp: Path) -> dict:
    cmd = [sys.executable, __file__, "--role", role, "--tmp", str(tmp)]
    out = subprocess.run(cmd, check=True, capture_output=True, text=True).stdout
    return json.loads(out.strip().splitlines()[-1])


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--size", type=int, default=10980, help="pixels per side (default 10980)")
    ap.add_argument("--role", choices=["floor", "mask", "correct"], help=argparse.SUPPRESS)
    ap.add_argument("--tmp", type=Path, help=argparse.SUPPRESS)
    ap.add_argument("--quick", action="store_true", help="a 2048 x 2048 image: a smoke test")
    args = ap.parse_args()
    if args.quick:
        args.size = min(args.size, 2048)
    if args.role:
        fn = {"floor": run_floor, "mask": run_mask, "correct": run_correct}[args.role]
        print(json.dumps(fn(args.tmp)))
        return 0
    print(f"image {args.size} x {args.size} ({args.size**2 / 1e6:.0f} Mpx), 4 uint16 bands")
    ok = True
    with tempfile.TemporaryDirectory(prefix="glint-bench-") as d:
        tmp = Path(d)
        make_image(args.size, tmp / "image.tif")
        floor = _child("floor", tmp)
        print(f"  floor (rasterio read + write): {floor['seconds']:.2f} s, "
              f"peak {floor['peak_gb']:.2f} GB")
        for role in ("mask", "correct"):
            r = _child(role, tmp)
            ratio = r["seconds"] / floor["seconds"]
            good = ratio <= RATIO_TARGET and r["peak_gb"] <= MEMORY_TARGET_GB
            ok &= good
            print(f"  {role}: {r['seconds']:.2f} s = {ratio:.2f} x floor (target <= "
                  f"{RATIO_TARGET}), peak {r['peak_gb']:.2f} GB (target <= {MEMORY_TARGET_GB}) "
                  f"{'PASS' if good else 'FAIL'}")
            # the result lines run_all.py collects (format: benchmarks/README.md)
            print(f"RESULT imagery.{role}_vs_floor {ratio:.4g} x <={RATIO_TARGET:g} "
                  f"{'PASS' if ratio <= RATIO_TARGET else 'FAIL'}")
            print(f"RESULT imagery.{role}_peak_memory {r['peak_gb']:.4g} GB <={MEMORY_TARGET_GB:g} "
                  f"{'PASS' if r['peak_gb'] <= MEMORY_TARGET_GB else 'FAIL'}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
