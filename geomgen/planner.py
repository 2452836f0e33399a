"""The correction planner: from a web and its target to the features that reach it.

No CAD kernel here: the region a feature may use is a shapely polygon, and
every effect is the analytic mass properties of `features.feature_massprops`.

How a plan is found
-------------------
The change a web needs, ΔU = target − current (g*mm, web frame), fixes a
direction.  Material taken away at a point p changes the unbalance by −m p,
so holes and pockets go on the side opposite ΔU; heavy metal added at p
changes it by +(ρ_plug − ρ_web) V p, so plugs go on the side of ΔU.  Every
layout is symmetric about that line through the crank axis (one feature on
the line, or pairs either side), so the component across it stays zero.

The allowed region is the outline shrunk by `min_wall`, minus the crankpin
bore grown by `pin_wall`, minus other bores and existing features grown by
`min_wall`, minus keep-out zones.  A hole of diameter d fits where its centre
lies inside the region at least d/2 from its edge.

Holes: rows on a circle about the crank axis, spaced so neighbours keep
`min_wall`, for every drill of the series and every radius; the fewest holes
that can reach the need win, then the least mass taken.  The depth (the same
for every blind hole, so pairs stay mirror images) is solved exactly — the
unbalance of a hole is affine in its depth — then rounded to `depth_step`.
Pockets: one kidney centred on the line; its span and depth are solved.
Plugs: like holes, flush, with their length solved.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
import shapely

from .errors import BadInput, Infeasible
from .features import Hole, Plug, Pocket, feature_massprops, footprint_polygon
from .kinds.plug import least_plug_length
from .massprops import MassProps
from .materials import MATERIALS

MIN_HOLE_DEPTH = 1.0      # mm: a shallower hole is a spot face, not a correction (common practice)
MAX_PATTERN = 16          # holes or plugs in one pattern
ANGLE_STEP = 0.5          # deg, the grid hole positions are chosen on
RADIUS_STEP = 0.5         # mm
POCKET_CHORD = 0.05        # mm, flattening of kidney outlines for the containment test
CANDIDATES = 40           # best layouts of the fewest features that are tuned and compared
#: the most grid points (radius x angle) one search may visit: 2,000,000 is a rim 2.77 m from the axis
#: at RADIUS_STEP x ANGLE_STEP, beyond any crank web; memory and time grow with it, so past it the
#: input is wrong (a unit slip) and planning it would only exhaust the machine
MAX_GRID_POINTS = 2_000_000


@dataclass(frozen=True)
class Limits:
    """What the shop allows, in mm (from the job's [correction])."""

    min_wall: float
    pin_wall: float
    max_depth: float
    through: bool
    drills: tuple[float, ...]
    point_angle: float
    depth_step: float
    corner_radius: float = 3.0
    plug_min_length: float = 0.0      # mm, the shortest plug planned (job correction.plug_min_length)
    plug_min_length_ratio: float = 0.0  # the least plug length / diameter (correction.plug_min_length_ratio)


@dataclass(frozen=True)
class WebPlan:
    """The plan of one web (web frame)."""

    name: str
    method: str                       # holes | pockets | plugs | none
    features: tuple                   # the new features, in machining order
    before: MassProps                 # web with its existing features
    predicted: MassProps              # web after the new features
    target: tuple[float, float]       # g*mm
    tolerance: float                  # g*mm, the allowed magnitude |deviation| (a vector bound)
    why: str
    binding: str
    considered: tuple = field(default=())   # one line per method tried

    @property
    def deviation(self) -> np.ndarray:
        """The predicted unbalance minus the target, (2,) g*mm."""
        return self.predicted.unbalance - np.asarray(self.target)

    @property
    def within_tolerance(self) -> bool:
        return _within(self.deviation, self.tolerance)


def _within(deviation, tolerance: float) -> bool:
    """Unbalance is a vector (ISO 21940-11): the deviation's magnitude is held, not each component."""
    return float(np.hypot(*np.asarray(deviation, dtype=float)[:2])) <= tolerance + 1e-9


#: the planning methods `auto` chooses among (job.correction.kind also takes "auto")
METHODS = ("holes", "pockets", "plugs", "radial")


# ------------------------------------------------------------------ region
def allowed_region(*, section, existing, limits: Limits, keep_out=()) -> shapely.Geometry:
    """Where a feature's footprint may lie, as a shapely polygon (web frame, mm)."""
    chord = Clearance.CHORD  # the flattened rings lie inside the true ones by at most this
    outline = shapely.Polygon(section.polygon(chord).exterior)
    region = outline.buffer(-limits.min_wall, quad_segs=32)
    px, py = section.pin_center
    pin = shapely.Point(px, py).buffer(0.5 * section.pin_bore + max(limits.pin_wall, limits.min_wall), quad_segs=64)
    region = region.difference(pin)
    for ring in section.polygon(chord).interiors:
        bore = shapely.Polygon(ring)
        if bore.distance(shapely.Point(px, py)) < 1e-6 and bore.contains(shapely.Point(px, py)):
            continue  # the pin bore, already grown by pin_wall
        region = region.difference(bore.buffer(limits.min_wall + chord, quad_segs=32))
    for feat in existing:
        region = region.difference(footprint_polygon(feat, chord).buffer(limits.min_wall + chord, quad_segs=32))
    for zone in keep_out:
        if zone.points is not None:
            region = region.difference(shapely.Polygon(zone.points))
        else:
            region = region.difference(shapely.Point(*zone.center).buffer(0.5 * zone.diameter, quad_segs=32))
    return region


# ------------------------------------------------------------------ helpers
def _direction_angle(vec) -> float:
    """Angle of a web-frame vector, deg from +Y counter-clockwise."""
    x, y = float(vec[0]), float(vec[1])
    return math.degrees(math.atan2(-x, y))


def _at(radius: float, angle_deg: float) -> tuple[float, float]:
    a = math.radians(angle_deg)
    return (-radius * math.sin(a), radius * math.cos(a))


def _total(features, *, thickness, web_density, plug_density=None) -> MassProps:
    """The change the features make.  Every plug carries its own material or density,
    so `plug_density` (kept for the call sites' symmetry) is not used to override it."""
    return sum((feature_massprops(f, thickness=thickness, web_density=web_density) for f in features),
               MassProps.zero())


@dataclass
class _Row:
    """Feature centres on a circle, symmetric about the line at `axis` deg."""

    diameter: float
    radius: float
    angles: list              # relative to the axis, deg, in groups: [0] or [+a, -a]
    groups: list              # list of lists of relative angles

    def lever(self, count_groups: int) -> float:
        return sum(self.radius * math.cos(math.radians(a)) for g in self.groups[:count_groups] for a in g)


class Clearance:
    """How far a point may be from the nearest thing a feature must keep off, mm.

    Positive inside the allowed region: the distance to the nearest limit
    (rim less `min_wall`, crankpin bore plus `pin_wall`, other bores and
    existing features plus `min_wall`, keep-out zones).  Circles are measured
    exactly; other outlines through shapely on finely flattened rings (their
    chord error, at most `CHORD`, is taken off to stay on the safe side).
    """

    CHORD = 0.05  # mm: coarse enough to be quick, and taken off every clearance

    def __init__(self, *, section, existing, limits: Limits, keep_out=()):
        self.terms = []
        outer = section.outer
        circ = outer.as_circle()
        if circ:
            self.terms.append(("in_circle", circ[:2], circ[2] - limits.min_wall))
        else:
            poly = outer.oriented(True).polygon(self.CHORD)
            self.terms.append(("in_poly", poly, limits.min_wall + self.CHORD))
        px, py = section.pin_center
        for bore in section.bores:
            c = bore.as_circle()
            is_pin = c is not None and math.hypot(c[0] - px, c[1] - py) < 1e-6
            margin = max(limits.pin_wall, limits.min_wall) if is_pin else limits.min_wall
            self._add_out(bore, margin)
        for feat in existing:
            from .features import footprint
            self._add_out(footprint(feat), limits.min_wall)
        for zone in keep_out:
            if zone.points is not None:
                self.terms.append(("out_poly", shapely.Polygon(zone.points), 0.0))
            else:
                self.terms.append(("out_circle", zone.center, 0.5 * zone.diameter))
        for kind, geom, _ in self.terms:
            if kind.endswith("poly"):
                shapely.prepare(geom)

    def _add_out(self, loop, margin):
        c = loop.as_circle()
        if c:
            self.terms.append(("out_circle", c[:2], c[2] + margin))
        else:
            self.terms.append(("out_poly", loop.oriented(True).polygon(self.CHORD), margin + self.CHORD))

    def __call__(self, xs, ys) -> np.ndarray:
        xs, ys = np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)
        out = np.full(xs.shape, np.inf)
        for kind, geom, value in self.terms:
            if kind == "in_circle":
                c = value - np.hypot(xs - geom[0], ys - geom[1])
            elif kind == "out_circle":
                c = np.hypot(xs - geom[0], ys - geom[1]) - value
            else:
                inside = shapely.contains_xy(geom, xs, ys)
                # only points still in the running need a distance: the rest are out already
                wanted = (inside if kind == "in_poly" else ~inside) & (out > 0)
                c = np.full(xs.shape, -1.0)
                if wanted.any():
                    dist = shapely.distance(geom.exterior, shapely.points(xs[wanted], ys[wanted]))
                    c[wanted] = dist - value
            out = np.minimum(out, c)
        return out

    def r_max(self) -> float:
        kind, geom, value = self.terms[0]
        if kind == "in_circle":
            return math.hypot(*geom) + value
        b = geom.bounds
        return max(math.hypot(x, y) for x in (b[0], b[2]) for y in (b[1], b[3]))


