"""The invented 3D webs of samples/make_model_webs.py against their closed forms, and its bad models.

Three routes to each web's volume and centroid, held to the hand-worked closed forms of the script
(`expected`: prisms of circles, annuli and circular segments, Machinery's Handbook "Areas and Dimensions
of Plane Figures"; chamfer rings by Pappus's theorem and the frustum of a cone, Machinery's Handbook
"Volumes of Solids"):
  - OpenCascade's exact B-rep properties (BRepGProp) of the solid the script builds, to 1e-9;
  - the same after a STEP write and a read back with OCP's STEPControl_Reader, to 1e-7;
  - trimesh on an STL export, within the bound the mesh's chord tolerance gives (worked in `_mesh_bound`).
The bad models are each checked to be what their names say, by OpenCascade's own readers and shape
analysis (ShapeAnalysis_FreeBounds, the solids a file holds, the cylinder of the pin bore) and, for the
units, against OCP's STEPControl_Reader.FileUnits.  The webs and their files are made once per module.
"""

from __future__ import annotations

import importlib.util
import math
import re
import tomllib
from collections import Counter
from pathlib import Path

import pytest

from conftest import as_cq

pytestmark = pytest.mark.cad

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
NAMES = ["prism", "boss", "chamfered", "recessed", "lobe", "sample"]
BAD = ["open-shell", "two-solids", "wrong-frame", "pin-off-stroke", "pin-on-x", "no-length-unit"]

#: STL chord tolerance (absolute, mm) and angular tolerance (rad) of the mesh check
STL_TOL_MM = 0.01
STL_ANGLE_RAD = 0.1

#: the faces of each web by surface type, counted by hand from its docstring in the script
FACES = {
    "prism": {"PLANE": 2, "CYLINDER": 3},                  # two faces; rim and both bores
    "boss": {"PLANE": 3, "CYLINDER": 4},                   # inner face, face ring, boss top; + boss side
    "chamfered": {"PLANE": 2, "CYLINDER": 3, "CONE": 2},   # the chamfers are cones
    "recessed": {"PLANE": 3, "CYLINDER": 4},               # + recess floor; + recess wall
    "lobe": {"PLANE": 4, "CYLINDER": 3},                   # inner, hub outer, lobe outer, the step
    "sample": {"PLANE": 4, "CYLINDER": 5, "CONE": 2},      # inner, recess floor, face ring, boss top
}


# ------------------------------------------------------------------ fixtures: everything built once
@pytest.fixture(scope="module")
def mk():
    """samples/make_model_webs.py as a module (it imports cadquery, so it is loaded here, not at the top)."""
    spec = importlib.util.spec_from_file_location("make_model_webs", SAMPLES / "make_model_webs.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def webs(mk):
    return {name: mk.WEBS[name]() for name in NAMES}


@pytest.fixture(scope="module")
def files(mk, tmp_path_factory):
    """The script's command line run once: every web and every bad model as STEP files."""
    out = tmp_path_factory.mktemp("model-webs")
    assert mk.main([str(out), "--bad"]) == 0
    return out


def _gprops(shape):
    """(volume, (x, y, z) centroid) by OpenCascade's exact B-rep integration (BRepGProp)."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    raw = shape.wrapped if hasattr(shape, "wrapped") else shape
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(raw, props)
    c = props.CentreOfMass()
    return props.Mass(), (c.X(), c.Y(), c.Z())


def _read_step(path):
    """OCP's plain STEPControl_Reader: (status done?, the shape, the file's length unit names)."""
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.STEPControl import STEPControl_Reader
    from OCP.TColStd import TColStd_SequenceOfAsciiString

    reader = STEPControl_Reader()
    ok = reader.ReadFile(str(path)) == IFSelect_RetDone
    lengths, angles, solid_angles = (TColStd_SequenceOfAsciiString() for _ in range(3))
    reader.FileUnits(lengths, angles, solid_angles)
    units = [lengths.Value(i).ToCString() for i in range(1, lengths.Length() + 1)]
    reader.TransferRoots()
    return ok, reader.OneShape(), units


def _count(shape, kind) -> int:
    from OCP.TopAbs import TopAbs_FACE, TopAbs_SHELL, TopAbs_SOLID
    from OCP.TopExp import TopExp_Explorer

    explorer = TopExp_Explorer(shape, {"solid": TopAbs_SOLID, "shell": TopAbs_SHELL, "face": TopAbs_FACE}[kind])
    n = 0
    while explorer.More():
        n += 1
        explorer.Next()
    return n


def _faces(shape):
    import cadquery as cq

    return cq.Shape.cast(shape).Faces()


def _cylinders(shape) -> list[tuple[float, float, float]]:
    """(radius, x, y) of every cylindrical face whose axis is parallel to Z, from the surface itself."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_Cylinder

    out = []
    for face in _faces(shape):
        surface = BRepAdaptor_Surface(face.wrapped)
        if surface.GetType() != GeomAbs_Cylinder:
            continue
        cyl = surface.Cylinder()
        axis = cyl.Axis()
        if abs(abs(axis.Direction().Z()) - 1) < 1e-12:
            out.append((cyl.Radius(), axis.Location().X(), axis.Location().Y()))
    return out


