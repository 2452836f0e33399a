"""drawing.dxf of a real `plan` run (tests/_shop_run.py), read back with ezdxf."""

from __future__ import annotations

import math

import ezdxf
import pytest
import shapely
from ezdxf import path as dxfpath

from geomgen.features import feature_from_table, footprint

from _shop_run import plan_run

pytestmark = pytest.mark.cad  # every test reads the shared `plan` run, which builds the solids


@pytest.fixture(scope="module")
def run():
    r = dict(plan_run())
    r["dxf"] = ezdxf.readfile(r["out"] / "drawing.dxf")
    return r


def _web_origin(dxf, name):
    """The crank axis of a web: the centre of its (circular) outline, as ezdxf reads it back."""
    rims = [e for e in dxf.modelspace().query("CIRCLE") if e.dxf.layer == f"{name}-OUTLINE"]
    assert len(rims) == 1
    return rims[0].dxf.center.x, rims[0].dxf.center.y, rims[0].dxf.radius


def test_rereads_and_audits_clean(run):
    dxf = run["dxf"]
    auditor = dxf.audit()
    assert not auditor.has_errors, [str(e) for e in auditor.errors]
    assert len(auditor.fixes) == 0
    assert dxf.dxfversion == "AC1024"                 # R2010
    assert dxf.header["$INSUNITS"] == 4               # millimetres (DXF reference, $INSUNITS)


def test_classes_section_in_a_fixed_order(run):
    """The same plan gives the same drawing bytes from run to run: the CLASSES section (DXF reference:
    group code 0 CLASS, its DXF record name in group code 1), whose order ezdxf leaves to how its classes
    were registered, is written sorted by name; ezdxf reads it back with every class there."""
    lines = (run["out"] / "drawing.dxf").read_text().splitlines()
    start = next(i for i in range(len(lines) - 2) if lines[i].strip() == "2" and lines[i + 1] == "CLASSES")
    end = next(i for i in range(start, len(lines)) if lines[i] == "ENDSEC")
    names = [lines[i + 2] for i in range(start, end - 2) if lines[i] == "CLASS" and lines[i + 1].strip() == "1"]
    assert len(names) >= 2 and names == sorted(names)
    assert sorted(c.dxf.name for c in run["dxf"].classes) == names


def test_layers_per_web_and_webs_side_by_side(run):
    dxf = run["dxf"]
    origins = []
    for web in run["doc"]["webs"]:
        for key in ("OUTLINE", "BORES", "FEATURES", "COM", "AXES", "TABLE", "DIMS"):
            assert f"{web['name']}-{key}" in dxf.layers
        x, y, radius = _web_origin(dxf, web["name"])
        assert radius == pytest.approx(web["outline"]["diameter_mm"] / 2, abs=1e-9)
        assert y == pytest.approx(0.0, abs=1e-12)
        origins.append((x, radius))
    (xa, ra), (xb, rb) = origins
    assert xa == 0.0 and xb - xa > ra + rb            # web b clears web a
    notes = " ".join(e.dxf.text for e in dxf.modelspace().query("TEXT") if e.dxf.layer == "NOTES")
    assert f"x = {xb:.1f} mm" in notes
    assert "CAUTION" in notes


def _round_outlines(msp, layer, ox, oy):
    """(x, y, r) of every circle drawn on a FEATURES layer: CIRCLEs, and the closed two-half-circle
    LWPOLYLINEs that carry a dashed (inner-face) circle, read back through ezdxf's own geometry."""
    out = [(e.dxf.center.x - ox, e.dxf.center.y - oy, e.dxf.radius) for e in msp.query("CIRCLE")
           if e.dxf.layer == layer]
    for e in msp.query("LWPOLYLINE"):
        pts = e.get_points("xyb")
        if e.dxf.layer == layer and len(pts) == 2 and all(abs(b - 1.0) < 1e-12 for *_, b in pts):
            (x1, y1, _), (x2, y2, _) = pts
            out.append(((x1 + x2) / 2 - ox, (y1 + y2) / 2 - oy, ((x1 - x2) ** 2 + (y1 - y2) ** 2) ** 0.5 / 2))
    return out


