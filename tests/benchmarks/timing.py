"""What the benchmarks share: wall time of a subprocess, interleaved medians, and the report line.

Benchmarks print ratios against a reference measured in the same run; they never fail on time.
"""

from __future__ import annotations

import statistics
import subprocess
import time
from pathlib import Path


def wall(cmd: list[str], *, cwd: Path | None = None, timeout: float = 300) -> float:
    """Seconds one subprocess takes; RuntimeError with its stderr if it fails."""
    t0 = time.perf_counter()
    done = subprocess.run(cmd, cwd=cwd, capture_output=True, text=True, timeout=timeout)
    elapsed = time.perf_counter() - t0
    if done.returncode != 0:
        raise RuntimeError(f"{' '.join(cmd)} failed ({done.returncode}): {done.stderr.strip()[-400:]}")
    return elapsed


def interleaved_medians(work: list[str], reference: list[str], *, repeats: int, cwd: Path | None = None):
    """(median work s, median reference s): each run once to warm the caches, then taken in turns so a
    busy moment of the machine hits both alike."""
    wall(work, cwd=cwd)
    wall(reference, cwd=cwd)
    a, b = [], []
    for _ in range(repeats):
        b.append(wall(reference, cwd=cwd))
        a.append(wall(work, cwd=cwd))
    return statistics.median(a), statistics.median(b)


def emit(measurements: dict, line: str, record_property, capsys) -> None:
    """Record every figure as a test property and print the line past pytest's capture."""
    for key, value in measurements.items():
        record_property(key, value)
    with capsys.disabled():
        print("\n[benchmark] " + line)