def _assert_props(got, want, rel, size=65.0):
    """Volume within `rel` of the closed form; centroid within `rel` of the web's size (the rim radius: a
    centroid component near zero has no relative error of its own)."""
    (v, c), (v0, c0) = got, want
    assert abs(v - v0) <= rel * v0, (v, v0)
    for a, b in zip(c, c0):
        assert abs(a - b) <= rel * size, (c, c0)


# ------------------------------------------------------------------ the closed forms themselves
def test_closed_forms_by_hand(mk):
    """A few of the figures worked by hand, independent of the script's code."""
    # the prism web: pi (65^2 - 10^2 - 11^2) * 18 = 72072 pi mm^3; centroid y = -(100 * 30) / 4004
    v, c = mk.expected("prism")
    assert v == pytest.approx(72072 * math.pi, rel=1e-15)
    assert c == pytest.approx((0.0, -3000 / 4004, 9.0), abs=1e-14)
    # a half disc, the segment at d = 0: area pi r^2 / 2, centroid 4 r / (3 pi) (Machinery's Handbook)
    area, g = mk.segment(10.0, 0.0)
    assert area == pytest.approx(50 * math.pi, rel=1e-15)
    assert g == pytest.approx(40 / (3 * math.pi), rel=1e-15)
    # the chamfers: triangles of area c^2/2 at R - c/3 from the axis, by Pappus 2 pi (R - c/3) c^2/2:
    # 3 mm: 2 pi * 64 * 4.5 = 576 pi; 1.5 mm: 2 pi * 64.5 * 1.125 = 145.125 pi; the script's cylinder-less-
    # frustum route (Machinery's Handbook) gives the same
    for c, by_hand in ((3.0, 576 * math.pi), (1.5, 145.125 * math.pi), (2.5, 2 * math.pi * (65 - 2.5 / 3) * 3.125),
                       (1.0, 2 * math.pi * (65 - 1 / 3) * 0.5)):
        assert mk.pappus_chamfer_volume(c) == pytest.approx(by_hand, rel=1e-15)
        assert mk.chamfer_ring(c, 18.0, +1)[0] == pytest.approx(by_hand, rel=1e-12)
        assert mk.chamfer_ring(c, 0.0, -1)[0] == pytest.approx(by_hand, rel=1e-12)
    # the ring's z-centroid another way: the section's integral of r z over its integral of r, each exact on a
    # triangle from the corner values by the product rule int f g dA = A/12 (sum f_i g_i + sum f_i sum g_i)
    # (linear f, g; e.g. Zienkiewicz & Taylor, The Finite Element Method, triangle area integrals).  The 3 mm
    # ring at z = 18: corners (r, z) = (65, 18), (62, 18), (65, 15), A = 4.5:
    # int r z = 4.5/12 (1170 + 1116 + 975 + 192 * 51) = 4894.875, int r = 4.5 * 64 = 288, z = 16.99609375
    v, _, _, mz = mk.chamfer_ring(3.0, 18.0, +1)
    assert mz / v == pytest.approx(4894.875 / 288, rel=1e-13)
    # the 1.5 mm ring at z = 0, corners (65, 0), (63.5, 0), (65, 1.5), A = 1.125:
    # int r z = 1.125/12 (0 + 0 + 97.5 + 193.5 * 1.5) = 36.3515625, int r = 1.125 * 64.5 = 72.5625
    v, _, _, mz = mk.chamfer_ring(1.5, 0.0, -1)
    assert mz / v == pytest.approx(36.3515625 / 72.5625, rel=1e-13)


