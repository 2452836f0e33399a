"""geomgen.uncertainty: the balance-factor band, checked against cases worked by hand and two standards.

Sources:
- JCGM 100:2008 (GUM) 4.3.7: a quantity known only to lie between bounds a- and a+ is taken
  rectangular, standard uncertainty (a+ - a-) / sqrt(12), i.e. half-width / sqrt(3) (eq. (7));
  5.1.2 eq. (10): u_c^2(y) = sum (df/dx_i)^2 u^2(x_i) for independent inputs;
  Table G.1: k = 1.960 for 95 % of a normal distribution.
- JCGM 101:2008 7.7: the probabilistically symmetric 95 % coverage interval from the 2.5 and 97.5
  percentiles; for a rectangular output of half-width w it is mean +- 0.95 w (the quantiles of the
  uniform distribution); 8.2: the GUM interval is validated when both ends lie within delta of the
  Monte Carlo interval, delta = half a unit in the second significant digit of u.
- Closed forms (Machinery's Handbook volumes and centroids): a cylinder pi r^2 h with its centroid on
  its axis, a cone pi r^2 h / 3; a disc web's unbalance from its bores alone.
- The balance factor from the README: BF = (-U_y / r - m_rotating - m_crank_parts) / m_reciprocating.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest

import geomgen
from geomgen import uncertainty as unc
from geomgen.kinds import feature_from_table
from geomgen.materials import material
from geomgen.tolerances import Tolerances
from geomgen.webs import web_section

from conftest import minimal_job_dict

# the minimal job (conftest): stroke 64 mm, m_recip 250 + 80 = 330 g, rod's rotating end 200 g, crankpin
# 140 g, BF 0.55; 130 x 18 mm steel webs with a 28 mm pin bore
R, M_RECIP, BF = 32.0, 330.0, 0.55
STEEL = 7.85
ZERO = Tolerances(scale=0.0, web_density=0.0, drill_oversize=0.0, hole_position=0.0, depth=0.0,
                  pocket_depth=0.0, thickness=0.0)


def _works(job, new_a=(), new_b=()):
    """The pipeline's view of the job's webs with these new features (no planner)."""
    out = []
    for w, new in zip(job.webs, (new_a, new_b)):
        sec = web_section(job, w)
        out.append(SimpleNamespace(spec=w, section=sec, existing=tuple(f.on(sec) for f in w.features),
                                   plan=SimpleNamespace(features=tuple(f.on(sec) for f in new))))
    return out


def _hole(**table):
    return feature_from_table({"kind": "hole", **table}, where="test", thickness=18.0)


# ------------------------------------------------------------------ one hole's depth, by hand
def test_one_blind_holes_depth_tolerance_by_hand():
    """A 10 mm blind hole at y = -40 mm, 8 mm deep, +-0.1 mm: only its depth is uncertain.

    dU_y/dh = -rho pi r^2 y = -7.85e-3 * pi * 25 * (-40) = +24.661 g*mm per mm (the cylinder; the point's
    cone moves with it and keeps its volume); dBF/dU_y = -1 / (r m_recip).  So a depth 0.1 mm deeper
    moves U_y by +2.4661 g*mm and the balance factor by -2.4661 / (32 * 330) = -2.3353e-4, exactly."""
    job = geomgen.load_job(minimal_job_dict())
    hole = _hole(x=0.0, y=-40.0, diameter=10.0, depth=8.0)
    tol = Tolerances(**{**ZERO.__dict__, "depth": 0.1, "given": ()})
    model = unc.build(job, _works(job, new_a=[hole]), tol)
    assert [i.name for i in model.inputs if i.half_width > 0] == ["web a new hole 1: depth"]
    lin = unc.linear(model)
    j = next(k for k, i in enumerate(model.inputs) if i.half_width > 0)
    du_dh = STEEL * 1e-3 * math.pi * 25.0 * 40.0                         # g*mm per mm, by hand
    assert lin["c"]["du_y"][j] == pytest.approx(du_dh, rel=1e-12)
    assert lin["c"]["bf"][j] == pytest.approx(-du_dh / (R * M_RECIP), rel=1e-12)
    # JCGM 100 eq. (10) with one input, u = 0.1 / sqrt(3) (GUM 4.3.7)
    u_hand = du_dh / (R * M_RECIP) * 0.1 / math.sqrt(3.0)
    assert lin["u"]["bf"] == pytest.approx(u_hand, rel=1e-12)
    # the model itself at the depth's ends: U_y moves by exactly +-0.1 * dU/dh (linear in the depth)
    v = {i.name: np.array([i.nominal]) for i in model.inputs}
    name = model.inputs[j].name
    lo, hi = (model.evaluate({**v, name: np.array([x])}) for x in (7.9, 8.1))
    assert float(hi["du_y"][0] - lo["du_y"][0]) == pytest.approx(0.2 * du_dh, rel=1e-12)
    # Monte Carlo: the output is rectangular, half-width w = 0.1 * dBF/dh; JCGM 101 7.7: its 95 % interval
    # is mean +- 0.95 w, and its standard deviation w / sqrt(3)
    w = 0.1 * du_dh / (R * M_RECIP)
    mc = unc.monte_carlo(model)
    low, high = unc.coverage(mc["bf"])
    y0 = lin["y"]["bf"]
    assert low == pytest.approx(y0 - 0.95 * w, abs=0.002 * w)
    assert high == pytest.approx(y0 + 0.95 * w, abs=0.002 * w)
    assert np.std(mc["bf"], ddof=1) == pytest.approx(u_hand, rel=0.005)   # MC noise ~ 1/sqrt(2M) = 0.2 %
    # JCGM 101 8.2: y +- 1.96 u = +-1.1316 w against +-0.95 w: the first order is NOT validated here
    assert not unc.jcgm101_validation(y0, u_hand, low, high)["validated"]


def test_many_like_inputs_give_a_normal_output_and_the_first_order_validates():
    """Twelve holes, each with only its x position uncertain, none on the balance factor; their crank x
    residual is a sum of twelve equal rectangles, near normal (central limit).  Each hole of 8 mm, 18 mm
    through, takes m = 7.85e-3 * pi * 16 * 18 = 7.1025 g; dU_x/dx_i = -m.  By hand u(U_x) = m * 0.1 / sqrt(3)
    * sqrt(12) = 0.2 m = 1.4205 g*mm.  Then (JCGM 101 8.2) the y +- 1.96 u interval is validated."""
    job = geomgen.load_job(minimal_job_dict())
    angles = np.arange(12) * 30.0
    holes = [_hole(x=float(45 * math.sin(math.radians(a))), y=float(-45 * math.cos(math.radians(a))),
                   diameter=8.0, through=True) for a in angles]
    tol = Tolerances(**{**ZERO.__dict__, "hole_position": 0.1, "given": ()})
    model = unc.build(job, _works(job, new_a=holes), tol)
    keep = {i.name for i in model.inputs if i.name.endswith(": x")}
    model.inputs = [i if i.name in keep else unc.Input(i.name, i.group, i.knob, i.nominal, i.nominal, i.nominal,
                                                       i.unit, i.source) for i in model.inputs]
    lin = unc.linear(model)
    m = STEEL * 1e-3 * math.pi * 16.0 * 18.0
    assert lin["u"]["du_x"] == pytest.approx(0.2 * m, rel=1e-9)
    mc = unc.monte_carlo(model)
    low, high = unc.coverage(mc["du_x"])
    check = unc.jcgm101_validation(lin["y"]["du_x"], lin["u"]["du_x"], low, high)
    assert check["validated"], check
    assert np.std(mc["du_x"], ddof=1) == pytest.approx(0.2 * m, rel=0.01)


# ------------------------------------------------------------------ the samples: both ways, and by hand
def test_stroker_plug_density_swing_by_hand_and_against_the_study():
    """ASTM B777-15 Table 1, class 3: 17.75 .. 18.35 g/cm^3, +-0.30 about 18.05.  All plugs of one alloy move
    together; the swing is 0.30 * sum(V_i * 1e-3 * y_i) / (r m_recip), V = pi/4 D^2 L (through plugs), from
    the plan's own plug positions.  The sensitivity is taken at the inputs' expectations (GUM 4.1.4): a
    24 mm plug ground to ISO 286 p6 (18-30 mm: ei = +22 um, IT6 = 13 um, ISO 286-1 tables) is 24.0285 mm
    on average.  crank.plug_density_range (a separate code path, nominal diameters) gives the swing at 24 mm."""
    plan = geomgen.plan("samples/plugs-stroker.toml")
    doc = plan.figures
    plugs = [f for w in plan.webs for f in w.features if f.kind == "plug"]
    assert {f.diameter for f in plugs} == {24.0}
    e = plan.job.engine
    d_mean = 24.0 + 0.5 * (0.022 + 0.035)
    s = sum(math.pi / 4 * d_mean ** 2 * f.length * 1e-3 * f.y for f in plugs)
    swing = abs(0.30 * s) / (e.crank_radius * e.m_reciprocating) * 100.0
    row = next(r for r in doc["contributions"] if r["input"].startswith("plug density"))
    assert row["bf_points"] == pytest.approx(swing, rel=1e-9)
    nominal = doc["plug_density_range"]["balance_factor_change_at_high_percent"]
    assert row["bf_points"] == pytest.approx(nominal * (d_mean / 24.0) ** 2, rel=1e-5)
    assert 3.0 < row["bf_points"] < 3.5                                   # "about +-3 points"
    cls3 = material("W-alloy-class-3", "test")
    inp = next(i for i in unc.build(plan.job, [w.work for w in plan.webs], plan.job.tolerances).inputs
               if i.name.startswith("plug density"))
    assert (inp.low, inp.high) == (cls3.density_min, cls3.density_max) == (17.75, 18.35)


def test_unweighed_steel_webs_swing_by_hand():
    """The heavier-piston webs not weighed: steel 7.75 .. 7.95 g/cm^3 (common practice), both webs one heat.
    A web's unbalance is rho times its geometry, so the swing is 0.1/7.85 of the webs' unbalance:
    0.1 / 7.85 * 2 * 8606.5 / (31 * 439) * 100 = 1.611 points ("about +-1.6")."""
    data = _sample_dict("heavier-piston")
    data.pop("webs")
    data["tolerances"]["drill_oversize"] = 0.0       # the holes at their drill size: the geometry as planned
    plan = geomgen.plan(data)
    doc = plan.figures
    row = doc["contributions"][0]
    assert row["input"].startswith("web density: steel")
    u_webs = -sum(w.predicted.unbalance[1] for w in plan.webs)
    assert row["bf_points"] == pytest.approx(0.1 / 7.85 * u_webs / (31.0 * 439.0) * 100.0, rel=1e-9)
    assert row["bf_points"] == pytest.approx(1.61, abs=0.01)
    v = doc["uncertainty"]["verdict"]
    assert not v["attainable"]
    assert v["actions"][0]["knob"] == "weigh:a,b"
    assert v["after"]["attainable"]


@pytest.mark.parametrize("name", ["heavier-piston", "plugs-stroker"])
def test_first_order_and_monte_carlo_agree_on_the_samples(name):
    """Near-linear models: the standard uncertainties agree within the Monte Carlo's own noise (1 / sqrt(2M),
    0.2 % for M = 1e5, JCGM 101 7.2) and a little curvature; the means within a tenth of u."""
    b = geomgen.plan(f"samples/{name}.toml").figures["balance_factor_band"]
    assert b["u"] == pytest.approx(b["linear"]["u"], rel=0.01)
    assert abs(b["mean"] - b["linear"]["mean"]) < 0.1 * b["u"]
    assert b["low_95"] < b["mean"] < b["high_95"]
    assert b["method"] == "monte_carlo" and b["samples"] == 100_000


def test_complex_step_sensitivities_match_central_differences():
    """The complex-step derivatives (exact to rounding) against plain central differences of the same model."""
    plan = geomgen.plan("samples/plugs-stroker.toml")
    model = unc.build(plan.job, [w.work for w in plan.webs], plan.job.tolerances)
    lin = unc.linear(model)
    base = model.at("mean")
    for j, inp in enumerate(model.inputs):
        h = 1e-6 * max(abs(inp.mean), 1.0)
        up = model.evaluate({k: np.array([v + (h if k == inp.name else 0.0)]) for k, v in base.items()})
        dn = model.evaluate({k: np.array([v - (h if k == inp.name else 0.0)]) for k, v in base.items()})
        fd = float((up["bf"] - dn["bf"])[0]) / (2 * h)
        assert lin["c"]["bf"][j] == pytest.approx(fd, rel=1e-5, abs=1e-12), inp.name


def test_the_band_is_deterministic_and_matches_the_plans_prediction():
    a = geomgen.plan("samples/heavier-piston.toml").document
    b = geomgen.plan("samples/heavier-piston.toml").document
    assert a["balance_factor_band"] == b["balance_factor_band"] and a["contributions"] == b["contributions"]
    assert a["balance_factor_band"]["nominal"] == pytest.approx(a["crank"]["balance_factor_achieved"], abs=1e-6)
    assert a["uncertainty"]["model_check"]["unbalance_gmm"] < 1e-9


def test_contract_keys():
    doc = geomgen.plan("samples/plugs-stroker.toml").document
    band = doc["balance_factor_band"]
    assert {"mean", "low_95", "high_95", "method"} <= set(band) and band["method"] == "monte_carlo"
    points = [r["bf_points"] for r in doc["contributions"]]
    assert points == sorted(points, reverse=True) and all({"input", "bf_points"} <= set(r) for r in
                                                          doc["contributions"])
    for w in doc["webs"]:
        assert {"density_g_cm3", "thickness_mm", "weighed_g", "model_g"} <= set(w["calibration"])


# ------------------------------------------------------------------ the study: the weighed parts alone
def test_study_band_of_the_weighed_parts_by_hand():
    """BF = (-U_y/r - m_rot - m_parts) / m_recip with the webs at target: dBF/dm_rot = dBF/dm_parts = -1/m_recip,
    dBF/dm_recip_i = -BF/m_recip.  Each weighing +-0.1 g, u = 0.1/sqrt(3).  Minimal job: two reciprocating
    parts, one rotating, one crank part: u_c = 0.1/sqrt(3) / 330 * sqrt(1 + 1 + 2 * 0.55^2)."""
    result = geomgen.study(minimal_job_dict())
    u = 0.1 / math.sqrt(3) / M_RECIP * math.sqrt(2 + 2 * BF ** 2)
    band = result["balance_factor_band"]
    assert band["linear"]["u"] == pytest.approx(u, rel=1e-5)
    assert band["u"] == pytest.approx(u, rel=0.01)
    assert band["linear"]["mean"] == pytest.approx(BF, abs=1e-9)
    assert result["uncertainty"]["verdict"]["attainable"]


def test_a_coarse_scale_is_not_enough_and_the_verdict_names_the_scale():
    """A 20 g scale on the minimal job: u_c = 20/sqrt(3)/330 * sqrt(2.605) = 0.0565, far past +-0.5 points."""
    result = geomgen.study(minimal_job_dict({"tolerances.scale": "20 g"}))
    v = result["uncertainty"]["verdict"]
    assert not v["attainable"]
    assert v["actions"][0]["knob"] == "scale" and v["actions"][0]["value"] < 20
    assert v["after"]["attainable"]


# ------------------------------------------------------------------ tolerances as the job gives them
def test_tolerance_keys_read_with_units(tmp_path):
    job = geomgen.load_job(minimal_job_dict({"tolerances": {"scale": "0.01 oz", "hole_position": "0.002 in",
                                                            "stand": "0.5 g at 50 mm"}}))
    t = job.tolerances
    assert t.scale == pytest.approx(0.01 * 28.349523125)                  # NIST SP 811: 1 oz = 28.349523125 g
    assert t.hole_position == pytest.approx(0.0508)
    assert t.stand == pytest.approx(25.0)
    assert t.given == ("hole_position", "scale", "stand")


@pytest.mark.parametrize("table, words", [({"scael": "0.1 g"}, "did you mean 'scale'"),
                                          ({"scale": "-0.1 g"}, "must be >= 0"),
                                          ({"depth": "3 kg"}, "tolerances.depth")])
def test_bad_tolerances_are_one_line(table, words):
    with pytest.raises(geomgen.BadInput, match=words.replace("(", r"\(")):
        geomgen.load_job(minimal_job_dict({"tolerances": table}))


def _sample_dict(name: str) -> dict:
    import tomllib

    with open(f"samples/{name}.toml", "rb") as fh:
        return tomllib.load(fh)


def test_the_band_figure_is_the_same_drawn_by_the_sidecar_or_here():
    """The report's band picture: the second process (geomgen.sidecar) draws the very bytes this one would."""
    from geomgen import sidecar
    from geomgen.band_report import band_figure_svg

    doc = geomgen.plan("samples/plugs-stroker.toml").figures
    here = band_figure_svg(doc)
    with sidecar.started() as side:
        assert side is not None
        there = band_figure_svg(doc)
    assert here == there and "What moves it most" in here
