"""Web solids: the outline extruded with its bores, the features cut in one go.

The CAD kernel (cadquery / OpenCascade) is imported lazily inside the
functions that build shapes, so importing this module costs nothing; the
feature check (`check_features`) is plain shapely and never touches it.

Frame: the contract's web frame — crank axis Z, crankpin centre on +Y,
z = 0 at the inner face and z = thickness at the outer face, mm.

Why the shapes are built the way they are:
- every hole, pocket and plug bore is one tool of ONE boolean cut: a cut per
  feature grows with the square of the count (craft.md);
- a tool that leaves a face is extended `_OVERSHOOT` mm beyond it, so the
  kernel never meets coplanar faces;
- a plug is a separate solid built from the same cylinder as its bore, so it
  fills the bore exactly and never overlaps the body.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import shapely

from .errors import BadInput, VerificationFailed
from .features import Hole, Plug, Pocket, footprint, plug_density_of, z_range
from .loops import Arc, Line, Loop

#: how far a tool reaches past the face it enters, mm (avoids coplanar faces)
_OVERSHOOT = 1.0
#: thinnest wall the kernel is asked to make, mm: below it the cut leaves
#: sliver faces no machine can hold (our choice, not a shop rule)
MIN_SOLID_WALL_MM = 0.05
#: sagitta used to flatten footprints for the plan-view wall check, mm
_CHECK_CHORD_MM = 1e-3
#: flattened rings lie within one chord of the true ones: a wall short by less than two is not refused
_CHECK_SLACK_MM = 2 * _CHECK_CHORD_MM
#: relative volume agreement demanded of a clean()ed shape (craft.md)
_CLEAN_REL = 1e-9


@dataclass(frozen=True)
class PlugSolid:
    """One heavy-metal plug: its shape, density (g/cm^3) and feature index."""

    shape: object
    density_g_cm3: float
    index: int
    name: str


@dataclass(frozen=True)
class WebSolid:
    """A web as solids in its own frame.

    body : cadquery Solid, the web material with every feature cut
    plugs : the plugs, each a separate solid filling its bore
    density_g_cm3 : the web material
    thickness : mm
    """

    name: str
    body: object
    density_g_cm3: float
    thickness: float
    plugs: tuple[PlugSolid, ...] = field(default_factory=tuple)
    features: tuple = field(default_factory=tuple)

    def solids(self) -> list[tuple[str, object, float]]:
        """(name, shape, density g/cm^3) of every solid, body first."""
        return [("body", self.body, self.density_g_cm3)] + [
            (p.name, p.shape, p.density_g_cm3) for p in self.plugs]


def _where(geom) -> str:
    p = geom.representative_point() if not geom.is_empty else shapely.Point(math.nan, math.nan)
    return f"({p.x:.2f}, {p.y:.2f}) mm"


def check_features(section, features, *, name: str, min_wall: float = 0.0, pin_wall: float = 0.0) -> float:
    """Refuse features that break through the rim, a face or a bore, or
    overlap one another; return the smallest wall found, mm.

    The check is geometric and independent of the planner: each feature is
    its plan-view footprint swept over its z range, so the wall between two
    features is sqrt(d_plan^2 + d_z^2), exact for such prisms (and on the
    safe side for a drill point, counted as full diameter).

    section : WebSection;  features : sequence of Hole/Pocket/Plug
    min_wall : mm, the wall demanded (at least MIN_SOLID_WALL_MM)
    pin_wall : mm, the wall demanded around the crankpin bore (press fit),
               if larger than min_wall
    Raises BadInput naming the web, the feature index and the wall.
    """
    limit = max(float(min_wall), MIN_SOLID_WALL_MM)
    t = float(section.thickness)
    outer = section.outer.polygon(_CHECK_CHORD_MM)
    bores = [b.polygon(_CHECK_CHORD_MM) for b in section.bores]
    pin = shapely.Point(*section.pin_center)
    pin_index = min(range(len(bores)), key=lambda k: bores[k].distance(pin)) if bores else -1
    smallest = math.inf

    def refuse(i, feature, what, wall, geom):
        raise BadInput(f"web {name}: feature {i} ({feature.kind}) {what} at {_where(geom)}; "
                       f"smallest wall {wall:.3g} mm, allowed >= {limit:g} mm")

    prints, ranges = [], []
    for i, f in enumerate(features):
        fp = footprint(f).polygon(_CHECK_CHORD_MM)
        z0, z1 = z_range(f, t)
        prints.append(fp)
        ranges.append((z0, z1))
        if not outer.contains(fp):
            refuse(i, f, "breaks through the rim", -fp.difference(outer).area ** 0.5, fp.difference(outer))
        wall = outer.exterior.distance(fp)
        if wall < limit - _CHECK_SLACK_MM:
            refuse(i, f, "comes too close to the rim", wall, shapely.shortest_line(outer.exterior, fp))
        smallest = min(smallest, wall)
        for k, bore in enumerate(bores):
            label = "the crankpin bore" if k == pin_index else f"bore {k}"
            need = max(limit, float(pin_wall)) if k == pin_index else limit
            if fp.intersects(bore):
                refuse(i, f, f"cuts into {label}", 0.0, fp.intersection(bore))
            wall = bore.distance(fp)
            if wall < need - _CHECK_SLACK_MM:
                raise BadInput(f"web {name}: feature {i} ({f.kind}) comes too close to {label} at "
                               f"{_where(shapely.shortest_line(bore, fp))}; smallest wall {wall:.3g} mm, "
                               f"allowed >= {need:g} mm")
            smallest = min(smallest, wall)
        # a blind feature must leave a floor; one reaching the far face is through
        for floor, face in ((z0, "inner"), (t - z1, "outer")):
            if floor < -1e-9:
                refuse(i, f, f"breaks through the {face} face", floor, fp)
            if 1e-9 < floor < limit:
                refuse(i, f, f"leaves too thin a floor at the {face} face", floor, fp)
            if floor > 1e-9:
                smallest = min(smallest, floor)

    if len(prints) > 1:
        tree = shapely.STRtree(prints)
        # a pair further apart in plan than the smallest wall so far cannot be smaller
        reach = max(limit, smallest if math.isfinite(smallest) else limit)
        left, right = tree.query(prints, predicate="dwithin", distance=reach)
        for i, j in zip(left, right):
            if i >= j:
                continue
            d_plan = prints[i].distance(prints[j])
            (a0, a1), (b0, b1) = ranges[i], ranges[j]
            d_z = max(0.0, max(a0, b0) - min(a1, b1))
            wall = math.hypot(d_plan, d_z)
            if wall < limit - _CHECK_SLACK_MM:
                what = "overlaps" if wall == 0.0 else "comes too close to"
                geom = (prints[i].intersection(prints[j]) if d_plan == 0.0
                        else shapely.shortest_line(prints[i], prints[j]))
                refuse(i, features[i], f"{what} feature {j} ({features[j].kind})", wall, geom)
            smallest = min(smallest, wall)
    return smallest


# --------------------------------------------------------------------------
# kernel shapes
# --------------------------------------------------------------------------

def loop_wire(loop: Loop, z: float = 0.0):
    """A cadquery Wire of the loop's exact lines and circular arcs at height z (mm)."""
    import cadquery as cq

    edges = []
    for seg in loop.segments:
        if isinstance(seg, Line):
            edges.append(cq.Edge.makeLine(cq.Vector(*seg.start, z), cq.Vector(*seg.end, z)))
        elif isinstance(seg, Arc) and abs(seg.sweep_deg) >= 360.0 - 1e-9:
            edges.append(cq.Edge.makeCircle(seg.radius, cq.Vector(*seg.center, z)))
        else:
            edges.append(cq.Edge.makeThreePointArc(cq.Vector(*seg.start, z), cq.Vector(*seg.mid, z),
                                                   cq.Vector(*seg.end, z)))
    return cq.Wire.assembleEdges(edges)


