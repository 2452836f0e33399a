"""The Python API end to end (README "Python API"): a job from a dict, its study, its plan in maths,
its verified solids written whole, the STEP read back; the errors' exit-code classes; the README's
example run exactly as printed there.

Hand figures use the README's definitions with the minimal job's numbers (conftest: invented demo):
bob weight = m_rot + BF m_recip = 200 + 0.55 * 330 = 381.5 g; each web carries
-(m_rot + m_crank_parts + BF m_recip) * stroke/2 / 2 = -(200 + 140 + 181.5) * 32 / 2 = -8344 g*mm on y;
the per-web tolerance is 0.5 % of m_recip * stroke/2, halved: 0.005 * 330 * 32 / 2 = 26.4 g*mm.
"""

from __future__ import annotations

import json
import math
import re
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest

import geomgen

import plancheck as pc
from conftest import minimal_job_dict, toml_dumps

ROOT = Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "samples"
STEEL = 7.85

M_RECIP, M_ROT, M_PARTS, BF, STROKE = 250.0 + 80.0, 200.0, 140.0, 0.55, 64.0
TARGET_PER_WEB = -(M_ROT + M_PARTS + BF * M_RECIP) * STROKE / 2 / 2          # -8344 g*mm
TOLERANCE_PER_WEB = 0.005 * M_RECIP * STROKE / 2 / 2                          # 26.4 g*mm
CONTRACT_FILES = {"plan.json", "web-a.step", "web-a.stl", "web-a.json", "web-b.step", "web-b.stl", "web-b.json",
                  "crank.step", "operations.csv", "drawing.dxf", "report.html", "study.json", "study.svg",
                  "web-a-outer.nc", "web-b-outer.nc"}


def test_import_geomgen_loads_no_cad_kernel_and_no_plotting():
    # the design rule: the maths and the API's import load neither cadquery/OCP nor a chart library
    script = ("import sys, geomgen\n"
              "heavy = [m for m in sys.modules if m.split('.')[0] in ('cadquery', 'OCP', 'matplotlib', 'pygal')]\n"
              "import geomgen.study, geomgen.inspect\n"
              "print(heavy, callable(geomgen.study), callable(geomgen.inspect), geomgen.study is geomgen.api.study)\n")
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=120, cwd=ROOT)
    assert out.returncode == 0, out.stderr
    # the package's study/inspect stay the API's functions after the same-named modules are imported
    assert out.stdout.split() == ["[]", "True", "True", "True"]


# ------------------------------------------------------------------ maths only
def test_study_and_plan_from_a_dict_match_the_hand_figures(capsys):
    job = geomgen.load_job(minimal_job_dict())
    result = geomgen.study(job)
    assert result["bob_weight_g"] == pytest.approx(M_ROT + BF * M_RECIP, abs=1e-9)        # 381.5
    assert result["target_per_web_gmm"] == pytest.approx(abs(TARGET_PER_WEB), abs=1e-6)   # 8344

    plan = geomgen.plan(job)
    assert plan.command == "plan" and [w.name for w in plan.webs] == ["a", "b"]
    # closed form of the bare disc with its pin bore empty (plancheck): the web before any feature
    bare_u = pc.disc_web_unbalance(diameter=130.0, thickness=18.0, density=STEEL, stroke=STROKE, pin_bore=28.0)
    bare_m = pc.disc_web_mass(diameter=130.0, thickness=18.0, density=STEEL, pin_bore=28.0)
    for web in plan.webs:
        assert web.target_gmm == pytest.approx((0.0, TARGET_PER_WEB), abs=1e-9)
        assert web.tolerance_gmm == pytest.approx(TOLERANCE_PER_WEB, rel=1e-12)
        assert web.existing == () and web.features, web.why
        assert web.before.mass == pytest.approx(bare_m, rel=1e-12)
        assert web.before.unbalance == pytest.approx(bare_u, rel=1e-12, abs=1e-9)
        dev = np.asarray(web.predicted.unbalance) - np.asarray(web.target_gmm)
        assert web.deviation_gmm == pytest.approx(tuple(dev), abs=1e-9)
        assert math.hypot(*dev) <= TOLERANCE_PER_WEB and web.within_tolerance
        assert web.method in ("holes", "pockets", "plugs") and web.why
    # the prediction's plan.json: same targets, no solids yet
    doc = plan.document
    assert [w["target_gmm"] for w in doc["webs"]] == [[0.0, pytest.approx(TARGET_PER_WEB)]] * 2
    assert all("exact" not in w for w in doc["webs"])
    assert plan.crank["target_gmm"] == [0.0, pytest.approx(2 * TARGET_PER_WEB)]
    assert plan.warnings == ()
    assert capsys.readouterr() == ("", "")               # the API prints nothing


