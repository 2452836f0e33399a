"""Closed outlines read from DXF drawings written here with ezdxf.

Sources beside each check: closed forms (rectangle, circle, stadium,
ellipse pi a b), Machinery's Handbook (semicircle and semi-ellipse centroid
4 r / (3 pi) from the diameter), and ezdxf's own `ezdxf.path` module as a
second, independent code path through the drawing (it converts arcs to
Bezier curves and undoes the OCS itself) for the spline and the mirrored
arcs.
"""

from __future__ import annotations

import math

import ezdxf
import ezdxf.path
import pytest
import shapely

from geomgen.dxf_outline import read_outline
from geomgen.errors import BadInput


def new_doc(insunits=4):
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = insunits  # ezdxf.new() would say metres
    return doc


def save(doc, tmp_path, name="web.dxf"):
    path = tmp_path / name
    doc.saveas(path)
    return path


def rect_lines(msp, x0, y0, x1, y1):
    pts = [(x0, y0), (x1, y0), (x1, y1), (x0, y1)]
    for i in range(4):
        msp.add_line(pts[i], pts[(i + 1) % 4])


def reference_polygon(path):
    """Area of the drawing's only closed curve set, through ezdxf.path (independent of geomgen)."""
    doc = ezdxf.readfile(path)
    lines = []
    for e in doc.modelspace():
        p = ezdxf.path.make_path(e)
        pts = [(v.x, v.y) for v in p.flattening(1e-6, segments=64)]
        # snap to a 1e-9 mm grid so that ends meeting to 1e-14 are one node
        lines.append(shapely.set_precision(shapely.LineString(pts), 1e-9))
    polys = list(shapely.polygonize([shapely.union_all(lines)]).geoms)
    return max(polys, key=lambda q: q.area)


# -- each entity kind ------------------------------------------------------------

def test_lines_rectangle(tmp_path):
    # closed form: 40 x 20 rectangle, area 800, centroid at its middle
    doc = new_doc()
    rect_lines(doc.modelspace(), -10, -30, 30, -10)
    out = read_outline(save(doc, tmp_path))
    m = out.outer.area_moments()
    assert out.inner == ()
    assert m.area == pytest.approx(800.0, rel=1e-15)
    assert m.centroid == pytest.approx((10.0, -20.0), rel=1e-15)
    assert out.outer.is_ccw and out.mm_per_unit == 1.0


def test_arc_and_line_semicircle(tmp_path):
    # Machinery's Handbook: semicircle area pi r²/2, centroid 4 r / (3 pi) from the diameter
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), 30, 180, 360)   # lower half: the counterweight side
    msp.add_line((-30, 0), (30, 0))
    m = read_outline(save(doc, tmp_path)).outer.area_moments()
    assert m.area == pytest.approx(math.pi * 900 / 2, rel=1e-14)
    assert m.centroid[1] == pytest.approx(-4 * 30 / (3 * math.pi), rel=1e-13)


def test_circle_with_inner_circle(tmp_path):
    # closed form: pi R², pi r²; the inner circle is an inner loop
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_circle((0, 0), 65)
    msp.add_circle((0, 32), 14)
    out = read_outline(save(doc, tmp_path))
    assert out.outer.area_moments().area == pytest.approx(math.pi * 65 ** 2, rel=1e-15)
    assert len(out.inner) == 1
    assert out.inner[0].as_circle() == pytest.approx((0, 32, 14))


@pytest.mark.parametrize("reverse", [False, True])
def test_lwpolyline_bulges_stadium(tmp_path, reverse):
    # closed form: stadium = 40 x 20 rectangle + two semicircles of radius 10:
    # area 800 + 100 pi; drawn ccw (bulge +1) or cw (bulge -1), same region
    pts = [(-20, -10, 0), (20, -10, 1), (20, 10, 0), (-20, 10, 1)]
    if reverse:
        # the same outline walked backwards: bulge of the segment i -> i-1 is -bulge(i-1)
        order = pts[::-1]
        pts = [(x, y, -order[(k + 1) % 4][2]) for k, (x, y, _) in enumerate(order)]
    doc = new_doc()
    doc.modelspace().add_lwpolyline(pts, format="xyb", close=True)
    out = read_outline(save(doc, tmp_path))
    m = out.outer.area_moments()
    assert m.area == pytest.approx(800 + 100 * math.pi, rel=1e-14)
    assert m.centroid == pytest.approx((0, 0), abs=1e-12)
    # exact arcs are kept (not flattened)
    assert sum(type(s).__name__ == "Arc" for s in out.outer.segments) == 2


