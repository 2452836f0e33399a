"""geomgen.units.to_internal: numbers and unit strings in, contract units out.

Sources for the conversion factors:
- 1 in = 25.4 mm exactly, 1 lb = 0.45359237 kg exactly: the 1959 international
  yard and pound agreement, as tabled in NIST SP 811 (2008), appendix B.
- 1 oz (avoirdupois) = 1/16 lb = 28.349523125 g exactly (same agreement).
- 1 rpm = 1 revolution per minute (definition).
"""

import math
import re

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from geomgen.errors import BadInput
from geomgen.units import G_PER_LB, MM_PER_INCH, N_PER_LBF, to_internal


def test_exact_constants():
    assert MM_PER_INCH == 25.4          # NIST SP 811 B.8: 1 in = 2.54 cm exactly
    assert G_PER_LB == 453.59237        # NIST SP 811 B.8: 1 lb = 0.45359237 kg exactly
    # 1 lbf = 0.45359237 kg * 9.80665 m/s^2 (standard gravity, CGPM 1901) = 4.4482216152605 N
    assert pytest.approx(0.45359237 * 9.80665, rel=1e-15) == N_PER_LBF


@pytest.mark.parametrize("text, kind, expected", [
    ("2.52 in", "length", 64.008),                 # 2.52 * 25.4 (NIST SP 811)
    ("1 in", "length", 25.4),
    ("6.4 cm", "length", 64.0),
    ("0.064 m", "length", 64.0),
    ("9 oz", "mass", 9 * 28.349523125),            # 255.145708125 g (NIST SP 811)
    ("1 lb", "mass", 453.59237),
    ("0.25 kg", "mass", 250.0),
    ("4200 rpm", "speed", 4200.0),
    ("70 rps", "speed", 4200.0),                   # 70 rev/s * 60 s/min (definition)
    ("0.284 lb/in^3", "density", 7.86109),         # 0.284 * 453.59237 / 2.54^3 = 7.861 g/cm^3
    ("7850 kg/m^3", "density", 7.85),
    ("90 deg", "angle", 90.0),
    ("50 %", "dimensionless", 0.5),
])
def test_unit_strings_convert(text, kind, expected):
    assert to_internal(text, kind, "k") == pytest.approx(expected, rel=1e-5 if kind == "density" else 1e-12)


def test_density_lb_per_cubic_inch_by_hand():
    # 0.284 lb/in^3 = 0.284 * 453.59237 g / (2.54 cm)^3 = 128.8202 / 16.387064 = 7.861093 g/cm^3
    assert to_internal("0.284 lb/in^3", "density", "d") == pytest.approx(
        0.284 * 453.59237 / 2.54 ** 3, rel=1e-12)


def test_plain_numbers_are_internal_units():
    assert to_internal(64, "length", "k") == 64.0
    assert isinstance(to_internal(64, "length", "k"), float)
    assert to_internal("64", "length", "k") == 64.0  # a bare number in a string: internal unit
    assert to_internal(" 64.5 ", "mass", "k") == 64.5


@pytest.mark.parametrize("value", ["3 kg", "9 oz", "4200 rpm"])
def test_wrong_dimension_is_bad_input_naming_the_key(value):
    with pytest.raises(BadInput) as err:
        to_internal(value, "length", "engine.stroke")
    msg = str(err.value)
    assert msg.startswith("engine.stroke:")
    assert "length" in msg and "\n" not in msg


@pytest.mark.parametrize("value", ["abc", "3 furlongz", ""])
def test_unreadable_string_is_bad_input(value):
    with pytest.raises(BadInput, match=r"^engine\.stroke:"):
        to_internal(value, "length", "engine.stroke")


@pytest.mark.parametrize("text", ["70 Hz", "70 1/s", "4200 1/min"])
def test_a_shaft_frequency_counts_revolutions(text):
    # A shaft's rotational frequency counts turns: ISO 80000-3 gives it the unit s^-1, with r/min
    # alongside (from memory); 70 Hz = 70 rev/s = 4200 rpm (common practice).  pint alone would take
    # 1 Hz as 1 rad/s and read 70 Hz as 70 * 60 / (2 pi) = 668.45 rpm: never that.
    value = to_internal(text, "speed", "engine.max_rpm")
    assert value == pytest.approx(4200.0, rel=1e-12)
    assert value != pytest.approx(70 * 60 / (2 * math.pi), rel=1e-3)


def test_a_unit_without_a_number_is_bad_input():
    with pytest.raises(BadInput, match=r"^engine\.stroke:"):
        to_internal("mm", "length", "engine.stroke")


@pytest.mark.parametrize("value", [True, None, [1.0], {"a": 1}])
def test_non_numbers_are_bad_input(value):
    with pytest.raises(BadInput, match=r"^web\.thickness:"):
        to_internal(value, "length", "web.thickness")


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf, "nan", "inf", "nan mm", "inf in"])
def test_nan_and_inf_are_bad_input(value):
    with pytest.raises(BadInput, match="finite"):
        to_internal(value, "length", "engine.stroke")


positive_lengths = st.floats(min_value=1e-9, max_value=1e9, allow_nan=False, allow_infinity=False)


@settings(max_examples=150, deadline=None)
@given(positive_lengths)
def test_any_length_reads_the_same_in_mm_in_and_cm(x):
    # 1 in = 25.4 mm, 1 cm = 10 mm exactly (NIST SP 811); float round-off only
    assert to_internal(f"{x!r} mm", "length", "k") == pytest.approx(x, rel=1e-9)
    assert to_internal(f"{x / 25.4!r} in", "length", "k") == pytest.approx(x, rel=1e-9)
    assert to_internal(f"{x / 10!r} cm", "length", "k") == pytest.approx(x, rel=1e-9)


@pytest.mark.parametrize(("kind", "example"), [("unbalance", "12 g*mm"), ("length", "2.5 in"),
                                               ("speed", "4200 rpm"), ("mass", "9.2 oz")])
def test_a_refused_value_is_answered_with_an_example_of_its_own_kind(kind, example):
    # the example in the message must itself read back as that kind: 12 g*mm, 63.5 mm, 4200 rpm, 260.8 g
    # (1 oz = 28.349523125 g, NIST SP 811)
    with pytest.raises(BadInput, match=f'e.g. "{re.escape(example)}"'):
        to_internal("12 furlongzz", kind, "--value")
    expected = {"unbalance": 12.0, "length": 63.5, "speed": 4200.0, "mass": 9.2 * 28.349523125}[kind]
    assert to_internal(example, kind, "k") == pytest.approx(expected, rel=1e-12)


def test_an_unbalance_written_with_a_middle_dot_reads_as_g_mm():
    # "g·mm" is how the trade prints it; 1 oz*in = 28.349523125 g x 25.4 mm (NIST SP 811)
    assert to_internal("12 g·mm", "unbalance", "k") == pytest.approx(12.0)
    assert to_internal("1 oz·in", "unbalance", "k") == pytest.approx(28.349523125 * 25.4, rel=1e-12)
