"""Curved DXF rims in the solid: a spline rim and an elliptic bore become exact B-spline and ellipse
edges, so the STEP stays small and OpenCascade's exact B-rep properties agree with the area moments.

Sources: OpenCascade's exact properties (GProp, an independent integration over the B-rep) against
geomgen's Green's-theorem moments; closed forms (a disc of the NURBS Book's rational circle, Piegl
and Tiller 2nd ed. ch. 7 from memory: rho t pi r²; an elliptic bore pi a b); trimesh on the exported
STL for a closed mesh.  Invented drawings written here with ezdxf.
"""

from __future__ import annotations

import math

import ezdxf
import numpy as np
import pytest

from geomgen.export import read_step, write_step, write_stl
from geomgen.kinds import Hole
from geomgen.section import outline_web
from geomgen.solid import build_web
from geomgen.verify import solid_massprops

from conftest import as_cq

pytestmark = pytest.mark.cad

STEEL = 7.85


def rim_doc(*, spline="fit"):
    """An invented web: a teardrop rim through 16 fit points (or the NURBS circle), the pin bore at
    (0, 32) and an elliptic lightening hole on the counterweight side."""
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4
    msp = doc.modelspace()
    if spline == "fit":
        pts = []
        for i in range(16):
            phi = 2 * math.pi * i / 16
            r = 58 - 6 * math.cos(phi) + 2 * math.cos(2 * phi)
            pts.append((-r * math.sin(phi), r * math.cos(phi), 0.0))
        msp.add_spline(fit_points=pts + [pts[0]])
    else:
        w = math.sqrt(0.5)
        square = [(1, 0), (1, 1), (0, 1), (-1, 1), (-1, 0), (-1, -1), (0, -1), (1, -1), (1, 0)]
        msp.add_rational_spline([(65 * x, 65 * y, 0) for x, y in square], [1, w, 1, w, 1, w, 1, w, 1],
                                degree=2, knots=[0, 0, 0, 1, 1, 2, 2, 3, 3, 4, 4, 4])
    msp.add_circle((0, 32), 14)
    msp.add_ellipse((0, -38), major_axis=(12, 0), ratio=0.5)
    return doc


def section_of(tmp_path, **kw):
    path = tmp_path / "web.dxf"
    rim_doc(**kw).saveas(path)
    return outline_web(path=path, thickness=17.0, density_g_cm3=STEEL, stroke=64.0, pin_bore=28.0)


def _agree(exact, predicted):
    assert exact.mass == pytest.approx(predicted.mass, rel=1e-10)
    assert np.linalg.norm(exact.unbalance - predicted.unbalance) <= 1e-9 * predicted.mass * 66.0
    assert exact.inertia == pytest.approx(predicted.inertia, rel=1e-9, abs=1e-9 * predicted.inertia.max())


def test_spline_web_step_is_small_and_exact(tmp_path):
    section = section_of(tmp_path)
    hole = Hole(x=25.0, y=-30.0, diameter=10.0, depth=8.0, face="outer")
    web = build_web(section, (hole,), name="a")
    faces = [f.geomType() for f in as_cq(web.body).Faces()]
    assert "EXTRUSION" in faces and len(faces) < 40          # one face per spline span, not thousands
    step = write_step([(n, s) for n, s, _ in web.solids()], tmp_path / "web-a.step")
    assert step.stat().st_size < 1_000_000                   # it was 21 MB as 5000 flat faces
    predicted = section.massprops() + hole.massprops(thickness=17.0, web_density=STEEL)   # the change it makes
    _agree(solid_massprops(web.body, STEEL), predicted)
    (name, shape), = read_step(step)                          # and as re-read from the STEP
    _agree(solid_massprops(shape, STEEL), predicted)


def test_nurbs_circle_web_against_the_closed_form(tmp_path):
    # a disc of r = 65 drawn as the rational circle, less the pin bore pi 14² and the elliptic hole
    # pi 12 6: V = t (pi 65² - pi 14² - pi 72), centroid from the bores' moments (closed forms)
    section = section_of(tmp_path, spline="circle")
    body = build_web(section, (), name="a").body
    exact = solid_massprops(body, STEEL)
    a_disc, a_pin, a_ell = math.pi * 65 ** 2, math.pi * 14 ** 2, math.pi * 12 * 6
    volume = 17.0 * (a_disc - a_pin - a_ell)
    # GProp at the project's relative bound (1e-11) over rational faces lands within ~2e-10 of the truth
    assert exact.volume == pytest.approx(volume, rel=1e-9)
    assert section.massprops().volume == pytest.approx(volume, rel=1e-13)
    y = (0.0 - a_pin * 32 - a_ell * (-38)) / (a_disc - a_pin - a_ell)
    assert exact.com[1] == pytest.approx(y, rel=1e-9)
    assert exact.com[2] == pytest.approx(8.5, rel=1e-12)


def test_spline_web_mesh_is_closed(tmp_path):
    # trimesh (independent library): the exported STL is a closed volume within its chord bound
    import trimesh

    section = section_of(tmp_path)
    body = build_web(section, (), name="a").body
    path = write_stl(body, tmp_path / "web.stl", tolerance=0.01)
    mesh = trimesh.load_mesh(str(path))
    assert mesh.is_watertight
    exact = solid_massprops(body, STEEL).volume
    # the mesh lies inside the curved faces by at most the chord, 0.01 mm, over their area
    curved = sum(f.Area() for f in as_cq(body).Faces() if f.geomType() != "PLANE")
    assert 0 <= exact - mesh.volume <= 0.01 * curved


def test_plan_of_a_spline_web_verifies_to_round_off(tmp_path):
    # the whole road: plan (holes through the planner's polygons of the spline), build, STEP, mesh;
    # OpenCascade's exact figures against the prediction far inside verify's 1e-4, and small files
    import geomgen

    from conftest import DROP, minimal_job_dict

    rim_doc().saveas(tmp_path / "web.dxf")
    job = minimal_job_dict({"web.diameter": DROP, "web.outline": "web.dxf", "web.thickness": 17.0,
                            "correction.max_depth": 14.0})
    done = geomgen.plan(geomgen.load_job(job, base=tmp_path)).verify()
    for web in done.webs:
        assert web.predicted.mass == pytest.approx(web.exact.mass, rel=1e-10)
        assert np.linalg.norm(web.exact.unbalance - web.predicted.unbalance) <= 1e-9 * np.linalg.norm(
            web.predicted.unbalance)
    assert max(len(b) for name, b in done.files.items() if name.endswith(".step")) < 1_000_000
