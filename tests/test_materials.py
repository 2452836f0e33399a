"""geomgen.materials: the density table and densities given as numbers.

Source for the heavy alloys: ASTM B777-15, Table 1 (tungsten content, weight %,
and the density range each class allows):
    class 1: 90 % W,   16.85 .. 17.30 g/cm^3
    class 2: 92.5 % W, 17.15 .. 17.85 g/cm^3
    class 3: 95 % W,   17.75 .. 18.35 g/cm^3
    class 4: 97 % W,   18.25 .. 18.85 g/cm^3
The nominal density geomgen plans with is the middle of the range (design.md).
"""

import pytest

from geomgen.errors import BadInput
from geomgen.materials import MATERIALS, custom, material

B777 = {  # class: (W %, min, max) -- ASTM B777-15 Table 1
    1: (90, 16.85, 17.30),
    2: (92.5, 17.15, 17.85),
    3: (95, 17.75, 18.35),
    4: (97, 18.25, 18.85),
}


@pytest.mark.parametrize("cls_no", sorted(B777))
def test_b777_classes(cls_no):
    pct, lo, hi = B777[cls_no]
    m = material(f"W-alloy-class-{cls_no}", "k")
    assert (m.density_min, m.density_max) == (lo, hi)          # ASTM B777-15 Table 1
    assert m.density == pytest.approx((lo + hi) / 2, abs=1e-9)  # nominal = mid-range (design.md)
    assert f"{pct} % W" in m.source and "B777" in m.source


def test_b777_nominals_by_hand():
    # mid-ranges worked by hand from ASTM B777-15 Table 1
    expected = {1: 17.075, 2: 17.5, 3: 18.05, 4: 18.55}
    for cls_no, rho in expected.items():
        assert material(f"W-alloy-class-{cls_no}", "k").density == pytest.approx(rho, abs=1e-9)


def test_steel_density():
    # 7.85 g/cm^3 for carbon steel (common practice; EN 1993-1-1 3.2.6 uses 7850 kg/m^3)
    assert material("steel", "k").density == 7.85


def test_every_entry_is_consistent():
    for name, m in MATERIALS.items():
        assert m.name == name
        assert m.density_min <= m.density <= m.density_max
        assert m.source


def test_names_are_case_insensitive_and_aliases_work():
    assert material("STEEL", "k") is MATERIALS["steel"]
    assert material("w-alloy-class-3", "k") is MATERIALS["W-alloy-class-3"]
    assert material("aluminum", "k") is MATERIALS["aluminium"]


def test_unknown_material_lists_the_known_ones():
    with pytest.raises(BadInput) as err:
        material("unobtainium", "web.material")
    msg = str(err.value)
    assert msg.startswith("web.material:") and "unobtainium" in msg
    for name in MATERIALS:
        assert name in msg


def test_custom_density():
    m = custom(17.6, "web.density")
    assert (m.density, m.density_min, m.density_max) == (17.6, 17.6, 17.6)


@pytest.mark.parametrize("rho", [0.1, 30.0])
def test_custom_density_out_of_range(rho):
    # 0.5 .. 25 g/cm^3 spans every solid metal a web or plug is made of (osmium, the
    # densest element, is 22.6 g/cm^3 -- CRC Handbook of Chemistry and Physics)
    with pytest.raises(BadInput, match=r"^web\.density:"):
        custom(rho, "web.density")
