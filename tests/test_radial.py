"""Radial rim holes: exact mass properties against closed forms, an independent quadrature (scipy) and
OpenCascade's exact B-rep, on circular and DXF rims; the job form; the planner method."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy import integrate

from geomgen import job as jobmod
from geomgen import pipeline
from geomgen.errors import BadInput
from geomgen.features import feature_from_table
from geomgen.kinds import Radial, cylinder_massprops
from geomgen.loops import Loop, circle
from geomgen.section import WebSection, outline_web, parametric_web

from conftest import as_cq, minimal_job_dict, toml_dumps

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
STEEL = 7.85


def _disc(diameter=140.0, thickness=19.0, density=STEEL):
    return parametric_web(diameter=diameter, thickness=thickness, density_g_cm3=density, stroke=62.0,
                          pin_bore=28.0, main_bore=0.0, where="test web")


def test_circular_rim_against_an_independent_quadrature():
    """V = ∫∫ (sqrt(R² - u²) - s0) over the drill's disc, and its first moment along the axis, integrated
    here by scipy's adaptive quadrature (QUADPACK), not by the kind's own Gauss-Legendre rule."""
    R, a, depth, z = 70.0, 6.5, 16.0, 9.5
    s0 = R - depth
    hole = Radial(angle=0.0, diameter=2 * a, depth=depth, z=z, point_angle=180.0).on(_disc())
    body = hole.removed(1000.0)                      # 1000 g/cm^3: mass in g = volume in mm^3
    chord = lambda u: 2 * math.sqrt(max(a * a - u * u, 0.0))  # noqa: E731
    v, _ = integrate.quad(lambda u: chord(u) * (math.sqrt(R * R - u * u) - s0), -a, a, limit=200)
    sy, _ = integrate.quad(lambda u: chord(u) * 0.5 * ((R * R - u * u) - s0 * s0), -a, a, limit=200)
    assert body.mass == pytest.approx(v, rel=1e-10)
    assert body.first_moment[1] == pytest.approx(sy, rel=1e-10)        # angle 0: the axis is +Y
    assert body.first_moment[0] == pytest.approx(0.0, abs=1e-9 * v)
    assert body.first_moment[2] == pytest.approx(z * v, rel=1e-12)       # symmetric about its plane


def test_flat_rim_gives_an_exact_cylinder():
    """On a square web the radial line at 0 deg meets a flat edge square to it: the full-diameter part is a
    plain cylinder from the shoulder to the edge (closed form: V = pi a^2 L, centroid at L/2, ∫x² dV =
    V a²/4 across, Machinery's Handbook) and the point a cone (centroid h/4 from its base)."""
    half, a, depth, z = 70.0, 5.0, 20.0, 8.0
    square = Loop.from_points([(-half, -half), (half, -half), (half, half), (-half, half)])
    section = WebSection(outer=square, bores=(circle(0.0, 31.0, 14.0),), pin_center=(0.0, 31.0), pin_bore=28.0,
                         thickness=16.0, density_g_cm3=STEEL)
    hole = Radial(angle=0.0, diameter=2 * a, depth=depth, z=z, point_angle=180.0).on(section)
    assert hole.entry == pytest.approx(half)
    cyl = cylinder_massprops(radius=a, height=depth, density_g_cm3=STEEL)
    # the local cylinder runs along +Z from its base: turn it to run along +Y from y = half - depth at z
    placed = cyl.transformed(rotation=np.array([[1.0, 0, 0], [0, 0, 1.0], [0, -1.0, 0]]),
                             offset=(0.0, half - depth, z))
    body = hole.removed(STEEL)
    assert body.mass == pytest.approx(placed.mass, rel=1e-12)
    assert body.first_moment == pytest.approx(placed.first_moment, rel=1e-12, abs=1e-9)
    assert body.second_moment == pytest.approx(placed.second_moment, rel=1e-11, abs=1e-6)
    pointed = Radial(angle=0.0, diameter=2 * a, depth=depth, z=z, point_angle=118.0).on(section)
    h = a / math.tan(math.radians(59.0))
    v_cone = math.pi * a * a * h / 3
    extra = pointed.removed(STEEL) - body
    assert extra.mass == pytest.approx(STEEL * 1e-3 * v_cone, rel=1e-12)
    assert extra.com[1] == pytest.approx(half - depth - h / 4, rel=1e-12)


@pytest.mark.parametrize("angle", [0.0, 180.0, 37.5, -120.0])
def test_turned_holes_are_the_same_hole_rotated(angle):
    """A full-circle rim: the hole at any angle is the one at 0 deg turned about Z (MassProps.rotated_z)."""
    sec = _disc()
    ref = Radial(angle=0.0, diameter=10.0, depth=18.0, z=9.5).on(sec).removed(STEEL)
    got = Radial(angle=angle, diameter=10.0, depth=18.0, z=9.5).on(sec).removed(STEEL)
    want = ref.rotated_z(angle)
    assert got.first_moment == pytest.approx(want.first_moment, rel=1e-9, abs=1e-7)
    assert got.second_moment == pytest.approx(want.second_moment, rel=1e-9, abs=1e-5)


def _brep_removed(section, hole, density):
    """The material the kernel's drill takes out of the web: body ∩ tool, exact B-rep (OpenCascade GProp at a
    tight tolerance: its default leaves ~3e-7 on curved booleans)."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    from geomgen.solid import body_shape

    common = as_cq(body_shape(section)).intersect(as_cq(hole.tool(section.thickness)))
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(common.wrapped, props, 1e-10)
    c = props.CentreOfMass()
    return props.Mass() * density * 1e-3, np.array([c.X(), c.Y(), c.Z()])


@pytest.mark.cad
@pytest.mark.parametrize("where", ["disc", "teardrop"])
def test_exact_brep_agrees_to_one_part_in_a_million(where):
    if where == "disc":
        section, angle = _disc(), 150.0
    else:
        section = outline_web(path=SAMPLES / "teardrop-web.dxf", thickness=17.0, density_g_cm3=STEEL, stroke=62.0,
                              pin_bore=28.0, where="teardrop")
        angle = 200.0                                   # off the axis of symmetry, on the counterweight lobe
    hole = Radial(angle=angle, diameter=10.0, depth=22.0, z=0.5 * section.thickness).on(section)
    mass, com = _brep_removed(section, hole, STEEL)
    ours = hole.removed(STEEL)
    assert ours.mass == pytest.approx(mass, rel=1e-6)
    assert ours.com == pytest.approx(com, rel=1e-6, abs=1e-6)


def test_job_form_and_defaults(tmp_path):
    f = feature_from_table({"kind": "radial", "angle": 180, "diameter": 10, "depth": 25, "z": 9.5},
                           where="f", thickness=19.0)
    assert (f.angle, f.diameter, f.depth, f.z, f.point_angle, f.face) == (180.0, 10.0, 25.0, 9.5, 118.0, "rim")
    g = feature_from_table({"kind": "radial", "angle": "3.14159265 rad", "diameter": "0.5 in", "depth": 20},
                           where="f", thickness=19.0)
    assert g.z == 9.5 and g.angle == pytest.approx(180.0, abs=1e-5) and g.diameter == pytest.approx(12.7)
    with pytest.raises(BadInput, match="breaks a face"):
        feature_from_table({"kind": "radial", "angle": 0, "diameter": 10, "depth": 20, "z": 3.0},
                           where="f", thickness=19.0)
    with pytest.raises(BadInput, match="full diameter"):
        Radial(angle=0.0, diameter=12.0, depth=0.1, z=9.5).on(_disc())
    assert f.to_table() == {"kind": "radial", "angle": 180.0, "diameter": 10.0, "depth": 25.0, "z": 9.5,
                            "point_angle": 118.0, "face": "rim"}


def test_a_hand_placed_radial_hole_is_counted_and_keeps_its_wall_from_the_rim_rule(tmp_path):
    hole = {"kind": "radial", "angle": 180.0, "diameter": 10.0, "depth": 20.0}
    path = tmp_path / "job.toml"
    path.write_text(toml_dumps(minimal_job_dict({"web.features": [hole]})))
    job = jobmod.load(path)
    webs = pipeline.plan_webs(job, method="none")
    from geomgen.walls import measure_walls

    _, short = measure_walls(webs[0].section, webs[0].all_features, name="a", min_wall=3.0, pin_wall=6.0)
    assert short == []                       # a radial hole enters through the rim: no rim wall is asked
    change = webs[0].plan.before.mass - webs[0].section.massprops().mass
    assert change == pytest.approx(-webs[0].all_features[0].removed(STEEL).mass, rel=1e-12)


def test_planner_lays_radial_holes_symmetrically_within_tolerance(tmp_path):
    """kind = "radial": the holes straddle the line of the material to take off, so x stays zero, and the
    webs land within the tolerance (a vector magnitude) of the target worked by hand."""
    path = tmp_path / "job.toml"
    path.write_text(toml_dumps(minimal_job_dict({"correction.kind": "radial", "engine.balance_factor": 0.12})))
    job = jobmod.load(path)
    webs = pipeline.plan_webs(job)
    # by hand: -(200 + 140 + 0.12 * 330) * 32 / 2 (a light piston: radial holes near the pin bore reach ~3.7 kg*mm)
    target = -(200 + 140 + 0.12 * 330) * 32 / 2
    for w in webs:
        assert w.plan.method == "radial" and w.plan.features
        assert all(isinstance(f, Radial) for f in w.plan.features)
        u = w.plan.predicted.unbalance
        assert math.hypot(u[0], u[1] - target) <= job.tolerance_gmm * w.spec.share
        angles = sorted(round(f.angle, 3) for f in w.plan.features)
        assert angles == sorted(round(-a, 3) for a in angles)      # mirrored about the Y axis


@pytest.mark.cad
def test_radial_plan_builds_and_the_step_agrees(tmp_path):
    from geomgen.cli import main

    path = tmp_path / "job.toml"
    path.write_text(toml_dumps(minimal_job_dict({"correction.kind": "radial", "engine.balance_factor": 0.12})))
    assert main(["plan", str(path), "--out", str(tmp_path / "out")]) == 0
    import json

    doc = json.loads((tmp_path / "out" / "plan.json").read_text())
    for w in doc["webs"]:
        assert w["agreement"]["predicted_vs_exact"]["mass_rel"] <= 1e-6
        assert all(f["kind"] == "radial" for f in w["planned_features"])
    sheet = (tmp_path / "out" / "operations.csv").read_text()
    assert "radial" in sheet and "entry_radius_mm" in sheet.splitlines()[0]
    # the drawing unrolls each web's rim and shows every radial hole on it, one circle of its diameter each
    import ezdxf

    msp = ezdxf.readfile(tmp_path / "out" / "drawing.dxf").modelspace()
    texts = [e.dxf.text for e in msp.query("TEXT")]
    assert sum(t.startswith("rim unrolled") for t in texts) == 2
    n_radial = sum(len(w["planned_features"]) for w in doc["webs"])
    d = doc["webs"][0]["planned_features"][0]["diameter"]
    rim_circles = [c for c in msp.query("CIRCLE") if abs(c.dxf.radius - d / 2) < 1e-9]
    assert len(rim_circles) == n_radial
