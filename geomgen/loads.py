"""Screens for what can hurt someone: plug loads and web hoop stress at speed.

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
"""

from __future__ import annotations

import math

POISSON_STEEL = 0.3  # common practice for steels


def omega(rpm: float) -> float:
    """rad/s from rpm."""
    return rpm * 2.0 * math.pi / 60.0


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