def test_warnings_are_on_the_results_not_printed(capsys):
    # a crankpin listed with the rod's rotating end: the job allows it and warns (README "The job file")
    job = geomgen.load_job(minimal_job_dict({"engine.rotating": {"rod_big_end": 200.0, "crankpin": 140.0},
                                             "engine.crank_parts": {}}))
    assert len(job.warnings) == 1 and "engine.rotating.crankpin" in job.warnings[0]
    plan = geomgen.plan(job)
    assert plan.warnings[:1] == job.warnings
    assert geomgen.study(job)["warnings"] == list(job.warnings)
    assert capsys.readouterr() == ("", "")


def test_build_keeps_the_jobs_own_features_only():
    hole = {"kind": "hole", "x": 0.0, "y": -40.0, "diameter": 10.0, "depth": 8.0}
    plan = geomgen.build(minimal_job_dict({"web.features": [hole]}))
    # closed form of the hole's change: a 10 mm cylinder 8 mm deep plus its 118 deg drill point (a cone
    # of height r / tan 59 deg), all at (0, -40): dU = -rho V (0, -40)
    r = 5.0
    volume = math.pi * r * r * 8.0 + math.pi * r * r * (r / math.tan(math.radians(59.0))) / 3.0
    for web in plan.webs:
        assert web.method == "none" and web.features == () and len(web.existing) == 1
        assert web.predicted == web.before
        change = np.asarray(web.predicted.unbalance) - pc.disc_web_unbalance(
            diameter=130.0, thickness=18.0, density=STEEL, stroke=STROKE, pin_bore=28.0)
        assert change == pytest.approx([0.0, STEEL * 1e-3 * volume * 40.0], rel=1e-9, abs=1e-9)
    assert plan.study is None and plan.command == "build"


def test_load_job_resolves_a_dxf_outline_against_base(tmp_path, monkeypatch):
    data = tomllib.loads((SAMPLES / "lighter-piston-teardrop.toml").read_text())
    from_file = geomgen.load_job(SAMPLES / "lighter-piston-teardrop.toml")
    from_dict = geomgen.load_job(data, base=SAMPLES)
    assert from_dict.webs[0].outline == from_file.webs[0].outline == (SAMPLES / "teardrop-web.dxf")
    monkeypatch.chdir(tmp_path)                    # a dict without base: against the working folder
    with pytest.raises(geomgen.BadInput, match="teardrop-web.dxf"):
        geomgen.plan(geomgen.load_job(data))


# ------------------------------------------------------------------ errors: the command line's exit codes
def test_errors_are_the_command_lines_classes(tmp_path):
    assert (geomgen.BadInput.exit_code, geomgen.Infeasible.exit_code, geomgen.VerificationFailed.exit_code) \
        == (2, 3, 4)                                # README "Exit codes"
    with pytest.raises(geomgen.BadInput, match="max_rmp") as bad:
        geomgen.load_job(minimal_job_dict({"engine.max_rmp": 11000}))
    assert bad.value.exit_code == 2
    # a 3 kg big end (invented): the target is out of any web's reach (test_plan_cli bounds it by hand)
    with pytest.raises(geomgen.Infeasible, match="needs") as far:
        geomgen.plan(minimal_job_dict({"engine.rotating": {"rod_big_end": 3000.0}}))
    assert far.value.exit_code == 3
    with pytest.raises(geomgen.BadInput, match="--web"):
        geomgen.trim(minimal_job_dict(), previous=geomgen.build(minimal_job_dict()), unbalance=10.0, angle=0.0,
                     web="c")
    with pytest.raises(geomgen.BadInput, match="no plan.json"):
        geomgen.trim(minimal_job_dict(), previous=tmp_path, unbalance=10.0, angle=0.0)


