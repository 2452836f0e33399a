"""Planning on a web given as a 3D model (geomgen.model3d).

The model's flat columns (a planar top face over a planar bottom face) are where a feature can enter with
a known depth.  Each column is planned as a prism of its own thickness (`ColumnSection`: the planner's
clearance, layouts and depth solving, closed forms exact there, because both faces are flat over the
feature), from the model's exact starting point.  Every candidate column's plan is then held to the solid:

1. its walls are measured on the model in 3D (model3d.model_walls); a feature that would break into a
   recess or come closer than min_wall to a face the column does not show (a step, a chamfer, a recess on
   the far face) is kept out and the column planned again;
2. its effect is the exact mass properties of what each tool removes from the solid (boolean common); if
   the exact sum misses the target by more than the closed forms did, the target handed to the column is
   moved by the difference and the column planned again (the last depth solved on the exact effects).

The plan with the fewest features, then the least metal, wins; its predicted properties are the exact ones.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from .errors import BadInput, Infeasible
from .massprops import MassProps
from .planner import WebPlan, plan_web
from .section import WebSection

#: how many times a column is planned again after a wall or an effect measured on the solid
MAX_ROUNDS = 4


@dataclass(frozen=True)
class ColumnSection(WebSection):
    """One flat column of a model, as the planner sees a web: its region, its own thickness, the model's
    exact starting point (`base`), and (for features given in the model frame) the shift of its floor."""

    base: MassProps | None = None
    z_bot: float = 0.0
    fixed: tuple = ()              # features already on the web: their exact changes are in `base`
    z_band: tuple | None = None    # radial holes: the heights with material all along their way in

    def radial_z_band(self) -> tuple[float, float]:
        return self.z_band if self.z_band is not None else super().radial_z_band()

    def massprops(self) -> MassProps:
        return self.base

    def change(self, feature, plug_density: float | None = None) -> MassProps:
        if feature in self.fixed:
            return MassProps.zero()
        return super().change(feature, plug_density).transformed(offset=(0.0, 0.0, self.z_bot))


def _column_section(section, column, base: MassProps, existing, z_band=None) -> ColumnSection:
    bores = tuple(column.holes) + tuple(b for b in section.bores if not _among(b, column.holes))
    return ColumnSection(outer=column.outer, bores=bores, pin_center=section.pin_center, pin_bore=section.pin_bore,
                         thickness=column.thickness, density_g_cm3=section.density_g_cm3,
                         main_bore=section.main_bore, base=base, z_bot=column.z_bot, fixed=tuple(existing),
                         z_band=z_band)


def _among(loop, loops) -> bool:
    c = loop.as_circle()
    return c is not None and any(o.as_circle() is not None and np.allclose(o.as_circle(), c, atol=1e-6)
                                 for o in loops)


def plan_model_web(*, name: str, section, existing, target, tolerance: float, method: str, limits,
                   plug_material=None, keep_out=(), lighten: float = 0.0) -> WebPlan:
    """Plan one model web (see the module docstring).  Raises Infeasible when no column reaches."""
    from .job import KeepOut
    from .model3d import model_walls

    before = section.massprops() + sum((section.change(f) for f in existing), MassProps.zero())
    target = np.asarray(target, dtype=float)
    if float(np.linalg.norm(target - before.unbalance)) <= tolerance and lighten <= 0:
        return WebPlan(name, "none", (), before, before, tuple(target), tolerance,
                       f"already within tolerance: off by {np.linalg.norm(target - before.unbalance):.1f} g*mm, "
                       f"allowed {tolerance:.1f} g*mm", "none")
    from .model3d import Column
    from .planner import METHODS

    methods = list(METHODS) if method == "auto" else [method]
    # a radial hole enters through the rim: it is planned on the whole silhouette and the model's height;
    # every other kind on each flat column
    whole = Column(section.outer, (), 0.0, section.thickness)
    runs = [(m, k, c) for m in methods for k, c in
            ([(0, whole)] if m == "radial" else enumerate(section.model.columns, 1))]
    band = None
    if "radial" in methods:
        from .model3d import radial_band
        from .plan_radial import MAX_SPREAD_DEG
        from .planner import _direction_angle

        band = radial_band(section, axis_deg=_direction_angle(before.unbalance - target),
                           spread_deg=MAX_SPREAD_DEG, r_in=0.5 * section.main_bore + limits.min_wall)
    plans, failures = [], []
    for meth, k, column in runs:
        col = _column_section(section, column, before, existing, band if meth == "radial" else None)
        where = (f"column {k} (z {column.z_bot:g} .. {column.z_top:g} mm)" if k else "silhouette (rim)")
        where = f"{meth} on {where}"
        aim, zones = target.copy(), tuple(keep_out)
        for _round in range(MAX_ROUNDS):
            try:
                p = plan_web(name=name, section=col, existing=existing, target=tuple(aim), tolerance=tolerance,
                             method=meth, limits=limits, plug_material=plug_material, keep_out=zones,
                             lighten=lighten)
            except Infeasible as exc:
                failures.append(f"{where}: {exc}")
                break
            if not p.features:
                break
            try:
                model_walls(section, tuple(existing) + tuple(p.features), name=name, min_wall=limits.min_wall,
                            pin_wall=limits.pin_wall, existing=len(existing))
            except BadInput as exc:
                bad = _offender(str(exc), len(existing), p.features)
                if bad is None:
                    failures.append(f"{where}: {exc}")
                    break
                x, y = bad.tag_point()
                r = max(math.hypot(px - x, py - y) for px, py in bad.footprint().points(0.05))
                zones += (KeepOut(center=(x, y), diameter=2 * r + 2 * limits.min_wall),)
                continue
            exact = before + sum((section.change(f) for f in p.features), MassProps.zero())
            miss = target - exact.unbalance
            if float(np.linalg.norm(miss)) <= tolerance:
                plans.append(replace(p, predicted=exact, before=before, target=tuple(target),
                                     why=p.why + f"; planned on the model's {where}, effects exact on the solid"))
                break
            aim = aim + miss
        else:
            failures.append(f"{where}: no plan after {MAX_ROUNDS} rounds on the solid")
    if not plans:
        raise Infeasible(f"web {name}: no flat stretch of the model reaches the target: " + "; ".join(failures))
    # the fewest features, then the least metal moved
    return min(plans, key=lambda p: (len(p.features), abs(p.predicted.mass - p.before.mass)))


def _offender(message: str, first_new: int, features):
    """The new feature a wall refusal names ("feature N (kind)"), or None."""
    import re

    m = re.search(r"feature (\d+) \(", message)
    if not m:
        return None
    i = int(m.group(1)) - 1 - first_new
    return features[i] if 0 <= i < len(features) else None
