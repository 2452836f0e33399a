"""Single-cylinder balance: masses, target, kinematics, shaking force (numpy only).

Conventions (the README's frame, and the choices made here):

- Crank frame (x, y): crank axis Z through the origin, seen from +Z; that is
  web a's frame.  At top dead centre the pin is on the cylinder axis.
- Cylinder axis: the unit vector c = (-sin t, cos t), i.e. +Y turned by the
  tilt t (deg) counter-clockwise, as web angles are measured.  "Along" is the
  component on c (positive towards the cylinder head); "across" the
  component on n = (cos t, sin t), c turned 90 deg clockwise (+X when t = 0).
- The crank turns counter-clockwise seen from +Z.  Crank angle theta is
  measured from TDC in the direction of rotation, so at theta the pin lies
  at angle t + theta counter-clockwise from +Y:
  e(theta) = (-sin(t + theta), cos(t + theta)).
- Kinematic functions take theta in radians (arrays welcome); results at a
  crank speed omega in rad/s.  Lengths mm, masses g, forces N
  (g * mm / s^2 = 1e-6 N), unbalance g*mm, couples N*m.
- "Force" is always the force the moving parts put on the engine (the frame):
  minus their mass times acceleration.  At TDC the decelerating piston pulls
  the engine towards the cylinder head (+along).
"""

from __future__ import annotations

import math

import numpy as np

from .errors import BadInput

#: g * mm / s^2 expressed in N
GMM_S2_TO_N = 1e-6
#: the balance factors a job may ask for, and so the ones the sweep covers
BALANCE_FACTOR_RANGE = (0.0, 1.5)
SWEEP_FACTORS = np.round(np.arange(151) * 0.01, 2)


def rpm_to_omega(rpm: float) -> float:
    """Crank speed, rpm -> rad/s."""
    return float(rpm) * 2.0 * math.pi / 60.0


def _check_geometry(crank_radius: float, rod_length: float) -> None:
    if not crank_radius > 0.0:
        raise BadInput(f"engine.stroke: must be > 0 mm, got {2.0 * crank_radius!r}")
    if not rod_length > crank_radius:
        raise BadInput(
            f"engine.rod_length: must be longer than stroke/2 = {crank_radius:g} mm, "
            f"got {rod_length!r}"
        )


# --- masses and targets --------------------------------------------------

def bob_weight(*, m_rotating: float, m_reciprocating: float, balance_factor: float) -> float:
    """Bob weight to hang on the assembled crank's pin for a balancing machine, g.

    m_rotating + BF * m_reciprocating, where m_rotating is the rod's rotating
    end only (big end, bearing, cage, washers).  The crank's own parts at the
    pin (crankpin, nuts) are on the crank already and never on the bob.  With
    this bob on the pin, a crank whose webs are at `web_target` balances
    statically: webs + crank parts + bob sum to zero unbalance.
    """
    return float(m_rotating + balance_factor * m_reciprocating)


def web_target(
    *, m_rotating: float, m_reciprocating: float, balance_factor: float, crank_radius: float,
    m_crank_parts: float = 0.0,
) -> np.ndarray:
    """Unbalance the two webs together must carry, (2,) float, g*mm.

    U_webs = -(m_rotating + m_crank_parts + BF * m_reciprocating) * r along Y, x = 0:
    the webs counter the bob weight and the crank's own parts at the pin.
    """
    bob = bob_weight(
        m_rotating=m_rotating, m_reciprocating=m_reciprocating, balance_factor=balance_factor
    )
    return np.array([0.0, -(bob + m_crank_parts) * crank_radius])


def split_target(target: np.ndarray, shares) -> list[np.ndarray]:
    """Share a (2,) g*mm target between webs; shares must sum to 1.

    Returns one (2,) array per share, in the order given.
    """
    shares = [float(s) for s in shares]
    if not shares or any(s < 0.0 for s in shares) or abs(sum(shares) - 1.0) > 1e-9:
        raise BadInput(f"webs.share: shares must be >= 0 and sum to 1, got {shares}")
    target = np.asarray(target, dtype=float)
    return [s * target for s in shares]