def _prism(loop: Loop, z0: float, z1: float):
    import cadquery as cq

    return cq.Solid.extrudeLinear(loop_wire(loop.oriented(True), z0), [], cq.Vector(0, 0, z1 - z0))


def _hole_tool(hole: Hole, thickness: float):
    """The drill's swept volume: a revolved profile of shank and point cone."""
    import cadquery as cq

    r = 0.5 * hole.diameter
    if hole.through:
        return cq.Solid.makeCylinder(r, thickness + 2 * _OVERSHOOT,
                                     cq.Vector(hole.x, hole.y, -_OVERSHOOT))
    sign = -1.0 if hole.face == "outer" else 1.0       # direction of feed
    z_face = thickness if hole.face == "outer" else 0.0
    z_entry = z_face - sign * _OVERSHOOT
    z_shoulder = z_face + sign * hole.depth
    z_tip = z_shoulder + sign * hole.point_length
    x, y = hole.x, hole.y
    # profile in the plane through the hole axis, parallel to XZ
    pts = [(x, y, z_entry), (x + r, y, z_entry), (x + r, y, z_shoulder)]
    pts.append((x, y, z_tip) if hole.point_length > 0 else (x, y, z_shoulder))
    profile = cq.Wire.makePolygon([cq.Vector(*p) for p in pts], close=True)
    return cq.Solid.revolve(profile, [], 360.0, cq.Vector(x, y, 0), cq.Vector(x, y, 1))


def _blind_range(feature, thickness: float, reach: float, *, overshoot: float):
    """(z0, z1) of a flat-bottomed feature `reach` deep, overshooting its face."""
    if feature.face == "outer":
        return thickness - reach, thickness + overshoot
    return -overshoot, reach


