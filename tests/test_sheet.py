"""operations.csv against the plan.json of the same real `plan` run (tests/_shop_run.py).

The file must read as plain data (RFC 4180: a header line first, the same
number of fields in every record, CRLF line breaks) with Python's csv module
and pandas.read_csv (pandas is in the test extra).
"""

from __future__ import annotations

import csv
import dataclasses
import io
import math

import pytest

from geomgen.drills import series
from geomgen.features import Plug, Pocket
from geomgen.fits import fit_limits
from geomgen.job import Correction
from geomgen.materials import MATERIALS
from geomgen.plugbore import ream_stock_mm
from geomgen.sheet import columns, feature_row, operations_csv, sheet_notes

from _shop_run import plan_run

TEXT_VALUES = {
    "status": {"existing", "new"},
    "kind": {"hole", "pocket", "plug"},
    "face": {"outer", "inner"},
    "through": {"yes", "no"},
    "bottom": {"point", "flat", ""},
}
TEXT_COLUMNS = set(TEXT_VALUES) | {"web", "drill_size", "bore_fit", "plug_fit", "plug_material"}


def _rows(raw: bytes) -> list[dict]:
    return list(csv.DictReader(io.StringIO(raw.decode("utf-8"), newline="")))


def _inch(run):
    job = run["job"]
    inch_job = dataclasses.replace(job, output=dataclasses.replace(job.output, sheet_units="inch"))
    return inch_job, operations_csv(job=inch_job, doc=run["doc"], webs=run["webs"])


@pytest.fixture(scope="module")
def run():
    # the shared `plan` run builds the solids: every test that takes this fixture is marked cad
    r = dict(plan_run())
    r["raw"] = (r["out"] / "operations.csv").read_bytes()
    r["rows"] = _rows(r["raw"])
    return r


def _by_web(rows, name):
    return [row for row in rows if row["web"] == name]


def _pairs(run, rows=None):
    rows = run["rows"] if rows is None else rows
    return [(row, f, web) for web in run["doc"]["webs"] for row, f in zip(_by_web(rows, web["name"]), web["features"])]


# ---------------------------------------------------------------- plain data


@pytest.mark.cad
@pytest.mark.parametrize("units", ["mm", "inch"])
def test_rfc_4180_header_first_crlf_every_record_complete(run, units):
    raw = run["raw"] if units == "mm" else _inch(run)[1]
    lines = raw.split(b"\r\n")
    # RFC 4180 section 2: records end in CRLF, the optional header is the first record
    assert lines[-1] == b"" and b"\n" not in b"".join(lines) and b"\r" not in b"".join(lines)
    assert lines[0].decode() == ",".join(columns(units))
    assert not any(line.startswith(b"#") for line in lines)
    records = list(csv.reader(io.StringIO(raw.decode("utf-8"), newline=""), strict=True))
    n_features = sum(len(w["features"]) for w in run["doc"]["webs"])
    assert len(records) == 1 + n_features == len(lines) - 1
    assert all(len(rec) == len(records[0]) for rec in records)


@pytest.mark.cad
def test_every_column_holds_one_type(run):
    header = list(run["rows"][0])
    for col in header:
        values = [row[col] for row in run["rows"]]
        if col in TEXT_COLUMNS:
            if col in TEXT_VALUES:
                assert set(values) <= TEXT_VALUES[col], col
            # no column is named after one of its own values
            assert col not in values
            continue
        # every other column: a plain decimal number, or empty where it does not apply
        for v in values:
            assert v == "" or math.isfinite(float(v)), (col, v)
        assert all("through" not in v and "blind" not in v for v in values)
    lengths = [c for c in header if c not in TEXT_COLUMNS and not c.endswith(("_deg", "_g", "_gmm", "_g_cm3"))
               and c != "feature"]
    assert lengths and all(c.endswith("_mm") for c in lengths)


@pytest.mark.cad
@pytest.mark.parametrize("units", ["mm", "inch"])
def test_pandas_reads_it_as_data(run, units, tmp_path):
    import pandas as pd

    raw = run["raw"] if units == "mm" else _inch(run)[1]
    path = tmp_path / "operations.csv"
    path.write_bytes(raw)
    frame = pd.read_csv(path)
    assert list(frame.columns) == columns(units)
    assert frame.shape == (len(run["rows"]), len(columns(units)))
    for col in frame.columns:
        if col not in TEXT_COLUMNS:
            assert frame[col].dtype.kind in "if", (col, frame[col].dtype)
    # the mass column sums the same as the csv module reads it
    assert frame["mass_change_g"].sum() == pytest.approx(sum(float(r["mass_change_g"]) for r in run["rows"]),
                                                         abs=1e-9)


