"""Planning radial rim holes: drilled from the rim towards the crank axis, in the web's mid-plane
(on a web given as a model: midway between the heights where the web has material all along the holes' way,
`radial_z_band`).

The layout is symmetric about the line of the material to take away (so it adds no x component): one
hole on that line for an odd count, pairs either side of it, at an angular pitch that keeps `min_wall`
between neighbours at their tips.  The drill is the largest of the job's series that keeps `min_wall`
to both faces (to both heights of that band); every hole goes to one depth, solved on the exact effect
(kinds/radial_maths.py) and put on the `depth_step` grid.  How deep a hole may go is found on the plan
view: its footprint (tip included) must keep `pin_wall` from the crankpin bore and `min_wall` from the
other bores, the existing features and the keep-out zones.  No CAD kernel.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely

from .errors import BadInput
from .kinds import Radial
from .massprops import MassProps

#: the most holes tried in one layout, and how far either side of the line they may spread, deg
MAX_HOLES = 9
MAX_SPREAD_DEG = 80.0
#: depth search resolution, mm (a tenth of the usual depth step; the depth is then put on the step grid)
DEPTH_TOL = 0.005
#: the largest drill sizes tried (a radial hole wants the biggest drill the faces allow; smaller ones only
#: lose reach and add holes)
DRILLS_TRIED = 3


@dataclass(frozen=True)
class RadialLayout:
    features: tuple[Radial, ...]
    effect: MassProps


def _forbidden(*, section, existing, limits, keep_out) -> shapely.Geometry:
    """Where no radial hole may reach, web frame (the walls grown onto what they guard)."""
    parts = []
    px, py = section.pin_center
    for bore in section.bores:
        c = bore.as_circle()
        is_pin = c is not None and math.hypot(c[0] - px, c[1] - py) < 1e-6
        margin = max(limits.pin_wall, limits.min_wall) if is_pin else limits.min_wall
        parts.append(bore.polygon(0.01).buffer(margin, quad_segs=32))
    for f in existing:
        parts.append(f.footprint_polygon(0.01).buffer(limits.min_wall, quad_segs=16))
    for zone in keep_out:
        if zone.points is not None:
            parts.append(shapely.Polygon(zone.points))
        else:
            parts.append(shapely.Point(*zone.center).buffer(0.5 * zone.diameter, quad_segs=32))
    return shapely.unary_union(parts) if parts else shapely.Polygon()


def _hole(angle: float, diameter: float, depth: float, z: float, section, point_angle: float) -> Radial:
    return Radial(angle=round(angle, 4), diameter=diameter, depth=round(depth, 6), z=z,
                  point_angle=point_angle).on(section)


def _fits(angle, diameter, depth, z, section, point_angle, forbidden) -> bool:
    """The hole at this depth reaches full diameter inside the rim and keeps its walls."""
    try:
        hole = _hole(angle, diameter, depth, z, section, point_angle)
    except BadInput:  # a depth the rim cannot take (not full diameter yet, or no rim on that line)
        return False
    return not hole.footprint_polygon(0.01).intersects(forbidden)


def _deepest(angle, diameter, z, section, forbidden, point_angle, lo, hi) -> float | None:
    """The deepest depth in [lo, hi] at which the hole keeps its walls (None if even `lo` does not)."""
    if not _fits(angle, diameter, lo, z, section, point_angle, forbidden):
        return None
    if _fits(angle, diameter, hi, z, section, point_angle, forbidden):
        return hi
    while hi - lo > DEPTH_TOL:
        mid = 0.5 * (lo + hi)
        if _fits(angle, diameter, mid, z, section, point_angle, forbidden):
            lo = mid
        else:
            hi = mid
    return lo


def _angles(axis: float, count: int, pitch: float) -> list[float]:
    offsets = [(k - 0.5 * (count - 1)) * pitch for k in range(count)]
    return [axis + o for o in offsets]


def plan_radial(*, section, existing, need_vec, tolerance: float, limits, keep_out=(),
                axis: float) -> tuple[list[Radial] | None, float]:
    """Radial holes that take `need_vec` (g*mm, the change wanted) off within `tolerance`, or None; and the
    largest reach found, g*mm.  axis : deg from +Y, the direction of the material to remove."""
    t, rho = section.thickness, section.density_g_cm3
    # on a web whose faces stand at several heights (a model), the holes go at the middle of the heights
    # found all along their way in; on a prism that is the mid-plane
    z_lo, z_hi = section.radial_z_band()
    z = 0.5 * (z_lo + z_hi)
    drills = [d for d in sorted(limits.drills, reverse=True)
              if d <= z_hi - z_lo - 2 * limits.min_wall + 1e-9][:DRILLS_TRIED]
    u = np.asarray(need_vec, dtype=float) / float(np.linalg.norm(need_vec))
    need = float(np.linalg.norm(need_vec))
    forbidden = _forbidden(section=section, existing=existing, limits=limits, keep_out=keep_out)
    rim = section.rim_radius_min
    reach = 0.0
    deepest: dict[tuple[float, float], float | None] = {}

    def deepest_at(angle, d, lo, hi):
        key = (d, round(angle, 6))
        if key not in deepest:
            deepest[key] = _deepest(angle, d, z, section, forbidden, limits.point_angle, lo, hi)
        return deepest[key]

    for d in drills:
        # full diameter inside the rim, plus a step: the least depth a radial hole is planned at
        sag = rim - math.sqrt(max(rim * rim - 0.25 * d * d, 0.0))
        lo = sag + max(limits.depth_step, 0.5)
        hi = rim - 0.5 * section.main_bore - limits.min_wall
        if hi <= lo:
            continue
        for count in range(1, MAX_HOLES + 1):
            deepest_one = deepest_at(axis, d, lo, hi)
            if deepest_one is None and count == 1:
                break
            # neighbours keep min_wall at the tips of holes as deep as one alone could go
            r_tip = max(rim - (deepest_one or lo) - 0.5 * d, d)
            pitch = math.degrees(2.0 * math.asin(min(1.0, (d + limits.min_wall) / (2.0 * r_tip))))
            angles = _angles(axis, count, pitch)
            if count > 1 and max(abs(a - axis) for a in angles) > MAX_SPREAD_DEG:
                break
            depth_max = min((deepest_at(a, d, lo, hi) or 0.0) for a in angles)
            if depth_max < lo:
                continue

            def effect(depth, angles=angles, d=d):
                return sum((_hole(a, d, depth, z, section, limits.point_angle).massprops(
                    thickness=t, web_density=rho) for a in angles), MassProps.zero())

            along_max = float(np.dot(effect(depth_max).unbalance, u))
            reach = max(reach, along_max)
            if along_max < need - tolerance:
                continue
            depth = _solve_monotone(effect, u, need, lo, depth_max, limits.depth_step)
            if depth is None:
                continue
            feats = [_hole(a, d, depth, z, section, limits.point_angle) for a in angles]
            got = effect(depth).unbalance
            if float(np.hypot(*(got - np.asarray(need_vec)))) <= tolerance + 1e-9:
                return feats, reach
    return None, reach


def _solve_monotone(effect, u, need, lo, hi, step) -> float | None:
    """The depth on the `step` grid in [lo, hi] whose effect along u is nearest `need` (the effect grows
    with depth: bisection, then the nearer grid neighbour)."""
    a, b = lo, hi
    if float(np.dot(effect(a).unbalance, u)) > need:
        return None
    while b - a > DEPTH_TOL:
        mid = 0.5 * (a + b)
        if float(np.dot(effect(mid).unbalance, u)) < need:
            a = mid
        else:
            b = mid
    best = None
    for cand in (math.floor(a / step) * step, math.ceil(a / step) * step):
        cand = round(min(max(cand, math.ceil(lo / step - 1e-9) * step), math.floor(hi / step + 1e-9) * step), 6)
        if not lo - 1e-9 <= cand <= hi + 1e-9:
            continue
        err = abs(float(np.dot(effect(cand).unbalance, u)) - need)
        if best is None or err < best[1]:
            best = (cand, err)
    return None if best is None else best[0]
