"""How geomgen rounds the numbers it writes (study.json, plan.json).

Same inputs give the same bytes, and round-off noise (-0.0, 1e-13) never
leaks into a file a person or a diff reads.  Two precisions: 6 significant
digits for every figure, 9 for mass properties in plan.json, so predicted and
exact figures that agree to 1e-12 print alike.
"""

from __future__ import annotations

import math


def num(x: float) -> float:
    """A float rounded to 6 significant digits, with round-off noise made 0.0.

    Same inputs give the same bytes, and -0.0 / 1e-13 never leak into JSON.
    """
    x = float(x)
    if not math.isfinite(x):
        raise ValueError(f"non-finite number for study.json or plan.json: {x!r}")
    if abs(x) < 1e-9:
        return 0.0
    return float(f"{x:.6g}") + 0.0


def vec(v) -> list[float]:
    """Each component through `num`."""
    return [num(c) for c in v]


def fine(x: float) -> float:
    """Mass properties keep 9 significant digits in plan.json, so predicted and exact figures that agree
    to 1e-12 print alike; round-off noise below 1e-9 becomes 0.0."""
    x = float(x)
    return 0.0 if abs(x) < 1e-9 else float(f"{x:.9g}") + 0.0
