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

Holes: rows on circles about the crank axis, spaced so neighbours keep
`min_wall`, for every drill of the series: each radius alone, and rows stacked
inward one drill plus one wall apart (so they keep `min_wall` whatever their
angles) to the last ring the region allows.  A layout's holes are taken best
lever first, up to MAX_PATTERN; the fewest holes that can reach the need win,
then the least mass taken.  The depth (the same for every blind hole, so pairs
stay mirror images) is solved exactly -- the unbalance of a hole is affine in
its depth -- then rounded to `depth_step`.
Pockets: one kidney centred on the line, in any band of radii the walls leave;
its unbalance is a sinusoid of the half-span (largest at 90 deg for the plain
annular sector), so the span of most unbalance and the span for the need are
solved, then the depth.
Plugs: like holes, flush, with their length solved.
Lightening: balanced sets of four holes, or for a pockets job a pair of kidneys
mirrored about the Y axis (`_plan_lightened`).
When nothing reaches the need the refusal names the most the search found.
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
MAX_PATTERN = 64          # holes or plugs in one pattern (all its rows)
ANGLE_STEP = 0.5          # deg, the grid hole positions are chosen on
RADIUS_STEP = 0.5         # mm
POCKET_CHORD = 0.05        # mm, flattening of kidney outlines for the containment test
MIN_POCKET_WIDTH = 4.0    # mm, the narrowest kidney planned (radial width)
LIGHTEN_PAIRS = 3         # pairs of lightening pockets tried in turn around which the correction must fit
POCKET_BANDS = 8          # radius bands tuned exactly for the need (the least mass promised first)
POCKET_REACH_BANDS = 4    # radius bands refined exactly for the reach (the most unbalance promised first)
STACK_STARTS = 6          # outermost rows a stack of rows may start from, within one pitch of the rim
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
#: what each method's search covers, as the message of an unreachable target says it
SEARCHED = {
    "holes": f"one drill a pattern, rows inward, at most {MAX_PATTERN} holes",
    "pockets": "one kidney centred on the line",
    "plugs": f"one drill a pattern, rows inward, at most {MAX_PATTERN} plugs",
    "radial": "one row of radial holes",
}


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
def direction_angle(vec) -> float:
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


@dataclass(frozen=True)
class _Row:
    """Feature centres on a circle, symmetric about the line at `axis` deg, from the line out: a centre on
    the line (angle 0) or a mirror pair at +a and -a per group.  The arrays are read-only views of the
    sampler's grid, made for many rows at once."""

    diameter: float
    radius: float
    angles: np.ndarray   # per group: its angle from the line, deg (0 for a centre on the line)
    per: np.ndarray      # per group: radius x cos(angle), the lever of each of its centres
    size: np.ndarray     # per group: how many centres (1 or 2)

    @property
    def groups(self) -> list:
        """Per group its angles relative to the line, deg: [0.0] or [a, -a]."""
        return [[a] if a == 0.0 else [a, -a] for a in self.angles.tolist()]


