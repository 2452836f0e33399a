"""crank.step and the STEP header, re-read as another program would.

- crank.step holds every body and plug of both webs as its own named solid;
  its exact properties (OpenCascade GProp on the re-read file) equal the two
  per-web files' properties placed in the crank frame by MassProps (web b
  turned 180 deg about Y, inner face `crank_gap` from web a's: (x, y, z) ->
  (-x, y, -z - gap), README "Frame"): two independent roads, one through the
  kernel's transform and STEP writer, one through the parallel-axis algebra.
- Closed form for twin webs: turned about Y, web b's x unbalance is the
  negative of web a's, so the crank's x unbalance is zero while each web's
  is not; the crank's mass is twice a web's.
- The header's FILE_NAME fields in the order ISO 10303-21 gives them (name,
  time_stamp, author, organization, preprocessor_version,
  originating_system, authorization; from memory of the standard), read
  from the file's text by a small tokenizer here, not by OpenCascade.
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from conftest import minimal_job_dict, toml_dumps

STEEL = 7.85                  # g/cm^3, common practice (geomgen.materials "steel")
W3 = 18.05                    # g/cm^3, geomgen.materials "W-alloy-class-3" (ASTM B777-15 class 3 nominal)
GAP = 24.0                    # mm between the webs' inner faces in crank.step

# an off-centre blind hole and a through plug: the webs' unbalance has an x part
FEATURES = [{"kind": "hole", "x": 20.0, "y": -40.0, "diameter": 10.0, "depth": 8.0},
            {"kind": "plug", "x": -25.0, "y": -45.0, "diameter": 10.0, "length": 18.0,
             "material": "W-alloy-class-3"}]
NAMES = ["web-a body", "web-a plug-1", "web-b body", "web-b plug-1"]


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    from geomgen.cli import main

    tmp = tmp_path_factory.mktemp("crank")
    job = minimal_job_dict(web__features=FEATURES, output={"crank_gap": GAP})
    (tmp / "job.toml").write_text(toml_dumps(job))
    assert main(["build", str(tmp / "job.toml"), "--out", str(tmp / "out")]) == 0
    return tmp / "out"


def _props_by_part(path):
    """Exact MassProps of each solid of a STEP file: bodies steel, plugs W3."""
    from geomgen.export import read_step
    from geomgen.solid import PLUG, solid_part
    from geomgen.verify import solid_massprops

    return [(n, solid_massprops(s, W3 if solid_part(n) == PLUG else STEEL)) for n, s in read_step(path)]


@pytest.mark.cad
def test_crank_step_holds_both_twin_webs_as_named_valid_solids(built):
    from OCP.BRepCheck import BRepCheck_Analyzer

    from geomgen.export import read_step

    import plancheck as pc

    solids = read_step(built / "crank.step")
    assert [n for n, _ in solids] == NAMES
    for name, shape in solids:
        assert pc.count_solids(shape) == 1, name
        assert BRepCheck_Analyzer(shape).IsValid(), name


@pytest.mark.cad
def test_crank_step_is_both_webs_in_the_crank_frame(built):
    from geomgen.massprops import MassProps
    from geomgen.pipeline import in_crank_frame

    crank = dict(_props_by_part(built / "crank.step"))
    total = sum(crank.values(), MassProps.zero())
    webs = [sum((p for _, p in _props_by_part(built / f"web-{n}.step")), MassProps.zero()) for n in "ab"]
    # closed form: twin webs, so the crank weighs twice one web
    assert total.mass == pytest.approx(2.0 * webs[0].mass, rel=1e-9)
    assert total.mass == pytest.approx(webs[0].mass + webs[1].mass, rel=1e-9)
    # the plug counts at its own density in both webs
    assert crank["web-b plug-1"].mass == pytest.approx(crank["web-a plug-1"].mass, rel=1e-9)
    assert crank["web-a plug-1"].mass == pytest.approx(W3 * 1e-3 * np.pi * 25.0 * 18.0, rel=1e-9)
    placed = in_crank_frame(webs[0], 0, gap=GAP) + in_crank_frame(webs[1], 1, gap=GAP)
    scale = abs(webs[0].unbalance).max()
    assert np.allclose(total.unbalance, placed.unbalance, rtol=0, atol=1e-9 * scale)
    assert np.allclose(total.first_moment, placed.first_moment, rtol=0, atol=1e-9 * abs(placed.first_moment).max())
    assert np.allclose(total.second_moment, placed.second_moment, rtol=0,
                       atol=1e-9 * abs(placed.second_moment).max())
    # closed form for the turn about Y: x unbalances cancel, y add; web b's body mirrors z
    assert abs(webs[0].unbalance[0]) > 100.0
    assert abs(total.unbalance[0]) < 1e-9 * scale
    assert total.unbalance[1] == pytest.approx(2.0 * webs[0].unbalance[1], rel=1e-9)
    assert crank["web-b body"].com[2] == pytest.approx(-GAP - crank["web-a body"].com[2], abs=1e-9)


@pytest.mark.cad
def test_inspect_counts_crank_plugs_as_plugs(built):
    from geomgen.inspect import DEFAULT_PLUG_MATERIAL, inspect_file
    from geomgen.materials import material

    w3 = material(DEFAULT_PLUG_MATERIAL, "test").density
    out = inspect_file(built / "crank.step")["json"]
    assert [s["name"] for s in out["solids"]] == NAMES
    assert [s["density_g_cm3"] for s in out["solids"]] == [STEEL, w3, STEEL, w3]
    one = inspect_file(built / "web-a.step")["json"]          # the older per-web names: body, plug-1
    assert [s["name"] for s in one["solids"]] == ["body", "plug-1"]
    assert out["mass_g"] == pytest.approx(2.0 * one["mass_g"], rel=1e-9)


def test_solid_part_reads_new_and_old_names():
    from geomgen.solid import crank_solid_name, solid_part

    for name in ("plug-1", "plug-12", "web-a plug-1", "a-plug-2", "web-left plug-3", "PLUG-1", "plug"):
        assert solid_part(name) == "plug", name
    for name in ("body", "web-a body", "a-body", "web-plug body", "plugged", "plug-x", ""):
        assert solid_part(name) == "body", name
    assert crank_solid_name("a", "plug-2") == "web-a plug-2"
    assert solid_part(crank_solid_name("plug", "body")) == "body"


# ------------------------------------------------------------------ header
def _step_tokens(text: str):
    """Strings ('...' with '' for a quote), parentheses and commas of a STEP parameter list."""
    for m in re.finditer(r"'((?:[^']|'')*)'|([(),])|\$", text):
        if m.group(1) is not None:
            yield ("str", m.group(1).replace("''", "'"))
        elif m.group(2):
            yield (m.group(2), None)
        else:
            yield ("str", None)


def _entity_fields(header: str, keyword: str) -> list:
    """The top-level fields of a header entity: strings, or lists of strings."""
    start = header.index(keyword + "(") + len(keyword)
    fields, stack = [], []
    for kind, value in _step_tokens(header[start:]):
        if kind == "(":
            stack.append([])
        elif kind == ")":
            done = stack.pop()
            if not stack:
                return done
            stack[-1].append(done)
        elif kind == "str":
            stack[-1].append(value)
    return fields


@pytest.mark.cad
@pytest.mark.parametrize("file", ["web-a.step", "web-b.step", "crank.step"])
def test_step_header_names_the_file_and_geomgen(built, file):
    from geomgen import __version__
    from geomgen.export import step_header

    text = (built / file).read_text()
    header = text[text.index("HEADER;"):text.index("ENDSEC;")]
    name, stamp, author, org, preprocessor, system, authorisation = _entity_fields(header, "FILE_NAME")
    assert name == file
    assert re.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d", stamp)
    assert author == [""] and org == [""] and authorisation == ""
    assert preprocessor == system == f"geomgen {__version__}"
    description, level = _entity_fields(header, "FILE_DESCRIPTION")
    assert description[0].startswith("geomgen ") and level == "2;1"
    for default in ("Open CASCADE", "Author", "Unknown"):
        assert default not in header
    # OpenCascade's own reader sees the same fields
    read = step_header(built / file)
    assert (read["name"], read["author"], read["organization"]) == (file, [""], [""])
    assert read["originating_system"] == read["preprocessor_version"] == f"geomgen {__version__}"


@pytest.mark.cad
def test_two_placements_of_one_shape_stay_two_solids(tmp_path):
    """The writer's own guard: the same shape given twice, once moved, is two
    solids in the file, each where it was put (closed form: a 10 mm cube,
    V = 1000 mm^3, centre moved by the translation)."""
    import cadquery as cq

    from geomgen.export import read_step, write_step
    from geomgen.verify import solid_massprops

    cube = cq.Solid.makeBox(10, 10, 10)
    moved = cube.moved(cq.Location(cq.Vector(30, 0, -5)))
    write_step([("one", cube), ("two", moved), ("three", cube)], tmp_path / "t.step")
    back = read_step(tmp_path / "t.step")
    assert [n for n, _ in back] == ["one", "two", "three"]
    props = [solid_massprops(s, 1.0) for _, s in back]
    assert [p.volume for p in props] == pytest.approx([1000.0] * 3, rel=1e-12)
    assert [tuple(p.com) for p in props] == [pytest.approx(c, abs=1e-9)
                                             for c in ((5, 5, 5), (35, 5, 0), (5, 5, 5))]
