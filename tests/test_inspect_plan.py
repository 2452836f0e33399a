"""`geomgen inspect` of the files `plan` wrote agrees with plan.json (README, "A first plan", step 4).

The job (invented demo numbers, no real engine): a 136 mm cast-iron web, 20 mm thick, with a 30 mm pin bore,
that needs heavy-metal plugs of a custom density, 17.6 g/cm^3 (`plug_material = 17.6`).  Its sources:
- the cast-iron density, 7.20 g/cm^3, is geomgen.materials' "cast-iron" (grey and ductile iron, common
  practice; the grey-iron figure of Shigley's Table A-5 is the same to two digits, from memory); steel 7.85
  (common practice) is what inspect assumed before the files carried their materials;
- plan.json's "exact" figures are OpenCascade's integrals over the solids in memory; inspect re-reads the
  STEP file, takes each solid's density from the file and integrates again: the two must agree to 1e-6;
- the closed form of the web (a disc with its pin bore, through plugs of pi/4 d^2 t at the density difference,
  Machinery's Handbook's areas and centroids of circles) checks both to the same 1e-6;
- plan.json's "mesh" figures are trimesh's over the exported STL files: inspect of the body STL (with the
  plugs STL beside it) must give them again, and both must stay within plan.json's stated mesh bound of the
  exact figures.
"""

from __future__ import annotations

import json
import math
import shutil

import pytest

from geomgen.cli import main

import plancheck as pc
from conftest import toml_dumps

pytestmark = pytest.mark.cad

CAST_IRON = 7.20      # g/cm^3, geomgen.materials "cast-iron" (common practice)
STEEL = 7.85          # g/cm^3, geomgen.materials "steel" (common practice)
PLUG = 17.6           # g/cm^3, the job's own plug density
JOB = {
    "name": "cast-iron web, custom plugs (invented demo)",
    "engine": {"stroke": 66.0, "rod_length": 125.0, "max_rpm": 8500, "balance_factor": 0.65,
               "reciprocating": {"piston": 330.0, "piston_pin": 70.0, "rod_small_end": 85.0},
               "rotating": {"rod_big_end": 240.0}, "crank_parts": {"crankpin": 175.0}},
    "web": {"diameter": 136.0, "thickness": 20.0, "material": "cast-iron", "pin_bore": 30.0},
    "correction": {"kind": "plugs", "max_depth": 20.0, "plug_material": PLUG},
}


def inspect_json(capsys, *argv):
    assert main(["inspect", *map(str, argv), "--json"]) == 0
    return json.loads(capsys.readouterr().out)