def test_spline_closed_by_a_line(tmp_path):
    # ezdxf.path (independent code path): the same spline flattened to 1e-6 mm;
    # area within 1e-5 relative (the accuracy target for flattened curves)
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_spline(fit_points=[(-40, 0), (-30, -35), (0, -55), (30, -35), (40, 0)])
    msp.add_line((40, 0), (-40, 0))
    path = save(doc, tmp_path)
    m = read_outline(path).outer.area_moments()
    ref = reference_polygon(path)
    assert m.area == pytest.approx(ref.area, rel=1e-5)
    assert m.centroid[1] == pytest.approx(ref.centroid.y, rel=1e-5)


def test_closed_spline(tmp_path):
    doc = new_doc()
    # a spline through points that ends where it starts (closed by its fit points)
    doc.modelspace().add_spline(fit_points=[(0, -60), (50, -30), (40, 30), (-40, 30), (-50, -30), (0, -60)])
    path = save(doc, tmp_path)
    m = read_outline(path).outer.area_moments()
    ref = reference_polygon(path)
    # ezdxf.path (independent code path), 1e-5 relative
    assert m.area == pytest.approx(ref.area, rel=1e-5)


def test_full_ellipse(tmp_path):
    # closed form: ellipse area pi a b
    doc = new_doc()
    doc.modelspace().add_ellipse((5, -10), major_axis=(40, 0), ratio=25 / 40)
    m = read_outline(save(doc, tmp_path)).outer.area_moments()
    assert m.area == pytest.approx(math.pi * 40 * 25, rel=1e-6)
    assert m.centroid == pytest.approx((5, -10), abs=1e-6)


def test_half_ellipse_and_line(tmp_path):
    # Machinery's Handbook: semi-ellipse area pi a b / 2, centroid 4 b / (3 pi) from the major axis
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_ellipse((0, 0), major_axis=(40, 0), ratio=0.5, start_param=math.pi, end_param=2 * math.pi)
    msp.add_line((-40, 0), (40, 0))
    m = read_outline(save(doc, tmp_path)).outer.area_moments()
    assert m.area == pytest.approx(math.pi * 40 * 20 / 2, rel=1e-6)
    assert m.centroid[1] == pytest.approx(-4 * 20 / (3 * math.pi), rel=1e-6)


# -- mirrored arcs (extrusion -Z) --------------------------------------------------

def test_mirrored_arc_lands_where_drawn(tmp_path):
    # OCS with extrusion (0, 0, -1): x is reversed (DXF arbitrary axis algorithm),
    # so centre (10, 0) is at (-10, 0) in the world; the upper half disc of radius 5:
    # Machinery's Handbook centroid 4 r / (3 pi) above the diameter
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((10, 0), 5, 0, 180, dxfattribs={"extrusion": (0, 0, -1)})
    msp.add_line((-15, 0), (-5, 0))
    path = save(doc, tmp_path)
    m = read_outline(path).outer.area_moments()
    assert m.area == pytest.approx(math.pi * 25 / 2, rel=1e-14)
    assert m.centroid == pytest.approx((-10.0, 4 * 5 / (3 * math.pi)), rel=1e-13)
    ref = reference_polygon(path)  # ezdxf.path undoes the OCS on its own
    # ezdxf.path draws arcs as cubic Beziers (radial error ~2.7e-4 r): 0.01 mm
    assert (ref.centroid.x, ref.centroid.y) == pytest.approx(m.centroid, abs=0.01)


def test_mirrored_circle_and_polyline(tmp_path):
    # the DXF arbitrary axis algorithm: extrusion -Z maps OCS (x, y) to world (-x, y)
    doc = new_doc()
    msp = doc.modelspace()
    mirrored = {"extrusion": (0, 0, -1)}
    msp.add_lwpolyline([(-20, -10, 0), (20, -10, 1), (20, 10, 0), (-20, 10, 1)], format="xyb",
                       close=True, dxfattribs=mirrored)  # stadium, symmetric: same place
    msp.add_circle((15, 0), 4, dxfattribs=mirrored)      # OCS (15, 0) -> world (-15, 0)
    out = read_outline(save(doc, tmp_path))
    assert out.outer.area_moments().area == pytest.approx(800 + 100 * math.pi, rel=1e-14)
    assert out.inner[0].as_circle() == pytest.approx((-15, 0, 4))


# -- gaps ------------------------------------------------------------------------

def test_a_1e6_gap_closes(tmp_path):
    # closed form: the 40 x 20 rectangle with one corner 1e-6 mm apart
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_line((0, 0), (40, 0))
    msp.add_line((40, 0), (40, 20))
    msp.add_line((40, 20 + 1e-6), (0, 20))
    msp.add_line((0, 20), (0, 0))
    m = read_outline(save(doc, tmp_path)).outer.area_moments()
    assert m.area == pytest.approx(800.0, rel=1e-7)