# ------------------------------------------------------------------ trim in maths
def test_trim_takes_off_the_heavy_spot_the_same_from_memory_or_folder(tmp_path):
    job = geomgen.load_job(minimal_job_dict())
    earlier = geomgen.plan(job)
    folder = tmp_path / "earlier"
    folder.mkdir()
    (folder / "plan.json").write_text(json.dumps(earlier.document))
    a = geomgen.trim(job, previous=earlier, unbalance="0.8 g at 55 mm", angle=40.0)
    b = geomgen.trim(job, previous=folder, unbalance=44.0, angle="40 deg")
    assert [w.features for w in a.webs] == [w.features for w in b.webs]
    assert a.trim["measured_gmm"] == pytest.approx(0.8 * 55.0) and b.trim["from"] == str(folder)
    # README "Commands" (trim) and "Frame": the webs change by minus the heavy spot U (-sin A, cos A), A ccw from
    # the pin;
    # web b's x is mirrored into the crank frame; planned to 1 % of U per web
    a_rad = math.radians(40.0)
    want = -44.0 * np.array([-math.sin(a_rad), math.cos(a_rad)])
    change = sum(pc.to_crank(np.asarray(w.predicted.unbalance) - np.asarray(w.before.unbalance), i)
                 for i, w in enumerate(a.webs))
    assert np.linalg.norm(change - want) <= 0.02 * 44.0
    # the trim starts from everything the earlier plan put on each web
    assert [[f.kind for f in w.existing] for w in b.webs] == [[f.kind for f in e.all_features] for e in earlier.webs]


