"""operations.csv against the plan.json of the same real `plan` run (tests/_shop_run.py)."""

from __future__ import annotations

import csv
import dataclasses
import io
import math

import pytest

from _shop_run import plan_run
from geomgen.features import Pocket
from geomgen.sheet import feature_row, operations_csv


def _rows(text: str) -> list[dict]:
    body = "\n".join(line for line in text.splitlines() if not line.startswith("#"))
    return list(csv.DictReader(io.StringIO(body)))


@pytest.fixture(scope="module")
def run():
    r = plan_run()
    r = dict(r)
    r["rows"] = _rows((r["out"] / "operations.csv").read_text())
    return r


def _by_web(rows, name):
    return [row for row in rows if row["web"] == name]


def test_one_row_per_feature_in_machining_order(run):
    for web in run["doc"]["webs"]:
        rows = _by_web(run["rows"], web["name"])
        # plan.json lists existing + planned features in machining order; the sheet must too
        assert len(rows) == len(web["existing_features"]) + len(web["planned_features"]) > 0
        assert [int(r["step"]) for r in rows] == list(range(1, len(rows) + 1))
        kinds = {"hole": "drill", "pocket": "pocket", "plug": "plug bore + plug"}
        assert [r["kind"] for r in rows] == [kinds[f["kind"]] for f in web["features"]]
        assert [r["status"] for r in rows] == (["existing"] * len(web["existing_features"])
                                               + ["cut"] * len(web["planned_features"]))


def test_mass_changes_sum_to_predicted_minus_before(run):
    job_web = run["job"].webs[0]
    for web in run["doc"]["webs"]:
        rows = _by_web(run["rows"], web["name"])
        cut = [r for r in rows if r["status"] == "cut"]
        existing = [r for r in rows if r["status"] == "existing"]
        # mass is additive: the new features change the web from `before` to `predicted`;
        # each row is rounded to 0.01 g, so allow half of that per row
        total = sum(float(r["mass_change_g"]) for r in cut)
        assert total == pytest.approx(web["predicted"]["mass_g"] - web["before"]["mass_g"],
                                      abs=0.005 * len(cut) + 0.01)
        # ... and the features already there take `before` down from the bare web, a disc minus
        # its pin bore: rho * t * pi * (R^2 - r_pin^2) (closed form)
        bare = job_web.density * 1e-3 * web["thickness_mm"] * math.pi * (65.0 ** 2 - 14.0 ** 2)
        assert sum(float(r["mass_change_g"]) for r in existing) == pytest.approx(
            web["before"]["mass_g"] - bare, abs=0.005 * len(existing) + 0.05)
        # unbalance is additive too (0.05 g*mm rounding per row)
        du = [p - b for p, b in zip(web["predicted"]["unbalance_gmm"], web["before"]["unbalance_gmm"])]
        assert sum(float(r["unbalance_change_x_gmm"]) for r in cut) == pytest.approx(du[0], abs=0.05 * len(cut) + 0.2)
        assert sum(float(r["unbalance_change_y_gmm"]) for r in cut) == pytest.approx(du[1], abs=0.05 * len(cut) + 0.2)


def test_positions_match_plan_and_inner_face_is_mirrored(run):
    seen_inner = False
    for web in run["doc"]["webs"]:
        for row, f in zip(_by_web(run["rows"], web["name"]), web["features"]):
            if f["kind"] == "pocket":
                assert float(row["r_inner_mm"]) == pytest.approx(f["r_inner"], abs=0.005)
                assert float(row["r_outer_mm"]) == pytest.approx(f["r_outer"], abs=0.005)
                assert float(row["depth_shoulder_mm"]) == pytest.approx(f["depth"], abs=0.005)
                continue
            # turning the web over about Y maps (x, y) to (-x, y) (closed form: a mirror in the YZ plane)
            sign = -1.0 if f.get("face") == "inner" else 1.0
            seen_inner |= f.get("face") == "inner" and abs(f["x"]) > 1
            assert float(row["x_mm"]) == pytest.approx(sign * f["x"], abs=0.005)
            assert float(row["y_mm"]) == pytest.approx(f["y"], abs=0.005)
            assert float(row["diameter_mm"]) == pytest.approx(f["diameter"], abs=0.005)
    assert seen_inner, "the test job must carry an inner-face hole off the centre line"


def test_drill_point_depth(run):
    blind = [(r, f) for web in run["doc"]["webs"] for r, f in zip(_by_web(run["rows"], web["name"]), web["features"])
             if f["kind"] == "hole" and not f.get("through")]
    assert blind
    for row, f in blind:
        d = f["diameter"]
        shoulder, point = float(row["depth_shoulder_mm"]), float(row["depth_point_mm"])
        assert shoulder == pytest.approx(f["depth"], abs=0.005)
        # point length of a drill = d / (2 tan(angle / 2)) (closed form of the cone)
        assert point == pytest.approx(f["depth"] + d / (2 * math.tan(math.radians(59.0))), abs=0.01)
        # Machinery's Handbook: a 118 deg point is about 0.3 d long
        assert point - shoulder == pytest.approx(0.3 * d, abs=0.005 * d)


def test_inch_sheet_is_mm_over_25_4(run):
    job = run["job"]
    inch_job = dataclasses.replace(job, output=dataclasses.replace(job.output, sheet_units="inch"))
    text = operations_csv(job=inch_job, doc=run["doc"], webs=run["webs"]).decode()
    rows = _rows(text)
    assert "x_in" in rows[0] and "x_mm" not in rows[0]
    assert len(rows) == len(run["rows"])
    for web in run["doc"]["webs"]:
        for row, mm_row, f in zip(_by_web(rows, web["name"]), _by_web(run["rows"], web["name"]), web["features"]):
            # 1 in = 25.4 mm exactly (NIST SP 811); the sheet sets 0.0005 in, so within half a step
            for key, mm in (("x", f.get("x")), ("y", f.get("y")), ("diameter", f.get("diameter")),
                            ("r_outer", f.get("r_outer"))):
                if mm is None:
                    continue
                if key == "x" and f.get("face") == "inner":
                    mm = -mm
                assert float(row[f"{key}_in"]) == pytest.approx(mm / 25.4, abs=0.00025 + 1e-12)
                assert len(row[f"{key}_in"].split(".")[1]) == 4
            # grams and g*mm do not change with the sheet's length unit
            assert row["mass_change_g"] == mm_row["mass_change_g"]
            assert row["unbalance_change_y_gmm"] == mm_row["unbalance_change_y_gmm"]


def test_inner_face_pocket_angles_are_mirrored():
    # an angle theta from +Y (ccw) is the point (-r sin theta, r cos theta); mirrored in x it is at -theta,
    # so the kidney 10..40 deg seen from the other face runs -40..-10 deg (closed form)
    pocket = Pocket(r_inner=40.0, r_outer=50.0, angle_start=10.0, angle_end=40.0, depth=4.0, face="inner")
    row = feature_row(pocket, web="a", step=1, status="cut", effect={"mass_g": -1.0, "unbalance_gmm": [0.0, 0.0]},
                      thickness=18.0, units="mm", drill_series="metric", plug_density=None)
    assert (row["angle_start_deg"], row["angle_end_deg"]) == ("-40.0", "-10.0")
    assert row["view"].startswith("inner face up")


def test_header_says_how_to_read_it(run):
    text = (run["out"] / "operations.csv").read_text()
    comments = [line for line in text.splitlines() if line.startswith("#")]
    assert any("x is mirrored" in line for line in comments)
    assert any("CAUTION" in line for line in comments)
