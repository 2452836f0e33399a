"""geomgen.loads: the closed forms behind the screens, against published worked answers.

Sources named beside each check:
- Budynas & Nisbett, solutions manual to Shigley's Mechanical Engineering Design
  (8th ed.): problems 3-68 (steel in steel, solid pin), 3-69 (steel pin in a
  cast-iron hub) and 5-35 (hollow inner tube), worked with the book's
  eqs. 3-56 to 3-59.
- Timoshenko & Goodier, Theory of Elasticity, rotating discs: a solid disc's
  largest stress (3 + nu)/8 rho w^2 b^2; a disc with a very small central hole
  carries twice that at the hole.
- The plane-stress Lamé solution for a thick cylinder (Timoshenko & Goodier,
  thick-walled cylinder; Roark's Formulas for Stress and Strain, thick
  cylinders): sigma_r = A - B/r^2, sigma_t = A + B/r^2,
  u = r/E ((1 - nu) A + (1 + nu) B / r^2), solved here with numpy as an
  independent check of the pressure formula.
"""

import math

import numpy as np
import pytest

from geomgen.loads import (
    bearing_stress_mpa,
    disc_hoop_stress_mpa,
    hub_hoop_stress_mpa,
    omega,
    pin_hoop_stress_mpa,
    plug_load_n,
    press_fit_pressure_mpa,
    wall_shear_stress_mpa,
)

STEEL_PSI = dict(hub_e_mpa=30e6, hub_nu=0.292, pin_e_mpa=30e6, pin_nu=0.292)   # E = 30 Mpsi, as the problems use


# ------------------------------------------------------------------ press fit, published answers
def test_shigley_3_68_steel_pin_in_steel_hub():
    # radial interference 0.001 in -> diametral 0.002 in; R = 0.5 in, r_o = 1 in, solid pin.
    # The formula is homogeneous: inches and psi in give psi out.
    p = press_fit_pressure_mpa(interference_mm=0.002, diameter_mm=1.0, hub_outer_diameter_mm=2.0, **STEEL_PSI)
    assert p == pytest.approx(22_500, rel=1e-9)                       # solutions manual: 2.25(10^4) psi
    assert hub_hoop_stress_mpa(pressure_mpa=p, diameter_mm=1.0, hub_outer_diameter_mm=2.0) == \
        pytest.approx(37_500, rel=1e-9)                               # solutions manual: 37 500 psi


def test_shigley_3_69_steel_pin_in_cast_iron_hub():
    # nu_i = 0.292, E_i = 30 Mpsi (pin); nu_o = 0.211, E_o = 14.5 Mpsi (hub); delta = 0.001 in radial
    p = press_fit_pressure_mpa(interference_mm=0.002, diameter_mm=1.0, hub_outer_diameter_mm=2.0,
                               hub_e_mpa=14.5e6, hub_nu=0.211, pin_e_mpa=30e6, pin_nu=0.292)
    assert p == pytest.approx(13_064, abs=1.0)                         # solutions manual: 13 064 psi
    assert hub_hoop_stress_mpa(pressure_mpa=p, diameter_mm=1.0, hub_outer_diameter_mm=2.0) == \
        pytest.approx(21_770, rel=5e-4)                               # solutions manual: 21 770 psi (4 figures)
    assert pin_hoop_stress_mpa(pressure_mpa=p, diameter_mm=1.0) == pytest.approx(-p)   # -13 064 psi


def test_shigley_5_35_hollow_inner_member():
    # diametral interference 0.02 mm, diameters 25 / 50 / 75 mm, E = 207 GPa
    kw = dict(hub_e_mpa=207e3, hub_nu=0.292, pin_e_mpa=207e3, pin_nu=0.292)
    p = press_fit_pressure_mpa(interference_mm=0.02, diameter_mm=50.0, hub_outer_diameter_mm=75.0,
                               pin_inner_diameter_mm=25.0, **kw)
    # the manual carries 4 significant figures and works on from the rounded 19.41: compare to 5e-4
    assert p == pytest.approx(19.41, rel=5e-4)                         # solutions manual: 19.41 MPa
    assert pin_hoop_stress_mpa(pressure_mpa=p, diameter_mm=50.0, pin_inner_diameter_mm=25.0) == \
        pytest.approx(-32.35, rel=5e-4)                               # eq. 3-58: -32.35 MPa
    assert hub_hoop_stress_mpa(pressure_mpa=p, diameter_mm=50.0, hub_outer_diameter_mm=75.0) == \
        pytest.approx(50.47, rel=5e-4)                                # eq. 3-59: 50.47 MPa
    # at the pin's own bore, outer pressure only: -2 p R^2/(R^2 - r_i^2) = -2 * 19.41 * 625/468.75 = -51.76 MPa
    assert pin_hoop_stress_mpa(pressure_mpa=p, diameter_mm=50.0, pin_inner_diameter_mm=25.0, at_bore=True) == \
        pytest.approx(-51.76, abs=0.02)


