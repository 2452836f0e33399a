"""One mass-properties type for every stage: mass, first moment, second moments.

Frame and units are the contract's: lengths mm, mass g, first moment g*mm,
second moments and inertia g*mm^2, all about the origin of the frame the
part is given in.  The parallel-axis theorem lives here and nowhere else:
`MassProps.transformed` is the only place a body is moved.

Internally the body is kept as its raw moments about the origin,

    m = integral dm,   M1 = integral r dm,   S = integral r r^T dm,

because these add and subtract exactly for any set of parts and move by a
simple rule; the inertia tensor is derived, I = trace(S) E - S.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

_EYE3 = np.eye(3)


def _vec3(values) -> np.ndarray:
    out = np.asarray(values, dtype=float).reshape(3)
    out.setflags(write=False)
    return out


def _mat3(values) -> np.ndarray:
    out = np.asarray(values, dtype=float).reshape(3, 3)
    out = 0.5 * (out + out.T)
    out.setflags(write=False)
    return out


@dataclass(frozen=True, eq=False)
class MassProps:
    """Mass properties of a body about the origin of its frame.

    mass : float, g (negative for material taken away)
    first_moment : (3,) float, g*mm, integral of r dm
    second_moment : (3, 3) float, g*mm^2, integral of r r^T dm (symmetric)
    volume : float, mm^3 (signed like the mass; informative for one material)
    """

    mass: float
    first_moment: np.ndarray
    second_moment: np.ndarray
    volume: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "mass", float(self.mass))
        object.__setattr__(self, "volume", float(self.volume))
        object.__setattr__(self, "first_moment", _vec3(self.first_moment))
        object.__setattr__(self, "second_moment", _mat3(self.second_moment))

    # -- construction -------------------------------------------------
    @classmethod
    def zero(cls) -> MassProps:
        return cls(0.0, np.zeros(3), np.zeros((3, 3)), 0.0)

    @classmethod
    def from_centroidal(cls, *, mass: float, com, inertia_com, volume: float = 0.0) -> MassProps:
        """A body from its mass (g), centre of mass (3,) mm and inertia tensor
        about its centre of mass (3, 3) g*mm^2 (I = trace(S) E - S convention,
        products of inertia with the minus sign)."""
        inertia_com = np.asarray(inertia_com, dtype=float).reshape(3, 3)
        # S = 0.5 trace(I) E - I about the centre of mass
        s_com = 0.5 * np.trace(inertia_com) * _EYE3 - inertia_com
        centred = cls(mass, np.zeros(3), s_com, volume)
        return centred.transformed(offset=com)

    @classmethod
    def from_density(cls, *, volume: float, centroid, volume_second_moment, density_g_cm3: float) -> MassProps:
        """A body of uniform density from its volume moments.

        volume : mm^3;  centroid : (3,) mm;  volume_second_moment : (3, 3)
        mm^5, integral of r r^T dV about the origin;  density : g/cm^3.
        """
        rho = density_g_cm3 * 1e-3  # g/mm^3
        centroid = np.asarray(centroid, dtype=float)
        return cls(rho * volume, rho * volume * centroid,
                   rho * np.asarray(volume_second_moment, dtype=float), volume)

    # -- algebra --------------------------------------------------------
    def __add__(self, other: MassProps) -> MassProps:
        if not isinstance(other, MassProps):
            return NotImplemented
        return MassProps(self.mass + other.mass, self.first_moment + other.first_moment,
                         self.second_moment + other.second_moment, self.volume + other.volume)

    def __radd__(self, other):
        # lets sum() start from 0
        if other == 0:
            return self
        return NotImplemented

    def __sub__(self, other: MassProps) -> MassProps:
        if not isinstance(other, MassProps):
            return NotImplemented
        return self + other.scaled(-1.0)

    def __neg__(self) -> MassProps:
        return self.scaled(-1.0)

    def scaled(self, factor: float) -> MassProps:
        """Every moment times `factor` (a density ratio, or -1 for removal)."""
        return MassProps(self.mass * factor, self.first_moment * factor,
                         self.second_moment * factor, self.volume * factor)

    def with_density_ratio(self, ratio: float) -> MassProps:
        """The same volume filled with material `ratio` times as dense."""
        return MassProps(self.mass * ratio, self.first_moment * ratio,
                         self.second_moment * ratio, self.volume)

    def transformed(self, *, rotation=None, offset=(0.0, 0.0, 0.0)) -> MassProps:
        """The body rotated by `rotation` (3, 3), then moved by `offset` (3,) mm.

        This is the parallel-axis theorem, written once:
        S' = R S R^T + d (R M1)^T + (R M1) d^T + m d d^T.
        """
        rot = _EYE3 if rotation is None else np.asarray(rotation, dtype=float)
        d = np.asarray(offset, dtype=float).reshape(3)
        m1 = rot @ self.first_moment
        s = rot @ self.second_moment @ rot.T
        s = s + np.outer(d, m1) + np.outer(m1, d) + self.mass * np.outer(d, d)
        return MassProps(self.mass, m1 + self.mass * d, s, self.volume)

    def rotated_z(self, angle_deg: float) -> MassProps:
        """Turned about the Z axis by `angle_deg`, counter-clockwise seen from +Z."""
        a = math.radians(angle_deg)
        c, s = math.cos(a), math.sin(a)
        return self.transformed(rotation=[[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]])

    def mirrored_x(self) -> MassProps:
        """x -> -x: how web b's frame maps into the crank frame."""
        return self.transformed(rotation=np.diag([-1.0, 1.0, 1.0]))

    # -- derived figures ------------------------------------------------
    @property
    def com(self) -> np.ndarray:
        """Centre of mass, (3,) mm.  Undefined (NaN) for a body of zero mass."""
        if self.mass == 0.0:
            return np.full(3, math.nan)
        return self.first_moment / self.mass

    @property
    def unbalance(self) -> np.ndarray:
        """Static unbalance about the Z axis, (2,) g*mm: (integral x dm, integral y dm)."""
        return np.array(self.first_moment[:2])

    @property
    def unbalance_magnitude(self) -> float:
        return float(math.hypot(*self.first_moment[:2]))

    @property
    def inertia(self) -> np.ndarray:
        """Inertia tensor about the origin, (3, 3) g*mm^2 (products with minus sign)."""
        return np.trace(self.second_moment) * _EYE3 - self.second_moment

    @property
    def inertia_com(self) -> np.ndarray:
        """Inertia tensor about the centre of mass, (3, 3) g*mm^2."""
        return self.transformed(offset=-self.com).inertia

    @property
    def inertia_z(self) -> float:
        """Moment of inertia about the Z (crank) axis, g*mm^2."""
        return float(self.second_moment[0, 0] + self.second_moment[1, 1])

    @property
    def product_zx_zy(self) -> np.ndarray:
        """(integral x z dm, integral y z dm), g*mm^2: the couple unbalance terms."""
        return np.array([self.second_moment[0, 2], self.second_moment[1, 2]])

    def summary(self) -> dict:
        """Plain numbers for JSON: the contract's keys and a few more."""
        return {
            "mass_g": self.mass,
            "volume_mm3": self.volume,
            "com_mm": [float(v) for v in self.com],
            "unbalance_gmm": [float(v) for v in self.unbalance],
            "inertia_z_gmm2": self.inertia_z,
            "inertia_tensor_gmm2": [[float(v) for v in row] for row in self.inertia],
        }

    def __repr__(self) -> str:
        c = self.com
        return (f"MassProps(mass={self.mass:.6g} g, com=({c[0]:.6g}, {c[1]:.6g}, {c[2]:.6g}) mm, "
                f"Iz={self.inertia_z:.6g} g*mm^2)")
