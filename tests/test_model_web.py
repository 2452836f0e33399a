"""A web given as the designer's own 3D model (geomgen.model3d, geomgen.plan_model).

The webs are the invented ones of samples/make_model_webs.py (a boss, a chamfered rim, a rod-clearance
recess, a thinner counterweight lobe, and a plain prism), built with the kernel and written to STEP.  The
checks on a plan's result do not use geomgen's own measurements: the exported STEP is read back with
OpenCascade's plain STEPControl_Reader and integrated by GProp, the STL by trimesh, depths by rays cast
along each feature's axis through the model and the result (IntCurvesFace_ShapeIntersector), walls by
BRepExtrema between a cylinder the test builds itself and the model's faces.
"""

from __future__ import annotations

import importlib.util
import json
import math
import re
import tomllib
from pathlib import Path

import numpy as np
import pytest

from geomgen import api
from geomgen.cli import main
from geomgen.errors import BadInput

pytestmark = pytest.mark.cad

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
STROKE, PIN, MAIN = 60.0, 20.0, 22.0


def _maker():
    spec = importlib.util.spec_from_file_location("make_model_webs", SAMPLES / "make_model_webs.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


MAKER = None


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    global MAKER
    MAKER = _maker()
    out = tmp_path_factory.mktemp("models")
    for name in ("prism", "boss", "chamfered", "recessed", "lobe"):
        MAKER.write_step(MAKER.WEBS[name](), out / f"{name}.step", name=name)
    MAKER.write_bad_models(out)
    return out


#: an invented light single (a small two-stroke's masses, g) for the lobe web, whose counterweight lobe is
#: so thin that it needs counterweight even at a low balance factor
LIGHT = {"balance_factor": 0.5,
         "reciprocating": {"piston": 40.0, "piston_pin": 10.0, "rings_and_clips": 2.0, "rod_small_end": 10.0},
         "rotating": {"rod_big_end": 30.0, "big_end_bearing": 5.0}, "crank_parts": {"crankpin": 20.0}}


#: lighter still (invented): the lobe web is heavy on its pin side by itself, so even with no balance
#: factor it needs counterweight; with next to nothing at the pin, holes in the hub can give it
FEATHER = {**LIGHT, "balance_factor": 0.0, "rotating": {"rod_big_end": 5.0}, "crank_parts": {"crankpin": 2.0}}


def _job(path, kind="holes", bf=None, light=False, engine=None, **web) -> dict:
    """The shipped sample's engine and correction (invented data) on another model (`light`: LIGHT's
    masses; `engine`: these masses)."""
    job = tomllib.loads((SAMPLES / "model-web.toml").read_text())
    if light:
        job["engine"].update(LIGHT)
    if engine:
        job["engine"].update(engine)
    if bf is not None:
        job["engine"]["balance_factor"] = bf
    job["web"] = {**job["web"], "model": str(path), **web}
    job["correction"] = {**job["correction"], "kind": kind}
    return job


def _read_step_solids(path):
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.STEPControl import STEPControl_Reader
    from OCP.TopAbs import TopAbs_SOLID
    from OCP.TopExp import TopExp_Explorer

    r = STEPControl_Reader()
    assert r.ReadFile(str(path)) == IFSelect_RetDone
    r.TransferRoots()
    exp, out = TopExp_Explorer(r.OneShape(), TopAbs_SOLID), []
    while exp.More():
        out.append(exp.Current())
        exp.Next()
    return out


def _gprop(shape):
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    p = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape, p, 1e-11)
    c = p.CentreOfMass()
    return p.Mass(), np.array([c.X(), c.Y(), c.Z()])


def _ray_hits(shape, x, y) -> list[float]:
    """The z of every crossing of the vertical line through (x, y) with the shape's faces, sorted."""
    from OCP.gp import gp_Dir, gp_Lin, gp_Pnt
    from OCP.IntCurvesFace import IntCurvesFace_ShapeIntersector

    inter = IntCurvesFace_ShapeIntersector()
    inter.Load(shape, 1e-7)
    inter.Perform(gp_Lin(gp_Pnt(x, y, -100.0), gp_Dir(0, 0, 1)), -1e9, 1e9)
    return sorted(inter.Pnt(i).Z() for i in range(1, inter.NbPnt() + 1))


