"""The figures a builder acts on at the balancing machine: bob weight, crank parts, tolerance, angles,
couples, ISO rotor mass, plug density range (no CAD kernel: closed forms and the plan maths).

Worked by hand from the README's definitions (common practice of the trade): the bob weight is the rod's
rotating end plus BF x the reciprocating mass; the crank's own parts at the pin are on the crank, so the
webs counter them but the bob never carries them.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from geomgen import job as jobmod
from geomgen import pipeline
from geomgen.massprops import MassProps
from geomgen.planner import WebPlan
from geomgen.study import study_of

from conftest import DROP, minimal_job_dict, toml_dumps

STEEL = 7.85


def _job(tmp_path, changes=None, **overrides):
    path = tmp_path / "job.toml"
    path.write_text(toml_dumps(minimal_job_dict(changes, **overrides)))
    return jobmod.load(path)


# ------------------------------------------------------------------ bob weight and crank parts
def test_bob_weight_leaves_the_crank_parts_out_and_the_crank_balances_statically(tmp_path):
    job = _job(tmp_path)
    e = job.engine
    # by hand: bob = 200 + 0.55 * 330 = 381.5 g; the webs counter 381.5 + 140 = 521.5 g at 32 mm
    assert e.bob_weight_g == pytest.approx(381.5)
    assert job.target_gmm(job.webs[0]) == pytest.approx((0.0, -8344.0))
    # static balance on the machine: webs at target + crankpin + bob, all at the pin radius, sum to zero
    webs = sum(job.target_gmm(w)[1] for w in job.webs)
    assert webs + (e.m_crank_parts + e.bob_weight_g) * e.crank_radius == pytest.approx(0.0, abs=1e-9)


def test_a_crank_part_listed_as_rotating_keeps_the_target_and_is_warned(tmp_path):
    old = _job(tmp_path, {"engine.rotating": {"rod_big_end": 200.0, "crankpin": 140.0},
                          "engine.crank_parts": DROP})
    new = _job(tmp_path)
    assert old.target_gmm(old.webs[0]) == pytest.approx(new.target_gmm(new.webs[0]))
    assert len(old.warnings) == 1
    line = old.warnings[0]
    assert "engine.rotating.crankpin" in line and "[engine.crank_parts]" in line
    assert "521.5 g with it, 381.5 g without" in line          # 200 + 140 + 181.5 vs 200 + 181.5
    assert new.warnings == ()
    bearing = _job(tmp_path, {"engine.rotating": {"rod_big_end": 200.0, "big_end_bearing": 20.0}})
    assert bearing.warnings == ()


def test_study_command_prints_the_warning_as_one_line(tmp_path, capsys):
    from geomgen.cli import main

    path = tmp_path / "old.toml"
    path.write_text(toml_dumps(minimal_job_dict({"engine.rotating": {"rod_big_end": 200.0, "crankpin": 140.0},
                                                 "engine.crank_parts": DROP})))
    assert main(["study", str(path), "--out", str(tmp_path / "s")]) == 0
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("geomgen: warning: engine.rotating.crankpin")


# ------------------------------------------------------------------ tolerance as a vector
def test_tolerance_is_held_on_the_magnitude_not_per_component():
    """ISO 21940-11 treats unbalance as a vector: a box of +-t per component would let sqrt(2) t through."""
    t = 10.0
    p = MassProps.zero()

    def plan(dx, dy):
        return WebPlan("a", "holes", (), p, p, (-dx, -dy), t, "", "")

    assert plan(0.7 * t, 0.7 * t).within_tolerance           # |d| = 0.99 t
    assert not plan(0.8 * t, 0.8 * t).within_tolerance       # |d| = 1.13 t, though each component is inside t
    assert not plan(0.0, 1.01 * t).within_tolerance


def test_one_tolerance_key_and_scale_in_study_and_plan(tmp_path):
    job = _job(tmp_path, {"correction.bf_tolerance_percent": 1.2})
    s = study_of(job)
    assert s["inputs"]["bf_tolerance_percent"] == 1.2
    # 1.2 % of 330 g * 32 mm = 126.72 g*mm for the crank (worked by hand)
    assert s["tolerance_gmm"] == pytest.approx(126.72)
    webs = pipeline.plan_webs(job, method="none")
    crank = pipeline.crank_figures(job, webs, [w.plan.predicted for w in webs])
    assert crank["bf_tolerance_percent"] == 1.2 and crank["tolerance_gmm"] == pytest.approx(126.72)


# ------------------------------------------------------------------ sweep and peak
def test_sweep_covers_a_job_at_balance_factor_1_2(tmp_path):
    s = study_of(_job(tmp_path, {"engine.balance_factor": 1.2}))
    factors = [row["balance_factor"] for row in s["sweep"]]
    assert factors[0] == 0.0 and factors[-1] == 1.5 and 1.2 in factors


def test_peak_names_its_crank_angle_direction_and_twin(tmp_path):
    """No tilt: the residual force F(theta) has an even y and an odd x component, so |F| peaks at theta and at
    360 - theta alike.  The force at the peak is recomputed here from the exact slider-crank law (any
    kinematics text, e.g. Khurmi & Gupta, Theory of Machines, ch. 15) with the webs at target."""
    job = _job(tmp_path, {"engine.balance_factor": 0.9})     # over-balanced: the peak is off TDC
    s = study_of(job)
    p = s["peak"]
    assert 0.0 < p["crank_angle_after_tdc_deg"] < 180.0
    th = math.radians(p["crank_angle_after_tdc_deg"])
    e = job.engine
    r, l, w, m = e.crank_radius, e.rod_length, e.omega, e.m_reciprocating
    q = math.sqrt(l * l - (r * math.sin(th)) ** 2)
    acc = -r * w * w * (math.cos(th) + r * math.cos(2 * th) / q + (r ** 3) * math.sin(2 * th) ** 2 / (4 * q ** 3))
    fy = -m * acc * 1e-6 - e.balance_factor * m * r * w * w * 1e-6 * math.cos(th)
    fx = e.balance_factor * m * r * w * w * 1e-6 * math.sin(th)
    assert math.hypot(fx, fy) == pytest.approx(s["peak_N"], rel=1e-5)
    assert p["direction_deg"] == pytest.approx(math.degrees(math.atan2(-fx, fy)) % 360.0, abs=1e-3)
    assert p["same_peak_at_deg"] == pytest.approx(360.0 - p["crank_angle_after_tdc_deg"], abs=1e-6)


def test_clockwise_crank_mirrors_the_force_in_x(tmp_path):
    ccw = study_of(_job(tmp_path, {"engine.cylinder_tilt": 15.0}))
    cw = study_of(_job(tmp_path, {"engine.cylinder_tilt": -15.0, "engine.rotation": "cw"}))
    # the mirror image of a ccw crank with its cylinder tilted +15 deg is a cw crank tilted -15 deg
    for a, b in zip(ccw["cycle"], cw["cycle"]):
        assert b["force_x_N"] == pytest.approx(-a["force_x_N"], abs=1e-6)
        assert b["force_y_N"] == pytest.approx(a["force_y_N"], abs=1e-6)
    assert cw["peak_N"] == pytest.approx(ccw["peak_N"])


# ------------------------------------------------------------------ inertia torque
def test_inertia_torque_matches_the_harmonic_series_and_ignores_the_counterweight(tmp_path):
    """T = m r^2 w^2 (lam/4 sin t - 1/2 sin 2t - 3 lam/4 sin 3t - lam^2/4 sin 4t) + O(lam^3) (the textbook
    series of the reciprocating inertia torque, e.g. Den Hartog, Mechanical Vibrations, ch. 5; from memory)."""
    from geomgen.balance import reciprocating_torque

    r, l, w, m = 30.0, 150.0, 800.0, 400.0
    lam = r / l
    th = np.linspace(0.0, 2 * math.pi, 721)
    exact = reciprocating_torque(th, crank_radius=r, rod_length=l, omega=w, m_reciprocating=m)
    series = m * (r * 1e-3) ** 2 * 1e-3 * w * w * (lam / 4 * np.sin(th) - 0.5 * np.sin(2 * th)
                                                   - 0.75 * lam * np.sin(3 * th) - lam ** 2 / 4 * np.sin(4 * th))
    amplitude = m * (r * 1e-3) ** 2 * 1e-3 * w * w * 0.5
    assert np.max(np.abs(exact - series)) <= 2 * lam ** 3 * amplitude
    assert abs(np.mean(exact[:-1])) <= 1e-9 * amplitude           # no mean torque over a revolution
    a = study_of(_job(tmp_path, {"engine.balance_factor": 0.3}))["inertia_torque"]
    b = study_of(_job(tmp_path, {"engine.balance_factor": 0.9}))["inertia_torque"]
    assert a == b


# ------------------------------------------------------------------ ISO 21940-11 rotor mass
def test_iso_rotor_is_the_crank_as_spun_with_its_bob(tmp_path):
    job = _job(tmp_path)
    webs = pipeline.plan_webs(job, method="none")
    props = [w.plan.predicted for w in webs]
    iso = pipeline.crank_figures(job, webs, props)["iso_21940_11"]
    rotor_g = sum(p.mass for p in props) + 140.0 + 381.5            # webs + crankpin + bob
    assert iso["rotor_mass_kg"] == pytest.approx(rotor_g / 1000.0, rel=1e-6)
    # U_per = 1000 G m / Omega (ISO 21940-11), G 6.3 mm/s at 11000 rpm
    assert iso["permissible_residual_gmm"] == pytest.approx(
        1000 * 6.3 * rotor_g / 1000 / (11000 * 2 * math.pi / 60), rel=1e-6)
    assert "whole drive" in iso["grade_note"] and "bob weight" in iso["rotor_mass_note"]


# ------------------------------------------------------------------ couples
def test_identical_webs_with_off_axis_features_keep_a_couple(tmp_path):
    """A blind hole at x = 40 on both webs' outer faces: web b, turned 180 deg about Y, has it at x = -40 and
    on the far side of the rod's plane, so the two x-z products add (closed form of a point mass per hole:
    the hole's mass m at its centroid)."""
    hole = {"kind": "hole", "x": 40.0, "y": -30.0, "diameter": 10.0, "depth": 8.0, "point_angle": 180.0}
    job = _job(tmp_path, {"web.features": [hole]})
    webs = pipeline.plan_webs(job, method="none")
    crank = pipeline.crank_figures(job, webs, [w.plan.predicted for w in webs])
    m = STEEL * 1e-3 * math.pi * 25.0 * 8.0            # g taken out per hole
    z_a = 18.0 - 4.0                                   # web a: hole centroid at z = 14
    gap = 20.0
    z_mid = -gap / 2
    cx = -m * 40.0 * (z_a - z_mid) + -m * (-40.0) * ((-z_a - gap) - z_mid)
    assert crank["couple_gmm2"][0] == pytest.approx(cx, rel=1e-5)
    assert crank["couple_gmm2"][0] == pytest.approx(2 * -m * 40.0 * (z_a + gap / 2), rel=1e-5)
    # the pin bores are centred in each web's thickness: no y couple beyond the holes' own y products
    cy = -m * (-30.0) * (z_a - z_mid) + -m * (-30.0) * ((-z_a - gap) - z_mid)
    assert crank["couple_gmm2"][1] == pytest.approx(cy, rel=1e-5, abs=1e-6)
    plane = math.hypot(cx, cy) / (gap + 18.0)
    assert crank["plane_unbalance_gmm"] == pytest.approx(plane, rel=1e-5)
    assert plane > 0.5 * job.tolerance_gmm and len(crank["warnings"]) == 1