class _Sampler:
    """Clearance on rings about the crank axis, either side of the line at `axis_deg`."""

    def __init__(self, clearance: Clearance, axis_deg: float):
        self.axis = axis_deg
        self.r_max = clearance.r_max()
        self.rel = np.arange(0.0, 180.0 + 1e-9, ANGLE_STEP)
        self.radii = np.arange(self.r_max, 1.0, -RADIUS_STEP) if self.r_max > 1 else np.array([])
        self._rows = {}
        if len(self.radii):
            rr, aa = np.meshgrid(self.radii, self.rel, indexing="ij")
            self.clear_pos = self._clearance(clearance, rr, self.axis + aa)
            self.clear_neg = self._clearance(clearance, rr, self.axis - aa)
            both = np.minimum(self.clear_pos, self.clear_neg)
            alive = np.nonzero(both.max(axis=1) > 0)[0]
            self.radii = self.radii[alive]
            self.clear_both = both[alive]

    @staticmethod
    def _clearance(clearance, rr, abs_deg):
        a = np.radians(abs_deg)
        return clearance(-rr * np.sin(a), rr * np.cos(a))

    def rows(self, diameter: float, wall: float, odd: bool, *, max_angle: float = 180.0) -> list:
        key = (diameter, wall, odd, max_angle)
        if key not in self._rows:
            self._rows[key] = list(self._make_rows(diameter, wall, odd, max_angle))
        return self._rows[key]

    def _make_rows(self, diameter, wall, odd, max_angle):
        """For each radius, the most effective row of up to MAX_PATTERN centres,
        none further than `max_angle` deg from the line."""
        need = 0.5 * diameter + 1e-6
        for i, radius in enumerate(self.radii):
            chord = diameter + wall
            if chord >= 2 * radius:
                continue
            spacing = math.degrees(2 * math.asin(chord / (2 * radius)))
            ok = self.clear_both[i] >= need
            if not ok.any():
                continue
            free = self.rel[ok]
            groups = []
            if odd:
                if not ok[0]:
                    continue
                groups.append([0.0])
                last = 0.0
            else:
                last = -0.5 * spacing
            count = 1 if odd else 0
            while count + 2 <= MAX_PATTERN:
                j = np.searchsorted(free, last + spacing - 1e-9)
                if j >= len(free):
                    break
                a = float(free[j])
                if a > max_angle - 0.5 * spacing + 1e-9:
                    break
                groups.append([a, -a])
                last, count = a, count + 2
            if groups:
                yield _Row(diameter, float(radius), [x for g in groups for x in g], groups)


