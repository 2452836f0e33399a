"""Analytic mass properties, footprints and depth ranges of holes, pockets and plugs.

Sources named beside each check: Machinery's Handbook (cone centroid h/4
from the base; cone moment of inertia about its axis 3 m r²/10), closed
forms (cylinder volume and moments, annular-sector area and centroid by
integration), shapely as an independent library (a kidney pocket with
rounded corners is the morphological opening of the sharp annular sector by
a disc of the corner radius: buffer(-rc).buffer(rc)), and ASTM B777 via
geomgen.materials for the plug's default density.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from geomgen.errors import BadInput
from geomgen.features import (
    Hole,
    Plug,
    Pocket,
    cone_massprops,
    cylinder_massprops,
    feature_from_table,
    feature_massprops,
    footprint,
    footprint_polygon,
    kidney_loop,
    z_range,
)
from geomgen.features import plug_density_of as plug_density
from geomgen.loops import circle
from geomgen.materials import MATERIALS
from geomgen.section import WebSection

STEEL = 7.85
RHO = STEEL * 1e-3  # g/mm^3
T = 18.0


# -- bodies --------------------------------------------------------------------

def test_cone_centroid_and_inertia_machinerys_handbook():
    # Machinery's Handbook: a right cone's centroid lies h/4 from the base;
    # its moment of inertia about its axis is 3 m r²/10; about a base diameter
    # m (3 r²/20 + h²/10) (closed form: disc of radius r(1 - z/h) integrated)
    r, h = 6.0, 9.0
    cone = cone_massprops(radius=r, height=h, density_g_cm3=STEEL)
    assert cone.volume == pytest.approx(math.pi * r * r * h / 3, rel=1e-15)
    assert cone.com == pytest.approx((0, 0, h / 4), abs=1e-15)
    assert cone.inertia_z == pytest.approx(0.3 * cone.mass * r * r, rel=1e-14)
    assert cone.inertia[0, 0] == pytest.approx(cone.mass * (3 * r * r / 20 + h * h / 10), rel=1e-14)


def test_cylinder_closed_form():
    # closed form: cylinder I_z = m r²/2; about a diameter through its centroid m (3r² + h²)/12
    r, h = 5.0, 12.0
    cyl = cylinder_massprops(radius=r, height=h, density_g_cm3=STEEL)
    assert cyl.mass == pytest.approx(RHO * math.pi * r * r * h, rel=1e-15)
    assert cyl.inertia_z == pytest.approx(cyl.mass * r * r / 2, rel=1e-14)
    assert cyl.inertia_com[0, 0] == pytest.approx(cyl.mass * (3 * r * r + h * h) / 12, rel=1e-13)


# -- holes ---------------------------------------------------------------------

def test_hole_with_118_degree_point():
    # closed form: cylinder pi r² d plus cone pi r² p / 3 with point length
    # p = r / tan(59 deg) for a 118 deg point (common practice drill angle)
    d, depth = 10.0, 8.0
    hole = Hole(x=3.0, y=-40.0, diameter=d, depth=depth)
    p = 5.0 / math.tan(math.radians(59.0))
    assert hole.point_length == pytest.approx(p, rel=1e-15)
    mp = feature_massprops(hole, thickness=T, web_density=STEEL)
    v = math.pi * 25 * depth + math.pi * 25 * p / 3
    assert mp.mass == pytest.approx(-RHO * v, rel=1e-14)
    assert mp.volume == pytest.approx(-v, rel=1e-14)
    # closed form: centroid z = (V_cyl (T - d/2) + V_cone (T - d - p/4)) / V
    # (the cone's h/4 from its base, Machinery's Handbook)
    v_cyl, v_cone = math.pi * 25 * depth, math.pi * 25 * p / 3
    z = (v_cyl * (T - depth / 2) + v_cone * (T - depth - p / 4)) / v
    assert mp.com == pytest.approx((3.0, -40.0, z), rel=1e-13)
    assert mp.unbalance == pytest.approx((-RHO * v * 3.0, RHO * v * 40.0), rel=1e-13)
    assert z_range(hole, T) == pytest.approx((T - depth - p, T))


def test_drill_point_is_a_cone_at_quarter_height():
    # Machinery's Handbook: cone centroid h/4 from the base.  Pointed minus
    # flat-bottomed hole of the same depth = the point cone alone, base at
    # the shoulder (z = T - depth for an outer-face hole), apex further down.
    pointed = Hole(x=0, y=-30, diameter=12, depth=6, point_angle=118)
    flat = Hole(x=0, y=-30, diameter=12, depth=6, point_angle=180)
    cone = feature_massprops(flat, thickness=T, web_density=STEEL) - \
        feature_massprops(pointed, thickness=T, web_density=STEEL)
    h = pointed.point_length
    assert flat.point_length == 0.0
    assert cone.mass == pytest.approx(RHO * math.pi * 36 * h / 3, rel=1e-13)
    assert cone.com[2] == pytest.approx(T - 6 - h / 4, rel=1e-13)
    # Machinery's Handbook: I about the cone axis = 3 m r²/10, moved to the hole axis
    # by the parallel-axis theorem (closed form): + m d², d = 30 mm
    assert cone.inertia_z == pytest.approx(cone.mass * (0.3 * 36 + 900), rel=1e-12)


def test_inner_face_hole_mirrors_outer_face_hole():
    # closed form: z -> T - z swaps the faces; mass and unbalance unchanged
    outer = Hole(x=-5, y=-35, diameter=8, depth=7, face="outer")
    inner = Hole(x=-5, y=-35, diameter=8, depth=7, face="inner")
    a = feature_massprops(outer, thickness=T, web_density=STEEL)
    b = feature_massprops(inner, thickness=T, web_density=STEEL)
    assert b.mass == pytest.approx(a.mass)
    assert b.com[2] == pytest.approx(T - a.com[2], rel=1e-13)
    assert b.unbalance == pytest.approx(a.unbalance)
    assert b.inertia_z == pytest.approx(a.inertia_z)
    assert z_range(inner, T) == pytest.approx((0.0, 7 + inner.point_length))


def test_through_hole_equals_a_bore_in_the_section():
    # two independent paths, both closed form: a through hole's cylinder
    # (feature_massprops) vs the same circle cut from the web section (Green's theorem)
    hole = feature_from_table({"kind": "hole", "x": 10.0, "y": -38.0, "diameter": 11.0, "through": True},
                              where="test", thickness=T)
    assert hole.point_length == 0.0 and z_range(hole, T) == (0.0, T)
    rim = circle(0, 0, 65)
    web = WebSection(rim, (), (0, 32), 28.0, T, STEEL)
    drilled = WebSection(rim, (circle(10, -38, 5.5),), (0, 32), 28.0, T, STEEL)
    with_feature = web.massprops() + feature_massprops(hole, thickness=T, web_density=STEEL)
    ref = drilled.massprops()
    assert with_feature.mass == pytest.approx(ref.mass, rel=1e-13)
    np.testing.assert_allclose(with_feature.first_moment, ref.first_moment, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(with_feature.second_moment, ref.second_moment, rtol=1e-12, atol=1e-6)


# -- plugs ---------------------------------------------------------------------

def test_plug_adds_the_density_difference():
    # closed form: a flush plug changes the mass by (rho_plug - rho_web) pi r² L;
    # its default material W-alloy-class-3 (ASTM B777, via geomgen.materials)
    plug = Plug(x=0, y=-50, diameter=12, length=T)
    rho_p = plug_density(plug)
    assert rho_p == MATERIALS["W-alloy-class-3"].density
    assert 17.75 <= rho_p <= 18.35  # ASTM B777 class 3 density range
    mp = feature_massprops(plug, thickness=T, web_density=STEEL)
    v = math.pi * 36 * T
    assert mp.mass == pytest.approx((rho_p - STEEL) * 1e-3 * v, rel=1e-14)
    assert mp.volume == 0.0  # filled flush: the web keeps its volume
    assert mp.com == pytest.approx((0, -50, T / 2), rel=1e-13)
    # closed form: disc of the difference density, I_z = m (r²/2 + d²)
    assert mp.inertia_z == pytest.approx(mp.mass * (18 + 2500), rel=1e-13)


def test_plug_density_given_and_override():
    plug = Plug(x=0, y=-50, diameter=10, length=8, material=None, density=17.0, face="inner")
    assert plug_density(plug) == 17.0
    mp = feature_massprops(plug, thickness=T, web_density=STEEL, plug_density=18.5)
    # closed form: (18.5 - 7.85) g/cm³ x pi 25 x 8 mm³, centroid 4 mm above the inner face
    assert mp.mass == pytest.approx((18.5 - STEEL) * 1e-3 * math.pi * 25 * 8, rel=1e-14)
    assert mp.com[2] == pytest.approx(4.0)
    assert z_range(plug, T) == (0.0, 8.0)
    with pytest.raises(BadInput, match="unknown material"):
        plug_density(Plug(x=0, y=-50, diameter=10, length=8, material="unobtainium"))


# -- pockets -------------------------------------------------------------------

def _rounded_sector_reference(ri, ro, a0, a1, rc, quad_segs=2048):
    """An independent shapely construction of the rounded kidney (angles from +Y, ccw).

    Rounding every convex corner of the sharp sector with radius rc is its
    morphological opening by a disc of radius rc: the union of all such
    discs inside it.  The erosion (centres of those discs) is built from set
    operations only, the points at least rc from every edge of the sector:
    the annulus ri + rc .. ro - rc, inside the wedge, outside the rc-buffer
    of both radial edges; then dilated by rc (a positive buffer).  (A
    negative shapely buffer of a densely sampled concave arc was seen here to
    eat far too much, so none is used.)
    """
    t0, t1 = math.radians(a0 + 90.0), math.radians(a1 + 90.0)
    far = 10.0 * ro
    ang = np.linspace(t0, t1, 720)
    wedge = shapely.Polygon([(0.0, 0.0)] + [(far * math.cos(t), far * math.sin(t)) for t in ang])
    centres = shapely.Point(0, 0).buffer(ro - rc, quad_segs=quad_segs).intersection(wedge)
    if ri > 0:
        centres = centres.difference(shapely.Point(0, 0).buffer(ri + rc, quad_segs=quad_segs))
    if rc <= 0:
        return centres
    for t in (t0, t1):
        edge = shapely.LineString([(ri * math.cos(t), ri * math.sin(t)), (ro * math.cos(t), ro * math.sin(t))])
        centres = centres.difference(edge.buffer(rc, quad_segs=quad_segs))
    return centres.buffer(rc, quad_segs=quad_segs)


def test_sharp_kidney_closed_form():
    # closed form (integration in polar coordinates): annular sector of half
    # angle alpha: A = alpha (R² - r²), centroid 2 sin(alpha) (R³ - r³) / (3 alpha (R² - r²))
    # from the centre, on its bisector; here centred on -Y (counterweight side)
    ri, ro, a0, a1 = 22.0, 55.0, 140.0, 220.0
    alpha = math.radians(40.0)
    m = kidney_loop(r_inner=ri, r_outer=ro, angle_start=a0, angle_end=a1).area_moments()
    assert m.area == pytest.approx(alpha * (ro ** 2 - ri ** 2), rel=1e-13)
    dist = 2 * math.sin(alpha) * (ro ** 3 - ri ** 3) / (3 * alpha * (ro ** 2 - ri ** 2))
    assert m.centroid == pytest.approx((0.0, -dist), rel=1e-12, abs=1e-12)
    # closed form: polar moment alpha (R⁴ - r⁴)/2
    assert m.polar == pytest.approx(alpha * (ro ** 4 - ri ** 4) / 2, rel=1e-13)


@pytest.mark.parametrize("ri,ro,a0,a1,rc", [
    (22.0, 55.0, 140.0, 220.0, 5.0),
    (30.0, 60.0, 100.0, 300.0, 14.5),      # wide pocket, corners nearly meeting mid-wall
    (10.0, 50.0, -30.0, 30.0, 3.0),        # across +Y (angle wrap)
    (0.0, 50.0, 150.0, 210.0, 4.0),        # sector to the axis, apex rounded
])
def test_rounded_kidney_against_shapely_opening(ri, ro, a0, a1, rc):
    # shapely (independent library): rounding every convex corner of the sharp
    # sector with radius rc is its opening by a disc of radius rc (see the reference's notes)
    exact = kidney_loop(r_inner=ri, r_outer=ro, angle_start=a0, angle_end=a1, corner_radius=rc)
    assert exact.is_ccw
    ref = _rounded_sector_reference(ri, ro, a0, a1, rc)
    m = exact.area_moments()
    # 1e-5: the reference itself moves by about 3e-6 between quad_segs 1024 and 4096
    assert m.area == pytest.approx(ref.area, rel=1e-5)
    scale = math.sqrt(ref.area)
    assert m.centroid[0] == pytest.approx(ref.centroid.x, abs=1e-5 * scale)
    assert m.centroid[1] == pytest.approx(ref.centroid.y, abs=1e-5 * scale)
    # the loop is tangent-continuous: its polygon is valid and equal to the opening
    poly = footprint_polygon(Pocket(r_inner=ri, r_outer=ro, angle_start=a0, angle_end=a1,
                                    depth=5, corner_radius=rc), 1e-4)
    assert poly.is_valid
    assert poly.symmetric_difference(ref).area < 1e-4 * ref.area


def test_slot_kidney_closed_form():
    # closed form (Pappus, a disc swept along an arc): with corner_radius =
    # half the width the kidney is a curved slot, the disc of radius w/2 swept
    # along the mid arc between the end centres: A = L w + pi (w/2)², L =
    # r_mid (span - 2 delta), delta = asin((w/2) / r_mid)
    ri, ro, span = 30.0, 60.0, 200.0
    w, rm = ro - ri, 0.5 * (ri + ro)
    delta = math.asin(0.5 * w / rm)
    loop = kidney_loop(r_inner=ri, r_outer=ro, angle_start=100, angle_end=100 + span, corner_radius=w / 2)
    assert not any(type(s).__name__ == "Line" for s in loop.segments)  # fillets meet: no radial lines
    area = rm * (math.radians(span) - 2 * delta) * w + math.pi * (w / 2) ** 2
    assert loop.area_moments().area == pytest.approx(area, rel=1e-13)


def test_pocket_massprops_is_a_prism_of_its_footprint():
    # closed form: a flat-floored pocket of depth d from the outer face removes
    # rho A d with its centroid at z = T - d/2 and the footprint's centroid in plan
    pocket = Pocket(r_inner=20, r_outer=50, angle_start=150, angle_end=210, depth=5, corner_radius=4)
    a = footprint(pocket).area_moments()
    mp = feature_massprops(pocket, thickness=T, web_density=STEEL)
    assert mp.mass == pytest.approx(-RHO * a.area * 5, rel=1e-14)
    assert mp.com == pytest.approx((a.centroid[0], a.centroid[1], T - 2.5), rel=1e-12, abs=1e-12)
    assert z_range(pocket, T) == (T - 5, T)
    inner = Pocket(r_inner=20, r_outer=50, angle_start=150, angle_end=210, depth=5, corner_radius=4,
                   face="inner")
    assert feature_massprops(inner, thickness=T, web_density=STEEL).com[2] == pytest.approx(2.5)


def test_pocket_corner_too_big_for_its_span():
    with pytest.raises(BadInput, match="corner_radius"):
        kidney_loop(r_inner=40, r_outer=60, angle_start=178, angle_end=182, corner_radius=9)


@settings(max_examples=25, deadline=None)
@given(ri=st.floats(5, 40), width=st.floats(5, 30), start=st.floats(-180, 180),
       span=st.floats(30, 300), frac=st.floats(0.0, 0.95))
def test_random_kidneys_match_shapely_opening(ri, width, start, span, frac):
    # shapely (independent library): opening of the sharp sector by the corner disc
    ro = ri + width
    rc = frac * width / 2
    # the corners must fit the span (else the kidney is refused)
    assume(2 * math.asin(rc / (ro - rc)) < math.radians(span) * 0.9
           and 2 * math.asin(rc / (ri + rc)) < math.radians(span) * 0.9)
    exact = kidney_loop(r_inner=ri, r_outer=ro, angle_start=start, angle_end=start + span,
                        corner_radius=rc).area_moments()
    # shapely's buffer by a subnormal radius (hypothesis tries 5e-324) takes tens of seconds; a corner under
    # 1e-6 mm changes the area by under 1e-12 mm^2, far inside the tolerance, so the sharp sector stands for it
    ref = _rounded_sector_reference(ri, ro, start, start + span, rc if rc >= 1e-6 else 0.0, quad_segs=1024)
    assert exact.area == pytest.approx(ref.area, rel=2e-5)
    scale = math.sqrt(ref.area)
    assert exact.centroid[0] == pytest.approx(ref.centroid.x, abs=2e-5 * scale)
    assert exact.centroid[1] == pytest.approx(ref.centroid.y, abs=2e-5 * scale)


def test_hole_footprint_is_its_circle():
    # closed form: pi r²
    hole = Hole(x=1, y=-30, diameter=10, depth=5)
    assert footprint(hole).area_moments().area == pytest.approx(math.pi * 25, rel=1e-15)
    assert footprint_polygon(hole).area == pytest.approx(math.pi * 25, rel=2e-3)
    assert footprint(hole).as_circle() == pytest.approx((1, -30, 5))