# ------------------------------------------------------------------ the model as the job's base
@pytest.mark.parametrize("name", ["prism", "boss", "chamfered", "recessed", "lobe"])
def test_base_properties_are_the_solid_s(folder, name):
    """The web's mass and unbalance from the model against the hand-worked volume and centroid of the
    maker (cylinders, annuli, circular segments; chamfer rings by Pappus's theorem), steel 7.85 g/cm^3
    (the job's material)."""
    from geomgen.webs import web_section

    job = api.load_job(_job(folder / f"{name}.step"))
    sec = web_section(job, job.webs[0])
    volume, centroid = MAKER.expected(name)
    rho = job.webs[0].density * 1e-3
    mp = sec.massprops()
    assert mp.mass == pytest.approx(rho * volume, rel=1e-9)
    assert mp.unbalance[1] == pytest.approx(rho * volume * centroid[1], rel=1e-8, abs=1e-6)
    # the model's height: the boss stands to z = 20, every other web is 18 mm at its thickest (the maker)
    assert sec.thickness == pytest.approx(20.0 if name == "boss" else 18.0, abs=1e-9)


def test_prism_model_plans_as_the_parametric_web(folder):
    """A prism given as a model plans exactly as the same web given by diameter and thickness (the
    parametric route is the reference): same features to 1e-6 mm, same predicted unbalance to 1e-6, and
    the same band on the balance factor (the model's body as the prism of its height, its thickness input
    scaling it along Z, is then the parametric prism itself)."""
    job = _job(folder / "prism.step")
    job["web"] = {k: v for k, v in job["web"].items() if k != "model"}
    job["web"].update(diameter=130.0, thickness=18.0)
    job["correction"]["max_depth"] = 18.0
    as_model = api.plan(_job(folder / "prism.step") | {"correction": job["correction"]})
    parametric = api.plan(job)
    for a, b in zip(as_model.document["webs"], parametric.document["webs"], strict=True):
        assert len(a["planned_features"]) == len(b["planned_features"]) > 0
        for fa, fb in zip(a["planned_features"], b["planned_features"], strict=True):
            for key in ("x", "y", "diameter", "depth"):
                assert fa[key] == pytest.approx(fb[key], abs=1e-6)
        ua, ub = np.array(a["predicted"]["unbalance_gmm"]), np.array(b["predicted"]["unbalance_gmm"])
        assert np.linalg.norm(ua - ub) <= 1e-6 * np.linalg.norm(ub)
    band_m, band_p = as_model.document["balance_factor_band"], parametric.document["balance_factor_band"]
    for key in ("nominal", "low_95", "high_95", "u"):
        assert band_m[key] == pytest.approx(band_p[key], rel=1e-6)


# ------------------------------------------------------------------ bad models: one line, exit 2
BAD = [
    ("open-shell.step", {}, "no solid"),
    ("two-solids.step", {}, "2 solids"),
    ("wrong-frame.step", {}, "lowest point is at z = -9"),
    ("pin-off-stroke.step", {}, "no crankpin bore"),
    ("pin-on-x.step", {}, "model_rotate_deg = 90"),
    ("no-length-unit.step", {}, "model_units"),
]


@pytest.mark.parametrize("file, extra, words", BAD)
def test_bad_model_one_line_exit_2_nothing_written(folder, tmp_path, capsys, file, extra, words):
    text = (SAMPLES / "model-web.toml").read_text()
    text = text.replace('model = "model-web.step"', f'model = "{(folder / file).as_posix()}"')
    assert str(folder) in text
    path = tmp_path / "job.toml"
    path.write_text(text)
    out = tmp_path / "out"
    code = main(["plan", str(path), "--out", str(out)])
    err = capsys.readouterr().err
    lines = err.strip().splitlines()
    assert code == 2
    assert len(lines) == 1 and lines[0].startswith("geomgen: ") and "Traceback" not in err
    assert words in lines[0]
    assert not out.exists()


