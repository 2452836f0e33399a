"""How a shop makes a plug bore: drill undersize, open and flat-bottom, ream to the fit, press the plug.

A plug bore is a flat-bottomed (or through) bore reamed to the plug's fit,
not a drilled hole with a point.  The sheet gives it as one row whose
operations, in order, are:

1. drill: the largest drill of the job's series that leaves the reamer at
   least its minimum stock; in a blind bore its tip stops at the bore depth,
   through a through bore it goes on until it cuts full size at the far face;
2. open and flat-bottom: where the drill leaves more stock than a reamer
   should take, open the bore (boring bar or end mill) to the pre-ream
   diameter; a blind bore has its bottom cut flat at the pre-ream diameter,
   down to the bore depth and no deeper (the drill's point cone goes);
3. ream: to the nominal diameter in the bore's class of the fit, with a
   bottoming reamer in a blind bore;
4. press: the plug, ground to its class, flush with the face.

Reaming stock on the diameter (common practice, as reamer makers give it):
up to 5 mm 0.1 .. 0.2 mm, above 5 up to 20 mm 0.2 .. 0.3 mm, above 20 up
to 50 mm 0.3 .. 0.5 mm.  An opened bore is left the middle of that band,
set to 0.05 mm.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .errors import BadInput
from .fits import FitLimits, fit_limits
from .kinds.base import point_length

#: (largest diameter, least stock, most stock) on the diameter, mm (common practice)
REAM_STOCK_MM = ((5.0, 0.1, 0.2), (20.0, 0.2, 0.3), (50.0, 0.3, 0.5))
#: the step an opened bore is set to before reaming, mm
OPEN_STEP_MM = 0.05


@dataclass(frozen=True)
class PlugBore:
    """The operations of one plug bore (mm, deg).

    diameter_mm : nominal bore = plug diameter, reamed to `limits.bore_class`
    depth_mm : depth of the flat bottom from the face (the web thickness when through)
    drill_mm : the undersize drill;  drill_in_series : False when the job's series has none
               small enough and the size was set from the reaming stock instead
    tip_depth_mm : the drill's travel to its tip, from the face
    pre_ream_mm : the bore before reaming (= drill_mm unless the bore is opened)
    """

    diameter_mm: float
    depth_mm: float
    through: bool
    drill_mm: float
    drill_in_series: bool
    point_angle_deg: float
    tip_depth_mm: float
    pre_ream_mm: float
    limits: FitLimits

    @property
    def ream_stock_mm(self) -> float:
        """What the reamer takes off the diameter."""
        return self.diameter_mm - self.pre_ream_mm

    @property
    def opened(self) -> bool:
        """True when the drilled bore is opened to `pre_ream_mm` before reaming."""
        return self.pre_ream_mm > self.drill_mm + 1e-9


def ream_stock_mm(diameter_mm: float) -> tuple[float, float]:
    """(least, most) stock on the diameter a reamer of this size should take, mm (common practice)."""
    for largest, least, most in REAM_STOCK_MM:
        if diameter_mm <= largest + 1e-9:
            return least, most
    raise BadInput(f"plug.diameter: {diameter_mm:g} mm is above the {REAM_STOCK_MM[-1][0]:g} mm "
                   "that plug bores are planned for")


def plug_bore(*, diameter_mm: float, length_mm: float, thickness_mm: float, drills, point_angle_deg: float,
              fit: str, where: str = "plug") -> PlugBore:
    """The operations for a plug of `diameter_mm` x `length_mm` in a web `thickness_mm` thick.

    drills : the job's drill diameters, mm (any order);  point_angle_deg : their point angle;
    fit : one of geomgen.fits.FITS, e.g. "H7/p6".
    """
    limits = fit_limits(fit, diameter_mm, f"{where}.diameter")
    least, most = ream_stock_mm(diameter_mm)
    small_enough = [d for d in drills if d <= diameter_mm - least + 1e-9]
    middle = 0.5 * (least + most)
    opened_to = round(math.floor((diameter_mm - middle) / OPEN_STEP_MM + 0.5) * OPEN_STEP_MM, 6)
    if small_enough:
        drill, in_series = max(small_enough), True
    else:
        drill, in_series = opened_to, False
    pre_ream = drill if diameter_mm - drill <= most + 1e-9 else opened_to
    through = length_mm >= thickness_mm - 1e-9
    depth = thickness_mm if through else length_mm
    point = point_length(drill, point_angle_deg)
    # blind: the tip stops at the flat bottom, so nothing is cut below the plug;
    # through: the drill travels its point length past the far face to cut full size there
    tip = depth + point if through else depth
    return PlugBore(diameter_mm=diameter_mm, depth_mm=depth, through=through, drill_mm=drill,
                    drill_in_series=in_series, point_angle_deg=point_angle_deg, tip_depth_mm=tip,
                    pre_ream_mm=pre_ream, limits=limits)