@dataclass(frozen=True)
class _Pattern:
    """Feature centres on one or more circles about the crank axis, symmetric about the line: groups of
    one centre on the line or a mirror pair, best lever (radius x cos of the angle, per feature) first.

    groups : ((radius, (angles relative to the line, deg)), ...)."""

    diameter: float
    groups: tuple

    outer: float = 0.0   # the outermost row's radius

    @classmethod
    def of(cls, diameter: float, rows, order=None) -> _Pattern:
        """The groups of these rows, in `order` (indices into the rows' groups one after another)."""
        items = [(row.radius, tuple(g)) for row in rows for g in row.groups]
        if order is not None:
            items = [items[i] for i in order]
        return cls(diameter, tuple(items), max(row.radius for row in rows))

    def centres(self, axis: float, count_groups: int) -> list:
        """Per group its centres (x, y), rounded to the micrometre the sheet prints."""
        out = []
        for radius, rel in self.groups[:count_groups]:
            pts = []
            for a in rel:
                x, y = _at(radius, axis + a)
                pts.append((round(x, 3) + 0.0, round(y, 3) + 0.0))  # + 0.0: no -0.0 on the sheet
            out.append(tuple(pts))
        return out


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
        #: per flattened outline, what bounds its distance from below cheaply (`_far`)
        self._near = {}
        for kind, geom, _ in self.terms:
            if kind.endswith("poly"):
                shapely.prepare(geom)
                if kind == "in_poly":     # no point of the ring is nearer the crank axis than this
                    self._near[id(geom)] = shapely.distance(shapely.Point(0.0, 0.0), geom.exterior)

    def _add_out(self, loop, margin):
        c = loop.as_circle()
        if c:
            self.terms.append(("out_circle", c[:2], c[2] + margin))
        else:
            self.terms.append(("out_poly", loop.oriented(True).polygon(self.CHORD), margin + self.CHORD))

    def __call__(self, xs, ys) -> np.ndarray:
        """The clearance at each point: exact where it is positive; where it is not, some value <= 0 (a
        point outside the region is out, by however much)."""
        xs, ys = np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)
        out = np.full(xs.shape, np.inf)
        # the circles first (exact and quick): a flattened ring then needs measuring (shapely, slow) only
        # at the points where it can be the nearest limit
        for kind, geom, value in self.terms:
            if kind == "in_circle":
                out = np.minimum(out, value - np.hypot(xs - geom[0], ys - geom[1]))
            elif kind == "out_circle":
                out = np.minimum(out, np.hypot(xs - geom[0], ys - geom[1]) - value)
        for kind, geom, value in self.terms:
            if not kind.endswith("poly"):
                continue
            inside = shapely.contains_xy(geom, xs, ys)
            # only points still in the running need a distance: the rest are out already
            running = (inside if kind == "in_poly" else ~inside) & (out > 0)
            c = np.where(running, np.inf, -1.0)
            # and of those only the ones where the ring may come nearer than what is nearest so far
            wanted = running & ~(self._far(kind, geom, xs, ys) - value > out + 1e-9)
            if wanted.any():
                dist = shapely.distance(geom.exterior, shapely.points(xs[wanted], ys[wanted]))
                c[wanted] = dist - value
            out = np.minimum(out, c)
        return out

    def _far(self, kind, geom, xs, ys) -> np.ndarray:
        """A lower bound of each point's distance to the ring, mm: for the outline, the ring's least
        distance from the crank axis less the point's (triangle inequality); for a ring the point lies
        outside of, its distance to the ring's bounding box."""
        if kind == "in_poly":
            return self._near[id(geom)] - np.hypot(xs, ys)
        x0, y0, x1, y1 = geom.bounds
        return np.hypot(np.maximum(np.maximum(x0 - xs, xs - x1), 0.0), np.maximum(np.maximum(y0 - ys, ys - y1), 0.0))

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
        #: cos of each grid angle (math.cos of math.radians, as a centre's lever is taken everywhere else)
        self._cos = np.array([math.cos(math.radians(a)) for a in self.rel.tolist()])
        self.radii = np.arange(self.r_max, 1.0, -RADIUS_STEP) if self.r_max > 1 else np.array([])
        self._rows = {}
        self._free = {}
        self.all_radii, self.all_both = self.radii, np.zeros((0, len(self.rel)))
        self.clear_both = self.all_both
        if len(self.radii):
            rr, aa = np.meshgrid(self.radii, self.rel, indexing="ij")
            self.clear_pos = self._clearance(clearance, rr, self.axis + aa)
            self.clear_neg = self._clearance(clearance, rr, self.axis - aa)
            both = np.minimum(self.clear_pos, self.clear_neg)
            self.all_radii, self.all_both = self.radii, both   # every ring, for the pocket search
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
        """For each radius, the most effective row of centres (greedy from the line outwards, each at the
        first free angle a pitch from the last), none further than `max_angle` deg from the line.

        Every ring steps at once (numpy): each step takes, per ring still going, the first grid angle at
        least a pitch on from its last centre and then on to one where the feature fits."""
        need = 0.5 * diameter + 1e-6
        chord = diameter + wall
        rel, n = self.rel, len(self.rel)
        free = self._next_free(need)
        first = free[:, 0]
        rings = np.nonzero(((first == 0) if odd else (first < n)) & (chord < 2 * self.radii))[0]
        if not len(rings):
            return
        radii = self.radii[rings].tolist()
        # the pitch as an angle, per ring (math's functions, so the grid picks are the ones a loop would make)
        spacing = np.array([math.degrees(2 * math.asin(chord / (2 * r))) for r in radii])
        last = np.zeros(len(rings)) if odd else -0.5 * spacing
        top = max_angle - 0.5 * spacing + 1e-9
        angle_at = np.append(rel, np.inf)        # index n: no free angle left on the ring
        going = np.ones(len(rings), dtype=bool)
        steps = []
        while going.any():
            k = np.searchsorted(rel, last + spacing - 1e-9, side="left")
            k = np.where(k < n, free[rings, np.minimum(k, n - 1)], n)
            going &= angle_at[k] <= top
            steps.append(np.where(going, k, -1))
            last = np.where(going, angle_at[k], last)
        picks = np.stack(steps, axis=1)            # per ring its grid indices, -1 once it has stopped
        if odd:                                    # the centre on the line first, at grid index 0
            picks = np.concatenate([np.zeros((len(rings), 1), dtype=picks.dtype), picks], axis=1)
        counts = (picks >= 0).sum(axis=1).tolist()
        angles = rel[picks]                        # the -1s past each ring's end are sliced off below
        per = np.asarray(radii)[:, None] * self._cos[picks]
        size = np.full(picks.shape[1], 2)
        if odd:
            size[0] = 1
        for arr in (angles, per, size):
            arr.flags.writeable = False
        for i, (radius, c) in enumerate(zip(radii, counts)):
            if c:
                yield _Row(diameter, radius, angles[i, :c], per[i, :c], size[:c])

    def _next_free(self, need: float) -> np.ndarray:
        """Per ring and grid angle, the index of the first angle at or after it where a feature of this
        half-width fits (clearance >= need); the grid's length where none does.  Once per half-width."""
        if need not in self._free:
            n = len(self.rel)
            idx = np.where(self.clear_both >= need, np.arange(n), n)
            self._free[need] = np.minimum.accumulate(idx[:, ::-1], axis=1)[:, ::-1]
        return self._free[need]


# ------------------------------------------------------------------ holes and plugs
def _pattern_features(pattern: _Pattern, axis: float, *, kind: str, depth: float, through_groups: int,
                      thickness: float, limits: Limits, count_groups: int, plug_material=None):
    """The first `count_groups` groups of a pattern as features: the first `through_groups` through
    (or as long as the web), the rest blind at `depth`."""
    feats = []
    for gi, points in enumerate(pattern.centres(axis, count_groups)):
        through = gi < through_groups
        for cx, cy in points:
            if kind == "hole":
                feats.append(Hole(x=cx, y=cy, diameter=pattern.diameter, depth=thickness if through else depth,
                                  point_angle=limits.point_angle, face="outer", through=through))
            else:
                named = plug_material.name in MATERIALS
                feats.append(Plug(x=cx, y=cy, diameter=pattern.diameter, length=thickness if through else depth,
                                  material=plug_material.name if named else None,
                                  density=None if named else plug_material.density, face="outer"))
    return feats


