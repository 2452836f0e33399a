"""geomgen.fits: ISO 286 limits of plug bores (H7) and plugs (n6, p6, r6, s6), and the job key plug_fit.

Sources:
- ISO 286-2:2010, the limit-deviation tables for holes H and shafts n, p, r, s
  (the values below also appear in published reproductions of the tables,
  e.g. K. L. Narayana, P. Kannaiah, K. V. Reddy, Machine Drawing, Table 15.2,
  for the shafts' fundamental deviations);
- ISO 286-1:2010, Table 1 (standard tolerance grades) and its formulas:
  i = 0.45 D^(1/3) + 0.001 D (um, D the geometric mean of the size range, mm),
  IT6 = 10 i, IT7 = 16 i; shafts: n ei = 5 D^0.34, p ei = IT7 + 0 .. 5,
  r ei = geometric mean of the ei of p and s, s ei = IT8 + 1 .. 4 (D <= 50 mm).
"""

from __future__ import annotations

import math

import pytest

from geomgen import job as jobmod
from geomgen.errors import BadInput
from geomgen.fits import FITS, RANGE_ENDS_MM, SHAFT_EI_UM, STANDARD_TOLERANCE_UM, fit_limits, standard_tolerance_um

from conftest import write_job

RANGE_STARTS_MM = (1.0,) + RANGE_ENDS_MM[:-1]     # ISO 286-1 takes D of the first range from 1 .. 3 mm

#: IT8, um, ranges above 3 up to 50 mm (ISO 286-1:2010, Table 1), for the s formula
IT8_UM = (18, 22, 27, 33, 39)


@pytest.mark.parametrize("fit, d, bore, plug", [
    # ISO 286-2:2010: (EI, ES) of the hole, (ei, es) of the shaft, um
    ("H7/p6", 10.0, (0, 15), (15, 24)),      # 10 mm is in "above 6 up to and including 10"
    ("H7/p6", 25.0, (0, 21), (22, 35)),
    ("H7/p6", 22.0, (0, 21), (22, 35)),
    ("H7/s6", 50.0, (0, 25), (43, 59)),
    ("H7/r6", 12.0, (0, 18), (23, 34)),
    ("H7/n6", 3.0, (0, 10), (4, 10)),
    ("H7/p6", 10.001, (0, 18), (18, 29)),    # just above 10 mm: the next range
])
def test_limits_against_iso_286_2(fit, d, bore, plug):
    lim = fit_limits(fit, d)
    assert (lim.bore_ei_um, lim.bore_es_um) == bore
    assert (lim.plug_ei_um, lim.plug_es_um) == plug
    assert lim.bore_min_mm == pytest.approx(d + bore[0] / 1000, abs=1e-12)
    assert lim.bore_max_mm == pytest.approx(d + bore[1] / 1000, abs=1e-12)
    assert lim.plug_min_mm == pytest.approx(d + plug[0] / 1000, abs=1e-12)
    assert lim.plug_max_mm == pytest.approx(d + plug[1] / 1000, abs=1e-12)
    # ISO 286-1: interference = shaft size minus hole size; extremes from the extreme limits
    assert lim.interference_min_um == plug[0] - bore[1]
    assert lim.interference_max_um == plug[1] - bore[0]


def test_10_and_25_mm_h7_p6_interference():
    # from the ISO 286-2 limits above: 10 mm: 15 - 15 = 0 .. 24 - 0 = 24 um; 25 mm: 22 - 21 = 1 .. 35 um
    assert (fit_limits("H7/p6", 10.0).interference_min_um, fit_limits("H7/p6", 10.0).interference_max_um) == (0, 24)
    assert (fit_limits("H7/p6", 25.0).interference_min_um, fit_limits("H7/p6", 25.0).interference_max_um) == (1, 35)
    # H7/n6 is a transition fit: at 10 mm the loosest pair has 15 - 10 = 5 um clearance
    assert fit_limits("H7/n6", 10.0).interference_min_um == -5


def _geometric_mean(k: int) -> float:
    return math.sqrt(RANGE_STARTS_MM[k] * RANGE_ENDS_MM[k])


def test_tabulated_grades_follow_the_iso_286_1_formula():
    # ISO 286-1 rounds its formula values into the table, so a table value lies within 1 um of them;
    # the first range (up to 3 mm) is set by the standard apart from the formula and is left out
    for k in range(1, len(RANGE_ENDS_MM)):
        big_d = _geometric_mean(k)
        i = 0.45 * big_d ** (1 / 3) + 0.001 * big_d
        assert abs(STANDARD_TOLERANCE_UM[6][k] - 10 * i) < 1.0, RANGE_ENDS_MM[k]
        assert abs(STANDARD_TOLERANCE_UM[7][k] - 16 * i) < 1.0, RANGE_ENDS_MM[k]
    assert standard_tolerance_um(7, 25.0) == 21 and standard_tolerance_um(6, 25.0) == 13


def test_tabulated_shaft_deviations_follow_the_iso_286_1_formulas():
    for k in range(1, len(RANGE_ENDS_MM)):
        big_d = _geometric_mean(k)
        p, r, s, n = (SHAFT_EI_UM[c][k] for c in "prsn")
        assert 0 <= p - STANDARD_TOLERANCE_UM[7][k] <= 5, RANGE_ENDS_MM[k]
        assert 1 <= s - IT8_UM[k - 1] <= 4, RANGE_ENDS_MM[k]
        assert abs(r - math.sqrt(p * s)) < 1.0, RANGE_ENDS_MM[k]
        assert abs(n - 5 * big_d ** 0.34) < 0.6, RANGE_ENDS_MM[k]
    # every interference class above lies wholly above H7 for p, r, s from 3 mm up: ei >= IT7
    for c in "prs":
        assert all(SHAFT_EI_UM[c][k] >= STANDARD_TOLERANCE_UM[7][k] for k in range(1, len(RANGE_ENDS_MM)))


def test_sizes_outside_the_tables_are_bad_input():
    with pytest.raises(BadInput, match="plug.diameter: 60 mm is above the 50 mm"):
        fit_limits("H7/p6", 60.0)
    with pytest.raises(BadInput, match="above 0 mm"):
        fit_limits("H7/p6", 0.0)


def test_plug_fit_key(tmp_path):
    assert jobmod.load(write_job(tmp_path)).correction.plug_fit == "H7/p6"
    for fit in FITS:
        assert jobmod.load(write_job(tmp_path, correction__plug_fit=fit)).correction.plug_fit == fit


@pytest.mark.parametrize("value", ["H8/f7", "h7/p6", "p6", 7])
def test_bad_plug_fit_names_the_key_and_the_fits(tmp_path, value):
    with pytest.raises(BadInput) as err:
        jobmod.load(write_job(tmp_path, correction__plug_fit=value))
    msg = str(err.value)
    assert "\n" not in msg and msg.startswith("job.toml: correction.plug_fit: ")
    assert all(f in msg for f in FITS) and repr(value) in msg
