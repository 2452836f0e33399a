"""`geomgen trim`: take off a residual measured on the assembled crank (README "Commands").

The check is made on the exported solids only: both web STEPs of the earlier
plan and of the trim are re-read and integrated by OpenCascade, put in the
crank frame (web a as it is, web b mirrored (x, y) -> (-x, y), the README's
"Frame") and summed.  The trim must change that sum by
minus the heavy spot, -U (-sin A, cos A) (A from the pin, counter-clockwise,
README), within 2 % of U.
"""

from __future__ import annotations

import json
import math
import shutil

import numpy as np
import pytest

import plancheck as pc
from conftest import minimal_job_dict, toml_dumps

STEEL = 7.85

pytestmark = pytest.mark.cad


def _crank_sum(folder) -> np.ndarray:
    """Sum of both webs' exact STEP unbalance in the crank frame, g*mm."""
    return sum(pc.to_crank(pc.step_props(folder, name, web_density=STEEL).unbalance, i)
               for i, name in enumerate(("a", "b")))


def _heavy_spot(u, a_deg) -> np.ndarray:
    a = math.radians(a_deg)
    return u * np.array([-math.sin(a), math.cos(a)])   # angle from +Y (the pin), counter-clockwise


@pytest.fixture(scope="module")
def planned(tmp_path_factory):
    """The minimal demo job (conftest) planned once; `clean` is a copy whose plan.json feature rows lack the
    "effect" entries that plan writes and trim refuses (see test_trim_reads_the_plan_folder_as_written)."""
    tmp = tmp_path_factory.mktemp("trim")
    job = tmp / "job.toml"
    job.write_text(toml_dumps(minimal_job_dict()))
    assert pc.run_cli(["plan", job, "--out", tmp / "plan"]) == 0
    clean = tmp / "plan-clean"
    shutil.copytree(tmp / "plan", clean)
    doc = pc.read_plan(clean)
    for w in doc["webs"]:
        for key in ("features", "existing_features", "planned_features"):
            for f in w.get(key, []):
                f.pop("effect", None)
    (clean / "plan.json").write_text(json.dumps(doc))
    return tmp, job, clean, _crank_sum(tmp / "plan")


def test_trim_reads_the_plan_folder_as_written(planned):
    """plan.json as plan wrote it (rows with their "effect") is a good --from: the trim takes the measured
    spot off as it does from the cleaned copy."""
    tmp, job, _, before = planned
    out = tmp / "direct"
    assert pc.run_cli(["trim", job, "--from", tmp / "plan", "--unbalance", "300", "--angle", "40",
                       "--out", out]) == 0
    change = _crank_sum(out) - before
    assert np.linalg.norm(change + _heavy_spot(300.0, 40.0)) <= 0.02 * 300.0, change
    assert pc.read_plan(out)["trim"]["measured_gmm"] == 300.0


@pytest.mark.parametrize("unbalance, angle, u_gmm", [
    ("300", "40", 300.0),
    ("0.8 g at 55 mm", "200", 0.8 * 55.0),      # mass at a radius: U = m r
])
def test_trim_takes_off_the_heavy_spot_shared(planned, unbalance, angle, u_gmm):
    tmp, job, clean, before = planned
    out = tmp / f"trim-{u_gmm:g}-{angle}"
    assert pc.run_cli(["trim", job, "--from", clean, "--unbalance", unbalance, "--angle", angle,
                       "--out", out]) == 0
    change = _crank_sum(out) - before
    want = -_heavy_spot(u_gmm, float(angle))
    assert np.linalg.norm(change - want) <= 0.02 * u_gmm, (change, want)
    # shared: each web carries about half of it (in its own frame)
    for i, name in enumerate(("a", "b")):
        got = pc.step_props(out, name, web_density=STEEL).unbalance \
            - pc.step_props(tmp / "plan", name, web_density=STEEL).unbalance
        assert np.linalg.norm(pc.to_crank(got, i) - 0.5 * want) <= 0.02 * u_gmm, (name, got)


def test_trim_on_one_web_leaves_the_other_as_it_was(planned):
    tmp, job, clean, before = planned
    out = tmp / "trim-web-a"
    assert pc.run_cli(["trim", job, "--from", clean, "--unbalance", "300", "--angle", "40", "--web", "a",
                       "--out", out]) == 0
    change = _crank_sum(out) - before
    want = -_heavy_spot(300.0, 40.0)
    assert np.linalg.norm(change - want) <= 0.02 * 300.0, (change, want)
    old_b = pc.step_props(tmp / "plan", "b", web_density=STEEL)
    new_b = pc.step_props(out, "b", web_density=STEEL)
    assert new_b.mass == pytest.approx(old_b.mass, rel=1e-9)
    assert new_b.unbalance == pytest.approx(old_b.unbalance, rel=1e-9, abs=1e-6)
    doc = pc.read_plan(out)
    assert pc.web_entry(doc, "b")["planned_features"] == []
    assert pc.web_entry(doc, "a")["planned_features"]


@pytest.mark.parametrize("rotation, against, crank_deg", [
    ("cw", False, -40.0),     # a clockwise crank: 40 deg in its direction of rotation is -40 deg ccw
    ("ccw", True, -40.0),     # read against a counter-clockwise rotation
    ("cw", True, 40.0),       # against a clockwise rotation: counter-clockwise again
])
def test_heavy_spot_angle_follows_the_direction_of_rotation(planned, rotation, against, crank_deg):
    """A balancing machine gives the heavy spot from the crankpin in (or against) the direction of rotation
    (common practice); the crank frame measures counter-clockwise seen from web a's outer face."""
    tmp, _, clean, before = planned
    job = tmp / f"job-{rotation}.toml"
    job.write_text(toml_dumps(minimal_job_dict({"engine.rotation": rotation})))
    out = tmp / f"trim-{rotation}-{against}"
    args = ["trim", job, "--from", clean, "--unbalance", "300", "--angle", "40", "--out", out]
    assert pc.run_cli(args + (["--against-rotation"] if against else [])) == 0
    change = _crank_sum(out) - before
    want = -_heavy_spot(300.0, crank_deg)
    assert np.linalg.norm(change - want) <= 0.02 * 300.0, (change, want)
    t = pc.read_plan(out)["trim"]
    assert t["heavy_spot_crank_frame_deg"] == pytest.approx(crank_deg % 360.0)
    assert t["reading_deg"] == 40.0
    html = (out / "report.html").read_text()
    assert "<title>Crank web trim:" in html and "Trim: the measured heavy spot" in html