def test_rotation_and_units_bring_a_model_into_the_frame(folder):
    """pin-on-x.step is the prism turned -90 deg: model_rotate_deg = 90 gives the prism's own base to
    1e-9 (GProp on both).  The unitless file read as mm is the prism; read as inches its volume is
    25.4^3 times larger (a length scaled by 25.4)."""
    from geomgen.webs import web_section

    def base(**web):
        job = api.load_job(_job(**web))
        return web_section(job, job.webs[0]).massprops()

    ref = base(path=folder / "prism.step")
    turned = base(path=folder / "pin-on-x.step", model_rotate_deg=90)
    assert turned.mass == pytest.approx(ref.mass, rel=1e-9)
    assert np.allclose(turned.unbalance, ref.unbalance, rtol=0, atol=1e-6 * abs(ref.unbalance[1]))
    mm = base(path=folder / "no-length-unit.step", model_units="mm")
    assert mm.mass == pytest.approx(ref.mass, rel=1e-9)
    with pytest.raises(BadInput, match="file that declares none"):
        base(path=folder / "prism.step", model_units="in")
    # the same numbers read as inches: every length 25.4 times larger, so the 20 mm pin bore at 30 mm is
    # 508 mm across at 762 mm, and the job's bore is not there (refused, naming what was found)
    with pytest.raises(BadInput, match=r"508 mm at \(0, 762\)"):
        base(path=folder / "no-length-unit.step", model_units="in")


def test_a_model_is_one_of_three_shapes(folder):
    with pytest.raises(BadInput, match="exactly one of 'diameter'"):
        api.load_job(_job(folder / "prism.step", diameter=130.0))
    with pytest.raises(BadInput, match="thickness"):
        api.load_job(_job(folder / "prism.step", thickness=18.0))


# ------------------------------------------------------------------ plans held to the exported result
#: (web, method, engine, correction keys): every web with every method it can meet the need with on one of the
#: invented engines (sample: the shipped sample's; LIGHT; FEATHER)
CASES = [("boss", "holes", "sample", {}), ("boss", "pockets", "sample", {}), ("boss", "plugs", "light", {}),
         ("boss", "radial", "light", {}), ("boss", "auto", "sample", {}),
         ("boss", "pockets", "sample", {"lighten": 20.0}),
         ("chamfered", "holes", "sample", {}), ("chamfered", "plugs", "sample", {}),
         ("chamfered", "pockets", "light", {}), ("chamfered", "radial", "light", {}),
         ("chamfered", "holes", "sample", {"lighten": 20.0}),
         # no one column of the recessed web reaches the sample's need with holes: the plan spreads over two
         ("recessed", "holes", "sample", {}), ("recessed", "plugs", "sample", {}),
         ("recessed", "pockets", "light", {}), ("recessed", "radial", "light", {}),
         ("lobe", "holes", "feather", {}), ("lobe", "plugs", "light", {}), ("lobe", "pockets", "light", {})]
ENGINES = {"sample": None, "light": LIGHT, "feather": FEATHER}


