"""Walls of existing and new features (geomgen.walls; no CAD kernel but where marked).

A web's existing features are facts on the bench: a wall of theirs thinner
than min_wall / pin_wall is reported, and the web is built; a new feature
short of the walls is refused.  What no web can be is refused for both.

Closed forms (plan-view distances between circles, any geometry text):
- hole to rim: R_rim - (distance of the hole centre from the axis) - r_hole;
- hole to crankpin bore: |c_hole - c_pin| - r_hole - r_pin;
- hole to hole: |c1 - c2| - r1 - r2.
The check flattens circles to 1e-3 mm chords, so measured walls are within
2e-3 mm of these.
"""

from __future__ import annotations

import math
import re
import subprocess
import sys

import pytest

from geomgen.errors import BadInput
from geomgen.features import Hole
from geomgen.section import parametric_web
from geomgen.walls import measure_walls, wall_warnings

from conftest import minimal_job_dict, toml_dumps

RHO, T, D, STROKE, PIN = 7.85, 18.0, 130.0, 64.0, 28.0
FLAT = 2e-3   # mm: chord flattening of the check, both rings


def section():
    return parametric_web(diameter=D, thickness=T, density_g_cm3=RHO, stroke=STROKE, pin_bore=PIN)


# 8 mm through hole centred 60 mm from the axis: rim wall 65 - 60 - 4 = 1 mm (closed form)
NEAR_RIM = Hole(0.0, -60.0, 8.0, T, through=True)


def _measured(line: str) -> float:
    return float(re.search(r"leaves ([0-9.]+) mm", line).group(1))


def test_existing_hole_near_the_rim_is_a_warning_with_its_wall():
    lines = wall_warnings(section(), [NEAR_RIM], name="a", min_wall=3.0, existing=1)
    assert len(lines) == 1
    line = lines[0]
    assert line.startswith("web a: existing feature 1 (hole) leaves ")
    assert _measured(line) == pytest.approx(0.5 * D - 60.0 - 4.0, abs=FLAT)   # 1.0 mm
    assert "to the rim" in line and "the 3 mm min_wall asks" in line


def test_the_same_hole_as_a_new_feature_is_refused():
    with pytest.raises(BadInput, match=r"web a: feature 1 \(hole\) comes too close to the rim .*"
                                       r"smallest wall 1 mm, allowed >= 3 mm"):
        wall_warnings(section(), [NEAR_RIM], name="a", min_wall=3.0, existing=0)


def test_existing_may_name_indices_and_a_new_feature_beside_an_old_one_keeps_the_wall():
    # two 10 mm holes 12 mm apart: a 2 mm wall (closed form 12 - 5 - 5)
    old, new = Hole(0.0, -40.0, 10.0, 5.0), Hole(12.0, -40.0, 10.0, 5.0)
    lines = wall_warnings(section(), [old, new], name="b", min_wall=3.0, existing={0, 1})
    assert len(lines) == 1 and "feature 1 (hole)" in lines[0] and "to feature 2 (hole)" in lines[0]
    assert _measured(lines[0]) == pytest.approx(2.0, abs=FLAT)
    with pytest.raises(BadInput, match=r"feature 1 \(hole\) comes too close to feature 2 \(hole\)"):
        wall_warnings(section(), [old, new], name="b", min_wall=3.0, existing={0})
    with pytest.raises(BadInput, match=r"existing features: index 2 is not one of the 2 features"):
        wall_warnings(section(), [old, new], name="b", existing={2})


def test_existing_hole_near_the_crankpin_bore_names_pin_wall():
    # pin bore: centre (0, 32), radius 14; hole radius 4 at (0, 12): wall 32 - 12 - 14 - 4 = 2 mm
    hole = Hole(0.0, 12.0, 8.0, 5.0)
    smallest, short = measure_walls(section(), [hole], name="a", min_wall=3.0, pin_wall=6.0, existing=1)
    assert smallest == pytest.approx(2.0, abs=FLAT)
    assert [(s.to, s.rule, s.required_mm) for s in short] == [("the crankpin bore", "pin_wall", 6.0)]
    assert short[0].wall_mm == pytest.approx(2.0, abs=FLAT)