def test_unequal_webs_get_the_couple_free_split(tmp_path):
    job = _job(tmp_path, {"web": DROP, "webs": [
        {"name": "a", "diameter": 130.0, "thickness": 18.0, "material": "steel", "pin_bore": 28.0},
        {"name": "b", "diameter": 130.0, "thickness": 24.0, "material": "steel", "pin_bore": 28.0}]})
    webs = pipeline.plan_webs(job, method="none")
    crank = pipeline.crank_figures(job, webs, [w.plan.predicted for w in webs])
    # bare prisms: each web's unbalance acts at its mid-thickness, t/2 + gap/2 from the rod's plane
    la, lb = 9.0 + 10.0, 12.0 + 10.0
    assert crank["levers_mm"] == pytest.approx([la, lb], rel=1e-6)
    assert crank["couple_free_shares"]["a"] == pytest.approx(lb / (la + lb), rel=1e-6)
    assert any("split that leaves no couple" in w for w in crank["warnings"])


# ------------------------------------------------------------------ plugs
def test_a_hand_placed_plug_takes_the_jobs_plug_material(tmp_path):
    plug = {"kind": "plug", "x": 0.0, "y": -40.0, "diameter": 10.0, "length": 10.0}
    job = _job(tmp_path, {"web.features": [plug], "correction.plug_material": "W-alloy-class-1"})
    assert job.webs[0].features[0].material == "W-alloy-class-1"
    dense = _job(tmp_path, {"web.features": [plug], "correction.plug_material": 18.1})
    assert dense.webs[0].features[0].density == 18.1