@pytest.mark.parametrize("name, kind, engine, extra", CASES)
def test_plan_on_a_model_checked_on_its_files(folder, tmp_path, name, kind, engine, extra):
    model = folder / f"{name}.step"
    job = _job(model, kind=kind, engine=ENGINES[engine])
    job["correction"].update(extra)
    plan = api.plan(job)
    written = plan.verify().write(tmp_path / "out")
    assert "web-a.step" in [Path(p).name for p in written]
    doc = plan.document
    web = doc["webs"][0]
    assert web["planned_features"], web["why"]
    rho = web["density_g_cm3"] * 1e-3
    # 1. the exported body, read by OpenCascade's plain reader, lands within the tolerance of the target
    solids = _read_step_solids(tmp_path / "out" / "web-a.step")
    total = np.zeros(2)
    plug_material = api.load_job(job).correction.plug_material
    plug_rho = plug_material.density * 1e-3 if web["method"] == "plugs" else rho
    for i, s in enumerate(solids):
        v, c = _gprop(s)
        total += (rho if i == 0 else plug_rho) * v * c[:2]
    target = np.array(web["target_gmm"])
    assert np.linalg.norm(total - target) <= web["tolerance_gmm"] + 1e-6
    # 2. the STL by trimesh agrees with the exact body (the mesh is within its chord of the B-rep)
    import trimesh

    mesh = trimesh.load(tmp_path / "out" / "web-a.stl")
    v0, c0 = _gprop(solids[0])
    assert mesh.volume == pytest.approx(v0, rel=2e-3)
    assert np.allclose(mesh.center_mass[:2], c0[:2], atol=0.05)
    # 3. depths from the real entry face, walls on the solid
    original = _read_step_solids(model)[0]
    c = job["correction"]
    for f in web["planned_features"]:
        if f["kind"] == "radial":
            _radial_on_result(original, solids[0], f, c)
            continue
        if f["kind"] in ("hole", "plug"):
            x, y = f["x"], f["y"]
        else:
            a = math.radians(0.5 * (f["angle_start"] + f["angle_end"]))
            r = 0.5 * (f["r_inner"] + f["r_outer"])
            x, y = -r * math.sin(a), r * math.cos(a)
        faces = _ray_hits(original, x, y)
        entry = faces[-1] if f["face"] == "outer" else faces[0]
        after = _ray_hits(solids[0], x, y)
        if not [z for z in after if faces[0] + 1e-6 < z < faces[-1] - 1e-6]:
            # right through the web here: a through hole, or a plug as long as the web is thick there
            assert f.get("through") or f.get("length") == pytest.approx(faces[-1] - faces[0], abs=1e-6)
            continue
        if f["kind"] == "plug":
            tip = f["length"]
        else:
            tip = f["depth"] + (0.5 * f["diameter"] / math.tan(math.radians(0.5 * f["point_angle"]))
                                if f["kind"] == "hole" and f["point_angle"] < 180 else 0.0)
        bottom = max(after) if f["face"] == "outer" else min(after)
        assert abs(entry - bottom) == pytest.approx(tip, abs=1e-6)
        # the floor left under the feature is at least min_wall
        floor = bottom - faces[0] if f["face"] == "outer" else faces[-1] - bottom
        assert floor >= c["min_wall"] - 1e-6
        if f["kind"] == "hole":
            _hole_walls(original, x, y, f, entry, c)
    # the band's closed forms on the model (its exact body, each feature on its column) give the balance
    # factor the exact plan achieved
    assert doc["balance_factor_band"]["nominal"] == pytest.approx(doc["crank"]["balance_factor_achieved"],
                                                                  abs=1e-6)
    feats = web["planned_features"]
    if kind == "auto":
        assert web["why"].startswith(f"auto: {web['method']} won")
    if name == "recessed" and kind == "holes":
        # holes both in the recess's column (over the recess floor, 2.5 mm up) and outside it
        inside = [math.hypot(f["x"], f["y"] - 0.5 * STROKE) < 0.5 * MAKER.RECESS_D for f in feats]
        assert any(inside) and not all(inside)
        # stretches 18 and 15.5 mm thick under one face: no program, the report says to cut from the sheet
        assert not (tmp_path / "out" / "web-a-outer.nc").exists()
        assert "flat stretches of different thickness" in (tmp_path / "out" / "report.html").read_text()
    if extra.get("lighten"):
        assert _lightening_mass(feats, rho) == pytest.approx(extra["lighten"], abs=0.5)


