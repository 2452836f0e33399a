"""Web sections: parametric and DXF webs, their checks, and `inspect_dxf` accuracy.

Sources beside each check: closed forms (disc area and polar moment
pi r^4/2, the parallel-axis theorem for the pin bore at stroke/2), and an
independent high-resolution computation for `inspect_dxf`: ezdxf's own
`ezdxf.path` module (arcs as 64 Bezier pieces per turn, flattened to 1e-5
mm), joined into faces by shapely.polygonize, area and centroid by shapely,
second moments by trimesh.path.polygons.second_moments.
"""

from __future__ import annotations

import math

import ezdxf
import ezdxf.path
import numpy as np
import pytest
import shapely
import trimesh.path.polygons as tpoly

from geomgen.errors import BadInput
from geomgen.section import inspect_dxf, outline_web, parametric_web

STEEL = 7.85
RHO = STEEL * 1e-3


def new_doc():
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4  # mm
    return doc


# -- parametric web -------------------------------------------------------------

def test_parametric_web_closed_form():
    # closed form: disc minus a pin bore at d = stroke/2 and a main bore at the axis:
    # m = rho t pi (R² - rp² - rm²); U_y = -rho t pi rp² d;
    # I_z = rho t pi [R⁴/2 - (rp⁴/2 + rp² d²) - rm⁴/2] (disc pi r⁴/2, parallel-axis theorem)
    D, t, s, pin, main = 130.0, 18.0, 64.0, 28.0, 20.0
    R, rp, rm, d = D / 2, pin / 2, main / 2, s / 2
    web = parametric_web(diameter=D, thickness=t, density_g_cm3=STEEL, stroke=s, pin_bore=pin, main_bore=main)
    mp = web.massprops()
    assert mp.mass == pytest.approx(RHO * t * math.pi * (R ** 2 - rp ** 2 - rm ** 2), rel=1e-14)
    assert mp.unbalance == pytest.approx((0.0, -RHO * t * math.pi * rp ** 2 * d), rel=1e-13, abs=1e-9)
    iz = RHO * t * math.pi * (R ** 4 / 2 - (rp ** 4 / 2 + rp ** 2 * d ** 2) - rm ** 4 / 2)
    assert mp.inertia_z == pytest.approx(iz, rel=1e-13)
    assert mp.com[2] == pytest.approx(t / 2)
    assert web.pin_center == (0.0, 32.0)
    assert web.rim_radius_max == pytest.approx(R, rel=1e-15)
    assert web.rim_radius_min == pytest.approx(R, rel=1e-15)
    poly = web.polygon()
    assert poly.is_valid and len(poly.interiors) == 2
    # shapely (independent library): the inscribed polygon is slightly smaller
    assert poly.area == pytest.approx(web.area_moments().area, rel=2e-4)
    assert poly.area < web.area_moments().area


@pytest.mark.parametrize("kwargs,match", [
    ({"pin_bore": 70.0}, "past the 65 mm rim"),
    ({"main_bore": 40.0}, "overlap"),
    ({"thickness": 0.0}, r"web\.thickness"),
    ({"density_g_cm3": -1.0}, r"web\.density"),
    ({"stroke": 0.0}, r"engine\.stroke"),
])
def test_parametric_web_bad_input(kwargs, match):
    base = dict(diameter=130.0, thickness=18.0, density_g_cm3=STEEL, stroke=64.0, pin_bore=28.0)
    base.update(kwargs)
    with pytest.raises(BadInput, match=match):
        parametric_web(**base)


# -- DXF webs -------------------------------------------------------------------

def circle_web_dxf(tmp_path, *, pin=None, extra=()):
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_circle((0, 0), 65)
    if pin is not None:
        msp.add_circle((0, 32), pin / 2)
    for c, r in extra:
        msp.add_circle(c, r)
    path = tmp_path / "web.dxf"
    doc.saveas(path)
    return path


@pytest.mark.parametrize("drawn_pin", [None, 28.0])
def test_outline_web_equals_parametric(tmp_path, drawn_pin):
    # two paths to the same section (closed form both): a drawn or a cut pin bore
    path = circle_web_dxf(tmp_path, pin=drawn_pin)
    a = outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28, main_bore=20)
    b = parametric_web(diameter=130, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28, main_bore=20)
    ma, mb = a.massprops(), b.massprops()
    assert ma.mass == pytest.approx(mb.mass, rel=1e-14)
    np.testing.assert_allclose(ma.first_moment, mb.first_moment, rtol=1e-13, atol=1e-8)
    np.testing.assert_allclose(ma.second_moment, mb.second_moment, rtol=1e-13, atol=1e-6)
    assert len(a.bores) == 2


def test_drawn_pin_bore_must_agree(tmp_path):
    path = circle_web_dxf(tmp_path, pin=20.0)
    with pytest.raises(BadInput, match="the DXF says 20 mm, the job says pin_bore = 28 mm"):
        outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28)


def test_pin_bore_outside_the_outline(tmp_path):
    doc = new_doc()
    doc.modelspace().add_circle((0, 0), 30)
    path = tmp_path / "small.dxf"
    doc.saveas(path)
    with pytest.raises(BadInput, match="pin bore .* is not inside the outline"):
        outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28)


def test_circle_near_the_pin_position(tmp_path):
    # a drawing made for another stroke: a circle covering (0, 32) but centred at (0, 30)
    path = circle_web_dxf(tmp_path, extra=[((0, 30), 14)])
    with pytest.raises(BadInput, match="near the pin position"):
        outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28)