# ------------------------------------------------------------------ press fit, closed forms and limits
def test_same_material_solid_pin_closed_form():
    # one material, solid pin: the nu terms cancel and p = E delta/(2 d) (1 - (d/D)^2) (Shigley eq. 3-57
    # with r_i = 0, written with diameters); 28 mm pin, 66 mm ring, 0.06 mm, 207 GPa
    for nu in (0.25, 0.292, 0.33):
        p = press_fit_pressure_mpa(interference_mm=0.06, diameter_mm=28.0, hub_outer_diameter_mm=66.0,
                                   hub_e_mpa=207e3, hub_nu=nu, pin_e_mpa=207e3, pin_nu=nu)
        assert p == pytest.approx(207e3 * 0.06 / 56.0 * (1 - (28 / 66) ** 2), rel=1e-12)
    assert p == pytest.approx(181.87, abs=0.01)                       # by hand: 221.786 * 0.82002


def test_unbounded_hub_is_the_solid_shaft_limit():
    # r_o -> infinity: p -> E delta_d / (2 d) for one material (the ring factor tends to 1)
    kw = dict(hub_e_mpa=207e3, hub_nu=0.292, pin_e_mpa=207e3, pin_nu=0.292)
    top = press_fit_pressure_mpa(interference_mm=0.06, diameter_mm=28.0, hub_outer_diameter_mm=math.inf, **kw)
    assert top == pytest.approx(207e3 * 0.06 / 56.0, rel=1e-12)
    big = press_fit_pressure_mpa(interference_mm=0.06, diameter_mm=28.0, hub_outer_diameter_mm=28e4, **kw)
    assert big == pytest.approx(top, rel=1e-7)
    assert hub_hoop_stress_mpa(pressure_mpa=top, diameter_mm=28.0, hub_outer_diameter_mm=math.inf) == top


def test_thin_hub_limits():
    # r_o -> R: the ring has no stiffness, p -> 0, and its hoop stress tends to E_o * (delta/R), the strain
    # a ring of radius R must take to grow by the radial interference delta
    kw = dict(hub_e_mpa=207e3, hub_nu=0.292, pin_e_mpa=345e3, pin_nu=0.28)
    d, fit = 28.0, 0.06
    p = press_fit_pressure_mpa(interference_mm=fit, diameter_mm=d, hub_outer_diameter_mm=d * (1 + 1e-7), **kw)
    assert p < 1e-4 * press_fit_pressure_mpa(interference_mm=fit, diameter_mm=d, hub_outer_diameter_mm=math.inf, **kw)
    hoop = hub_hoop_stress_mpa(pressure_mpa=p, diameter_mm=d, hub_outer_diameter_mm=d * (1 + 1e-7))
    assert hoop == pytest.approx(207e3 * (0.5 * fit) / (0.5 * d), rel=1e-5)


def test_thinner_ring_means_more_hoop_stress_and_less_pressure():
    # why the ring to the nearest edge is on the safe side for the web's stress
    kw = dict(interference_mm=0.06, diameter_mm=28.0, hub_e_mpa=207e3, hub_nu=0.292, pin_e_mpa=207e3, pin_nu=0.292)
    outer = [30.0, 40.0, 66.0, 120.0, math.inf]
    p = [press_fit_pressure_mpa(hub_outer_diameter_mm=o, **kw) for o in outer]
    hoop = [hub_hoop_stress_mpa(pressure_mpa=pi, diameter_mm=28.0, hub_outer_diameter_mm=o) for pi, o in zip(p, outer)]
    assert p == sorted(p) and hoop == sorted(hoop, reverse=True)


def _lame_gap(*, interference_mm, d, d_o, d_i, e_o, nu_o, e_i, nu_i, p):
    """Radial interference that pressure p closes, from the general Lamé solution (numpy solve)."""
    R, ro, ri = d / 2, d_o / 2, d_i / 2
    # hub: sigma_r(R) = -p, sigma_r(ro) = 0
    a_o, b_o = np.linalg.solve([[1, -1 / R ** 2], [1, -1 / ro ** 2]], [-p, 0.0])
    u_hub = R / e_o * ((1 - nu_o) * a_o + (1 + nu_o) * b_o / R ** 2)
    if ri > 0:     # pin: sigma_r(R) = -p, sigma_r(ri) = 0
        a_i, b_i = np.linalg.solve([[1, -1 / R ** 2], [1, -1 / ri ** 2]], [-p, 0.0])
    else:          # a solid pin: B = 0 keeps the stress finite at the centre
        a_i, b_i = -p, 0.0
    u_pin = R / e_i * ((1 - nu_i) * a_i + (1 + nu_i) * b_i / R ** 2)
    return u_hub - u_pin


