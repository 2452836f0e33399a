"""A DXF outline whose unit header does not fit the crank is refused at once (README "The job file",
outline_units): exit 2, one line naming $INSUNITS, the size read and the override; never a hang.

Sources beside each check:
- ezdxf itself: a drawing made by `ezdxf.new()` without a unit set reads back $INSUNITS = 6
  (metres, DXF reference code table), checked here against the library rather than assumed;
- closed forms: a circle of radius R is 2R across; a disc with a bore has mass
  rho pi (R^2 - r^2) t;
- NIST SP 811: 1 in = 25.4 mm exactly.
The jobs are the invented demo job of tests/conftest.py (stroke 64 mm, pin bore 28 mm).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import ezdxf
import pytest

from geomgen.errors import BadInput
from geomgen.loops import circle
from geomgen.planner import MAX_GRID_POINTS, Limits, plan_web
from geomgen.section import WebSection, parametric_web

import plancheck as pc
from conftest import DROP, write_job

ROOT = Path(__file__).resolve().parents[1]
STEEL = 7.85  # g/cm^3, common practice (geomgen.materials "steel")


def web_dxf(path, *, radius, insunits=None):
    """A full-circle web of `radius` drawing units; the header unit left as ezdxf.new() writes it
    unless `insunits` is given."""
    doc = ezdxf.new()
    if insunits is not None:
        doc.header["$INSUNITS"] = insunits
    doc.modelspace().add_circle((0.0, 0.0), radius)
    doc.saveas(path)
    return path


def run_cli(*argv):
    """`geomgen ARGV` (in this process: plancheck.cli_output)."""
    return pc.cli_output(argv)


def one_line(err: str) -> str:
    lines = err.splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("geomgen: ") and "Traceback" not in err
    return lines[0]


def test_ezdxf_new_writes_metres(tmp_path):
    # what the library writes, not what we remember: code 6 is metres in the DXF reference
    path = web_dxf(tmp_path / "w.dxf", radius=65.0)
    assert ezdxf.readfile(path).header.get("$INSUNITS") == 6


def test_plan_of_mm_drawing_read_as_metres_fails_fast(tmp_path):
    dxf = web_dxf(tmp_path / "web.dxf", radius=65.0)  # a 130 mm web drawn in mm, header says metres
    job = write_job(tmp_path, web__diameter=DROP, web__outline=str(dxf))
    out = tmp_path / "out"
    done = run_cli("plan", job, "--out", out)
    assert done.returncode == 2, done.stderr
    line = one_line(done.stderr)
    assert "$INSUNITS = 6 (metres)" in line
    assert "130000 mm across" in line            # 2 x 65 x 1000 mm
    assert "65000 mm from the crank axis" in line
    assert "1280 mm" in line                     # 20 x the 64 mm stroke
    assert 'set outline_units = "mm"' in line
    assert not out.exists()
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


def test_override_reads_the_same_file_as_mm(tmp_path):
    from geomgen.api import load_job
    from geomgen.webs import web_section

    dxf = web_dxf(tmp_path / "web.dxf", radius=65.0)
    job = load_job(write_job(tmp_path, web__diameter=DROP, web__outline=str(dxf), web__outline_units="mm"))
    section = web_section(job, job.webs[0])
    assert section.rim_radius_max == pytest.approx(65.0, rel=1e-12)
    mass = STEEL * 1e-3 * math.pi * (65.0 ** 2 - 14.0 ** 2) * 18.0  # closed form, disc less the pin bore
    assert section.massprops().mass == pytest.approx(mass, rel=1e-9)


def test_inch_drawing_read_as_mm_is_too_small_for_the_pin(tmp_path):
    # 130 mm = 5.11811 in; drawn in inches, the header says mm: the rim lies inside the pin bore's reach
    dxf = web_dxf(tmp_path / "web.dxf", radius=65.0 / 25.4, insunits=4)
    job = write_job(tmp_path, web__diameter=DROP, web__outline=str(dxf))
    done = run_cli("inspect", job)
    assert done.returncode == 2
    line = one_line(done.stderr)
    assert "$INSUNITS = 4 (millimetres)" in line
    assert "the pin bore (28 mm at (0, 32)) is not inside the outline" in line
    assert "not beyond the far edge of the pin bore at 46 mm" in line  # 64/2 + 28/2
    assert 'if it is drawn in inches, set outline_units = "in"' in line


def test_given_unit_that_does_not_fit_is_named(tmp_path):
    dxf = web_dxf(tmp_path / "web.dxf", radius=65.0, insunits=4)
    job = write_job(tmp_path, web__diameter=DROP, web__outline=str(dxf), web__outline_units="in")
    done = run_cli("inspect", job)
    assert done.returncode == 2
    line = one_line(done.stderr)
    assert 'outline_units = "in" was given' in line
    assert "3302 mm across" in line               # 130 x 25.4, NIST SP 811
    assert 'if it is drawn in millimetres, set outline_units = "mm"' in line


@pytest.mark.parametrize(("radius", "insunits", "across", "bound", "fix"), [
    (65.0, None, "130000 mm across", "larger than 3000 mm", "give --units mm"),
    (2.0, 4, "4 mm across", "smaller than 5 mm", "give --units in"),   # 4 mm -> 101.6 mm as inches
])
def test_inspect_dxf_refuses_an_outline_no_web_can_be(tmp_path, radius, insunits, across, bound, fix):
    dxf = web_dxf(tmp_path / "web.dxf", radius=radius, insunits=insunits)
    done = run_cli("inspect", dxf, "--thickness", "18")
    assert done.returncode == 2
    line = one_line(done.stderr)
    assert across in line and bound in line and fix in line
    assert f"$INSUNITS = {6 if insunits is None else insunits}" in line


def test_inspect_dxf_with_units_override_measures_it(tmp_path):
    dxf = web_dxf(tmp_path / "web.dxf", radius=65.0)
    done = run_cli("inspect", dxf, "--thickness", "18", "--units", "mm", "--json")
    assert done.returncode == 0, done.stderr
    mass = STEEL * 1e-3 * math.pi * 65.0 ** 2 * 18.0  # closed form, a plain disc
    assert json.loads(done.stdout)["mass_g"] == pytest.approx(mass, rel=1e-9)


def test_parametric_diameter_past_twenty_strokes_is_refused():
    with pytest.raises(BadInput, match=r"web\.diameter: .*more than 20 x the 64 mm stroke \(1280 mm\)"):
        parametric_web(diameter=130000.0, thickness=18.0, density_g_cm3=STEEL, stroke=64.0, pin_bore=28.0)


def test_planner_refuses_a_runaway_search():
    # a section made by hand, past every input check: the planner's own guard must stop it before work
    section = WebSection(circle(0.0, 0.0, 65000.0), (circle(0.0, 32.0, 14.0),), (0.0, 32.0), 28.0, 18.0, STEEL)
    limits = Limits(min_wall=3.0, pin_wall=6.0, max_depth=15.0, through=True, drills=(10.0,), point_angle=118.0,
                    depth_step=0.5)
    # (65000 - 3) / 0.5 rings x 361 angles, far past the bound
    points = int((65000.0 - 3.0) / 0.5) * 361
    assert points == 46_927_834 and points > MAX_GRID_POINTS
    with pytest.raises(BadInput, match=rf"web a: the rim lies 64997 mm from the crank axis, a search of {points} "):
        plan_web(name="a", section=section, existing=(), target=(0.0, -8344.0), tolerance=26.4, method="holes",
                 limits=limits)
