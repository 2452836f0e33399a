"""What the shop can cut: a through hole is as deep as the web, so max_depth bounds it; a web with no main
bore carries its mainshaft at its centre, where nothing new is cut (invented demo jobs)."""

from __future__ import annotations

import math

import pytest

import geomgen
from geomgen.errors import BadInput
from geomgen.webs import keep_out_of

from conftest import minimal_job_dict


def test_no_through_hole_deeper_than_max_depth():
    # the 18 mm web of the minimal job with the drill reaching 15 mm: every planned hole is blind
    plan = geomgen.plan(geomgen.load_job(minimal_job_dict({"correction.max_depth": 15.0,
                                                           "engine.balance_factor": 0.15})))
    for w in plan.webs:
        assert w.features and not any(getattr(f, "through", False) for f in w.features)
        assert all(f.depth + f.point_length <= 15.0 + 1e-9 for f in w.features)
        assert "no through holes: the 18 mm web is deeper than max_depth 15 mm" in w.why
    # with the reach for it, through holes are allowed again
    deep = geomgen.plan(geomgen.load_job(minimal_job_dict({"correction.max_depth": 18.0})))
    assert all("no through holes" not in w.why for w in deep.webs)


def test_an_integral_mainshaft_is_kept_clear():
    job = geomgen.load_job(minimal_job_dict())
    web = job.webs[0]
    assert web.main_bore == 0 and web.shaft_diameter == 28.0     # as thick as the crankpin (common practice)
    (zone,) = keep_out_of(job, web)
    assert zone.center == (0.0, 0.0) and zone.diameter == pytest.approx(28.0 + 2 * 3.0)   # plus min_wall
    free = geomgen.load_job(minimal_job_dict({"web.shaft_diameter": 0.0}))
    assert keep_out_of(free, free.webs[0]) == ()
    bored = geomgen.load_job(minimal_job_dict({"web.main_bore": 20.0}))
    assert keep_out_of(bored, bored.webs[0]) == ()
    with pytest.raises(BadInput, match="shaft_diameter"):
        geomgen.load_job(minimal_job_dict({"web.main_bore": 20.0, "web.shaft_diameter": 25.0}))


def test_lightening_keeps_off_the_shaft():
    """The lightening sample's balanced sets of four sit close to the axis: with a 50 mm shaft kept clear
    (plus the 3 mm min_wall: 28 mm from the axis) every new hole's edge (centre radius less its radius, exact)
    stays outside it, while a web declared free at its centre (shaft_diameter = 0) puts holes nearer."""
    import tomllib
    from pathlib import Path

    samples = Path(__file__).resolve().parent.parent / "samples"
    data = tomllib.loads((samples / "lightening.toml").read_text())

    def edges(shaft):
        data["web"]["shaft_diameter"] = shaft
        plan = geomgen.plan(geomgen.load_job(data, base=samples))
        return [math.hypot(f.x, f.y) - 0.5 * f.diameter for w in plan.webs for f in w.features]

    assert min(edges(0.0)) < 28.0
    assert min(edges(50.0)) >= 28.0 - 1e-6


@pytest.mark.parametrize("changes, words", [
    ({"engine.stroke": "5 furlongs"}, ["engine.stroke: '5 furlongs' = 1.00584e+06 mm is out of range",
                                       "<= 1000 mm"]),    # 5 furlongs = 1005.84 m (NIST SP 811)
    ({"correction.overspeed": 1.3}, ["correction.overspeed: unknown key; overspeed belongs in the top level"]),
    ({"web.max_depth": 12.0}, ["web.max_depth: unknown key; max_depth belongs in correction"]),
])
def test_messages_echo_the_input_and_point_a_key_home(changes, words):
    with pytest.raises(BadInput) as err:
        geomgen.load_job(minimal_job_dict(changes))
    msg = str(err.value)
    assert "\n" not in msg
    for w in words:
        assert w in msg, msg
