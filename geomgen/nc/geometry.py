"""Plane geometry the toolpaths need: the face view of a loop, an exact inward offset, rings of a region.

Face view: a feature cut from the outer face is located in the web frame itself (the web seen from its
outer face); one cut from the inner face is located after the web is turned over about its Y axis, so
x is mirrored (x_face = -x_web), exactly as operations.csv gives it (geomgen.sheet.face_view).
"""

from __future__ import annotations

import math

import numpy as np
import shapely

from ..loops import Arc, Line, Loop

#: an offset arc smaller than this is no arc a controller can take (I and J to 0.001 mm): dropped, mm
MIN_ARC_MM = 0.01


def mirror_segment(seg):
    """A segment mirrored in x (x -> -x)."""
    if isinstance(seg, Line):
        return Line((-seg.start[0], seg.start[1]), (-seg.end[0], seg.end[1]))
    return Arc((-seg.center[0], seg.center[1]), seg.radius, 180.0 - seg.start_deg, -seg.sweep_deg)


def face_loop(loop: Loop, face: str) -> Loop:
    """`loop` (web frame) as seen on `face`, counter-clockwise."""
    if face == "inner":
        loop = Loop(tuple(mirror_segment(s) for s in loop.segments))
    return loop.oriented(True)


def offset_inward(loop: Loop, d: float) -> Loop:
    """The exact inward offset by `d` of a counter-clockwise loop whose segments meet tangentially (a kidney:
    arcs, fillets and radial lines).  A convex arc (counter-clockwise) shrinks by d, a concave one grows
    by d, a line moves d to its left; an arc shrunk to nothing (a corner radius equal to d) drops out and
    its neighbours meet at its centre.  ValueError if the result does not close (a loop this offset does
    not fit, or one with sharp corners)."""
    out = []
    for s in loop.segments:
        if isinstance(s, Line):
            (x0, y0), (x1, y1) = s.start, s.end
            length = math.hypot(x1 - x0, y1 - y0)
            nx, ny = -(y1 - y0) / length, (x1 - x0) / length          # left normal: inward for ccw
            out.append(Line((x0 + d * nx, y0 + d * ny), (x1 + d * nx, y1 + d * ny)))
        else:
            r = s.radius - d if s.sweep_deg > 0 else s.radius + d
            if r >= MIN_ARC_MM:
                out.append(Arc(s.center, r, s.start_deg, s.sweep_deg))
            elif r < -1e-9:
                raise ValueError(f"an arc of radius {s.radius:g} mm cannot be offset inward by {d:g} mm")
    # lines that shrank to nothing (between two arcs that now meet) drop out; an arc too small to program
    # (a corner radius a hair above the tool's) leaves a gap of at most twice MIN_ARC_MM, bridged by a line
    out = [s for s in out if s.length > 1e-9]
    closed = []
    for k, s in enumerate(out):
        closed.append(s)
        nxt = out[(k + 1) % len(out)]
        if math.dist(s.end, nxt.start) > 1e-9:
            closed.append(Line(s.end, nxt.start))
    return Loop(tuple(closed))


def _nearest_on(seg, p) -> tuple[float, tuple[float, float]]:
    """(distance, the point of `seg` nearest to p)."""
    if isinstance(seg, Line):
        (x0, y0), (x1, y1) = seg.start, seg.end
        dx, dy = x1 - x0, y1 - y0
        t = min(1.0, max(0.0, ((p[0] - x0) * dx + (p[1] - y0) * dy) / (dx * dx + dy * dy)))
        q = (x0 + t * dx, y0 + t * dy)
    else:
        a = math.degrees(math.atan2(p[1] - seg.center[1], p[0] - seg.center[0]))
        t = ((a - seg.start_deg) % 360.0) / seg.sweep_deg if seg.sweep_deg > 0 else \
            ((seg.start_deg - a) % 360.0) / -seg.sweep_deg
        if t > 1.0:   # outside the arc's sweep: the nearer end
            t = 0.0 if math.dist(p, seg.start) <= math.dist(p, seg.end) else 1.0
        q = seg.point_at(t)
    return math.dist(p, q), q


def _split(seg, q):
    """`seg` split at its point q: (first part or None, second part or None)."""
    if math.dist(seg.start, q) < 1e-9:
        return None, seg
    if math.dist(seg.end, q) < 1e-9:
        return seg, None
    if isinstance(seg, Line):
        return Line(seg.start, q), Line(q, seg.end)
    a = math.degrees(math.atan2(q[1] - seg.center[1], q[0] - seg.center[0]))
    first = ((a - seg.start_deg) % 360.0) if seg.sweep_deg > 0 else -((seg.start_deg - a) % 360.0)
    return (Arc(seg.center, seg.radius, seg.start_deg, first),
            Arc(seg.center, seg.radius, seg.start_deg + first, seg.sweep_deg - first))


def split_loop_at(loop: Loop, p) -> list:
    """The loop's segments starting (and ending) at its point nearest to `p`."""
    segs = list(loop.segments)
    k = min(range(len(segs)), key=lambda i: _nearest_on(segs[i], p)[0])
    q = _nearest_on(segs[k], p)[1]
    first, second = _split(segs[k], q)
    head = [second] if second is not None else []
    tail = [first] if first is not None else []
    return head + segs[k + 1:] + segs[:k] + tail


def rings(region, step: float) -> list[np.ndarray]:
    """Closed rings (each (n, 2), first point repeated at the end, counter-clockwise) of `region` eroded by
    0, step, 2 step, ... until nothing is left, outermost first.  Where the erosion splits, the largest
    part is followed (a kidney does not split)."""
    out = []
    current = region
    while not current.is_empty and current.area > 1e-9:
        if current.geom_type == "MultiPolygon":
            current = max(current.geoms, key=lambda g: g.area)
        ring = shapely.orient_polygons(current).exterior
        out.append(np.asarray(ring.coords, dtype=float))
        current = current.buffer(-step, quad_segs=16)
    return out


def start_ring_at(ring: np.ndarray, point) -> np.ndarray:
    """The closed ring `ring` re-started at its point nearest to `point` (inserted as a vertex)."""
    line = shapely.LineString(ring)
    s = line.project(shapely.Point(point))
    pts = ring[:-1]
    seg_len = np.hypot(*np.diff(ring, axis=0).T)
    cum = np.concatenate([[0.0], np.cumsum(seg_len)])
    k = int(np.searchsorted(cum, s, side="right") - 1)
    k = min(max(k, 0), len(pts) - 1)
    t = 0.0 if seg_len[k] == 0 else (s - cum[k]) / seg_len[k]
    p = ring[k] + t * (ring[k + 1] - ring[k])
    rest = np.vstack([ring[k + 1:-1], ring[:k + 1]])
    return np.vstack([p, rest, p])
