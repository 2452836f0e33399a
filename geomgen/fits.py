"""ISO 286 limits and fits for plug bores: a bore H7 and a plug n6, p6, r6 or s6.

A plug is held in its web by an interference fit on the hole basis: the bore
is reamed to H7 (lower limit deviation 0), the plug ground oversize to a shaft
class of grade 6 whose zone lies above the bore's.  The limits are
ISO 286-2's, built as ISO 286-1 builds them:

- standard tolerance grades IT6 and IT7: ISO 286-1:2010, Table 1;
- a shaft's fundamental deviation (its lower limit deviation ei) for
  n, p, r and s: ISO 286-1:2010's table of fundamental deviations of shafts;
- hole H: EI = 0, ES = EI + IT;  shaft: es = ei + IT (ISO 286-1, the
  limit-deviation relations).

ISO 286-1 gives formulas as well (i = 0.45 D^(1/3) + 0.001 D, IT6 = 10 i,
IT7 = 16 i; n: ei = 5 D^0.34; p: ei = IT7 + 0..5; s: ei = IT8 + 1..4; r: the
geometric mean of p and s), but its tabulated values, not the formulas, are
authoritative, so the tables are carried here and the tests check them against
the formulas.  Nominal sizes above 0 up to 50 mm (the six ranges up to 50
mm; a plug in a flywheel web is well inside it).  All deviations in µm.
"""

from __future__ import annotations

from dataclasses import dataclass

from .errors import BadInput

#: upper ends of the nominal size ranges, mm: a size belongs to the range
#: "above the previous end, up to and including this one" (ISO 286-1, Table 1)
RANGE_ENDS_MM = (3.0, 6.0, 10.0, 18.0, 30.0, 50.0)

#: standard tolerance grades, µm, per range (ISO 286-1:2010, Table 1)
STANDARD_TOLERANCE_UM = {
    6: (6, 8, 9, 11, 13, 16),
    7: (10, 12, 15, 18, 21, 25),
}

#: fundamental deviations of shafts, lower limit deviation ei, µm, per range
#: (ISO 286-1:2010, fundamental deviations of shafts k to zc; the same for all grades)
SHAFT_EI_UM = {
    "n": (4, 8, 10, 12, 15, 17),
    "p": (6, 12, 15, 18, 22, 26),
    "r": (10, 15, 19, 23, 28, 34),
    "s": (14, 19, 23, 28, 35, 43),
}

#: the plug fits a job may ask for; H7/p6 is the usual light press fit, n6 a transition fit (common practice)
FITS = ("H7/p6", "H7/r6", "H7/s6", "H7/n6")
DEFAULT_FIT = "H7/p6"


@dataclass(frozen=True)
class FitLimits:
    """The limits of a plug and its bore at one nominal size (mm; deviations in µm)."""

    fit: str                  # "H7/p6"
    nominal_mm: float
    bore_class: str           # "H7"
    plug_class: str           # "p6"
    bore_ei_um: int           # bore's lower limit deviation (0 for H)
    bore_es_um: int
    plug_ei_um: int
    plug_es_um: int

    @property
    def bore_min_mm(self) -> float:
        return self.nominal_mm + self.bore_ei_um / 1000.0

    @property
    def bore_max_mm(self) -> float:
        return self.nominal_mm + self.bore_es_um / 1000.0

    @property
    def plug_min_mm(self) -> float:
        return self.nominal_mm + self.plug_ei_um / 1000.0

    @property
    def plug_max_mm(self) -> float:
        return self.nominal_mm + self.plug_es_um / 1000.0

    @property
    def interference_min_um(self) -> int:
        """The smallest plug in the largest bore; negative means the pair can have clearance."""
        return self.plug_ei_um - self.bore_es_um

    @property
    def interference_max_um(self) -> int:
        """The largest plug in the smallest bore."""
        return self.plug_es_um - self.bore_ei_um


def check_fit(name, where: str = "correction.plug_fit") -> str:
    """`name` if it is one of FITS, else BadInput naming `where` and the fits allowed."""
    if name not in FITS:
        raise BadInput(f"{where}: must be one of {', '.join(FITS)}, got {name!r}")
    return name


def size_range_index(diameter_mm: float, where: str = "plug.diameter") -> int:
    """Which of ISO 286's nominal size ranges holds `diameter_mm` (0 for 'up to 3 mm')."""
    if not diameter_mm > 0:
        raise BadInput(f"{where}: a fit needs a size above 0 mm, got {diameter_mm:g} mm")
    for k, end in enumerate(RANGE_ENDS_MM):
        if diameter_mm <= end + 1e-9:
            return k
    raise BadInput(f"{where}: {diameter_mm:g} mm is above the {RANGE_ENDS_MM[-1]:g} mm that the plug fits "
                   f"are tabulated for here; use a smaller plug")


def standard_tolerance_um(grade: int, diameter_mm: float) -> int:
    """ITn in µm for the nominal size (ISO 286-1:2010, Table 1), grades 6 and 7."""
    return STANDARD_TOLERANCE_UM[grade][size_range_index(diameter_mm)]


def fit_limits(fit: str, diameter_mm: float, where: str = "plug.diameter") -> FitLimits:
    """The bore and plug limits of `fit` ("H7/p6" ...) at the nominal `diameter_mm`."""
    check_fit(fit)
    bore_class, plug_class = fit.split("/")
    k = size_range_index(diameter_mm, where)
    bore_it = STANDARD_TOLERANCE_UM[int(bore_class[1:])][k]
    plug_it = STANDARD_TOLERANCE_UM[int(plug_class[1:])][k]
    ei = SHAFT_EI_UM[plug_class[0]][k]
    return FitLimits(fit=fit, nominal_mm=float(diameter_mm), bore_class=bore_class, plug_class=plug_class,
                     bore_ei_um=0, bore_es_um=bore_it, plug_ei_um=ei, plug_es_um=ei + plug_it)
