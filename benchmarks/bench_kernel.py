"""Benchmark: glint's fused per-pixel kernel against a textbook numpy chain.

Usage::

    python benchmarks/bench_kernel.py                 # 16 000 000 pixels
    python benchmarks/bench_kernel.py --pixels 1000000

Both variants compute the glint angle, reflectance factor, normalised
radiance and glint fraction of an anisotropic Gaussian sea for random but
realistic float32 angle arrays (sun zenith 20-70°, sun azimuth 90-270°, view
zenith 0-45°, any view azimuth; wind 6 m/s from 120°). Reported:

* speed in Mpx/s: the fused kernel after warm-up, best of ``--repeat-fused``
  runs into preallocated outputs (the way ``glint.engine.compute`` calls it); the
  textbook chain, best of ``--repeat-textbook`` runs;
* peak memory: each variant runs once more in a fresh Python subprocess that
  creates the same inputs, resets the kernel's high-water mark of resident
  memory (``/proc/self/clear_refs``), calls the variant and reads
  ``VmHWM`` from ``/proc/self/status``; the figure is the peak resident set
  during the call minus the resident set just before it, so it counts
  everything the call allocates (outputs, temporaries, thread stacks), not
  only numpy's allocations. Where ``/proc`` cannot be reset the peak of the
  whole subprocess (``resource.getrusage``) is used and labelled so;
* the largest differences between the two results;
* PASS when the fused kernel is at least ``--target`` times faster and the
  results agree (relative difference below 1e-3 on values above 1e-6 of the
  largest, glint angle within 0.05°: the textbook chain works in float32
  throughout, so its own rounding sets these bounds).

The machines that run this are shared and noisy; only ratios measured in the
same run are meaningful. This is not a unit test.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _results import Result, emit  # noqa: E402
from textbook_kernel import textbook_glint  # noqa: E402

from glint.physics.reflect import KERNEL_OUTPUTS, glint_kernel, warmup  # noqa: E402

PARAMS = {
    "refractive_index": 1.34,
    # Cox and Munk (1954) clean surface at 6 m/s: 0.003 + 1.92e-3 W, 3.16e-3 W
    "sigma2_crosswind": 0.003 + 1.92e-3 * 6.0,
    "sigma2_upwind": 3.16e-3 * 6.0,
    "wind_direction": 120.0,
    "sun_solid_angle": 6.794e-5,
}


def make_angles(pixels: int, seed: int = 20261202) -> tuple[np.ndarray, ...]:
    """Random float32 angle arrays [°] of a plausible scene."""
    rng = np.random.default_rng(seed)

    def uniform(lo: float, hi: float) -> np.ndarray:
        return (lo + (hi - lo) * rng.random(pixels, dtype=np.float32)).astype(np.float32)

    return uniform(20.0, 70.0), uniform(90.0, 270.0), uniform(0.0, 45.0), uniform(0.0, 360.0)


def run_fused(angles: tuple[np.ndarray, ...], out: dict | None = None) -> dict:
    return glint_kernel(*angles, **PARAMS, out=out)


def run_textbook(angles: tuple[np.ndarray, ...]) -> dict:
    with np.errstate(all="ignore"):
        return textbook_glint(*angles, **PARAMS)


def best_time(func, repeat: int) -> tuple[float, dict]:
    best, result = float("inf"), {}
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = func()
        best = min(best, time.perf_counter() - t0)
    return best, result


def _status_kib(field: str) -> int:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith(field + ":"):
            return int(line.split()[1])
    raise KeyError(field)


def measure_memory(variant: str, pixels: int) -> dict:
    """Run inside a fresh subprocess: peak extra resident memory of one call."""
    if variant == "fused":
        warmup()  # compile or load from cache before measuring
        run_fused(tuple(np.full(8, 30.0, dtype=np.float32) for _ in range(4)))
    angles = make_angles(pixels)
    method = "VmHWM after clear_refs"
    try:
        Path("/proc/self/clear_refs").write_text("5")
        before = _status_kib("VmRSS")
    except OSError:
        method = "ru_maxrss of the whole subprocess"
        before = _status_kib("VmRSS") if Path("/proc/self/status").exists() else 0
    (run_fused if variant == "fused" else run_textbook)(angles)
    if method.startswith("VmHWM"):
        peak = _status_kib("VmHWM")
    else:
        peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return {"peak_mib": (peak - before) / 1024.0, "method": method}


def memory_in_subprocess(variant: str, pixels: int) -> dict:
    cmd = [sys.executable, __file__, "--pixels", str(pixels), "--memory-probe", variant]
    proc = subprocess.run(cmd, capture_output=True, text=True, check=True)
    return json.loads(proc.stdout.strip().splitlines()[-1])


def differences(fused: dict, book: dict) -> dict[str, tuple[float, float]]:
    """Largest absolute and relative difference per output."""
    res = {}
    for key in KERNEL_OUTPUTS:
        a = fused[key].astype(np.float64)
        b = book[key].astype(np.float64)
        ok = np.isfinite(a) & np.isfinite(b)
        nan_mismatch = int(np.sum(np.isnan(a) != np.isnan(b)))
        absdiff = np.abs(a[ok] - b[ok])
        peak = np.max(np.abs(b[ok])) if ok.any() else 0.0
        big = np.abs(b[ok]) > 1e-6 * peak
        rel = absdiff[big] / np.abs(b[ok][big]) if big.any() else np.zeros(1)
        res[key] = (float(absdiff.max(initial=0.0)), float(rel.max(initial=0.0)), nan_mismatch)
    return res


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--pixels", type=int, default=16_000_000,
                        help="number of pixels (default 16000000 = 4000 x 4000)")
    parser.add_argument("--repeat-fused", type=int, default=3)
    parser.add_argument("--repeat-textbook", type=int, default=2)
    parser.add_argument("--target", type=float, default=6.0,
                        help="required speed ratio fused / textbook (default 6)")
    parser.add_argument("--no-memory", action="store_true",
                        help="skip the subprocess memory measurements")
    parser.add_argument("--memory-probe", choices=["fused", "textbook"], help=argparse.SUPPRESS)
    parser.add_argument("--quick", action="store_true",
                        help="1 000 000 pixels: a smoke test, not the target")
    args = parser.parse_args(argv)
    if args.quick:
        args.pixels = min(args.pixels, 1_000_000)
    if args.pixels <= 0:
        parser.error(f"--pixels must be positive; got {args.pixels!r}")

    if args.memory_probe:
        print(json.dumps(measure_memory(args.memory_probe, args.pixels)))
        return 0

    import numba

    n = args.pixels
    print(f"pixels: {n:,}  threads: {numba.get_num_threads()}  cpus: {os.cpu_count()}  "
          f"numpy {np.__version__}  numba {numba.__version__}")
    angles = make_angles(n)

    t0 = time.perf_counter()
    warmup()
    print(f"warm-up (compile or cache load): {time.perf_counter() - t0:.2f} s")
    out = {k: np.empty(n, dtype=np.float32) for k in KERNEL_OUTPUTS}
    run_fused(angles, out)
    t_fused, fused = best_time(lambda: run_fused(angles, out), args.repeat_fused)
    t_book, book = best_time(lambda: run_textbook(angles), args.repeat_textbook)
    ratio = t_book / t_fused
    print(f"fused kernel : {t_fused:8.3f} s  {n / t_fused / 1e6:8.1f} Mpx/s "
          f"(best of {args.repeat_fused})")
    print(f"textbook     : {t_book:8.3f} s  {n / t_book / 1e6:8.1f} Mpx/s "
          f"(best of {args.repeat_textbook})")
    print(f"speed ratio  : {ratio:.1f}x (target >= {args.target:g}x)")

    if not args.no_memory:
        for variant in ("fused", "textbook"):
            m = memory_in_subprocess(variant, n)
            print(f"peak memory {variant:9s}: {m['peak_mib']:9.1f} MiB "
                  f"({m['peak_mib'] * 2**20 / n:.1f} B/px; {m['method']})")

    diffs = differences(fused, book)
    agree = True
    for key, (absd, reld, nanmis) in diffs.items():
        print(f"difference {key:18s}: max abs {absd:.3e}  max rel {reld:.3e}  "
              f"NaN mismatches {nanmis}")
        if key == "glint_angle":
            agree &= absd < 0.05 and nanmis == 0
        else:
            agree &= reld < 1e-3 and nanmis == 0
    ok = agree and ratio >= args.target
    print(("PASS" if ok else "FAIL")
          + f": speed ratio {ratio:.1f}x (target {args.target:g}x), results "
          + ("agree" if agree else "DISAGREE"))
    return emit([
        Result("kernel.speed_vs_textbook", ratio, "x", ">=", args.target),
        Result("kernel.fused_speed", n / t_fused / 1e6, "Mpx/s"),
        Result("kernel.agrees_with_textbook", float(agree), "bool", ">=", 1.0),
    ])


if __name__ == "__main__":
    sys.exit(main())