# ------------------------------------------------------------------ holes and plugs
def _row_features(row: _Row, axis: float, *, kind: str, depth: float, through_groups: int, thickness: float,
                  limits: Limits, count_groups: int, plug_material=None):
    feats = []
    for gi, group in enumerate(row.groups[:count_groups]):
        for rel in group:
            x, y = _at(row.radius, axis + rel)
            x, y = round(x, 3) + 0.0, round(y, 3) + 0.0  # + 0.0: no -0.0 on the sheet
            through = gi < through_groups
            if kind == "hole":
                feats.append(Hole(x=x, y=y, diameter=row.diameter, depth=thickness if through else depth,
                                  point_angle=limits.point_angle, face="outer", through=through))
            else:
                named = plug_material.name in MATERIALS
                feats.append(Plug(x=x, y=y, diameter=row.diameter, length=thickness if through else depth,
                                  material=plug_material.name if named else None,
                                  density=None if named else plug_material.density, face="outer"))
    return feats


def _solve_depth(effect, need_along, u_axis, lo, hi, step):
    """Depth in [lo, hi] (rounded to step) whose effect along u_axis is nearest need_along.

    effect(depth) -> MassProps of the features at that depth; affine in depth.
    """
    e_lo = float(np.dot(effect(lo).unbalance, u_axis))
    e_hi = float(np.dot(effect(hi).unbalance, u_axis))
    if abs(e_hi - e_lo) < 1e-12:
        return None
    t = (need_along - e_lo) / (e_hi - e_lo)
    exact = lo + t * (hi - lo)
    if exact < lo - 1e-9 or exact > hi + 1e-9:
        return None
    lo_grid, hi_grid = math.ceil(lo / step - 1e-9) * step, math.floor(hi / step + 1e-9) * step
    best = None
    for cand in (math.floor(exact / step) * step, math.ceil(exact / step) * step):
        cand = round(min(max(cand, lo_grid), hi_grid), 6)
        err = abs(float(np.dot(effect(cand).unbalance, u_axis)) - need_along)
        if best is None or err < best[1]:
            best = (cand, err)
    return best[0]