@pytest.fixture(scope="module")
def planned(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("inspect-plan")
    job = tmp / "job.toml"
    job.write_text(toml_dumps(JOB))
    assert pc.run_cli(["plan", job, "--out", tmp / "plan"]) == 0
    return tmp / "plan", pc.read_plan(tmp / "plan")


def _closed_form(entry):
    """(mass g, unbalance y g*mm) of the web: the disc less its pin bore, plus each plug's density difference."""
    t, r_pin, y_pin = 20.0, 15.0, 33.0
    mass = CAST_IRON * 1e-3 * t * math.pi * (68.0 ** 2 - r_pin ** 2)
    uy = -CAST_IRON * 1e-3 * t * math.pi * r_pin ** 2 * y_pin
    for f in entry["features"]:
        assert f["kind"] == "plug" and f["length"] == t        # through plugs, as the plan chose them
        m = (PLUG - CAST_IRON) * 1e-3 * math.pi / 4 * f["diameter"] ** 2 * f["length"]
        mass, uy = mass + m, uy + m * f["y"]
    return mass, uy


def _rel(a, b):
    return abs(a - b) / abs(b)


def test_plan_writes_what_the_files_are_made_of(planned):
    folder, doc = planned
    for w in doc["webs"]:
        assert f"web-{w['name']}.json" in w["files"]
        side = json.loads((folder / f"web-{w['name']}.json").read_text())
        assert side["body"] == {"solid": "body", "material": "cast-iron", "density_g_cm3": CAST_IRON}
        assert [p["density_g_cm3"] for p in side["plugs"]] == [PLUG] * len(w["features"])
        assert [(p["x_mm"], p["y_mm"]) for p in side["plugs"]] == [(f["x"], f["y"]) for f in w["features"]]
    # the STEP says it too, in each product's description (ISO 10303-21 text, read here without any kernel)
    text = (folder / "web-a.step").read_text()
    assert text.count("'geomgen solid: cast-iron, density 7.2 g/cm^3'") == 1
    assert text.count("'geomgen solid: density 17.6 g/cm^3'") == len(doc["webs"][0]["features"])


@pytest.mark.parametrize("web", ["a", "b"])
def test_inspect_step_agrees_with_plan_json(planned, capsys, web):
    folder, doc = planned
    entry = pc.web_entry(doc, web)
    out = inspect_json(capsys, folder / f"web-{web}.step")
    exact = entry["exact"]
    assert _rel(out["mass_g"], exact["mass_g"]) <= 1e-6
    # unbalance is a vector (ISO 21940-11): its difference against its magnitude
    du = math.dist(out["unbalance_gmm"], exact["unbalance_gmm"])
    assert du <= 1e-6 * math.hypot(*exact["unbalance_gmm"])
    assert _rel(out["inertia_z_gmm2"], exact["inertia_z_gmm2"]) <= 1e-6
    mass, uy = _closed_form(entry)
    assert _rel(out["mass_g"], mass) <= 1e-6 and abs(out["unbalance_gmm"][1] - uy) <= 1e-6 * abs(uy)
    assert {s["name"]: s["density_g_cm3"] for s in out["solids"]} == \
        {"body": CAST_IRON, **{f"plug-{i + 1}": PLUG for i in range(len(entry["features"]))}}
    assert all("from the file" in s["density_from"] for s in out["solids"])
    # what inspect used to assume, steel and class 3, is visibly not what the plan is
    steel = inspect_json(capsys, folder / f"web-{web}.step", "--density", STEEL, "--plug-material",
                         "W-alloy-class-3")
    assert _rel(steel["mass_g"], exact["mass_g"]) > 0.05


def test_inspect_crank_step_is_both_webs(planned, capsys):
    folder, doc = planned
    out = inspect_json(capsys, folder / "crank.step")
    assert _rel(out["mass_g"], sum(w["exact"]["mass_g"] for w in doc["webs"])) <= 1e-6
    assert {s["density_g_cm3"] for s in out["solids"] if "body" in s["name"]} == {CAST_IRON}
    assert {s["density_g_cm3"] for s in out["solids"] if "plug" in s["name"]} == {PLUG}


@pytest.mark.parametrize("web", ["a", "b"])
def test_inspect_stl_is_the_whole_web_as_plan_weighed_it(planned, capsys, web):
    folder, doc = planned
    entry = pc.web_entry(doc, web)
    out = inspect_json(capsys, folder / f"web-{web}.stl")
    assert out["whole_web"] is True and [p["file"] for p in out["parts"]] == [f"web-{web}.stl",
                                                                             f"web-{web}-plugs.stl"]
    mesh, exact, bound = entry["mesh"], entry["exact"], entry["agreement"]["mesh_bound"]
    # the same trimesh figures plan.json holds (9 significant digits there)
    assert _rel(out["mass_g"], mesh["mass_g"]) <= 1e-8
    assert math.dist(out["unbalance_gmm"], mesh["unbalance_gmm"]) <= 1e-8 * math.hypot(*mesh["unbalance_gmm"])
    # and within the mesh's stated bound of the exact B-rep figures
    assert abs(out["mass_g"] - exact["mass_g"]) <= bound["mass_g"]
    assert math.dist(out["unbalance_gmm"], exact["unbalance_gmm"]) <= bound["unbalance_gmm"]
    assert abs(out["inertia_z_gmm2"] - exact["inertia_z_gmm2"]) <= bound["inertia_z_gmm2"]
    # the body alone is the cast-iron part; the plugs are each at 17.6
    body, plugs = out["parts"]
    assert body["density_g_cm3"] == CAST_IRON
    assert [p["density_g_cm3"] for p in plugs["plugs"]] == [PLUG] * len(entry["features"])
    # the plugs STL on its own: the same plug pieces, the same figures as the plugs' share above
    alone = inspect_json(capsys, folder / f"web-{web}-plugs.stl")
    assert alone["mass_g"] == pytest.approx(plugs["mass_g"], rel=1e-12)
    # the closed form of the plugs (pi/4 d^2 L at 17.6), less what the chords cut off, within the bound
    v_plugs = sum(math.pi / 4 * f["diameter"] ** 2 * f["length"] for f in entry["features"])
    assert 0 <= PLUG * 1e-3 * v_plugs - alone["mass_g"] <= bound["mass_g"]


def test_plug_density_and_density_override_the_files(planned, capsys):
    folder, doc = planned
    entry = pc.web_entry(doc, "a")
    v_plugs = sum(math.pi / 4 * f["diameter"] ** 2 * f["length"] for f in entry["features"])   # closed form
    exact = entry["exact"]["mass_g"]
    out = inspect_json(capsys, folder / "web-a.step", "--plug-density", 18.5)
    assert {s["density_g_cm3"] for s in out["solids"] if s["name"].startswith("plug")} == {18.5}
    assert out["mass_g"] == pytest.approx(exact + (18.5 - PLUG) * 1e-3 * v_plugs, rel=1e-6)
    assert any("in place of the file's 17.6" in n for n in out["notes"])
    # a named material: ASTM B777-15 class 1 (16.85-17.30 g/cm^3, nominal the middle, 17.075)
    out = inspect_json(capsys, folder / "web-a.step", "--plug-material", "W-alloy-class-1")
    assert out["mass_g"] == pytest.approx(exact + (17.075 - PLUG) * 1e-3 * v_plugs, rel=1e-6)
    # --density changes the body alone, and says so
    out = inspect_json(capsys, folder / "web-a.step", "--density", STEEL)
    body = next(s for s in out["solids"] if s["name"] == "body")
    assert body["density_g_cm3"] == STEEL
    assert out["mass_g"] == pytest.approx(exact + (STEEL - CAST_IRON) * 1e-3 * body["volume_mm3"], rel=1e-6)
    # the STL: --plug-density sets every plug piece
    mesh = inspect_json(capsys, folder / "web-a.stl")
    over = inspect_json(capsys, folder / "web-a.stl", "--plug-density", 18.5)
    v_mesh = mesh["parts"][1]["volume_mm3"]
    assert over["mass_g"] == pytest.approx(mesh["mass_g"] + (18.5 - PLUG) * 1e-3 * v_mesh, rel=1e-9)


def test_without_the_json_and_with_a_stale_one(planned, capsys, tmp_path):
    folder, doc = planned
    copy = tmp_path / "copy"
    shutil.copytree(folder, copy)
    entry = pc.web_entry(doc, "a")
    # no web-a.json: the STEP still carries its densities; the STL is one mesh again, at steel unless told
    (copy / "web-a.json").unlink()
    step = inspect_json(capsys, copy / "web-a.step")
    assert step["mass_g"] == pytest.approx(entry["exact"]["mass_g"], rel=1e-6)
    stl = inspect_json(capsys, copy / "web-a.stl")
    assert stl["whole_web"] is False and stl["density_g_cm3"] == STEEL
    told = inspect_json(capsys, copy / "web-a.stl", "--density", CAST_IRON)
    assert told["mass_g"] == pytest.approx(stl["mass_g"] * CAST_IRON / STEEL, rel=1e-12)
    # an STL that is not the one web-b.json describes (its sha256 differs): the json is not used, and it says so
    shutil.copyfile(copy / "web-a-plugs.stl", copy / "web-b.stl")
    stale = inspect_json(capsys, copy / "web-b.stl")
    assert stale["whole_web"] is False and stale["density_g_cm3"] == STEEL
    assert any("sha256 differs" in n for n in stale["notes"])
    # --plug-density on a one-material mesh is refused in one line
    assert main(["inspect", str(copy / "web-a.stl"), "--plug-density", "17"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--plug-density" in err[0]
