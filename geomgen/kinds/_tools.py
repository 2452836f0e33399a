"""The cutting tools of the feature kinds: the one place the kinds meet the CAD kernel.

Imported only inside a kind's `tool()` / `filler()`, so the maths never loads cadquery.  Every tool
overshoots the face it enters by OVERSHOOT mm, so the cut leaves no sliver.
"""

from __future__ import annotations

import math

import cadquery as cq

from ..loops import Arc, Line, Loop

OVERSHOOT = 1.0


def loop_wire(loop: Loop, z: float = 0.0):
    """A cadquery Wire of the loop's exact lines and circular arcs at height z (mm)."""
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


def prism(loop: Loop, z0: float, z1: float):
    """The loop extruded from z0 to z1."""
    return cq.Solid.extrudeLinear(loop_wire(loop.oriented(True), z0), [], cq.Vector(0, 0, z1 - z0))


def blind_range(face: str, thickness: float, reach: float) -> tuple[float, float]:
    """(z0, z1) of a flat-bottomed cut `reach` deep from `face`, overshooting that face."""
    if face == "outer":
        return thickness - reach, thickness + OVERSHOOT
    return -OVERSHOOT, reach


def drill(*, x: float, y: float, diameter: float, depth: float, point_length: float, face: str,
          through: bool, thickness: float):
    """The drill's swept volume: a revolved profile of shank and point cone (or a through cylinder)."""
    r = 0.5 * diameter
    if through:
        return cq.Solid.makeCylinder(r, thickness + 2 * OVERSHOOT, cq.Vector(x, y, -OVERSHOOT))
    sign = -1.0 if face == "outer" else 1.0       # direction of feed
    z_face = thickness if face == "outer" else 0.0
    z_entry = z_face - sign * OVERSHOOT
    z_shoulder = z_face + sign * depth
    z_tip = z_shoulder + sign * point_length
    # profile in the plane through the hole axis, parallel to XZ
    pts = [(x, y, z_entry), (x + r, y, z_entry), (x + r, y, z_shoulder)]
    pts.append((x, y, z_tip) if point_length > 0 else (x, y, z_shoulder))
    profile = cq.Wire.makePolygon([cq.Vector(*p) for p in pts], close=True)
    return cq.Solid.revolve(profile, [], 360.0, cq.Vector(x, y, 0), cq.Vector(x, y, 1))


def _plug_span(*, length: float, face: str, thickness: float) -> tuple[float, float, bool]:
    through = length >= thickness - 1e-9
    reach = thickness if through else length
    z0 = 0.0 if through else (thickness - reach if face == "outer" else 0.0)
    return z0, reach, through


def plug_bore_tool(*, x: float, y: float, diameter: float, length: float, face: str, thickness: float):
    """The flat-bottomed (or through) bore a plug fills."""
    z0, reach, through = _plug_span(length=length, face=face, thickness=thickness)
    lo, hi = (-OVERSHOOT, thickness + OVERSHOOT) if through else blind_range(face, thickness, reach)
    return cq.Solid.makeCylinder(0.5 * diameter, hi - lo, cq.Vector(x, y, lo))


def plug_filler(*, x: float, y: float, diameter: float, length: float, face: str, thickness: float):
    """The plug itself: flush with its face, exactly the bore's volume inside the web."""
    z0, reach, _ = _plug_span(length=length, face=face, thickness=thickness)
    return cq.Solid.makeCylinder(0.5 * diameter, reach, cq.Vector(x, y, z0))


def radial_drill(*, angle_deg: float, z: float, start_s: float, shoulder_s: float, diameter: float,
                 point_length: float):
    """A drill on the radial line at `angle_deg` from +Y (ccw) in the plane z, fed towards the crank
    axis from `start_s` (outside the rim) to its shoulder at `shoulder_s`, point beyond (mm from the
    axis).  Built along +Z as a revolved profile (no cone apex of its own to mesh badly), then turned:
    +Z to -Y about X, then about Z by the angle, so it points at the axis."""
    r = 0.5 * diameter
    length = start_s - shoulder_s
    pts = [(0.0, 0.0, 0.0), (r, 0.0, 0.0), (r, 0.0, length), (0.0, 0.0, length + point_length)]
    profile = cq.Wire.makePolygon([cq.Vector(*p) for p in pts], close=True)
    body = cq.Solid.revolve(profile, [], 360.0, cq.Vector(0, 0, 0), cq.Vector(0, 0, 1))
    body = body.rotate(cq.Vector(0, 0, 0), cq.Vector(1, 0, 0), 90.0)
    body = body.rotate(cq.Vector(0, 0, 0), cq.Vector(0, 0, 1), angle_deg)
    a = math.radians(angle_deg)
    return body.translate(cq.Vector(-math.sin(a) * start_s, math.cos(a) * start_s, z))
