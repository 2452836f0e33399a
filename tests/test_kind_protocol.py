"""A feature kind written here, in the test, and registered: nothing else in geomgen is edited, and the
whole chain takes it (DEVELOPERS.md "Adding a feature kind").

The kind is a rectangular recess with a flat floor (invented for the test; shops mill such flats).  Its
closed form is the box's: V = a b c, centroid at the box centre, and about the origin
integral of x^2 dV = V (cx^2 + a^2 / 12), integral of x y dV = V cx cy (parallel-axis theorem, any
statics text, e.g. Beer & Johnston, "Vector Mechanics for Engineers", moments of inertia of a
rectangular prism).  The exact B-rep of the cut web (OpenCascade, independent of that closed form) must
agree with it to the verification tolerance.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass

import ezdxf
import numpy as np
import pytest

import geomgen
from geomgen.errors import BadInput
from geomgen.kinds import KINDS, FeatureKind, ReportCells, register_kind
from geomgen.kinds.base import face_z_range, mm
from geomgen.loops import Loop
from geomgen.massprops import MassProps

from conftest import minimal_job_dict

STEEL = 7.85   # g/cm^3, the minimal job's web (conftest, invented demo)
THICKNESS = 18.0


@dataclass(frozen=True)
class Recess(FeatureKind):
    """A rectangular flat-floored recess, x0..x1 by y0..y1, `depth` from its face."""

    x0: float
    y0: float
    x1: float
    y1: float
    depth: float
    face: str = "outer"
    kind: str = "recess"

    LENGTH_KEYS = ("x0", "y0", "x1", "y1", "depth")
    DRAWING_HEADINGS = (("x0", "mm"), ("y0", "mm"), ("x1", "mm"), ("y1", "mm"), ("depth", "mm"))
    DRAWING_NOTE = "recesses: rectangular, flat floor"
    SHEET_COLUMNS = (("x0", True), ("y0", True), ("x1", True), ("y1", True))

    def check(self, *, where, thickness):
        self.positive("depth", where)
        if not (self.x0 < self.x1 and self.y0 < self.y1):
            raise BadInput(f"{where}: need x0 < x1 and y0 < y1")

    def footprint(self) -> Loop:
        return Loop.from_points([(self.x0, self.y0), (self.x1, self.y0), (self.x1, self.y1), (self.x0, self.y1)])

    def z_range(self, thickness):
        return face_z_range(self.face, thickness, self.depth)

    def face_depth(self, thickness):
        return self.depth

    def massprops(self, *, thickness, web_density, plug_density=None):
        a, b, c = self.x1 - self.x0, self.y1 - self.y0, self.depth
        z0, z1 = self.z_range(thickness)
        centre = np.array([0.5 * (self.x0 + self.x1), 0.5 * (self.y0 + self.y1), 0.5 * (z0 + z1)])
        v = a * b * c
        second = v * (np.outer(centre, centre) + np.diag([a * a, b * b, c * c]) / 12.0)
        return -MassProps.from_density(volume=v, centroid=centre, volume_second_moment=second,
                                       density_g_cm3=web_density)

    def order_key(self):
        return (0, self.x0, self.y0)

    def label(self):
        return f"recess {self.x1 - self.x0:g} x {self.y1 - self.y0:g} mm, {self.depth:g} mm deep, {self.face} face"

    def tag_point(self):
        return (0.5 * (self.x0 + self.x1), 0.5 * (self.y0 + self.y1))

    def report_cells(self):
        return ReportCells("recess", f"x {self.x0:g} .. {self.x1:g}, y {self.y0:g} .. {self.y1:g} mm",
                           f"{self.x1 - self.x0:g} x {self.y1 - self.y0:g}", f"{self.depth:g}")

    def fill_sheet(self, cells):
        for key in ("x0", "x1"):
            cells.put(key, cells.face_view(getattr(self, key), self.face))
        for key in ("y0", "y1"):
            cells.put(key, getattr(self, key))
        cells.put("depth", self.depth)

    def drawing_row(self, *, thickness, drill_series, plug_fit, default_plug_density):
        return (mm(self.x0), mm(self.y0), mm(self.x1), mm(self.y1), mm(self.depth))

    def tool(self, thickness):
        import cadquery as cq

        z0, z1 = self.z_range(thickness)
        lo, hi = (z0, z1 + 1.0) if self.face == "outer" else (z0 - 1.0, z1)   # overshoot the open face
        return cq.Solid.makeBox(self.x1 - self.x0, self.y1 - self.y0, hi - lo, cq.Vector(self.x0, self.y0, lo))


RECESS = {"kind": "recess", "x0": -12.0, "y0": -50.0, "x1": 14.0, "y1": -36.0, "depth": 5.0}


@pytest.fixture
def registered(monkeypatch):
    monkeypatch.setitem(KINDS, "recess", Recess)   # undone after the test
    assert register_kind(Recess) is Recess          # registering the same class again is harmless
    return Recess


def test_register_kind_refuses_what_is_not_a_whole_kind(registered):
    class NotAKind:
        kind = "slot"

    with pytest.raises(TypeError, match="not a FeatureKind"):
        register_kind(NotAKind)

    @dataclass(frozen=True)
    class OtherRecess(Recess):
        kind: str = "recess"

    with pytest.raises(ValueError, match="registered already"):
        register_kind(OtherRecess)

    class Half(FeatureKind):      # abstract methods missing: cannot even be made
        kind = "half"

    with pytest.raises(TypeError):
        Half()


def test_a_job_reads_the_new_kind_and_names_its_keys(registered):
    job = geomgen.load_job(minimal_job_dict({"web.features": [RECESS]}))
    assert isinstance(job.webs[0].features[0], Recess)
    with pytest.raises(BadInput, match=r"web\.features\[1\]: need x0 < x1"):
        geomgen.load_job(minimal_job_dict({"web.features": [{**RECESS, "x1": -20.0}]}))


@pytest.mark.cad
def test_the_whole_chain_takes_a_kind_written_outside_the_package(registered, tmp_path):
    verified = geomgen.build(minimal_job_dict({"web.features": [RECESS]})).verify()
    a, b, c = 26.0, 14.0, 5.0
    volume = a * b * c                                               # 1820 mm^3
    for web, planned in zip(verified.webs, verified.plan.webs):
        # the box's closed form against the exact B-rep of the cut solid, from the bare web's
        change = web.exact - planned.work.section.massprops()
        assert change.volume == pytest.approx(-volume, rel=1e-9)
        assert change.unbalance == pytest.approx(-STEEL * 1e-3 * volume * np.array([1.0, -43.0]), rel=1e-7)
        assert change.com[2] == pytest.approx(THICKNESS - c / 2, rel=1e-9)
    # plan: the planner works round the recess (its walls) and every shop file shows it
    files = geomgen.plan(minimal_job_dict({"web.features": [RECESS]})).verify().files
    rows = list(csv.DictReader(io.StringIO(files["operations.csv"].decode())))
    recess_rows = [r for r in rows if r["kind"] == "recess"]
    assert len(recess_rows) == 2 and {r["status"] for r in recess_rows} == {"existing"}   # one per web
    assert {r["x0_mm"] for r in recess_rows} == {"-12.00"} and {r["y1_mm"] for r in recess_rows} == {"-36.00"}
    assert float(recess_rows[0]["mass_change_g"]) == pytest.approx(-STEEL * 1e-3 * volume, abs=0.01)
    dxf = ezdxf.read(io.StringIO(files["drawing.dxf"].decode()))
    texts = [e.dxf.text for e in dxf.modelspace().query("TEXT")]
    assert any(t.startswith("recesses: rectangular") for t in texts)
    report = files["report.html"].decode()
    assert "x -12 .. 14, y -50 .. -36 mm" in report and "26 x 14" in report   # its report_cells
    assert sum(1 for t in texts if t == "-12.00") == 2               # the x0 cell of each web's table