def _lightening_mass(feats, rho) -> float:
    """The mass the lightening takes, g, from the plan's rows and closed forms.  The lightening is what is
    mirrored about the X axis (the correction is mirrored about Y only): holes whose mirror image about X
    is planned too (a cylinder plus its cone, Machinery's Handbook's drill point), or kidney pockets centred
    on +X or -X, here slots (corner radius half the width: the centre line's arc between the end circles
    times the width, plus one full circle).  Together they must carry no first moment."""
    def key(f, sign=1):
        return (round(f["x"], 3), round(sign * f["y"], 3))

    holes = {key(f) for f in feats if f["kind"] == "hole"}
    light_holes = [f for f in feats if f["kind"] == "hole" and abs(f["y"]) > 1e-6 and key(f, -1) in holes]
    light_pockets = [f for f in feats if f["kind"] == "pocket"
                     and round((0.5 * (f["angle_start"] + f["angle_end"])) % 180.0, 6) == 90.0]
    assert len(light_holes) >= 4 or len(light_pockets) == 2
    moment = np.zeros(2)
    mass = 0.0
    for f in light_holes:
        r = 0.5 * f["diameter"]
        m = math.pi * r * r * (f["depth"] + r / math.tan(math.radians(0.5 * f["point_angle"])) / 3.0) * rho
        mass, moment = mass + m, moment + m * np.array([f["x"], f["y"]])
    for f in light_pockets:
        w, rc, rm = f["r_outer"] - f["r_inner"], f["corner_radius"], 0.5 * (f["r_outer"] + f["r_inner"])
        assert rc == pytest.approx(0.5 * w)
        span = math.radians(f["angle_end"] - f["angle_start"]) - 2.0 * math.asin(rc / rm)
        m = (span * rm * w + math.pi * rc * rc) * f["depth"] * rho
        a = math.radians(0.5 * (f["angle_start"] + f["angle_end"]))
        mass, moment = mass + m, moment + m * rm * np.array([-math.sin(a), math.cos(a)])
    assert np.allclose(moment, 0.0, atol=1e-6 * mass * 65)
    return mass


def _radial_on_result(original, result, f, c):
    """A radial hole on its files: a horizontal line beside its axis (E mm above it, from outside the rim
    inwards; a line through the point's apex itself is a tangency the intersector may miss) meets the model
    first at the rim and the cut body first on the drill's point, depth plus the point's length
    (d / 2 / tan(point_angle / 2), Machinery's Handbook's drill-point length) less E / tan(point_angle / 2)
    further in; a
    cylinder the size of its full-diameter part, built here, touches one face of the model (the rim it
    enters) and keeps min_wall (pin_wall to the crankpin bore) from every other."""
    import cadquery as cq
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape
    from OCP.gp import gp_Dir, gp_Lin, gp_Pnt
    from OCP.IntCurvesFace import IntCurvesFace_ShapeIntersector
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer

    a, e = math.radians(f["angle"]), 0.25
    ux, uy = -math.sin(a), math.cos(a)           # outwards along the hole's axis

    def first_hit(shape):
        inter = IntCurvesFace_ShapeIntersector()
        inter.Load(shape, 1e-7)
        inter.Perform(gp_Lin(gp_Pnt(100 * ux, 100 * uy, f["z"] + e), gp_Dir(-ux, -uy, 0.0)), 0.0, 1e9)
        return 100.0 - min(inter.WParameter(i) for i in range(1, inter.NbPnt() + 1))

    entry, tip = first_hit(original), first_hit(result)
    cot = 1.0 / math.tan(math.radians(0.5 * f["point_angle"]))
    assert entry - tip == pytest.approx(f["depth"] + (0.5 * f["diameter"] - e) * cot, abs=1e-6)
    shoulder = entry - f["depth"]
    cyl = cq.Solid.makeCylinder(0.5 * f["diameter"], f["depth"] + 5.0, cq.Vector(shoulder * ux, shoulder * uy, f["z"]),
                                cq.Vector(ux, uy, 0.0)).wrapped
    exp, touched = TopExp_Explorer(original, TopAbs_FACE), 0
    while exp.More():
        face = exp.Current()
        exp.Next()
        d = BRepExtrema_DistShapeShape(cyl, face)
        if d.Value() < 1e-7:
            touched += 1
            continue
        to_pin = math.hypot(d.PointOnShape2(1).X(), d.PointOnShape2(1).Y() - 0.5 * STROKE) < 0.5 * PIN + 1e-6
        need = max(c["min_wall"], c["pin_wall"]) if to_pin else c["min_wall"]
        assert d.Value() >= need - 1e-6
    assert touched == 1