# --- slider-crank kinematics, exact ----------------------------------------

def piston_position(theta, *, crank_radius: float, rod_length: float) -> np.ndarray:
    """Piston pin distance from the crank axis along the cylinder, mm.

    s = r cos(theta) + sqrt(l^2 - r^2 sin^2(theta)); theta in rad.
    """
    _check_geometry(crank_radius, rod_length)
    th = np.asarray(theta, dtype=float)
    r, l = crank_radius, rod_length
    return r * np.cos(th) + np.sqrt(l * l - (r * np.sin(th)) ** 2)


def piston_velocity(theta, *, crank_radius: float, rod_length: float, omega: float) -> np.ndarray:
    """ds/dt at constant omega (rad/s), mm/s; the exact derivative of s(theta)."""
    _check_geometry(crank_radius, rod_length)
    th = np.asarray(theta, dtype=float)
    r, l = crank_radius, rod_length
    q = np.sqrt(l * l - (r * np.sin(th)) ** 2)
    ds = -r * np.sin(th) - r * r * np.sin(th) * np.cos(th) / q
    return omega * ds


def piston_acceleration(
    theta, *, crank_radius: float, rod_length: float, omega: float
) -> np.ndarray:
    """d2s/dt2 at constant omega, mm/s^2; the exact second derivative.

    With q = sqrt(l^2 - r^2 sin^2):
    s'' = -r cos - r^2 cos(2 theta) / q - r^4 sin^2(2 theta) / (4 q^3).
    At TDC -r omega^2 (1 + lambda), at BDC +r omega^2 (1 - lambda).
    """
    _check_geometry(crank_radius, rod_length)
    th = np.asarray(theta, dtype=float)
    r, l = crank_radius, rod_length
    q = np.sqrt(l * l - (r * np.sin(th)) ** 2)
    d2s = -r * np.cos(th) - r * r * np.cos(2 * th) / q - r**4 * np.sin(2 * th) ** 2 / (4 * q**3)
    return omega * omega * d2s


def series_coefficients(lam: float) -> dict[int, float]:
    """Harmonic coefficients A_k of the piston acceleration, to lambda^5.

    s'' = -r omega^2 (A1 cos + A2 cos 2theta + A4 cos 4theta + A6 cos 6theta + ...),
    lambda = r / l.  Odd orders above 1 are zero.
    """
    return {
        1: 1.0,
        2: lam + lam**3 / 4.0 + 15.0 * lam**5 / 128.0,
        4: -(lam**3 / 4.0 + 3.0 * lam**5 / 16.0),
        6: 9.0 * lam**5 / 128.0,
    }


def piston_acceleration_series(
    theta, *, crank_radius: float, rod_length: float, omega: float, orders=(1, 2, 4, 6)
) -> np.ndarray:
    """The harmonic series of the piston acceleration, mm/s^2 (for comparison)."""
    _check_geometry(crank_radius, rod_length)
    th = np.asarray(theta, dtype=float)
    coeffs = series_coefficients(crank_radius / rod_length)
    total = sum(coeffs[k] * np.cos(k * th) for k in orders)
    return -crank_radius * omega * omega * total


def harmonic_amplitudes(samples, orders=(1, 2, 4)) -> dict[int, float]:
    """Amplitudes of the given orders of a signal sampled over one revolution.

    samples : (n,) float, taken at theta = 2 pi i / n, i = 0 .. n-1.
    Returns {order: amplitude} in the unit of the samples (by FFT).
    """
    x = np.asarray(samples, dtype=float)
    spectrum = np.fft.rfft(x)
    n = x.size
    return {k: float(2.0 * abs(spectrum[k]) / n) for k in orders}


# --- shaking force on the engine -------------------------------------------

def cylinder_axes(cylinder_tilt: float) -> tuple[np.ndarray, np.ndarray]:
    """Unit vectors (along, across) of the cylinder in the crank frame, (2,) each."""
    t = math.radians(cylinder_tilt)
    return np.array([-math.sin(t), math.cos(t)]), np.array([math.cos(t), math.sin(t)])


