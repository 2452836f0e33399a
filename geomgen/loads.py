"""Screens for what can hurt someone: plug loads, web hoop stress at speed, the crankpin press fit.

Plain closed forms, meant to flag a design for a proper check, never to
clear one.

- A plug of mass m whose centre runs at radius r pulls on its bore with
  F = m * omega^2 * r (Newton's second law for uniform circular motion).
- A rotating thin disc of constant thickness (plane stress, elastic, no
  holes but the central one): with a central bore of radius a,
  sigma_theta(a) = (3 + nu)/4 * rho * omega^2 * (R^2 + (1 - nu)/(3 + nu) * a^2),
  and for a solid disc the largest stress is at the centre,
  sigma_max = (3 + nu)/8 * rho * omega^2 * R^2
  (Timoshenko & Goodier, Theory of Elasticity, rotating discs; also
  Roark's Formulas for Stress and Strain, rotating disc cases).  The crankpin
  bore, the correction holes and the press fit all raise the real stress
  above this figure (a small hole in a stressed plate concentrates it about
  threefold, Kirsch): the screen is a lower bound.
- A press fit of two thick-walled cylinders (Lame, plane stress, both
  members of the same length, elastic): a pin of outer radius R and bore
  r_i pressed into a hub of bore R and outer radius r_o with a radial
  interference delta (half the diametral one) meets it at the contact pressure
  p = delta / ( R/E_o * ((r_o^2 + R^2)/(r_o^2 - R^2) + nu_o)
              + R/E_i * ((R^2 + r_i^2)/(R^2 - r_i^2) - nu_i) ),
  the hub's hoop stress at its bore is  p (r_o^2 + R^2)/(r_o^2 - R^2)  (tension),
  the pin's at the contact  -p (R^2 + r_i^2)/(R^2 - r_i^2)  and at its own bore
  -2 p R^2/(R^2 - r_i^2)  (compression; -p throughout a solid pin)
  (Shigley's Mechanical Engineering Design, press and shrink fits, eqs.
  3-49 and 3-56 to 3-59; Roark's Formulas for Stress and Strain, thick
  cylinders, gives the same).
- A plug pulled outward by F bears on its bore over the projected area
  diameter x length (bearing pressure F/(d L)), and to tear out it must shear
  the wall between it and the rim along two planes of wall thickness t by
  length L (tau = F/(2 t L)), as for a pin near the edge of a plate (bearing
  and shear tear-out in Shigley's chapter on joints).  Both are mean stresses:
  the real peak at the bore is higher.
"""

from __future__ import annotations

import math

POISSON_STEEL = 0.3  # common practice for steels


def omega(rpm: float) -> float:
    """rad/s from rpm."""
    return rpm * 2.0 * math.pi / 60.0


def _thick_factor(inner: float, outer: float) -> float:
    """(outer^2 + inner^2) / (outer^2 - inner^2) for a ring, 1 for an unbounded one (outer = inf)."""
    q = 0.0 if math.isinf(outer) else (inner / outer) ** 2
    return (1.0 + q) / (1.0 - q)


def press_fit_pressure_mpa(*, interference_mm: float, diameter_mm: float, hub_outer_diameter_mm: float,
                           pin_inner_diameter_mm: float = 0.0, hub_e_mpa: float, hub_nu: float,
                           pin_e_mpa: float, pin_nu: float) -> float:
    """Contact pressure of a pin pressed into a hub, MPa (Shigley eq. 3-56).

    interference_mm : diametral interference (pin diameter minus hub bore), mm
    diameter_mm : nominal contact diameter, mm
    hub_outer_diameter_mm : the hub's outer diameter, mm (math.inf for an unbounded hub)
    pin_inner_diameter_mm : the pin's own bore, mm (0 = solid pin)
    The formula is homogeneous: any consistent length and stress units work.
    """
    r = 0.5 * diameter_mm
    r_o = 0.5 * hub_outer_diameter_mm
    r_i = 0.5 * pin_inner_diameter_mm
    if not (0.0 <= r_i < r < r_o):
        raise ValueError(f"need pin bore < contact diameter < hub outer diameter, got "
                         f"{pin_inner_diameter_mm}, {diameter_mm}, {hub_outer_diameter_mm}")
    radial = 0.5 * interference_mm
    hub = r / hub_e_mpa * (_thick_factor(r, r_o) + hub_nu)
    pin = r / pin_e_mpa * (_thick_factor(r_i, r) - pin_nu)
    return radial / (hub + pin)


def hub_hoop_stress_mpa(*, pressure_mpa: float, diameter_mm: float, hub_outer_diameter_mm: float) -> float:
    """Hoop stress of the hub at its bore under the contact pressure, MPa (tension, Shigley eq. 3-59)."""
    return pressure_mpa * _thick_factor(0.5 * diameter_mm, 0.5 * hub_outer_diameter_mm)


def pin_hoop_stress_mpa(*, pressure_mpa: float, diameter_mm: float, pin_inner_diameter_mm: float = 0.0,
                        at_bore: bool = False) -> float:
    """Hoop stress of the pin under the contact pressure, MPa (negative: compression).

    at_bore : False at the contact (Shigley eq. 3-58), True at the pin's own bore, where a hollow pin is
    most compressed (Shigley eq. 3-49 with the outer pressure only); a solid pin is at -p throughout.
    """
    r, r_i = 0.5 * diameter_mm, 0.5 * pin_inner_diameter_mm
    if at_bore:
        return -2.0 * pressure_mpa * r * r / (r * r - r_i * r_i) if r_i > 0 else -pressure_mpa
    return -pressure_mpa * _thick_factor(r_i, r)


def bearing_stress_mpa(*, load_n: float, diameter_mm: float, length_mm: float) -> float:
    """Mean bearing pressure of a load on a bore over its projected area (diameter x length), MPa."""
    return load_n / (diameter_mm * length_mm)


def wall_shear_stress_mpa(*, load_n: float, wall_mm: float, length_mm: float) -> float:
    """Mean shear on the two planes a plug must cut to tear out through a wall `wall_mm` thick, MPa."""
    if wall_mm <= 0:
        return math.inf
    return load_n / (2.0 * wall_mm * length_mm)


def plug_load_n(*, mass_g: float, radius_mm: float, rpm: float) -> float:
    """Centrifugal pull of a plug on its bore, N."""
    return mass_g * 1e-3 * omega(rpm) ** 2 * radius_mm * 1e-3


def disc_hoop_stress_mpa(*, density_g_cm3: float, outer_radius_mm: float, bore_radius_mm: float, rpm: float,
                         poisson: float = POISSON_STEEL) -> float:
    """Largest hoop stress of a thin rotating disc of constant thickness, MPa."""
    rho = density_g_cm3 * 1000.0              # kg/m^3
    w2 = omega(rpm) ** 2
    big_r = outer_radius_mm * 1e-3
    a = bore_radius_mm * 1e-3
    if a > 0:
        sigma = (3 + poisson) / 4 * rho * w2 * (big_r ** 2 + (1 - poisson) / (3 + poisson) * a ** 2)
    else:
        sigma = (3 + poisson) / 8 * rho * w2 * big_r ** 2
    return sigma / 1e6
