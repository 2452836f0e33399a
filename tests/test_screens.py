"""geomgen.screens: press fit, wall around the crankpin bore, wall carrying each plug.

The webs are the minimal test job's (tests/conftest.py, invented demo numbers): a
130 mm full-circle steel web, 18 mm thick, stroke 64 mm, so the 28 mm pin bore's
centre is at (0, 32) and its edge 14 mm from it.  Distances are worked by hand from
that geometry; the exact distance code is also checked against shapely (an
independent library) on finely flattened outlines.  The stress formulas are tested
against Shigley's worked answers in tests/test_loads.py; here they are checked as
the screen applies them.
"""

import math

import pytest
import shapely

from geomgen import job as jobmod
from geomgen import pipeline, report
from geomgen.errors import BadInput
from geomgen.features import footprint
from geomgen.loads import omega
from geomgen.loops import Arc, Line, circle
from geomgen.screens import (
    CAUTION,
    circle_ligament,
    hub_edge,
    point_loop_distance,
    point_segment_distance,
    screen_figures,
)

from conftest import minimal_job_dict

PIN = (0.0, 32.0)
E_STEEL = 207e3      # MPa, the table's steel (Shigley Table A-5)


def _job(**web):
    data = minimal_job_dict()
    data["web"].update(web)
    return jobmod.from_dict(data)


def _bare(job):
    """The job's webs with their own features only (no planning): pure maths, no CAD."""
    return pipeline.plan_webs(job, method="none")


# ------------------------------------------------------------------ exact distances
def test_point_to_line_and_arc_by_hand():
    line = Line((0.0, 0.0), (10.0, 0.0))
    assert point_segment_distance((5.0, 3.0), line) == 3.0           # foot of the perpendicular inside
    assert point_segment_distance((13.0, 4.0), line) == 5.0          # 3-4-5 to the end point
    arc = Arc((0.0, 0.0), 10.0, 0.0, 90.0)                           # first quadrant, ccw
    assert point_segment_distance((3.0, 4.0), arc) == pytest.approx(5.0, abs=1e-12)   # inside, radial
    assert point_segment_distance((0.0, 0.0), arc) == 10.0
    # (-6, -8) is off the arc's sweep: the nearest point is an end, (10, 0) or (0, 10): sqrt(16^2 + 8^2)
    assert point_segment_distance((-6.0, -8.0), arc) == pytest.approx(math.hypot(16.0, 8.0), abs=1e-12)
    cw = Arc((0.0, 0.0), 10.0, 90.0, -90.0)                          # the same arc drawn clockwise
    assert point_segment_distance((3.0, 4.0), cw) == pytest.approx(5.0, abs=1e-12)


@pytest.mark.parametrize("point", [(0.0, 32.0), (-20.0, 47.0), (41.0, -3.0), (5.0, 80.0)])
def test_distance_to_a_kidney_agrees_with_shapely(point):
    # shapely's distance to the outline flattened within 1e-4 mm: within that chord of the exact figure
    from geomgen.features import feature_from_table

    loop = footprint(feature_from_table({"kind": "pocket", "r_inner": 40.0, "r_outer": 55.0, "angle_start": -30.0,
                                         "angle_end": 40.0, "depth": 5.0, "corner_radius": 4.0}, where="f"))
    exact = point_loop_distance(point, loop)
    flat = shapely.distance(shapely.Point(point), loop.polygon(1e-4).exterior)
    assert exact == pytest.approx(flat, abs=2e-4)


# ------------------------------------------------------------------ wall around the pin bore
def _ligament(table):
    from geomgen.features import feature_from_table

    return circle_ligament(PIN, 14.0, footprint(feature_from_table(table, where="f", thickness=18.0)))