@pytest.mark.parametrize("d_i", [0.0, 12.0])
def test_pressure_closes_the_interference_in_the_lame_solution(d_i):
    # independent check: at the computed p the hub's bore grows and the pin shrinks by exactly delta_d/2
    case = dict(d=28.0, d_o=66.0, d_i=d_i, e_o=207e3, nu_o=0.292, e_i=345e3, nu_i=0.28)
    p = press_fit_pressure_mpa(interference_mm=0.06, diameter_mm=28.0, hub_outer_diameter_mm=66.0,
                               pin_inner_diameter_mm=d_i, hub_e_mpa=207e3, hub_nu=0.292, pin_e_mpa=345e3, pin_nu=0.28)
    assert _lame_gap(interference_mm=0.06, p=p, **case) == pytest.approx(0.03, rel=1e-12)


def test_press_fit_rejects_impossible_rings():
    with pytest.raises(ValueError):
        press_fit_pressure_mpa(interference_mm=0.06, diameter_mm=28.0, hub_outer_diameter_mm=28.0, **STEEL_PSI)
    with pytest.raises(ValueError):
        press_fit_pressure_mpa(interference_mm=0.06, diameter_mm=28.0, hub_outer_diameter_mm=60.0,
                               pin_inner_diameter_mm=28.0, **STEEL_PSI)


# ------------------------------------------------------------------ plug loads and walls
def test_plug_load_by_hand():
    # F = m w^2 r: 100 g at 50 mm and 6000 rpm; w = 200 pi rad/s, so F = 0.1 * 40000 pi^2 * 0.05 = 200 pi^2 N
    assert omega(6000) == pytest.approx(200 * math.pi, rel=1e-15)
    assert plug_load_n(mass_g=100.0, radius_mm=50.0, rpm=6000) == pytest.approx(200 * math.pi ** 2, rel=1e-12)
    assert plug_load_n(mass_g=100.0, radius_mm=50.0, rpm=6000) == pytest.approx(1973.92, abs=0.01)


def test_bearing_and_wall_shear_by_hand():
    # 2437.9 N on a 12 mm bore 18 mm long, 9 mm of wall to the rim:
    # bearing 2437.9/216 = 11.286 MPa; two shear planes 9 x 18 mm: 2437.9/324 = 7.524 MPa
    assert bearing_stress_mpa(load_n=2437.9, diameter_mm=12.0, length_mm=18.0) == pytest.approx(11.2866, abs=1e-4)
    assert wall_shear_stress_mpa(load_n=2437.9, wall_mm=9.0, length_mm=18.0) == pytest.approx(7.5244, abs=1e-4)
    assert wall_shear_stress_mpa(load_n=1.0, wall_mm=0.0, length_mm=18.0) == math.inf


# ------------------------------------------------------------------ rotating disc
def test_solid_disc_by_hand():
    # steel 7850 kg/m^3, R = 65 mm, 11000 rpm, nu = 0.3:
    # (3.3/8) * 7850 * 1151.917^2 * 0.065^2 = 3238.1 * 1326912 * 0.004225 Pa = 18.154 MPa (worked by hand)
    s = disc_hoop_stress_mpa(density_g_cm3=7.85, outer_radius_mm=65.0, bore_radius_mm=0.0, rpm=11000, poisson=0.3)
    assert s == pytest.approx(3.3 / 8 * 7850 * omega(11000) ** 2 * 0.065 ** 2 / 1e6, rel=1e-12)
    assert s == pytest.approx(18.154, abs=0.001)


def test_small_central_hole_doubles_the_disc_stress():
    # Timoshenko & Goodier: a very small hole at the centre doubles the largest stress of a solid disc
    for nu in (0.28, 0.292, 0.333):
        solid = disc_hoop_stress_mpa(density_g_cm3=7.85, outer_radius_mm=65.0, bore_radius_mm=0.0, rpm=9000, poisson=nu)
        tiny = disc_hoop_stress_mpa(density_g_cm3=7.85, outer_radius_mm=65.0, bore_radius_mm=1e-4, rpm=9000, poisson=nu)
        assert tiny == pytest.approx(2 * solid, rel=1e-8)


def test_disc_uses_the_poisson_ratio_given():
    # (3 + nu): 3.292 against 3.3 for a solid disc
    a = disc_hoop_stress_mpa(density_g_cm3=7.85, outer_radius_mm=65.0, bore_radius_mm=0.0, rpm=9000, poisson=0.292)
    b = disc_hoop_stress_mpa(density_g_cm3=7.85, outer_radius_mm=65.0, bore_radius_mm=0.0, rpm=9000, poisson=0.3)
    assert a / b == pytest.approx(3.292 / 3.3, rel=1e-12)
