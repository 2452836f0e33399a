"""DXF outlines as CAD programs write them: SPLINE rims (fit points, closed periodic, rational), ELLIPSE
bores, and the small gaps of CAD exports joined within the job key `outline_gap`.

Every drawing is invented and written here with ezdxf.  Sources beside each check: shapely on a very
fine flattening made by ezdxf itself (`BSpline.flattening` / evaluation on the spline's domain, code
independent of geomgen's), closed forms (disc pi r², ellipse pi a b, a strip r x gap), and the
NURBS Book's rational circle (Piegl and Tiller, 2nd ed., ch. 7, from memory: nine poles on a square,
weights 1 and sqrt(2)/2), a circle exactly.
"""

from __future__ import annotations

import math

import ezdxf
import numpy as np
import pytest
import shapely

from geomgen import job as jobmod
from geomgen.cli import main
from geomgen.dxf_outline import GAP_TOL_MM, read_outline
from geomgen.errors import BadInput
from geomgen.loops import EllipseArc, Spline
from geomgen.section import outline_web

from conftest import DROP, write_job

STEEL = 7.85


def new_doc():
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4   # mm (ezdxf.new() would say metres)
    return doc


def rim_fit_points(n=16, z=0.0):
    """An invented teardrop rim through n points, r(phi) = 58 - 6 cos(phi) + 2 cos(2 phi), closed."""
    pts = []
    for i in range(n):
        phi = 2 * math.pi * i / n
        r = 58 - 6 * math.cos(phi) + 2 * math.cos(2 * phi)
        pts.append((-r * math.sin(phi), r * math.cos(phi), z))
    return pts + [pts[0]]


def periodic_poles():
    """Eight control points of an invented oval rim, 130 x 100 mm."""
    return [(70 * math.cos(a), 54 * math.sin(a), 0.0) for a in (2 * math.pi * i / 8 for i in range(8))]


def ezdxf_reference(path):
    """shapely Polygon of the drawing's SPLINE through ezdxf alone: its construction tool evaluated
    densely on the spline's parameter domain [knots[p], knots[n]]."""
    spline = next(iter(ezdxf.readfile(path).modelspace().query("SPLINE")))
    tool = spline.construction_tool()
    k, p = tool.knots(), tool.degree
    ts = np.linspace(k[p], k[len(k) - p - 1], 400001)
    return shapely.Polygon(np.array([(v.x, v.y) for v in tool.points(ts)]))   # an array: shapely reads it at once


def write(doc, tmp_path, name="web.dxf"):
    path = tmp_path / name
    doc.saveas(path)
    return path


# -- splines ------------------------------------------------------------------------

def test_fit_point_spline_rim_is_one_curve(tmp_path):
    # shapely on ezdxf's dense evaluation (400001 points: inscribed deficit ~2/3 sagitta x length,
    # below 1e-11 relative); the rim is one Spline segment, not thousands of lines
    doc = new_doc()
    doc.modelspace().add_spline(fit_points=rim_fit_points())
    path = write(doc, tmp_path)
    out = read_outline(path)
    assert len(out.outer.segments) == 1 and isinstance(out.outer.segments[0], Spline)
    m = out.outer.area_moments()
    ref = ezdxf_reference(path)
    assert m.area == pytest.approx(ref.area, rel=1e-10)
    assert m.centroid[1] == pytest.approx(ref.centroid.y, rel=1e-9)
    assert m.centroid[0] == pytest.approx(0.0, abs=1e-10)      # symmetric about Y


def test_closed_periodic_spline_is_no_open_loop(tmp_path):
    # ezdxf's closed periodic spline (its `set_closed`: poles wrapped, uniform knots): before this
    # was read from t = 0, where the curve is not, and refused as "a gap of inf mm"
    doc = new_doc()
    spline = doc.modelspace().add_spline()
    spline.set_closed(periodic_poles(), degree=3)
    path = write(doc, tmp_path)
    out = read_outline(path)
    seg = out.outer.segments[0]
    assert math.dist(seg.start, seg.end) <= 1e-12
    ref = ezdxf_reference(path)
    m = out.outer.area_moments()
    assert m.area == pytest.approx(ref.area, rel=1e-10)
    assert m.centroid == pytest.approx((0.0, 0.0), abs=1e-9)
    # the loop starts on the curve, not at a control point
    assert ref.exterior.distance(shapely.Point(seg.start)) < 1e-6
    assert min(math.dist(seg.start, p[:2]) for p in periodic_poles()) > 1.0