def _plug_reach(plug: Plug, thickness: float) -> tuple[float, bool]:
    through = plug.length >= thickness - 1e-9
    return (thickness if through else plug.length), through


def _tools_and_plugs(features, thickness: float):
    import cadquery as cq

    tools, plugs = [], []
    for i, f in enumerate(features):
        if isinstance(f, Hole):
            tools.append(_hole_tool(f, thickness))
        elif isinstance(f, Pocket):
            z0, z1 = _blind_range(f, thickness, f.depth, overshoot=_OVERSHOOT)
            tools.append(_prism(footprint(f).oriented(True), z0, z1))
        elif isinstance(f, Plug):
            reach, through = _plug_reach(f, thickness)
            z0, z1 = _blind_range(f, thickness, reach, overshoot=_OVERSHOOT)
            if through:
                z0, z1 = -_OVERSHOOT, thickness + _OVERSHOOT
            r = 0.5 * f.diameter
            tools.append(cq.Solid.makeCylinder(r, z1 - z0, cq.Vector(f.x, f.y, z0)))
            p0 = 0.0 if through else (thickness - reach if f.face == "outer" else 0.0)
            shape = cq.Solid.makeCylinder(r, reach, cq.Vector(f.x, f.y, p0))
            plugs.append(PlugSolid(shape, plug_density_of(f), i, f"plug-{len(plugs) + 1}"))
        else:
            raise BadInput(f"feature {i}: unknown type {type(f).__name__}; allowed: hole, pocket, plug")
    return tools, plugs


def body_shape(section):
    """The plain web: outline face with its bores as inner wires, extruded
    from z = 0 to the thickness in one step."""
    import cadquery as cq

    outer = loop_wire(section.outer.oriented(True))
    inner = [loop_wire(b.oriented(False)) for b in section.bores]
    return cq.Solid.extrudeLinear(outer, inner, cq.Vector(0, 0, float(section.thickness)))


def _one_solid(shape, *, name: str):
    """The single solid of a cut result, or VerificationFailed."""
    import cadquery as cq

    solids = shape.Solids()
    if len(solids) != 1 or not shape.isValid():
        raise VerificationFailed(f"web {name}: the kernel's cut gave {len(solids)} solid(s), "
                                 f"valid={shape.isValid()}; expected one valid solid")
    return cq.Solid(solids[0].wrapped)


def _cleaned(shape):
    """clean() (merge coplanar faces) kept only if valid and of the same volume."""
    try:
        cleaned = shape.clean()
    except Exception:  # the kernel can fail here; the raw cut is still right
        return shape
    v0, v1 = shape.Volume(), cleaned.Volume()
    if cleaned.isValid() and abs(v1 - v0) <= _CLEAN_REL * abs(v0):
        return cleaned
    return shape


def build_web(section, features=(), *, name: str, min_wall: float = 0.0, pin_wall: float = 0.0,
              clean: bool = True) -> WebSolid:
    """The web solid with its features, in the web frame.

    section : WebSection (outer Loop, bores, thickness mm, density g/cm^3)
    features : Hole / Pocket / Plug, in the web frame
    min_wall : mm, the wall demanded between features, rim, bores and faces
    pin_wall : mm, the wall demanded around the crankpin bore
    Raises BadInput for a feature that breaks out or overlaps another.
    """
    features = tuple(features)
    check_features(section, features, name=name, min_wall=min_wall, pin_wall=pin_wall)
    t = float(section.thickness)
    body = body_shape(section)
    plugs: list[PlugSolid] = []
    if features:
        tools, plugs = _tools_and_plugs(features, t)
        body = _one_solid(body.cut(*tools), name=name)
        if clean:
            body = _one_solid(_cleaned(body), name=name)
    return WebSolid(name=name, body=body, density_g_cm3=float(section.density_g_cm3), thickness=t,
                    plugs=tuple(plugs), features=features)


def crank_assembly(web_a: WebSolid, web_b: WebSolid, *, gap_mm: float):
    """Both webs in the crank frame: web a as it is, web b turned 180 deg
    about Y (so its (x, y) lands at (-x, y)) with its inner face `gap_mm`
    from web a's inner face, on the -z side.

    Returns a list of (name, shape, density g/cm^3), web a's solids first.
    """
    import cadquery as cq

    if not gap_mm >= 0:
        raise BadInput(f"crank gap: must be >= 0 mm, got {gap_mm}")
    # turn about Y: (x, y, z) -> (-x, y, -z); then move the inner face (z = 0) to -gap
    loc = cq.Location(cq.Vector(0, 0, -float(gap_mm))) * cq.Location(cq.Vector(0, 0, 0), cq.Vector(0, 1, 0), 180)
    out = [(f"{web_a.name}-{n}", s, d) for n, s, d in web_a.solids()]
    out += [(f"{web_b.name}-{n}", s.moved(loc), d) for n, s, d in web_b.solids()]
    return out
