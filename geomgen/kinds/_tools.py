"""The cutting tools of the feature kinds: the one place the kinds meet the CAD kernel.

Imported only inside a kind's `tool()` / `filler()`, so the maths never loads the kernel.  Every tool is
an OpenCascade shape built through geomgen.occ and overshoots the face it enters by OVERSHOOT mm, so the cut
leaves no sliver.
"""

from __future__ import annotations

import math

from .. import occ
from ..loops import Arc, EllipseArc, Line, Loop, Spline

OVERSHOOT = 1.0


def spline_edges(seg: Spline, z: float = 0.0) -> list:
    """The spline as exact edges at height z (mm), one Bezier edge (OpenCascade Geom_BezierCurve, with
    its weights if rational) per knot span: together the very curve of the drawing's poles, knots and
    weights.  One edge per span rather than one B-spline edge of all spans: OpenCascade's volume
    integration (GProp) over a face swept from a many-span B-spline strays by some 1e-4 of the volume
    (measured on a 16-point fit spline rim), over the faces of its spans it agrees with the area
    moments to 1e-12.  A spline of one span is halved, so no edge closes on itself."""
    from OCP.Geom import Geom_BezierCurve
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array1OfPnt
    from OCP.TColStd import TColStd_Array1OfReal

    pieces = seg.bezier_pieces(at_least=2)
    edges = []
    for k, piece in enumerate(pieces):
        xy = piece[:, :2] / piece[:, 2:]
        if k == 0:
            xy[0] = seg.start
        if k == len(pieces) - 1:
            xy[-1] = seg.end
        poles = TColgp_Array1OfPnt(1, len(piece))
        for i, (x, y) in enumerate(xy, start=1):
            poles.SetValue(i, gp_Pnt(float(x), float(y), z))
        if seg.is_rational:
            weights = TColStd_Array1OfReal(1, len(piece))
            for i, w in enumerate(piece[:, 2], start=1):
                weights.SetValue(i, float(w))
            curve = Geom_BezierCurve(poles, weights)
        else:
            curve = Geom_BezierCurve(poles)
        edges.append(occ.edge_of(curve))
    return edges


def ellipse_edges(seg: EllipseArc, z: float = 0.0) -> list:
    """The elliptic arc as exact ellipse edges (OpenCascade Geom_Ellipse) of at most a quarter turn
    each, at height z (mm).  Their frame has X along the major axis and Y along the minor one (Z turned
    over for a clockwise arc), so an edge's parameter is the arc's own t.  Quarter turns: GProp over
    the face swept from one closed ellipse edge puts its centre of mass 2.6e-4 mm off (measured on a
    24 x 12 mm ellipse), over quarter-turn faces it is exact to round-off."""
    from OCP.Geom import Geom_Ellipse
    from OCP.gp import gp_Ax2, gp_Dir, gp_Elips, gp_Pnt

    a, b = math.hypot(*seg.major), math.hypot(*seg.minor)
    frame = gp_Ax2(gp_Pnt(*seg.center, z), gp_Dir(0, 0, 1 if seg.ccw else -1), gp_Dir(seg.major[0], seg.major[1], 0))
    curve = Geom_Ellipse(gp_Elips(frame, a, b))
    parts = max(1, math.ceil(seg.sweep / (0.5 * math.pi) - 1e-9))
    cuts = [seg.t0 + seg.sweep * i / parts for i in range(parts)] + [seg.t1]
    return [occ.edge_of(curve, cuts[i], cuts[i + 1]) for i in range(parts)]