def _hole_walls(original, x, y, f, entry, c):
    """BRepExtrema between a cylinder the size of the hole (built here) and every face of the model but
    its entry face: the wall the hole leaves, at least min_wall (pin_wall to the crankpin bore)."""
    import cadquery as cq
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer

    r, down = 0.5 * f["diameter"], f["face"] == "outer"
    z0 = entry - f["depth"] if down else entry
    cyl = cq.Solid.makeCylinder(r, f["depth"], cq.Vector(x, y, z0)).wrapped
    exp = TopExp_Explorer(original, TopAbs_FACE)
    while exp.More():
        face = exp.Current()
        exp.Next()
        d = BRepExtrema_DistShapeShape(cyl, face)
        if d.Value() < 1e-7:
            continue  # the entry face
        to_pin = math.hypot(d.PointOnShape2(1).X(), d.PointOnShape2(1).Y() - 0.5 * STROKE) < 0.5 * PIN + 1e-6
        need = max(c["min_wall"], c["pin_wall"]) if to_pin else c["min_wall"]
        assert d.Value() >= need - 1e-6


def test_shipped_sample_plans_on_its_model(tmp_path):
    """samples/model-web.toml (invented engine): bob weight by hand 146 + 0.55 * 274 = 296.7 g, each web's
    target (146 + 92 + 150.7) * 60 / 2 / 2 = 5830.5 g*mm; the plan lands within tolerance on the exact B-rep
    (against the exact per-feature effects: 1e-6 relative).  Its holes all enter the disc's outer face
    (z = 16) while the boss stands 5 mm higher (the maker's dimensions): web-a-outer.nc, read here word by
    word, is zeroed on that face, moves sideways only 5 mm plus the R plane (2 mm, the default) above it or
    higher, and drills each hole to the sheet's travel from that face (through: the 16 mm disc plus the
    point, d / 2 / tan(59 deg), Machinery's Handbook's drill point)."""
    assert api.study(SAMPLES / "model-web.toml")["bob_weight_g"] == pytest.approx(296.7, abs=1e-3)
    plan = api.plan(SAMPLES / "model-web.toml")
    verified = plan.verify()
    verified.write(tmp_path / "out")
    doc = json.loads((tmp_path / "out" / "plan.json").read_text())
    for web in doc["webs"]:
        assert np.linalg.norm(web["target_gmm"]) == pytest.approx(5830.5, abs=0.05)
        assert web["within_tolerance"]
        exact = np.array(web["exact"]["unbalance_gmm"])
        predicted = np.array(web["predicted"]["unbalance_gmm"])
        assert np.linalg.norm(exact - predicted) <= 1e-6 * np.linalg.norm(predicted)
    # the report heads each web with what the model is, not a thickness it does not have (the maker's
    # sample: the 16 mm disc's boss stands to z = 21)
    assert "Web a: given as a 3D model, 21.00 mm high overall" in (tmp_path / "out" / "report.html").read_text()
    # the sheet and the drawing say where each depth starts: the disc's outer face, z = 16 (the maker's)
    import csv

    maker = _maker()
    rows = list(csv.DictReader((tmp_path / "out" / "operations.csv").read_text().splitlines()))
    assert rows and {float(r["entry_z_mm"]) for r in rows} == {maker.SAMPLE_T}
    assert "depths from the face each feature enters: outer face at z = 16.00 mm" in \
        (tmp_path / "out" / "drawing.dxf").read_text()
    text = (tmp_path / "out" / "web-a-outer.nc").read_text()
    assert "Z0 on the outer face where these features enter it, z 16" in " ".join(
        line.strip("()") for line in text.splitlines())
    rise = maker.SAMPLE_BOSS_TOP - maker.SAMPLE_T
    assert rise == pytest.approx(5.0)
    pos, mode, bottoms = {"X": None, "Y": None, "Z": None}, None, []
    for raw in text.splitlines():
        line = re.sub(r"\([^)]*\)", "", raw).strip()
        words = dict(re.findall(r"([A-Z])(-?\d+(?:\.\d+)?)", line))
        codes = re.findall(r"G(\d+)", line)
        for g in codes:
            if g in ("0", "1", "2", "3", "81", "83"):
                mode = g
        new = {k: float(words[k]) for k in "XYZ" if k in words}
        if mode in ("81", "83") and "R" in words and ("X" in words or "Y" in words):
            assert float(words["R"]) >= rise + 2.0 - 1e-9
            bottoms.append((new.get("X", pos["X"]), new.get("Y", pos["Y"]), new["Z"]))
            pos.update({k: v for k, v in new.items() if k in "XY"})
            continue
        if mode == "0" and ("X" in new or "Y" in new) and pos["Z"] is not None:
            assert new.get("Z", pos["Z"]) >= rise + 2.0 - 1e-9
        pos.update(new)
    web = doc["webs"][0]
    assert len(bottoms) == len(web["planned_features"])
    for f in web["planned_features"]:
        tip = (maker.SAMPLE_T if f.get("through") else f["depth"]) + 0.5 * f["diameter"] / math.tan(math.radians(59))
        near = [b for b in bottoms if abs(b[0] - f["x"]) < 1e-3 and abs(b[1] - f["y"]) < 1e-3]
        assert len(near) == 1 and near[0][2] == pytest.approx(-tip, abs=1e-3)