def _solve_depth(along, need_along, lo, hi, step):
    """Depth in [lo, hi] (rounded to step) whose effect along the need is nearest need_along.

    along(depth) -> the effect's component along the need, g*mm; affine in depth.
    """
    e_lo, e_hi = float(along(lo)), float(along(hi))
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
        err = abs(float(along(cand)) - need_along)
        if best is None or err < best[1]:
            best = (cand, err)
    return best[0]


def _stacks(rows_odd: dict, rows_even: dict, pitch: float) -> list:
    """Rows stacked inward: from each radius within one pitch of the outermost row, the next row at
    least `pitch` (drill + min_wall) further in, and so on to the last ring the region allows.  Each
    stack once with its first row odd (a centre on the line) and once even, the rest even, and once all
    odd.  Holes of rows a pitch apart keep min_wall whatever their angles."""
    radii = sorted(set(rows_odd) | set(rows_even), reverse=True)
    if not radii:
        return []
    out = []
    starts, last = [], math.inf
    for r in radii:                       # at most STACK_STARTS starts, spread over the first pitch
        if r <= radii[0] - pitch + 1e-9:
            break
        if r <= last - pitch / STACK_STARTS + 1e-9 or not starts:
            starts.append(r)
            last = r
    for r0 in starts:
        for first_odd, rest_odd in ((True, False), (False, False), (True, True)):
            chosen, reach_in, odd = [], r0, first_odd
            for r in radii:
                if r > reach_in + 1e-9:
                    continue
                mine, other = (rows_odd, rows_even) if odd else (rows_even, rows_odd)
                row = mine.get(r) or other.get(r)
                chosen.append(row)
                reach_in, odd = r - pitch, rest_odd
            if len(chosen) > 1:
                out.append(chosen)
    return out


def _plan_rows(*, kind, sampler, axis, need_vec, thickness, web_density, plug_density, limits, plug_material,
               blind_max, tolerance):
    """The best hole or plug pattern as a feature list (or None), and the largest reach the search
    found (g*mm along the need).

    For each drill of the series the candidates are every single row (one per radius) and rows
    stacked inward a pitch apart (`_stacks`).  A pattern's groups are taken best lever first; each
    prefix of at most MAX_PATTERN features is a layout, its reach the unit effect of the deepest
    feature allowed times its lever.  The fewest features that can reach the need win, then the
    least mass; the depth is solved on the exact effect of each feature (affine in depth).
    """
    u = np.array(need_vec) / np.linalg.norm(need_vec)
    need = float(np.linalg.norm(need_vec))
    drills = []
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
        unit = _UnitMass(kind, d, thickness=thickness, web_density=web_density, limits=limits,
                         plug_material=plug_material, lo=lo, hi=hi if has_blind else lo)
        rows_odd = {r.radius: r for r in sampler.rows(d, limits.min_wall, True, max_angle=90.0)}
        rows_even = {r.radius: r for r in sampler.rows(d, limits.min_wall, False, max_angle=90.0)}
        drills.append((d, unit, has_blind, rows_odd, rows_even))
    state = {"reach": 0.0}
    by_count: dict[int, list] = {}

    def consider(d, unit, has_blind, rows):
        if len(rows) == 1:
            per, size, order = rows[0].per, rows[0].size, None   # a row is best lever first already
        else:
            per = np.concatenate([r.per for r in rows])
            size = np.concatenate([r.size for r in rows])
            outer = np.concatenate([np.full(len(r.per), -r.radius) for r in rows])
            order = np.lexsort((outer, -per))                    # best lever first, outer row on ties
            per, size = per[order], size[order]
        good = per > 1e-9            # a centre at or past 90 deg from the line works against the need
        lever = np.cumsum(np.where(good, per * size, 0.0))
        counts = np.cumsum(size)
        keep = (counts <= MAX_PATTERN) & good
        if not keep.any():
            return
        cap = abs(unit.through if limits.through else unit.blind(unit.hi)) * lever
        state["reach"] = max(state["reach"], float(cap[keep].max()))
        hits = np.nonzero(keep & (cap >= need - tolerance))[0][:3]
        if not len(hits):
            return
        pattern = _Pattern.of(d, rows, order)
        for gi in hits:
            by_count.setdefault(int(counts[gi]), []).append(
                (need / float(lever[gi]), -pattern.outer, -d, pattern, int(gi) + 1, unit, has_blind))

    def consider_rows(d, unit, has_blind, rows):
        """`consider` of each row alone, all rows at once (the same sums, row by row: a cumulative sum
        runs along its row in order, and the zeros that pad the shorter rows come after it)."""
        if not rows:
            return
        per = np.zeros((len(rows), max(len(r.per) for r in rows)))
        size = np.zeros(per.shape, dtype=rows[0].size.dtype)
        for k, r in enumerate(rows):
            per[k, :len(r.per)] = r.per
            size[k, :len(r.size)] = r.size
        good = per > 1e-9
        lever = np.cumsum(np.where(good, per * size, 0.0), axis=1)
        counts = np.cumsum(size, axis=1)
        keep = (counts <= MAX_PATTERN) & good
        if not keep.any():
            return
        cap = abs(unit.through if limits.through else unit.blind(unit.hi)) * lever
        state["reach"] = max(state["reach"], float(cap[keep].max()))
        hit = keep & (cap >= need - tolerance)
        for k in np.flatnonzero(hit.any(axis=1)):
            pattern = _Pattern.of(d, [rows[k]])
            for gi in np.flatnonzero(hit[k])[:3]:
                by_count.setdefault(int(counts[k, gi]), []).append(
                    (need / float(lever[k, gi]), -pattern.outer, -d, pattern, int(gi) + 1, unit, has_blind))

    for d, unit, has_blind, rows_odd, rows_even in drills:
        consider_rows(d, unit, has_blind, list(rows_odd.values()) + list(rows_even.values()))
    # stacks of rows: a stack is its outer row alone until an inner group beats the outer row's next, so
    # while single rows reach the need with n features, a stack that cannot differ within n is skipped
    fewest = min(by_count, default=math.inf)
    skipped = []
    for d, unit, has_blind, rows_odd, rows_even in drills:
        for rows in _stacks(rows_odd, rows_even, d + limits.min_wall):
            first, best_in = rows[0], max(float(r.per[0]) for r in rows[1:])
            differs_at = int(first.size[first.per >= best_in].sum()) + 1
            if differs_at > fewest:
                skipped.append((d, unit, has_blind, rows))
            else:
                consider(d, unit, has_blind, rows)
    plan = _best_of_counts(by_count, kind=kind, axis=axis, u=u, need_vec=need_vec, thickness=thickness,
                           web_density=web_density, plug_density=plug_density, limits=limits,
                           plug_material=plug_material, tolerance=tolerance)
    if plan is None and skipped:
        for item in skipped:
            consider(*item)
        plan = _best_of_counts(by_count, kind=kind, axis=axis, u=u, need_vec=need_vec, thickness=thickness,
                               web_density=web_density, plug_density=plug_density, limits=limits,
                               plug_material=plug_material, tolerance=tolerance)
    return plan, state["reach"]