def test_ligament_to_holes_by_hand():
    # a 6 mm hole at (0, 60): 60 - 32 - 14 - 3 = 11 mm of wall
    assert _ligament({"kind": "hole", "x": 0.0, "y": 60.0, "diameter": 6.0, "depth": 5.0}) == pytest.approx(11.0)
    # off the centre line, a 10 mm plug at (30, 0): hypot(30, 32) - 14 - 5 = 24.8634 mm
    assert _ligament({"kind": "plug", "x": 30.0, "y": 0.0, "diameter": 10.0, "length": 18.0}) == \
        pytest.approx(math.hypot(30.0, 32.0) - 19.0, abs=1e-12)
    # a hole cutting 1 mm into the bore: 48 - 32 - 14 - 3 = -1
    assert _ligament({"kind": "hole", "x": 0.0, "y": 48.0, "diameter": 6.0, "depth": 5.0}) == pytest.approx(-1.0)


def test_ligament_to_a_pocket_by_hand():
    # a kidney from r 50 to 58 spanning -20 .. 20 deg about +Y: its inner arc passes (0, 50),
    # 18 mm from the pin centre, so 18 - 14 = 4 mm of wall
    table = {"kind": "pocket", "r_inner": 50.0, "r_outer": 58.0, "angle_start": -20.0, "angle_end": 20.0,
             "depth": 5.0, "corner_radius": 2.0}
    assert _ligament(table) == pytest.approx(4.0, abs=1e-12)


def test_a_pin_centre_inside_a_feature_is_a_negative_ligament():
    # a hole over the pin centre: the distance to its outline plus the bore's radius, negative
    assert circle_ligament(PIN, 14.0, circle(0.0, 33.0, 20.0)) == pytest.approx(-(19.0 + 14.0))


def test_hub_edge_rim_and_main_bore():
    # full-circle 130 mm web: rim 65 - 32 = 33 mm from the pin centre; a 20 mm main bore: 32 - 10 = 22 mm
    job = _job()
    assert hub_edge(pipeline.web_section(job, job.webs[0])) == (pytest.approx(33.0), "rim")
    job = _job(main_bore=20.0)
    assert hub_edge(pipeline.web_section(job, job.webs[0])) == (pytest.approx(22.0), "main bore")


def test_pin_ligament_rows_name_the_nearest_feature():
    job = _job(features=[{"kind": "hole", "x": 0.0, "y": -40.0, "diameter": 10.0, "depth": 8.0},
                         {"kind": "hole", "x": 0.0, "y": 55.0, "diameter": 4.0, "depth": 5.0}])
    rows = screen_figures(job, _bare(job))["pin_ligaments"]
    assert [r["web"] for r in rows] == ["a", "b"]
    for r in rows:
        # the second hole: 55 - 32 - 14 - 2 = 7 mm; the job's pin_wall is the default 6 mm
        assert (r["feature"], r["feature_kind"], r["feature_origin"]) == (2, "hole", "existing")
        assert r["ligament_mm"] == pytest.approx(7.0)
        assert r["pin_wall_mm"] == 6.0 and r["below_pin_wall"] is False
        assert r["edge_wall_mm"] == pytest.approx(19.0) and r["edge"] == "rim"      # 33 - 14


def test_planned_holes_keep_the_pin_wall():
    # the planner keeps `pin_wall` around the bore; the screen measures it on its own
    job = _job()
    rows = screen_figures(job, pipeline.plan_webs(job))["pin_ligaments"]
    for r in rows:
        assert r["feature_origin"] == "new"
        assert r["ligament_mm"] >= job.correction.pin_wall - 1e-6


def test_no_features_no_ligament():
    job = _job()
    row = screen_figures(job, _bare(job))["pin_ligaments"][0]
    assert row["ligament_mm"] is None and row["feature"] is None and row["below_pin_wall"] is False


