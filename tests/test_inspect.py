"""`geomgen inspect FILE`: DXF, STEP, STL and job files through the command line.

Sources beside each check:
- closed forms for a disc with a bore (annulus mass rho pi (R^2 - r^2) t,
  polar moment m (R^2 + r^2)/2 when centred; an off-centre bore by the
  parallel-axis theorem: the centre of mass moves by -(r^2/(R^2 - r^2)) e),
  for a box (volume a b c, inertia m (a^2 + b^2)/12 about its centre) and a
  cylinder (pi r^2 h, m r^2/2);
- ASTM B777-15 Table 1 for the class-3 tungsten alloy (17.75-18.35 g/cm^3,
  nominal the middle, 18.05), as geomgen.materials records it;
- NIST SP 811: 1 in = 25.4 mm exactly;
- the job's target by hand in tests/conftest.py (-8344 g*mm per web).
Files are written in the tests by ezdxf, cadquery and trimesh.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import ezdxf
import pytest

from geomgen.cli import main
from geomgen.inspect import heavy_spot_deg, inspect_file

from conftest import write_job

STEEL = 7.85                  # g/cm^3, common practice (geomgen.materials "steel")
W3 = 0.5 * (17.75 + 18.35)    # g/cm^3, ASTM B777-15 class 3, middle of the range


def run_json(capsys, *argv):
    assert main(["inspect", *map(str, argv), "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def disc_dxf(path, *, R, r, bore_at=(0.0, 0.0), insunits=4):
    """A full disc of radius R with one circular bore, both CIRCLE entities."""
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = insunits
    msp = doc.modelspace()
    msp.add_circle((0.0, 0.0), R)
    msp.add_circle(bore_at, r)
    doc.saveas(path)
    return path


# -- DXF -------------------------------------------------------------------------

def test_dxf_centred_annulus_closed_form(tmp_path, capsys):
    R, r, t = 60.0, 15.0, 18.0
    path = disc_dxf(tmp_path / "annulus.dxf", R=R, r=r)
    out = run_json(capsys, path, "--thickness", t)
    m = STEEL * 1e-3 * math.pi * (R ** 2 - r ** 2) * t          # closed form, annulus
    assert out["mass_g"] == pytest.approx(m, rel=1e-12)
    assert out["volume_mm3"] == pytest.approx(math.pi * (R ** 2 - r ** 2) * t, rel=1e-12)
    assert out["inertia_z_gmm2"] == pytest.approx(m * (R ** 2 + r ** 2) / 2, rel=1e-12)  # closed form
    assert out["com_mm"] == pytest.approx([0.0, 0.0, t / 2], abs=1e-9)
    assert out["unbalance_gmm"] == pytest.approx([0.0, 0.0], abs=1e-7)
    assert out["heavy_spot_deg"] is None  # centred: no heavy spot to name
    assert out["density_g_cm3"] == STEEL
    assert "analytic section" in out["source"]
    # the tensor's Z entry is the same figure as inertia_z (I = trace(S) E - S)
    assert out["inertia_tensor_gmm2"][2][2] == pytest.approx(out["inertia_z_gmm2"], rel=1e-14)


def test_dxf_off_centre_bore_shifts_the_centre_of_mass(tmp_path, capsys):
    R, r, t, e = 60.0, 12.0, 20.0, (25.0, 0.0)
    path = disc_dxf(tmp_path / "offset.dxf", R=R, r=r, bore_at=e)
    out = run_json(capsys, path, "--thickness", t, "--material", "aluminium")
    rho = 2.70e-3  # g/mm^3, geomgen.materials "aluminium" (common practice)
    m = rho * math.pi * (R ** 2 - r ** 2) * t
    shift = -(r ** 2 / (R ** 2 - r ** 2))                       # closed form, first moments
    assert out["mass_g"] == pytest.approx(m, rel=1e-12)
    assert out["com_mm"] == pytest.approx([shift * e[0], 0.0, t / 2], rel=1e-12, abs=1e-9)
    assert out["unbalance_gmm"] == pytest.approx([m * shift * e[0], 0.0], rel=1e-12, abs=1e-7)
    # parallel-axis theorem: Iz = rho t pi [R^4/2 - (r^4/2 + r^2 e^2)]
    iz = rho * t * math.pi * (R ** 4 / 2 - (r ** 4 / 2 + r ** 2 * e[0] ** 2))
    assert out["inertia_z_gmm2"] == pytest.approx(iz, rel=1e-12)
    # heavy spot on -X: 90 deg from +Y counter-clockwise (the README convention)
    assert out["heavy_spot_deg"] == pytest.approx(90.0, abs=1e-9)
    assert out["unbalance_magnitude_gmm"] == pytest.approx(abs(m * shift * e[0]), rel=1e-12)


def test_dxf_plain_output_lists_the_figures_with_units(tmp_path, capsys):
    R, r, t = 60.0, 12.0, 20.0
    path = disc_dxf(tmp_path / "offset.dxf", R=R, r=r, bore_at=(0.0, 30.0))
    assert main(["inspect", str(path), "--thickness", "20", "--density", "7.2"]) == 0
    text = capsys.readouterr().out
    m = 7.2e-3 * math.pi * (R ** 2 - r ** 2) * t  # closed form, annulus
    assert f"{m:14.3f} g" in text
    for label in ("mass", "centre of mass", "unbalance", "heavy spot", "inertia about Z", "g*mm^2", "7.2 g/cm^3"):
        assert label in text
    # bore on +Y: heavy spot on -Y, 180 deg from +Y
    assert "180.00 deg from +Y" in text


def test_dxf_unitless_in_inches(tmp_path, capsys):
    R_in, r_in, t_in = 2.5, 0.5, 0.75
    path = disc_dxf(tmp_path / "inch.dxf", R=R_in, r=r_in, insunits=0)
    out = run_json(capsys, path, "--thickness", f"{t_in} in", "--units", "in")
    R, r, t = 25.4 * R_in, 25.4 * r_in, 25.4 * t_in              # NIST SP 811: 1 in = 25.4 mm exactly
    m = STEEL * 1e-3 * math.pi * (R ** 2 - r ** 2) * t
    assert out["mass_g"] == pytest.approx(m, rel=1e-12)
    assert out["inertia_z_gmm2"] == pytest.approx(m * (R ** 2 + r ** 2) / 2, rel=1e-12)
    assert out["com_mm"][2] == pytest.approx(t / 2, rel=1e-12)
    # without --units the unitless drawing is refused, naming the option
    assert main(["inspect", str(path), "--thickness", "19"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--units" in err[0] and "unitless" in err[0]


def test_density_as_unit_string(tmp_path, capsys):
    # 0.284 lb/in^3 = 0.284 * 453.59237 g / 16.387064 cm^3 (NIST SP 811 factors)
    rho = 0.284 * 453.59237 / 16.387064
    path = disc_dxf(tmp_path / "d.dxf", R=50.0, r=10.0)
    out = run_json(capsys, path, "--thickness", "10", "--density", "0.284 lb/in^3")
    assert out["density_g_cm3"] == pytest.approx(rho, rel=1e-9)
    assert out["mass_g"] == pytest.approx(rho * 1e-3 * math.pi * (50.0 ** 2 - 10.0 ** 2) * 10, rel=1e-9)


def test_heavy_spot_convention():
    # the README convention: angle from +Y, counter-clockwise
    assert heavy_spot_deg((0.0, 5.0), 1.0) == pytest.approx(0.0)
    assert heavy_spot_deg((-5.0, 0.0), 1.0) == pytest.approx(90.0)
    assert heavy_spot_deg((0.0, -5.0), 1.0) == pytest.approx(180.0)
    assert heavy_spot_deg((5.0, 0.0), 1.0) == pytest.approx(270.0)
    assert heavy_spot_deg((-1.0, 1.0), 1.0) == pytest.approx(45.0)
    assert heavy_spot_deg((1e-12, 0.0), 100.0) is None


# -- STEP ------------------------------------------------------------------------

@pytest.mark.cad
def test_step_box_exact(tmp_path, capsys):
    import cadquery as cq

    a, b, c, centre = 40.0, 30.0, 20.0, (10.0, 5.0, 10.0)
    path = tmp_path / "box.step"
    cq.exporters.export(cq.Workplane().box(a, b, c).translate(centre), str(path))
    out = run_json(capsys, path)
    v = a * b * c                                                  # closed form
    m = STEEL * 1e-3 * v
    assert out["volume_mm3"] == pytest.approx(v, rel=1e-6)
    assert out["mass_g"] == pytest.approx(m, rel=1e-6)
    assert out["com_mm"] == pytest.approx(list(centre), rel=1e-6)
    # box about its centre m (a^2 + b^2)/12, moved by the parallel-axis theorem
    iz = m * (a ** 2 + b ** 2) / 12 + m * (centre[0] ** 2 + centre[1] ** 2)
    assert out["inertia_z_gmm2"] == pytest.approx(iz, rel=1e-6)
    assert out["inertia_tensor_gmm2"][0][1] == pytest.approx(-m * centre[0] * centre[1], rel=1e-6)
    assert "OpenCascade" in out["source"]
    assert out["density_g_cm3"] == STEEL and len(out["solids"]) == 1


@pytest.mark.cad
def test_step_body_and_plug_densities(tmp_path, capsys):
    import cadquery as cq

    from geomgen.export import write_step

    # a steel cylinder web with a bore, and a plug filling the bore: two solids as geomgen names them
    R, h, rp, xp = 40.0, 16.0, 6.0, 20.0
    plug = cq.Workplane().circle(rp).extrude(h).translate((xp, 0.0, 0.0))
    body = cq.Workplane().circle(R).extrude(h).cut(plug)
    path = write_step([("body", body.val()), ("plug-1", plug.val())], tmp_path / "web.step")
    out = run_json(capsys, path)
    v_plug = math.pi * rp ** 2 * h                                    # closed form, cylinders
    v_body = math.pi * R ** 2 * h - v_plug
    m = STEEL * 1e-3 * v_body + W3 * 1e-3 * v_plug
    assert out["density_g_cm3"] == {"body": STEEL, "plug-1": pytest.approx(W3)}
    assert [s["name"] for s in out["solids"]] == ["body", "plug-1"]
    assert out["mass_g"] == pytest.approx(m, rel=1e-6)
    # unbalance: only the density difference of the plug is off the axis
    assert out["unbalance_gmm"] == pytest.approx([(W3 - STEEL) * 1e-3 * v_plug * xp, 0.0], rel=1e-6, abs=1e-6)
    assert out["com_mm"][2] == pytest.approx(h / 2, rel=1e-6)
    # the plain output says which density each solid was given
    assert main(["inspect", str(path), "--density", "7.8"]) == 0
    text = capsys.readouterr().out
    assert "body:" in text and "7.8 g/cm^3 (--density)" in text
    assert "plug-1:" in text and "W-alloy-class-3, default for plugs" in text


@pytest.mark.cad
def test_step_refuses_thickness_and_units(tmp_path, capsys):
    import cadquery as cq

    path = tmp_path / "box.step"
    cq.exporters.export(cq.Workplane().box(10, 10, 10), str(path))
    for extra in (["--thickness", "5"], ["--units", "in"]):
        assert main(["inspect", str(path), *extra]) == 2
        err = capsys.readouterr().err.strip().splitlines()
        assert len(err) == 1 and extra[0] in err[0]


# -- STL -------------------------------------------------------------------------

@pytest.mark.cad
def test_stl_cylinder_mesh_is_its_regular_polygon_prism(tmp_path, capsys):
    import cadquery as cq
    import numpy as np
    import trimesh

    r, h, x0 = 25.0, 12.0, 8.0
    path = tmp_path / "cyl.stl"
    cq.exporters.export(cq.Workplane().circle(r).extrude(h).translate((x0, 0, 0)), str(path),
                        tolerance=0.01, angularTolerance=0.1)
    # OpenCascade meshes the circle as a regular n-gon with its corners on the circle; trimesh (independent
    # of geomgen's reading) counts the corners of the top face
    top = trimesh.load(path).vertices
    top = top[np.isclose(top[:, 2], h)]
    n = len(top)
    assert np.allclose(np.hypot(top[:, 0] - x0, top[:, 1]), r, atol=1e-5)     # float32 STL coordinates
    out = run_json(capsys, path)
    # closed forms of the regular n-gon of circumradius r: area (n/2) r^2 sin(2 pi/n), polar moment about its
    # centre A r^2 (1 + 2 cos^2(pi/n)) / 6 (-> A r^2 / 2 for the circle), centroid at the centre
    m = STEEL * 1e-3 * 0.5 * n * r ** 2 * math.sin(2 * math.pi / n) * h
    assert out["mass_g"] == pytest.approx(m, rel=1e-6)
    assert out["unbalance_gmm"] == pytest.approx([m * x0, 0.0], rel=1e-6, abs=1e-6 * m * x0)
    iz = m * r ** 2 * (1 + 2 * math.cos(math.pi / n) ** 2) / 6 + m * x0 ** 2      # + parallel-axis theorem
    assert out["inertia_z_gmm2"] == pytest.approx(iz, rel=1e-6)
    assert out["com_mm"][2] == pytest.approx(h / 2, rel=1e-6)
    # and the polygon lies inside the true circle by the mesh's chord height, never outside
    assert 0 < 1 - out["mass_g"] / (STEEL * 1e-3 * math.pi * r ** 2 * h) < 1 - math.cos(math.pi / n) ** 2
    assert "trimesh" in out["source"]


def test_stl_in_inches_scales_exactly(tmp_path, capsys):
    import trimesh

    a, b, c = 2.0, 1.0, 0.5  # in
    mesh = trimesh.creation.box(extents=(a, b, c))
    mesh.apply_translation((1.0, 0.0, c / 2))
    path = tmp_path / "box.stl"
    mesh.export(path)
    out = run_json(capsys, path, "--units", "in")
    A, B, C = 25.4 * a, 25.4 * b, 25.4 * c                             # NIST SP 811: 1 in = 25.4 mm
    m = STEEL * 1e-3 * A * B * C
    assert out["volume_mm3"] == pytest.approx(A * B * C, rel=1e-9)
    assert out["com_mm"] == pytest.approx([25.4, 0.0, C / 2], rel=1e-9, abs=1e-9)
    # box m (a^2 + b^2)/12 about its centre, plus m d^2 (parallel-axis theorem)
    assert out["inertia_z_gmm2"] == pytest.approx(m * (A ** 2 + B ** 2) / 12 + m * 25.4 ** 2, rel=1e-9)


def test_stl_not_closed_is_refused(tmp_path, capsys):
    import trimesh

    mesh = trimesh.creation.box(extents=(10, 10, 10))
    open_box = trimesh.Trimesh(mesh.vertices, mesh.faces[:-2], process=False)  # one side missing
    path = tmp_path / "open.stl"
    open_box.export(path)
    assert main(["inspect", str(path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "not a closed volume" in err[0] and "Traceback" not in err[0]


# -- job -------------------------------------------------------------------------

FEATURES = [
    {"kind": "hole", "x": 0.0, "y": -40.0, "diameter": 10.0, "through": True},
    {"kind": "hole", "x": 20.0, "y": -35.0, "diameter": 8.0, "depth": 6.0, "point_angle": 180.0},
    {"kind": "plug", "x": -20.0, "y": -45.0, "diameter": 12.0},
    {"kind": "pocket", "r_inner": 30.0, "r_outer": 50.0, "angle_start": 150.0, "angle_end": 210.0,
     "depth": 4.0, "corner_radius": 3.0},
]


def test_job_bare_features_total_and_target(tmp_path, capsys):
    path = write_job(tmp_path, web__features=FEATURES)
    out = run_json(capsys, path)
    assert [w["name"] for w in out["webs"]] == ["a", "b"]
    rho, t, R, rp, d = STEEL * 1e-3, 18.0, 65.0, 14.0, 32.0
    for web in out["webs"]:
        bare, total = web["bare"], web["total"]
        # closed form: 130 mm disc minus the 28 mm pin bore at stroke/2 = 32 mm on +Y
        assert bare["mass_g"] == pytest.approx(rho * t * math.pi * (R ** 2 - rp ** 2), rel=1e-12)
        assert bare["unbalance_gmm"] == pytest.approx([0.0, -rho * t * math.pi * rp ** 2 * d], rel=1e-12, abs=1e-7)
        changes = [f["change"] for f in web["features"]]
        assert len(changes) == len(FEATURES)
        # the shares add up to total - bare, in mass, unbalance and inertia
        assert sum(c["mass_g"] for c in changes) == pytest.approx(total["mass_g"] - bare["mass_g"], rel=1e-12)
        for k in (0, 1):
            assert sum(c["unbalance_gmm"][k] for c in changes) == pytest.approx(
                total["unbalance_gmm"][k] - bare["unbalance_gmm"][k], rel=1e-12)
        assert sum(c["inertia_z_gmm2"] for c in changes) == pytest.approx(
            total["inertia_z_gmm2"] - bare["inertia_z_gmm2"], rel=1e-12)
        # closed form: a through hole removes rho pi r^2 t at (0, -40)
        hole = changes[0]
        assert hole["mass_g"] == pytest.approx(-rho * math.pi * 5.0 ** 2 * t, rel=1e-12)
        assert hole["unbalance_gmm"] == pytest.approx([0.0, 40.0 * rho * math.pi * 5.0 ** 2 * t], rel=1e-12)
        # closed form: a flush through plug adds (rho_W3 - rho_steel) pi r^2 t, no volume
        plug = web["features"][2]
        assert plug["plug_density_g_cm3"] == pytest.approx(W3)
        assert plug["change"]["mass_g"] == pytest.approx((W3 - STEEL) * 1e-3 * math.pi * 6.0 ** 2 * t, rel=1e-12)
        assert plug["change"]["volume_mm3"] == 0.0
        # target by hand in conftest.py: -8344 g*mm on y per web
        assert web["target_gmm"] == pytest.approx([0.0, -8344.0], rel=1e-12)
        assert web["still_needed_gmm"] == pytest.approx(
            [0.0 - total["unbalance_gmm"][0], -8344.0 - total["unbalance_gmm"][1]], rel=1e-12, abs=1e-9)
        assert web["tolerance_gmm"] == pytest.approx(52.8 / 2, rel=1e-12)  # conftest.py, by hand


def test_job_plain_output(tmp_path, capsys):
    path = write_job(tmp_path, web__features=FEATURES[:1])
    assert main(["inspect", str(path)]) == 0
    text = capsys.readouterr().out
    for label in ("web a", "web b", "bare web", "hole 10 mm", "total", "target", "still needed", "-8344.00"):
        assert label in text


def test_job_refuses_density_options(tmp_path, capsys):
    path = write_job(tmp_path)
    assert main(["inspect", str(path), "--density", "7.8"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--density" in err[0]


# -- bad input -------------------------------------------------------------------

def test_bad_inputs_one_line_exit_2(tmp_path, capsys):
    dxf = disc_dxf(tmp_path / "w.dxf", R=50.0, r=10.0)
    (tmp_path / "web.iges").write_text("x")
    cases = [
        ([str(dxf)], "--thickness"),                                          # DXF needs a thickness
        ([str(dxf), "--thickness", "3 kg"], "--thickness"),                   # wrong dimension
        ([str(dxf), "--thickness", "-4"], "--thickness"),
        ([str(dxf), "--thickness", "18", "--material", "unobtanium"], "--material"),
        ([str(dxf), "--thickness", "18", "--density", "99"], "--density"),    # outside 0.5 .. 25
        ([str(dxf), "--thickness", "18", "--plug-density", "17"], "--plug-density"),   # a DXF has no plugs
        ([str(write_job(tmp_path)), "--plug-material", "W-alloy-class-1"], "--plug-material"),  # the job's own
        ([str(tmp_path / "web.iges")], "unknown file type '.iges'"),
        ([str(tmp_path / "missing.step")], "missing.step: file not found"),
        ([str(tmp_path / "missing.dxf"), "--thickness", "18"], "file not found"),
    ]
    for argv, expected in cases:
        assert main(["inspect", *argv]) == 2, argv
        captured = capsys.readouterr()
        err = captured.err.strip().splitlines()
        assert len(err) == 1 and expected in err[0], (argv, err)
        assert "Traceback" not in captured.err and captured.out == ""


def test_unknown_type_message_lists_the_allowed(tmp_path):
    from geomgen.errors import BadInput

    with pytest.raises(BadInput, match=r"inspect reads \.dxf, \.step/\.stp, \.stl or a job \.toml"):
        inspect_file(tmp_path / "a.xyz")


# -- no CAD kernel for DXF and job ----------------------------------------------

_BLOCK_CAD = """
import sys, importlib.abc
class Block(importlib.abc.MetaPathFinder):
    def find_spec(self, name, path=None, target=None):
        if name.split('.')[0] in ('cadquery', 'OCP'):
            raise ImportError('blocked for the test: ' + name)