@pytest.mark.parametrize("offset", [(0, 1e-6), (1e-6, 0)])
def test_a_1e6_gap_between_two_arcs_closes(tmp_path, offset):
    # closed form: a circle of radius 10 drawn as two half arcs that miss by 1e-6,
    # across (0, 1e-6: the arcs cross by 5e-14 mm there) or along the joint
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), 10, 0, 180)
    msp.add_arc(offset, 10, 180, 360)
    m = read_outline(save(doc, tmp_path)).outer.area_moments()
    assert m.area == pytest.approx(math.pi * 100, rel=1e-7)


def test_open_loop_names_gap_and_place(tmp_path):
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_line((0, 0), (40, 0))
    msp.add_line((40, 0), (40, 20))
    msp.add_line((40, 20.5), (0, 20))
    msp.add_line((0, 20), (0, 0))
    with pytest.raises(BadInput, match=r"open loop: a gap of 0\.5 mm between \(40, 20(\.5)?\) and \(40, 20(\.5)?\)"):
        read_outline(save(doc, tmp_path))


def test_crossing_loop_says_where(tmp_path):
    # a bow tie crosses itself at (5, 5) (closed form: the diagonals' intersection)
    doc = new_doc()
    msp = doc.modelspace()
    for a, b in [((0, 0), (10, 10)), ((10, 10), (10, 0)), ((10, 0), (0, 10)), ((0, 10), (0, 0))]:
        msp.add_line(a, b)
    with pytest.raises(BadInput, match=r"self-crossing loop \(Self-intersection\[5 5\]\)"):
        read_outline(save(doc, tmp_path))


def test_two_outer_loops(tmp_path):
    doc = new_doc()
    msp = doc.modelspace()
    rect_lines(msp, 0, 0, 10, 10)
    msp.add_circle((50, 0), 5)
    with pytest.raises(BadInput, match="two outer loops"):
        read_outline(save(doc, tmp_path))


def test_three_ends_at_one_point(tmp_path):
    doc = new_doc()
    msp = doc.modelspace()
    rect_lines(msp, 0, 0, 10, 10)
    msp.add_line((0, 0), (5, 5))
    with pytest.raises(BadInput, match=r"ends meet at \(0, 0\)|open loop"):
        read_outline(save(doc, tmp_path))


def test_island_inside_a_bore(tmp_path):
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_circle((0, 0), 60)
    msp.add_circle((0, -30), 10)
    msp.add_circle((0, -30), 4)
    with pytest.raises(BadInput, match="islands"):
        read_outline(save(doc, tmp_path))


def test_no_closed_loop(tmp_path):
    doc = new_doc()
    doc.modelspace().add_text("web")
    doc.modelspace().add_point((1, 2))
    with pytest.raises(BadInput, match="no closed outline"):
        read_outline(save(doc, tmp_path))


def test_missing_and_broken_files(tmp_path):
    with pytest.raises(BadInput, match="file not found"):
        read_outline(tmp_path / "nope.dxf")
    bad = tmp_path / "bad.dxf"
    bad.write_text("this is not a drawing\n")
    with pytest.raises(BadInput, match="not a readable DXF"):
        read_outline(bad)


# -- units -----------------------------------------------------------------------

def test_inch_drawing_is_scaled(tmp_path):
    # closed form: 1 in = 25.4 mm (exact, NIST SP 811); 2 x 1 in rectangle = 50.8 x 25.4 mm
    doc = new_doc(insunits=1)
    rect_lines(doc.modelspace(), 0, 0, 2, 1)
    out = read_outline(save(doc, tmp_path))
    assert out.mm_per_unit == 25.4
    assert out.outer.area_moments().area == pytest.approx(50.8 * 25.4, rel=1e-15)


def test_metre_drawing_is_scaled(tmp_path):
    # closed form: $INSUNITS 6 = metres; a 0.065 m radius circle is 65 mm
    doc = new_doc(insunits=6)
    doc.modelspace().add_circle((0, 0), 0.065)
    out = read_outline(save(doc, tmp_path))
    assert out.outer.as_circle() == pytest.approx((0, 0, 65.0))


def test_unitless_drawing_needs_units(tmp_path):
    doc = new_doc(insunits=0)
    rect_lines(doc.modelspace(), 0, 0, 2, 1)
    path = save(doc, tmp_path)
    with pytest.raises(BadInput, match="unitless.*outline_units"):
        read_outline(path)
    # closed form: 1 in = 25.4 mm
    assert read_outline(path, units="in").outer.area_moments().area == pytest.approx(50.8 * 25.4)
    assert read_outline(path, units="mm").outer.area_moments().area == pytest.approx(2.0)
    with pytest.raises(BadInput, match="outline_units"):
        read_outline(path, units="furlong")
