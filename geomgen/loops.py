"""Planar closed loops of exact segments (lines, circular arcs, NURBS splines
and elliptic arcs) and their area moments.

A web outline, a bore, a hole footprint and a kidney pocket are all closed
loops of straight lines and circular arcs; a drawn outline may also hold
splines and ellipses.  Their area moments are computed segment by segment by
Green's theorem: in closed form for lines and arcs, by Gauss-Legendre
quadrature along splines and ellipses (exact to round-off for polynomial
splines, see `Spline`); nothing is flattened unless a shapely polygon is
asked for.  Every figure is in the plane of the web
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
from functools import cached_property, lru_cache

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


# --------------------------------------------------------------------------
# curves: NURBS splines and elliptic arcs
# --------------------------------------------------------------------------
#
# A spline or an ellipse from a drawing stays the curve it is: its area moments are the same line
# integrals as above, evaluated by Gauss-Legendre quadrature along the curve, and the solid gets the
# same curve as a B-spline or ellipse edge.  Only the polygons for containment checks are flattened,
# within a stated chordal deviation.

@lru_cache(maxsize=16)
def _gauss01(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss-Legendre nodes and weights on [0, 1]."""
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * (x + 1.0), 0.5 * w


def _curve_terms(pts: np.ndarray, der: np.ndarray, w: np.ndarray) -> np.ndarray:
    """The six Green's-theorem terms (the module's forms) of a curve sampled at quadrature nodes.

    pts, der : (..., 2) points and derivatives d(x, y)/dt;  w : (...) quadrature weights in t.
    """
    x, y = pts[..., 0], pts[..., 1]
    dx, dy = der[..., 0] * w, der[..., 1] * w
    return np.array([
        np.sum(x * dy),
        np.sum(x * x * dy) / 2.0,
        -np.sum(y * y * dx) / 2.0,
        np.sum(x ** 3 * dy) / 3.0,
        np.sum(x * x * y * dy) / 2.0,
        -np.sum(y ** 3 * dx) / 3.0,
    ])


def _insert_knot(ph: np.ndarray, knots: np.ndarray, p: int, u: float) -> tuple[np.ndarray, np.ndarray]:
    """Knot u inserted once (Boehm's algorithm on homogeneous poles (n, 3)); the curve is unchanged."""
    n = len(ph)
    k = int(np.searchsorted(knots, u, side="right")) - 1
    k = min(max(k, p), n - 1)
    out = np.empty((n + 1, 3))
    out[:k - p + 1] = ph[:k - p + 1]
    for i in range(k - p + 1, k + 1):
        a = (u - knots[i]) / (knots[i + p] - knots[i])
        out[i] = (1.0 - a) * ph[i - 1] + a * ph[i]
    out[k + 1:] = ph[k:]
    return out, np.insert(knots, k + 1, u)


def _raise_multiplicity(ph, knots, p: int, u: float, target: int):
    while np.count_nonzero(knots == u) < target:
        ph, knots = _insert_knot(ph, knots, p, u)
    return ph, knots


def _clamped(ph: np.ndarray, knots: np.ndarray, p: int) -> tuple[np.ndarray, np.ndarray]:
    """The curve on its domain [knots[p], knots[n]] as a clamped spline: it starts at its first pole
    and ends at its last.  An unclamped knot vector (a closed periodic spline) is clamped by knot
    insertion, which leaves the curve as it is."""
    n = len(ph)
    a, b = float(knots[p]), float(knots[n])
    ph, knots = _raise_multiplicity(ph, knots, p, a, p)
    ph, knots = _raise_multiplicity(ph, knots, p, b, p)
    last_a = int(np.flatnonzero(knots == a)[-1])
    first_b = int(np.flatnonzero(knots == b)[0])
    poles = ph[last_a - p:first_b]
    inner = knots[last_a + 1:first_b]
    return poles, np.concatenate([np.full(p + 1, a), inner, np.full(p + 1, b)])


def _bernstein(p: int, s: np.ndarray) -> np.ndarray:
    """(len(s), p + 1) Bernstein polynomials of degree p at s."""
    i = np.arange(p + 1)
    binom = np.array([math.comb(p, k) for k in i], dtype=float)
    return binom * s[:, None] ** i * (1.0 - s[:, None]) ** (p - i)