def test_feature_circles_match_holes_and_plugs(run):
    msp = run["dxf"].modelspace()
    for web in run["doc"]["webs"]:
        ox, oy, _ = _web_origin(run["dxf"], web["name"])
        circles = sorted(tuple(round(v, 6) for v in c)
                         for c in _round_outlines(msp, f"{web['name']}-FEATURES", ox, oy))
        want = sorted((round(f["x"], 6), round(f["y"], 6), round(f["diameter"] / 2, 6))
                      for f in web["features"] if f["kind"] in ("hole", "plug"))
        assert len(circles) == len(want) > 0
        for got, exp in zip(circles, want):
            assert got == pytest.approx(exp, abs=1e-6)
        # a feature cut from the inner face is dashed (the drawing's legend says so)
        dashed = [e for e in msp.query("LWPOLYLINE CIRCLE") if e.dxf.layer == f"{web['name']}-FEATURES"
                  and e.dxf.get("linetype") == "DASHED"]
        assert len(dashed) == sum(f["face"] == "inner" for f in web["features"]) > 0


def test_kidney_outline_area_matches_the_footprint(run):
    msp = run["dxf"].modelspace()
    for web in run["doc"]["webs"]:
        ox, oy, _ = _web_origin(run["dxf"], web["name"])
        pockets = [f for f in web["features"] if f["kind"] == "pocket"]
        polys = [e for e in msp.query("LWPOLYLINE") if e.dxf.layer == f"{web['name']}-FEATURES"
                 and len(e) > 2]
        assert len(polys) == len(pockets) == 1
        pts = [(v.x - ox, v.y - oy) for v in dxfpath.make_path(polys[0]).flattening(0.0005)]
        drawn = shapely.Polygon(pts)
        feature = feature_from_table({k: v for k, v in pockets[0].items() if k != "effect"}, where="test")
        exact = footprint(feature)
        # exact area of the filleted kidney by Green's theorem (geomgen.loops) against shapely's area of
        # the drawn bulge polyline flattened by ezdxf: the flattening is inscribed, within sagitta * perimeter
        assert drawn.is_valid
        assert drawn.area == pytest.approx(exact.area, abs=0.0005 * exact.length + 1e-9)
        # and it lies where the pocket is (independent check with shapely)
        assert drawn.symmetric_difference(exact.polygon(0.0005)).area < 0.001 * exact.area


def test_hole_table_and_dimensions(run):
    msp = run["dxf"].modelspace()
    for web in run["doc"]["webs"]:
        table = [e.dxf.text for e in msp.query("TEXT") if e.dxf.layer == f"{web['name']}-TABLE"]
        for f in web["features"]:
            if f["kind"] != "pocket":
                assert f"{f['x']:.2f}" in table and f"{f['y']:.2f}" in table
            assert f"{f['effect']['mass_g']:.2f}" in table
        dims = [e for e in msp.query("DIMENSION") if e.dxf.layer == f"{web['name']}-DIMS"]
        # holes and plugs: radius of the centre from the crank axis + diameter; pocket: two radii + span
        n_round = sum(f["kind"] != "pocket" for f in web["features"])
        assert len(dims) == 2 * n_round + 3 * sum(f["kind"] == "pocket" for f in web["features"])
        radial = sorted(d.get_measurement() for d in dims if d.dimtype == 0)        # linear (aligned)
        want = sorted((f["x"] ** 2 + f["y"] ** 2) ** 0.5 for f in web["features"] if f["kind"] != "pocket")
        assert radial == pytest.approx(want, abs=1e-6)


# ---------------------------------------------------------------- header and styles

def test_header_says_mm_at_full_size(run):
    """The header variables a reader draws dimensions from (LibreCAD does), by their DXF reference
    meaning: $INSUNITS 4 = millimetres, $MEASUREMENT 1 = metric, $LUNITS / $DIMLUNIT 2 = decimal,
    $DIMLFAC = factor on every measured length, $DIMSCALE = overall scale, $DIMTAD 1 = text above."""
    h = run["dxf"].header
    assert h["$INSUNITS"] == 4 and h["$MEASUREMENT"] == 1 and h["$LUNITS"] == 2 and h["$DIMLUNIT"] == 2
    assert h["$DIMLFAC"] == 1.0 and h["$DIMSCALE"] == 1.0           # a 7 mm hole reads 7, not 700
    # 2.5 mm lettering and arrows on a full-size mm drawing (ISO 3098 series height, common practice)
    assert h["$DIMTXT"] == 2.5 and h["$DIMASZ"] == 2.5 and h["$TEXTSIZE"] == 2.5
    assert 0 < h["$DIMEXO"] <= 2.0 and 0 < h["$DIMEXE"] <= 3.0 and 0 < h["$DIMGAP"] <= 2.0
    assert h["$DIMDEC"] == 2 and h["$DIMADEC"] == 1                 # 0.01 mm, 0.1 deg
    assert h["$DIMDSEP"] == ord(".") and h["$DIMTAD"] == 1 and h["$DIMTSZ"] == 0.0
    assert h["$DIMSTYLE"] == "GEOMGEN_MM" and h["$DIMTXSTY"] == "Standard" and h["$TEXTSTYLE"] == "Standard"