def _best_of_counts(by_count, *, kind, axis, u, need_vec, thickness, web_density, plug_density, limits,
                    plug_material, tolerance):
    """The fewest features that tune within tolerance; among those the least mass (CANDIDATES tried)."""
    for n_target in sorted(by_count):
        found = sorted(by_count[n_target], key=lambda f: f[:3])
        plans, seen = [], set()
        for _mass, _, _d, pattern, count_groups, unit, has_blind in found:
            key = (pattern.diameter, pattern.groups[:count_groups])
            if key in seen:
                continue
            seen.add(key)
            if len(seen) > CANDIDATES:
                break
            plan = _tune_pattern(kind=kind, pattern=pattern, axis=axis, u=u, need_vec=need_vec,
                                 thickness=thickness, limits=limits, count_groups=count_groups, unit=unit,
                                 has_blind=has_blind, plug_material=plug_material, tolerance=tolerance)
            if plan is not None:
                effect = _total(plan, thickness=thickness, web_density=web_density, plug_density=plug_density)
                miss = float(np.max(np.abs(effect.unbalance - need_vec)))
                if not _within(effect.unbalance - need_vec, tolerance):
                    continue
                # a plan that lands near the middle of the tolerance beats one at its edge:
                # the part, the plug and the scale all add their own error on top
                plans.append((miss > 0.2 * tolerance, abs(effect.mass), miss, plan))
        if plans:
            plans.sort(key=lambda p: p[:3])
            return plans[0][3]
    return None


class _UnitMass:
    """The mass change of one feature of a drill (hole or plug) through the web or blind at a depth,
    from the feature's own mass properties.  A feature at (x, y) changes the unbalance by its mass
    times (x, y); a blind one's mass is affine in its depth (cylinder plus a fixed point)."""

    def __init__(self, kind, d, *, thickness, web_density, limits, plug_material, lo, hi):
        self.lo, self.hi = lo, hi
        self._make = lambda length, through: _pattern_features(  # noqa: E731
            _Pattern(d, ((0.0, (0.0,)),)), 0.0, kind=kind, depth=length, through_groups=1 if through else 0,
            thickness=thickness, limits=limits, count_groups=1, plug_material=plug_material)
        self._mass = lambda feats: _total(feats, thickness=thickness, web_density=web_density).mass  # noqa: E731
        self.through = self._mass(self._make(thickness, True)) if limits.through else None
        self._lo = self._mass(self._make(lo, False)) if hi >= lo else None
        self._slope = ((self._mass(self._make(hi, False)) - self._lo) / (hi - lo)) if hi > lo + 1e-9 else 0.0

    def blind(self, depth):
        return self._lo + self._slope * (depth - self.lo)


def _tune_pattern(*, kind, pattern, axis, u, need_vec, thickness, limits, count_groups, unit, has_blind,
                  plug_material, tolerance):
    """The first `count_groups` groups: the first few through, the rest blind at one depth solved for the
    need (rounded to depth_step); the first split that lands within tolerance, or None."""
    need_along = float(np.dot(need_vec, u))
    centres = pattern.centres(axis, count_groups)
    sums = np.array([np.sum(points, axis=0) for points in centres], dtype=float)
    n = count_groups
    options = [0] if has_blind else []
    if limits.through:
        options += list(range(1, n + 1))
    for tg in options:
        through_part = (unit.through * sums[:tg].sum(axis=0)) if tg else np.zeros(2)
        if tg == n:
            if not _within(through_part - need_vec, tolerance):
                continue
            depth = thickness
        else:
            blind_sum = sums[tg:].sum(axis=0)
            depth = _solve_depth(lambda dp: float(np.dot(through_part + unit.blind(dp) * blind_sum, u)),  # noqa: B023
                                 need_along, unit.lo, unit.hi, limits.depth_step)
            if depth is None or not _within(through_part + unit.blind(depth) * blind_sum - need_vec, tolerance):
                continue
        return _pattern_features(pattern, axis, kind=kind, depth=depth, through_groups=tg, thickness=thickness,
                                 limits=limits, count_groups=n, plug_material=plug_material)
    return None


# ------------------------------------------------------------------ pockets
def _kidney(r_in, r_out, axis, span, depth, corner):
    return Pocket(r_inner=round(float(r_in), 3), r_outer=round(float(r_out), 3), angle_start=round(axis - span / 2, 4),
                  angle_end=round(axis + span / 2, 4), depth=depth, corner_radius=corner, face="outer")


