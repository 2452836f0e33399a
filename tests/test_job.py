"""geomgen.job: loading a job file, converting its units, and every validation rule.

Each bad-input case checks that `load` raises BadInput with ONE line that names
the key path (README, Commands, exit code 2: "one line on stderr naming the
key or file and what is allowed").  Unit factors: 1 in = 25.4 mm, 1 oz = 28.349523125 g,
1 lb = 453.59237 g exactly (NIST SP 811, appendix B).  Target and tolerance:
the README's definitions ("What the balance figures mean"), worked by hand in the comments.
"""

import math
import tomllib

import pytest

from geomgen import job as jobmod
from geomgen.drills import series
from geomgen.errors import BadInput
from geomgen.features import Hole, Plug, Pocket
from geomgen.materials import MATERIALS

from conftest import DROP, minimal_job_dict, minimal_job_text, toml_dumps, write_job

HOLE = {"kind": "hole", "x": 0.0, "y": -40.0, "diameter": 10.0, "depth": 8.0}
POCKET = {"kind": "pocket", "r_inner": 40.0, "r_outer": 55.0, "angle_start": 150.0, "angle_end": 210.0,
          "depth": 6.0, "corner_radius": 3.0}
PLUG = {"kind": "plug", "x": 0.0, "y": -50.0, "diameter": 12.0, "length": 18.0, "material": "W-alloy-class-3"}


def bad(tmp_path, changes=None, *fragments, **overrides) -> str:
    """Load the minimal job with `changes`; it must fail with one line holding every fragment."""
    path = write_job(tmp_path, changes, **overrides)
    with pytest.raises(BadInput) as err:
        jobmod.load(path)
    msg = str(err.value)
    assert "\n" not in msg, msg
    assert msg.startswith("job.toml: "), msg          # the file is named first
    for fragment in fragments:
        assert fragment in msg, f"{fragment!r} not in {msg!r}"
    return msg


# ------------------------------------------------------------------ the helpers themselves

def test_toml_helper_round_trips():
    # tomllib (Python's own TOML 1.0 reader) must read back exactly what conftest wrote
    data = minimal_job_dict({"web.features": [HOLE, POCKET]}, balancer={"share": 0.5, "offset": [60.0, -20.0]})
    assert tomllib.loads(toml_dumps(data)) == data
    assert tomllib.loads(minimal_job_text()) == minimal_job_dict()
    nan = tomllib.loads(minimal_job_text(engine__stroke=math.nan))["engine"]["stroke"]
    assert math.isnan(nan)


# ------------------------------------------------------------------ valid jobs

def test_plain_numbers_load(job_path):
    job = jobmod.load(job_path)
    e = job.engine
    assert (e.stroke, e.rod_length, e.max_rpm, e.balance_factor) == (64.0, 110.0, 11000.0, 0.55)
    assert e.crank_radius == 32.0
    assert e.m_reciprocating == 330.0                   # 250 + 80
    assert e.m_rotating == 200.0                        # the rod's big end alone
    assert e.m_crank_parts == 140.0                     # the crankpin
    assert e.bob_weight_g == pytest.approx(381.5)       # 200 + 0.55 * 330, worked by hand
    assert e.omega == pytest.approx(11000 * 2 * math.pi / 60, rel=1e-15)  # 1151.917 rad/s
    assert e.cylinder_tilt == 0.0
    assert job.name == "demo" and job.balancer is None
    assert [w.name for w in job.webs] == ["a", "b"]
    for w in job.webs:
        assert (w.diameter, w.thickness, w.pin_bore, w.main_bore, w.share) == (130.0, 18.0, 28.0, 0.0, 0.5)
        assert w.outline is None and w.features == ()
        assert w.material is MATERIALS["steel"] and w.density == 7.85
    c = job.correction
    assert c.kind == "holes" and c.drill_series == "metric" and c.drills == series("metric")
    assert c.plug_material is MATERIALS["W-alloy-class-3"]
    assert c.plug_material.density == pytest.approx(18.05)  # mid-range of 17.75..18.35 (ASTM B777-15 Table 1)
    assert job.output.sheet_units == "mm"


