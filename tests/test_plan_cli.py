"""`geomgen plan` and `geomgen build` as a user meets them (README "Commands").

- Infeasible targets: exit 3, nothing written, ONE stderr line with the reachable
  figure and the constraints; the target is shown to be out of reach by a
  closed-form bound here, not by the planner's word.
- Determinism: the same job gives byte-identical plan.json.
- Atomic output: an existing non-empty --out is refused (exit 2) and left as it
  was; with --force it is replaced whole.
- build: the job's hand-placed features only; the STEP's exact OpenCascade
  properties match the closed-form ones.
"""

from __future__ import annotations

import math
import os
import re

import numpy as np
import pytest

from geomgen.features import feature_from_table, feature_massprops
from geomgen.massprops import MassProps

import plancheck as pc
from conftest import minimal_job_dict, toml_dumps

STEEL = 7.85
PLUG = 17.6


def _write(tmp_path, job, name="job.toml"):
    path = tmp_path / name
    path.write_text(toml_dumps(job))
    return path


def _geomgen(*args, cwd):
    """`geomgen ARGS` run from the folder `cwd` (in this process: plancheck.cli_output)."""
    import contextlib

    with contextlib.chdir(cwd):
        return pc.cli_output(args)


# ------------------------------------------------------------------ infeasible
def _half_disc_bound(radius, thickness, density):
    """Largest |U| any change confined to a half disc of `radius` can make, g*mm:
    rho t int_{half disc} y dA = rho t (2/3) R^3 (the half disc's first moment, Machinery's Handbook
    centroid 4R/(3 pi) times its area pi R^2 / 2)."""
    return density * 1e-3 * thickness * (2.0 / 3.0) * radius ** 3


@pytest.mark.parametrize("kind", ["holes", "pockets", "plugs"])
def test_target_beyond_reach_exits_3_with_one_line(tmp_path, kind):
    # a 3 kg rod big end (invented, far beyond any web): target per web -(3140 + 0.55 * 330) * 32 / 2
    job = minimal_job_dict({"engine.rotating": {"rod_big_end": 3000.0},
                            "correction.kind": kind, "correction.plug_material": PLUG})
    path = _write(tmp_path, job)
    before = pc.disc_web_unbalance(diameter=130.0, thickness=18.0, density=STEEL, stroke=64.0, pin_bore=28.0)
    need = float(np.linalg.norm(pc.contract_target(job) - before))
    # nothing may be cut or plugged within min_wall of the rim: all of it lies inside r = 65 - 3 mm, on
    # one side of the X axis for the best case; plugs add (17.6 - 7.85) g/cm^3 instead of taking 7.85
    rho = STEEL if kind != "plugs" else PLUG - STEEL
    bound = _half_disc_bound(62.0, 18.0, rho)
    assert need > 1.5 * bound          # provably out of reach, whatever the planner does
    out = tmp_path / "out"
    proc = _geomgen("plan", path, "--out", out, cwd=tmp_path)
    assert proc.returncode == 3, proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    line = lines[0]
    m = re.search(rf"the search found at most ([0-9.]+) g\*mm with {kind} ", line)
    assert m, line
    assert 0.0 < float(m.group(1)) <= bound, (m.group(1), bound)      # the reach it names is a true bound's share
    n = re.search(r"needs ([0-9.]+) g\*mm", line)
    assert n and float(n.group(1)) == pytest.approx(need, abs=1.0), line
    assert re.search(r"min_wall|max_depth|pin_wall", line), line
    assert not out.exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out")]   # no staging folder left


