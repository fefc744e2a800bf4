"""Benchmark: batches on a local dask cluster against write_maps in a loop.

Usage::

    python benchmarks/bench_batch.py                  # 40 scenes of 250 x 250 px
    python benchmarks/bench_batch.py --scenes 10 --size 100 --large 1500

Three measurements, each against a baseline from the same run:

* **scaling**: ``--scenes`` small scenes (``--size`` pixels square, GeoTIFF
  and NetCDF) through :func:`glint.workflows.batch.run_batch` on a local
  cluster of 1 worker, then of 2 workers (``--force``, so every scene is
  computed). Target: speedup >= ``--target-speedup`` (1.7) on two cores.
* **large scene**: one scene of ``--large`` pixels square on 1 worker (one
  task) and on 2 workers (strips of rows computed on both, written by this
  process); the speedup is printed (no target: the writing is serial).
* **overhead**: the same small scenes with :func:`glint.workflows.maps.write_maps`
  in a plain loop (each scene file loaded, then written), run as one task
  in the worker process of the 1-worker cluster (same process set-up), against the batch on that worker
  (manifest, hashing, state files, one task per scene, summary); target: at
  most ``--target-overhead`` (10 %) more time. The same loop in this
  process is printed for information.

Workers are started and warmed up (imports, compiled kernels loaded) before
the clocks start; the start-up time of a cluster is printed on its own. The
machines are shared and noisy: compare within one run. This is not a unit
test.
"""

from __future__ import annotations

import argparse
import logging
import shutil
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

SCENE = """
[scene]
name = "Bench water"
time = 2026-07-02T10:40:00Z
[grid]
crs = "EPSG:32630"
bounds = [402000.0, 5601000.0, {xmax}, {ymax}]
resolution = 10.0
[sensor]
kind = "fixed-direction"
view_zenith = 12.0
view_azimuth = 100.0
[surface]
wind_speed = 5.0
wind_direction = 240.0
[outputs]
formats = ["geotiff", "netcdf"]
variables = ["sun_zenith", "view_zenith", "glint_reflectance", "glint_fraction", "glint_class"]
"""


def _warm() -> None:
    import glint.workflows.maps  # noqa: F401
    from glint.physics.reflect import warmup

    warmup()


def make_manifest(d: Path, n: int, size: int) -> Path:
    d.mkdir(parents=True, exist_ok=True)
    (d / "base.toml").write_text(SCENE.format(xmax=402000.0 + 10 * size, ymax=5601000.0 + 10 * size))
    rows = ", ".join(f'{{name = "s{i:03d}", "surface.wind_speed" = {2.0 + 0.2 * i:.1f}}}'
                     for i in range(n))
    (d / "batch.toml").write_text(f'[template]\nscene = "base.toml"\nrows = [{rows}]\n')
    return d / "batch.toml"


def cluster(n: int):
    from distributed import Client, LocalCluster

    from glint.workflows.batch.runner import worker_environment

    t0 = time.perf_counter()
    lc = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None, silence_logs=logging.ERROR,
                      env=worker_environment(n))
    c = Client(lc, set_as_default=False)
    c.run(_warm)
    return lc, c, time.perf_counter() - t0


def loop_task(paths: list[tuple[str, float, str]]) -> float:
    """Each scene file loaded and written with write_maps in a plain loop,
    timed inside a worker process: the work a batch cannot avoid (a batch
    task loads its scene too), so the difference is the batch machinery."""
    from glint.scene import load_scene
    from glint.workflows.maps import write_maps

    for _, _, out in paths:
        Path(out).parent.mkdir(parents=True, exist_ok=True)
    t0 = time.perf_counter()
    for p, w, out in paths:
        write_maps(load_scene(p, wind_speed=w), out, overwrite=True)
    return time.perf_counter() - t0


