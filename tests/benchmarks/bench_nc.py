"""NC programs: writing them and their simulated check, as a share of the plan's own time.

Run:  python tests/benchmarks/bench_nc.py [--repeat 2]
      python -m pytest tests/benchmarks/bench_nc.py -s

For the samples with drilled holes, a kidney pocket and plug bores: the plan end to end in this process
(`geomgen.plan(job)` then `.verify()`: planning, solids, STEP/STL, verification and every file, the
programs included), against the programs alone on the same planned webs: written, read back by pygcode,
simulated and checked (`nc_programs(draw=False)`), and with their back-plots drawn.  Target: the
programs with their check within 10 % of the plan's time.  Printed, never asserted.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
SAMPLES = HERE.parent.parent / "samples"
sys.path[:0] = [str(HERE), str(HERE.parent)]

TARGET = 0.10
NAMES = ("heavier-piston", "lighter-piston-teardrop", "plugs-stroker")


def _median(fn, repeat: int) -> float:
    runs = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        runs.append(time.perf_counter() - t0)
    return statistics.median(runs)


def report(repeat: int) -> dict:
    import geomgen
    from geomgen.nc.run import nc_programs

    out = {}
    for name in NAMES:
        job = geomgen.load_job(SAMPLES / f"{name}.toml")
        plan = geomgen.plan(job)
        works = [w.work for w in plan.webs]
        nc_programs(job=job, webs=works)                 # warm: pygcode and shapely imports
        t_plan = _median(lambda job=job: geomgen.plan(job).verify(), repeat)
        t_check = _median(lambda job=job, works=works: nc_programs(job=job, webs=works, draw=False), repeat)
        t_drawn = _median(lambda job=job, works=works: nc_programs(job=job, webs=works), repeat)
        out[name] = {"plan_s": t_plan, "programs_checked_s": t_check, "with_backplots_s": t_drawn,
                     "ratio": t_check / t_plan, "ratio_drawn": t_drawn / t_plan}
        print(f"{name:<24} plan {t_plan:6.2f} s; programs + check {t_check:5.2f} s = {100 * t_check / t_plan:4.1f} % "
              f"of it (target <= {100 * TARGET:.0f} %); with back-plots {t_drawn:5.2f} s = "
              f"{100 * t_drawn / t_plan:4.1f} %")
    return out


@pytest.mark.benchmark
@pytest.mark.cad
def test_nc_benchmark(record_property, capsys):
    with capsys.disabled():
        result = report(repeat=1)
    for name, r in result.items():
        record_property(f"nc_vs_plan_{name}", r["ratio"])


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=2)
    report(parser.parse_args(argv).repeat)


if __name__ == "__main__":
    main()