def test_unit_strings_load(tmp_path):
    path = write_job(tmp_path, {
        "engine.stroke": "2.52 in",                     # 64.008 mm
        "engine.rod_length": "4.33 in",                 # 109.982 mm
        "engine.max_rpm": "4200 rpm",
        "engine.reciprocating.piston": "9 oz",          # 9 * 28.349523125 = 255.145708125 g
        "engine.crank_parts.crankpin": "0.31 lb",       # 0.31 * 453.59237 = 140.6136347 g
        "web.material": DROP,
        "web.density": "0.284 lb/in^3",                 # 0.284 * 453.59237 / 2.54^3 = 7.861093 g/cm^3
        "web.thickness": "0.75 in",                     # 19.05 mm
        "web.features": [{"kind": "hole", "x": 0.0, "y": "-1.5 in", "diameter": "0.375 in",
                          "depth": "8 mm"}],
        "correction.max_depth": "0.5 in",               # 12.7 mm
    })
    job = jobmod.load(path)
    e = job.engine
    assert e.stroke == pytest.approx(64.008, rel=1e-12)
    assert e.rod_length == pytest.approx(109.982, rel=1e-12)
    assert e.max_rpm == pytest.approx(4200.0, rel=1e-12)
    assert e.reciprocating["piston"] == pytest.approx(255.145708125, rel=1e-12)
    assert e.crank_parts["crankpin"] == pytest.approx(140.6136347, rel=1e-9)
    web = job.webs[0]
    assert web.density == pytest.approx(7.861093, rel=1e-6)
    assert web.thickness == pytest.approx(19.05, rel=1e-12)
    (hole,) = web.features
    assert isinstance(hole, Hole)
    assert hole.y == pytest.approx(-38.1, rel=1e-12)         # 1.5 * 25.4
    assert hole.diameter == pytest.approx(9.525, rel=1e-12)  # 3/8 * 25.4
    assert hole.depth == 8.0 and hole.point_angle == 118.0 and hole.face == "outer"
    assert job.correction.max_depth == pytest.approx(12.7, rel=1e-12)


def test_features_of_each_kind_load(tmp_path):
    job = jobmod.load(write_job(tmp_path, web__features=[HOLE, POCKET, PLUG,
                                                          {"kind": "hole", "x": 10.0, "y": -45.0,
                                                           "diameter": 8.0, "through": True}]))
    hole, pocket, plug, through = job.webs[0].features
    assert isinstance(hole, Hole) and isinstance(pocket, Pocket) and isinstance(plug, Plug)
    assert pocket.span_deg == 60.0
    assert plug.length == 18.0 and plug.material == "W-alloy-class-3"
    assert through.through and through.depth == 18.0    # a through hole is as deep as the web


def test_balancer_and_options(tmp_path):
    job = jobmod.load(write_job(tmp_path, balancer={"share": 0.5, "offset": ["60 mm", "-0.7874 in"]},
                                engine__cylinder_tilt=15.0, engine__balance_factor="55 %",
                                correction__drills=["8 mm", "0.25 in", 8.0],
                                output={"sheet_units": "inch"}))
    assert job.balancer.share == 0.5
    assert job.balancer.offset == pytest.approx((60.0, -19.99996), rel=1e-9)  # 0.7874 * 25.4
    assert job.engine.cylinder_tilt == 15.0
    assert job.engine.balance_factor == pytest.approx(0.55)
    assert job.correction.drill_series == "list"
    assert job.correction.drills == pytest.approx((6.35, 8.0))  # sorted, duplicates merged
    assert job.output.sheet_units == "inch"


def test_limits_that_are_allowed(tmp_path):
    # the edges of each range are inside it
    for bf in (0.0, 1.5):
        assert jobmod.load(write_job(tmp_path, engine__balance_factor=bf)).engine.balance_factor == bf
    assert jobmod.load(write_job(tmp_path, engine__rod_length=32.001)).engine.rod_length == 32.001
    assert jobmod.load(write_job(tmp_path, web__pin_bore=65.8)).webs[0].pin_bore == 65.8   # 32 + 32.9 < 65
    assert jobmod.load(write_job(tmp_path, web__main_bore=35.9)).webs[0].main_bore == 35.9  # 17.95 + 14 < 32


def test_from_dict_without_a_file():
    job = jobmod.from_dict(minimal_job_dict())
    assert job.path is None and job.engine.stroke == 64.0


# ------------------------------------------------------------------ target and tolerance