def _unit(angle_from_y) -> np.ndarray:
    """(n, 2) unit vectors at angles (rad) counter-clockwise from +Y."""
    a = np.asarray(angle_from_y, dtype=float)
    return np.stack([-np.sin(a), np.cos(a)], axis=-1)


def balancer_force(
    theta, *, m_reciprocating: float, crank_radius: float, omega: float,
    balancer_share: float, cylinder_tilt: float = 0.0,
) -> np.ndarray:
    """Force of a counter-rotating primary balancer shaft on the engine, (n, 2) N.

    Unbalance share * m_reciprocating * r.  Its heavy spot mirrors the
    counterweight (-e(theta)) about the cylinder axis, so it adds to the
    counterweight along the cylinder and cancels it across.
    """
    t = math.radians(cylinder_tilt)
    th = np.asarray(theta, dtype=float)
    heavy = -_unit(t - th)
    u = balancer_share * m_reciprocating * crank_radius
    return u * omega * omega * GMM_S2_TO_N * heavy


def shaking_force(
    theta, *, crank_radius: float, rod_length: float, omega: float,
    m_reciprocating: float, m_rotating: float, balance_factor: float,
    balancer_share: float = 0.0, cylinder_tilt: float = 0.0,
) -> np.ndarray:
    """Residual force on the engine, (n, 2) float, N, in the crank frame.

    theta : (n,) crank angle from TDC, rad.  Webs assumed at target
    (counterweight unbalance (m_rotating + BF m_reciprocating) r opposite the
    pin); the reciprocating mass moves by the exact slider-crank law.
    """
    th = np.atleast_1d(np.asarray(theta, dtype=float))
    along, _ = cylinder_axes(cylinder_tilt)
    k = omega * omega * GMM_S2_TO_N
    acc = piston_acceleration(th, crank_radius=crank_radius, rod_length=rod_length, omega=omega)
    recip = (-m_reciprocating * acc * GMM_S2_TO_N)[:, None] * along
    pin = _unit(math.radians(cylinder_tilt) + th)
    rotating = m_rotating * crank_radius * k * pin
    counterweight = -(m_rotating + balance_factor * m_reciprocating) * crank_radius * k * pin
    total = recip + rotating + counterweight
    if balancer_share:
        total = total + balancer_force(
            th, m_reciprocating=m_reciprocating, crank_radius=crank_radius, omega=omega,
            balancer_share=balancer_share, cylinder_tilt=cylinder_tilt,
        )
    return total


def along_across(forces, cylinder_tilt: float = 0.0) -> tuple[np.ndarray, np.ndarray]:
    """Split (n, 2) forces into (n,) along and (n,) across the cylinder."""
    f = np.asarray(forces, dtype=float)
    along, across = cylinder_axes(cylinder_tilt)
    return f @ along, f @ across


def balancer_couple(
    theta, *, m_reciprocating: float, crank_radius: float, omega: float,
    balancer_share: float, balancer_offset=(0.0, 0.0), cylinder_tilt: float = 0.0,
) -> np.ndarray:
    """Rocking couple about the crank axis (+Z, counter-clockwise), (n,) N*m.

    The balancer's force acts at its own axis, offset (x, y) mm from the
    crank axis, while the counterweight and the piston forces act through the
    crank axis; the couple is offset x force (z component).
    """
    f = balancer_force(
        np.atleast_1d(theta), m_reciprocating=m_reciprocating, crank_radius=crank_radius,
        omega=omega, balancer_share=balancer_share, cylinder_tilt=cylinder_tilt,
    )
    ox, oy = (float(v) for v in balancer_offset)
    return (ox * f[:, 1] - oy * f[:, 0]) * 1e-3


