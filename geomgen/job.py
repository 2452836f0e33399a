"""The job file: TOML in, validated frozen dataclasses out (mm, g, rpm, deg).

Every rule names the key path and what is allowed; everything wrong raises
`BadInput`.  See shared/design.md for the keys.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from .errors import BadInput


@dataclass(frozen=True)
class Balancer:
    """A primary balancer shaft at crank speed, counter-rotating.

    share : its unbalance as a share of m_reciprocating * stroke/2 (0 .. 1.5)
    offset : its axis in the crank's XY frame, mm (for the rocking couple)
    """

    share: float = 0.5
    offset: tuple[float, float] = (0.0, 0.0)


@dataclass(frozen=True)
class Engine:
    """The engine of a job, in mm, g, rpm, degrees.

    reciprocating / rotating : weighed parts by name, g.  Rotating parts are
    carried at the crankpin radius (stroke/2).
    """

    stroke: float
    rod_length: float
    max_rpm: float
    balance_factor: float
    reciprocating: dict = field(default_factory=dict)
    rotating: dict = field(default_factory=dict)
    cylinder_tilt: float = 0.0

    @property
    def crank_radius(self) -> float:
        return 0.5 * self.stroke

    @property
    def m_reciprocating(self) -> float:
        return float(sum(self.reciprocating.values()))

    @property
    def m_rotating(self) -> float:
        return float(sum(self.rotating.values()))

    @property
    def omega(self) -> float:
        """Crank speed at max_rpm, rad/s."""
        return self.max_rpm * 2.0 * math.pi / 60.0