def _bezier_eval(pieces: np.ndarray, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Points and d/ds of rational Bezier pieces (m, p+1, 3) at s (k,): each (m, k, 2)."""
    p = pieces.shape[1] - 1
    b = _bernstein(p, s)
    cw = np.einsum("ki,mij->mkj", b, pieces)
    if p > 0:
        b1 = _bernstein(p - 1, s)
        db = np.zeros_like(b)
        db[:, 1:] += p * b1
        db[:, :-1] -= p * b1
    else:
        db = np.zeros_like(b)
    dcw = np.einsum("ki,mij->mkj", db, pieces)
    w = cw[..., 2:]
    pts = cw[..., :2] / w
    der = (dcw[..., :2] - pts * dcw[..., 2:]) / w
    return pts, der


def _bezier_halves(pieces: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """De Casteljau at s = 1/2 of homogeneous Bezier pieces (m, p+1, 3): (left, right)."""
    p = pieces.shape[1] - 1
    work = pieces.copy()
    left = np.empty_like(pieces)
    right = np.empty_like(pieces)
    left[:, 0] = work[:, 0]
    right[:, p] = work[:, p]
    for r in range(1, p + 1):
        work = 0.5 * (work[:, :-1] + work[:, 1:])
        left[:, r] = work[:, 0]
        right[:, p - r] = work[:, -1]
    return left, right


def _hull_off_chord(pieces: np.ndarray) -> np.ndarray:
    """(m,) the largest distance of a piece's (projected) control points from its chord, mm.

    Positive weights keep a rational Bezier curve inside the convex hull of its projected control
    points, and the distance to a segment is convex, so this bounds how far the curve strays from its
    chord (and, the curve running from one end of the chord to the other, the chord from the curve)."""
    q = pieces[..., :2] / pieces[..., 2:]
    a, b = q[:, :1, :], q[:, -1:, :]
    ab = b - a
    span = np.sum(ab * ab, axis=2)
    t = np.where(span > 0, np.sum((q - a) * ab, axis=2) / np.where(span > 0, span, 1.0), 0.0)
    t = np.clip(t, 0.0, 1.0)
    off = q - (a + t[..., None] * ab)
    return np.sqrt(np.sum(off * off, axis=2)).max(axis=1)


#: quadrature nodes per piece for rational curves, and the relative accuracy asked of them
RATIONAL_NODES = 12
RATIONAL_REL = 1e-14


@dataclass(frozen=True)
class Spline:
    """A planar NURBS curve, clamped: it starts at its first pole and ends at its last.

    degree : p >= 1
    poles : ((x, y), ...) mm, at least p + 1 of them
    knots : the full knot vector, len(poles) + p + 1 non-decreasing values, the first p + 1 equal and
            the last p + 1 equal (`Spline.from_nurbs` clamps any other)
    weights : one positive weight per pole, or () for a polynomial (non-rational) spline

    Area moments: Green's line integrals by Gauss-Legendre quadrature on each Bezier piece.  On a
    polynomial spline of degree p the integrands are polynomials of degree at most 4p - 1, which 2p
    nodes integrate exactly: the moments are exact to round-off.  On a rational spline each piece is
    halved until RATIONAL_NODES nodes on the piece and on its halves agree to RATIONAL_REL of the
    curve's scale (the integrand is analytic there, so the finer estimate is the better one);
    `moment_error` is the sum of those differences.
    """

    degree: int
    poles: tuple
    knots: tuple
    weights: tuple = ()

    def __post_init__(self):
        p = int(self.degree)
        poles = tuple(_pt(q) for q in self.poles)
        knots = tuple(float(k) for k in self.knots)
        weights = tuple(float(w) for w in self.weights)
        object.__setattr__(self, "degree", p)
        object.__setattr__(self, "poles", poles)
        object.__setattr__(self, "knots", knots)
        object.__setattr__(self, "weights", weights)
        n = len(poles)
        if p < 1 or n < p + 1:
            raise ValueError(f"a spline of degree {p} needs at least {p + 1} poles, got {n}")
        if len(knots) != n + p + 1:
            raise ValueError(f"a spline of {n} poles and degree {p} needs {n + p + 1} knots, got {len(knots)}")
        k = np.array(knots)
        if not (np.all(np.diff(k) >= 0) and np.all(np.isfinite(k)) and k[p] < k[n]):
            raise ValueError("spline knots must be finite, non-decreasing and span a parameter range")
        if not (np.all(k[:p + 1] == k[0]) and np.all(k[n:] == k[-1])):
            raise ValueError("spline knots must be clamped (use Spline.from_nurbs)")
        if weights and (len(weights) != n or not all(w > 0 and math.isfinite(w) for w in weights)):
            raise ValueError(f"a rational spline needs {n} positive weights, got {weights}")
        if not np.all(np.isfinite(np.array(poles))):
            raise ValueError("spline poles must be finite")

    @classmethod
    def from_nurbs(cls, degree: int, poles, knots, weights=()) -> Spline:
        """The curve of any NURBS (clamped or not, e.g. a closed periodic one) on its domain
        [knots[p], knots[n]], clamped by knot insertion; equal weights give a polynomial spline."""
        p = int(degree)
        xy = np.asarray(poles, dtype=float).reshape(-1, 2)
        w = np.asarray(weights, dtype=float) if len(weights) else np.ones(len(xy))
        if len(w) != len(xy):
            raise ValueError(f"a rational spline needs {len(xy)} weights, got {len(w)}")
        k = np.asarray(knots, dtype=float)
        if len(k) != len(xy) + p + 1:
            raise ValueError(f"a spline of {len(xy)} poles and degree {p} needs {len(xy) + p + 1} knots, "
                             f"got {len(k)}")
        ph = np.column_stack([xy * w[:, None], w])
        ph, k = _clamped(ph, k, p)
        wt = ph[:, 2]
        rational = not np.allclose(wt, wt[0], rtol=1e-15, atol=0)
        return cls(p, ph[:, :2] / wt[:, None], k, tuple(wt) if rational else ())

    # ------------------------------------------------------------ geometry
    @property
    def start(self) -> Point:
        return self.poles[0]

    @property
    def end(self) -> Point:
        return self.poles[-1]

    @property
    def is_rational(self) -> bool:
        return bool(self.weights)

    def _homogeneous(self) -> np.ndarray:
        xy = np.array(self.poles)
        w = np.array(self.weights) if self.weights else np.ones(len(xy))
        return np.column_stack([xy * w[:, None], w])

    @cached_property
    def _pieces(self) -> np.ndarray:
        """(m, p+1, 3): the curve as rational Bezier pieces in homogeneous form, one per knot span."""
        p = self.degree
        ph, k = self._homogeneous(), np.array(self.knots)
        for u in np.unique(k[p + 1:len(k) - p - 1]):
            ph, k = _raise_multiplicity(ph, k, p, float(u), p)
        m = (len(ph) - 1) // p
        return np.stack([ph[i * p:i * p + p + 1] for i in range(m)])

    def bezier_pieces(self, at_least: int = 1) -> np.ndarray:
        """(m, p+1, 3) the curve's Bezier pieces, homogeneous (w x, w y, w): one per knot span, halved
        until there are at least `at_least` of them."""
        pieces = self._pieces
        while len(pieces) < at_least:
            left, right = _bezier_halves(pieces)
            pieces = np.stack([left, right], axis=1).reshape(-1, *pieces.shape[1:])
        return pieces

    def with_ends(self, start: Point | None = None, end: Point | None = None) -> Spline:
        """The spline with its first / last pole moved onto `start` / `end` (closing a small gap in a
        drawing: the curve moves by at most the distance the pole moves)."""
        poles = list(self.poles)
        if start is not None:
            poles[0] = _pt(start)
        if end is not None:
            poles[-1] = _pt(end)
        return Spline(self.degree, tuple(poles), self.knots, self.weights)

    def reversed(self) -> Spline:
        k = np.array(self.knots)
        return Spline(self.degree, self.poles[::-1], tuple((k[0] + k[-1]) - k[::-1]), self.weights[::-1])

    def point_at(self, t: float) -> Point:
        """The point at the share t (0 .. 1) of the parameter range."""
        pieces = self._pieces
        m = len(pieces)
        x = min(max(float(t), 0.0), 1.0) * m
        i = min(int(x), m - 1)
        pts, _ = _bezier_eval(pieces[i:i + 1], np.array([x - i]))
        return _pt(pts[0, 0])

    @property
    def length(self) -> float:
        s, w = _gauss01(2 * self.degree + 8)
        _, der = _bezier_eval(self._pieces, s)
        return float(np.sum(np.hypot(der[..., 0], der[..., 1]) * w))

    def flatten(self, max_chord_mm: float = 0.005) -> np.ndarray:
        """(n, 2) float, mm: points on the curve from start to end; every chord lies within
        `max_chord_mm` of the curve and the curve within it of its chord (the control-polygon bound
        of `_hull_off_chord`, halving the pieces until it holds)."""
        tol = max(float(max_chord_mm), 1e-12 * max(1.0, float(np.abs(np.array(self.poles)).max())))
        pieces = self._pieces
        for _ in range(60):
            ok = _hull_off_chord(pieces) <= tol
            if ok.all():
                break
            left, right = _bezier_halves(pieces[~ok])
            count = np.where(ok, 1, 2)
            at = np.concatenate([[0], np.cumsum(count)[:-1]])
            out = np.empty((int(count.sum()),) + pieces.shape[1:])
            out[at[ok]] = pieces[ok]
            out[at[~ok]] = left
            out[at[~ok] + 1] = right
            pieces = out
        q = pieces[..., :2] / pieces[..., 2:]
        pts = np.vstack([q[:, 0, :], q[-1:, -1, :]])
        pts[0], pts[-1] = self.start, self.end
        return pts

    # ------------------------------------------------------------ moments
    @cached_property
    def _moments_and_error(self) -> tuple[np.ndarray, np.ndarray]:
        p = self.degree
        pieces = self._pieces
        if not self.is_rational:
            s, w = _gauss01(2 * p)
            pts, der = _bezier_eval(pieces, s)
            return _curve_terms(pts, der, np.broadcast_to(w, pts.shape[:2])), np.zeros(6)
        size = max(1.0, float(np.abs(np.array(self.poles)).max()))
        scale = size ** np.array([2, 3, 3, 4, 4, 4], dtype=float)
        s, w = _gauss01(RATIONAL_NODES)
        total, error = np.zeros(6), np.zeros(6)
        todo = [(i, 0.0, 1.0) for i in range(len(pieces))]
        while todo:
            nxt = []
            for i, a, b in todo:
                piece = pieces[i:i + 1]
                h = b - a
                one = _curve_terms(*_bezier_eval(piece, a + h * s), h * w[None, :])
                mid = 0.5 * (a + b)
                two = (_curve_terms(*_bezier_eval(piece, a + 0.5 * h * s), 0.5 * h * w[None, :])
                       + _curve_terms(*_bezier_eval(piece, mid + 0.5 * h * s), 0.5 * h * w[None, :]))
                diff = np.abs(two - one)
                if np.all(diff <= RATIONAL_REL * scale * h) or h < 1e-6:
                    total += two
                    error += diff
                else:
                    nxt += [(i, a, mid), (i, mid, b)]
            todo = nxt
        return total, error

    def _terms(self) -> np.ndarray:
        return self._moments_and_error[0]

    @property
    def moment_error(self) -> np.ndarray:
        """(6,) the estimated quadrature error of the terms (zero for a polynomial spline: exact)."""
        return self._moments_and_error[1]


#: Gauss-Legendre nodes per quarter turn of an elliptic arc: its integrands are trigonometric
#: polynomials of degree <= 4, which 16 nodes over a quarter turn integrate to round-off
ELLIPSE_NODES = 16


@dataclass(frozen=True)
class EllipseArc:
    """An elliptic arc: p(t) = center + major cos t + minor sin t for t from t0 to t1 (rad, t0 < t1,
    t1 - t0 <= 2 pi), mm.  major and minor are the semi-axis vectors, perpendicular, |minor| <= |major|;
    minor may point either way (an arc clockwise in the plane has it on the clockwise side)."""

    center: Point
    major: Point
    minor: Point
    t0: float
    t1: float

    def __post_init__(self):
        for name in ("center", "major", "minor"):
            object.__setattr__(self, name, _pt(getattr(self, name)))
        object.__setattr__(self, "t0", float(self.t0))
        object.__setattr__(self, "t1", float(self.t1))
        a, b = math.hypot(*self.major), math.hypot(*self.minor)
        if not (a > 0 and b > 0 and b <= a * (1 + 1e-12)):
            raise ValueError(f"an ellipse needs 0 < minor <= major semi-axis, got {b} and {a}")
        if abs(self.major[0] * self.minor[0] + self.major[1] * self.minor[1]) > 1e-9 * a * b:
            raise ValueError("an ellipse's axes must be perpendicular")
        if not (0 < self.t1 - self.t0 <= 2 * math.pi + 1e-12):
            raise ValueError(f"an elliptic arc needs 0 < t1 - t0 <= 2 pi, got {self.t1 - self.t0}")

    @property
    def sweep(self) -> float:
        return self.t1 - self.t0

    @property
    def is_full(self) -> bool:
        return self.sweep >= 2 * math.pi - 1e-12

    @property
    def ccw(self) -> bool:
        """True when t runs counter-clockwise about the centre."""
        return self.major[0] * self.minor[1] - self.major[1] * self.minor[0] > 0

    def _at(self, t) -> tuple[np.ndarray, np.ndarray]:
        t = np.asarray(t, dtype=float)
        c, s = np.cos(t)[..., None], np.sin(t)[..., None]
        u, v = np.array(self.major), np.array(self.minor)
        return np.array(self.center) + u * c + v * s, -u * s + v * c

    def point_at(self, t: float) -> Point:
        """The point at the share t (0 .. 1) of the parameter range."""
        return _pt(self._at(self.t0 + t * self.sweep)[0])

    @property
    def start(self) -> Point:
        return self.point_at(0.0)

    @property
    def end(self) -> Point:
        return self.start if self.is_full else self.point_at(1.0)

    def reversed(self) -> EllipseArc:
        # p(-t) with the minor axis turned over runs the same points backwards
        return EllipseArc(self.center, self.major, (-self.minor[0], -self.minor[1]), -self.t1, -self.t0)

    def _nodes(self) -> tuple[np.ndarray, np.ndarray]:
        parts = max(1, math.ceil(self.sweep / (0.5 * math.pi) - 1e-12))
        s, w = _gauss01(ELLIPSE_NODES)
        edges = self.t0 + self.sweep * np.arange(parts) / parts
        h = self.sweep / parts
        return (edges[:, None] + h * s[None, :]).ravel(), np.tile(h * w, parts)

    @property
    def length(self) -> float:
        t, w = self._nodes()
        _, der = self._at(t)
        return float(np.sum(np.hypot(der[:, 0], der[:, 1]) * w))

    def flatten(self, max_chord_mm: float = 0.005) -> np.ndarray:
        """(n, 2) float, mm: points from start to end, every chord within `max_chord_mm` of the arc.

        The ellipse is the unit circle under the linear map [major minor], whose largest stretch is
        the major semi-axis a: a chord of parameter step h lies within a (1 - cos(h/2)) of the arc."""
        a = math.hypot(*self.major)
        tol = max(float(max_chord_mm), 1e-12)
        step = math.pi if tol >= a else 2.0 * math.acos(1.0 - tol / a)
        n = max(1, math.ceil(self.sweep / step), math.ceil(4 * self.sweep / (2 * math.pi)))
        pts, _ = self._at(self.t0 + np.linspace(0.0, 1.0, n + 1) * self.sweep)
        pts[0], pts[-1] = self.start, self.end
        return pts

    def _terms(self) -> np.ndarray:
        t, w = self._nodes()
        pts, der = self._at(t)
        return _curve_terms(pts, der, w)


Segment = Line | Arc | Spline | EllipseArc
#: segments that are neither a straight line nor a circular arc
CURVES = (Spline, EllipseArc)


# --------------------------------------------------------------------------
# loops
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class Loop:
    """A closed chain of Line / Arc / Spline / EllipseArc segments: the end of
    each is the start of the next (and the last ends at the first's start)
    within CLOSE_REL of the loop's size.  Either winding is accepted;
    `oriented` picks one.
    """

    segments: tuple

    def __getstate__(self):
        # what a loop remembers of its own answers (flattenings, rim distances) stays behind when it is
        # pickled (to the helper process): only its segments travel
        return {"segments": self.segments}

    def __setstate__(self, state):
        object.__setattr__(self, "segments", state["segments"])

    def __post_init__(self):
        segs = tuple(self.segments)
        object.__setattr__(self, "segments", segs)
        if not segs:
            raise ValueError("a loop needs at least one segment")
        for s in segs:
            if not isinstance(s, (Line, Arc, Spline, EllipseArc)):
                raise TypeError(f"loop segments must be Line, Arc, Spline or EllipseArc, got {type(s).__name__}")
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
            if not isinstance(s, Line):
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

    @property
    def has_curves(self) -> bool:
        """True if a segment is a spline or an elliptic arc."""
        return any(isinstance(s, CURVES) for s in self.segments)

    def lines_and_arcs(self, max_chord_mm: float) -> Loop:
        """This loop with every spline and elliptic arc replaced by the chords of its flattening
        (each within `max_chord_mm` of the curve); lines and arcs are kept.  For code that reasons
        about lines and circular arcs only (distances, ray crossings, a polyline in a drawing)."""
        if not self.has_curves:
            return self
        cache = self.__dict__.setdefault("_lines_and_arcs", {})   # the loop is frozen: its flattenings too
        key = float(max_chord_mm)
        if key not in cache:
            out = []
            for s in self.segments:
                if isinstance(s, CURVES):
                    pts = s.flatten(key)
                    out += [Line(pts[i], pts[i + 1]) for i in range(len(pts) - 1)
                            if tuple(pts[i]) != tuple(pts[i + 1])]
                else:
                    out.append(s)
            cache[key] = Loop(tuple(out))
        return cache[key]

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