def balance_factor_sweep(
    *, crank_radius: float, rod_length: float, omega: float,
    m_reciprocating: float, m_rotating: float, balancer_share: float = 0.0,
    cylinder_tilt: float = 0.0, factors=None, samples: int = 3600,
) -> dict[str, np.ndarray]:
    """Peak residual force over one revolution for each balance factor.

    factors : (k,) balance factors, default SWEEP_FACTORS (0 .. 1.5, the
        accepted range, in 0.01 steps).
    samples : crank angles per revolution the peaks are taken over.
    Returns {"balance_factor", "peak", "peak_along", "peak_across"}: (k,) each,
    forces in N (peaks are maxima of magnitudes).
    """
    if factors is None:
        factors = SWEEP_FACTORS
    bf = np.asarray(factors, dtype=float)
    th = np.arange(samples) * (2.0 * math.pi / samples)
    # The force is affine in BF: F = F(BF=0) - BF * m_recip r omega^2 e(theta).
    base = shaking_force(
        th, crank_radius=crank_radius, rod_length=rod_length, omega=omega,
        m_reciprocating=m_reciprocating, m_rotating=m_rotating, balance_factor=0.0,
        balancer_share=balancer_share, cylinder_tilt=cylinder_tilt,
    )
    per_bf = (
        -m_reciprocating * crank_radius * omega * omega * GMM_S2_TO_N
        * _unit(math.radians(cylinder_tilt) + th)
    )
    along, across = cylinder_axes(cylinder_tilt)
    peak, peak_along, peak_across = (np.empty(len(bf)) for _ in range(3))
    for i in range(0, len(bf), 8):       # eight factors at a time: the work stays in the cache
        part = slice(i, i + 8)
        forces = base[None, :, :] + bf[part, None, None] * per_bf[None, :, :]
        peak[part] = np.max(np.hypot(forces[..., 0], forces[..., 1]), axis=1)
        peak_along[part] = np.max(np.abs(forces @ along), axis=1)
        peak_across[part] = np.max(np.abs(forces @ across), axis=1)
    return {"balance_factor": bf, "peak": peak, "peak_along": peak_along, "peak_across": peak_across}


def reciprocating_torque(
    theta, *, crank_radius: float, rod_length: float, omega: float, m_reciprocating: float,
) -> np.ndarray:
    """Torque of the reciprocating parts' inertia on the crank about its axis, (n,) N*m.

    T = F_inertia * ds/dtheta (virtual work), F_inertia = -m * s'' along the
    cylinder, by the exact slider-crank law at constant omega.  Its mean over a
    revolution is zero; it swings the crank's speed and the engine about the
    crank axis.  Counterweights at constant speed put no torque on the crank,
    so no balance factor changes it.  Positive: in the direction of rotation.
    """
    th = np.atleast_1d(np.asarray(theta, dtype=float))
    r, l = crank_radius, rod_length
    acc = piston_acceleration(th, crank_radius=r, rod_length=l, omega=omega)
    q = np.sqrt(l * l - (r * np.sin(th)) ** 2)
    ds_dtheta = -r * np.sin(th) - r * r * np.sin(th) * np.cos(th) / q          # mm/rad
    force_n = -m_reciprocating * acc * GMM_S2_TO_N
    return force_n * ds_dtheta * 1e-3


def best_balance_factor(sweep: dict[str, np.ndarray]) -> float:
    """The swept balance factor with the smallest peak resultant (first if tied)."""
    return float(sweep["balance_factor"][int(np.argmin(sweep["peak"]))])


# --- ISO 21940-11 ---------------------------------------------------------

def iso_permissible_unbalance(*, grade: float, rotor_mass_g: float, rpm: float) -> float:
    """ISO 21940-11 permissible residual unbalance, g*mm.

    U_per = 1000 * G * m / Omega with G in mm/s, m in kg, Omega in rad/s.
    grade : G in mm/s (e.g. 6.3); rotor_mass_g : g; rpm : the service speed.
    """
    if not grade > 0.0:
        raise BadInput(f"iso_grade: must be a G-grade > 0 mm/s, got {grade!r}")
    if not rotor_mass_g > 0.0:
        raise BadInput(f"rotor mass: must be > 0 g, got {rotor_mass_g!r}")
    if not rpm > 0.0:
        raise BadInput(f"engine.max_rpm: must be > 0, got {rpm!r}")
    return 1000.0 * grade * (rotor_mass_g / 1000.0) / rpm_to_omega(rpm)
