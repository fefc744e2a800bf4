"""Survey planning: a month of 5-minute steps, 12 headings and 3 gimbal pitches.

Target: the whole scan (31 days x 288 steps x 12 headings x 3 pitches, night
steps skipped) in under 30 s on 2 cores. Baseline, measured in the same run:
the camera-view workflow (every pixel of a 400 x 300 decimated photo, exact
sun per pixel) timed on a few poses and scaled to the same scan.

Usage: python benchmarks/bench_plan.py [--days N]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from glint.physics.reflect import warmup  # noqa: E402
from glint.workflows.camera_view import camera_view  # noqa: E402
from glint.workflows.planning import scan_survey, survey_from_dict  # noqa: E402
from glint.workflows.planning.windows import survey_scene  # noqa: E402


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--days", type=int, default=31)
    ap.add_argument("--quick", action="store_true", help="a 3-day scan: a smoke test")
    args = ap.parse_args()
    if args.quick:
        args.days = min(args.days, 3)
    end = np.datetime64("2026-07-01") + np.timedelta64(args.days - 1, "D")
    survey = survey_from_dict({
        "survey": {"name": "Bench cove", "start_date": "2026-07-01", "end_date": str(end),
                   "timezone": "Europe/Lisbon", "step_minutes": 5},
        "site": {"lon": -8.0, "lat": 37.0},
        "camera": {"image_size": [4000, 3000], "focal_length": 8.8, "sensor_width": 13.2,
                   "altitude": 100.0, "pitch": [-90.0, -80.0, -70.0], "headings": "search"},
        "wind": {"speed": 3.0, "direction": 270.0},
        "limits": {"sun_elevation": [20.0, 60.0]},
    })
    warmup()
    scan_survey(survey_from_dict({
        "survey": {"name": "warm", "start_date": "2026-07-01", "end_date": "2026-07-01",
                   "timezone": "UTC"},
        "site": {"lon": -8.0, "lat": 37.0},
        "camera": {"image_size": [400, 300], "horizontal_fov": 70.0, "altitude": 100.0},
        "wind": {"speed": 3.0}, "limits": {}}))
    t0 = time.perf_counter()
    scan = scan_survey(survey)
    elapsed = time.perf_counter() - t0
    day = int(np.isfinite(scan.best_share).sum())
    poses = scan.headings.size * scan.pitches.size
    print(f"scan: {args.days} days, {scan.times.size} steps ({day} in daylight), "
          f"{scan.headings.size} headings x {scan.pitches.size} pitches, lattice "
          f"{survey.lattice[0]} x {survey.lattice[1]}: {elapsed:.2f} s, {len(scan.windows)} windows")
    # baseline: the per-pixel camera view on a decimated photo, a few poses
    t = np.datetime64("2026-07-01T10:00", "ns")
    n = 3
    t0 = time.perf_counter()
    for h in (0.0, 90.0, 180.0)[:n]:
        scene = survey_scene(survey, heading=h, pitch=-80.0, time=t, wind_speed=3.0,
                             wind_direction=270.0)
        camera_view(scene, time=t, step=10, variables=["glint_reflectance"])
    per_pose = (time.perf_counter() - t0) / n
    baseline = per_pose * day * poses
    print(f"baseline: camera view of a 400 x 300 photo {per_pose * 1e3:.1f} ms per pose and step; "
          f"scaled to {day} x {poses}: {baseline:.0f} s")
    print(f"ratio: the planner is {baseline / elapsed:.0f}x faster than the per-pixel baseline")
    verdict = "PASS" if elapsed < 30.0 else "FAIL"
    print(f"{verdict}: {args.days}-day scan in {elapsed:.1f} s (target < 30 s on 2 cores)")
    # the result lines run_all.py collects (format: benchmarks/README.md)
    print(f"RESULT plan.scan_seconds_{args.days}_days {elapsed:.4g} s <=30 {verdict}")
    print(f"RESULT plan.speed_vs_per_pixel {baseline / elapsed:.4g} x - INFO")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