def _pocket_bands(radii, both, rel, *, margin: float) -> list:
    """Radius bands a kidney centred on a line may span, from rings about the axis: (r1, r2, a) with
    a the half-angle (deg) about the line that every ring from r1 to r2 keeps clear by `margin` mm.
    A sector whose radii and half-angle are ring and grid values lies within half a grid cell of a grid
    point inside it, so with `margin` more than the cell's half-diagonal it fits (the clearance is a
    distance: it changes no faster than the point moves).  radii : the rings, outermost first; both :
    per ring and angle the clearance (mm) on both sides of the line; rel : the angles, deg."""
    if not len(radii):
        return []
    blocked = both < margin
    first = np.where(blocked.any(axis=1), blocked.argmax(axis=1), len(rel))
    half = np.where(first > 0, rel[np.maximum(first - 1, 0)], -1.0)
    out = []
    for i in range(len(radii)):
        if half[i] <= 0:
            continue
        run = np.minimum.accumulate(half[i:])
        r2 = math.floor(float(radii[i]) * 2 + 1e-9) / 2      # radii on the half millimetre, inside the band
        for k in np.nonzero(run > 0)[0]:
            r1 = math.ceil(float(radii[i + k]) * 2 - 1e-9) / 2
            if r2 - r1 >= MIN_POCKET_WIDTH - 1e-9 and r1 > 0:
                out.append((r1, r2, float(run[k])))
    return out


class _KidneySearch:
    """Exact fits and effects of kidneys centred on one line, at the deepest allowed depth."""

    def __init__(self, *, region, axis, u, thickness, web_density, limits, depth_max):
        self.region, self.axis, self.u = region, axis, u
        self.thickness, self.rho, self.limits, self.depth_max = thickness, web_density, limits, depth_max
        shapely.prepare(region)

    def corner(self, r1, r2):
        return round(float(min(self.limits.corner_radius, 0.5 * (r2 - r1))), 3)

    def kidney(self, r1, r2, span, depth=None):
        return _kidney(r1, r2, self.axis, span, self.depth_max if depth is None else depth, self.corner(r1, r2))

    def smallest_span(self, r1, r2):
        """Below this span (deg) the corners do not fit the kidney (kinds/pocket.py's rule, plus 0.5 deg)."""
        rc = self.corner(r1, r2)
        d_o = math.degrees(math.asin(rc / (r2 - rc))) if rc > 0 else 0.0
        d_i = math.degrees(math.asin(rc / (r1 + rc))) if rc > 0 and r1 > 0 else 0.0
        return 2.0 * max(d_o, d_i) + 0.5

    def fits(self, pocket) -> bool:
        try:
            return self.region.contains(footprint_polygon(pocket, POCKET_CHORD))
        except BadInput:  # corners that do not fit the kidney
            return False

    def effect(self, pocket) -> MassProps:
        return feature_massprops(pocket, thickness=self.thickness, web_density=self.rho)

    def along(self, pocket) -> float:
        return float(np.dot(self.effect(pocket).unbalance, self.u))

    def widest(self, r1, r2, lo, hi, iters=7):
        """The widest span (deg) in [lo, hi] that fits, lo known to fit."""
        if self.fits(self.kidney(r1, r2, hi)):
            return hi
        for _ in range(iters):
            mid = 0.5 * (lo + hi)
            lo, hi = (mid, hi) if self.fits(self.kidney(r1, r2, mid)) else (lo, mid)
        return lo

    def sinusoid(self, r1, r2, lo, hi):
        """(P, Q) with the kidney's unbalance along the line P sin(a) + Q cos(a) at the deepest depth, a
        the half-span in radians.  The kidney is the annular sector, whose first moment about the crank
        axis is (2/3) sin(a) (r2^3 - r1^3) (the centroid of an annular sector, e.g. Machinery's Handbook,
        centroids of areas), less four corners each fixed to an end line: turned with it by a, each
        corner's moment along the line is a sum of sin(a) and cos(a) terms too.  So two exact
        evaluations give the curve for every span the corners fit."""
        a, b = math.radians(0.5 * lo), math.radians(0.5 * hi)
        ma, mb = self.along(self.kidney(r1, r2, lo)), self.along(self.kidney(r1, r2, hi))
        det = math.sin(a) * math.cos(b) - math.sin(b) * math.cos(a)
        if abs(det) < 1e-9:
            return ma / max(math.sin(a), 1e-9), 0.0
        return (ma * math.cos(b) - mb * math.cos(a)) / det, (math.sin(a) * mb - math.sin(b) * ma) / det

    def best_span(self, r1, r2, lo, hi):
        """The span in [lo, hi] (deg) with the most unbalance along the line: P sin(a) + Q cos(a) is
        largest at a = atan2(P, Q), 90 deg for the plain sector, a little past it with rounded ends."""
        if hi - lo < 0.2:
            return hi
        p, q = self.sinusoid(r1, r2, lo, hi)
        return min(max(2.0 * math.degrees(math.atan2(p, q)), lo), hi)

    def span_for(self, r1, r2, lo, hi, need):
        """The smallest span in [lo, hi] (deg) whose unbalance along the line at the deepest depth is
        `need`, from the sinusoid (None if even hi falls short)."""
        if hi - lo < 0.2:
            return hi if self.along(self.kidney(r1, r2, hi)) >= need else None
        p, q = self.sinusoid(r1, r2, lo, hi)
        amp, phase = math.hypot(p, q), math.atan2(q, p)
        if amp < need:
            return None
        a = math.asin(need / amp) - phase
        span = 2.0 * math.degrees(a)
        return max(span, lo) if span <= hi + 1e-6 else None

    def refine(self, r1, r2, half, grow):
        """From a grid band that fits at 2 * half: the span of most unbalance, then the outer radius out
        and the inner one in as far as the walls let them (bisection, to 0.05 mm), then the span again.
        Returns (r1, r2, span, reach along the line at the deepest depth) or None."""
        span = 2.0 * half
        small = self.smallest_span(r1, r2)
        if span < small or not self.fits(self.kidney(r1, r2, span)):
            return None
        span = self.best_span(r1, r2, small, self.widest(r1, r2, span, min(340.0, span + 2.0 * grow)))
        for outward in (True, False):
            lo, hi = 0.0, RADIUS_STEP + 1.0
            for _ in range(8):
                mid = 0.5 * (lo + hi)
                t1, t2 = (r1, r2 + mid) if outward else (max(r1 - mid, 0.0), r2)
                lo, hi = (mid, hi) if self.fits(self.kidney(t1, t2, span)) else (lo, mid)
            step = math.floor(lo / 0.05) * 0.05
            r1, r2 = (r1, round(r2 + step, 3)) if outward else (round(max(r1 - step, 0.0), 3), r2)
        small = self.smallest_span(r1, r2)
        span = self.best_span(r1, r2, small, self.widest(r1, r2, span, min(340.0, span + 2.0 * grow)))
        pocket = self.kidney(r1, r2, span)
        if not self.fits(pocket):
            return None
        return r1, r2, span, self.along(pocket)