def _plan_rows(*, kind, sampler, axis, need_vec, thickness, web_density, plug_density, limits, plug_material,
               blind_max, tolerance):
    """The best hole or plug pattern as a feature list (or None), and the largest reach found (g*mm)."""
    u = np.array(need_vec) / np.linalg.norm(need_vec)
    need = float(np.linalg.norm(need_vec))
    rho = web_density if kind == "hole" else (plug_density - web_density)
    reach = 0.0
    by_count: dict[int, list] = {}
    for d in limits.drills:
        point = 0.0 if (kind == "plug" or limits.point_angle >= 180) else \
            0.5 * d / math.tan(math.radians(0.5 * limits.point_angle))
        hi = min(blind_max - point, limits.max_depth) if kind == "hole" else blind_max
        lo = MIN_HOLE_DEPTH
        if kind == "plug":
            # a plug shorter than the job's rule is not held by its press fit: not a candidate
            lo = max(lo, least_plug_length(d, min_length=limits.plug_min_length,
                                           min_ratio=limits.plug_min_length_ratio))
            if lo > thickness + 1e-9:
                continue
        has_blind = hi >= lo
        if not has_blind and not limits.through:
            continue
        deepest = thickness if limits.through else hi
        per_mm_area = rho * 1e-3 * math.pi * 0.25 * d * d
        for odd in (True, False):
            for row in sampler.rows(d, limits.min_wall, odd=odd):
                count, lever = 0, 0.0
                for gi, group in enumerate(row.groups):
                    count += len(group)
                    lever += sum(row.radius * math.cos(math.radians(a)) for a in group)
                    cap = per_mm_area * lever * deepest
                    reach = max(reach, cap)
                    if cap >= need - tolerance and lever > 0:
                        by_count.setdefault(count, []).append((need / lever, -row.radius, d, row, gi + 1, lo, hi,
                                                               has_blind))
    for n_target in sorted(by_count):
        found = sorted(by_count[n_target], key=lambda f: (f[0], f[1], -f[2]))
        plans = []
        for _mass, _, _d, row, count_groups, lo, hi, has_blind in found[:CANDIDATES]:
            plan = _tune_row(kind=kind, row=row, axis=axis, u=u, need_vec=need_vec, thickness=thickness,
                             web_density=web_density, plug_density=plug_density, limits=limits,
                             count_groups=count_groups, lo=lo, hi=hi, has_blind=has_blind,
                             plug_material=plug_material, tolerance=tolerance)
            if plan is not None:
                effect = _total(plan, thickness=thickness, web_density=web_density, plug_density=plug_density)
                miss = float(np.max(np.abs(effect.unbalance - need_vec)))
                # a plan that lands near the middle of the tolerance beats one at its edge:
                # the part, the plug and the scale all add their own error on top
                plans.append((miss > 0.2 * tolerance, abs(effect.mass), miss, plan))
        if plans:
            plans.sort(key=lambda p: p[:3])
            return plans[0][3], reach
    return None, reach