def test_plug_density_range_of_astm_b777_class_3(tmp_path):
    """ASTM B777-15 Table 1, class 3: 17.75 .. 18.35 g/cm^3 (nominal the middle, 18.05).  One plug of 10 x
    10 mm at (0, -40) on each web: V = 785.398 mm^3; at the low end each takes 0.3e-3 * V = 0.23562 g less
    out of the counterweight side: the crank's unbalance changes by 2 * 0.23562 * 40 = 18.85 g*mm along +Y."""
    plug = {"kind": "plug", "x": 0.0, "y": -40.0, "diameter": 10.0, "length": 10.0, "material": "W-alloy-class-3"}
    job = _job(tmp_path, {"web.features": [plug]})
    webs = pipeline.plan_webs(job, method="none")
    r = pipeline.plug_density_range(job, webs)
    assert r["materials"]["W-alloy-class-3"]["min_g_cm3"] == 17.75
    assert r["materials"]["W-alloy-class-3"]["max_g_cm3"] == 18.35
    v = math.pi * 25.0 * 10.0
    low = 2 * 0.3e-3 * v * 40.0
    assert r["unbalance_change_at_low_gmm"] == pytest.approx([0.0, low], rel=1e-5, abs=1e-9)
    assert r["unbalance_change_at_high_gmm"] == pytest.approx([0.0, -low], rel=1e-5, abs=1e-9)
    # the balance factor falls when the counterweight is lighter: -18.85 / (330 * 32 / 100)
    assert r["balance_factor_change_at_low_percent"] == pytest.approx(-low / 105.6, rel=1e-5)