#: shapely's circles: 4 * QUAD_SEGS sides, inscribed
QUAD_SEGS = 4096


def _polygon_bound(*radii: float) -> float:
    """How far (mm^2) a region bounded by arcs of these circles can differ from the same region of their
    inscribed polygons: the sagitta r (1 - cos(pi / n)) of the largest times the length of all the circles
    (the region's boundary is part of them)."""
    n = 4 * QUAD_SEGS
    return max(radii) * (1 - math.cos(math.pi / n)) * sum(2 * math.pi * r for r in radii)


@pytest.mark.parametrize("r1, r2, d", [(25.0, 10.0, 30.0), (11.0, 28.0, 30.0), (65.0, 64.0, 20.0)])
def test_lens_against_shapely(mk, r1, r2, d):
    """The lens of two circles (two segments, Machinery's Handbook) against shapely, an independent
    geometry library, on the circles' inscribed polygons, within what the polygons can miss."""
    import shapely

    a = shapely.Point(0, 0).buffer(r1, quad_segs=QUAD_SEGS)
    b = shapely.Point(0, d).buffer(r2, quad_segs=QUAD_SEGS)
    overlap = a.intersection(b)
    area, my = mk.lens(r1, r2, d)
    da = _polygon_bound(r1, r2)
    assert abs(area - overlap.area) <= da
    # centroid = M / A, |y| <= d + r2 inside the lens: |dy| <= (|dM| + |y| |dA|) / (A - |dA|)
    y = my / area
    assert abs(y - overlap.centroid.y) <= (da * (d + r2) + abs(y) * da) / (area - da)


def test_lobe_segment_against_shapely(mk):
    """The lobe's missing top (the rim circle beyond y = -15) against shapely: the disc's polygon clipped."""
    import shapely

    disc = shapely.Point(0, 0).buffer(65.0, quad_segs=QUAD_SEGS)
    lobe = disc.intersection(shapely.box(-70, -70, 70, -15))
    area, g = mk.segment(65.0, 15.0)
    da = _polygon_bound(65.0)
    assert abs(area - lobe.area) <= da
    assert abs(-g - lobe.centroid.y) <= (da * 65.0 + g * da) / (area - da)


# ------------------------------------------------------------------ the webs: three routes
@pytest.mark.parametrize("name", NAMES)
def test_exact_brep_against_closed_form(mk, webs, name):
    """OpenCascade's exact volume and centroid of the solid the script builds: the closed form to 1e-9."""
    assert webs[name].isValid()
    _assert_props(_gprops(webs[name]), mk.expected(name), 1e-9)


@pytest.mark.parametrize("name", NAMES)
def test_step_round_trip(mk, files, name):
    """The STEP file, read back by OCP's STEPControl_Reader: one solid, in millimetres (the file says so,
    read from its text and by the reader), of the closed form's volume and centroid to 1e-7, with the
    faces the docstring names (a STEP keeps planes, cylinders and cones as such)."""
    path = files / f"{name}.step"
    ok, shape, units = _read_step(path)
    assert ok and _count(shape, "solid") == 1
    assert units == ["millimetre"] and mk.declared_length_unit(path) == "mm"
    _assert_props(_gprops(shape), mk.expected(name), 1e-7)
    assert Counter(f.geomType() for f in _faces(shape)) == FACES[name]


def _mesh_bound(shape) -> tuple[float, float]:
    """What the STL may differ by, from the mesh tolerance: (volume mm^3, first moment mm^4).

    Planar faces are meshed in their own planes; every triangle of a curved face (cylinder, cone) has its
    corners on the surface and strays from it by at most the chord tolerance (OpenCascade's linear
    deflection).  So the mesh and the solid differ by a layer no thicker than the tolerance over the curved
    faces: at most tol * (their area) of volume.  The STL stores single-precision corners, each coordinate
    within 2^-24 of its size (IEEE 754 binary32), so every face may move by that much more: a layer of
    sqrt(3) 2^-24 * reach over the whole surface.  That volume lies at most `reach` (the farthest point's
    distance from the origin) away, which bounds the first moment."""
    shape = as_cq(shape)
    curved = sum(f.Area() for f in shape.Faces() if f.geomType() != "PLANE")
    bb = shape.BoundingBox()
    reach = math.sqrt(max(abs(bb.xmin), bb.xmax) ** 2 + max(abs(bb.ymin), bb.ymax) ** 2
                      + max(abs(bb.zmin), bb.zmax) ** 2)
    dv = STL_TOL_MM * curved + math.sqrt(3) * 2.0 ** -24 * reach * shape.Area()
    return dv, dv * reach


