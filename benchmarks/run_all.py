"""Run every glint benchmark (each ``bench_*.py`` here), one after another,
each in its own process, and print one table of every target.

Usage: python benchmarks/run_all.py [--quick] [--only NAME ...]

Each benchmark measures its own baseline in the same run and prints
``RESULT`` lines (the format is described in ``_results.py`` and
``benchmarks/README.md``); this script collects them into one table with
PASS/FAIL per target. ``--quick`` passes ``--quick`` to every benchmark
(smaller sizes: a smoke test, not the targets). A benchmark that exits with
an error or prints no RESULT line is listed as FAIL.
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from _results import Result, parse  # noqa: E402


def discover() -> list[Path]:
    """Every benchmark script: ``bench_*.py`` in this directory, by name."""
    return sorted(HERE.glob("bench_*.py"))


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small sizes; a smoke test only")
    ap.add_argument("--only", nargs="+", metavar="NAME",
                    help="run only these benchmarks (e.g. bench_sun or bench_sun.py)")
    args = ap.parse_args()
    scripts = discover()
    if args.only:
        wanted = {n if n.endswith(".py") else n + ".py" for n in args.only}
        unknown = wanted - {p.name for p in scripts}
        if unknown:
            ap.error(f"unknown benchmark(s) {sorted(unknown)!r}; available: "
                     f"{', '.join(p.name for p in scripts)}")
        scripts = [p for p in scripts if p.name in wanted]
    rows: list[tuple[str, Result]] = []
    failed: list[str] = []
    for script in scripts:
        cmd = [sys.executable, str(script)] + (["--quick"] if args.quick else [])
        print(f"\n=== {' '.join(cmd[1:])}", flush=True)
        t0 = time.perf_counter()
        proc = subprocess.run(cmd, text=True, capture_output=True)
        sys.stdout.write(proc.stdout)
        sys.stderr.write(proc.stderr)
        print(f"--- {script.name}: {time.perf_counter() - t0:.0f} s", flush=True)
        found = parse(proc.stdout)
        rows += [(script.stem, r) for r in found]
        if proc.returncode and not any(r.verdict == "FAIL" for r in found):
            failed.append(f"{script.name} exited {proc.returncode}")
        elif not found:
            failed.append(f"{script.name} printed no RESULT line")

    print("\n=== every target" + (" (--quick: smoke test sizes)" if args.quick else ""))
    w = max([len(r.name) for _, r in rows] + [10])
    print(f"{'result':{w}s} {'value':>10s} {'unit':7s} {'target':>9s} verdict")
    for _, r in rows:
        tgt = "-" if r.verdict == "INFO" else f"{r.op}{r.target:g}"
        print(f"{r.name:{w}s} {r.value:10.4g} {r.unit:7s} {tgt:>9s} {r.verdict}")
    for f in failed:
        print(f"{f:{w}s} {'':>10s} {'':7s} {'':>9s} FAIL")
    n_fail = sum(r.verdict == "FAIL" for _, r in rows) + len(failed)
    n_pass = sum(r.verdict == "PASS" for _, r in rows)
    print(f"\n{n_pass} PASS, {n_fail} FAIL")
    return int(n_fail > 0)


if __name__ == "__main__":
    raise SystemExit(main())
