"""Exports and the three-way verification: exact B-rep, STEP re-import, mesh.

Sources named beside each check: closed forms (Machinery's Handbook: box
inertia m (b^2 + c^2) / 12, cylinder V = pi r^2 h), OpenCascade (GProp,
STEP reader), trimesh (mesh integrals, is_volume), and the STEP standard's
own text (ISO 10303-214 schema name, SI_UNIT(.MILLI.,.METRE.)).
"""


import numpy as np
import pytest

from geomgen.errors import BadInput, VerificationFailed
from geomgen.features import Hole, Plug, Pocket, feature_massprops
from geomgen.massprops import MassProps
from geomgen.section import parametric_web

pytestmark = pytest.mark.cad

RHO, RHO_PLUG, T = 7.85, 18.0, 18.0
FEATURES = [
    Hole(0.0, -40.0, 10.0, 8.0),
    Hole(22.0, -38.0, 8.0, 6.0, face="inner"),
    Hole(-22.0, -38.0, 8.0, T, through=True),
    Pocket(48.0, 60.0, 140.0, 220.0, 6.0, corner_radius=4.0),
    Pocket(48.0, 60.0, 230.0, 300.0, 5.0, corner_radius=6.0, face="inner"),
    Plug(-35.0, -20.0, 12.0, 10.0, material=None, density=RHO_PLUG),
    Plug(35.0, -20.0, 10.0, T, material=None, density=17.0, face="inner"),
]


def section():
    return parametric_web(diameter=130.0, thickness=T, density_g_cm3=RHO, stroke=64.0, pin_bore=28.0)


def predicted():
    return section().massprops() + sum(
        (feature_massprops(f, thickness=T, web_density=RHO) for f in FEATURES), MassProps.zero())


@pytest.fixture(scope="module")
def web():
    from geomgen.solid import build_web
    return build_web(section(), FEATURES, name="a")


@pytest.fixture(scope="module")
def exported(web, tmp_path_factory):
    from geomgen.export import export_web
    return export_web(web, tmp_path_factory.mktemp("out"))


def box(dx, dy, dz, x0, y0, z0, rho):
    """Closed form: box mass and centroidal inertia m (b^2 + c^2) / 12 (Machinery's Handbook)."""
    m = rho * 1e-3 * dx * dy * dz
    inertia = np.diag([dy * dy + dz * dz, dx * dx + dz * dz, dx * dx + dy * dy]) * m / 12.0
    return MassProps.from_centroidal(mass=m, com=(x0 + dx / 2, y0 + dy / 2, z0 + dz / 2),
                                     inertia_com=inertia, volume=dx * dy * dz)


def test_gprop_product_of_inertia_sign():
    """An L-shaped prism has a non-zero product of inertia about its centre;
    OpenCascade's figure, taken as products with the minus sign, must equal
    the sum of its two boxes moved by the parallel-axis theorem."""
    import cadquery as cq

    from geomgen.verify import solid_massprops

    ell = cq.Solid.makeBox(10, 2, 3).fuse(cq.Solid.makeBox(2, 8, 3, cq.Vector(0, 2, 0)))
    exact = solid_massprops(ell, 7.85)
    closed = box(10, 2, 3, 0, 0, 0, 7.85) + box(2, 8, 3, 0, 2, 0, 7.85)
    assert np.allclose(exact.second_moment, closed.second_moment, rtol=1e-12, atol=1e-9)
    assert exact.inertia_com[0, 1] != pytest.approx(0.0, abs=1e-3)  # the case really tests the sign


def test_exact_matches_prediction_every_feature_kind(web):
    from geomgen.verify import compare, exact_massprops

    exact = exact_massprops(web)
    pred = predicted()
    # analytic model (Green's theorem + cone closed forms) vs OpenCascade B-rep, 1e-6
    assert exact.mass == pytest.approx(pred.mass, rel=1e-6)
    assert np.allclose(exact.com, pred.com, atol=1e-6 * 65)
    assert exact.inertia_z == pytest.approx(pred.inertia_z, rel=1e-6)
    result = compare(pred, exact, name="a")
    assert result["predicted_vs_exact"]["unbalance_rel"] < 1e-6