def test_the_dxf_references_periodic_form_reads_the_same(tmp_path):
    # the DXF reference's form of a periodic spline: n control points, n + 1 knots, flags closed and
    # periodic; the same curve as the wrapped form above (uniform knots continue by their period)
    doc = new_doc()
    spline = doc.modelspace().add_spline()
    spline.dxf.degree = 3
    spline.control_points = periodic_poles()
    spline.knots = [float(i) for i in range(9)]
    spline.dxf.flags = spline.CLOSED | spline.PERIODIC
    short = read_outline(write(doc, tmp_path, "short.dxf")).outer.area_moments()
    doc2 = new_doc()
    doc2.modelspace().add_spline().set_closed(periodic_poles(), degree=3)
    wrapped = read_outline(write(doc2, tmp_path, "wrapped.dxf")).outer.area_moments()
    assert short._as_array() == pytest.approx(wrapped._as_array(), rel=1e-12, abs=1e-6)


def test_rational_spline_circle_rim(tmp_path):
    # The NURBS Book's rational circle written as a rational SPLINE: area pi r², centroid at its centre
    r, w = 65.0, math.sqrt(0.5)
    square = [(1, 0), (1, 1), (0, 1), (-1, 1), (-1, 0), (-1, -1), (0, -1), (1, -1), (1, 0)]
    doc = new_doc()
    doc.modelspace().add_rational_spline([(r * x, r * y, 0) for x, y in square], [1, w, 1, w, 1, w, 1, w, 1],
                                         degree=2, knots=[0, 0, 0, 1, 1, 2, 2, 3, 3, 4, 4, 4])
    m = read_outline(write(doc, tmp_path)).outer.area_moments()
    assert m.area == pytest.approx(math.pi * r * r, rel=1e-13)
    assert m.centroid == pytest.approx((0.0, 0.0), abs=1e-10)


def test_open_spline_message_names_points_on_the_curve(tmp_path):
    # an unclamped (uniform) open spline: its ends are curve points at t = knots[p] and knots[n]
    # (ezdxf's evaluator), never its first and last control points
    doc = new_doc()
    poles = [(0, 0, 0), (20, 30, 0), (50, 40, 0), (80, 10, 0), (100, 0, 0)]
    spline = doc.modelspace().add_spline()
    spline.set_uniform(poles, degree=3)
    path = write(doc, tmp_path)
    tool = spline.construction_tool()
    k = tool.knots()
    a, b = tool.point(k[3]), tool.point(k[5])
    with pytest.raises(BadInput, match="open loop") as err:
        read_outline(path)
    msg = str(err.value)
    assert f"({a.x:.6g}, {a.y:.6g})" in msg and f"({b.x:.6g}, {b.y:.6g})" in msg
    assert "(0, 0)" not in msg and "(100, 0)" not in msg and "inf" not in msg


def test_spline_out_of_plane_is_refused(tmp_path):
    doc = new_doc()
    pts = rim_fit_points()
    pts[3] = (pts[3][0], pts[3][1], 2.0)
    doc.modelspace().add_spline(fit_points=pts)
    with pytest.raises(BadInput, match="not drawn in a plane parallel to XY"):
        read_outline(write(doc, tmp_path))


def test_ellipse_bore_stays_an_ellipse(tmp_path):
    # closed forms: disc pi R² less an elliptic bore pi a b; the bore's centroid at its centre
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_circle((0, 0), 65)
    msp.add_ellipse((-20, -30), major_axis=(6, 8), ratio=0.6)     # a = 10, b = 6
    out = read_outline(write(doc, tmp_path))
    bore = out.inner[0]
    assert isinstance(bore.segments[0], EllipseArc)
    m = bore.area_moments()
    assert m.area == pytest.approx(math.pi * 10 * 6, rel=1e-14)
    assert m.centroid == pytest.approx((-20, -30), rel=1e-13)