def timed_batch(manifest: Path, out: Path, client, **kw) -> float:
    from glint.workflows.batch import run_batch

    t0 = time.perf_counter()
    r = run_batch(manifest, out, client=client, force=True, progress=False, **kw)
    dt = time.perf_counter() - t0
    if not r.ok:
        raise SystemExit(f"batch failed: {[(o.name, o.error) for o in r.failed]}")
    return dt


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--scenes", type=int, default=40)
    ap.add_argument("--size", type=int, default=250, help="pixels per side of a small scene")
    ap.add_argument("--large", type=int, default=3000, help="pixels per side of the large scene")
    ap.add_argument("--repeat", type=int, default=3, help="best of N runs")
    ap.add_argument("--target-speedup", type=float, default=1.7)
    ap.add_argument("--target-overhead", type=float, default=0.10)
    ap.add_argument("--quick", action="store_true", help="10 scenes, a 1000 px large one: a smoke test")
    args = ap.parse_args()
    if args.quick:
        args.scenes, args.large, args.repeat = min(args.scenes, 10), min(args.large, 1000), 1

    from glint.scene import load_scene
    from glint.workflows.maps import write_maps

    _warm()
    tmp = Path(tempfile.mkdtemp(prefix="glint-bench-batch-"))
    verdicts = []
    try:
        small = make_manifest(tmp / "small", args.scenes, args.size)
        large = make_manifest(tmp / "large", 1, args.large)

        # baseline: write_maps in a loop, this process
        scenes = [load_scene(tmp / "small" / "base.toml", wind_speed=2.0 + 0.2 * i)
                  for i in range(args.scenes)]
        loop = []
        for _ in range(args.repeat):
            shutil.rmtree(tmp / "loop", ignore_errors=True)
            t0 = time.perf_counter()
            (tmp / "loop").mkdir()
            for i, s in enumerate(scenes):
                write_maps(s, tmp / "loop" / f"s{i:03d}", overwrite=True)
            loop.append(time.perf_counter() - t0)
        t_loop = min(loop)

        times = {}
        for n in (1, 2):
            lc, c, startup = cluster(n)
            try:
                timed_batch(small, tmp / f"warm{n}", c)   # first use: imports on the workers
                if n == 1:
                    paths = [(str(tmp / "small" / "base.toml"), 2.0 + 0.2 * i,
                              str(tmp / "wloop" / f"s{i:03d}")) for i in range(args.scenes)]
                    times["worker_loop"] = min(c.submit(loop_task, paths, pure=False).result()
                                               for _ in range(args.repeat))
                times[n] = min(timed_batch(small, tmp / f"out{n}", c) for _ in range(args.repeat))
                times[f"large{n}"] = min(
                    timed_batch(large, tmp / f"large{n}", c, split_pixels=1_000_000)
                    for _ in range(args.repeat))
            finally:
                c.close()
                lc.close()
            print(f"local cluster of {n} worker(s): start-up and warm-up {startup:.1f} s")

        speed = times[1] / times[2]
        print(f"\n{args.scenes} scenes of {args.size} x {args.size} px (GeoTIFF + NetCDF):")
        print(f"  write_maps loop (this process): {t_loop:7.2f} s  {t_loop / args.scenes * 1e3:6.1f} ms/scene")
        t_wl = times["worker_loop"]
        print(f"  write_maps loop (in a worker):  {t_wl:7.2f} s  {t_wl / args.scenes * 1e3:6.1f} ms/scene")
        print(f"  batch, 1 worker:                {times[1]:7.2f} s  {times[1] / args.scenes * 1e3:6.1f} ms/scene")
        print(f"  batch, 2 workers:               {times[2]:7.2f} s  speedup {speed:.2f}x")
        over = times[1] / t_wl - 1.0
        print(f"  per-scene overhead of the batch machinery (batch on 1 worker vs the loop in "
              f"that worker): {100 * over:+.1f} %, {(times[1] - t_wl) / args.scenes * 1e3:+.1f} ms/scene")
        verdicts.append(("speedup 2 vs 1 worker", speed >= args.target_speedup,
                         f"{speed:.2f}x (target >= {args.target_speedup}x)"))
        verdicts.append(("overhead vs write_maps loop", over <= args.target_overhead,
                         f"{100 * over:+.1f} % (target <= {100 * args.target_overhead:.0f} %)"))
        # the result lines run_all.py collects (format: benchmarks/README.md)
        print(f"RESULT batch.speedup_2_vs_1_worker {speed:.4g} x >={args.target_speedup:g} "
              f"{'PASS' if speed >= args.target_speedup else 'FAIL'}")
        print(f"RESULT batch.overhead_vs_loop {over:.4g} rel <={args.target_overhead:g} "
              f"{'PASS' if over <= args.target_overhead else 'FAIL'}")
        split = "strips of rows on both workers, written here"
        ls = times["large1"] / times["large2"]
        print(f"\none scene of {args.large} x {args.large} px: 1 worker {times['large1']:.2f} s, "
              f"2 workers ({split}) {times['large2']:.2f} s, speedup {ls:.2f}x")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print()
    status = 0
    for name, ok, text in verdicts:
        print(f"{'PASS' if ok else 'FAIL'} {name}: {text}")
        status |= 0 if ok else 1
    return status


if __name__ == "__main__":
    sys.exit(main())