# ------------------------------------------------------------------ determinism, atomic output, --force
@pytest.fixture(scope="module")
def demo_plan(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("demo")
    job = _write(tmp, minimal_job_dict())
    assert pc.run_cli(["plan", job, "--out", tmp / "first"]) == 0
    return tmp, job


@pytest.mark.cad
def test_same_job_gives_byte_identical_plan_json_and_force_replaces(demo_plan):
    tmp, job = demo_plan
    second = tmp / "second"
    second.mkdir()
    (second / "stale.txt").write_text("from an earlier run")
    assert pc.run_cli(["plan", job, "--out", second, "--force"]) == 0
    assert (tmp / "first" / "plan.json").read_bytes() == (second / "plan.json").read_bytes()
    # --force replaced the folder whole: the stale file is gone, the contract's files are there
    names = {p.name for p in second.iterdir()}
    assert "stale.txt" not in names
    assert {"plan.json", "web-a.step", "web-a.stl", "web-a.json", "web-b.step", "web-b.stl", "web-b.json",
            "study.json"} <= names
    assert not [p for p in tmp.iterdir() if p.name.startswith((".second", ".first"))]


def test_existing_nonempty_out_is_refused_and_untouched(tmp_path):
    job = _write(tmp_path, minimal_job_dict())
    out = tmp_path / "out"
    out.mkdir()
    keep = out / "notes.txt"
    keep.write_text("mine")
    before = (sorted(os.listdir(out)), keep.read_text(), keep.stat().st_mtime_ns)
    proc = _geomgen("plan", job, "--out", out, cwd=tmp_path)
    assert proc.returncode == 2
    assert len(proc.stderr.strip().splitlines()) == 1 and "--force" in proc.stderr
    assert (sorted(os.listdir(out)), keep.read_text(), keep.stat().st_mtime_ns) == before


# ------------------------------------------------------------------ build
FEATURES = [
    {"kind": "hole", "x": 35.0, "y": 35.0, "diameter": 12.0, "depth": 8.0, "point_angle": 118.0},
    {"kind": "hole", "x": 0.0, "y": -20.0, "diameter": 8.0, "through": True},
    {"kind": "pocket", "r_inner": 35.0, "r_outer": 55.0, "angle_start": 150.0, "angle_end": 210.0,
     "depth": 5.0, "corner_radius": 3.0},
    {"kind": "plug", "x": -40.0, "y": -10.0, "diameter": 10.0, "length": 10.0, "density": PLUG},
]


def _disc_inertia_z(*, diameter, thickness, density, pin_bore, stroke):
    """g*mm^2 about Z: disc rho t pi R^4 / 2 minus the pin bore (its own m r^2 / 2 plus m (stroke/2)^2,
    parallel axes), closed forms."""
    rho = density * 1e-3
    big_r, r = 0.5 * diameter, 0.5 * pin_bore
    disc = rho * thickness * math.pi * big_r ** 4 / 2
    m_pin = rho * thickness * math.pi * r * r
    return disc - (m_pin * r * r / 2 + m_pin * (0.5 * stroke) ** 2)


@pytest.mark.cad
def test_build_writes_the_hand_placed_features_only(tmp_path):
    job = _write(tmp_path, minimal_job_dict({"web.features": FEATURES}))
    out = tmp_path / "out"
    assert pc.run_cli(["build", job, "--out", out]) == 0
    doc = pc.read_plan(out)
    feats = [feature_from_table(dict(f), where="test", thickness=18.0) for f in FEATURES]
    # analytic: closed-form section plus each feature's closed-form change (features.feature_massprops)
    change = sum((feature_massprops(f, thickness=18.0, web_density=STEEL) for f in feats), MassProps.zero())
    mass = pc.disc_web_mass(diameter=130.0, thickness=18.0, density=STEEL, pin_bore=28.0) + change.mass
    u = pc.disc_web_unbalance(diameter=130.0, thickness=18.0, density=STEEL, stroke=64.0, pin_bore=28.0) \
        + change.unbalance
    iz = _disc_inertia_z(diameter=130.0, thickness=18.0, density=STEEL, pin_bore=28.0, stroke=64.0) \
        + change.inertia_z
    for name in ("a", "b"):
        w = pc.web_entry(doc, name)
        assert w["planned_features"] == []
        listed = [{k: v for k, v in f.items() if k != "effect"} for f in w["features"]]
        assert [f["kind"] for f in listed] == [f["kind"] for f in FEATURES]
        for got, want in zip(listed, FEATURES):
            for key, value in want.items():
                if key != "through":
                    assert got[key] == pytest.approx(value) if isinstance(value, float) else got[key] == value
        pc.assert_one_valid_body(out, name, plugs=1)
        exact = pc.step_props(out, name, web_density=STEEL, plug_density=PLUG)   # OpenCascade, from the STEP
        assert exact.mass == pytest.approx(mass, rel=1e-6)
        assert exact.unbalance == pytest.approx(u, rel=1e-6, abs=1e-6 * abs(u[1]))
        assert exact.inertia_z == pytest.approx(iz, rel=1e-6)
    assert doc["command"] == "build"
