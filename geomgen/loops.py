"""Planar closed loops of exact segments (lines and circular arcs) and their
area moments.

A web outline, a bore, a hole footprint and a kidney pocket are all closed
loops of straight lines and circular arcs.  Their area moments are computed
exactly, segment by segment, by Green's theorem; nothing is flattened unless
a shapely polygon is asked for.  Every figure is in the plane of the web
face: points (x, y) in mm, area mm^2, first moments mm^3, second moments
mm^4, all about the origin (the crank axis).

Green's theorem for a region D with counter-clockwise boundary, in the one
form used for every segment (the forms must agree segment by segment,
because they differ by exact differentials that only vanish over a closed
loop):

    A    =  ∮ x dy              Sx  = ∫x dA  =  ∮ x²/2 dy
    Sy   = -∮ y²/2 dx           Sxx = ∫x² dA =  ∮ x³/3 dy
    Syy  = -∮ y³/3 dx           Sxy = ∫xy dA =  ∮ x²y/2 dy

A loop traversed clockwise gives the same figures with the opposite sign.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import shapely

from .massprops import MassProps

Point = tuple[float, float]

#: closure tolerance of a loop, relative to its size (max(1 mm, extent))
CLOSE_REL = 1e-9


def _pt(p) -> Point:
    return (float(p[0]), float(p[1]))


# --------------------------------------------------------------------------
# area moments
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class AreaMoments:
    """Raw area moments of a plane region about the origin.

    area : mm^2 (signed: positive for a counter-clockwise boundary)
    sx, sy : mm^3, ∫x dA and ∫y dA
    sxx, sxy, syy : mm^4, ∫x² dA, ∫xy dA, ∫y² dA
    """

    area: float = 0.0
    sx: float = 0.0
    sy: float = 0.0
    sxx: float = 0.0
    sxy: float = 0.0
    syy: float = 0.0

    def _as_array(self) -> np.ndarray:
        return np.array([self.area, self.sx, self.sy, self.sxx, self.sxy, self.syy])

    @classmethod
    def _from_array(cls, values) -> AreaMoments:
        return cls(*(float(v) for v in values))

    def __add__(self, other: AreaMoments) -> AreaMoments:
        if not isinstance(other, AreaMoments):
            return NotImplemented
        return AreaMoments._from_array(self._as_array() + other._as_array())

    def __radd__(self, other):
        if other == 0:  # lets sum() start from 0
            return self
        return NotImplemented

    def __sub__(self, other: AreaMoments) -> AreaMoments:
        if not isinstance(other, AreaMoments):
            return NotImplemented
        return AreaMoments._from_array(self._as_array() - other._as_array())

    def __neg__(self) -> AreaMoments:
        return AreaMoments._from_array(-self._as_array())

    def scaled(self, factor: float) -> AreaMoments:
        return AreaMoments._from_array(self._as_array() * factor)

    @property
    def centroid(self) -> Point:
        """(x, y) mm; NaN for zero area."""
        if self.area == 0.0:
            return (math.nan, math.nan)
        return (self.sx / self.area, self.sy / self.area)

    @property
    def polar(self) -> float:
        """∫(x² + y²) dA about the origin, mm^4."""
        return self.sxx + self.syy


def prism(moments: AreaMoments, *, z0: float, z1: float, density_g_cm3: float) -> MassProps:
    """The uniform solid of section `moments` swept straight along Z from z0 to z1 (mm).

    Integrated directly (no parallel-axis step): for a prism,
    ∫f(x, y) g(z) dV = ∫f dA · ∫g dz.  A negative area (clockwise section)
    or z1 < z0 gives a negative body, as removal should.
    """
    rho = density_g_cm3 * 1e-3  # g/mm^3
    h = z1 - z0
    iz1 = 0.5 * (z1 * z1 - z0 * z0)          # ∫z dz
    iz2 = (z1 ** 3 - z0 ** 3) / 3.0          # ∫z² dz
    a = moments
    volume = a.area * h
    first = np.array([a.sx * h, a.sy * h, a.area * iz1])
    second = np.array([
        [a.sxx * h, a.sxy * h, a.sx * iz1],
        [a.sxy * h, a.syy * h, a.sy * iz1],
        [a.sx * iz1, a.sy * iz1, a.area * iz2],
    ])
    return MassProps(rho * volume, rho * first, rho * second, volume)


def _line_terms(x0, y0, x1, y1) -> np.ndarray:
    """Green's-theorem terms of straight segments (arrays of the same shape).

    Returns (6,) or (6, n): area, sx, sy, sxx, sxy, syy contributions.
    Exact: the integrands are polynomials of degree <= 3 along the segment.
    """
    dx = x1 - x0
    dy = y1 - y0
    area = dy * (x0 + x1) / 2.0
    sx = dy * (x0 * x0 + x0 * x1 + x1 * x1) / 6.0
    sy = -dx * (y0 * y0 + y0 * y1 + y1 * y1) / 6.0
    sxx = dy * (x0 + x1) * (x0 * x0 + x1 * x1) / 12.0
    syy = -dx * (y0 + y1) * (y0 * y0 + y1 * y1) / 12.0
    # ∫0^1 x² y du for x, y linear in u
    x2y = (x0 * x0 * (3 * y0 + y1) + 2 * x0 * x1 * (y0 + y1) + x1 * x1 * (y0 + 3 * y1)) / 12.0
    sxy = 0.5 * dy * x2y
    return np.array([area, sx, sy, sxx, sxy, syy])


def _arc_terms(a: float, b: float, r: float, t0: float, t1: float) -> np.ndarray:
    """Green's-theorem terms of the arc x = a + r cos t, y = b + r sin t, t0 -> t1 (rad).

    Closed forms from the antiderivatives of cos^k t sin^j t.
    """
    def F(t):
        c, s = math.cos(t), math.sin(t)
        s2, s4 = math.sin(2 * t), math.sin(4 * t)
        return {
            "c": s,
            "s": -c,
            "cc": t / 2 + s2 / 4,
            "ss": t / 2 - s2 / 4,
            "ccc": s - s ** 3 / 3,
            "sss": -c + c ** 3 / 3,
            "cccc": 3 * t / 8 + s2 / 4 + s4 / 32,
            "ssss": 3 * t / 8 - s2 / 4 + s4 / 32,
            "sc": s * s / 2,
            "ccs": -c ** 3 / 3,
            "cccs": -c ** 4 / 4,
        }

    f1, f0 = F(t1), F(t0)
    I = {k: f1[k] - f0[k] for k in f1}
    area = a * r * I["c"] + r * r * I["cc"]
    sx = 0.5 * r * (a * a * I["c"] + 2 * a * r * I["cc"] + r * r * I["ccc"])
    sy = 0.5 * r * (b * b * I["s"] + 2 * b * r * I["ss"] + r * r * I["sss"])
    sxx = r * (a ** 3 * I["c"] + 3 * a * a * r * I["cc"] + 3 * a * r * r * I["ccc"] + r ** 3 * I["cccc"]) / 3.0
    syy = r * (b ** 3 * I["s"] + 3 * b * b * r * I["ss"] + 3 * b * r * r * I["sss"] + r ** 3 * I["ssss"]) / 3.0
    sxy = 0.5 * r * (a * a * b * I["c"] + a * a * r * I["sc"] + 2 * a * b * r * I["cc"]
                     + 2 * a * r * r * I["ccs"] + b * r * r * I["ccc"] + r ** 3 * I["cccs"])
    return np.array([area, sx, sy, sxx, sxy, syy])


# --------------------------------------------------------------------------
# segments
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class Line:
    """A straight segment from `start` to `end`, (x, y) mm."""

    start: Point
    end: Point

    def __post_init__(self):
        object.__setattr__(self, "start", _pt(self.start))
        object.__setattr__(self, "end", _pt(self.end))

    @property
    def length(self) -> float:
        return math.dist(self.start, self.end)

    def point_at(self, t: float) -> Point:
        """The point a share t (0 .. 1) along the segment."""
        (x0, y0), (x1, y1) = self.start, self.end
        return (x0 + t * (x1 - x0), y0 + t * (y1 - y0))

    def reversed(self) -> Line:
        return Line(self.end, self.start)

    def flatten(self, max_chord_mm: float = 0.005) -> np.ndarray:
        """(2, 2) float, mm: the two end points (a line is its own flattening)."""
        return np.array([self.start, self.end], dtype=float)

    def _terms(self) -> np.ndarray:
        (x0, y0), (x1, y1) = self.start, self.end
        return _line_terms(x0, y0, x1, y1)


@dataclass(frozen=True)
class Arc:
    """A circular arc.

    center : (x, y) mm;  radius : mm (> 0)
    start_deg : angle of the start point, deg from +X, counter-clockwise
    sweep_deg : signed sweep, deg (+ = counter-clockwise), |sweep| <= 360
    """

    center: Point
    radius: float
    start_deg: float
    sweep_deg: float

    def __post_init__(self):
        object.__setattr__(self, "center", _pt(self.center))
        object.__setattr__(self, "radius", float(self.radius))
        object.__setattr__(self, "start_deg", float(self.start_deg))
        object.__setattr__(self, "sweep_deg", float(self.sweep_deg))
        if not self.radius > 0:
            raise ValueError(f"arc radius must be > 0, got {self.radius}")
        if not (0 < abs(self.sweep_deg) <= 360.0 + 1e-9):
            raise ValueError(f"arc sweep must be 0 < |sweep| <= 360 deg, got {self.sweep_deg}")

    @property
    def end_deg(self) -> float:
        return self.start_deg + self.sweep_deg

    def point_at(self, t: float) -> Point:
        """The point a share t (0 .. 1) along the arc."""
        ang = math.radians(self.start_deg + t * self.sweep_deg)
        cx, cy = self.center
        return (cx + self.radius * math.cos(ang), cy + self.radius * math.sin(ang))

    @property
    def start(self) -> Point:
        return self.point_at(0.0)

    @property
    def end(self) -> Point:
        return self.point_at(1.0)

    @property
    def mid(self) -> Point:
        """The middle point (for three-point arc builders)."""
        return self.point_at(0.5)

    @property
    def length(self) -> float:
        return self.radius * math.radians(abs(self.sweep_deg))

    def reversed(self) -> Arc:
        return Arc(self.center, self.radius, self.end_deg, -self.sweep_deg)

    def segments_for(self, max_chord_mm: float) -> int:
        """Chords needed so that no chord lies further than `max_chord_mm`
        (the sagitta, mm) from the arc; at least 4 per full turn."""
        tol = max(float(max_chord_mm), 1e-12)
        step = math.pi if tol >= self.radius else 2.0 * math.acos(1.0 - tol / self.radius)
        sweep = math.radians(abs(self.sweep_deg))
        return max(1, math.ceil(sweep / step), math.ceil(4 * sweep / (2 * math.pi)))

    def flatten(self, max_chord_mm: float = 0.005) -> np.ndarray:
        """(n, 2) float, mm: points on the arc from start to end, both
        included, with chordal deviation (sagitta) at most `max_chord_mm`."""
        n = self.segments_for(max_chord_mm)
        ang = np.radians(self.start_deg + np.linspace(0.0, 1.0, n + 1) * self.sweep_deg)
        cx, cy = self.center
        pts = np.column_stack([cx + self.radius * np.cos(ang), cy + self.radius * np.sin(ang)])
        # the ends exactly as `start` / `end` report them, so chains close
        pts[0] = self.start
        pts[-1] = self.end
        return pts

    def _terms(self) -> np.ndarray:
        t0 = math.radians(self.start_deg)
        t1 = math.radians(self.start_deg + self.sweep_deg)
        return _arc_terms(self.center[0], self.center[1], self.radius, t0, t1)


Segment = Line | Arc


# --------------------------------------------------------------------------
# loops
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class Loop:
    """A closed chain of Line / Arc segments: the end of each is the start of
    the next (and the last ends at the first's start) within CLOSE_REL of
    the loop's size.  Either winding is accepted; `oriented` picks one.
    """

    segments: tuple

    def __post_init__(self):
        segs = tuple(self.segments)
        object.__setattr__(self, "segments", segs)
        if not segs:
            raise ValueError("a loop needs at least one segment")
        for s in segs:
            if not isinstance(s, (Line, Arc)):
                raise TypeError(f"loop segments must be Line or Arc, got {type(s).__name__}")
        ends = np.array([p for s in segs for p in (s.start, s.end)])
        size = max(1.0, float(np.abs(ends).max()))
        tol = CLOSE_REL * size
        for i, s in enumerate(segs):
            nxt = segs[(i + 1) % len(segs)]
            gap = math.dist(s.end, nxt.start)
            if gap > tol:
                raise ValueError(f"loop not closed: segment {i} ends at {s.end}, "
                                 f"segment {(i + 1) % len(segs)} starts at {nxt.start} (gap {gap:.3g} mm)")

    @classmethod
    def from_points(cls, points) -> Loop:
        """A loop of straight lines through (n, 2) points (mm); the last
        point joins the first (a repeated closing point is dropped)."""
        pts = np.asarray(points, dtype=float).reshape(-1, 2)
        if len(pts) > 1 and np.allclose(pts[0], pts[-1], rtol=0, atol=1e-12):
            pts = pts[:-1]
        if len(pts) < 3:
            raise ValueError("a polygon loop needs at least 3 points")
        n = len(pts)
        return cls(tuple(Line(pts[i], pts[(i + 1) % n]) for i in range(n)))

    @cached_property
    def _moments(self) -> AreaMoments:
        lines = [s for s in self.segments if isinstance(s, Line)]
        total = np.zeros(6)
        if lines:
            # many lines (flattened splines): one vectorised sum
            p = np.array([(s.start[0], s.start[1], s.end[0], s.end[1]) for s in lines])
            total += _line_terms(p[:, 0], p[:, 1], p[:, 2], p[:, 3]).sum(axis=1)
        for s in self.segments:
            if isinstance(s, Arc):
                total += s._terms()
        return AreaMoments._from_array(total)

    def area_moments(self) -> AreaMoments:
        """Exact area moments (AreaMoments), positive for a ccw loop."""
        return self._moments

    @property
    def area(self) -> float:
        """Signed area, mm^2 (+ for ccw)."""
        return self._moments.area

    @property
    def is_ccw(self) -> bool:
        return self._moments.area > 0.0

    def reversed(self) -> Loop:
        return Loop(tuple(s.reversed() for s in reversed(self.segments)))

    def oriented(self, ccw: bool = True) -> Loop:
        """This loop wound counter-clockwise (ccw=True) or clockwise."""
        return self if self.is_ccw == ccw else self.reversed()

    @property
    def length(self) -> float:
        return sum(s.length for s in self.segments)

    def points(self, max_chord_mm: float = 0.005) -> np.ndarray:
        """(n, 2) float, mm: the loop flattened (arcs within `max_chord_mm`
        sagitta), in its own winding, without repeating the first point."""
        parts = [s.flatten(max_chord_mm)[:-1] for s in self.segments]
        return np.vstack(parts)

    def polygon(self, max_chord_mm: float = 0.005) -> shapely.Polygon:
        """A shapely Polygon of the flattened loop, exterior counter-clockwise.

        The flattening is inscribed: its area is slightly smaller than the
        exact area (about 2/3 of sagitta times arc length)."""
        pts = self.oriented(True).points(max_chord_mm)
        return shapely.Polygon(pts)

    def as_circle(self) -> tuple[float, float, float] | None:
        """(cx, cy, radius) mm if the loop is one full circle (arcs of one
        centre and radius sweeping 360 deg in total), else None."""
        if not all(isinstance(s, Arc) for s in self.segments):
            return None
        c0, r0 = self.segments[0].center, self.segments[0].radius
        tol = 1e-9 * max(1.0, abs(c0[0]), abs(c0[1]), r0)
        for s in self.segments:
            if math.dist(s.center, c0) > tol or abs(s.radius - r0) > tol:
                return None
        if abs(abs(sum(s.sweep_deg for s in self.segments)) - 360.0) > 1e-6:
            return None
        return (c0[0], c0[1], r0)


def circle(cx: float, cy: float, radius: float) -> Loop:
    """A full circle, counter-clockwise, as TWO 180-degree arcs starting at
    angle 0 (the point (cx + r, cy)).  Two halves rather than one 360-degree
    arc because three-point arc builders cannot draw a closed arc whose start
    and end coincide."""
    return Loop((Arc((cx, cy), radius, 0.0, 180.0), Arc((cx, cy), radius, 180.0, 180.0)))


def polygon_moments(polygon) -> AreaMoments:
    """Area moments of a shapely Polygon (with holes) or MultiPolygon, by
    Green's theorem over its rings oriented with `shapely.orient_polygons`
    (exterior ccw, holes cw), so the holes subtract whatever their winding.
    """
    geom = shapely.orient_polygons(polygon, exterior_cw=False)
    polys = list(geom.geoms) if hasattr(geom, "geoms") else [geom]
    total = np.zeros(6)
    for poly in polys:
        if poly.is_empty:
            continue
        for ring in [poly.exterior, *poly.interiors]:
            xy = np.asarray(ring.coords, dtype=float)
            x0, y0 = xy[:-1, 0], xy[:-1, 1]
            x1, y1 = xy[1:, 0], xy[1:, 1]
            total += _line_terms(x0, y0, x1, y1).sum(axis=1)
    return AreaMoments._from_array(total)
