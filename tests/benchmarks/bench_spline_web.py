"""Benchmark: a web whose rim is a SPLINE, against the same rim as a polyline of thousands of chords.

The reference is measured in the same run: the rim drawn as an LWPOLYLINE through ezdxf's flattening
of the spline within 2e-5 mm (about 5000 chords, the flattening geomgen used to make of every spline
before splines stayed curves).  Both webs are invented demo data (the teardrop rim of
tests/test_dxf_curves.py, a 28 mm pin bore at stroke 64).  Reported:
    planning alone, `pipeline.plan_webs` (holes), in process;
    one web built and its STEP written (the kernel imported beforehand), and the STEP's size;
each as spline / polyline with the ratio.  No assert on time or size: machines differ.

Run:  python -m pytest tests/benchmarks/bench_spline_web.py -s      (or as a script)
"""

from __future__ import annotations

import math
import sys
import time
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
sys.path[:0] = [str(HERE), str(HERE.parent)]

from timing import emit  # noqa: E402  (found through the sys.path line above)

OLD_CHORD_MM = 2e-5


def _rim_points():
    pts = []
    for i in range(16):
        phi = 2 * math.pi * i / 16
        r = 58 - 6 * math.cos(phi) + 2 * math.cos(2 * phi)
        pts.append((-r * math.sin(phi), r * math.cos(phi), 0.0))
    return pts + [pts[0]]


def write_webs(folder: Path) -> dict[str, Path]:
    """The two drawings and a job for each: {"spline": job, "polyline": job}."""
    import ezdxf

    from conftest import DROP, minimal_job_dict, toml_dumps

    jobs = {}
    for kind in ("spline", "polyline"):
        doc = ezdxf.new()
        doc.header["$INSUNITS"] = 4
        msp = doc.modelspace()
        spline = msp.add_spline(fit_points=_rim_points())
        if kind == "polyline":
            flat = [(v.x, v.y) for v in spline.construction_tool().flattening(OLD_CHORD_MM, segments=16)]
            msp.delete_entity(spline)
            msp.add_lwpolyline(flat[:-1], close=True)
        msp.add_circle((0, 32), 14)
        doc.saveas(folder / f"{kind}.dxf")
        job = minimal_job_dict({"web.diameter": DROP, "web.outline": f"{kind}.dxf", "web.thickness": 17.0,
                                "correction.max_depth": 14.0})
        path = folder / f"{kind}.toml"
        path.write_text(toml_dumps(job))
        jobs[kind] = path
    return jobs


def measure(folder: Path) -> dict:
    import cadquery  # noqa: F401  (the kernel's import is not what is measured)

    from geomgen import job as jobmod
    from geomgen import pipeline
    from geomgen.export import write_step
    from geomgen.solid import build_web

    out = {}
    for kind, path in write_webs(folder).items():
        job = jobmod.load(path)
        t0 = time.perf_counter()
        works = pipeline.plan_webs(job)
        out[f"{kind}_plan_s"] = time.perf_counter() - t0
        w = works[0]
        t0 = time.perf_counter()
        web = build_web(w.section, w.all_features, name=w.spec.name)
        step = write_step([(n, s) for n, s, _ in web.solids()], folder / f"{kind}.step")
        out[f"{kind}_build_step_s"] = time.perf_counter() - t0
        out[f"{kind}_step_bytes"] = step.stat().st_size
        out[f"{kind}_rim_segments"] = len(w.section.outer.segments)
    for key in ("plan_s", "build_step_s", "step_bytes"):
        out[f"ratio_{key}"] = out[f"spline_{key}"] / out[f"polyline_{key}"]
    return out


def _report(m: dict) -> str:
    return (f"spline rim ({m['spline_rim_segments']} segment) vs polyline rim ({m['polyline_rim_segments']} "
            f"chords): planning {m['spline_plan_s']:.2f} s / {m['polyline_plan_s']:.2f} s = "
            f"{m['ratio_plan_s']:.3f}; build + STEP {m['spline_build_step_s']:.2f} s / "
            f"{m['polyline_build_step_s']:.2f} s = {m['ratio_build_step_s']:.3f}; STEP "
            f"{m['spline_step_bytes'] / 1e3:.0f} kB / {m['polyline_step_bytes'] / 1e3:.0f} kB = "
            f"{m['ratio_step_bytes']:.4f}")


@pytest.mark.benchmark
@pytest.mark.cad
def test_spline_rim_vs_polyline_rim(tmp_path, record_property, capsys):
    m = measure(tmp_path)
    emit(m, _report(m), record_property, capsys)


if __name__ == "__main__":
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        print(_report(measure(Path(tmp))))
