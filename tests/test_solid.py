"""Web solids against closed forms, and the refusal of bad features.

Closed forms used (each named beside its check):
- cylinder V = pi r^2 h, centroid at mid-height; cone V = pi r^2 h / 3,
  centroid h/4 from the base (Machinery's Handbook, volumes and centres of
  gravity of solids);
- disc / annulus with an off-centre bore: V = t (pi R^2 - pi r^2), first
  moment = -rho t pi r^2 * (bore centre) (composite areas, any statics text);
- annular sector of angle a: area a/2 (ro^2 - ri^2), centroid radius
  2/3 (ro^3 - ri^3)/(ro^2 - ri^2) * sin(a/2)/(a/2) (Machinery's Handbook,
  centre of gravity of a part of a ring).
"""

import math

import numpy as np
import pytest

from geomgen.errors import BadInput
from geomgen.features import Hole, Plug, Pocket
from geomgen.massprops import MassProps
from geomgen.section import parametric_web

from conftest import as_cq

pytestmark = pytest.mark.cad

RHO = 7.85          # web, g/cm^3
RHO_PLUG = 18.0     # plug of another density, g/cm^3 (ASTM B777 class 3 lies 17.75-18.35)
T = 18.0            # mm
D = 130.0           # mm
STROKE = 64.0       # mm
PIN = 28.0          # mm


def section():
    return parametric_web(diameter=D, thickness=T, density_g_cm3=RHO, stroke=STROKE, pin_bore=PIN)


def half_angle_len(d, angle=118.0):
    return 0.5 * d / math.tan(math.radians(0.5 * angle))


def cylinder(x, y, r, z0, z1, rho):
    """Closed form: V = pi r^2 h, centroid (x, y, (z0+z1)/2) (Machinery's Handbook)."""
    v = math.pi * r * r * (z1 - z0)
    return v, np.array([x, y, 0.5 * (z0 + z1)]) * v


def cone(x, y, r, z_base, h, rho):
    """Closed form: V = pi r^2 h / 3, centroid h/4 from the base toward the apex
    (Machinery's Handbook); h signed along z."""
    v = math.pi * r * r * abs(h) / 3.0
    return v, np.array([x, y, z_base + 0.25 * h]) * v


HOLES = [
    Hole(0.0, -40.0, 10.0, 8.0),                                  # blind, outer face, 118 deg point
    Hole(22.0, -38.0, 8.0, 6.0, face="inner"),                    # blind, inner face, point
    Hole(-22.0, -38.0, 8.0, T, through=True),                     # through
    Hole(0.0, -55.0, 6.0, 5.0, point_angle=180.0),                # flat bottom
    Hole(35.0, -20.0, 9.0, 7.0, point_angle=90.0, face="inner"),  # 90 deg point
]
PLUG = Plug(-35.0, -20.0, 12.0, 10.0, material=None, density=RHO_PLUG)
THROUGH_PLUG = Plug(0.0, -25.0, 10.0, T, material=None, density=RHO_PLUG, face="inner")


def removed_moments(features):
    """(volume mm^3, first moment mm^4) of the material the features take away."""
    v_sum, m_sum = 0.0, np.zeros(3)
    for f in features:
        if isinstance(f, Hole):
            r = 0.5 * f.diameter
            if f.through:
                parts = [cylinder(f.x, f.y, r, 0.0, T, RHO)]
            elif f.face == "outer":
                zs = T - f.depth
                parts = [cylinder(f.x, f.y, r, zs, T, RHO)]
                if f.point_length:
                    parts.append(cone(f.x, f.y, r, zs, -f.point_length, RHO))
            else:
                zs = f.depth
                parts = [cylinder(f.x, f.y, r, 0.0, zs, RHO)]
                if f.point_length:
                    parts.append(cone(f.x, f.y, r, zs, f.point_length, RHO))
        else:  # plug bore
            r = 0.5 * f.diameter
            z0, z1 = (T - f.length, T) if f.face == "outer" else (0.0, f.length)
            parts = [cylinder(f.x, f.y, r, z0, z1, RHO)]
        for v, m in parts:
            v_sum += v
            m_sum += m
    return v_sum, m_sum


