"""Build time of a web against its number of holes, and against a bare kernel floor.

Run:  python tests/benchmarks/bench_build.py [--repeat 3]

Every case runs in a fresh Python subprocess, so the import of cadquery
(about 1.5 s) counts the same for geomgen and for the floor.  Each case:
- geomgen N: build_web with N pointed blind holes (118 deg; "24f": flat) (one multi-tool cut,
  guarded clean), export_web (STEP with names, body STL re-read, repaired and
  checked by trimesh), exact_massprops;
- floor: import cadquery, one extruded body with its pin bore, one cut of 24
  plain cylinders, a STEP and a binary STL export, one GProp evaluation.
Reported: wall time per case (best of --repeat), seconds per hole between
the counts, and geomgen 24 / floor.  Nothing is asserted (speed targets are
reported ratios, not limits).
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import time

import pytest

GEOMGEN = r"""
import json, math, sys, tempfile, time
t0 = time.perf_counter()
from geomgen.features import Hole
from geomgen.section import parametric_web
from geomgen.solid import build_web
from geomgen.export import export_web
from geomgen.verify import exact_massprops
import cadquery, trimesh  # noqa: F401,E401  (imports timed apart from the work)
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

FLOOR = r"""
import json, math, tempfile, time, os
t0 = time.perf_counter()
import cadquery as cq
from OCP.BRepGProp import BRepGProp
from OCP.GProp import GProp_GProps
t1 = time.perf_counter()
pts = [(x, y) for y in range(-58, -4, 6) for x in range(-57, 58, 6)
       if 24 <= math.hypot(x, y) <= 58][:24]
outer = cq.Wire.makeCircle(65.0, cq.Vector(0, 0, 0), cq.Vector(0, 0, 1))
bore = cq.Wire.makeCircle(14.0, cq.Vector(0, 32, 0), cq.Vector(0, 0, 1))
body = cq.Solid.extrudeLinear(outer, [bore], cq.Vector(0, 0, 18.0))
tools = [cq.Solid.makeCylinder(2.0, 6.0, cq.Vector(x, y, 13.0)) for x, y in pts]
web = body.cut(*tools)
t2 = time.perf_counter()
out = tempfile.mkdtemp()
cq.exporters.export(web, os.path.join(out, "w.step"))
web.exportStl(os.path.join(out, "w.stl"), tolerance=0.01, angularTolerance=0.1, ascii=False)
t3 = time.perf_counter()
props = GProp_GProps()
BRepGProp.VolumeProperties_s(web.wrapped, props)
props.MatrixOfInertia()
t4 = time.perf_counter()
print(json.dumps({"import": t1 - t0, "build": t2 - t1, "export": t3 - t2, "props": t4 - t3}))
"""


def run(code: str, *args: str) -> dict:
    start = time.perf_counter()
    proc = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, check=True)
    inner = json.loads(proc.stdout.strip().splitlines()[-1])
    inner["wall"] = time.perf_counter() - start
    return inner


def best(code: str, *args: str, repeat: int) -> dict:
    runs = [run(code, *args) for _ in range(repeat)]
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
    floor = best(FLOOR, repeat=args.repeat)
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