def _tune_row(*, kind, row, axis, u, need_vec, thickness, web_density, plug_density, limits, count_groups,
              lo, hi, has_blind, plug_material, tolerance):
    need_along = float(np.dot(need_vec, u))
    n_groups = count_groups
    options = [0] if has_blind else []
    if limits.through:
        options += list(range(1, n_groups + 1))
    for through_groups in options:
        if through_groups == n_groups:
            feats = _row_features(row, axis, kind=kind, depth=thickness, through_groups=n_groups,
                                  thickness=thickness, limits=limits, count_groups=n_groups,
                                  plug_material=plug_material)
            effect = _total(feats, thickness=thickness, web_density=web_density, plug_density=plug_density)
            if _within(effect.unbalance - need_vec, tolerance):
                return feats
            continue
        if not has_blind:
            continue

        def effect(depth, tg=through_groups):
            feats = _row_features(row, axis, kind=kind, depth=depth, through_groups=tg, thickness=thickness,
                                  limits=limits, count_groups=n_groups, plug_material=plug_material)
            return _total(feats, thickness=thickness, web_density=web_density, plug_density=plug_density)

        depth = _solve_depth(effect, need_along, u, lo, hi, limits.depth_step)
        if depth is None:
            continue
        if _within(effect(depth).unbalance - need_vec, tolerance):
            return _row_features(row, axis, kind=kind, depth=depth, through_groups=through_groups,
                                 thickness=thickness, limits=limits, count_groups=n_groups,
                                 plug_material=plug_material)
    return None


# ------------------------------------------------------------------ pockets
def _kidney(r_in, r_out, axis, span, depth, corner):
    return Pocket(r_inner=round(float(r_in), 3), r_outer=round(float(r_out), 3), angle_start=round(axis - span / 2, 4),
                  angle_end=round(axis + span / 2, 4), depth=depth, corner_radius=corner, face="outer")


def _plan_pocket(*, region, r_top, axis, need_vec, thickness, web_density, limits, tolerance):
    u = np.array(need_vec) / np.linalg.norm(need_vec)
    need = float(np.linalg.norm(need_vec))
    depth_max = round(math.floor(min(limits.max_depth, thickness - limits.min_wall) / limits.depth_step)
                      * limits.depth_step, 6)
    if depth_max < MIN_HOLE_DEPTH:
        return None, 0.0
    shapely.prepare(region)
    reach, found = 0.0, []
    widths = [w for w in (4.0, 6.0, 8.0, 10.0, 12.0, 16.0, 20.0, 25.0, 30.0) if w < r_top]

    def fits(p):
        try:
            return region.contains(footprint_polygon(p, POCKET_CHORD))
        except BadInput:  # corners that do not fit the kidney
            return False

    for width in widths:
        corner = min(limits.corner_radius, 0.5 * width)
        for r_out in np.arange(math.floor(r_top * 2) / 2, width + 1.0, -0.5):
            r_in = r_out - width
            small = 2.0 * math.degrees((corner * 2 + 0.5) / r_out)
            if not fits(_kidney(r_in, r_out, axis, small, depth_max, corner)):
                continue
            lo, hi = small, 340.0
            if fits(_kidney(r_in, r_out, axis, hi, depth_max, corner)):
                span_max = hi
            else:
                for _ in range(18):
                    mid = 0.5 * (lo + hi)
                    lo, hi = (mid, hi) if fits(_kidney(r_in, r_out, axis, mid, depth_max, corner)) else (lo, mid)
                span_max = lo
            full = feature_massprops(_kidney(r_in, r_out, axis, span_max, depth_max, corner), thickness=thickness,
                                     web_density=web_density)
            along = float(np.dot(full.unbalance, u))
            reach = max(reach, along)
            if along >= need - tolerance:
                found.append((r_in, r_out, corner, small, span_max))
            break  # the outermost radius that fits is the best for this width
    if not found:
        return None, reach

    def effect(p):
        return feature_massprops(p, thickness=thickness, web_density=web_density)

    results = []
    for r_in, r_out, corner, span_lo, span_hi in found:
        lo, hi = span_lo, span_hi
        for _ in range(40):
            mid = 0.5 * (lo + hi)
            if float(np.dot(effect(_kidney(r_in, r_out, axis, mid, depth_max, corner)).unbalance, u)) < need:
                lo = mid
            else:
                hi = mid
        span = min(math.ceil(hi * 2) / 2, span_hi)
        # the lambda is called inside _solve_depth, in this pass of the loop
        depth = _solve_depth(lambda dp: effect(_kidney(r_in, r_out, axis, span, dp, corner)), need, u,  # noqa: B023
                             MIN_HOLE_DEPTH, depth_max, limits.depth_step)
        if depth is None:
            continue
        pocket = _kidney(r_in, r_out, axis, span, depth, corner)
        fx = effect(pocket)
        if _within(fx.unbalance - need_vec, tolerance):
            results.append((-fx.mass, abs(fx.inertia_z), pocket))
    if not results:
        return None, reach
    results.sort(key=lambda r: (r[0], r[1]))
    return [results[0][2]], reach