def plain_web_moments():
    """Closed form: annulus with off-centre pin bore, V = T pi (R^2 - r^2)."""
    big = math.pi * (0.5 * D) ** 2 * T
    bore = math.pi * (0.5 * PIN) ** 2 * T
    return big - bore, np.array([0.0, -bore * 0.5 * STROKE, (big - bore) * 0.5 * T])


@pytest.fixture(scope="module")
def holes_web():
    from geomgen.solid import build_web
    return build_web(section(), HOLES + [PLUG, THROUGH_PLUG], name="a")


def test_plain_web_volume_and_com():
    from geomgen.solid import build_web
    from geomgen.verify import solid_massprops

    web = build_web(section(), [], name="plain")
    v, m1 = plain_web_moments()
    mp = solid_massprops(web.body, RHO)
    assert mp.volume == pytest.approx(v, rel=1e-9)                     # annulus closed form
    assert mp.first_moment == pytest.approx(RHO * 1e-3 * m1, rel=1e-9, abs=1e-6)
    assert mp.unbalance[1] < 0  # pin bore on +Y empties that side: heavy side -Y (contract frame)


def test_holes_and_plugs_volume_and_com_closed_form(holes_web):
    from geomgen.verify import solid_massprops

    v0, m0 = plain_web_moments()
    v_cut, m_cut = removed_moments(HOLES + [PLUG, THROUGH_PLUG])
    body = solid_massprops(holes_web.body, RHO)
    # cylinder + cone closed forms (Machinery's Handbook), to 1e-6 relative
    assert body.volume == pytest.approx(v0 - v_cut, rel=1e-6)
    com_expected = (m0 - m_cut) / (v0 - v_cut)
    assert np.allclose(body.com, com_expected, rtol=0, atol=1e-6 * D)
    # each plug: cylinder pi r^2 L at its own density, centroid mid-length
    for plug, feature in zip(holes_web.plugs, [PLUG, THROUGH_PLUG]):
        mp = solid_massprops(plug.shape, plug.density_g_cm3)
        z0, z1 = (T - feature.length, T) if feature.face == "outer" else (0.0, feature.length)
        v, m = cylinder(feature.x, feature.y, 0.5 * feature.diameter, z0, z1, RHO_PLUG)
        assert mp.volume == pytest.approx(v, rel=1e-9)
        assert mp.mass == pytest.approx(RHO_PLUG * 1e-3 * v, rel=1e-9)
        assert np.allclose(mp.com, m / v, atol=1e-9)


def test_plugs_fill_their_bores_without_overlap(holes_web):
    # OpenCascade boolean common: body and plug share faces but no volume
    for plug in holes_web.plugs:
        assert as_cq(holes_web.body).intersect(as_cq(plug.shape)).Volume() < 1e-6
    # together they are the web with only the holes cut (the bore is filled exactly)
    v0, _ = plain_web_moments()
    v_holes, _ = removed_moments(HOLES)
    total = as_cq(holes_web.body).Volume() + sum(as_cq(p.shape).Volume() for p in holes_web.plugs)
    assert total == pytest.approx(v0 - v_holes, rel=1e-9)


def test_bounding_box_in_mm_and_contract_frame(holes_web):
    import cadquery as cq

    bb = as_cq(holes_web.body).BoundingBox()
    # disc of 130 mm from z = 0 (inner face) to 18 mm (outer face); OCC pads boxes by ~1e-7
    assert (bb.xmin, bb.xmax, bb.ymin, bb.ymax) == pytest.approx((-65, 65, -65, 65), abs=1e-3)
    assert (bb.zmin, bb.zmax) == pytest.approx((0.0, T), abs=1e-3)
    # the pin bore is on +Y: its centre is empty, the mirror point on -Y is web material
    assert not as_cq(holes_web.body).isInside(cq.Vector(0, 0.5 * STROKE, 0.5 * T))
    assert as_cq(holes_web.body).isInside(cq.Vector(0, -0.5 * STROKE + 20, 0.5 * T))
    # the outer-face blind hole opens at z = T and its point stays above the inner face
    h = HOLES[0]
    assert not as_cq(holes_web.body).isInside(cq.Vector(h.x, h.y, T - 0.5 * h.depth))
    assert as_cq(holes_web.body).isInside(cq.Vector(h.x, h.y, T - h.depth - half_angle_len(h.diameter) - 0.5))


