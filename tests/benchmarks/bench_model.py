"""Benchmark: `plan` of a web given as a 3D model against `plan` of the same web as a prism.

The plain 18 mm disc of samples/make_model_webs.py, written to STEP and named as `[web] model`, against the
same web given by `diameter = 130` and `thickness = 18` (the two plan alike, tests/test_model_web.py), each a
whole `geomgen plan` in a subprocess, taken in turns; and the shipped sample's model (a boss, chamfers and a
recess) beside them.  Target: model / prism at most 3, reported, never asserted.

Run:  python -m pytest tests/benchmarks/bench_model.py -s
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import pytest

from timing import emit, interleaved_medians, wall

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "samples" / "model-web.toml"
TARGET = 3.0


def _jobs(folder: Path) -> tuple[Path, Path]:
    spec = importlib.util.spec_from_file_location("make_model_webs", ROOT / "samples" / "make_model_webs.py")
    maker = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(maker)
    maker.write_step(maker.prism_web(), folder / "prism.step", name="prism")
    text = SAMPLE.read_text()
    model = folder / "model.toml"
    model.write_text(text.replace('model = "model-web.step"', 'model = "prism.step"')
                     .replace("max_depth = 16.0", "max_depth = 18.0"))
    prism = folder / "prism.toml"
    prism.write_text(text.replace('model = "model-web.step"', "diameter = 130.0\nthickness = 18.0")
                     .replace("max_depth = 16.0", "max_depth = 18.0"))
    return model, prism


@pytest.mark.benchmark
@pytest.mark.cad
def test_plan_model_against_prism(tmp_path, record_property, capsys):
    model, prism = _jobs(tmp_path)

    def cmd(job, out):
        return [sys.executable, "-m", "geomgen", "plan", str(job), "--out", str(tmp_path / out), "--force"]

    m, p = interleaved_medians(cmd(model, "m"), cmd(prism, "p"), repeats=2)
    sample = wall(cmd(SAMPLE, "s"))
    figures = {"plan_model_s": m, "plan_prism_s": p, "model_over_prism": m / p, "plan_sample_model_s": sample}
    emit(figures, f"plan of a prism given as a model {m:.2f} s, as diameter and thickness {p:.2f} s: "
                  f"{m / p:.2f}x (target <= {TARGET:g}x); the sample's boss-and-recess model {sample:.2f} s "
                  f"({sample / p:.2f}x the prism)", record_property, capsys)