@pytest.mark.parametrize("name", NAMES)
def test_stl_mesh_against_closed_form(mk, webs, name, tmp_path):
    """trimesh (an independent library) on the STL: a closed volume whose volume and centroid are the
    closed form's within the mesh bound."""
    import trimesh

    path = tmp_path / f"{name}.stl"
    assert webs[name].exportStl(str(path), tolerance=STL_TOL_MM, angularTolerance=STL_ANGLE_RAD, relative=False)
    mesh = trimesh.load(str(path))
    assert mesh.is_watertight and mesh.is_volume
    v0, c0 = mk.expected(name)
    dv, dm = _mesh_bound(webs[name])
    assert abs(mesh.volume - v0) <= dv, (mesh.volume - v0, dv)
    # centroid = M / V: |dc| <= (|dM| + |c| |dV|) / (V - |dV|)
    for got, want in zip(mesh.center_mass, c0):
        assert abs(got - want) <= (dm + abs(want) * dv) / (v0 - dv)


def test_prism_web_is_the_parametric_web(mk, webs):
    """prism_web() is geomgen's parametric web (diameter 130, thickness 18, pin_bore 20, main_bore 22,
    stroke 60): the same area moments (geomgen's Green's-theorem integration of its section, a separate
    code path) and the same solid (each cut from the other leaves no volume, by OpenCascade)."""
    from geomgen.section import parametric_web
    from geomgen.solid import body_shape

    section = parametric_web(diameter=130.0, thickness=18.0, density_g_cm3=7.85, stroke=60.0, pin_bore=20.0,
                             main_bore=22.0)
    moments = section.area_moments()
    v0, c0 = mk.expected("prism")
    assert moments.area * 18.0 == pytest.approx(v0, rel=1e-12)
    assert (moments.sx / moments.area, moments.sy / moments.area) == pytest.approx(c0[:2], abs=1e-12)
    theirs, mine = as_cq(body_shape(section)), webs["prism"]
    assert mine.cut(theirs).Volume() <= 1e-9 * v0
    assert theirs.cut(mine).Volume() <= 1e-9 * v0
    _assert_props(_gprops(theirs), (v0, c0), 1e-9)


# ------------------------------------------------------------------ the shipped sample
def test_shipped_sample_file(mk):
    """samples/model-web.step is the script's sample web (closed form to 1e-7 when read back), small,
    in mm; samples/model-web.toml names it, with the bores the model has and no 2D web keys."""
    import cadquery as cq

    path = SAMPLES / "model-web.step"
    assert path.stat().st_size < 1_000_000
    ok, shape, units = _read_step(path)
    assert ok and _count(shape, "solid") == 1 and units == ["millimetre"]
    assert mk.declared_length_unit(path) == "mm"
    _assert_props(_gprops(shape), mk.expected("sample"), 1e-7)

    job = tomllib.loads((SAMPLES / "model-web.toml").read_text(encoding="utf-8"))
    web = job["web"]
    assert web["model"] == "model-web.step"
    assert not {"diameter", "outline", "thickness"} & set(web)
    stroke = job["engine"]["stroke"]
    cylinders = _cylinders(shape)
    # the pin bore: a cylinder of pin_bore / 2 about (0, stroke/2); the main bore: main_bore / 2 about the axis
    assert any(abs(r - web["pin_bore"] / 2) < 1e-9 and abs(x) < 1e-9 and abs(y - stroke / 2) < 1e-9
               for r, x, y in cylinders), cylinders
    assert any(abs(r - web["main_bore"] / 2) < 1e-9 and abs(x) < 1e-9 and abs(y) < 1e-9
               for r, x, y in cylinders), cylinders
    bb = cq.Shape.cast(shape).BoundingBox()
    assert abs(bb.zmin) < 1e-6                       # the inner face at z = 0 (within the kernel's tolerance)