# ------------------------------------------------------------------ trim angles
@pytest.mark.parametrize("rotation, against, expected", [
    ("ccw", False, 30.0), ("cw", False, -30.0), ("ccw", True, -30.0), ("cw", True, 30.0)])
def test_machine_reading_to_crank_frame(rotation, against, expected):
    """A balancing machine reads the heavy spot from the pin in the direction of rotation (common practice);
    the crank frame measures counter-clockwise seen from web a's outer face."""
    assert pipeline.crank_frame_angle(30.0, rotation=rotation, against_rotation=against) == expected
    spot = pipeline.heavy_spot_vector(100.0, expected)
    assert spot == pytest.approx([-100.0 * math.sin(math.radians(expected)), 100.0 * math.cos(math.radians(expected))])


@pytest.mark.cad
def test_couple_matches_the_exported_solids(tmp_path):
    """The couple in plan.json against the products of inertia of web-a.step and web-b.step, read back and
    integrated by OpenCascade here (GProp on the STEP's solids, not geomgen's MassProps): web b is placed as
    in crank.step, (x, y, z) -> (-x, y, -z - gap), and the couple is taken about the rod's plane z = -gap/2."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    from geomgen.cli import main
    from geomgen.export import read_step

    hole = {"kind": "hole", "x": 40.0, "y": -30.0, "diameter": 10.0, "depth": 8.0, "point_angle": 180.0}
    path = tmp_path / "job.toml"
    path.write_text(toml_dumps(minimal_job_dict({"web.features": [hole]})))
    assert main(["build", str(path), "--out", str(tmp_path / "out")]) == 0
    gap = 20.0

    def raw(name):
        """∫x dm, ∫y dm, ∫xz dm, ∫yz dm of one web file (steel), web frame."""
        total = np.zeros(4)
        for _, shape in read_step(tmp_path / "out" / f"web-{name}.step"):
            p = GProp_GProps()
            BRepGProp.VolumeProperties_s(shape.wrapped if hasattr(shape, "wrapped") else shape, p, 1e-11)
            m, c, inertia = p.Mass() * STEEL * 1e-3, p.CentreOfMass(), p.MatrixOfInertia()
            # OpenCascade's products about the centre carry the minus sign: I_xz = -∫(x-xc)(z-zc) dm
            xz = -inertia.Value(1, 3) * STEEL * 1e-3 + m * c.X() * c.Z()
            yz = -inertia.Value(2, 3) * STEEL * 1e-3 + m * c.Y() * c.Z()
            total += [m * c.X(), m * c.Y(), xz, yz]
        return total

    ax, ay, axz, ayz = raw("a")
    bx, by, bxz, byz = raw("b")
    z_mid = -gap / 2
    # web b turned: x -> -x, z -> -z - gap, so xz -> xz + gap x, yz -> -yz - gap y
    cx = (axz - z_mid * ax) + ((bxz + gap * bx) - z_mid * (-bx))
    cy = (ayz - z_mid * ay) + ((-byz - gap * by) - z_mid * by)
    import json

    doc = json.loads((tmp_path / "out" / "plan.json").read_text())
    assert doc["crank"]["couple_gmm2"] == pytest.approx([cx, cy], rel=1e-5, abs=1e-3)
    assert abs(cx) > 1000.0                 # the off-axis hole on both webs' outer faces: the x couples add


def test_plug_material_may_be_a_density_with_its_unit(tmp_path):
    job = _job(tmp_path, {"correction.plug_material": "17.6 g/cm^3"})
    assert job.correction.plug_material.density == pytest.approx(17.6)
    named = _job(tmp_path, {"correction.plug_material": "w-alloy-class-2"})   # names are case-blind
    assert named.correction.plug_material.name == "W-alloy-class-2"


def test_a_step_file_given_as_the_job_says_what_it_is(tmp_path, capsys):
    from geomgen.cli import main

    step = tmp_path / "web-a.step"
    step.write_text("ISO-10303-21;\n")
    assert main(["plan", str(step), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "is a STEP file, not a job" in err[0] and "geomgen inspect" in err[0]
    assert not (tmp_path / "out").exists()


def test_a_deviation_beyond_the_iso_grade_is_said_in_words(tmp_path):
    """A bare web far from its target (the build of the job's own features): U_per = 1000 G m / Omega
    (ISO 21940-11) is a few tens of g*mm, the deviation thousands: plan.json warns in words."""
    from geomgen.plan_json import plan_document

    job = _job(tmp_path)
    webs = pipeline.plan_webs(job, method="none")
    doc = plan_document(job, "build", webs, [], None)
    iso = doc["crank"]["iso_21940_11"]["permissible_residual_gmm"]
    assert math.hypot(*doc["crank"]["deviation_gmm"]) > iso
    assert any("ISO 21940-11 G6.3 permits" in w for w in doc["warnings"])