def test_target_and_tolerance_by_hand(job_path):
    job = jobmod.load(job_path)
    # README: U_webs = -(rotating end + crank parts + BF * m_recip) * stroke/2 along Y, split equally:
    #   -(340 + 0.55 * 330) * 32 = -521.5 * 32 = -16688 g*mm; per web -8344 g*mm
    for web in job.webs:
        assert job.target_gmm(web) == pytest.approx((0.0, -8344.0), abs=1e-9)
    # default tolerance 0.5 BF points: 0.005 * 330 * 32 = 52.8 g*mm for the whole crank
    assert job.tolerance_gmm == pytest.approx(52.8, rel=1e-12)


def test_target_with_unequal_shares_and_tighter_tolerance(tmp_path):
    path = write_job(tmp_path, webs=[{"name": "left", "share": 0.6}, {"name": "right", "share": 0.4}],
                     correction__tolerance_points=0.25, engine__balance_factor=0.7)
    job = jobmod.load(path)
    left, right = job.webs
    assert (left.name, right.name) == ("left", "right")
    # -(340 + 0.7 * 330) * 32 = -571 * 32 = -18272 g*mm; 0.6 -> -10963.2, 0.4 -> -7308.8
    assert job.target_gmm(left) == pytest.approx((0.0, -10963.2), rel=1e-12)
    assert job.target_gmm(right) == pytest.approx((0.0, -7308.8), rel=1e-12)
    # 0.25/100 * 330 * 32 = 26.4 g*mm
    assert job.tolerance_gmm == pytest.approx(26.4, rel=1e-12)


def test_webs_override_the_shared_web_table(tmp_path):
    path = write_job(tmp_path, webs=[{"name": "a"}, {"name": "b", "density": 7.2, "thickness": 20.0}])
    a, b = jobmod.load(path).webs
    assert a.density == 7.85 and a.thickness == 18.0
    assert b.density == 7.2 and b.thickness == 20.0   # 'density' replaces the shared 'material'
    assert b.diameter == 130.0


# ------------------------------------------------------------------ unknown keys

def test_typo_names_the_key_and_suggests_the_right_one(tmp_path):
    msg = bad(tmp_path, {"engine.max_rmp": 11000}, "engine.max_rmp", "'max_rpm'")
    assert "did you mean" in msg


@pytest.mark.parametrize("changes, key", [
    ({"colour": "red"}, "colour"),
    ({"engine.strok": 64.0}, "engine.strok"),
    ({"web.thicknes": 18.0}, "web.thicknes"),
    ({"correction.min_wal": 3.0}, "correction.min_wal"),
    ({"balancer.shar": 0.5}, "balancer.shar"),
    ({"output.sheet_unit": "mm"}, "output.sheet_unit"),
    ({"web.features": [{**HOLE, "diam": 10.0}]}, "web.features[1]"),
    ({"webs": [{"name": "a", "thick": 18.0}, {"name": "b"}]}, "webs[1].thick"),
])
def test_unknown_keys_in_every_table(tmp_path, changes, key):
    bad(tmp_path, changes, key, "unknown key", "allowed")


def test_unknown_feature_key_is_named(tmp_path):
    bad(tmp_path, {"web.features": [HOLE, {**POCKET, "radius": 1.0}]}, "web.features[2]", "'radius'")


# ------------------------------------------------------------------ numbers

@pytest.mark.parametrize("key", ["engine.stroke", "engine.max_rpm", "engine.reciprocating.piston",
                                 "web.thickness", "web.pin_bore", "correction.min_wall"])
@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf])
def test_nan_and_inf_from_toml(tmp_path, key, value):
    # TOML 1.0 has nan and inf literals; tomllib reads them as floats
    bad(tmp_path, {key: value}, key, "finite")


@pytest.mark.parametrize("key", ["engine.stroke", "engine.reciprocating.piston", "engine.crank_parts.crankpin",
                                 "web.thickness", "web.pin_bore", "web.diameter", "engine.max_rpm"])
@pytest.mark.parametrize("value", [0.0, -5.0])
def test_zero_and_negative_sizes_and_masses(tmp_path, key, value):
    bad(tmp_path, {key: value}, key, "> 0")


@pytest.mark.parametrize("bf", [-0.01, 1.51, 55])
def test_balance_factor_range(tmp_path, bf):
    bad(tmp_path, {"engine.balance_factor": bf}, "engine.balance_factor", ">= 0", "<= 1.5")


@pytest.mark.parametrize("rod", [32.0, 20.0])
def test_rod_not_longer_than_half_stroke(tmp_path, rod):
    bad(tmp_path, {"engine.rod_length": rod}, "engine.rod_length", "stroke/2 = 32")