def test_what_a_flat_prism_would_have_said(folder):
    """plan.json's prism_comparison: a prism given as a model is its own flat prism (mean thickness 18 mm,
    no error); for the shipped sample the flat prism's unbalance is the density times the mean thickness
    times the first moment of the outline less the bores, here from shapely's area and centroid of a
    polygon within 1e-4 mm of the outline and bores (an independent library), to 1e-4."""
    import shapely

    prism_plan = api.plan(_job(folder / "prism.step"))
    c = prism_plan.document["webs"][0]["prism_comparison"]
    assert c["mean_thickness_mm"] == pytest.approx(18.0, abs=1e-4)
    assert c["prism_error_gmm"] <= 1e-3
    plan = api.plan(SAMPLES / "model-web.toml")
    web = plan.document["webs"][0]
    c = web["prism_comparison"]
    sec = plan.webs[0].work.section
    poly = shapely.Polygon(sec.outer.points(1e-4), [b.oriented(False).points(1e-4) for b in sec.bores])
    rho = web["density_g_cm3"] * 1e-3
    expected_y = rho * c["mean_thickness_mm"] * poly.area * poly.centroid.y
    assert c["prism_unbalance_gmm"][1] == pytest.approx(expected_y, rel=1e-4)
    # the model's own figure is the exact B-rep's, and the flat drawing is off by more than the tolerance
    # (the figures of plan.json are rounded to 6 significant digits)
    assert c["prism_error_gmm"] == pytest.approx(abs(c["prism_unbalance_gmm"][1] - c["model_unbalance_gmm"][1]),
                                                 rel=1e-4)
    assert c["prism_error_gmm"] > web["tolerance_gmm"]


def test_section_profile_is_the_model_s(folder):
    """The section view's profile along Y at x = 0 on the boss web, against the maker's dimensions: the
    14 mm disc at y = -40 and y = 50 (clear of the 20 mm pin bore at y 20..40), the boss to z = 20 at y = -15
    (outside the 22 mm main bore, inside the 50 mm boss), nothing in the main bore (y = 0)."""
    from geomgen.model_view import profile
    from geomgen.webs import web_section

    job = api.load_job(_job(folder / "boss.step"))
    ys, spans = profile(web_section(job, job.webs[0]))

    def at(y):
        return spans[int(np.argmin(np.abs(ys - y)))]

    assert at(-40.0) == [(pytest.approx(0.0, abs=1e-9), pytest.approx(14.0, abs=1e-9))]
    assert at(50.0) == [(pytest.approx(0.0, abs=1e-9), pytest.approx(14.0, abs=1e-9))]
    assert at(-15.0) == [(pytest.approx(0.0, abs=1e-9), pytest.approx(20.0, abs=1e-9))]
    assert at(0.0) == []