def test_mirrored_ellipse_arc_lands_where_drawn(tmp_path):
    # an ELLIPSE holds its centre and major axis in world coordinates; its extrusion sets the minor axis,
    # extrusion x major (DXF reference), so with extrusion -Z the minor axis points to -Y and the
    # parameters pi .. 2 pi run over the UPPER half.  Closed by its major axis: Machinery's Handbook
    # semi-ellipse, area pi a b / 2, centroid 4 b / (3 pi) from the major axis
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_ellipse((10, 0), major_axis=(8, 0), ratio=0.5, start_param=math.pi, end_param=2 * math.pi,
                    dxfattribs={"extrusion": (0, 0, -1)})
    msp.add_line((2, 0), (18, 0))
    m = read_outline(write(doc, tmp_path)).outer.area_moments()
    assert m.area == pytest.approx(math.pi * 8 * 4 / 2, rel=1e-14)
    assert m.centroid == pytest.approx((10.0, 4 * 4 / (3 * math.pi)), rel=1e-13)


# -- gaps ------------------------------------------------------------------------------

def test_default_gap_accepts_cad_export_noise():
    # common practice: CAD exports leave up to about 0.01 mm between entities drawn as meeting
    assert pytest.approx(0.02) == GAP_TOL_MM
    assert jobmod.OUTLINE_GAP_MM == GAP_TOL_MM


def test_a_0_01_mm_gap_between_arcs_is_joined(tmp_path):
    # closed form: two half circles of r = 65 whose centres are 0.01 mm apart across their joints, the
    # strip between them r x gap on each side: area pi r² + 2 r gap
    r, gap = 65.0, 0.01
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), r, 0, 180)
    msp.add_arc((0, -gap), r, 180, 360)
    out = read_outline(write(doc, tmp_path))
    assert out.outer.area_moments().area == pytest.approx(math.pi * r * r + 2 * r * gap, rel=1e-9)


def test_a_0_01_mm_gap_between_a_spline_and_a_line_is_joined(tmp_path):
    # the spline's end pole moves onto the line's end: by partition of unity the curve moves by at most
    # the gap, so the area changes by at most gap x the spline's length (about 200 mm here)
    pts = [(-40, 0, 0), (-30, -35, 0), (0, -55, 0), (30, -35, 0), (40, 0, 0)]
    closed, gapped = new_doc(), new_doc()
    closed.modelspace().add_spline(fit_points=pts)
    closed.modelspace().add_line((40, 0), (-40, 0))
    gapped.modelspace().add_spline(fit_points=pts)
    gapped.modelspace().add_line((40, 0.01), (-40, 0))
    a0 = read_outline(write(closed, tmp_path, "a.dxf")).outer.area
    loop = read_outline(write(gapped, tmp_path, "b.dxf")).outer
    assert abs(loop.area - a0) <= 0.01 * 200
    assert len(loop.segments) == 2          # joined without a bridging line: the line moved its end


def test_a_tangential_overshoot_of_an_arc_is_trimmed_not_doubled_back(tmp_path):
    # a circle drawn as two half arcs, the upper one running 0.01 mm on past the lower one's start
    # (along their common tangent): the arc is brought back to the joint, so the loop neither doubles
    # back on itself nor gains a bridge; closed form: disc pi r²
    r = 30.0
    over = math.degrees(0.01 / r)
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), r, 0, 180 + over)
    msp.add_arc((0, 0), r, 180, 360)
    out = read_outline(write(doc, tmp_path)).outer
    assert len(out.segments) == 2
    assert out.area_moments().area == pytest.approx(math.pi * r * r, rel=1e-12)
    assert out.polygon(1e-3).is_valid


def test_a_0_5_mm_gap_is_refused_naming_the_key(tmp_path):
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), 65, 0, 180)
    msp.add_arc((0, -0.5), 65, 180, 360)
    with pytest.raises(BadInput, match=r"open loop: a gap of 0\.5 mm .*outline_gap = 0\.02 mm"):
        read_outline(write(doc, tmp_path))


def test_outline_gap_can_be_raised_for_a_drawing(tmp_path):
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), 65, 0, 180)
    msp.add_arc((0, -0.05), 65, 180, 360)
    path = write(doc, tmp_path)
    with pytest.raises(BadInput, match="outline_gap"):
        read_outline(path)
    # closed form as above: pi r² + 2 r gap
    area = read_outline(path, gap_tol=0.06).outer.area
    assert area == pytest.approx(math.pi * 65 ** 2 + 2 * 65 * 0.05, rel=1e-9)