# ------------------------------------------------------------------ press fit
def test_press_fit_screen_by_hand():
    # 28 mm steel pin, 0.06 mm diametral, web taken as a ring of 66 mm (the rim is 33 mm from the pin centre).
    # One material, solid pin: p = E delta/(2 d) (1 - (d/D)^2) (Shigley eq. 3-57)
    #   = 207000 * 0.06/56 * (1 - (28/66)^2) = 221.786 * 0.820018 = 181.868 MPa
    # web hoop at the bore p (33^2 + 14^2)/(33^2 - 14^2) = 181.868 * 1285/893 = 261.70 MPa (eq. 3-59)
    # unbounded web: p = 221.786 MPa, and a solid pin is at -p throughout
    job = _job(pin_interference=0.06)
    fits = screen_figures(job, _bare(job))["press_fit"]
    assert [f["web"] for f in fits] == ["a", "b"]
    f = fits[0]
    assert f["contact_pressure_MPa"] == pytest.approx(E_STEEL * 0.06 / 56 * (1 - (28 / 66) ** 2), rel=1e-5)
    assert f["contact_pressure_MPa"] == pytest.approx(181.868, abs=1e-3)
    assert f["web_hoop_MPa"] == pytest.approx(261.70, abs=0.01)
    assert f["contact_pressure_MPa_unbounded_hub"] == pytest.approx(221.786, abs=1e-3)
    assert f["pin_hoop_MPa"] == pytest.approx(-221.786, abs=1e-3)
    assert f["hub_outer_diameter_mm"] == pytest.approx(66.0) and f["hub_wall_mm"] == pytest.approx(19.0)
    assert f["hub_edge"] == "rim" and f["interference_per_diameter"] == pytest.approx(0.06 / 28, rel=1e-5)
    assert (f["web_material"], f["pin_material"], f["web_E_GPa"], f["pin_nu"]) == ("steel", "steel", 207.0, 0.292)


def test_press_fit_hollow_pin_of_another_material():
    # a 12 mm bore in an alloy-steel pin; the web ring ends at a 20 mm main bore (22 mm from the pin centre).
    # Shigley eq. 3-56 by hand with R = 14, r_o = 22, r_i = 6, delta = 0.03, E 207 GPa both, nu 0.292:
    #   hub term 14/207000 * ((484 + 196)/(484 - 196) + 0.292) = 6.7633e-5 * 2.65311 = 1.79437e-4
    #   pin term 14/207000 * ((196 + 36)/(196 - 36) - 0.292) = 6.7633e-5 * 1.158   = 7.8319e-5
    #   p = 0.03 / 2.57756e-4 = 116.39 MPa
    job = _job(pin_interference=0.06, pin_inner_diameter=12.0, pin_material="alloy-steel", main_bore=20.0)
    f = screen_figures(job, _bare(job))["press_fit"][0]
    assert f["hub_edge"] == "main bore" and f["hub_outer_diameter_mm"] == pytest.approx(44.0)
    assert f["contact_pressure_MPa"] == pytest.approx(116.39, abs=0.01)
    assert f["pin_material"] == "alloy-steel" and f["pin_inner_diameter_mm"] == 12.0
    # largest pin stress: at its own bore, -2 p R^2/(R^2 - r_i^2), at the unbounded-web pressure
    top = f["contact_pressure_MPa_unbounded_hub"]
    assert f["pin_hoop_MPa"] == pytest.approx(-2 * top * 196 / 160, rel=1e-5)


def test_no_interference_no_press_fit_screen():
    job = _job()
    assert screen_figures(job, _bare(job))["press_fit"] == []


# ------------------------------------------------------------------ job keys
def test_press_fit_keys_read_with_units_and_per_web():
    job = _job(pin_interference="0.0024 in")
    assert job.webs[0].pin_interference == pytest.approx(0.06096, abs=1e-12)     # 0.0024 * 25.4
    data = minimal_job_dict()
    data["webs"] = [{"name": "a", "pin_interference": 0.05}, {"name": "b", "pin_material": "alloy-steel"}]
    a, b = jobmod.from_dict(data).webs
    assert (a.pin_interference, a.pin_material) == (0.05, None)
    assert (b.pin_interference, b.pin_material.name) == (0.0, "alloy-steel")