def test_a_weighed_model_web_is_fitted_in_density(folder):
    """A model web weighed at 2000 g: its density is the weighing over the model's volume, worked by hand in
    samples/make_model_webs.py (cylinders, annuli and segments for the boss web); the band then takes its
    thickness tolerance as a scale along Z (mass per mm = mass / height, 20 mm).  Fitting a model's
    thickness instead is refused with one line (exit 2): the model's height is its own."""
    volume, _ = MAKER.expected("boss")
    job = _job(folder / "boss.step", weighed=2000.0, calibrate="density")
    c = api.load_job(job).webs[0].calibration
    assert c.density == pytest.approx(2000.0 / (volume * 1e-3), rel=1e-9)
    assert c.mass_per_density == pytest.approx(volume * 1e-3, rel=1e-9)
    assert c.mass_per_thickness == pytest.approx(2000.0 / MAKER.BOSS_TOP, rel=1e-9)
    with pytest.raises(BadInput, match=r"web\.calibrate: a web given as a model .*\(calibrate = \"density\"\)"):
        api.load_job(_job(folder / "boss.step", weighed=2000.0, calibrate="thickness"))


def test_what_the_lobe_web_cannot_meet_is_infeasible(folder):
    """The lobe web on the LIGHT engine needs 7902 g*mm more counterweight: radial holes cannot give it
    (the hub's rim, 18 mm thick, takes 12 mm drills at most, and the pin bore stops them), so the plan is
    refused as infeasible (exit code 3) naming the most the search found: more than nothing, less than
    the need."""
    from geomgen.errors import Infeasible

    with pytest.raises(Infeasible) as exc:
        api.plan(_job(folder / "lobe.step", kind="radial", light=True))
    assert exc.value.exit_code == 3
    m = re.search(r"needs (\d+) g\*mm of correction but the search found at most (\d+) g\*mm with radial",
                  str(exc.value))
    assert m and 0 < int(m.group(2)) < int(m.group(1))


def test_build_and_trim_take_a_model(tmp_path):
    """`build` of the shipped sample writes the model as it is (OpenCascade's plain reader and GProp give
    the mass of the hand-worked volume at 7.85 g/cm^3); `trim` of its plan with a balancing machine's
    reading of 40 g*mm at 30 deg from the crankpin, with the rotation (counter-clockwise: crank frame
    (-40 sin 30, 40 cos 30) = (-20, 34.64) g*mm), cuts both model webs so that the change read from the
    exported STEP files (web b mirrored in x into the crank frame) takes that spot off, to what the trim
    says is left."""
    maker = _maker()
    volume, _ = maker.expected("sample")
    job = SAMPLES / "model-web.toml"
    assert main(["build", str(job), "--out", str(tmp_path / "built")]) == 0
    v, _ = _gprop(_read_step_solids(tmp_path / "built" / "web-a.step")[0])
    assert v == pytest.approx(volume, rel=1e-9)
    assert main(["plan", str(job), "--out", str(tmp_path / "plan")]) == 0
    assert main(["trim", str(job), "--from", str(tmp_path / "plan"), "--unbalance", "40 g*mm", "--angle", "30",
                 "--out", str(tmp_path / "trim")]) == 0
    rho = 7.85e-3
    change = np.zeros(2)
    for web, sign in (("a", 1.0), ("b", -1.0)):
        u = []
        for folder in ("plan", "trim"):
            vol, c = _gprop(_read_step_solids(tmp_path / folder / f"web-{web}.step")[0])
            u.append(rho * vol * c[:2])
        change += np.array([sign, 1.0]) * (u[1] - u[0])
    spot = 40.0 * np.array([-math.sin(math.radians(30.0)), math.cos(math.radians(30.0))])
    left = np.array(json.loads((tmp_path / "trim" / "plan.json").read_text())["trim"]["left_gmm"])
    assert np.linalg.norm(left) < 0.1 * 40.0
    assert np.allclose(spot + change, left, atol=1e-3)