def loop_wire(loop: Loop, z: float = 0.0):
    """The wire of the loop's exact segments at height z (mm): lines, circular arcs, the spans
    of splines and ellipse edges."""
    edges = []
    for seg in loop.segments:
        if isinstance(seg, Line):
            edges.append(occ.line((*seg.start, z), (*seg.end, z)))
        elif isinstance(seg, Spline):
            edges.extend(spline_edges(seg, z))
        elif isinstance(seg, EllipseArc):
            edges.extend(ellipse_edges(seg, z))
        elif isinstance(seg, Arc) and abs(seg.sweep_deg) >= 360.0 - 1e-9:
            edges.append(occ.circle(seg.radius, (*seg.center, z)))
        else:
            edges.append(occ.arc_through((*seg.start, z), (*seg.mid, z), (*seg.end, z)))
    return occ.wire(edges)


def prism(loop: Loop, z0: float, z1: float):
    """The loop extruded from z0 to z1."""
    return occ.prism(loop_wire(loop.oriented(True), z0), height=z1 - z0)


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
        return occ.cylinder(r, thickness + 2 * OVERSHOOT, (x, y, -OVERSHOOT))
    sign = -1.0 if face == "outer" else 1.0       # direction of feed
    z_face = thickness if face == "outer" else 0.0
    z_entry = z_face - sign * OVERSHOOT
    z_shoulder = z_face + sign * depth
    z_tip = z_shoulder + sign * point_length
    # profile in the plane through the hole axis, parallel to XZ
    pts = [(x, y, z_entry), (x + r, y, z_entry), (x + r, y, z_shoulder)]
    pts.append((x, y, z_tip) if point_length > 0 else (x, y, z_shoulder))
    return occ.revolved(occ.polygon(pts), axis_point=(x, y, 0.0), axis_dir=(0.0, 0.0, 1.0))


def _plug_span(*, length: float, face: str, thickness: float) -> tuple[float, float, bool]:
    through = length >= thickness - 1e-9
    reach = thickness if through else length
    z0 = 0.0 if through else (thickness - reach if face == "outer" else 0.0)
    return z0, reach, through


def plug_bore_tool(*, x: float, y: float, diameter: float, length: float, face: str, thickness: float):
    """The flat-bottomed (or through) bore a plug fills."""
    z0, reach, through = _plug_span(length=length, face=face, thickness=thickness)
    lo, hi = (-OVERSHOOT, thickness + OVERSHOOT) if through else blind_range(face, thickness, reach)
    return occ.cylinder(0.5 * diameter, hi - lo, (x, y, lo))


def plug_filler(*, x: float, y: float, diameter: float, length: float, face: str, thickness: float):
    """The plug itself: flush with its face, exactly the bore's volume inside the web."""
    z0, reach, _ = _plug_span(length=length, face=face, thickness=thickness)
    return occ.cylinder(0.5 * diameter, reach, (x, y, z0))


def radial_drill(*, angle_deg: float, z: float, start_s: float, shoulder_s: float, diameter: float,
                 point_length: float):
    """A drill on the radial line at `angle_deg` from +Y (ccw) in the plane z, fed towards the crank
    axis from `start_s` (outside the rim) to its shoulder at `shoulder_s`, point beyond (mm from the
    axis).  Built along +Z as a revolved profile (no cone apex of its own to mesh badly), then turned:
    +Z to -Y about X, then about Z by the angle, so it points at the axis."""
    r = 0.5 * diameter
    length = start_s - shoulder_s
    pts = [(0.0, 0.0, 0.0), (r, 0.0, 0.0), (r, 0.0, length), (0.0, 0.0, length + point_length)]
    origin = (0.0, 0.0, 0.0)
    body = occ.revolved(occ.polygon(pts), axis_point=origin, axis_dir=(0.0, 0.0, 1.0))
    body = occ.rotated(body, axis_point=origin, axis_dir=(1.0, 0.0, 0.0), angle_deg=90.0)
    body = occ.rotated(body, axis_point=origin, axis_dir=(0.0, 0.0, 1.0), angle_deg=angle_deg)
    a = math.radians(angle_deg)
    return occ.translated(body, (-math.sin(a) * start_s, math.cos(a) * start_s, z))
