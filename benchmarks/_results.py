"""The result format shared by every benchmark, and helpers to measure a run
in a child process of its own.

Every ``bench_*.py`` prints, besides its own report, one line per target::

    RESULT <name> <value> <unit> <op><target> PASS|FAIL

for example ``RESULT sun.speed_vs_pvlib 131.2 x >=100 PASS``. ``<op>`` is
``>=`` or ``<=``; a figure reported without a target uses ``-`` and ``INFO``
in place of the target and verdict. ``run_all.py`` collects these lines from
every benchmark into one table, so a new benchmark only has to print them.

Runs whose speed and peak memory are measured go to a child process
(:func:`run_child`): its peak resident memory is its own (``os.wait4``), not
that of the parent or of earlier runs.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from dataclasses import dataclass
from pathlib import Path

__all__ = ["Result", "emit", "parse", "run_child", "peak_rss_gb"]


@dataclass(frozen=True)
class Result:
    """One measured figure and, optionally, its target."""

    name: str
    value: float
    unit: str
    op: str = "-"          # ">=", "<=" or "-" (no target)
    target: float | None = None

    @property
    def verdict(self) -> str:
        if self.op == "-" or self.target is None:
            return "INFO"
        ok = self.value >= self.target if self.op == ">=" else self.value <= self.target
        return "PASS" if ok else "FAIL"

    def line(self) -> str:
        tgt = "-" if self.op == "-" or self.target is None else f"{self.op}{self.target:g}"
        return f"RESULT {self.name} {self.value:.4g} {self.unit} {tgt} {self.verdict}"


def emit(results: list[Result]) -> int:
    """Print the RESULT lines; 1 if any target failed, else 0."""
    for r in results:
        print(r.line(), flush=True)
    return int(any(r.verdict == "FAIL" for r in results))


def parse(text: str) -> list[Result]:
    """The RESULT lines of a benchmark's output."""
    out = []
    for ln in text.splitlines():
        parts = ln.split()
        if len(parts) != 6 or parts[0] != "RESULT":
            continue
        _, name, value, unit, tgt, _verdict = parts
        if tgt == "-":
            out.append(Result(name, float(value), unit))
        else:
            out.append(Result(name, float(value), unit, tgt[:2], float(tgt[2:])))
    return out


def peak_rss_gb() -> float:
    """Peak resident memory of this process so far [GB]."""
    import resource

    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024**2  # kB -> GB


def run_child(script: Path, args: list[str], *, timeout: float = 3600.0) -> dict:
    """Run ``python script *args`` and return the JSON object it prints last,
    with ``child_peak_gb`` (peak resident memory of that process alone) and
    ``child_seconds`` (its whole wall time) added."""
    env = dict(os.environ)
    env.setdefault("PYTHONPATH", str(Path(script).resolve().parent.parent))
    t0 = time.perf_counter()
    proc = subprocess.Popen([sys.executable, str(script), *args], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=env)
    try:
        out, err = proc.communicate(timeout=timeout)
    except subprocess.TimeoutExpired:
        proc.kill()
        out, err = proc.communicate()
        raise RuntimeError(f"{script.name} {' '.join(args)} timed out after {timeout:g} s")
    # communicate() has reaped the child; its rusage is in RUSAGE_CHILDREN
    # only as a maximum over all children, so the child reports its own peak.
    if proc.returncode:
        sys.stderr.write(err)
        raise RuntimeError(f"{script.name} {' '.join(args)} exited {proc.returncode}")
    lines = [ln for ln in out.strip().splitlines() if ln.startswith("{")]
    if not lines:
        sys.stderr.write(out + err)
        raise RuntimeError(f"{script.name} {' '.join(args)} printed no result")
    res = json.loads(lines[-1])
    res["child_seconds"] = time.perf_counter() - t0
    res.setdefault("child_peak_gb", res.get("peak_gb", float("nan")))
    return res
