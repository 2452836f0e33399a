"""Spline (NURBS) and elliptic-arc segments: their points, flattening and area moments.

Sources beside each check: ezdxf's own B-spline evaluator (`ezdxf.math.BSpline`, independent code)
for points on the curve, shapely on a very fine flattening made by ezdxf for areas and centroids,
closed forms (ellipse area pi a b and ∫x² dA = pi a³ b / 4 about its centre, Machinery's Handbook
semi-ellipse centroid 4 b / (3 pi)), and the rational quadratic circle of The NURBS Book (Piegl and
Tiller, 2nd ed., ch. 7: nine poles on a square, weights 1 and sqrt(2)/2, double interior knots;
chapter from memory), which is a circle exactly: area pi r², ∫x² dA = pi r⁴ / 4, length 2 pi r.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from ezdxf.math import BSpline, fit_points_to_cad_cv

from geomgen.kinds import Radial
from geomgen.loops import EllipseArc, Line, Loop, Spline, circle
from geomgen.screens import point_loop_distance
from geomgen.section import WebSection, parametric_web

STEEL = 7.85


def rim_fit_points(n=16):
    """An invented teardrop rim: r(phi) = 58 - 6 cos(phi) + 2 cos(2 phi) mm, phi from +Y, closed."""
    pts = []
    for i in range(n):
        phi = 2 * math.pi * i / n
        r = 58 - 6 * math.cos(phi) + 2 * math.cos(2 * phi)
        pts.append((-r * math.sin(phi), r * math.cos(phi), 0.0))
    return pts + [pts[0]]


def fit_spline():
    """(ezdxf BSpline, geomgen Spline) of the same fit-point rim (ezdxf's CAD-style interpolation)."""
    bs = fit_points_to_cad_cv(rim_fit_points())
    return bs, Spline.from_nurbs(bs.degree, [(v.x, v.y) for v in bs.control_points], bs.knots(), bs.weights())


def nurbs_circle(r, cx=0.0, cy=0.0):
    """The NURBS Book's nine-pole rational quadratic circle of radius r."""
    w = math.sqrt(0.5)
    square = [(1, 0), (1, 1), (0, 1), (-1, 1), (-1, 0), (-1, -1), (0, -1), (1, -1), (1, 0)]
    return Spline.from_nurbs(2, [(cx + r * x, cy + r * y) for x, y in square],
                             [0, 0, 0, 1, 1, 2, 2, 3, 3, 4, 4, 4], [1, w, 1, w, 1, w, 1, w, 1])


def periodic_poles():
    return [(60 * math.cos(a), 42 * math.sin(a)) for a in (2 * math.pi * i / 8 for i in range(8))]


# -- points ----------------------------------------------------------------------

def test_points_agree_with_ezdxf_on_a_clamped_spline():
    # ezdxf.math.BSpline (independent evaluator): the curve at each knot, and at the middle of each span
    bs, sp = fit_spline()
    knots = np.unique(bs.knots())
    mids = 0.5 * (knots[:-1] + knots[1:])
    assert len(sp._pieces) == len(knots) - 1                 # one Bezier piece per knot span
    m = len(knots) - 1
    for i in range(m):
        for share, t in ((i / m, knots[i]), ((i + 0.5) / m, None)):
            if t is None:
                # point_at(share) is the middle of piece i in its own parameter, which is the span's middle
                t = mids[i]
            want = bs.point(t)
            assert sp.point_at(share) == pytest.approx((want.x, want.y), abs=1e-11)
    assert sp.end == pytest.approx((bs.point(bs.max_t).x, bs.point(bs.max_t).y), abs=1e-12)


def test_a_periodic_spline_is_read_on_its_domain():
    # ezdxf.math.BSpline of the wrapped poles, evaluated on its domain [knots[p], knots[n]] = [3, 11]:
    # the clamped Spline starts and ends at the curve's point at t = 3 (not at a control point)
    poles = periodic_poles()
    wrapped = poles + poles[:3]
    knots = list(range(len(wrapped) + 4))
    ez = BSpline([(x, y, 0) for x, y in wrapped], order=4, knots=knots)
    sp = Spline.from_nurbs(3, wrapped, knots)
    at3 = ez.point(3.0)
    assert sp.start == pytest.approx((at3.x, at3.y), abs=1e-12)
    assert sp.end == pytest.approx(sp.start, abs=1e-12)
    assert min(math.dist(sp.start, p) for p in poles) > 1.0     # the ends are no control point
    ts = np.linspace(3.0, 11.0, 40001)
    dense = shapely.LinearRing(np.array([(v.x, v.y) for v in ez.points(ts)]))
    assert max(dense.distance(shapely.Point(p)) for p in sp.flatten(0.01)) < 1e-5


# -- flattening bound ----------------------------------------------------------------

def _within(flat, dense, tol):
    """Every densely sampled curve point within tol of the flattening, and every vertex of the
    flattening on the curve (within the dense polyline's own sagitta, ~1e-6 mm at 20001 points)."""
    poly = shapely.LineString(flat)
    assert shapely.distance(shapely.points(dense), poly).max() <= tol * (1 + 1e-9)
    assert shapely.distance(shapely.points(flat), shapely.LineString(dense)).max() <= 2e-6


@pytest.mark.parametrize("tol", [0.05, 0.005, 1e-3])
def test_flattening_stays_within_its_chord_bound(tol):
    # ezdxf's dense evaluation as the curve
    bs, sp = fit_spline()
    dense = np.array([(v.x, v.y) for v in bs.points(np.linspace(0, bs.max_t, 20001))])
    _within(sp.flatten(tol), dense, tol)


def test_ellipse_flattening_bound():
    # closed form of the points: p(t) = c + a cos t u + b sin t v, sampled densely here
    e = EllipseArc((3, -4), (50, 0), (0, 20), 0.3, 4.0)
    t = np.linspace(0.3, 4.0, 20001)
    dense = np.column_stack([3 + 50 * np.cos(t), -4 + 20 * np.sin(t)])
    for tol in (0.05, 1e-3):
        _within(e.flatten(tol), dense, tol)


# -- area moments -------------------------------------------------------------------

def test_fit_spline_moments_against_shapely_on_a_fine_flattening():
    # shapely on ezdxf's own flattening at 1e-7 mm (inscribed: its area is short by about 2/3 of the
    # sagitta times the length, 2.5e-5 mm² here, 2.3e-9 relative)
    bs, sp = fit_spline()
    m = Loop((sp,)).area_moments()
    ref = shapely.Polygon(np.array([(v.x, v.y) for v in bs.flattening(1e-7, segments=64)]))
    assert m.area == pytest.approx(ref.area, rel=5e-9)
    assert m.centroid[1] == pytest.approx(ref.centroid.y, rel=5e-9)
    assert m.centroid[0] == pytest.approx(0.0, abs=1e-9)       # the rim is symmetric about Y
    assert sp.moment_error.max() == 0.0                        # polynomial: exact quadrature


def test_polynomial_quadrature_is_exact_in_every_moment():
    # the same spline cut at its knots and integrated by 2p nodes vs by 40 nodes per piece: a degree-4p-1
    # polynomial integrand gives the same figures to round-off (Gauss-Legendre exactness, any numerics text)
    _, sp = fit_spline()
    from geomgen.loops import _bezier_eval, _curve_terms, _gauss01

    s, w = _gauss01(40)
    pts, der = _bezier_eval(sp._pieces, s)
    fine = _curve_terms(pts, der, np.broadcast_to(w, pts.shape[:2]))
    scale = 66.0 ** np.array([2, 3, 3, 4, 4, 4])     # the rim's size to the power of each moment
    assert np.all(np.abs(sp._terms() - fine) <= 1e-14 * scale)


@pytest.mark.parametrize("r, cx, cy", [(10.0, 0.0, 0.0), (65.0, 3.0, -7.0)])
def test_the_nurbs_circle_is_a_circle(r, cx, cy):
    # The NURBS Book's rational circle: area pi r², ∫x² dA = pi r⁴/4 + A cx² (parallel axes), length 2 pi r
    sp = nurbs_circle(r, cx, cy)
    m = Loop((sp,)).area_moments()
    a = math.pi * r * r
    assert sp.is_rational
    assert m.area == pytest.approx(a, rel=1e-13)
    assert m.centroid == pytest.approx((cx, cy), abs=1e-11 * r)
    assert m.sxx == pytest.approx(math.pi * r ** 4 / 4 + a * cx * cx, rel=1e-12)
    assert m.sxy == pytest.approx(a * cx * cy, rel=1e-12, abs=1e-9 * r ** 4)
    assert sp.length == pytest.approx(2 * math.pi * r, rel=1e-12)
    scale = max(abs(cx), abs(cy), r) ** 4
    assert sp.moment_error.max() <= 1e-12 * scale            # the quadrature's own estimate


def test_ellipse_closed_forms():
    # closed form: area pi a b; ∫x² dA about the centre pi a³ b / 4 (Machinery's Handbook moments of
    # area of an ellipse), moved to (cx, cy) by the parallel-axis sum
    a, b, cx, cy = 40.0, 25.0, 5.0, -10.0
    m = Loop((EllipseArc((cx, cy), (a, 0), (0, b), 0.0, 2 * math.pi),)).area_moments()
    area = math.pi * a * b
    assert m.area == pytest.approx(area, rel=1e-14)
    assert m.centroid == pytest.approx((cx, cy), rel=1e-13)
    assert m.sxx == pytest.approx(math.pi * a ** 3 * b / 4 + area * cx * cx, rel=1e-13)
    assert m.syy == pytest.approx(math.pi * a * b ** 3 / 4 + area * cy * cy, rel=1e-13)


def test_turned_semi_ellipse_centroid():
    # Machinery's Handbook: a semi-ellipse's centroid lies 4 b / (3 pi) from its major axis; here the
    # major axis is turned 30 deg and the arc runs clockwise (its minor axis turned over)
    a, b, turn = 40.0, 20.0, math.radians(30.0)
    u = (a * math.cos(turn), a * math.sin(turn))
    v = (b * math.sin(turn), -b * math.cos(turn))        # clockwise side
    e = EllipseArc((0, 0), u, v, 0.0, math.pi)
    m = Loop((e, Line(e.end, e.start))).oriented(True).area_moments()
    assert m.area == pytest.approx(math.pi * a * b / 2, rel=1e-14)
    d = 4 * b / (3 * math.pi)
    assert m.centroid == pytest.approx((d * math.sin(turn), -d * math.cos(turn)), rel=1e-13)


def test_reversed_curves_negate_their_moments():
    # Green's theorem: the same region walked the other way gives every moment with the other sign
    _, sp = fit_spline()
    e = EllipseArc((1, 2), (0, 30), (-10, 0), -1.0, 2.5)
    for loop in (Loop((sp,)), Loop((e, Line(e.end, e.start)))):
        fwd, back = loop.area_moments(), loop.reversed().area_moments()
        scale = 66.0 ** np.array([2, 3, 3, 4, 4, 4])
        assert np.all(np.abs(back._as_array() + fwd._as_array()) <= 1e-14 * scale)


# -- what other code asks of a curved rim -----------------------------------------------

def test_circle_drawn_as_nurbs_measures_as_the_circle():
    # the exact circle (geomgen's closed-form arcs) as the reference: rim radii, a distance to the rim
    # and a radial rim hole's removed material (its own exact quadrature on a circular rim)
    r = 65.0
    nurbs = WebSection(Loop((nurbs_circle(r),)), (circle(0, 31, 14),), (0, 31), 28.0, 18.0, STEEL)
    exact = parametric_web(diameter=2 * r, thickness=18.0, density_g_cm3=STEEL, stroke=62.0, pin_bore=28.0)
    assert nurbs.rim_radius_max == pytest.approx(r, abs=1e-5)
    assert nurbs.rim_radius_min == pytest.approx(r, abs=1e-5)
    assert point_loop_distance((3.0, -20.0), nurbs.outer) == pytest.approx(r - math.hypot(3, 20), abs=1e-4)
    assert nurbs.massprops().mass == pytest.approx(exact.massprops().mass, rel=1e-13)
    hole = Radial(angle=200.0, diameter=10.0, depth=15.0, z=9.0, point_angle=118.0)
    got, want = hole.on(nurbs).removed(STEEL), hole.on(exact).removed(STEEL)
    # the curved rim is crossed on chords within 1e-6 mm: ~1e-6 mm x the 10 mm drill across
    assert got.mass == pytest.approx(want.mass, rel=1e-6)
    assert got.first_moment == pytest.approx(want.first_moment, rel=1e-6, abs=1e-6)


def test_lines_and_arcs_keeps_exact_segments_and_flattens_curves():
    _, sp = fit_spline()
    plain = circle(0, 0, 5)
    assert plain.lines_and_arcs(1e-3) is plain
    flat = Loop((sp,)).lines_and_arcs(1e-3)
    assert all(isinstance(s, Line) for s in flat.segments)
    # inscribed chords: the area is short by at most the chord bound times the length
    assert 0 < Loop((sp,)).area - flat.area <= 1e-3 * sp.length


def test_spline_rejects_what_is_no_clamped_nurbs():
    with pytest.raises(ValueError, match="clamped"):
        Spline(3, periodic_poles(), list(range(12)))
    with pytest.raises(ValueError, match="knots"):
        Spline(3, periodic_poles(), [0, 0, 0, 0, 1, 1, 1, 1])
    with pytest.raises(ValueError, match="weights"):
        Spline(2, [(0, 0), (1, 1), (2, 0)], [0, 0, 0, 1, 1, 1], [1, -1, 1])
    with pytest.raises(ValueError, match="minor"):
        EllipseArc((0, 0), (10, 0), (0, 20), 0, 1)