def test_impossible_existing_features_are_still_refused():
    sec = section()
    # footprint past the rim: 65 - 62 - 5 < 0
    with pytest.raises(BadInput, match="breaks through the rim"):
        wall_warnings(sec, [Hole(0.0, -62.0, 10.0, 5.0)], name="a", min_wall=3.0, existing=1)
    # into the crankpin bore (lowest point y = 18; hole reaches y = 19)
    with pytest.raises(BadInput, match="cuts into the crankpin bore"):
        wall_warnings(sec, [Hole(0.0, 15.0, 8.0, 5.0)], name="a", existing=1)
    # two existing holes on top of each other, same face and depth
    with pytest.raises(BadInput, match=r"feature 1 \(hole\) overlaps feature 2 \(hole\)"):
        wall_warnings(sec, [Hole(0.0, -40.0, 10.0, 5.0), Hole(3.0, -40.0, 10.0, 5.0)], name="a", existing=2)
    # a flat-bottomed hole 17.98 mm deep in an 18 mm web: a 0.02 mm floor, below the 0.05 mm any solid keeps
    with pytest.raises(BadInput, match=r"too thin a wall to the inner face \(its floor\).*allowed >= 0.05 mm"):
        wall_warnings(sec, [Hole(0.0, -40.0, 10.0, 17.98, point_angle=180.0)], name="a", existing=1)
    # a thin but real floor (1 mm) of an existing hole is a warning
    lines = wall_warnings(sec, [Hole(0.0, -40.0, 10.0, 17.0, point_angle=180.0)], name="a", min_wall=3.0,
                          existing=1)
    assert len(lines) == 1 and "inner face" in lines[0] and _measured(lines[0]) == pytest.approx(1.0, abs=1e-9)


def test_walls_import_no_kernel():
    code = ("import sys, geomgen.walls; "
            "print(sorted(m for m in ('cadquery', 'OCP', 'trimesh') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


@pytest.mark.cad
def test_build_web_keeps_an_existing_thin_wall_and_reports_it():
    from geomgen.solid import build_web
    from geomgen.verify import solid_massprops

    web = build_web(section(), [NEAR_RIM], name="a", min_wall=3.0, existing=1)
    assert len(web.wall_warnings) == 1 and _measured(web.wall_warnings[0]) == pytest.approx(1.0, abs=FLAT)
    # closed form: the disc less its pin bore and the 8 mm through hole, V = T pi (R^2 - r_pin^2 - r_hole^2)
    v = T * math.pi * ((0.5 * D) ** 2 - (0.5 * PIN) ** 2 - 4.0 ** 2)
    assert solid_massprops(web.body, RHO).volume == pytest.approx(v, rel=1e-9)
    with pytest.raises(BadInput, match="comes too close to the rim"):
        build_web(section(), [NEAR_RIM], name="a", min_wall=3.0)


@pytest.mark.cad
def test_build_and_verify_returns_wall_warnings_per_web(tmp_path):
    from geomgen import job as jobmod
    from geomgen.pipeline import build_and_verify, plan_webs

    hole = {"kind": "hole", "x": 0.0, "y": -60.0, "diameter": 8.0, "depth": T, "through": True}
    path = tmp_path / "job.toml"
    path.write_text(toml_dumps(minimal_job_dict(web__features=[hole], output={"crank_step": False})))
    job = jobmod.load(path)
    webs = plan_webs(job, method="none")
    (tmp_path / "out").mkdir()
    verified = build_and_verify(job, webs, tmp_path / "out")
    assert [len(v["wall_warnings"]) for v in verified] == [1, 1]
    assert [v["wall_warnings"][0].split(":")[0] for v in verified] == ["web a", "web b"]
    assert _measured(verified[1]["wall_warnings"][0]) == pytest.approx(1.0, abs=FLAT)