# -- the job key and the command line ----------------------------------------------------

def test_job_key_outline_gap(tmp_path):
    (tmp_path / "web.dxf").write_text("0\nEOF\n")     # only its existence is checked at load time
    base = {"web.diameter": DROP, "web.outline": "web.dxf"}
    job = jobmod.load(write_job(tmp_path, base))
    assert all(w.outline_gap == pytest.approx(0.02) for w in job.webs)
    # 1 in = 25.4 mm exactly (NIST SP 811)
    job = jobmod.load(write_job(tmp_path, {**base, "web.outline_gap": "0.001 in"}))
    assert job.webs[0].outline_gap == pytest.approx(0.0254, rel=1e-12)
    for bad in (0.0, 0.5):
        with pytest.raises(BadInput, match=r"web\.outline_gap: .*out of range; must be > 0 and <= 0\.1 mm"):
            jobmod.load(write_job(tmp_path, {**base, "web.outline_gap": bad}))


def _gapped_web(tmp_path, gap):
    """An invented full-circle web of r = 65 drawn as two half arcs `gap` mm apart, with the pin bore."""
    doc = new_doc()
    msp = doc.modelspace()
    msp.add_arc((0, 0), 65, 0, 180)
    msp.add_arc((0, -gap), 65, 180, 360)
    msp.add_circle((0, 32), 14)
    return write(doc, tmp_path)


def test_plan_refuses_a_0_5_mm_gap_in_one_line_naming_the_key(tmp_path, capsys):
    _gapped_web(tmp_path, 0.5)
    job = write_job(tmp_path, {"web.diameter": DROP, "web.outline": "web.dxf"})
    out_dir = tmp_path / "out"
    code = main(["plan", str(job), "--out", str(out_dir)])
    _, err = capsys.readouterr()
    lines = err.splitlines()
    assert code == 2 and len(lines) == 1 and lines[0].startswith("geomgen: ")
    assert "open loop: a gap of 0.5 mm" in lines[0] and "outline_gap = 0.02 mm" in lines[0]
    assert "web.dxf" in lines[0] and "Traceback" not in err
    assert not out_dir.exists()


def test_a_0_01_mm_gap_gives_the_drawn_web(tmp_path):
    # closed form: pi r² + 2 r gap less the pin bore pi 14², swept 18 mm at 7.85 g/cm³
    path = _gapped_web(tmp_path, 0.01)
    web = outline_web(path=path, thickness=18.0, density_g_cm3=STEEL, stroke=64.0, pin_bore=28.0)
    area = math.pi * 65 ** 2 + 2 * 65 * 0.01 - math.pi * 14 ** 2
    assert web.massprops().mass == pytest.approx(STEEL * 1e-3 * 18.0 * area, rel=1e-9)


def test_inspect_names_no_job_key(tmp_path):
    path = _gapped_web(tmp_path, 0.5)
    with pytest.raises(BadInput, match=r"ends closer than 0\.02 mm are joined") as err:
        outline_web(path=path, thickness=18.0, density_g_cm3=STEEL, stroke=64.0, pin_bore=28.0, where="inspect")
    assert "outline_gap" not in str(err.value)


def test_spline_web_section_keeps_the_curve(tmp_path):
    # a web of this crank (stroke 64, pin bore 28) on the fit-point rim: the section's outer loop is the
    # spline itself, so the planner's polygons come from its flattening at their own chord
    doc = new_doc()
    doc.modelspace().add_spline(fit_points=rim_fit_points())
    doc.modelspace().add_circle((0, 32), 14)
    web = outline_web(path=write(doc, tmp_path), thickness=17.0, density_g_cm3=STEEL, stroke=64.0, pin_bore=28.0)
    assert [type(s) for s in web.outer.segments] == [Spline]
    assert len(web.outer.points(0.05)) < 400            # a coarse polygon for the planner stays coarse
    assert web.rim_radius_max == pytest.approx(66.0, abs=1e-5)    # the fit point at phi = 180 deg