def _plan_pocket(*, region, sampler, axis, need_vec, thickness, web_density, limits, tolerance):
    """One kidney centred on the line (so it adds no component across it) that takes the need off, or
    None; and the most unbalance the search found for a kidney at the deepest depth allowed, g*mm.

    The search spans every band of radii the rings allow (`_pocket_bands`): the bands that promise the
    most unbalance, (2/3) sin(a) (r2^3 - r1^3) rho depth with the half-angle a at most 90 deg, are
    refined on the exact kidney (its corners, the real walls) for the reach; the bands that promise the
    need for the least mass are tuned: the span at the deepest depth, rounded up to 0.5 deg, then the
    depth solved exactly and put on the depth_step grid.  The least mass taken wins."""
    u = np.array(need_vec) / np.linalg.norm(need_vec)
    need = float(np.linalg.norm(need_vec))
    depth_max = round(math.floor(min(limits.max_depth, thickness - limits.min_wall) / limits.depth_step)
                      * limits.depth_step, 6)
    if depth_max < MIN_HOLE_DEPTH:
        return None, 0.0
    r_top = float(sampler.all_radii[0]) if len(sampler.all_radii) else 0.0
    cell = math.hypot(0.5 * RADIUS_STEP, math.radians(0.5 * ANGLE_STEP) * r_top)
    margin = cell + 2 * POCKET_CHORD + Clearance.CHORD + 0.01
    grow = math.degrees(margin / max(1.0, 0.5 * r_top)) + ANGLE_STEP   # how far past the grid a span may fit
    bands = _pocket_bands(sampler.all_radii, sampler.all_both, sampler.rel, margin=margin)
    if not bands:
        return None, 0.0
    ks = _KidneySearch(region=region, axis=axis, u=u, thickness=thickness, web_density=web_density,
                       limits=limits, depth_max=depth_max)
    arr = np.array(bands)
    r1s, r2s, halves = arr[:, 0], arr[:, 1], arr[:, 2]
    scale = (2.0 / 3.0) * (r2s ** 3 - r1s ** 3) * web_density * 1e-3 * depth_max
    promise = scale * np.sin(np.radians(np.minimum(halves, 90.0)))
    refined = []
    for i in np.argsort(-promise, kind="stable")[:POCKET_REACH_BANDS]:
        got = ks.refine(r1s[i], r2s[i], halves[i], grow)
        if got is not None:
            refined.append(got)
    reach = max((g[3] for g in refined), default=0.0)
    if reach < need - tolerance:
        return None, reach
    # the least mass for the need: a = asin(need / scale), area a (r2^2 - r1^2) (a in radians)
    with np.errstate(invalid="ignore"):
        a_need = np.arcsin(np.clip(need / scale, 0.0, 1.0))
    usable = (promise >= need) & (np.degrees(a_need) <= halves)
    mass = np.where(usable, a_need * (r2s ** 2 - r1s ** 2), np.inf)
    tries = [(r1s[i], r2s[i], 2.0 * halves[i]) for i in np.argsort(mass, kind="stable")[:POCKET_BANDS]
             if np.isfinite(mass[i])]
    # the grid keeps a band a cell inside the walls: the best few are also tried half a millimetre out
    tries += [(r1 - d1, r2 + d2, span) for r1, r2, span in tries[:POCKET_REACH_BANDS]
              for d1, d2 in ((0.0, RADIUS_STEP), (RADIUS_STEP, 0.0), (RADIUS_STEP, RADIUS_STEP)) if r1 - d1 > 0]
    tries += [(r1, r2, span) for r1, r2, span, along in refined if along >= need - tolerance]
    results = []
    for r1, r2, span_fit in tries:
        lo = ks.smallest_span(r1, r2)
        if lo > span_fit:
            continue
        hi = ks.best_span(r1, r2, lo, span_fit)
        exact = ks.span_for(r1, r2, lo, hi, need)
        if exact is None:
            continue
        span = min(math.ceil((exact - 1e-6) * 2) / 2, math.floor(span_fit * 10) / 10)
        if not ks.fits(ks.kidney(r1, r2, span)):
            continue
        depth = _solve_depth(lambda dp: ks.along(ks.kidney(r1, r2, span, dp)), need,  # noqa: B023
                             MIN_HOLE_DEPTH, depth_max, limits.depth_step)
        if depth is None:
            continue
        pocket = ks.kidney(r1, r2, span, depth)
        fx = ks.effect(pocket)
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
    before = section.massprops() + sum((section.change(f) for f in existing), MassProps.zero())
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
        return _plan_lightened(name=name, section=section, existing=existing, target=target, tolerance=tolerance,
                               method=method, limits=limits, plug_material=plug_material, keep_out=keep_out,
                               lighten=lighten, clearance=clearance, before=before, hint=_hint)
    remove_axis = direction_angle(-need_vec)
    add_axis = direction_angle(need_vec)
    blind_max = thickness - limits.min_wall
    tried, reaches = [], {}
    methods = list(METHODS) if method == "auto" else [method]
    candidates = []
    samplers = {}

    def sampler_at(axis):
        if axis not in samplers:
            samplers[axis] = _Sampler(clearance, axis)
        return samplers[axis]

    for m in methods:
        if m == "holes":
            sampler = sampler_at(remove_axis)
            feats, reach = _plan_rows(kind="hole", sampler=sampler, axis=remove_axis, need_vec=need_vec,
                                      thickness=thickness, web_density=web_density, plug_density=None,
                                      limits=limits, plug_material=None, blind_max=blind_max, tolerance=tolerance)
        elif m == "pockets":
            # the flattened kidney lies inside the true one by up to a chord: shrink the region by as much
            region = allowed_region(section=section, existing=existing, limits=limits,
                                    keep_out=keep_out).buffer(-POCKET_CHORD, quad_segs=8)
            feats, reach = _plan_pocket(region=region, sampler=sampler_at(remove_axis), axis=remove_axis,
                                        need_vec=need_vec, thickness=thickness, web_density=web_density,
                                        limits=limits, tolerance=tolerance)
        elif m == "radial":
            from .plan_radial import plan_radial

            feats, reach = plan_radial(section=section, existing=existing, need_vec=need_vec, tolerance=tolerance,
                                       limits=limits, keep_out=keep_out, axis=remove_axis)
        else:
            if plug_density is None or plug_density <= web_density:
                tried.append("plugs: the plug material is not denser than the web")
                reaches[m] = 0.0
                continue
            sampler = sampler_at(add_axis)
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
            tried.append(f"{m}: cannot reach {need:.0f} g*mm (the search found at most {reach:.0f} g*mm with "
                         f"{SEARCHED[m]})")
    if not candidates:
        _raise_infeasible(name, need, reaches, limits, methods, section, existing, target, tolerance,
                          plug_material, keep_out, _hint)
    candidates.sort(key=lambda c: (c[0], c[1], c[2]))
    count, dmass, _, chosen, feats = candidates[0]
    feats = machining_order(feats)
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