# ------------------------------------------------------------------ solids, files, read back
@pytest.fixture(scope="module")
def verified(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("api")
    plan = geomgen.plan(minimal_job_dict())
    done = plan.verify()
    written = done.write(tmp / "out")
    return tmp, plan, done, written


@pytest.mark.cad
def test_verify_renders_every_file_and_write_puts_them_whole(verified):
    tmp, plan, done, written = verified
    out = tmp / "out"
    assert set(written) == CONTRACT_FILES == {p.name for p in out.iterdir()}
    assert written == sorted(written)
    for name in written:
        assert (out / name).read_bytes() == done.files[name]
    assert json.loads(done.files["plan.json"]) == done.document
    assert list(done.warnings) == done.document["warnings"]
    for web, entry in zip(done.webs, done.document["webs"]):
        assert entry["name"] == web.name and set(web.files) <= set(written)
        # OpenCascade's exact figures of the solid against the analytic prediction
        assert web.exact.mass == pytest.approx(web.predicted.mass, rel=1e-9)
        assert web.exact.unbalance == pytest.approx(web.predicted.unbalance, rel=1e-9, abs=1e-6)
        # trimesh on the STL at a 0.01 mm chord: within 1e-3 of the B-rep volume (craft note: -6e-5 measured)
        assert web.mesh.volume_mm3 == pytest.approx(web.exact.volume, rel=1e-3)


@pytest.mark.cad
def test_the_step_read_back_equals_the_exact_figure_in_plan_json(verified):
    tmp, _, done, _ = verified
    for name in ("a", "b"):
        read = geomgen.inspect(tmp / "out" / f"web-{name}.step")
        exact = pc.web_entry(pc.read_plan(tmp / "out"), name)["exact"]
        assert read.kind == "step" and read.figures is not None
        assert read.figures.mass_g == pytest.approx(exact["mass_g"], rel=1e-8)
        assert read.figures.unbalance_gmm == pytest.approx(exact["unbalance_gmm"], rel=1e-8, abs=1e-6)
        assert read.figures.inertia_z_gmm2 == pytest.approx(exact["inertia_z_gmm2"], rel=1e-8)
        assert read.document["mass_g"] == read.figures.mass_g and read.lines


@pytest.mark.cad
def test_write_refuses_a_non_empty_folder_without_force(verified):
    tmp, _, done, _ = verified
    out = tmp / "busy"
    out.mkdir()
    (out / "notes.txt").write_text("the customer's measurements")
    with pytest.raises(geomgen.BadInput, match="--force"):
        done.write(out)
    assert [p.name for p in out.iterdir()] == ["notes.txt"]
    assert set(done.write(out, force=True)) == {p.name for p in out.iterdir()} == CONTRACT_FILES


@pytest.mark.cad
def test_the_command_line_writes_what_the_api_renders(verified, tmp_path):
    _, _, done, _ = verified
    job = tmp_path / "job.toml"
    job.write_text(toml_dumps(minimal_job_dict()))
    assert pc.run_cli(["plan", job, "--out", tmp_path / "cli"]) == 0
    assert (tmp_path / "cli" / "plan.json").read_bytes() == done.files["plan.json"]


# ------------------------------------------------------------------ the README's example, exactly
def _readme_example() -> str:
    text = (ROOT / "README.md").read_text()
    section = text.split("\n## Python API\n", 1)[1].split("\n## ", 1)[0]
    return re.search(r"```python\n(.*?)```", section, re.S).group(1)


@pytest.mark.cad
def test_the_readme_example_runs_and_prints_the_hand_figures(tmp_path, monkeypatch, capsys):
    (tmp_path / "samples").mkdir()
    shutil.copy(SAMPLES / "heavier-piston.toml", tmp_path / "samples")
    monkeypatch.chdir(tmp_path)
    exec(compile(_readme_example(), "README.md (Python API)", "exec"), {"__name__": "__main__"})
    out = capsys.readouterr().out
    # heavier-piston.toml: m_recip 285 + 62 + 14 + 78 = 439 g, m_rot 160 + 22 = 182 g, crankpin 110 g, BF 0.6,
    # stroke 62 mm: bob weight 182 + 0.6 * 439 = 445.4 g; per web -(182 + 110 + 263.4) * 31 / 2 = -8608.7 g*mm;
    # tolerance per web 0.005 * 439 * 31 / 2 = 34.0 g*mm
    assert "bob weight 445.4 g" in out
    webs = re.findall(r"web (\w): holes, (\d+) new feature\(s\), target (-?[\d.]+) g\*mm, predicted (-?[\d.]+)", out)
    assert [w[0] for w in webs] == ["a", "b"]
    for _, _, target, predicted in webs:
        assert float(target) == pytest.approx(-(182 + 110 + 0.6 * 439) * 31 / 2, abs=0.05)
        assert abs(float(predicted) - float(target)) <= 0.005 * 439 * 31 / 2
    assert "warning" not in out
    written = re.search(r"^wrote (.*)$", out, re.M).group(1).split(", ")
    assert set(written) == CONTRACT_FILES
    # closed form of web a as written: a 140 x 19 mm steel disc less the 28 mm pin bore at y = 31, the two
    # factory 24 mm through holes at (+-35, 40) and the plan's new holes, all through (flat, full depth)
    entry = pc.web_entry(pc.read_plan(tmp_path / "heavier-piston-out"), "a")
    assert all(f["kind"] == "hole" and f.get("through") for f in entry["features"])
    # the sample's web a was weighed (2069.4 g): its steel's density is fitted to that, the rest as before
    rho = entry["calibration"]["density_g_cm3"]
    assert entry["density_g_cm3"] == pytest.approx(rho, rel=1e-6) and abs(rho - STEEL) < 0.01
    rho_t = rho * 1e-3 * 19.0 * math.pi / 4
    before = [28.0] + [f["diameter"] for f in entry["existing_features"]]
    assert rho_t * (140.0 ** 2 - sum(d * d for d in before)) == pytest.approx(2069.4, abs=1e-6)  # as weighed
    holes = [(28.0, 0.0, 31.0)] + [(f["diameter"], f["x"], f["y"]) for f in entry["features"]]
    mass = rho_t * (140.0 ** 2 - sum(d * d for d, _, _ in holes))
    u = -rho_t * np.array([sum(d * d * x for d, x, _ in holes), sum(d * d * y for d, _, y in holes)])
    m = re.search(r"web-a\.step: ([\d.]+) g, unbalance (-?[\d.]+), (-?[\d.]+) g\*mm", out)
    assert float(m.group(1)) == pytest.approx(mass, abs=0.0006)           # printed to 3 decimals
    assert float(m.group(3)) == pytest.approx(u[1], abs=0.006)            # printed to 2 decimals
    assert abs(float(m.group(2)) - u[0]) <= 0.006