@pytest.mark.parametrize("pin", [66.0, 80.0])
def test_pin_bore_must_fit_inside_the_web(tmp_path, pin):
    # stroke/2 + pin/2 = 32 + 33 = 65 >= 130/2: the bore reaches the rim
    bad(tmp_path, {"web.pin_bore": pin}, "web.pin_bore", "130 mm web")


@pytest.mark.parametrize("main", [36.0, 40.0])
def test_main_bore_must_not_meet_the_pin_bore(tmp_path, main):
    # main/2 + pin/2 = 18 + 14 = 32 = stroke/2: the two bores touch
    bad(tmp_path, {"web.main_bore": main}, "web.main_bore", "pin bore")


def test_wrong_dimension(tmp_path):
    bad(tmp_path, {"engine.stroke": "3 kg"}, "engine.stroke", "not a length")
    bad(tmp_path, {"engine.reciprocating.piston": "250 mm"}, "engine.reciprocating.piston", "not a mass")
    bad(tmp_path, {"web.density": "7.85 g", "web.material": DROP}, "web.density", "not a density")


@pytest.mark.parametrize("value", [True, [64.0], "sixty-four", {"a": 1.0}])
def test_non_numbers(tmp_path, value):
    bad(tmp_path, {"engine.stroke": value}, "engine.stroke")


@pytest.mark.parametrize("changes, key", [
    ({"engine": DROP}, "engine"),
    ({"engine.stroke": DROP}, "engine.stroke"),
    ({"engine.max_rpm": DROP}, "engine.max_rpm"),
    ({"engine.reciprocating": DROP}, "engine.reciprocating"),
    ({"engine.rotating": {}}, "engine.rotating"),
    ({"web": DROP}, "web"),
    ({"web.thickness": DROP}, "web.thickness"),
])
def test_missing_required_keys(tmp_path, changes, key):
    bad(tmp_path, changes, key, "missing" if "rotating" not in key else "table of weighed parts")


def test_any_positive_tolerance_is_accepted_in_either_spelling(make_job):
    # bf_tolerance_percent is the key; tolerance_points is its earlier spelling, the same number
    for key in ("bf_tolerance_percent", "tolerance_points"):
        job = jobmod.load(make_job({f"correction.{key}": 1.5}))
        assert job.correction.bf_tolerance_percent == 1.5
        # 1.5 % of m_recip * stroke/2 = 0.015 * 330 * 32 = 158.4 g*mm (worked by hand)
        assert job.tolerance_gmm == pytest.approx(158.4)


def test_tolerance_must_be_positive_and_given_once(tmp_path):
    bad(tmp_path, {"correction.bf_tolerance_percent": 0.0}, "correction.bf_tolerance_percent", "> 0")
    bad(tmp_path, {"correction.bf_tolerance_percent": 0.5, "correction.tolerance_points": 0.5},
        "correction", "not both")


# ------------------------------------------------------------------ web description

def test_unknown_material_lists_known_ones(tmp_path):
    msg = bad(tmp_path, {"web.material": "unobtainium"}, "web.material", "'unobtainium'", "known:")
    for name in MATERIALS:
        assert name in msg


def test_material_and_density_together(tmp_path):
    bad(tmp_path, {"web.density": 7.85}, "web", "not both")


def test_diameter_and_outline_together_or_neither(tmp_path):
    (tmp_path / "web.dxf").write_text("0\nEOF\n")
    bad(tmp_path, {"web.outline": "web.dxf"}, "web", "exactly one of 'diameter'")
    bad(tmp_path, {"web.diameter": DROP}, "web", "exactly one of 'diameter'")


def test_outline_file_missing(tmp_path):
    bad(tmp_path, {"web.diameter": DROP, "web.outline": "nowhere.dxf"}, "web.outline", "not found",
        "nowhere.dxf")


def test_relative_outline_resolves_against_the_job_folder(tmp_path, monkeypatch):
    jobs = tmp_path / "jobs"
    (jobs / "shapes").mkdir(parents=True)
    dxf = jobs / "shapes" / "web.dxf"
    dxf.write_text("0\nEOF\n")                          # only its existence is checked at load time
    path = write_job(jobs, {"web.diameter": DROP, "web.outline": "shapes/web.dxf", "web.outline_units": "in"})
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)                        # not the job's folder
    job = jobmod.load(path)
    for web in job.webs:
        assert web.outline == dxf.resolve() and web.diameter is None and web.outline_units == "in"