def test_only_the_project_dimension_style_and_it_matches_the_header(run):
    dxf = run["dxf"]
    assert sorted(s.dxf.name for s in dxf.dimstyles) == ["GEOMGEN_MM", "Standard"]   # no stock EZ_* styles
    assert [s.dxf.name for s in dxf.styles] == ["Standard"]                          # no stock font styles
    assert sorted(lt.dxf.name for lt in dxf.linetypes) == ["ByBlock", "ByLayer", "CENTER", "Continuous", "DASHED"]
    style = dxf.dimstyles.get("GEOMGEN_MM")
    # a reader that follows the style and one that follows the header draw the same dimension
    for key in ("dimscale", "dimlfac", "dimtxt", "dimasz", "dimexo", "dimexe", "dimgap", "dimdec", "dimadec",
                "dimtad", "dimlunit", "dimzin", "dimdsep", "dimtsz", "dimtih", "dimtoh"):
        assert style.dxf.get(key) == dxf.header[f"${key.upper()}"], key
    dims = [e for e in dxf.modelspace().query("DIMENSION")]
    assert dims and {d.dxf.dimstyle for d in dims} == {"GEOMGEN_MM"}


def test_diameter_text_of_the_known_hole(run):
    """The existing 10 mm hole at (40, 10): its diameter dimension measures 10 (ezdxf's own reading of the
    entity), times $DIMLFAC 1, and says the diameter sign; the block ezdxf rendered reads the same."""
    dxf = run["dxf"]
    ox, oy, _ = _web_origin(dxf, "a")
    dims = [d for d in dxf.modelspace().query("DIMENSION") if d.dxf.layer == "a-DIMS" and d.dimtype == 3]
    near = [d for d in dims if abs(d.get_measurement() - 10.0) < 1e-9]
    assert len(near) == 1
    dim = near[0]
    assert dim.dxf.text == "\u00d8<>"
    block_text = [e.plain_text() for e in dxf.blocks.get(dim.dxf.geometry) if e.dxftype() == "MTEXT"]
    assert block_text == ["\u00d810"]


# ---------------------------------------------------------------- one table per feature kind

WANT_COLUMNS = {   # the brief's columns, in drafting words
    "hole": ["no", "status", "face", "x mm", "y mm", "diameter mm", "drill", "full-diameter depth mm",
             "drill travel mm", "point angle deg", "mass g", "unbalance x, y g*mm"],
    "pocket": ["no", "status", "face", "r_inner mm", "r_outer mm", "angle_start deg", "angle_end deg", "depth mm",
               "corner radius mm", "mass g", "unbalance x, y g*mm"],
    "plug": ["no", "status", "face", "x mm", "y mm", "bore mm", "reamed to, bottom", "bore depth mm", "plug material",
             "plug g/cm3", "plug length mm", "mass g", "unbalance x, y g*mm"],
}
TABLE_NOTES = {"hole": "holes:", "pocket": "kidney pockets", "plug": "plugs:"}


def read_tables(msp, layer):
    """{kind: [row dict]} as a person reads the TEXTs of a web's TABLE layer: a table's note line, two
    heading lines whose first-line x positions are the columns, then one line per feature."""
    texts = [(round(e.dxf.insert.x, 6), round(e.dxf.insert.y, 6), e.dxf.text)
             for e in msp.query("TEXT") if e.dxf.layer == layer]
    lines = {}
    for x, y, t in texts:
        lines.setdefault(y, []).append((x, t))
    ys = sorted(lines, reverse=True)
    tables = {}
    for k, y in enumerate(ys):
        row = sorted(lines[y])
        kind = next((kd for kd, note in TABLE_NOTES.items() if len(row) == 1 and row[0][1].startswith(note)), None)
        if kind is None:
            continue
        first, second = dict(sorted(lines[ys[k + 1]])), dict(sorted(lines[ys[k + 2]]))
        xs = sorted(first)
        heads = [" ".join(p for p in (first[x], second.get(x, "")) if p) for x in xs]
        rows = []
        for y2 in ys[k + 3:]:
            cells = dict(lines[y2])
            if set(cells) - set(xs) or not cells.get(xs[0], "").isdigit():
                break
            rows.append({h: cells.get(x, "") for h, x in zip(heads, xs)})
        tables[kind] = (heads, rows)
    return tables