@pytest.mark.cad
def test_same_job_same_bytes(run):
    assert operations_csv(job=run["job"], doc=run["doc"], webs=run["webs"]) == run["raw"]


# ---------------------------------------------------------------- content


@pytest.mark.cad
def test_one_row_per_feature_in_machining_order(run):
    for web in run["doc"]["webs"]:
        rows = _by_web(run["rows"], web["name"])
        # plan.json lists existing + planned features in machining order; the sheet must too,
        # numbered as the drawing and the report number them
        assert len(rows) == len(web["existing_features"]) + len(web["planned_features"]) > 0
        assert [int(r["feature"]) for r in rows] == list(range(1, len(rows) + 1))
        assert [r["kind"] for r in rows] == [f["kind"] for f in web["features"]]
        assert [r["status"] for r in rows] == (["existing"] * len(web["existing_features"])
                                               + ["new"] * len(web["planned_features"]))


@pytest.mark.cad
def test_mass_changes_sum_to_predicted_minus_before(run):
    job_web = run["job"].webs[0]
    for web in run["doc"]["webs"]:
        rows = _by_web(run["rows"], web["name"])
        new = [r for r in rows if r["status"] == "new"]
        existing = [r for r in rows if r["status"] == "existing"]
        # mass is additive: the new features change the web from `before` to `predicted`;
        # each row is rounded to 0.01 g, so allow half of that per row
        total = sum(float(r["mass_change_g"]) for r in new)
        assert total == pytest.approx(web["predicted"]["mass_g"] - web["before"]["mass_g"],
                                      abs=0.005 * len(new) + 0.01)
        # ... and the features already there take `before` down from the bare web, a disc minus
        # its pin bore: rho * t * pi * (R^2 - r_pin^2) (closed form)
        bare = job_web.density * 1e-3 * web["thickness_mm"] * math.pi * (65.0 ** 2 - 14.0 ** 2)
        assert sum(float(r["mass_change_g"]) for r in existing) == pytest.approx(
            web["before"]["mass_g"] - bare, abs=0.005 * len(existing) + 0.05)
        # unbalance is additive too (0.05 g*mm rounding per row)
        du = [p - b for p, b in zip(web["predicted"]["unbalance_gmm"], web["before"]["unbalance_gmm"])]
        assert sum(float(r["unbalance_change_x_gmm"]) for r in new) == pytest.approx(du[0], abs=0.05 * len(new) + 0.2)
        assert sum(float(r["unbalance_change_y_gmm"]) for r in new) == pytest.approx(du[1], abs=0.05 * len(new) + 0.2)


@pytest.mark.cad
def test_positions_match_plan_and_inner_face_is_mirrored(run):
    seen_inner = False
    for row, f, _ in _pairs(run):
        if f["kind"] == "pocket":
            assert float(row["r_inner_mm"]) == pytest.approx(f["r_inner"], abs=0.005)
            assert float(row["r_outer_mm"]) == pytest.approx(f["r_outer"], abs=0.005)
            assert float(row["depth_mm"]) == pytest.approx(f["depth"], abs=0.005)
            assert (row["x_mm"], row["diameter_mm"], row["tip_depth_mm"]) == ("", "", "")
            continue
        # turning the web over about Y maps (x, y) to (-x, y) (closed form: a mirror in the YZ plane)
        sign = -1.0 if f.get("face") == "inner" else 1.0
        seen_inner |= f.get("face") == "inner" and abs(f["x"]) > 1
        assert float(row["x_mm"]) == pytest.approx(sign * f["x"], abs=0.005)
        assert float(row["y_mm"]) == pytest.approx(f["y"], abs=0.005)
        assert float(row["diameter_mm"]) == pytest.approx(f["diameter"], abs=0.0005)
    assert seen_inner, "the test job must carry an inner-face hole off the centre line"


@pytest.mark.cad
def test_drill_depths_of_holes(run):
    blind = [(r, f) for r, f, _ in _pairs(run) if f["kind"] == "hole" and not f.get("through")]
    assert blind
    for row, f in blind:
        d = f["diameter"]
        depth, tip = float(row["depth_mm"]), float(row["tip_depth_mm"])
        assert depth == pytest.approx(f["depth"], abs=0.005)
        assert (row["through"], row["bottom"]) == ("no", "point")
        # point length of a drill = d / (2 tan(angle / 2)) (closed form of the cone)
        assert tip == pytest.approx(f["depth"] + d / (2 * math.tan(math.radians(59.0))), abs=0.01)
        # Machinery's Handbook: a 118 deg point is about 0.3 d long
        assert tip - depth == pytest.approx(0.3 * d, abs=0.005 * d)