def machining_order(feats):
    """Pockets first (they need the face), then holes and plug bores by angle, clockwise from +Y, then
    radial holes (their own set-up): each kind's `order_key`."""
    return sorted(feats, key=lambda f: f.order_key())


def _raise_infeasible(name, need, reaches, limits, methods, section, existing, target, tolerance,
                      plug_material, keep_out, hint_wanted):
    parts = [f"{reaches.get(m, 0.0):.0f} g*mm with {m} ({SEARCHED[m]})" for m in methods]
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
    raise Infeasible(f"web {name}: needs {need:.0f} g*mm of correction but the search found at most "
                     f"{', '.join(parts)} within "
                     f"min_wall = {limits.min_wall:g} mm, pin_wall = {limits.pin_wall:g} mm and max_depth = "
                     f"{limits.max_depth:g} mm{plugs}{hint}", reach=max(reaches.values(), default=0.0))


# ------------------------------------------------------------------ lightening
def _plan_lightened(*, name, section, existing, target, tolerance, method, limits, plug_material, keep_out,
                    lighten, clearance, before, hint) -> WebPlan:
    """The correction and a lightening balanced on its own (no first moment, so it leaves the correction
    as it is).

    A job whose correction is `pockets` is lightened with a pair of kidney pockets
    (`_lightening_pockets`): placed around the correction, or else placed first with the correction
    around them; if no pair takes the mass or none leaves room for the correction, the lightening is
    drilled (sets of four holes) and the plan says why.  Every other method is lightened with holes,
    placed first."""
    thickness, rho = section.thickness, section.density_g_cm3

    def correction(extra):
        return plan_web(name=name, section=section, existing=tuple(existing) + tuple(extra), target=target,
                        tolerance=tolerance, method=method, limits=limits, plug_material=plug_material,
                        keep_out=keep_out, _hint=hint)

    def pocket_pairs(others):
        region = allowed_region(section=section, existing=others, limits=limits,
                                keep_out=keep_out).buffer(-POCKET_CHORD, quad_segs=8)
        room = Clearance(section=section, existing=others, limits=limits, keep_out=keep_out)
        return _lightening_pockets(section=section, clearance=room, region=region, limits=limits,
                                   lighten=lighten)

    extra = rest = None
    note = ""
    if method == "pockets":
        first = correction(())
        pairs, most = pocket_pairs(tuple(existing) + tuple(first.features))
        if pairs:
            extra, rest = pairs[0], first
        else:
            pairs, most = pocket_pairs(tuple(existing))
            for pair in pairs:
                try:
                    rest = correction(pair)
                except Infeasible:
                    continue
                extra = pair
                break
        if extra is None and pairs:
            note = "; drilled, not pocketed: no pair of kidney pockets that takes it leaves room for the correction"
        elif extra is None:
            note = f"; drilled, not pocketed: a pair of kidney pockets takes at most {most:.2f} g"
    if extra is None:
        extra = _lightening_holes(name=name, section=section, clearance=clearance, limits=limits, lighten=lighten)
        rest = correction(extra)
    taken = -_total(extra, thickness=thickness, web_density=rho).mass
    feats = machining_order(list(extra) + list(rest.features))
    if extra[0].kind == "pocket":
        how = "2 kidney pockets mirrored about the Y axis, each symmetric about the X axis,"
    else:
        how = f"{len(extra)} blind holes in balanced sets of four"
    why = (f"lightening: {how} take {taken:.2f} g off ({lighten:g} g asked) with no change to the unbalance"
           f"{note}; then {rest.why}")
    predicted = before + _total(feats, thickness=thickness, web_density=rho)
    return WebPlan(name, rest.method, tuple(feats), before, predicted, tuple(target), tolerance, why,
                   _binding(feats, section=section, limits=limits, thickness=thickness), rest.considered)


