"""Exact area moments of line/arc loops, and the prism mass properties built on them.

Each check names its source: closed-form area moments (Machinery's Handbook
tables of areas and centroids, or the integral written out), the
independent libraries shapely (area, centroid) and trimesh
(trimesh.path.polygons.second_moments, which returns [∫y² dA, ∫x² dA,
∫xy dA] about the origin: its Ixx is the moment ABOUT the x axis).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
import trimesh.path.polygons as tpoly
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from geomgen.loops import Arc, AreaMoments, Line, Loop, circle, polygon_moments, prism
from geomgen.massprops import MassProps


def rel(a, b):
    return abs(a - b) / max(abs(b), 1e-300)


def sector(r, half_angle_rad, *, cx=0.0, cy=0.0, axis_deg=90.0):
    """A circular sector of radius r, symmetric about the direction axis_deg."""
    a = math.degrees(half_angle_rad)
    arc = Arc((cx, cy), r, axis_deg - a, 2 * a)
    return Loop((arc, Line(arc.end, (cx, cy)), Line((cx, cy), arc.start)))


def segment(r, half_angle_rad, *, cx=0.0, cy=0.0, axis_deg=90.0):
    """A circular segment (arc plus its chord), symmetric about axis_deg."""
    a = math.degrees(half_angle_rad)
    arc = Arc((cx, cy), r, axis_deg - a, 2 * a)
    return Loop((arc, Line(arc.end, arc.start)))


# -- closed forms --------------------------------------------------------------

def test_rectangle_closed_form():
    # closed form: b x h rectangle with a corner at the origin: A = bh,
    # ∫x² dA = h b³/3, ∫y² dA = b h³/3, ∫xy dA = b² h² / 4
    b, h = 3.0, 2.0
    m = Loop.from_points([(0, 0), (b, 0), (b, h), (0, h)]).area_moments()
    assert m.area == pytest.approx(b * h, rel=1e-15)
    assert m.centroid == pytest.approx((b / 2, h / 2), rel=1e-15)
    assert m.sxx == pytest.approx(h * b ** 3 / 3, rel=1e-14)
    assert m.syy == pytest.approx(b * h ** 3 / 3, rel=1e-14)
    assert m.sxy == pytest.approx(b * b * h * h / 4, rel=1e-14)


@pytest.mark.parametrize("cx,cy,r", [(0, 0, 10), (3, -4, 2.5), (-40, 17, 65)])
def test_circle_closed_form(cx, cy, r):
    # closed form: disc area pi r², ∫x² dA about its centre pi r⁴/4, moved to
    # (cx, cy): ∫x² dA = pi r⁴/4 + A cx², ∫xy dA = A cx cy (expanding (x+c)²)
    m = circle(cx, cy, r).area_moments()
    area = math.pi * r * r
    assert m.area == pytest.approx(area, rel=1e-14)
    assert m.centroid == pytest.approx((cx, cy), rel=1e-12, abs=1e-12)
    assert m.sxx == pytest.approx(math.pi * r ** 4 / 4 + area * cx * cx, rel=1e-13)
    assert m.syy == pytest.approx(math.pi * r ** 4 / 4 + area * cy * cy, rel=1e-13)
    assert m.sxy == pytest.approx(area * cx * cy, rel=1e-12, abs=1e-9 * r ** 4)


@pytest.mark.parametrize("half_deg", [5.0, 30.0, 45.0, 90.0, 135.0, 170.0])
def test_sector_centroid_machinerys_handbook(half_deg):
    # Machinery's Handbook, areas and centroids: circular sector of half-angle
    # alpha has area alpha r² and centroid 2 r sin(alpha) / (3 alpha) from the centre
    r, alpha = 40.0, math.radians(half_deg)
    m = sector(r, alpha).area_moments()
    assert m.area == pytest.approx(alpha * r * r, rel=1e-13)
    cx, cy = m.centroid
    assert cx == pytest.approx(0.0, abs=1e-12 * r)
    assert cy == pytest.approx(2 * r * math.sin(alpha) / (3 * alpha), rel=1e-12)
    # closed form: polar moment of a sector about its centre = alpha r⁴ / 2
    assert m.polar == pytest.approx(alpha * r ** 4 / 2, rel=1e-13)


@pytest.mark.parametrize("half_deg", [10.0, 45.0, 90.0, 120.0, 175.0])
def test_segment_centroid_machinerys_handbook(half_deg):
    # Machinery's Handbook: circular segment of half-angle alpha has area
    # r² (2 alpha - sin 2alpha) / 2 and centroid 4 r sin³(alpha) / (3 (2 alpha - sin 2 alpha))
    r, alpha = 25.0, math.radians(half_deg)
    m = segment(r, alpha, axis_deg=-90.0).area_moments()  # a counterweight-side segment
    assert m.area == pytest.approx(r * r * (2 * alpha - math.sin(2 * alpha)) / 2, rel=1e-12)
    cx, cy = m.centroid
    assert cx == pytest.approx(0.0, abs=1e-12 * r)
    assert cy == pytest.approx(-4 * r * math.sin(alpha) ** 3 / (3 * (2 * alpha - math.sin(2 * alpha))), rel=1e-12)


def test_quarter_disc_product_moment():
    # closed form: quarter disc in the first quadrant, ∫xy dA = r⁴/8
    r = 5.0
    arc = Arc((0, 0), r, 0.0, 90.0)
    m = Loop((arc, Line(arc.end, (0, 0)), Line((0, 0), arc.start))).area_moments()
    assert m.sxy == pytest.approx(r ** 4 / 8, rel=1e-14)


# -- windings ------------------------------------------------------------------

def test_every_loop_winding_gives_the_same_region():
    # closed form: reversing a loop negates every moment; oriented() restores it
    loop = sector(30.0, math.radians(50), cx=4.0, cy=-7.0, axis_deg=200.0)
    ccw, cw = loop.oriented(True), loop.oriented(False)
    assert ccw.is_ccw and not cw.is_ccw
    a, b = ccw.area_moments(), cw.area_moments()
    for f in ("area", "sx", "sy", "sxx", "sxy", "syy"):
        assert getattr(b, f) == pytest.approx(-getattr(a, f), rel=1e-13)
    assert cw.oriented(True).area_moments().area == pytest.approx(a.area, rel=1e-15)


def _square_with_hole(exterior_cw: bool, hole_cw: bool) -> shapely.Polygon:
    ext = [(0, 0), (10, 0), (10, 6), (0, 6)]
    hole = [(2, 1), (5, 1), (5, 4), (2, 4)]
    if exterior_cw:
        ext = ext[::-1]
    if hole_cw:
        hole = hole[::-1]
    return shapely.Polygon(ext, [hole])


@pytest.mark.parametrize("exterior_cw", [False, True])
@pytest.mark.parametrize("hole_cw", [False, True])
def test_polygon_moments_every_ring_winding(exterior_cw, hole_cw):
    # closed form: 10 x 6 rectangle minus the 3 x 3 square at (2..5, 1..4):
    # A = 60 - 9 = 51; ∫x² dA = 6·10³/3 - 3·(5³ - 2³)/3 = 2000 - 117 = 1883;
    # checked against trimesh second_moments (independent library) as well
    poly = _square_with_hole(exterior_cw, hole_cw)
    m = polygon_moments(poly)
    assert m.area == pytest.approx(51.0, rel=1e-15)
    assert m.sxx == pytest.approx(1883.0, rel=1e-14)
    ixx, iyy, ixy = tpoly.second_moments(poly)
    assert m.syy == pytest.approx(ixx, rel=1e-12)
    assert m.sxx == pytest.approx(iyy, rel=1e-12)
    assert m.sxy == pytest.approx(ixy, rel=1e-12)
    assert m.centroid == pytest.approx((poly.centroid.x, poly.centroid.y), rel=1e-12)


def test_polygon_moments_multipolygon_sums_parts():
    # closed form: two disjoint unit squares: the moments add
    a = shapely.box(0, 0, 1, 1)
    b = shapely.box(3, 0, 4, 1)
    m = polygon_moments(shapely.MultiPolygon([a, b]))
    assert m.area == pytest.approx(2.0)
    assert m.sx == pytest.approx(0.5 + 3.5)
    assert m.sxx == pytest.approx(1 / 3 + (4 ** 3 - 3 ** 3) / 3)


# -- segments and flattening ---------------------------------------------------

def test_arc_ends_and_reverse():
    # closed form: cos/sin of the end angles
    arc = Arc((1.0, 2.0), 3.0, 30.0, -120.0)
    assert arc.start == pytest.approx((1 + 3 * math.cos(math.radians(30)), 2 + 3 * math.sin(math.radians(30))))
    assert arc.end == pytest.approx((1 + 3 * math.cos(math.radians(-90)), 2 + 3 * math.sin(math.radians(-90))))
    rev = arc.reversed()
    assert rev.start == pytest.approx(arc.end) and rev.end == pytest.approx(arc.start)
    assert arc.length == pytest.approx(3.0 * math.radians(120.0))


@pytest.mark.parametrize("tol", [0.1, 0.005, 1e-4])
def test_arc_flatten_honours_chordal_tolerance(tol):
    # closed form: the sagitta of each chord, r (1 - cos(dtheta/2)), must not exceed tol
    arc = Arc((0, 0), 65.0, 10.0, 250.0)
    pts = arc.flatten(tol)
    mid = 0.5 * (pts[1:] + pts[:-1])
    sagitta = 65.0 - np.hypot(mid[:, 0], mid[:, 1])
    assert sagitta.max() <= tol * (1 + 1e-9)
    assert pts[0] == pytest.approx(arc.start) and pts[-1] == pytest.approx(arc.end)


def test_circle_is_two_half_arcs_and_known_as_circle():
    c = circle(2.0, -3.0, 7.0)
    assert len(c.segments) == 2 and all(isinstance(s, Arc) for s in c.segments)
    assert c.as_circle() == pytest.approx((2.0, -3.0, 7.0))
    assert c.is_ccw
    assert Loop.from_points([(0, 0), (1, 0), (0, 1)]).as_circle() is None


def test_open_chain_is_refused():
    with pytest.raises(ValueError, match="not closed"):
        Loop((Line((0, 0), (1, 0)), Line((1, 0), (1, 1))))


def test_polygon_of_circle_against_shapely():
    # shapely (independent library): the area of the flattened loop is within
    # the inscribed-polygon deficit, about (4/3) tol / r relative, of pi r²
    c = circle(0, 0, 65.0)
    poly = c.polygon(0.005)
    assert poly.is_valid
    deficit = (math.pi * 65 ** 2 - poly.area) / (math.pi * 65 ** 2)
    assert 0 < deficit < 1.5 * 0.005 / 65


# -- AreaMoments algebra -------------------------------------------------------

def test_area_moments_algebra():
    a = circle(0, 0, 10).area_moments()
    b = circle(0, 5, 2).area_moments()
    d = a - b
    assert d.area == pytest.approx(math.pi * (100 - 4))
    assert (d + b).sxx == pytest.approx(a.sxx)
    assert sum([a, b]).area == pytest.approx(a.area + b.area)
    assert all(math.isnan(v) for v in AreaMoments().centroid)


# -- prisms ----------------------------------------------------------------------

def test_prism_box_closed_form():
    # closed form: box 0..a x 0..b x z0..z1, density rho:
    # m = rho a b h; ∫z² dm = rho a b (z1³ - z0³)/3; ∫xz dm = rho (a²/2) b (z1² - z0²)/2
    a, b, z0, z1, rho = 4.0, 2.0, 1.0, 3.0, 7.85
    mp = prism(Loop.from_points([(0, 0), (a, 0), (a, b), (0, b)]).area_moments(),
               z0=z0, z1=z1, density_g_cm3=rho)
    r = rho * 1e-3
    assert mp.mass == pytest.approx(r * a * b * (z1 - z0))
    assert mp.volume == pytest.approx(a * b * (z1 - z0))
    assert mp.com == pytest.approx((a / 2, b / 2, (z0 + z1) / 2))
    assert mp.second_moment[2, 2] == pytest.approx(r * a * b * (z1 ** 3 - z0 ** 3) / 3)
    assert mp.second_moment[0, 2] == pytest.approx(r * a * a / 2 * b * (z1 ** 2 - z0 ** 2) / 2)
    assert mp.second_moment[0, 1] == pytest.approx(r * a * a * b * b / 4 * (z1 - z0))


def test_disc_and_annulus_polar_moments():
    # closed form: disc I_z = m r²/2; annulus I_z = m (R² + r²)/2
    R, r, t, rho = 65.0, 14.0, 18.0, 7.85
    disc = prism(circle(0, 0, R).area_moments(), z0=0, z1=t, density_g_cm3=rho)
    assert disc.inertia_z == pytest.approx(disc.mass * R * R / 2, rel=1e-13)
    ring = prism(circle(0, 0, R).area_moments() - circle(0, 0, r).area_moments(),
                 z0=0, z1=t, density_g_cm3=rho)
    assert ring.mass == pytest.approx(rho * 1e-3 * math.pi * (R * R - r * r) * t, rel=1e-13)
    assert ring.inertia_z == pytest.approx(ring.mass * (R * R + r * r) / 2, rel=1e-13)
    # closed form: solid cylinder about a diameter through its centre, m (3r² + h²)/12
    assert disc.inertia_com[0, 0] == pytest.approx(disc.mass * (3 * R * R + t * t) / 12, rel=1e-12)


def test_parallel_axis_theorem_moved_disc():
    # parallel-axis theorem (closed form): a disc moved by d has I_z = m r²/2 + m d²;
    # the prism integrated in place and the centred one moved with
    # MassProps.transformed must agree
    r, t, rho, dx, dy, dz = 7.0, 5.0, 18.05, -12.0, 31.0, 2.0
    in_place = prism(circle(dx, dy, r).area_moments(), z0=dz, z1=dz + t, density_g_cm3=rho)
    centred = prism(circle(0, 0, r).area_moments(), z0=-t / 2, z1=t / 2, density_g_cm3=rho)
    moved = centred.transformed(offset=(dx, dy, dz + t / 2))
    m = in_place.mass
    assert in_place.inertia_z == pytest.approx(m * r * r / 2 + m * (dx * dx + dy * dy), rel=1e-13)
    np.testing.assert_allclose(moved.second_moment, in_place.second_moment, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(moved.first_moment, in_place.first_moment, rtol=1e-13)


def test_prism_negative_for_cw_section():
    # closed form: a clockwise section is a removal: every moment negated
    loop = circle(3, 4, 5)
    a = prism(loop.area_moments(), z0=0, z1=2, density_g_cm3=1.0)
    b = prism(loop.oriented(False).area_moments(), z0=0, z1=2, density_g_cm3=1.0)
    assert b.mass == pytest.approx(-a.mass)
    np.testing.assert_allclose(b.second_moment, -a.second_moment)
    assert isinstance(b, MassProps)


# -- property tests against shapely / trimesh -------------------------------------

def _compare_with_flattened(loop: Loop, tol_rel: float):
    """loop's exact moments vs a very finely flattened shapely polygon
    (shapely area/centroid and trimesh second moments, independent libraries)."""
    exact = loop.oriented(True).area_moments()
    size = math.sqrt(abs(exact.area))
    # the inscribed polygon loses about (2/3) sagitta x arc length of area:
    # a sagitta of 1e-7 area / length keeps that below 1e-7 relative
    poly = loop.polygon(max_chord_mm=1e-7 * abs(exact.area) / loop.length)
    assert poly.is_valid
    assert exact.area == pytest.approx(poly.area, rel=tol_rel)
    c = poly.centroid
    assert exact.centroid[0] == pytest.approx(c.x, abs=tol_rel * (size + abs(c.x)))
    assert exact.centroid[1] == pytest.approx(c.y, abs=tol_rel * (size + abs(c.y)))
    ixx, iyy, ixy = tpoly.second_moments(poly)
    big = max(exact.sxx, exact.syy)
    assert exact.syy == pytest.approx(ixx, abs=tol_rel * big)
    assert exact.sxx == pytest.approx(iyy, abs=tol_rel * big)
    assert exact.sxy == pytest.approx(ixy, abs=tol_rel * big)


coord = st.floats(-50, 50, allow_nan=False)


@settings(max_examples=60, deadline=None)
@given(cx=coord, cy=coord, r=st.floats(0.5, 80), start=st.floats(-360, 360),
       sweep=st.floats(5, 355), ccw=st.booleans())
def test_random_segment_loops_match_flattened(cx, cy, r, start, sweep, ccw):
    # a random arc closed by its chord, either winding
    arc = Arc((cx, cy), r, start, sweep if ccw else -sweep)
    _compare_with_flattened(Loop((arc, Line(arc.end, arc.start))), 1e-5)


@settings(max_examples=60, deadline=None)
@given(cx=coord, cy=coord, w=st.floats(1, 60), h=st.floats(1, 60),
       frac=st.floats(0.05, 0.5), turn=st.floats(0, 360))
def test_random_rounded_rectangles_match_flattened(cx, cy, w, h, frac, turn):
    # a rotated rounded rectangle: four lines, four quarter arcs
    rc = frac * min(w, h)
    corners = [(w / 2 - rc, h / 2 - rc, 0.0), (-w / 2 + rc, h / 2 - rc, 90.0),
               (-w / 2 + rc, -h / 2 + rc, 180.0), (w / 2 - rc, -h / 2 + rc, 270.0)]
    rot = math.radians(turn)
    c, s = math.cos(rot), math.sin(rot)

    def place(x, y):
        return (cx + c * x - s * y, cy + s * x + c * y)

    arcs = [Arc(place(x, y), rc, a + turn, 90.0) for x, y, a in corners]
    segs = []
    for i, a in enumerate(arcs):
        segs.append(a)
        segs.append(Line(a.end, arcs[(i + 1) % 4].start))
    _compare_with_flattened(Loop(tuple(segs)), 1e-5)


@settings(max_examples=60, deadline=None)
@given(pts=st.lists(st.tuples(coord, coord), min_size=3, max_size=12))
def test_random_polygons_match_shapely_and_trimesh(pts):
    # polygons: Green's-theorem sums vs shapely area/centroid and trimesh second moments
    poly = shapely.Polygon(pts).convex_hull
    # collinear or coincident points give no polygon: hypothesis draws again instead of passing them
    assume(poly.geom_type == "Polygon" and poly.area >= 1.0)
    m = polygon_moments(poly)
    assert m.area == pytest.approx(poly.area, rel=1e-9)
    assert m.centroid == pytest.approx((poly.centroid.x, poly.centroid.y), rel=1e-9, abs=1e-9)
    ixx, iyy, ixy = tpoly.second_moments(poly)
    big = max(m.sxx, m.syy)
    assert m.syy == pytest.approx(ixx, abs=1e-9 * big)
    assert m.sxx == pytest.approx(iyy, abs=1e-9 * big)
    assert m.sxy == pytest.approx(ixy, abs=1e-9 * big)
    # the same polygon as a loop of lines, both windings
    loop = Loop.from_points(np.asarray(poly.exterior.coords))
    assert loop.oriented(True).area_moments().sxx == pytest.approx(m.sxx, rel=1e-9)
    assert loop.oriented(False).area_moments().sxx == pytest.approx(-m.sxx, rel=1e-9)


def test_a_loop_pickles_without_what_it_remembered():
    """A rim answers rim_distance from memory the second time (the same figures: a 65 mm circle at
    u = 10 mm is sqrt(65^2 - 10^2) = 64.226 mm out, Pythagoras), and pickles to the same bytes as a fresh
    loop: what it remembers does not travel to the helper process."""
    import pickle

    from geomgen.kinds.radial_maths import rim_distance

    rim = Loop((Arc((0.0, 0.0), 65.0, 0.0, 360.0),))
    fresh = pickle.dumps(Loop((Arc((0.0, 0.0), 65.0, 0.0, 360.0),)))
    first = rim_distance(rim, 30.0, [10.0])
    again = rim_distance(rim, 30.0, [10.0])
    assert first[0] == again[0] == pytest.approx(math.sqrt(65.0 ** 2 - 10.0 ** 2), abs=1e-12)
    again[0] = 0.0                        # an answer handed out is the caller's own copy
    assert rim_distance(rim, 30.0, [10.0])[0] == first[0]
    assert pickle.dumps(rim) == fresh