def test_bores_crossing_each_other_or_the_rim(tmp_path):
    path = circle_web_dxf(tmp_path, pin=28.0, extra=[((15, 40), 6)])   # overlaps the pin bore
    with pytest.raises(BadInput, match="overlap"):
        outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28)
    path = circle_web_dxf(tmp_path, pin=28.0, extra=[((0, -60), 10)])  # crosses the rim
    with pytest.raises(BadInput, match="crosses the outer loop"):
        outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28)


def test_drawn_main_bore_must_agree(tmp_path):
    path = circle_web_dxf(tmp_path, pin=28.0, extra=[((0, 0), 12)])
    with pytest.raises(BadInput, match="the DXF says 24 mm, the job says main_bore = 20 mm"):
        outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28, main_bore=20)
    web = outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=28, main_bore=24)
    assert len(web.bores) == 2


# -- inspect_dxf accuracy against an independent high-resolution computation -------

def demo_web_dxf(path):
    """An invented demo web: a counterweight half disc, a pin boss joined by
    lines, a bulged kidney slot, an elliptic and a spline lightening hole,
    a drawn pin bore and a mirrored (extrusion -Z) balance hole."""
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), 65, 180, 360)
    msp.add_line((65, 0), (25, 32))
    msp.add_arc((0, 32), 25, 0, 180)
    msp.add_line((-25, 32), (-65, 0))
    msp.add_circle((0, 32), 7)
    msp.add_lwpolyline([(-20, -30, 0), (20, -30, -0.4), (20, -40, 0), (-20, -40, -0.4)], format="xyb", close=True)
    msp.add_ellipse((-38, -20), major_axis=(6, 8), ratio=0.6)
    msp.add_spline(fit_points=[(30, -15), (44, -12), (46, -24), (34, -28), (30, -15)])
    msp.add_circle((-10, -52), 4, dxfattribs={"extrusion": (0, 0, -1)})  # world (10, -52)
    doc.saveas(path)
    return path


def reference_massprops(path, thickness, density):
    """Mass, unbalance, I_z and I_xx from ezdxf.path + shapely + trimesh (no geomgen code)."""
    doc = ezdxf.readfile(path)
    lines = []
    for e in doc.modelspace():
        p = ezdxf.path.make_path(e, segments=64)
        pts = [(v.x, v.y) for v in p.flattening(1e-5, segments=64)]
        lines.append(shapely.set_precision(shapely.LineString(pts), 1e-9))
    faces = list(shapely.polygonize([shapely.union_all(lines)]).geoms)
    web = max(faces, key=lambda f: shapely.Polygon(f.exterior).area)
    rho = density * 1e-3
    a = web.area
    ixx, iyy, _ = tpoly.second_moments(web)   # ∫y² dA, ∫x² dA about the origin
    mass = rho * thickness * a
    unbalance = rho * thickness * a * np.array([web.centroid.x, web.centroid.y])
    inertia_z = rho * thickness * (ixx + iyy)
    # closed form through the thickness: I_xx = rho (t ∫y² dA + A t³/3)
    inertia_xx = rho * (thickness * ixx + a * thickness ** 3 / 3)
    return mass, unbalance, inertia_z, inertia_xx, len(web.interiors)


def test_inspect_dxf_agrees_with_independent_computation(tmp_path):
    path = demo_web_dxf(tmp_path / "demo.dxf")
    mp = inspect_dxf(path, thickness=18.0, density_g_cm3=STEEL)
    mass, unbalance, iz, ixx, holes = reference_massprops(path, 18.0, STEEL)
    assert holes == 5
    # the target: 5e-4 relative in mass, unbalance and inertia
    assert mp.mass == pytest.approx(mass, rel=5e-4)
    assert np.linalg.norm(mp.unbalance - unbalance) <= 5e-4 * np.linalg.norm(unbalance)
    assert mp.inertia_z == pytest.approx(iz, rel=5e-4)
    assert mp.inertia[0, 0] == pytest.approx(ixx, rel=5e-4)
    # the pin-checked path gives the same body (the pin bore is drawn, 14 mm)
    checked = inspect_dxf(path, thickness=18.0, density_g_cm3=STEEL, stroke=64, pin_bore=14)
    assert checked.mass == pytest.approx(mp.mass, rel=1e-14)


def test_inspect_dxf_bad_input(tmp_path):
    path = demo_web_dxf(tmp_path / "demo.dxf")
    with pytest.raises(BadInput, match="--thickness"):
        inspect_dxf(path, thickness=0.0, density_g_cm3=STEEL)
    with pytest.raises(BadInput, match="file not found"):
        inspect_dxf(tmp_path / "none.dxf", thickness=18.0, density_g_cm3=STEEL)


def test_inspect_dxf_does_not_import_cadquery(tmp_path):
    # the design's rule: `inspect FILE.dxf` must not pay for the CAD kernel
    import subprocess
    import sys

    path = demo_web_dxf(tmp_path / "demo.dxf")
    code = ("import sys; from geomgen.section import inspect_dxf; "
            f"m = inspect_dxf({str(path)!r}, thickness=18.0, density_g_cm3=7.85); "
            "print(m.mass, 'cadquery' in sys.modules, 'OCP' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    assert float(out[0]) > 0 and out[1:] == ["False", "False"]


def test_rim_radii_of_the_demo_outline(tmp_path):
    # closed form: the flank line (65, 0) -> (25, 32) passes the axis at
    # |65 * 32| / hypot(40, 32); the farthest rim points are on the 65 mm arc
    path = demo_web_dxf(tmp_path / "demo.dxf")
    web = outline_web(path=path, thickness=18, density_g_cm3=STEEL, stroke=64, pin_bore=14)
    assert web.rim_radius_min == pytest.approx(65 * 32 / math.hypot(40, 32), rel=1e-14)
    assert web.rim_radius_max == pytest.approx(65.0, rel=1e-15)
    assert len(web.bores) == 5
