"""Walls around a web's features, measured in plan and depth (shapely only, no CAD kernel).

Each feature is its plan-view footprint swept over its z range, so the wall
between two features is sqrt(d_plan^2 + d_z^2), exact for such prisms (and
on the safe side for a drill point, counted as full diameter).  The walls
measured are: to the rim, to each bore (the crankpin bore held to
`pin_wall`), to the faces a blind feature leaves (its floor), and between
features.

Two kinds of feature meet the rules differently:
- a new (planned) feature must keep `min_wall` / `pin_wall`: short of it is
  refused (BadInput);
- an existing feature is a fact about the web on the bench: a wall of it
  short of the rules is a warning (`WallShortfall`), and the web is built as
  it is.  A wall between an existing and a new feature is the new feature's
  to keep.
What no web can be is refused for every feature: a footprint breaking
through the rim, cutting into a bore or overlapping another feature, a blind
feature breaking through the far face, and any wall thinner than
MIN_SOLID_WALL_MM (no solid can be modelled or machined so thin).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import shapely

from .errors import BadInput

#: thinnest wall the kernel is asked to make, mm: below it the cut leaves
#: sliver faces no machine can hold (our choice, not a shop rule)
MIN_SOLID_WALL_MM = 0.05
#: sagitta used to flatten footprints for the plan-view wall check, mm
CHECK_CHORD_MM = 1e-3
#: flattened rings lie within one chord of the true ones: a wall short by less than two is not refused
CHECK_SLACK_MM = 2 * CHECK_CHORD_MM


@dataclass(frozen=True)
class WallShortfall:
    """An existing feature's wall that is thinner than the job asks.

    feature : index in the web's feature list (0-based; `line` counts from 1)
    kind : the feature's kind (geomgen.kinds.KINDS)
    to : what the wall is between, e.g. "the rim", "the crankpin bore", "feature 2 (pocket)"
    wall_mm : the wall measured;  required_mm : the wall the rule asks
    rule : "min_wall" | "pin_wall"
    where : the thinnest spot, "(x, y) mm" in the web frame
    """

    feature: int
    kind: str
    to: str
    wall_mm: float
    required_mm: float
    rule: str
    where: str

    def line(self, web: str) -> str:
        return (f"web {web}: existing feature {self.feature + 1} ({self.kind}) leaves {self.wall_mm:.2f} mm "
                f"to {self.to} at {self.where}, less than the {self.required_mm:g} mm {self.rule} asks; "
                "kept as it is on the web: check that wall on the part")


def _where(geom) -> str:
    p = geom.representative_point() if not geom.is_empty else shapely.Point(math.nan, math.nan)
    return f"({p.x:.2f}, {p.y:.2f}) mm"


def existing_set(existing, count: int) -> frozenset:
    """The indices of the existing features: `existing` is a count n (the first
    n features) or a collection of 0-based indices."""
    if isinstance(existing, bool):
        raise BadInput(f"existing features: give a count or a set of indices, got {existing!r}")
    if isinstance(existing, int):
        if not 0 <= existing <= count:
            raise BadInput(f"existing features: the first {existing} of {count} features do not exist")
        return frozenset(range(existing))
    out = frozenset(int(i) for i in existing)
    bad = sorted(i for i in out if not 0 <= i < count)
    if bad:
        raise BadInput(f"existing features: index {bad[0]} is not one of the {count} features (0..{count - 1})")
    return out


def measure_walls(section, features, *, name: str, min_wall: float = 0.0, pin_wall: float = 0.0,
                  existing=0) -> tuple[float, list[WallShortfall]]:
    """(smallest wall mm, shortfalls of existing features), or BadInput.

    section : WebSection;  features : sequence of Hole/Pocket/Plug, web frame
    min_wall : mm, the wall demanded of new features (at least MIN_SOLID_WALL_MM)
    pin_wall : mm, the wall demanded around the crankpin bore, if larger
    existing : the features already on the web, a count n (the first n) or
               a collection of 0-based indices
    Raises BadInput naming the web, the feature (counted from 1) and the wall.
    """
    need_all = max(float(min_wall), MIN_SOLID_WALL_MM)
    t = float(section.thickness)
    old = existing_set(existing, len(features))
    outer = section.outer.polygon(CHECK_CHORD_MM)
    bores = [b.polygon(CHECK_CHORD_MM) for b in section.bores]
    pin = shapely.Point(*section.pin_center)
    pin_index = min(range(len(bores)), key=lambda k: bores[k].distance(pin)) if bores else -1
    smallest = math.inf
    short: list[WallShortfall] = []

    def refuse(i, what, wall, need, geom):
        raise BadInput(f"web {name}: feature {i + 1} ({features[i].kind}) {what} at {_where(geom)}; "
                       f"smallest wall {wall:.3g} mm, allowed >= {need:g} mm")

    def judge(i, *, to, wall, need, rule, geom, is_old):
        """Refuse a new feature short of `need`, warn of an old one; refuse any below the solid minimum."""
        if wall < MIN_SOLID_WALL_MM - CHECK_SLACK_MM:
            refuse(i, f"leaves too thin a wall to {to}", wall, MIN_SOLID_WALL_MM, geom)
        if wall < need - CHECK_SLACK_MM:
            if not is_old:
                refuse(i, f"comes too close to {to}", wall, need, geom)
            short.append(WallShortfall(i, features[i].kind, to, wall, need, rule, _where(geom)))

    prints, ranges = [], []
    for i, f in enumerate(features):
        fp = f.footprint().polygon(CHECK_CHORD_MM)
        z0, z1 = f.z_range(t)
        prints.append(fp)
        ranges.append((z0, z1))
        if not f.opens_rim:  # a radial hole enters through the rim by design: it keeps no wall to it
            if not outer.contains(fp):
                refuse(i, "breaks through the rim", -fp.difference(outer).area ** 0.5, need_all,
                       fp.difference(outer))
            wall = outer.exterior.distance(fp)
            judge(i, to="the rim", wall=wall, need=need_all, rule="min_wall",
                  geom=shapely.shortest_line(outer.exterior, fp), is_old=i in old)
            smallest = min(smallest, wall)
        for k, bore in enumerate(bores):
            is_pin = k == pin_index
            label = "the crankpin bore" if is_pin else f"bore {k + 1}"
            if fp.intersects(bore):
                refuse(i, f"cuts into {label}", 0.0, need_all, fp.intersection(bore))
            need = max(need_all, float(pin_wall)) if is_pin else need_all
            rule = "pin_wall" if is_pin and float(pin_wall) > need_all else "min_wall"
            wall = bore.distance(fp)
            judge(i, to=label, wall=wall, need=need, rule=rule, geom=shapely.shortest_line(bore, fp),
                  is_old=i in old)
            smallest = min(smallest, wall)
        # a blind feature must leave a floor; one reaching the far face is through
        for floor, face in ((z0, "inner"), (t - z1, "outer")):
            if floor < -1e-9:
                refuse(i, f"breaks through the {face} face", floor, need_all, fp)
            if floor > 1e-9:
                judge(i, to=f"the {face} face (its floor)", wall=floor, need=need_all, rule="min_wall", geom=fp,
                      is_old=i in old)
                smallest = min(smallest, floor)

    if len(prints) > 1:
        tree = shapely.STRtree(prints)
        # a pair further apart in plan than the smallest wall so far cannot be smaller
        reach = max(need_all, smallest if math.isfinite(smallest) else need_all)
        left, right = tree.query(prints, predicate="dwithin", distance=reach)
        for i, j in sorted(zip(left.tolist(), right.tolist())):
            if i >= j:
                continue
            d_plan = prints[i].distance(prints[j])
            (a0, a1), (b0, b1) = ranges[i], ranges[j]
            d_z = max(0.0, max(a0, b0) - min(a1, b1))
            wall = math.hypot(d_plan, d_z)
            other = f"feature {j + 1} ({features[j].kind})"
            geom = (prints[i].intersection(prints[j]) if d_plan == 0.0
                    else shapely.shortest_line(prints[i], prints[j]))
            if wall == 0.0:
                refuse(i, f"overlaps {other}", wall, need_all, geom)
            # the wall between an existing and a new feature is the new one's to keep
            judge(i, to=other, wall=wall, need=need_all, rule="min_wall", geom=geom,
                  is_old=i in old and j in old)
            smallest = min(smallest, wall)
    return smallest, short


def wall_warnings(section, features, *, name: str, min_wall: float = 0.0, pin_wall: float = 0.0,
                  existing=0) -> list[str]:
    """The walls of existing features thinner than the job asks, one plain line
    each (web, feature number counted from 1, what the wall is to, measured
    and required thickness).  Refuses (BadInput) as `measure_walls` does."""
    _, short = measure_walls(section, features, name=name, min_wall=min_wall, pin_wall=pin_wall,
                             existing=existing)
    return [s.line(name) for s in short]