def test_outline_units(tmp_path):
    (tmp_path / "web.dxf").write_text("0\nEOF\n")
    bad(tmp_path, {"web.diameter": DROP, "web.outline": "web.dxf", "web.outline_units": "furlong"},
        "web.outline_units", "'mm'")


# ------------------------------------------------------------------ [[webs]]

@pytest.mark.parametrize("webs", [[{"name": "a"}], [{"name": "a"}, {"name": "b"}, {"name": "c"}], []])
def test_webs_must_be_two(tmp_path, webs):
    bad(tmp_path, {"webs": webs}, "webs", "exactly two")


def test_web_names_unique(tmp_path):
    bad(tmp_path, {"webs": [{"name": "a"}, {"name": "a"}]}, "webs[2].name", "twice")


def test_web_names_are_file_safe(tmp_path):
    bad(tmp_path, {"webs": [{"name": "a/b"}, {"name": "c"}]}, "webs[1].name", "letters, digits")


def test_web_shares_add_to_one(tmp_path):
    bad(tmp_path, {"webs": [{"name": "a", "share": 0.6}, {"name": "b", "share": 0.6}]}, "webs", "add up to 1",
        "1.2")


# ------------------------------------------------------------------ features

def test_unknown_feature_kind(tmp_path):
    bad(tmp_path, {"web.features": [{**HOLE, "kind": "slot"}]}, "web.features[1].kind", "hole, pocket, plug",
        "'slot'")


def test_feature_missing_key(tmp_path):
    hole = {k: v for k, v in HOLE.items() if k != "depth"}
    bad(tmp_path, {"web.features": [hole]}, "web.features[1]", "needs depth")


def test_hole_deeper_than_the_web_with_its_point(tmp_path):
    # drill point length = (d/2) / tan(point/2) (cone geometry; Machinery's Handbook drill-point
    # tables): 5 / tan(59 deg) = 3.0043 mm.  14.99 + 3.0043 = 17.994 < 18 fits, 15 + 3.0043 does not.
    ok = {**HOLE, "diameter": 10.0, "depth": 14.99}
    (hole,) = jobmod.load(write_job(tmp_path, web__features=[ok])).webs[0].features
    assert hole.point_length == pytest.approx(5 / math.tan(math.radians(59)), rel=1e-12)
    assert hole.point_length == pytest.approx(3.0043, abs=1e-4)
    bad(tmp_path, {"web.features": [{**ok, "depth": 15.0}]}, "web.features[1].depth", "drill point", "18 mm web")
    # a flat-bottomed (180 deg) hole may go down to 18 mm exactly
    flat = {**HOLE, "depth": 18.0, "point_angle": 180.0}
    assert jobmod.load(write_job(tmp_path, web__features=[flat])).webs[0].features[0].point_length == 0.0


def test_pocket_corner_radius_too_big(tmp_path):
    # half the radial width: (55 - 40) / 2 = 7.5 mm
    assert jobmod.load(write_job(tmp_path, web__features=[{**POCKET, "corner_radius": 7.5}]))
    bad(tmp_path, {"web.features": [{**POCKET, "corner_radius": 7.6}]}, "web.features[1].corner_radius", "7.5")


def test_pocket_must_leave_a_floor(tmp_path):
    bad(tmp_path, {"web.features": [{**POCKET, "depth": 18.0}]}, "web.features[1].depth", "floor")


def test_pocket_radii_order(tmp_path):
    bad(tmp_path, {"web.features": [{**POCKET, "r_inner": 60.0}]}, "web.features[1]", "r_inner < r_outer")


def test_plug_longer_than_the_web(tmp_path):
    bad(tmp_path, {"web.features": [{**PLUG, "length": 18.5}]}, "web.features[1].length", "18 mm web")


def test_feature_face(tmp_path):
    bad(tmp_path, {"web.features": [{**HOLE, "face": "top"}]}, "web.features[1].face", "'outer' or 'inner'")


def test_plug_unknown_material(tmp_path):
    bad(tmp_path, {"web.features": [{**PLUG, "material": "W-alloy-class-9"}]}, "web.features[1].material",
        "known:")


@pytest.mark.parametrize("rho", [0.0, -18.0, 1000.0])
def test_plug_density_out_of_range(tmp_path, rho):
    plug = {k: v for k, v in PLUG.items() if k != "material"}
    bad(tmp_path, {"web.features": [{**plug, "density": rho}]}, "web.features[1].density")