# ------------------------------------------------------------------ the web
def _binding(features, *, section, limits, thickness) -> str:
    """Which constraint is nearest to binding, measured on the footprints."""
    if not features:
        return "none"
    polys = [footprint_polygon(f) for f in features]
    outline = shapely.Polygon(section.polygon().exterior)
    px, py = section.pin_center
    pin = shapely.Point(px, py).buffer(0.5 * section.pin_bore, quad_segs=64)
    margins = {
        "min_wall to the rim": min((outline.exterior.distance(p) for f, p in zip(features, polys)
                                    if not f.opens_rim), default=math.inf) - limits.min_wall,
        "pin_wall around the crankpin bore": min(pin.distance(p) for p in polys) - max(limits.pin_wall,
                                                                                     limits.min_wall),
    }
    if len(polys) > 1:
        margins["min_wall between features"] = min(polys[i].distance(polys[j]) for i in range(len(polys))
                                                   for j in range(i + 1, len(polys))) - limits.min_wall
    depths = [d for d in (f.face_depth(thickness) for f in features) if d is not None]
    if depths:
        margins["max_depth"] = min(limits.max_depth, thickness - limits.min_wall) - max(depths)
    name, margin = min(margins.items(), key=lambda kv: kv[1])
    return f"{name} (margin {margin:.2f} mm)"