# ------------------------------------------------------------------ the bad models
def test_bad_models_are_what_they_say(mk, files):
    """Each bad model read back by OCP's STEPControl_Reader is the fault its name says, and nothing else."""
    import cadquery as cq
    from OCP.BRep import BRep_Tool
    from OCP.ShapeAnalysis import ShapeAnalysis_FreeBounds
    from OCP.TopAbs import TopAbs_SHELL
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    bad = files / "bad"
    assert sorted(p.stem for p in bad.glob("*.step")) == sorted(BAD)
    v0, c0 = mk.expected("prism")

    # an open shell: no solid; its free edges (ShapeAnalysis_FreeBounds) close into the three circles of the
    # missing outer face (rim, pin bore, main bore), all at z = 18
    ok, shape, _ = _read_step(bad / "open-shell.step")
    assert ok and _count(shape, "solid") == 0 and _count(shape, "shell") == 1
    explorer = TopExp_Explorer(shape, TopAbs_SHELL)
    assert not BRep_Tool.IsClosed_s(TopoDS.Shell_s(explorer.Current()))
    free = ShapeAnalysis_FreeBounds(shape)
    wires = cq.Shape.cast(free.GetClosedWires()).Wires()
    assert len(wires) == 3 and len(cq.Shape.cast(free.GetOpenWires()).Wires()) == 0
    assert sorted(round(w.Length() / (2 * math.pi), 9) for w in wires) == [10.0, 11.0, 65.0]
    assert all(abs(w.Center().z - 18.0) < 1e-9 for w in wires)

    # two solids, each the prism web, one at z 0..18 and one at -38..-20
    ok, shape, _ = _read_step(bad / "two-solids.step")
    assert ok and _count(shape, "solid") == 2
    solids = cq.Shape.cast(shape).Solids()
    for s in solids:
        assert s.Volume() == pytest.approx(v0, rel=1e-7)
    assert sorted(round(s.BoundingBox().zmax, 3) for s in solids) == [-20.0, 18.0]

    # the wrong frame: the prism web with z -9..9, its centroid at z = 0
    ok, shape, _ = _read_step(bad / "wrong-frame.step")
    assert ok and _count(shape, "solid") == 1
    _assert_props(_gprops(shape), (v0, (c0[0], c0[1], 0.0)), 1e-7)
    bb = cq.Shape.cast(shape).BoundingBox()
    assert (bb.zmin, bb.zmax) == pytest.approx((-9.0, 9.0), abs=1e-6)

    # the pin bore 5 mm further out: its cylinder (radius 10) about (0, 35); centroid -100 * 35 / 4004
    ok, shape, _ = _read_step(bad / "pin-off-stroke.step")
    assert (10.0, 0.0, 35.0) in [tuple(round(v, 9) for v in c) for c in _cylinders(shape)]
    _assert_props(_gprops(shape), (v0, (0.0, -3500 / 4004, 9.0)), 1e-7)

    # the pin on +X: the bore's cylinder about (30, 0), centroid on -X; turned +90 deg about Z (counter-
    # clockwise seen from +Z: model_rotate_deg = 90) it is the prism web again, turned -90 deg it is not
    ok, shape, _ = _read_step(bad / "pin-on-x.step")
    assert (10.0, 30.0, 0.0) in [tuple(round(v, 9) + 0.0 for v in c) for c in _cylinders(shape)]
    _assert_props(_gprops(shape), (v0, (c0[1], 0.0, 9.0)), 1e-7)
    model = cq.Shape.cast(shape)
    fixed = model.rotate((0, 0, 0), (0, 0, 1), 90)
    assert fixed.cut(mk.prism_web()).Volume() <= 1e-9 * v0
    _assert_props(_gprops(fixed), (v0, c0), 1e-7)
    assert model.rotate((0, 0, 0), (0, 0, 1), -90).cut(mk.prism_web()).Volume() > 0.01 * v0

    # no length unit: the text has no LENGTH_UNIT and no GLOBAL_UNIT_ASSIGNED_CONTEXT; OCP still reads it
    # (status done, one solid, FileUnits lists no length unit) and takes its numbers as mm
    path = bad / "no-length-unit.step"
    text = path.read_text(encoding="latin-1")
    assert "LENGTH_UNIT" not in text and "GLOBAL_UNIT_ASSIGNED_CONTEXT" not in text
    assert mk.declared_length_unit(path) is None
    ok, shape, units = _read_step(path)
    assert ok and _count(shape, "solid") == 1 and units == []
    _assert_props(_gprops(shape), (v0, c0), 1e-7)


