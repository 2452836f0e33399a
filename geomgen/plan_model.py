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
    """Plan one model web (see the module docstring).  Raises Infeasible when no column reaches, alone or
    together with others."""
    from .model3d import Column
    from .planner import METHODS

    before = section.massprops() + sum((section.change(f) for f in existing), MassProps.zero())
    target = np.asarray(target, dtype=float)
    if float(np.linalg.norm(target - before.unbalance)) <= tolerance and lighten <= 0:
        return WebPlan(name, "none", (), before, before, tuple(target), tolerance,
                       f"already within tolerance: off by {np.linalg.norm(target - before.unbalance):.1f} g*mm, "
                       f"allowed {tolerance:.1f} g*mm", "none")
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
        from .planner import direction_angle

        band = radial_band(section, axis_deg=direction_angle(before.unbalance - target),
                           spread_deg=MAX_SPREAD_DEG, r_in=0.5 * section.main_bore + limits.min_wall)
    common = dict(section=section, name=name, existing=tuple(existing), limits=limits,
                  plug_material=plug_material, keep_out=tuple(keep_out))
    plans, failures, reaches = [], [], {}
    for meth, k, column in runs:
        where = f"{meth} on " + (f"column {k} (z {column.z_bot:g} .. {column.z_top:g} mm)" if k
                                 else "silhouette (rim)")
        try:
            p, exact = _on_solid(**common, column=column, method=meth, base=before, done=(), target=target,
                                 tolerance=tolerance, lighten=lighten, z_band=band if meth == "radial" else None)
        except Infeasible as exc:
            failures.append(f"{where}: {exc}")
            reaches[(meth, k)] = exc.reach
            continue
        if p.features:
            plans.append(replace(p, predicted=exact, before=before, target=tuple(target),
                                 why=p.why + f"; planned on the model's {where}, effects exact on the solid"))
    if not plans and lighten <= 0:
        for meth in methods:
            if meth == "radial" or len(section.model.columns) < 2:
                continue
            try:
                plans.append(_across_columns(**common, method=meth, before=before, target=target,
                                             tolerance=tolerance, reaches=reaches))
            except Infeasible as exc:
                failures.append(f"{meth} on several columns together: {exc}")
    if not plans:
        raise Infeasible(f"web {name}: no flat stretch of the model reaches the target, alone or with others: "
                         + "; ".join(failures))
    # the fewest features, then the least metal moved
    best = min(plans, key=lambda p: (len(p.features), abs(p.predicted.mass - p.before.mass)))
    if method == "auto":
        tried = "; ".join(f"{p.method}: {len(p.features)} operation(s), {p.predicted.mass - p.before.mass:+.2f} g"
                          for p in plans)
        best = replace(best, why=f"auto: {best.method} won with {len(best.features)} operation(s) (fewest "
                                 f"operations, then least mass changed) of the plans that reach: {tried}; "
                                 + best.why)
    return best


def _on_solid(*, section, name, existing, limits, plug_material, keep_out, column, method, base, done,
              target, tolerance, lighten=0.0, z_band=None, hint=True):
    """One column's plan held to the solid: (WebPlan, the web's exact MassProps with it).

    `base` is the web's exact properties with `existing` and `done` (features of this plan already placed
    in other columns); the column is planned as a prism from there, its walls measured in 3D against all of
    them, and its last depth solved again on the exact effects until the target is met within `tolerance`.
    Raises Infeasible (with the column's reach when the planner found one)."""
    from .job import KeepOut
    from .model3d import model_walls

    fixed = tuple(existing) + tuple(done)
    col = _column_section(section, column, base, fixed, z_band)
    aim, zones = np.asarray(target, dtype=float).copy(), tuple(keep_out)
    for _round in range(MAX_ROUNDS):
        p = plan_web(name=name, section=col, existing=fixed, target=tuple(aim), tolerance=tolerance,
                     method=method, limits=limits, plug_material=plug_material, keep_out=zones,
                     lighten=lighten, _hint=hint)
        if not p.features:
            return p, base
        try:
            model_walls(section, fixed + tuple(p.features), name=name, min_wall=limits.min_wall,
                        pin_wall=limits.pin_wall, existing=len(existing))
        except BadInput as exc:
            bad = _offender(str(exc), len(fixed), p.features)
            if bad is None:
                raise Infeasible(str(exc)) from None
            x, y = bad.tag_point()
            r = max(math.hypot(px - x, py - y) for px, py in bad.footprint().points(0.05))
            zones += (KeepOut(center=(x, y), diameter=2 * r + 2 * limits.min_wall),)
            continue
        exact = base + sum((section.change(f) for f in p.features), MassProps.zero())
        miss = np.asarray(target, dtype=float) - exact.unbalance
        if float(np.linalg.norm(miss)) <= tolerance:
            return p, exact
        aim = aim + miss
    raise Infeasible(f"no plan after {MAX_ROUNDS} rounds on the solid")


