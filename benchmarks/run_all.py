"""Run every glint benchmark, one after another, each in its own process.

Usage: python benchmarks/run_all.py [--quick]

Each benchmark measures its own baseline in the same run and prints ratios
and PASS/FAIL lines against its target; this script prints a final table of
those lines. --quick runs smaller sizes (for a smoke test, not for targets).
"""

from __future__ import annotations

import argparse
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent

BENCHMARKS = {
    "bench_sun.py": ["--pixels", "100000"],
    "bench_kernel.py": ["--pixels", "1000000"],
    "bench_tile.py": ["--size", "2048"],
}


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small sizes; a smoke test only")
    args = ap.parse_args()
    verdicts: list[str] = []
    status = 0
    for name, quick_args in BENCHMARKS.items():
        cmd = [sys.executable, str(HERE / name)] + (quick_args if args.quick else [])
        print(f"\n=== {' '.join(cmd[1:])}", flush=True)
        proc = subprocess.run(cmd, text=True, capture_output=True)
        sys.stdout.write(proc.stdout)
        sys.stderr.write(proc.stderr)
        if proc.returncode:
            status = 1
            verdicts.append(f"{name}: exited {proc.returncode}")
        verdicts += [f"{name}: {ln.strip()}" for ln in proc.stdout.splitlines() if "PASS" in ln or "FAIL" in ln]
    print("\n=== summary")
    print("\n".join(verdicts))
    return status


if __name__ == "__main__":
    raise SystemExit(main())
