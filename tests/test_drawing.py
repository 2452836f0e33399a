"""drawing.dxf of a real `plan` run (tests/_shop_run.py), read back with ezdxf."""

from __future__ import annotations

import ezdxf
import pytest
import shapely
from ezdxf import path as dxfpath

from _shop_run import plan_run
from geomgen.features import feature_from_table, footprint


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


def test_feature_circles_match_holes_and_plugs(run):
    msp = run["dxf"].modelspace()
    for web in run["doc"]["webs"]:
        ox, oy, _ = _web_origin(run["dxf"], web["name"])
        circles = sorted((round(e.dxf.center.x - ox, 6), round(e.dxf.center.y - oy, 6), round(e.dxf.radius, 6))
                         for e in msp.query("CIRCLE") if e.dxf.layer == f"{web['name']}-FEATURES")
        want = sorted((round(f["x"], 6), round(f["y"], 6), round(f["diameter"] / 2, 6))
                      for f in web["features"] if f["kind"] in ("hole", "plug"))
        assert len(circles) == len(want) > 0
        for got, exp in zip(circles, want):
            assert got == pytest.approx(exp, abs=1e-6)


def test_kidney_outline_area_matches_the_footprint(run):
    msp = run["dxf"].modelspace()
    for web in run["doc"]["webs"]:
        ox, oy, _ = _web_origin(run["dxf"], web["name"])
        pockets = [f for f in web["features"] if f["kind"] == "pocket"]
        polys = [e for e in msp.query("LWPOLYLINE") if e.dxf.layer == f"{web['name']}-FEATURES"]
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