#: a column that cannot take the whole need alone is given this share of what it can reach (the rest of
#: its search's reach is room for the depth grid and the exact effects), at this tolerance of its own
SHARE_OF_REACH = 0.95
PARTIAL_TOLERANCE = 0.05
#: the most columns one plan spreads over
MAX_COLUMNS = 3


def _across_columns(*, section, name, existing, limits, plug_material, keep_out, method, before, target,
                    tolerance, reaches) -> WebPlan:
    """One kind of feature over several flat columns: the column that reaches furthest takes what it can
    (SHARE_OF_REACH of its reach, along the need), the next takes what is left, and so on, each planned
    with the others' features already on the web (walls to them kept, in plan and in 3D) and the last
    depth solved on the exact effects of all of them."""
    from .planner import machining_order

    order = sorted(((r, k) for (m, k), r in reaches.items() if m == method and r), reverse=True)
    if len(order) < 2:
        raise Infeasible("fewer than two columns can take any of it")
    columns = section.model.columns
    base, done, used, last = before, (), [], None
    for _reach, k in order[:MAX_COLUMNS]:
        need = target - base.unbalance
        if float(np.linalg.norm(need)) <= tolerance:
            break
        common = dict(section=section, name=name, existing=existing, limits=limits, plug_material=plug_material,
                      keep_out=keep_out, column=columns[k - 1], method=method, base=base, done=done, hint=False)
        try:
            p, exact = _on_solid(**common, target=target, tolerance=tolerance)
        except Infeasible as exc:
            if not exc.reach:
                continue
            take = min(SHARE_OF_REACH * exc.reach, float(np.linalg.norm(need)))
            aim = base.unbalance + need / float(np.linalg.norm(need)) * take
            try:
                p, exact = _on_solid(**common, target=aim, tolerance=max(tolerance, PARTIAL_TOLERANCE * take))
            except Infeasible:
                continue
        if p.features:
            base, done, last = exact, done + tuple(p.features), p
            used.append(k)
    if last is None or float(np.linalg.norm(target - base.unbalance)) > tolerance:
        raise Infeasible(f"together they come to {np.linalg.norm(base.unbalance - before.unbalance):.0f} g*mm "
                         f"of the {np.linalg.norm(target - before.unbalance):.0f} g*mm needed")
    names = ", ".join(f"{k} (z {columns[k - 1].z_bot:g} .. {columns[k - 1].z_top:g} mm)" for k in used)
    return replace(last, method=method, features=tuple(machining_order(done)), before=before, predicted=base,
                   target=tuple(target),
                   why=f"{method} as the job asks: {len(done)} operation(s) over the model's columns {names}, "
                       f"{abs(base.mass - before.mass):.2f} g changed; no one column reaches the target alone; "
                       "effects exact on the solid")


def _offender(message: str, first_new: int, features):
    """The new feature a wall refusal names ("feature N (kind)"), or None."""
    import re

    m = re.search(r"feature (\d+) \(", message)
    if not m:
        return None
    i = int(m.group(1)) - 1 - first_new
    return features[i] if 0 <= i < len(features) else None
