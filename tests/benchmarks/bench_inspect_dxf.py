"""Benchmark: mass properties of a DXF outline web against a bare `import ezdxf`.

Reports (prints, and records as test properties) the wall times, in fresh
subprocesses of the same run, of
    python -c "<load the DXF web and compute its mass properties>"
    python -c "import ezdxf"
and their ratio.  `geomgen inspect FILE.dxf` must answer well under a
second; the ratio shows what geomgen adds on top of reading the file with
ezdxf (the CLI adds argument parsing and printing only).  Also reports the
in-process time of `inspect_dxf` alone.  No assert on time: machines differ.

The drawing is an invented demo web (see tests/test_section.py): arcs,
lines, a bulged polyline slot, an ellipse, a spline and circles.

Run:  python -m pytest tests/benchmarks/bench_inspect_dxf.py -s      (or as a script)
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import pytest

from timing import emit, interleaved_medians

REPEATS = 3


def write_demo_dxf(path: Path) -> Path:
    import ezdxf

    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4
    msp = doc.modelspace()
    msp.add_arc((0, 0), 65, 180, 360)
    msp.add_line((65, 0), (25, 32))
    msp.add_arc((0, 32), 25, 0, 180)
    msp.add_line((-25, 32), (-65, 0))
    msp.add_circle((0, 32), 14)
    msp.add_lwpolyline([(-20, -30, 0), (20, -30, -0.4), (20, -40, 0), (-20, -40, -0.4)], format="xyb", close=True)
    msp.add_ellipse((-38, -20), major_axis=(6, 8), ratio=0.6)
    msp.add_spline(fit_points=[(30, -15), (44, -12), (46, -24), (34, -28), (30, -15)])
    doc.saveas(path)
    return path


def measure(workdir: Path) -> dict:
    """Median wall times (s) of the two subprocesses, their ratio, and the in-process time."""
    dxf = write_demo_dxf(workdir / "demo.dxf")
    inspect_cmd = [sys.executable, "-c",
                   "from geomgen.section import inspect_dxf; "
                   f"print(inspect_dxf({str(dxf)!r}, thickness=18.0, density_g_cm3=7.85).summary())"]
    ezdxf_cmd = [sys.executable, "-c", "import ezdxf"]
    ins_s, ez_s = interleaved_medians(inspect_cmd, ezdxf_cmd, repeats=REPEATS)
    from geomgen.section import inspect_dxf

    inspect_dxf(dxf, thickness=18.0, density_g_cm3=7.85)
    t0 = time.perf_counter()
    inspect_dxf(dxf, thickness=18.0, density_g_cm3=7.85)
    in_process = time.perf_counter() - t0
    return {"inspect_dxf_s": ins_s, "import_ezdxf_s": ez_s, "ratio": ins_s / ez_s,
            "in_process_s": in_process}


def _report(m: dict) -> str:
    return (f"inspect DXF web {m['inspect_dxf_s']:.2f} s / import ezdxf {m['import_ezdxf_s']:.2f} s"
            f" = ratio {m['ratio']:.2f}; in process (imports done) {m['in_process_s'] * 1000:.0f} ms")


@pytest.mark.benchmark
def test_inspect_dxf_vs_ezdxf_import(tmp_path, record_property, capsys):
    m = measure(tmp_path)
    emit(m, _report(m), record_property, capsys)


if __name__ == "__main__":
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        print(_report(measure(Path(tmp))))