@pytest.mark.parametrize("web, start", [
    ({"pin_interference": -0.01}, "web.pin_interference: -0.01 mm is out of range"),
    ({"pin_interference": 0.5}, "web.pin_interference: 0.5 mm is more than 1 % of the 28 mm pin bore"),
    ({"pin_inner_diameter": 28.0}, "web.pin_inner_diameter: 28 mm must be smaller"),
    ({"pin_material": "unobtainium"}, "web.pin_material: unknown material"),
    ({"pin_material": 7.8}, "web.pin_material: must be a material name"),
    ({"pin_interference": 0.06, "material": None, "density": 7.8}, "web.pin_interference: the press-fit screen"),
])
def test_bad_press_fit_keys(web, start):
    data = minimal_job_dict()
    for key, value in web.items():
        if value is None:
            data["web"].pop(key)
        else:
            data["web"][key] = value
    with pytest.raises(BadInput) as err:
        jobmod.from_dict(data)
    assert str(err.value).startswith(start)


# ------------------------------------------------------------------ plug walls
def test_plug_wall_by_hand():
    # a 12 mm class-3 plug 18 mm long at (0, -50) in the 130 mm web: 65 - 50 - 6 = 9 mm to the rim.
    # mass 18.05 g/cm^3 * pi/4 * 1.2^2 cm^2 * 1.8 cm = 36.745 g (ASTM B777 class 3 mid-range density);
    # at 11000 rpm F = m w^2 r = 0.036745 * 1151.917^2 * 0.050 = 2437.9 N;
    # bearing F/(12 * 18) = 11.29 MPa; wall shear F/(2 * 9 * 18) = 7.52 MPa
    job = _job(features=[{"kind": "plug", "x": 0.0, "y": -50.0, "diameter": 12.0, "length": 18.0}])
    rows = screen_figures(job, _bare(job))["plug_walls"]
    assert len(rows) == 2
    r = rows[0]
    mass = 18.05 * math.pi / 4 * 1.2 ** 2 * 1.8
    load = mass * 1e-3 * omega(11000) ** 2 * 0.050
    assert r["wall_to_rim_mm"] == pytest.approx(9.0)
    assert r["load_N_max_rpm"] == pytest.approx(load, rel=1e-5)
    assert r["load_N_max_rpm"] == pytest.approx(2437.9, abs=0.1)
    assert r["bearing_MPa_max_rpm"] == pytest.approx(load / 216, rel=1e-5)
    assert r["wall_shear_MPa_max_rpm"] == pytest.approx(load / 324, rel=1e-5)
    assert r["wall_shear_MPa_max_rpm"] == pytest.approx(7.52, abs=0.005)
    # at the job's overspeed (1.2 x by default) the pull grows with the square of the speed
    assert r["load_N_overspeed"] == pytest.approx(1.44 * load, rel=1e-5)
    # the same plug as the pipeline's plug-load table
    plugs = pipeline.safety_figures(job, _bare(job))["plugs"]
    assert plugs[0]["load_N_max_rpm"] == pytest.approx(r["load_N_max_rpm"], rel=1e-6)


# ------------------------------------------------------------------ plan.json and the report
def test_safety_carries_the_screens_and_the_report_shows_them():
    job = _job(pin_interference=0.06,
               features=[{"kind": "plug", "x": 0.0, "y": -50.0, "diameter": 12.0, "length": 18.0},
                         {"kind": "hole", "x": 0.0, "y": 52.0, "diameter": 4.0, "depth": 5.0}])
    safety = pipeline.safety_figures(job, _bare(job))
    for key in ("press_fit", "press_fit_method", "pin_ligaments", "pin_ligament_method", "plug_walls",
                "plug_wall_method", "screen_caution", "plugs", "discs"):
        assert key in safety
    assert safety["discs"][0]["poisson_ratio"] == 0.292                 # the web's own nu, steel
    page = report._safety({"safety": safety})
    assert "Crankpin press fit" in page and "Wall around the crankpin bore" in page
    assert "182 – 222" in page                  # contact pressure, ring to unbounded web (MPa, by hand above)
    assert ">262<" in page and ">-222<" in page  # web hoop, pin hoop (MPa)
    # the 4 mm hole at (0, 52): 52 - 32 - 14 - 2 = 4 mm, below the 6 mm pin_wall, so flagged
    assert '<span class="bad">4.00</span>' in page
    assert ">9.00<" in page                     # plug wall to the rim (mm)
    assert CAUTION in page.replace("&#x27;", "'")