def test_kidney_pockets_closed_form_sharp_corners():
    from geomgen.solid import build_web
    from geomgen.verify import solid_massprops

    ri, ro, a0, a1, depth = 40.0, 58.0, 150.0, 210.0, 6.0
    pockets = [Pocket(ri, ro, a0, a1, depth), Pocket(ri, ro, a0, a1, 5.0, face="inner")]
    web = build_web(section(), pockets, name="k")
    a = math.radians(a1 - a0)
    area = 0.5 * a * (ro ** 2 - ri ** 2)
    # ring-sector centroid (Machinery's Handbook); the sector is centred on 180 deg from +Y = -Y
    rc = 2.0 / 3.0 * (ro ** 3 - ri ** 3) / (ro ** 2 - ri ** 2) * math.sin(a / 2) / (a / 2)
    v0, m0 = plain_web_moments()
    v_cut = area * (depth + 5.0)
    m_cut = np.array([0.0, -rc * v_cut, area * depth * (T - depth / 2) + area * 5.0 * 2.5])
    mp = solid_massprops(web.body, RHO)
    assert mp.volume == pytest.approx(v0 - v_cut, rel=1e-6)
    assert np.allclose(mp.com, (m0 - m_cut) / (v0 - v_cut), atol=1e-6 * D)


def test_features_against_feature_massprops():
    """Kidney with corner radii and holes from both faces: the B-rep (OpenCascade)
    against the analytic feature model of geomgen.features, to 1e-6."""
    from geomgen.solid import build_web
    from geomgen.verify import exact_massprops

    feats = [Pocket(48.0, 60.0, 140.0, 220.0, 6.0, corner_radius=4.0),
             Pocket(48.0, 60.0, 230.0, 300.0, 5.0, corner_radius=6.0, face="inner"),
             *HOLES[:3], PLUG]
    web = build_web(section(), feats, name="f")
    predicted = section().massprops() + sum(
        (f.massprops(thickness=T, web_density=RHO) for f in feats), MassProps.zero())
    exact = exact_massprops(web)
    assert exact.mass == pytest.approx(predicted.mass, rel=1e-6)
    assert np.allclose(exact.first_moment, predicted.first_moment, rtol=0, atol=1e-6 * abs(predicted.mass) * D)
    assert exact.inertia_z == pytest.approx(predicted.inertia_z, rel=1e-6)


def test_cleaned_shape_keeps_volume(holes_web):
    from geomgen.solid import build_web

    raw = build_web(section(), HOLES, name="raw", clean=False)
    cleaned = build_web(section(), HOLES, name="clean", clean=True)
    assert as_cq(cleaned.body).isValid()
    assert as_cq(cleaned.body).Volume() == pytest.approx(as_cq(raw.body).Volume(), rel=1e-9)


# -- refusals: checked geometrically with shapely before the kernel is used ----

def test_refuses_rim_break_through():
    from geomgen.solid import check_features

    with pytest.raises(BadInput, match=r"web a: feature 2 \(hole\) breaks through the rim"):
        check_features(section(), [HOLES[0], Hole(0.0, -62.0, 8.0, 5.0)], name="a")


def test_refuses_cut_into_pin_bore():
    from geomgen.solid import check_features

    with pytest.raises(BadInput, match=r"feature 1 \(hole\) cuts into the crankpin bore"):
        check_features(section(), [Hole(0.0, 32.0 - 14.0 - 3.0, 8.0, 5.0)], name="a")


def test_refuses_overlapping_features():
    from geomgen.solid import check_features

    with pytest.raises(BadInput, match=r"feature 1 \(hole\) overlaps feature 2 \(pocket\)"):
        check_features(section(), [Hole(0.0, -50.0, 8.0, 5.0), Pocket(45.0, 58.0, 170.0, 190.0, 4.0)],
                       name="a")