@pytest.mark.cad
def test_plug_rows_carry_the_bore_the_fit_and_the_plug(run):
    plugs = [(r, f, w) for r, f, w in _pairs(run) if f["kind"] == "plug"]
    assert plugs, "the test job's plan must hold plugs"
    fit = run["job"].correction.plug_fit
    assert fit == "H7/p6"                       # the default
    for row, f, web in plugs:
        lim = fit_limits(fit, f["diameter"])
        # ISO 286-2 (see tests/test_fits.py): 22 mm H7 = 0 .. +21 um, p6 = +22 .. +35 um
        assert (row["bore_fit"], row["plug_fit"]) == ("H7", "p6")
        for key, value in (("bore_min", lim.bore_min_mm), ("bore_max", lim.bore_max_mm),
                           ("plug_min", lim.plug_min_mm), ("plug_max", lim.plug_max_mm)):
            assert float(row[f"{key}_mm"]) == pytest.approx(value, abs=1e-9)
        if f["diameter"] == 22.0:
            assert (row["bore_min_mm"], row["bore_max_mm"]) == ("22.000", "22.021")
            assert (row["plug_min_mm"], row["plug_max_mm"]) == ("22.022", "22.035")
        # interference = plug size - bore size, at the extreme limits
        assert float(row["interference_min_mm"]) == pytest.approx(
            float(row["plug_min_mm"]) - float(row["bore_max_mm"]), abs=1e-9)
        assert float(row["interference_max_mm"]) == pytest.approx(
            float(row["plug_max_mm"]) - float(row["bore_min_mm"]), abs=1e-9)
        # a flush blind plug: the bore's flat bottom is the plug's length down, the drill tip no deeper
        blind = f["length"] < web["thickness_mm"]
        assert (row["through"], row["bottom"]) == (("no", "flat") if blind else ("yes", ""))
        assert float(row["depth_mm"]) == pytest.approx(f["length"], abs=0.005)
        assert float(row["plug_length_mm"]) == pytest.approx(f["length"], abs=0.005)
        assert float(row["tip_depth_mm"]) <= float(row["depth_mm"]) + 1e-9
        # drill undersize from the job's series, leave the reamer its stock (common practice)
        drill, pre, d = float(row["drill_mm"]), float(row["pre_ream_mm"]), float(row["diameter_mm"])
        assert drill in series("metric") and drill <= pre < d
        lo, hi = ream_stock_mm(d)
        assert lo - 1e-9 <= float(row["ream_stock_mm"]) <= hi + 1e-9
        assert float(row["ream_stock_mm"]) == pytest.approx(d - pre, abs=1e-9)
        # ASTM B777-15 Table 1, class 3: 17.75 .. 18.35 g/cm^3, planned at the middle
        assert row["plug_material"] == f["material"] == "W-alloy-class-3"
        assert float(row["plug_density_g_cm3"]) == pytest.approx(0.5 * (17.75 + 18.35), abs=5e-4)
        assert MATERIALS[row["plug_material"]].density == pytest.approx(float(row["plug_density_g_cm3"]), abs=5e-4)


@pytest.mark.cad
def test_inch_sheet_is_mm_over_25_4(run):
    _, raw = _inch(run)
    rows = _rows(raw)
    assert "x_in" in rows[0] and not any(c.endswith("_mm") for c in rows[0])
    assert len(rows) == len(run["rows"])
    mm_rows = {(r["web"], r["feature"]): r for r in run["rows"]}
    for row, f, _ in _pairs(run, rows):
        mm_row = mm_rows[(row["web"], row["feature"])]
        # 1 in = 25.4 mm exactly (NIST SP 811); positions are set to 0.0005 in, so within half a step
        for key, mm in (("x", f.get("x")), ("y", f.get("y")), ("r_outer", f.get("r_outer")),
                        ("depth", float(mm_row["depth_mm"]))):
            if mm is None:
                continue
            if key == "x" and f.get("face") == "inner":
                mm = -mm
            assert float(row[f"{key}_in"]) == pytest.approx(mm / 25.4, abs=0.00025 + 0.005 / 25.4)
            assert len(row[f"{key}_in"].split(".")[1]) == 4
        # diameters to 0.00001 in
        if "diameter" in f:
            assert float(row["diameter_in"]) == pytest.approx(f["diameter"] / 25.4, abs=0.000005 + 1e-12)
        if f["kind"] == "plug":
            # fit limits rounded inwards: never outside the metric limits, at most one step inside
            for key, upper in (("bore_min", False), ("bore_max", True), ("plug_min", False), ("plug_max", True)):
                inch, mm = float(row[f"{key}_in"]), float(mm_row[f"{key}_mm"]) / 25.4
                assert (inch <= mm + 1e-12) if upper else (inch >= mm - 1e-12), key
                assert abs(inch - mm) < 0.00001
            assert float(row["interference_min_in"]) == pytest.approx(
                float(row["plug_min_in"]) - float(row["bore_max_in"]), abs=1e-9)
        # grams and g*mm do not change with the sheet's length unit
        assert row["mass_change_g"] == mm_row["mass_change_g"]
        assert row["unbalance_change_y_gmm"] == mm_row["unbalance_change_y_gmm"]


