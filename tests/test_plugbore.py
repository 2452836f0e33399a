"""geomgen.plugbore: drill undersize, open, flat-bottom, ream to H7, press the plug.

Reaming stock on the diameter (common practice, reamer makers' guides): up to
5 mm 0.1 .. 0.2 mm, 5 .. 20 mm 0.2 .. 0.3 mm, 20 .. 50 mm 0.3 .. 0.5 mm.
Drill series: geomgen.drills (metric 3.0 .. 13.0 mm by 0.5, 14 .. 25 by 1;
inch by 1/64 in).  Drill point length d / (2 tan(angle / 2)) (closed form of
the cone).  1 in = 25.4 mm (NIST SP 811).
"""

from __future__ import annotations

import math

import pytest

from geomgen.drills import series
from geomgen.plugbore import plug_bore, ream_stock_mm


def _bore(d, length=12.0, thickness=18.0, drills="metric", fit="H7/p6"):
    return plug_bore(diameter_mm=d, length_mm=length, thickness_mm=thickness, drills=series(drills),
                     point_angle_deg=118.0, fit=fit)


def test_22_mm_metric_is_drilled_21_opened_and_reamed():
    b = _bore(22.0)
    # the largest metric drill at most 22 - 0.3 = 21.7 mm is 21 mm: 1.0 mm is too much for a reamer,
    # so the bore is opened to 22 - 0.4 = 21.6 mm first
    assert b.drill_mm == 21.0 and b.drill_in_series
    assert b.opened and b.pre_ream_mm == pytest.approx(21.6, abs=1e-9)
    assert b.ream_stock_mm == pytest.approx(0.4, abs=1e-9)
    # blind: flat bottom at the plug length, the drill's tip no deeper, so nothing is cut below the plug
    assert not b.through and b.depth_mm == 12.0 and b.tip_depth_mm == 12.0
    assert (b.limits.bore_class, b.limits.plug_class) == ("H7", "p6")


def test_drill_that_leaves_the_right_stock_goes_straight_to_the_reamer():
    # inch series, a 7/8 in plug: 55/64 in leaves 1/64 in = 0.397 mm, inside 0.3 .. 0.5 mm
    d = 7 / 8 * 25.4
    b = _bore(d, drills="inch")
    assert b.drill_mm == pytest.approx(55 / 64 * 25.4, abs=1e-12)
    assert not b.opened and b.pre_ream_mm == b.drill_mm
    assert b.ream_stock_mm == pytest.approx(25.4 / 64, abs=1e-12)


def test_10_mm_plug():
    # largest metric drill <= 10 - 0.2 = 9.8 is 9.5 (0.5 mm stock > 0.3): open to 10 - 0.25 = 9.75 mm
    b = _bore(10.0)
    assert (b.drill_mm, b.pre_ream_mm) == (9.5, pytest.approx(9.75, abs=1e-9))
    lo, hi = ream_stock_mm(10.0)
    assert lo <= b.ream_stock_mm <= hi


def test_no_drill_small_enough_in_the_series():
    # the metric series starts at 3 mm: a 3 mm plug needs 3 - 0.15 = 2.85 mm, said in mm, not from the series
    b = _bore(3.0)
    assert not b.drill_in_series and b.drill_mm == pytest.approx(2.85, abs=1e-9)
    assert not b.opened


def test_through_bore_drill_travel():
    b = _bore(16.0, length=18.0)
    # largest <= 15.75 is 15 mm, opened to 16 - 0.25 = 15.75; the drill goes its point length past the far face
    assert b.through and b.depth_mm == 18.0
    assert b.tip_depth_mm == pytest.approx(18.0 + 15.0 / (2 * math.tan(math.radians(59.0))), abs=1e-9)
    # Machinery's Handbook: a 118 deg point is about 0.3 d long
    assert b.tip_depth_mm - 18.0 == pytest.approx(0.3 * 15.0, abs=0.005 * 15.0)


@pytest.mark.parametrize("d", [x for x in series("metric")] + [x for x in series("inch")])
def test_every_series_size_leaves_the_reamer_its_stock(d):
    for name in ("metric", "inch"):
        b = _bore(d, drills=name)
        lo, hi = ream_stock_mm(d)
        assert lo - 1e-9 <= b.ream_stock_mm <= hi + 1e-9
        assert b.drill_mm <= b.pre_ream_mm < d