def test_each_kind_has_its_own_table_with_its_columns(run):
    msp = run["dxf"].modelspace()
    for web in run["doc"]["webs"]:
        tables = read_tables(msp, f"{web['name']}-TABLE")
        kinds = sorted({f["kind"] for f in web["features"]})
        assert sorted(tables) == kinds == ["hole", "plug", "pocket"]
        for kind, (heads, rows) in tables.items():
            assert heads == WANT_COLUMNS[kind]
            assert len(rows) == sum(f["kind"] == kind for f in web["features"])


def test_table_values_against_plan_json(run):
    msp = run["dxf"].modelspace()
    thickness = 18.0                                      # the shop job's web
    for web in run["doc"]["webs"]:
        tables = read_tables(msp, f"{web['name']}-TABLE")
        by_no = {row["no"]: (kind, row) for kind, (_, rows) in tables.items() for row in rows}
        n_existing = len(web["existing_features"])
        for step, f in enumerate(web["features"], start=1):
            kind, row = by_no[str(step)]
            assert kind == f["kind"]
            assert row["status"] == ("existing" if step <= n_existing else "new")
            assert row["face"] == f["face"]
            assert row["mass g"] == f"{f['effect']['mass_g']:.2f}"
            if kind == "hole":
                assert (row["x mm"], row["y mm"], row["diameter mm"]) == \
                    (f"{f['x']:.2f}", f"{f['y']:.2f}", f"{f['diameter']:.2f}")
                assert row["full-diameter depth mm"] == f"{f['depth']:.2f}"
                # drill point length d / 2 / tan(angle / 2) (Machinery's Handbook, drill point geometry):
                # 10 mm at 118 deg -> 3.004 mm, so a 6 mm full-diameter depth is 9.00 mm of drill travel
                point = f["diameter"] / 2 / math.tan(math.radians(f["point_angle"] / 2))
                assert row["drill travel mm"] == f"{f['depth'] + point:.2f}"
                assert row["point angle deg"] == f"{f['point_angle']:.1f}"
            elif kind == "pocket":
                for key in ("r_inner", "r_outer"):
                    assert row[f"{key} mm"] == f"{f[key]:.2f}"
                assert (row["angle_start deg"], row["angle_end deg"]) == (f"{f['angle_start']:.1f}",
                                                                          f"{f['angle_end']:.1f}")
                assert row["depth mm"] == f"{f['depth']:.2f}"
                assert row["corner radius mm"] == f"{f['corner_radius']:.2f}"
            else:
                assert (row["x mm"], row["y mm"], row["bore mm"]) == \
                    (f"{f['x']:.2f}", f"{f['y']:.2f}", f"{f['diameter']:.2f}")
                # a plug bore is reamed and flat-bottomed, never a pointed drill
                # reamed to the bore class of the job's ISO 286 fit (H7 of the default H7/p6)
                assert row["reamed to, bottom"] == ("H7 through" if f["length"] >= thickness else "H7 flat")
                assert row["bore depth mm"] == row["plug length mm"] == f"{f['length']:.2f}"
                assert row["plug material"] == f["material"]
                # the plug's density as plan.json gives it for the job's plug material
                assert row["plug g/cm3"] == f"{run['doc']['correction']['plug_density_g_cm3']:.2f}"


def test_an_inch_sheet_says_the_drawing_stays_in_mm(run):
    # the drawing's geometry is mm ($INSUNITS 4, checked above); with an inch sheet both files say so in words
    import dataclasses
    import io

    from geomgen.drawing import drawing_dxf
    from geomgen.sheet import sheet_notes

    job = run["job"]
    inch = dataclasses.replace(job, output=dataclasses.replace(job.output, sheet_units="inch"))
    dxf = ezdxf.read(io.StringIO(drawing_dxf(job=inch, doc=run["doc"], webs=run["webs"]).decode()))
    notes = [e.dxf.text for e in dxf.modelspace().query("TEXT") if e.dxf.layer == "NOTES"]
    assert any("operations.csv is in inch: 1 in = 25.4 mm" in t for t in notes)
    assert any("drawing.dxf stays in mm" in line for line in sheet_notes(inch, run["doc"]))
    assert not any("drawing.dxf stays in mm" in line for line in sheet_notes(job, run["doc"]))