# ---------------------------------------------------------------- single rows

_EFFECT = {"mass_g": -1.0, "unbalance_gmm": [0.0, 0.0]}


def test_inner_face_pocket_angles_are_mirrored():
    # an angle theta from +Y (ccw) is the point (-r sin theta, r cos theta); mirrored in x it is at -theta,
    # so the kidney 10..40 deg seen from the other face runs -40..-10 deg (closed form)
    pocket = Pocket(r_inner=40.0, r_outer=50.0, angle_start=10.0, angle_end=40.0, depth=4.0, face="inner")
    row = feature_row(pocket, web="a", number=1, status="new", effect=_EFFECT, thickness=18.0, units="mm",
                      correction=Correction())
    assert (row["angle_start_deg"], row["angle_end_deg"]) == ("-40.0", "-10.0")
    assert (row["face"], row["bottom"], row["through"]) == ("inner", "flat", "no")


def test_inner_face_through_plug_and_another_fit():
    plug = Plug(x=30.0, y=-40.0, diameter=12.0, length=18.0, face="inner")
    corr = Correction(drills=series("metric"), plug_fit="H7/s6")
    row = feature_row(plug, web="a", number=3, status="new", effect=_EFFECT, thickness=18.0, units="mm",
                      correction=corr, plug_density=18.05)
    assert row["x_mm"] == "-30.00" and row["y_mm"] == "-40.00"          # mirrored for the inner face
    assert (row["through"], row["bottom"], row["depth_mm"]) == ("yes", "", "18.00")
    # ISO 286-2, 12 mm (range 10 .. 18): H7 0 .. +18 um, s6 +28 .. +39 um
    assert (row["bore_min_mm"], row["bore_max_mm"], row["plug_min_mm"], row["plug_max_mm"]) == \
        ("12.000", "12.018", "12.028", "12.039")
    assert (row["interference_min_mm"], row["interference_max_mm"]) == ("0.010", "0.039")
    # 11.5 mm drill (largest <= 11.8) leaves 0.5 > 0.3 mm: opened to 12 - 0.25 = 11.75, reamed;
    # through, the drill goes its point length 11.5 / (2 tan 59 deg) past the far face
    assert (row["drill_mm"], row["pre_ream_mm"], row["ream_stock_mm"]) == ("11.500", "11.750", "0.250")
    assert float(row["tip_depth_mm"]) == pytest.approx(18.0 + 11.5 / (2 * math.tan(math.radians(59.0))), abs=0.005)


# ---------------------------------------------------------------- notes


@pytest.mark.cad
@pytest.mark.parametrize("units", ["mm", "inch"])
def test_notes_say_how_to_read_it(run, units):
    job = run["job"] if units == "mm" else _inch(run)[0]
    notes = sheet_notes(job, run["doc"])
    assert notes and all(isinstance(n, str) and n and not n.startswith("#") and "\n" not in n for n in notes)
    text = "\n".join(notes)
    assert "x is mirrored (x = -x_web)" in text
    assert f"Lengths in {'mm' if units == 'mm' else 'in'}" in text
    for caution in run["doc"]["cautions"]:
        assert f"CAUTION: {caution}" in notes
    # the plug sizes of this plan, with their ISO 286-2 limits (22 mm H7/p6: 0 .. +21, +22 .. +35 um)
    assert any("plug 22 mm H7/p6" in n and "bore 22.000 .. 22.021 mm" in n and "plug 22.022 .. 22.035 mm" in n
               and "interference 0.001 .. 0.035 mm" in n and "drill 21 mm" in n for n in notes)
    assert ("rounded inwards" in text) == (units == "inch")
