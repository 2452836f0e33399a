"""Drill series a shop stocks, and how a drill is named on the sheet.

"metric": 3.0 to 13.0 mm in 0.5 mm steps, then 14 to 25 mm in 1 mm steps
(common practice: a jobber set plus the larger sizes of ISO 235's range).
"inch": 1/8 in to 1 in in 1/64 in steps (common practice: fractional sets).
A job may instead list its own diameters in mm.
"""

from __future__ import annotations

from fractions import Fraction

from .errors import BadInput
from .units import MM_PER_INCH

SERIES = ("metric", "inch")


def series(name: str) -> tuple[float, ...]:
    """Diameters in mm, ascending."""
    if name == "metric":
        fine = [3.0 + 0.5 * i for i in range(21)]          # 3.0 .. 13.0
        coarse = [float(d) for d in range(14, 26)]          # 14 .. 25
        return tuple(fine + coarse)
    if name == "inch":
        return tuple(k / 64 * MM_PER_INCH for k in range(8, 65))
    raise BadInput(f"correction.drills: unknown drill series {name!r}; use one of {', '.join(SERIES)} "
                   "or a list of diameters in mm")


def designation(diameter_mm: float, series_name: str) -> str:
    """How the drill is called in the shop: "8.5 mm" or "17/64 in"."""
    if series_name == "inch":
        frac = Fraction(round(diameter_mm / MM_PER_INCH * 64), 64)
        if abs(float(frac) * MM_PER_INCH - diameter_mm) < 1e-6:
            return f"{frac.numerator}/{frac.denominator} in" if frac.denominator != 1 else f"{frac.numerator} in"
    return f"{diameter_mm:.2f}".rstrip("0").rstrip(".") + " mm"