def plan_web(*, name: str, section, existing, target, tolerance: float, method: str, limits: Limits,
             plug_material=None, keep_out=(), lighten: float = 0.0, _hint: bool = True) -> WebPlan:
    """Plan one web.  method: holes | pockets | plugs | radial | auto.  Raises Infeasible."""
    web_density = section.density_g_cm3
    plug_density = plug_material.density if plug_material is not None else None
    thickness = section.thickness
    through_note = ""
    if limits.through and thickness > limits.max_depth + 1e-9:
        # a through hole is as deep as the web: no deeper than the machine may go
        limits = replace(limits, through=False)
        through_note = (f"; no through holes: the {thickness:g} mm web is deeper than max_depth "
                        f"{limits.max_depth:g} mm")
    before = section.massprops() + _total(existing, thickness=thickness, web_density=web_density,
                                          plug_density=plug_density)
    need_vec = np.asarray(target, dtype=float) - before.unbalance
    need = float(np.linalg.norm(need_vec))
    if need <= tolerance and lighten <= 0:
        return WebPlan(name, "none", (), before, before, tuple(target), tolerance,
                       f"already within tolerance: off by {need:.1f} g*mm, allowed {tolerance:.1f} g*mm", "none")
    clearance = Clearance(section=section, existing=existing, limits=limits, keep_out=keep_out)
    # Guard against a runaway: every method searches rings RADIUS_STEP apart out to the rim, each at
    # ANGLE_STEP, so the work is known before it starts.  Refuse it rather than hang.
    grid = int(clearance.r_max() / RADIUS_STEP) * int(round(180.0 / ANGLE_STEP) + 1)
    if grid > MAX_GRID_POINTS:
        raise BadInput(f"web {name}: the rim lies {clearance.r_max():.6g} mm from the crank axis, a search of "
                       f"{grid} grid points (more than {MAX_GRID_POINTS}); no crank web is that large: check "
                       "the outline's unit (outline_units) or the web's diameter")
    if lighten > 0:
        # first the lightening, balanced on its own; then the correction around it
        extra = _lightening_holes(name=name, section=section, clearance=clearance, limits=limits, lighten=lighten)
        rest = plan_web(name=name, section=section, existing=tuple(existing) + tuple(extra), target=target,
                        tolerance=tolerance, method=method, limits=limits, plug_material=plug_material,
                        keep_out=keep_out, _hint=_hint)
        taken = -_total(extra, thickness=thickness, web_density=web_density).mass
        feats = _machining_order(list(extra) + list(rest.features))
        why = (f"lightening: {len(extra)} blind holes in balanced sets of four take {taken:.2f} g off "
               f"({lighten:g} g asked) with no change to the unbalance; then {rest.why}")
        return WebPlan(name, rest.method, tuple(feats), before, rest.predicted, tuple(target), tolerance, why,
                       _binding(feats, section=section, limits=limits, thickness=thickness),
                       rest.considered)
    remove_axis = _direction_angle(-need_vec)
    add_axis = _direction_angle(need_vec)
    blind_max = thickness - limits.min_wall
    tried, reaches = [], {}
    methods = list(METHODS) if method == "auto" else [method]
    candidates = []
    for m in methods:
        if m == "holes":
            sampler = _Sampler(clearance, remove_axis)
            feats, reach = _plan_rows(kind="hole", sampler=sampler, axis=remove_axis, need_vec=need_vec,
                                      thickness=thickness, web_density=web_density, plug_density=None,
                                      limits=limits, plug_material=None, blind_max=blind_max, tolerance=tolerance)
        elif m == "pockets":
            # the flattened kidney lies inside the true one by up to a chord: shrink the region by as much
            region = allowed_region(section=section, existing=existing, limits=limits,
                                    keep_out=keep_out).buffer(-POCKET_CHORD, quad_segs=8)
            feats, reach = _plan_pocket(region=region, r_top=clearance.r_max(), axis=remove_axis,
                                        need_vec=need_vec,
                                        thickness=thickness, web_density=web_density, limits=limits,
                                        tolerance=tolerance)
        elif m == "radial":
            from .plan_radial import plan_radial

            feats, reach = plan_radial(section=section, existing=existing, need_vec=need_vec, tolerance=tolerance,
                                       limits=limits, keep_out=keep_out, axis=remove_axis)
        else:
            if plug_density is None or plug_density <= web_density:
                tried.append("plugs: the plug material is not denser than the web")
                reaches[m] = 0.0
                continue
            sampler = _Sampler(clearance, add_axis)
            feats, reach = _plan_rows(kind="plug", sampler=sampler, axis=add_axis, need_vec=need_vec,
                                      thickness=thickness, web_density=web_density, plug_density=plug_density,
                                      limits=replace(limits, point_angle=180.0),
                                      plug_material=plug_material, blind_max=min(blind_max, limits.max_depth),
                                      tolerance=tolerance)
        reaches[m] = reach
        if feats:
            effect = _total(feats, thickness=thickness, web_density=web_density, plug_density=plug_density)
            candidates.append((len(feats), abs(effect.mass), abs(effect.inertia_z), m, feats))
            tried.append(f"{m}: {len(feats)} operation(s), {effect.mass:+.2f} g, reach {reach:.0f} g*mm")
        else:
            tried.append(f"{m}: cannot reach {need:.0f} g*mm (at most {reach:.0f} g*mm)")
    if not candidates:
        _raise_infeasible(name, need, reaches, limits, methods, section, existing, target, tolerance,
                          plug_material, keep_out, _hint)
    candidates.sort(key=lambda c: (c[0], c[1], c[2]))
    count, dmass, _, chosen, feats = candidates[0]
    feats = _machining_order(feats)
    predicted = before + _total(feats, thickness=thickness, web_density=web_density, plug_density=plug_density)
    side = "pin side" if (chosen != "plugs") == (need_vec[1] < 0) else "counterweight side"
    if method == "auto":
        why = (f"auto: {chosen} won with {count} operation(s) and {dmass:.2f} g changed "
               f"(fewest operations, then least mass and inertia change); " + "; ".join(tried))
    else:
        why = f"{chosen} as the job asks: {count} operation(s) on the {side}, {dmass:.2f} g changed"
    why += through_note
    binding = _binding(feats, section=section, limits=limits, thickness=thickness)
    return WebPlan(name, chosen, tuple(feats), before, predicted, tuple(target), tolerance, why, binding,
                   tuple(tried))


def _machining_order(feats):
    """Pockets first (they need the face), then holes and plug bores by angle, clockwise from +Y, then
    radial holes (their own set-up): each kind's `order_key`."""
    return sorted(feats, key=lambda f: f.order_key())


