"""Benchmark: the balance-factor band's Monte Carlo (100 000 draws, JCGM 101) on a typical plan.

Reports the wall time of `uncertainty.monte_carlo` on the stroker sample (plugs: every kind of input a plan
has: weighings, web density and thickness, plug density, positions, ISO 286 plug diameters) and of the whole
band (both propagations, contributions and the verdict with its own check run), each as a ratio against a
reference measured in the same run: that job's planning alone (`pipeline.plan_webs`).  Target for the Monte
Carlo: under 0.5 s, reported, never asserted.

Run:  python -m pytest tests/benchmarks/bench_band.py -s      (or as a script)
"""

from __future__ import annotations

import time
from pathlib import Path

import pytest

from timing import emit

SAMPLE = Path(__file__).resolve().parents[2] / "samples" / "plugs-stroker.toml"
TARGET_S = 0.5
REPEATS = 5


def _best(fn, repeats: int = REPEATS) -> float:
    fn()                                   # warm: first imports, caches
    runs = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        runs.append(time.perf_counter() - t0)
    return min(runs)


def measure() -> dict:
    from geomgen import job as jobmod
    from geomgen import pipeline, uncertainty

    job = jobmod.load(SAMPLE)
    works = pipeline.plan_webs(job)
    model = uncertainty.build(job, works, job.tolerances)
    plan_s = _best(lambda: pipeline.plan_webs(job))
    mc_s = _best(lambda: uncertainty.monte_carlo(model))
    band_s = _best(lambda: uncertainty.band(job, works))
    return {"inputs": len(model.inputs), "samples": uncertainty.SAMPLES, "plan_s": plan_s, "monte_carlo_s": mc_s,
            "band_s": band_s, "mc_ratio": mc_s / plan_s, "band_ratio": band_s / plan_s, "target_s": TARGET_S}


def _line(m: dict) -> str:
    return (f"Monte Carlo {m['samples']} draws x {m['inputs']} inputs: {m['monte_carlo_s'] * 1000:.0f} ms "
            f"(target < {m['target_s']} s) = {m['mc_ratio']:.2f} x planning alone ({m['plan_s'] * 1000:.0f} ms); "
            f"whole band with verdict {m['band_s'] * 1000:.0f} ms = {m['band_ratio']:.2f} x planning")


@pytest.mark.benchmark
def test_band_monte_carlo_time(record_property, capsys):
    m = measure()
    emit(m, _line(m), record_property, capsys)


if __name__ == "__main__":
    print(_line(measure()))
