"""geomgen.drills: the named drill series and how a drill is called on the sheet.

Series content (common practice): metric jobber sets 3.0 .. 13.0 mm in 0.5 mm
steps, then 14 .. 25 mm in 1 mm steps; fractional-inch sets 1/8 .. 1 in in
1/64 in steps.  1 in = 25.4 mm exactly (NIST SP 811).
"""

from fractions import Fraction

import pytest

from geomgen.drills import designation, series
from geomgen.errors import BadInput


def test_metric_series():
    d = series("metric")
    assert d[:3] == (3.0, 3.5, 4.0) and d[-1] == 25.0
    assert len(d) == 21 + 12                                  # 3.0..13.0 step 0.5, 14..25 step 1
    assert [x for x in d if x <= 13.0] == [3.0 + 0.5 * i for i in range(21)]
    assert [x for x in d if x > 13.0] == [float(i) for i in range(14, 26)]
    assert 13.5 not in d
    assert list(d) == sorted(d)


def test_inch_series():
    d = series("inch")
    assert len(d) == 64 - 8 + 1                               # 8/64 .. 64/64
    assert d[0] == pytest.approx(3.175, abs=1e-12)            # 1/8 in = 3.175 mm
    assert d[-1] == pytest.approx(25.4, abs=1e-12)            # 1 in
    steps = [b - a for a, b in zip(d, d[1:])]
    assert all(s == pytest.approx(25.4 / 64, abs=1e-12) for s in steps)  # 1/64 in = 0.396875 mm


def test_unknown_series_is_bad_input():
    with pytest.raises(BadInput, match="correction.drills.*'number'.*metric.*inch"):
        series("number")


@pytest.mark.parametrize("diameter, name, expected", [
    (17 / 64 * 25.4, "inch", "17/64 in"),     # 6.746875 mm
    (0.5 * 25.4, "inch", "1/2 in"),
    (25.4, "inch", "1 in"),
    (8.5, "metric", "8.5 mm"),
    (10.0, "metric", "10 mm"),
    (3.25, "list", "3.25 mm"),
    (7.0, "inch", "7 mm"),                    # not a 1/64 size: said in mm
])
def test_designation(diameter, name, expected):
    assert designation(diameter, name) == expected


def test_every_inch_drill_is_named_by_its_fraction():
    for k, d in enumerate(series("inch"), start=8):
        frac = Fraction(k, 64)
        assert designation(d, "inch") in (f"{frac.numerator}/{frac.denominator} in", f"{frac.numerator} in")