def _lightening_pockets(*, section, clearance, region, limits, lighten):
    """Pairs of kidney pockets that take `lighten` g off the web and leave its unbalance as it is, best
    first; and the most a pair can take (g, at the deepest depth).

    One kidney centred on -X (90 deg from +Y), its mirror image on +X, same radii, span and depth: each
    is symmetric about the X axis and the pair about the Y axis, so their first moment is zero.  Bands
    of radii come from the rings either side (`_pocket_bands`); the kidneys' area is linear in the span
    (the annular sector, a (r2^2 - r1^2) with a the half-span in radians, less four fixed corners) and
    their mass in the depth, so the span is solved at the deepest depth and rounded up to 0.5 deg,
    then the depth solved for the mass and put on the depth_step grid.  Preferred: the pair that sheds
    the most inertia (the outermost band) with a span of at most 90 deg each, leaving the quadrants on
    the crankpin line to the correction; then wider spans."""
    thickness, rho = section.thickness, section.density_g_cm3
    depth_max = round(math.floor(min(limits.max_depth, thickness - limits.min_wall) / limits.depth_step)
                      * limits.depth_step, 6)
    if depth_max < MIN_HOLE_DEPTH:
        return [], 0.0
    left = _Sampler(clearance, 90.0)
    r_top = float(left.all_radii[0]) if len(left.all_radii) else 0.0
    cell = math.hypot(0.5 * RADIUS_STEP, math.radians(0.5 * ANGLE_STEP) * r_top)
    margin = cell + 2 * POCKET_CHORD + Clearance.CHORD + 0.01
    # a ring's free half-angle is the lesser of the two sides: both kidneys must fit.  The rings about
    # +X are those about -X read from the other end: 270 +- a is 90 -+ (180 - a)
    both = np.minimum(left.all_both, left.all_both[:, ::-1])
    bands = _pocket_bands(left.all_radii, both, left.rel, margin=margin)
    kl = _KidneySearch(region=region, axis=90.0, u=np.array([-1.0, 0.0]), thickness=thickness,
                       web_density=rho, limits=limits, depth_max=depth_max)
    kr = _KidneySearch(region=region, axis=270.0, u=np.array([1.0, 0.0]), thickness=thickness,
                       web_density=rho, limits=limits, depth_max=depth_max)

    def mass(r1, r2, span, depth=None):
        return -2.0 * kl.effect(kl.kidney(r1, r2, span, depth)).mass

    # screened by the sector's area a (r2^2 - r1^2) less what rounds the four corners, at most
    # (1 - pi/4) rc^2 each (a square corner's fillet), then weighed exactly
    ranked, promise = [], []
    for r1, r2, half in bands:
        span_fit = 2.0 * min(half, 85.0)
        lo = kl.smallest_span(r1, r2)
        if lo > span_fit:
            continue
        rc = kl.corner(r1, r2)
        est = 2e-3 * rho * depth_max * (math.radians(0.5 * span_fit) * (r2 * r2 - r1 * r1)
                                         - 4.0 * (1.0 - 0.25 * math.pi) * rc * rc)
        promise.append((-est, r1, r2, span_fit))
        if est >= lighten:
            ranked.append((span_fit > 90.0, -(r1 * r1 + r2 * r2), r1, r2, lo, span_fit))
    promise.sort()
    most = max((mass(r1, r2, span_fit) for _, r1, r2, span_fit in promise[:POCKET_BANDS]), default=0.0)
    ranked.sort()
    pairs, tried = [], set()
    # the grid keeps a band a cell inside the walls: each band is first tried half a millimetre out
    order = [(r1 + d1, r2 + d2, span_fit) for _w, _i, r1, r2, _lo, span_fit in ranked
             for d1, d2 in ((RADIUS_STEP, RADIUS_STEP), (0.0, RADIUS_STEP), (0.0, 0.0))]
    for r1, r2, span_fit in order:
        if len(pairs) >= LIGHTEN_PAIRS or len(tried) >= 4 * POCKET_BANDS:
            break
        if (r1, r2) in tried or r2 - r1 < MIN_POCKET_WIDTH - 1e-9:
            continue
        tried.add((r1, r2))
        lo = kl.smallest_span(r1, r2)
        if lo > span_fit:
            continue
        m_lo, m_fit = mass(r1, r2, lo), mass(r1, r2, span_fit)
        exact = lo + (lighten - m_lo) / (m_fit - m_lo) * (span_fit - lo) if m_fit > m_lo else span_fit
        span = min(math.ceil(max(exact, lo) * 2 - 1e-6) / 2, span_fit)
        pocket_l, pocket_r = kl.kidney(r1, r2, span), kr.kidney(r1, r2, span)
        if not (kl.fits(pocket_l) and kr.fits(pocket_r)):
            continue
        if footprint_polygon(pocket_l).distance(footprint_polygon(pocket_r)) < limits.min_wall:
            continue
        step = limits.depth_step
        m_one = mass(r1, r2, span, 1.0)            # the pair's mass per mm of depth: a prism
        depth = round(min(max(round(lighten / m_one / step) * step, math.ceil(MIN_HOLE_DEPTH / step) * step),
                          depth_max), 6)
        if abs(mass(r1, r2, span, depth) - lighten) > 0.5 * step * m_one + 1e-9:
            continue
        pairs.append([kl.kidney(r1, r2, span, depth), kr.kidney(r1, r2, span, depth)])
    return pairs, most


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