sys.meta_path.insert(0, Block())
from geomgen.cli import main
code = main(sys.argv[1:])
print('cad modules:', sorted(m for m in sys.modules if m.split('.')[0] in ('cadquery', 'OCP')))
sys.exit(code)
"""


@pytest.mark.parametrize("kind", ["dxf", "job"])
def test_no_cad_import(tmp_path, kind):
    if kind == "dxf":
        argv = ["inspect", str(disc_dxf(tmp_path / "w.dxf", R=50.0, r=10.0)), "--thickness", "18", "--json"]
    else:
        argv = ["inspect", str(write_job(tmp_path, web__features=FEATURES)), "--json"]
    proc = subprocess.run([sys.executable, "-c", _BLOCK_CAD, *argv], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    body, _, tail = proc.stdout.rpartition("cad modules:")
    assert tail.strip() == "[]"
    doc = json.loads(body)
    # a real answer came back: closed form for the DXF disc, a bare web for the job
    if kind == "dxf":
        assert doc["mass_g"] == pytest.approx(STEEL * 1e-3 * math.pi * (50.0 ** 2 - 10.0 ** 2) * 18, rel=1e-12)
    else:
        # closed form: 130 mm steel disc 18 mm thick minus the 28 mm pin bore
        assert doc["webs"][0]["bare"]["mass_g"] == pytest.approx(
            STEEL * 1e-3 * math.pi * (65.0 ** 2 - 14.0 ** 2) * 18, rel=1e-12)