def test_step_reimports_with_names_and_same_properties(web, exported):
    from geomgen.export import read_step
    from geomgen.verify import exact_massprops, step_massprops

    names = [n for n, _ in read_step(exported["step"])]
    assert names == ["body", "plug-1", "plug-2"]   # body first, as written
    back = step_massprops(exported["step"], {"body": RHO, "plug-1": RHO_PLUG, "plug-2": 17.0})
    exact = exact_massprops(web)
    # OpenCascade STEP round trip: same B-rep, same integrals to 1e-6
    assert back.mass == pytest.approx(exact.mass, rel=1e-6)
    assert np.allclose(back.first_moment, exact.first_moment, rtol=1e-6, atol=1e-6 * exact.mass)
    assert back.inertia_z == pytest.approx(exact.inertia_z, rel=1e-6)


def test_step_is_ap214_in_millimetres_and_settings_restored(web, tmp_path):
    from OCP.Interface import Interface_Static

    from geomgen.export import write_step

    Interface_Static.SetCVal_s("write.step.schema", "AP203")
    Interface_Static.SetCVal_s("write.step.unit", "INCH")
    try:
        path = write_step([("body", web.body)], tmp_path / "w.step")
        assert Interface_Static.CVal_s("write.step.schema") == "AP203"
        assert Interface_Static.CVal_s("write.step.unit") == "INCH"
    finally:
        Interface_Static.SetCVal_s("write.step.schema", "AP214IS")
        Interface_Static.SetCVal_s("write.step.unit", "MM")
    text = path.read_text(errors="replace")
    assert "AUTOMOTIVE_DESIGN" in text          # ISO 10303-214 schema name
    assert "SI_UNIT(.MILLI.,.METRE.)" in text   # lengths in millimetres


def test_every_stl_is_a_closed_volume_within_the_bound(web, exported):
    import trimesh

    from geomgen.verify import compare, exact_massprops, mesh_bound, mesh_web_massprops

    for key in ("stl", "plugs_stl"):
        data = exported[key].read_bytes()
        assert len(data) == 84 + 50 * int.from_bytes(data[80:84], "little")  # binary STL layout
        assert trimesh.load_mesh(str(exported[key])).is_volume               # trimesh re-read
    exact = exact_massprops(web)
    mesh = mesh_web_massprops(web, exported)
    bound = mesh_bound(web, tolerance=0.01)
    result = compare(predicted(), exact, mesh, bound=bound, name="a")
    me = result["mesh_vs_exact"]
    assert me["mass_g"] <= bound["mass_g"]
    assert me["unbalance_gmm"] <= bound["unbalance_gmm"]
    assert me["inertia_z_gmm2"] <= bound["inertia_z_gmm2"]
    assert mesh.mass < exact.mass   # an inscribed mesh under-estimates (chords lie inside the arcs)


def test_stl_tolerance_changes_the_mesh(web, tmp_path):
    """A re-mesh at a coarser tolerance must really re-mesh (old triangulation cleared)."""
    from geomgen.export import write_stl
    from geomgen.verify import mesh_massprops, solid_massprops

    exact = solid_massprops(web.body, RHO).volume
    fine = mesh_massprops(write_stl(web.body, tmp_path / "f.stl", tolerance=0.01), RHO).volume
    coarse = mesh_massprops(write_stl(web.body, tmp_path / "c.stl", tolerance=0.2, angular_tolerance=0.5),
                            RHO).volume
    assert abs(coarse - exact) > 3 * abs(fine - exact)


def test_mesh_massprops_refuses_an_open_mesh(tmp_path):
    import trimesh

    from geomgen.verify import mesh_massprops

    mesh = trimesh.creation.box(extents=(10, 10, 10))
    mesh.update_faces(np.arange(len(mesh.faces))[1:])   # drop one triangle: no longer closed
    path = tmp_path / "open.stl"
    mesh.export(str(path))
    with pytest.raises(BadInput, match="not a closed volume"):
        mesh_massprops(path, 7.85)
    # and a closed cube of 10 mm: trimesh gives V = 1000 mm^3 (closed form)
    trimesh.creation.box(extents=(10, 10, 10)).export(str(tmp_path / "cube.stl"))
    assert mesh_massprops(tmp_path / "cube.stl", 7.85).mass == pytest.approx(7.85, rel=1e-12)


