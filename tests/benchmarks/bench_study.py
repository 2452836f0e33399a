"""Benchmark: `geomgen study` end to end against `import cadquery`.

Reports (prints, and records as test properties) the ratio
    wall time of `python -m geomgen study JOB --out DIR`  /  wall time of `python -c "import cadquery"`
measured in fresh subprocesses in the same run; the target is below 0.3 (the
study must not pay for the CAD kernel).  No assert on time: machines differ.

Run:  python -m pytest tests/benchmarks/bench_study.py -s      (or as a script)
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

from timing import emit, interleaved_medians

TARGET = 0.3
REPEATS = 3

# Invented demo engine (the numbers of the README's job-file example).
JOB_TOML = """\
name = "bench"

[engine]
stroke = 64.0
rod_length = 110.0
max_rpm = 11000
balance_factor = 0.55

[engine.reciprocating]
piston = 250.0
rod_small_end = 80.0

[engine.rotating]
rod_big_end = 200.0

[engine.crank_parts]
crankpin = 140.0

[balancer]
share = 0.5
offset = [60.0, -20.0]

[web]
diameter = 130.0
thickness = 18.0
material = "steel"
pin_bore = 28.0
main_bore = 0.0
"""

def measure(workdir: Path) -> dict:
    """Median wall times (s) of the two subprocesses and their ratio."""
    job = workdir / "job.toml"
    job.write_text(JOB_TOML, encoding="utf-8")
    cad_cmd = [sys.executable, "-c", "import cadquery"]
    study_cmd = [sys.executable, "-m", "geomgen", "study", str(job), "--out", str(workdir / "out"),
                 "--force"]
    study_s, cad_s = interleaved_medians(study_cmd, cad_cmd, repeats=REPEATS, cwd=workdir)
    return {"import_cadquery_s": cad_s, "study_s": study_s, "ratio": study_s / cad_s, "target": TARGET}


def _report(m: dict) -> str:
    return (f"study (cli) {m['study_s']:.2f} s / import cadquery {m['import_cadquery_s']:.2f} s"
            f" = ratio {m['ratio']:.2f} (target < {m['target']})")


@pytest.mark.benchmark
def test_study_vs_cadquery_import(tmp_path, record_property, capsys):
    m = measure(tmp_path)
    emit(m, _report(m), record_property, capsys)


if __name__ == "__main__":
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        print(_report(measure(Path(tmp))))
