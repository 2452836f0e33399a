"""Build time of a web against its number of holes, and against a bare kernel floor.

Run:  python tests/benchmarks/bench_build.py [--repeat 3]

Every case runs in a fresh Python subprocess, so the import of cadquery
(about 1.5 s) counts the same for geomgen and for the floor.  Each case:
- geomgen N: build_web with N pointed blind holes (118 deg; "24f": flat) (one multi-tool cut,
  guarded clean), export_web (STEP with names, body STL re-read, repaired and
  checked by trimesh), exact_massprops;
- floor: tests/benchmarks/kernel_floor.py with one web: import cadquery, one
  extruded body with its pin bore, one cut of 24 plain cylinders, a STEP and a
  binary STL export, one GProp evaluation.
Reported: wall time per case (best of --repeat), seconds per hole between
the counts, and geomgen 24 / floor.  Nothing is asserted (speed targets are
reported ratios, not limits).
"""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
import kernel_floor
from kernel_floor import run_script

GEOMGEN = r"""
import json, math, sys, tempfile, time
t0 = time.perf_counter()
from geomgen.features import Hole
from geomgen.section import parametric_web
from geomgen.solid import build_web
from geomgen.export import export_web
from geomgen.verify import exact_massprops
import cadquery  # noqa: F401  (imports timed apart from the work; trimesh is not on this path)
t1 = time.perf_counter()
n = int(sys.argv[1])
pts = [(x, y) for y in range(-58, -4, 6) for x in range(-57, 58, 6)
       if 24 <= math.hypot(x, y) <= 58]
point = 180.0 if len(sys.argv) > 2 and sys.argv[2] == "flat" else 118.0
holes = [Hole(float(x), float(y), 4.0, 5.0, point_angle=point) for x, y in pts[:n]]
assert len(holes) == n, len(pts)
sec = parametric_web(diameter=130.0, thickness=18.0, density_g_cm3=7.85, stroke=64.0, pin_bore=28.0)
web = build_web(sec, holes, name="b")
t2 = time.perf_counter()
out = tempfile.mkdtemp()
export_web(web, out)
t3 = time.perf_counter()
exact_massprops(web)
t4 = time.perf_counter()
print(json.dumps({"import": t1 - t0, "build": t2 - t1, "export": t3 - t2, "props": t4 - t3}))
"""

#: the floor's web: the same body as geomgen's, 24 flat-bottomed holes 4 mm x 5 mm (plain cylinders)
FLOOR_PTS = [(x, y) for y in range(-58, -4, 6) for x in range(-57, 58, 6) if 24 <= math.hypot(x, y) <= 58][:24]
FLOOR_SPEC = {"thickness": 18.0, "radius": 65.0, "pin_y": 32.0, "pin_radius": 14.0, "webs": ["w"],
              "holes": [{"x": float(x), "y": float(y), "diameter": 4.0, "depth": 5.0, "point_angle": 180.0}
                        for x, y in FLOOR_PTS]}


def best(code: str, *args: str, repeat: int) -> dict:
    runs = [run_script(code, *args) for _ in range(repeat)]
    return min(runs, key=lambda r: r["wall"])


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args(argv)
    fmt = ("{:<12} wall {wall:6.2f} s  (import {import:5.2f}, build {build:5.2f}, export {export:5.2f}, "
           "props {props:5.3f})")
    results = {}
    for n in (6, 24, 96):
        results[n] = best(GEOMGEN, str(n), repeat=args.repeat)
        print(fmt.format(f"geomgen {n}", **results[n]))
    flat = best(GEOMGEN, "24", "flat", repeat=args.repeat)
    print(fmt.format("geomgen 24f", **flat) + "  flat-bottomed, like the floor's cylinders")
    floor = min((kernel_floor.floor(FLOOR_SPEC) for _ in range(args.repeat)), key=lambda r: r["wall"])
    print(fmt.format("floor 24", **floor))

    def work(r):  # time after the imports
        return r["wall"] - r["import"]

    per_6_24 = (work(results[24]) - work(results[6])) / 18
    per_24_96 = (work(results[96]) - work(results[24])) / 72
    print(f"seconds per added hole: 6->24 {per_6_24 * 1e3:.1f} ms, 24->96 {per_24_96 * 1e3:.1f} ms "
          f"(ratio {per_24_96 / per_6_24 if per_6_24 > 0 else float('nan'):.2f}; 1 = linear)")
    print(f"geomgen 24 / floor: {results[24]['wall'] / floor['wall']:.2f} x wall "
          f"(target <= 1.5), {work(results[24]) / work(floor):.2f} x after imports; "
          f"flat-bottomed 24: {flat['wall'] / floor['wall']:.2f} x wall")


@pytest.mark.benchmark
@pytest.mark.cad
def test_build_benchmark(capsys):
    """Prints build time against the number of holes and against the bare kernel floor (no time assert)."""
    with capsys.disabled():
        print()
        main(["--repeat", "1"])


if __name__ == "__main__":
    main()