def test_unitless_numbers_are_taken_as_mm(mk, webs, tmp_path):
    """What OCP's reader assumes without a length unit: the same web written in metres (numbers 1000 times
    smaller), its units stripped, reads back 1e9 times smaller in volume: the numbers were taken as mm."""
    path = tmp_path / "metres.step"
    mk.write_step(webs["prism"], path, unit="M", name="metres")
    assert mk.declared_length_unit(path) == "m"
    path.write_text(mk.strip_units(path.read_text(encoding="latin-1")), encoding="latin-1")
    assert mk.declared_length_unit(path) is None
    ok, shape, units = _read_step(path)
    assert ok and units == []
    v0, c0 = mk.expected("prism")
    _assert_props(_gprops(shape), (v0 * 1e-9, tuple(c * 1e-3 for c in c0)), 1e-7, size=0.065)


# ------------------------------------------------------------------ reading the length unit from the text
@pytest.mark.parametrize("unit, short, ocp_name", [("MM", "mm", "millimetre"), ("CM", "cm", "centimetre"),
                                                   ("M", "m", "metre"), ("INCH", "in", "INCH"),
                                                   ("FT", "ft", "FOOT")])
def test_declared_length_unit(mk, webs, tmp_path, unit, short, ocp_name):
    """declared_length_unit reads the unit OpenCascade's writer declared, and agrees with OCP's own reader
    (FileUnits); the reader scales the file back to the same web in mm."""
    path = tmp_path / f"prism-{unit}.step"
    mk.write_step(webs["prism"], path, unit=unit, name="prism")
    assert mk.declared_length_unit(path) == short
    ok, shape, units = _read_step(path)
    assert ok and units == [ocp_name]
    _assert_props(_gprops(shape), mk.expected("prism"), 1e-7)


def test_declared_length_unit_other_spellings(mk, webs, tmp_path):
    """Another writer's spelling of an inch (lower-case name, a typed LENGTH_MEASURE, the attributes of the
    complex entity in another order) is still an inch, to declared_length_unit and to OCP's reader; a file
    whose shapes declare different units is refused."""
    path = tmp_path / "inch.step"
    mk.write_step(webs["prism"], path, unit="INCH", name="prism")
    text = path.read_text(encoding="latin-1")
    text = text.replace("CONVERSION_BASED_UNIT('INCH',", "CONVERSION_BASED_UNIT('inch',")
    text, n = re.subn(r"LENGTH_MEASURE_WITH_UNIT\(25\.4,", "LENGTH_MEASURE_WITH_UNIT(LENGTH_MEASURE(25.4),", text)
    assert n == 1
    text, n = re.subn(r"\( LENGTH_UNIT\(\) NAMED_UNIT\(\*\) SI_UNIT\(\.MILLI\.,\.METRE\.\) \)",
                      "( NAMED_UNIT(*) SI_UNIT(.MILLI.,.METRE.) LENGTH_UNIT() )", text)
    assert n == 1
    path.write_text(text, encoding="latin-1")
    assert mk.declared_length_unit(path) == "in"
    ok, shape, units = _read_step(path)
    assert ok and units == ["inch"]
    _assert_props(_gprops(shape), mk.expected("prism"), 1e-7)

    mixed = tmp_path / "mixed.step"
    mixed.write_text(text.replace("ENDSEC;\nEND-ISO", "#9001 = ( GEOMETRIC_REPRESENTATION_CONTEXT(3) "
                                  "GLOBAL_UNIT_ASSIGNED_CONTEXT((#9002)) REPRESENTATION_CONTEXT('', '') );\n"
                                  "#9002 = ( LENGTH_UNIT() NAMED_UNIT(*) SI_UNIT(.MILLI.,.METRE.) );\n"
                                  "ENDSEC;\nEND-ISO"), encoding="latin-1")
    with pytest.raises(ValueError, match="different length units"):
        mk.declared_length_unit(mixed)
