"""The shipped samples (invented demo data): their study figures worked by hand, and a full plan of each.

Hand figures use the contract's definitions (design.md): bob weight = m_rot + BF * m_recip; each web
carries half of (m_rot + BF * m_recip) * stroke/2; the tolerance of the whole crank is
0.005 * m_recip * stroke/2.  The dead-centre forces are the textbook ones, m_recip r w^2 (1 +- r/l)
(e.g. Khurmi & Gupta, Theory of Machines, primary and secondary forces of the reciprocating parts).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest
import trimesh

from geomgen import job as jobmod
from geomgen.study import study_of

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
OZ = 28.349523125  # g, NIST SP 811

# name: (m_recip g, m_rot g, BF, stroke mm, rod mm, rpm) worked from the sample files by hand
HAND = {
    "heavier-piston": (285 + 62 + 14 + 78, 160 + 110 + 22, 0.60, 62.0, 118.0, 9500),
    "lighter-piston-teardrop": (7.6 * OZ + 55 + 10 + 70, 205 + 160 + 35, 0.55, 62.0, 120.0, 10500),
    "plugs-stroker": (330 + 70 + 15 + 85, 240 + 175 + 38, 0.65, 66.0, 125.0, 8500),
    "lightening": (330 + 80 + 14 + 70, 215 + 175 + 40, 0.50, 62.0, 118.0, 11500),
}
# worked by hand: bob weight (g) and each web's target magnitude (g*mm)
BOB = {"heavier-piston": 555.4, "lighter-piston-teardrop": 592.751, "plugs-stroker": 778.0, "lightening": 677.0}
PER_WEB = {"heavier-piston": 8608.7, "lighter-piston-teardrop": 9187.64, "plugs-stroker": 12837.0,
           "lightening": 10493.5}


def test_every_sample_is_covered():
    assert sorted(p.stem for p in SAMPLES.glob("*.toml")) == sorted(HAND)


@pytest.mark.parametrize("name", sorted(HAND))
def test_study_figures_by_hand(name):
    m_recip, m_rot, bf, stroke, rod, rpm = HAND[name]
    result = study_of(jobmod.load(SAMPLES / f"{name}.toml"))
    r = stroke / 2
    assert result["bob_weight_g"] == pytest.approx(BOB[name], abs=1e-3)
    assert result["bob_weight_g"] == pytest.approx(m_rot + bf * m_recip, rel=1e-6)
    assert result["target_per_web_gmm"] == pytest.approx(PER_WEB[name], abs=0.01)
    omega = rpm * 2 * math.pi / 60
    lam = r / rod
    tdc = m_recip * 1e-3 * r * 1e-3 * omega ** 2 * (1 + lam)
    bdc = m_recip * 1e-3 * r * 1e-3 * omega ** 2 * (1 - lam)
    assert result["reciprocating_inertia_tdc_N"] == pytest.approx(tdc, rel=1e-5)
    assert abs(result["reciprocating_inertia_bdc_N"]) == pytest.approx(bdc, rel=1e-5)


@pytest.mark.cad
@pytest.mark.parametrize("name", sorted(HAND))
def test_sample_plans_land_within_tolerance(name, tmp_path):
    """Each sample plans, builds and verifies (exit 0); each web's exact unbalance is within the contract
    tolerance of its target; every STL re-reads as a closed volume (trimesh); the report carries the
    cautions."""
    out = tmp_path / name
    run = subprocess.run([sys.executable, "-m", "geomgen", "plan", str(SAMPLES / f"{name}.toml"), "--out", str(out)],
                         capture_output=True, text=True, timeout=600)
    assert run.returncode == 0, run.stderr
    doc = json.loads((out / "plan.json").read_text())
    m_recip, _, _, stroke, _, _ = HAND[name]
    tol_per_web = 0.005 * m_recip * stroke / 2 / 2
    for web in doc["webs"]:
        ux, uy = web["exact"]["unbalance_gmm"]
        assert abs(ux) <= tol_per_web
        assert abs(-uy - PER_WEB[name]) <= tol_per_web, (web["name"], uy)
    for stl in out.glob("*.stl"):
        assert trimesh.load(stl, force="mesh").is_volume, stl.name
    html = (out / "report.html").read_text()
    assert "can kill" in html and "not a release for service" in html
    for f in ("operations.csv", "drawing.dxf", "web-a.step", "web-b.step", "study.json", "study.svg"):
        assert (out / f).is_file(), f