def _raise_infeasible(name, need, reaches, limits, methods, section, existing, target, tolerance,
                      plug_material, keep_out, hint_wanted):
    parts = [f"{m} give at most {reaches.get(m, 0.0):.0f} g*mm" for m in methods]
    hint = ""
    if len(methods) == 1 and hint_wanted:
        others = [m for m in METHODS if m != methods[0]]
        for other in others:
            try:
                plan_web(name=name, section=section, existing=existing, target=target, tolerance=tolerance,
                         method=other, limits=limits, plug_material=plug_material, keep_out=keep_out,
                         _hint=False)
                hint = f"; {other} would reach it"
                break
            except Infeasible:
                continue
    plugs = (f", plugs no shorter than correction.plug_min_length = {limits.plug_min_length:g} mm and "
             f"correction.plug_min_length_ratio = {limits.plug_min_length_ratio:g} diameters"
             if "plugs" in methods else "")
    raise Infeasible(f"web {name}: needs {need:.0f} g*mm of correction but {', '.join(parts)} within "
                     f"min_wall = {limits.min_wall:g} mm, pin_wall = {limits.pin_wall:g} mm and max_depth = "
                     f"{limits.max_depth:g} mm{plugs}{hint}")


# ------------------------------------------------------------------ lightening
def _lightening_holes(*, name, section, clearance, limits, lighten):
    """Holes that take `lighten` g off the web and leave its unbalance as it is.

    Sets of four equal blind holes at one radius, at angles a, -a, 180 - a and
    180 + a from +Y: symmetric about both axes, so their first moment is zero.
    The fewest holes win, then the largest radius (the most inertia shed); the
    common depth is solved exactly for the mass, then rounded to depth_step.
    """
    thickness, rho = section.thickness, section.density_g_cm3
    sampler = _Sampler(clearance, 90.0)   # the line through the crank axis along X
    for sets in (1, 2, 3):
        choices = []
        for d in limits.drills:
            point = 0.5 * d / math.tan(math.radians(0.5 * limits.point_angle)) if limits.point_angle < 180 else 0.0
            hi = min(limits.max_depth, thickness - limits.min_wall - point)
            if hi < MIN_HOLE_DEPTH:
                continue
            for row in sampler.rows(d, limits.min_wall, odd=False, max_angle=90.0):
                if len(row.groups) < sets:
                    continue
                groups = row.groups[:sets]

                def holes(depth, row=row, groups=groups, d=d):
                    out = []
                    for g in groups:
                        a = g[0]
                        for ang in (90.0 + a, 90.0 - a, -90.0 + a, -90.0 - a):
                            x, y = _at(row.radius, ang)
                            out.append(Hole(x=round(x, 3) + 0.0, y=round(y, 3) + 0.0, diameter=d, depth=depth,
                                            point_angle=limits.point_angle, face="outer"))
                    return out

                def mass(depth, holes=holes):
                    return -_total(holes(depth), thickness=thickness, web_density=rho).mass

                # screen with the closed form (cylinder to the shoulder plus the point's cone), then
                # solve with the features' own mass properties
                area = math.pi * 0.25 * d * d * rho * 1e-3 * 4 * sets
                if not (area * (MIN_HOLE_DEPTH + point / 3) <= lighten * (1 + 1e-9)
                        and lighten <= area * (hi + point / 3) * (1 + 1e-9)):
                    continue
                m_lo, m_hi = mass(MIN_HOLE_DEPTH), mass(hi)
                if not (m_lo <= lighten <= m_hi):
                    continue
                exact = MIN_HOLE_DEPTH + (lighten - m_lo) / (m_hi - m_lo) * (hi - MIN_HOLE_DEPTH)
                step = limits.depth_step
                grid = [min(max(c, math.ceil(MIN_HOLE_DEPTH / step) * step), math.floor(hi / step) * step)
                        for c in (math.floor(exact / step) * step, math.ceil(exact / step) * step)]
                depth = round(min(grid, key=lambda g: abs(mass(round(g, 6)) - lighten)), 6)
                choices.append((-row.radius, -d, holes(depth)))
                break  # the outermost row for this drill
        if choices:
            choices.sort(key=lambda c: (c[0], c[1]))
            return choices[0][2]
    raise Infeasible(f"web {name}: cannot take {lighten:g} g off in balanced sets of four blind holes within "
                     f"min_wall = {limits.min_wall:g} mm and max_depth = {limits.max_depth:g} mm")