def test_compare_raises_exit_4_beyond_1e4():
    from geomgen.verify import compare

    exact = box(10, 10, 10, 20, -5, 0, 7.85)                 # U = (196.25, 0) g*mm
    near = exact + MassProps(0.0, (0.01, 0.0, 0.0), np.zeros((3, 3)))   # 5e-5 of |U|
    far = exact + MassProps(0.0, (0.05, 0.0, 0.0), np.zeros((3, 3)))    # 2.5e-4 of |U|
    assert compare(near, exact)["predicted_vs_exact"]["unbalance_rel"] == pytest.approx(0.01 / 196.25)
    with pytest.raises(VerificationFailed) as info:
        compare(far, exact, name="a")
    assert info.value.exit_code == 4 and "0.05 g*mm" in str(info.value)


def test_crank_assembly_places_web_b_mirrored():
    """Web b turned 180 deg about Y: (x, y) of web b lies at (-x, y) in the crank
    frame (contract); checked with MassProps.mirrored_x on the exact figures."""
    from geomgen.solid import build_web, crank_assembly
    from geomgen.verify import exact_massprops, solid_massprops

    a = build_web(section(), [], name="a")
    b = build_web(section(), [Hole(20.0, -40.0, 10.0, 8.0)], name="b")
    solids = crank_assembly(a, b, gap_mm=30.0)
    placed_b = sum(solid_massprops(s, d) for n, s, d in solids if n.startswith("web-b "))
    own_b = exact_massprops(b)
    assert np.allclose(placed_b.unbalance, own_b.mirrored_x().unbalance, atol=1e-6)
    assert placed_b.com[2] == pytest.approx(-30.0 - own_b.com[2], abs=1e-9)


def test_closed_volume_check_finds_holes_and_flipped_triangles():
    """The closure test against trimesh's own verdicts on a cube (is_watertight,
    is_winding_consistent, is_volume)."""
    import trimesh

    from geomgen.export import closed_volume_problem

    cube = trimesh.creation.box(extents=(10, 10, 10))
    assert cube.is_volume and closed_volume_problem(cube.vertices, cube.faces) is None
    open_faces = cube.faces[1:]
    assert not trimesh.Trimesh(cube.vertices, open_faces, process=False).is_watertight
    assert "one triangle only" in closed_volume_problem(cube.vertices, open_faces)
    flipped = cube.faces.copy()
    flipped[0] = flipped[0][::-1]
    assert not trimesh.Trimesh(cube.vertices, flipped, process=False).is_winding_consistent
    assert "same direction" in closed_volume_problem(cube.vertices, flipped)
    inside_out = cube.faces[:, ::-1]
    assert "not positive" in closed_volume_problem(cube.vertices, inside_out)


def test_merge_drops_the_triangles_collapsed_at_a_point():
    """Two coincident corners (as at a drill-point apex) make a triangle with a repeated
    vertex: it is dropped; -0.0 and +0.0 are one coordinate (IEEE 754 equality)."""
    from geomgen.export import indexed_mesh

    tri = np.array([[[0, 0, 0], [1, 0, 0], [0, 1, 0]],
                    [[-0.0, 0, 0], [0, 0, 0], [0, 0, 1]]], dtype=np.float32)
    vertices, faces = indexed_mesh(tri)
    assert len(vertices) == 4 and len(faces) == 1
    assert np.array_equal(vertices[faces[0]], tri[0])


def test_writing_a_web_stl_does_not_need_trimesh(tmp_path):
    """The quick repair closes a web with pointed blind holes on its own: exporting it leaves
    trimesh unimported (the general repair is only the fallback); trimesh then re-reads the
    written file as a closed volume in the mesh check."""
    import subprocess
    import sys

    code = ("import sys; from geomgen.features import Hole; from geomgen.section import parametric_web; "
            "from geomgen.solid import build_web; from geomgen.export import export_web; "
            "from geomgen.verify import mesh_massprops; "
            "s = parametric_web(diameter=130.0, thickness=18.0, density_g_cm3=7.85, stroke=64.0, pin_bore=28.0); "
            "w = build_web(s, [Hole(0.0, -40.0, 10.0, 8.0), Hole(20.0, -40.0, 8.0, 6.0)], name='a'); "
            f"p = export_web(w, {str(tmp_path)!r}); print('trimesh' in sys.modules); "
            "print(mesh_massprops(p['stl'], 7.85).volume > 0)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.split() == ["False", "True"]