def test_plug_material_and_density_together(tmp_path):
    bad(tmp_path, {"web.features": [{**PLUG, "density": 17.0}]}, "web.features[1]", "not both")


def test_through_hole_depth_is_the_web_thickness(tmp_path):
    through = {**HOLE, "through": True, "depth": 30.0}
    try:
        job = jobmod.load(write_job(tmp_path, web__features=[through]))
    except BadInput as exc:
        assert "web.features[1].depth" in str(exc)
        return
    assert job.webs[0].features[0].depth == 18.0


# ------------------------------------------------------------------ [correction] and [output]

def test_correction_kind(tmp_path):
    bad(tmp_path, {"correction.kind": "grind"}, "correction.kind", "holes, pockets, plugs, radial, auto", "'grind'")


def test_correction_kinds_allowed(tmp_path):
    for kind in ("holes", "pockets", "plugs", "auto"):
        assert jobmod.load(write_job(tmp_path, correction__kind=kind)).correction.kind == kind


@pytest.mark.parametrize("drills, fragment", [
    ("number", "unknown drill series"),
    ([], "'metric', 'inch' or a list"),
    ([0.0, 5.0], "> 0"),
    ([5.0, "3 kg"], "correction.drills[2]"),
])
def test_drills(tmp_path, drills, fragment):
    bad(tmp_path, {"correction.drills": drills}, "correction.drills", fragment)


def test_inch_drills(tmp_path):
    c = jobmod.load(write_job(tmp_path, correction__drills="inch")).correction
    assert c.drill_series == "inch" and c.drills[0] == pytest.approx(3.175)  # 1/8 in


def test_keep_out_loads(tmp_path):
    zones = [{"x": 0.0, "y": "-1 in", "diameter": 8.0}, {"points": [[0, 0], [10, 0], [10, 10]]}]
    c = jobmod.load(write_job(tmp_path, correction__keep_out=zones)).correction
    circle, poly = c.keep_out
    assert circle.center == pytest.approx((0.0, -25.4)) and circle.diameter == 8.0
    assert poly.points == ((0.0, 0.0), (10.0, 0.0), (10.0, 10.0))


@pytest.mark.parametrize("zone, key", [
    ({"x": 0.0, "y": 0.0}, "correction.keep_out[1]"),                       # circle without diameter
    ({"x": 0.0, "y": 0.0, "diameter": 5.0, "r": 1.0}, "correction.keep_out[1]"),
    ({"points": [[0, 0], [1, 1]]}, "correction.keep_out[1]"),               # two points
    ({"points": [[0, 0], [1, 1], [1, 2, 3]]}, "correction.keep_out[1].points[3]"),
    ("centre", "correction.keep_out[1]"),
    ({"x": 0.0, "y": 0.0, "diameter": -5.0}, "correction.keep_out[1].diameter"),
])
def test_keep_out_malformed(tmp_path, zone, key):
    bad(tmp_path, {"correction.keep_out": [zone]}, key)


def test_keep_out_not_a_list(tmp_path):
    bad(tmp_path, {"correction.keep_out": {"x": 0.0}}, "correction.keep_out", "list")


def test_correction_through_must_be_boolean(tmp_path):
    bad(tmp_path, {"correction.through": "yes"}, "correction.through", "true or false")


def test_unknown_plug_material_in_correction(tmp_path):
    bad(tmp_path, {"correction.plug_material": "lead-ish"}, "correction.plug_material", "known:")


def test_sheet_units(tmp_path):
    bad(tmp_path, {"output.sheet_units": "furlong"}, "output.sheet_units", "'mm' or 'inch'")


# ------------------------------------------------------------------ the file itself

def test_bad_toml_names_the_file(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text(minimal_job_text() + "\n[engine\nstroke = \n")
    with pytest.raises(BadInput) as err:
        jobmod.load(path)
    msg = str(err.value)
    assert str(path) in msg and "not valid TOML" in msg and "\n" not in msg


def test_missing_file_names_the_file(tmp_path):
    with pytest.raises(BadInput, match="nope.toml: job file not found"):
        jobmod.load(tmp_path / "nope.toml")


def test_not_utf8(tmp_path):
    path = tmp_path / "latin.toml"
    path.write_bytes(minimal_job_text().replace('"demo"', '"d\xe9mo"').encode("latin-1"))
    with pytest.raises(BadInput, match="latin.toml: cannot read"):
        jobmod.load(path)
