"""geomgen.materials: the density table and densities given as numbers.

Source for the heavy alloys: ASTM B777-15, Table 1 (tungsten content, weight %,
and the density range each class allows):
    class 1: 90 % W,   16.85 .. 17.30 g/cm^3
    class 2: 92.5 % W, 17.15 .. 17.85 g/cm^3
    class 3: 95 % W,   17.75 .. 18.35 g/cm^3
    class 4: 97 % W,   18.25 .. 18.85 g/cm^3
The nominal density geomgen plans with is the middle of the range.

Elastic constants: Shigley's Mechanical Engineering Design, Table A-5 (from
memory), cross-checked against the constants the Budynas & Nisbett solutions
manual uses in its press-fit problems 3-68/3-69: steel E = 30 Mpsi, nu = 0.292;
cast iron E = 14.5 Mpsi, nu = 0.211.  1 psi = 6.894757 kPa (NIST SP 811).
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
    assert m.density == pytest.approx((lo + hi) / 2, abs=1e-9)  # nominal = mid-range
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


def test_steel_elastic_constants():
    # 30 Mpsi and 0.292 (the press-fit problems 3-68/3-69 of the Shigley solutions manual);
    # 30e6 psi * 6.894757e-3 MPa/psi = 206.84 GPa, which Table A-5 prints as 207 GPa
    for name in ("steel", "alloy-steel"):
        m = material(name, "k")
        assert m.youngs_modulus_gpa == pytest.approx(30e6 * 6.894757e-3 / 1e3, abs=0.2)
        assert m.poisson_ratio == 0.292
        assert "Shigley" in m.elastic_source and "from memory" in m.elastic_source


def test_every_named_material_has_plausible_elastic_constants():
    # every metal a web, pin or plug is made of lies between aluminium (~70 GPa) and pure tungsten
    # (411 GPa, nu 0.280: Dowling, Mechanical Behavior of Materials, Table 5.2), with nu 0.2 .. 0.35
    for m in MATERIALS.values():
        assert m.has_elastic and m.elastic_source
        assert 60.0 <= m.youngs_modulus_gpa <= 411.0
        assert 0.2 <= m.poisson_ratio <= 0.35


def test_heavy_alloys_stiffen_with_tungsten_and_stay_below_pure_tungsten():
    # ASTM B777-15 1.3: as the tungsten content rises, stiffness rises; pure W is 411 GPa (Dowling, Table 5.2)
    moduli = [material(f"W-alloy-class-{c}", "k").youngs_modulus_gpa for c in (1, 2, 3, 4)]
    assert moduli == sorted(moduli) and len(set(moduli)) == 4 and moduli[-1] < 411.0
    assert all("from memory" in material(f"W-alloy-class-{c}", "k").elastic_source for c in (1, 2, 3, 4))


def test_a_density_carries_no_elastic_constants():
    # a density says nothing reliable about stiffness: the press-fit screen asks for a named material
    m = custom(7.8, "web.density")
    assert not m.has_elastic and m.youngs_modulus_gpa is None and m.poisson_ratio is None
    assert "density only" in m.elastic_source