def test_refuses_point_through_far_face_and_reports_smallest_wall():
    from geomgen.solid import check_features

    # 16 mm + 2.9 mm point in an 18 mm web: the point breaks the inner face
    with pytest.raises(BadInput, match="breaks through the inner face"):
        check_features(section(), [Hole(0.0, -40.0, 10.0, 16.0)], name="a")
    # min_wall: two holes 2 mm apart (centres 12 mm, radii 5) pass at 1 mm, fail at 3 mm
    pair = [Hole(0.0, -40.0, 10.0, 5.0), Hole(12.0, -40.0, 10.0, 5.0)]
    assert check_features(section(), pair, name="a", min_wall=1.0) == pytest.approx(2.0, abs=1e-3)
    with pytest.raises(BadInput, match="smallest wall 2 mm"):
        check_features(section(), pair, name="a", min_wall=3.0)


def test_features_on_opposite_faces_may_share_a_footprint():
    from geomgen.solid import check_features

    # 5 mm deep from each face of an 18 mm web: 8 mm of floor between them
    pair = [Pocket(40.0, 58.0, 150.0, 210.0, 5.0), Pocket(40.0, 58.0, 150.0, 210.0, 5.0, face="inner")]
    assert check_features(section(), pair, name="a") == pytest.approx(7.0, abs=1e-3)  # rim wall 65-58


def test_modules_import_no_kernel():
    """solid/export/verify import cadquery, OCP and trimesh only inside functions
    (`geomgen study` must not load the kernel, README)."""
    import subprocess
    import sys

    code = ("import sys, geomgen.solid, geomgen.export, geomgen.verify; "
            "print(sorted(m for m in ('cadquery', 'OCP', 'trimesh') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


def test_pin_wall_guards_the_press_fit():
    from geomgen.solid import check_features

    # pin bore: centre (0, 32), radius 14 -> lowest point y = 18; hole radius 4 at y = 10: 4 mm wall
    hole = [Hole(0.0, 10.0, 8.0, 5.0)]
    assert check_features(section(), hole, name="a", pin_wall=3.0) == pytest.approx(4.0, abs=1e-3)
    with pytest.raises(BadInput, match=r"too close to the crankpin bore.*smallest wall 4 mm, allowed >= 6 mm"):
        check_features(section(), hole, name="a", pin_wall=6.0)


def test_outline_of_lines_and_arcs_with_main_bore():
    """A non-circular outline (lines and a 180-degree arc) with pin and main
    bores: B-rep (OpenCascade) volume and first moment against Green's theorem
    on the exact loops (geomgen.loops) — two independent integrations."""
    from geomgen.loops import Arc, Line, Loop, circle
    from geomgen.section import WebSection
    from geomgen.solid import build_web
    from geomgen.verify import solid_massprops

    # a "D": flat top at y = 50 from x = -40 to 40, sides down to y = 0, half circle below
    outer = Loop((Line((40, 0), (40, 50)), Line((40, 50), (-40, 50)), Line((-40, 50), (-40, 0)),
                  Arc((0, 0), 40.0, 180.0, 180.0)))
    sec = WebSection(outer, (circle(0, 30, 10), circle(0, 0, 8)), (0, 30), 20.0, 15.0, RHO, 16.0)
    web = build_web(sec, [Hole(0.0, -25.0, 8.0, 6.0)], name="d")
    mp = solid_massprops(web.body, RHO)
    expected = sec.massprops()
    # the hole in this 15 mm web: cylinder from z = 9 to 15 and its point cone below z = 9
    r, L = 4.0, half_angle_len(8.0)
    v_cyl, m_cyl = cylinder(0.0, -25.0, r, 9.0, 15.0, RHO)
    v_cone, m_cone = cone(0.0, -25.0, r, 9.0, -L, RHO)
    assert mp.volume == pytest.approx(expected.volume - v_cyl - v_cone, rel=1e-9)
    m1 = expected.first_moment / (RHO * 1e-3) - m_cyl - m_cone
    assert np.allclose(mp.first_moment / (RHO * 1e-3), m1, rtol=0, atol=1e-6 * abs(m1).max())
