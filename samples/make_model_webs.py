"""Invented 3D flywheel webs, built with cadquery, for the STEP-model web form and its tests.

    python3 samples/make_model_webs.py            # writes samples/model-web.step (the shipped sample)
    python3 samples/make_model_webs.py OUTDIR     # writes every web below as OUTDIR/<name>.step
    python3 samples/make_model_webs.py OUTDIR --bad   # ... and the bad models as OUTDIR/bad/<name>.step

The engine is invented (no real engine or part): stroke 60 mm, so the crankpin bore is centred at
(0, 30); pin bore 20 mm; main bore 22 mm (a pressed mainshaft); full-circle webs 130 mm across.

Every web is in the web frame: crank axis Z, the pin bore a cylinder parallel to Z centred at
(0, stroke/2), the counterweight on -Y, the inner face (towards the rod) the low-z side starting at
z = 0, the outer face towards +Z.  Lengths in mm.

Each web function returns a cadquery Solid; `expected(name)` gives its volume (mm^3) and centroid
(mm), worked by hand below from closed forms:
  - a straight prism of a plane region A over z0..z1: V = A (z1 - z0), centroid (Ax/A, Ay/A, (z0+z1)/2);
  - a circle, an annulus: area pi r^2;
  - a circular segment (the part of a circle beyond a chord at distance d from its centre, half-angle
    a = acos(d/r)): area r^2 (a - sin a cos a), centroid 4 r sin^3 a / (3 (2a - sin 2a)) from the centre
    (Machinery's Handbook, "Areas and Dimensions of Plane Figures", circular segment);
  - the lens where two circles overlap: one segment of each, cut off by their common chord;
  - a chamfer ring: the rim's cylinder less the frustum of a cone the chamfer leaves,
    V = pi h (R^2 + R r + r^2) / 3 with its centroid h (R^2 + 2 R r + 3 r^2) / (4 (R^2 + R r + r^2)) above
    the base of radius R (Machinery's Handbook, "Volumes of Solids", frustum of a cone); its volume also
    the triangle revolved about Z, 2 pi r_c A by Pappus's (second) theorem, r_c the triangle's centroid
    radius (tests/test_model_webs.py holds the two routes together).

Bad models (`write_bad_models`): STEP files a model-web loader must refuse or fix, each what its
name says (an open shell, two solids, a wrong frame, a pin bore off stroke/2, a model turned a
quarter turn, a file that declares no length unit).  `declared_length_unit(path)` reads a STEP
file's length unit from its text.

Needs cadquery (and the OCP it brings); geomgen itself is not used.
"""

from __future__ import annotations

import argparse
import math
import re
import sys
from pathlib import Path

import cadquery as cq

HERE = Path(__file__).resolve().parent

# ---------------------------------------------------------------- the invented engine, mm
STROKE = 60.0
PIN_Y = STROKE / 2          # the crankpin bore's centre is at (0, PIN_Y)
PIN_BORE = 20.0
MAIN_BORE = 22.0
DIAMETER = 130.0

R = DIAMETER / 2            # 65, rim radius
RP = PIN_BORE / 2           # 10
RM = MAIN_BORE / 2          # 11

#: how far a cutting tool or an added body reaches past the face it meets, so the kernel never meets
#: two coplanar faces (the result is the same solid)
OVER = 1.0


# ================================================================ closed forms
# A body is summed from pieces as (V, Mx, My, Mz): volume and first moments about the planes x = 0,
# y = 0, z = 0 (mm^3, mm^4).  The centroid is (Mx, My, Mz) / V.

def circle_area(r: float, cx: float = 0.0, cy: float = 0.0) -> tuple[float, float, float]:
    """(area, first moment along x, along y) of a circle of radius r centred at (cx, cy)."""
    a = math.pi * r * r
    return a, a * cx, a * cy


def segment(r: float, d: float) -> tuple[float, float]:
    """A circular segment: the part of a circle of radius r beyond a chord at signed distance d from the
    centre (-r < d < r).  Returns (area, distance of its centroid from the centre, along the normal to the
    chord).  Machinery's Handbook, circular segment: area r^2 (a - sin a cos a) with a = acos(d / r),
    centroid 4 r sin^3 a / (3 (2a - sin 2a))."""
    a = math.acos(d / r)
    area = r * r * (a - math.sin(a) * math.cos(a))
    return area, 4 * r * math.sin(a) ** 3 / (3 * (2 * a - math.sin(2 * a)))


def lens(r1: float, r2: float, d: float) -> tuple[float, float]:
    """Where a circle of radius r1 at the origin and one of radius r2 at (0, d) overlap
    (|r1 - r2| < d < r1 + r2): (area, first moment along y).  The common chord is the line
    y0 = (d^2 + r1^2 - r2^2) / (2 d) (subtract the two circles' equations); the lens is circle 1's segment
    beyond y0 and circle 2's segment below it."""
    y0 = (d * d + r1 * r1 - r2 * r2) / (2 * d)
    a1, g1 = segment(r1, y0)            # circle 1 beyond the chord, centroid at +g1
    a2, g2 = segment(r2, d - y0)        # circle 2 below the chord, centroid at d - g2
    return a1 + a2, a1 * g1 + a2 * (d - g2)


def frustum(r_base: float, r_top: float, h: float) -> tuple[float, float]:
    """Frustum of a cone, base radius r_base, top radius r_top, height h: (volume, centroid height above
    the base).  Machinery's Handbook, frustum of a cone."""
    s = r_base ** 2 + r_base * r_top + r_top ** 2
    return math.pi * h * s / 3, h * (r_base ** 2 + 2 * r_base * r_top + 3 * r_top ** 2) / (4 * s)


def prism(area: float, mx: float, my: float, z0: float, z1: float) -> tuple[float, float, float, float]:
    """A straight prism of a plane region (area, its first moments along x and y) from z0 to z1."""
    h = z1 - z0
    return area * h, mx * h, my * h, area * h * (z0 + z1) / 2


def chamfer_ring(c: float, z_face: float, facing: int) -> tuple[float, float, float, float]:
    """The ring a c x 45 deg chamfer takes off the rim edge of the face at z_face; facing = +1 for a face
    looking towards +Z (the outer face), -1 towards -Z (the inner face).  The rim's last c of height next to
    the face is a cylinder of radius R; the chamfer leaves a frustum of it (base R at c from the face, top
    R - c at the face), so the ring is the cylinder less the frustum (Machinery's Handbook), volume and
    z-moment alike.  `pappus_chamfer_volume` gets the volume the other way."""
    v_cyl = math.pi * R * R * c
    v_fr, zc_fr = frustum(R, R - c, c)
    z_base = z_face - facing * c
    mz = v_cyl * (z_face - facing * c / 2) - v_fr * (z_base + facing * zc_fr)
    return v_cyl - v_fr, 0.0, 0.0, mz


def pappus_chamfer_volume(c: float) -> float:
    """The chamfer ring's volume by Pappus's (second) theorem: its section, a right triangle of legs c, has
    area c^2/2 and its centroid R - c/3 from the axis, so V = 2 pi (R - c/3) c^2 / 2."""
    return 2 * math.pi * (R - c / 3) * c * c / 2


def total(*pieces, minus=()) -> tuple[float, tuple[float, float, float]]:
    """(volume, centroid) of the pieces added, less the pieces in `minus`."""
    v, mx, my, mz = (sum(p[i] for p in pieces) - sum(p[i] for p in minus) for i in range(4))
    return v, (mx / v, my / v, mz / v)


def _disc_with_bores(z0: float, z1: float):
    """The full disc with both bores, as a prism from z0 to z1: the disc less the pin bore at (0, PIN_Y)
    less the main bore at the origin (neither bore meets the other: RM + RP < PIN_Y)."""
    a_d, _, _ = circle_area(R)
    a_p, _, my_p = circle_area(RP, 0.0, PIN_Y)
    a_m, _, _ = circle_area(RM)
    return prism(a_d - a_p - a_m, 0.0, -my_p, z0, z1)


# ================================================================ the webs

def _cylinder(r: float, z0: float, z1: float, cx: float = 0.0, cy: float = 0.0):
    return cq.Solid.makeCylinder(r, z1 - z0, cq.Vector(cx, cy, z0))


def _one_solid(shape) -> cq.Solid:
    """The single valid solid of a boolean result (coplanar faces merged by clean())."""
    solids = shape.Solids()
    if len(solids) != 1:
        raise RuntimeError(f"expected one solid, the kernel gave {len(solids)}")
    solid = cq.Solid(solids[0].wrapped).clean()
    if not solid.isValid():
        raise RuntimeError("the kernel gave an invalid solid")
    return solid


def _bores(z0: float, z1: float, pin_y: float = PIN_Y) -> list:
    """The two bores as cutting tools through z0..z1 (each OVER beyond)."""
    return [_cylinder(RP, z0 - OVER, z1 + OVER, 0.0, pin_y), _cylinder(RM, z0 - OVER, z1 + OVER)]


PRISM_T = 18.0


def prism_web(pin_y: float = PIN_Y) -> cq.Solid:
    """Plain full-circle disc, diameter 130 mm, 18 mm thick (z 0..18), with the 20 mm pin bore at
    (0, 30) and the 22 mm main bore at the origin, both through.  The same solid as geomgen's
    parametric web diameter = 130, thickness = 18, pin_bore = 20, main_bore = 22 at stroke 60.
    Faces: 2 planes, 3 cylinders.  (`pin_y` moves the pin bore, for a bad model.)"""
    return _one_solid(_cylinder(R, 0.0, PRISM_T).cut(*_bores(0.0, PRISM_T, pin_y)))


BOSS_T, BOSS_TOP, BOSS_D = 14.0, 20.0, 50.0


def boss_web() -> cq.Solid:
    """A 14 mm disc (z 0..14), 130 mm across, with a raised boss 50 mm across round the main bore on the
    outer face, up to z = 20.  The main bore (22 mm) runs through disc and boss (z 0..20); the pin bore
    (20 mm at (0, 30)) runs through too and, since the boss reaches 25 mm from the axis and the pin bore
    comes within 20 mm, it also cuts a lens out of the boss (the boss's side is then a cylinder broken by
    the pin bore).  Faces: planes (inner face, the disc's outer face ring, the boss top), cylinders (rim,
    boss side, both bores)."""
    body = _cylinder(R, 0.0, BOSS_T).fuse(_cylinder(BOSS_D / 2, BOSS_T - OVER, BOSS_TOP))
    return _one_solid(body.cut(*_bores(0.0, BOSS_TOP)))


CHAMFER_T, CHAMFER_OUT, CHAMFER_IN = 18.0, 3.0, 1.5


def chamfered_web() -> cq.Solid:
    """An 18 mm disc (z 0..18), 130 mm across, both bores through, with a 3 mm x 45 deg chamfer on the
    rim edge of the outer face (z = 18) and a 1.5 mm x 45 deg chamfer on the rim edge of the inner face
    (z = 0).  Faces: 2 planes, 3 cylinders (rim z 1.5..15, both bores), 2 cones (the chamfers)."""
    disc = (cq.Workplane("XY").circle(R).extrude(CHAMFER_T)
            .faces(">Z").edges().chamfer(CHAMFER_OUT)
            .faces("<Z").edges().chamfer(CHAMFER_IN)).val()
    return _one_solid(disc.cut(*_bores(0.0, CHAMFER_T)))


RECESS_T, RECESS_D, RECESS_DEPTH = 18.0, 56.0, 2.5


def recessed_web() -> cq.Solid:
    """An 18 mm disc (z 0..18), 130 mm across, both bores through, with a rod-clearance recess in the
    inner face: a circle 56 mm across centred on the pin (0, 30), 2.5 mm deep (z 0..2.5), round the pin
    bore.  The recess reaches within 2 mm of the axis, so it also breaks into the 22 mm main bore (a lens
    of the main bore's circle, z 0..2.5, is open to the recess).  Faces: planes (inner face, recess floor,
    outer face), cylinders (rim, recess wall, both bores)."""
    recess = _cylinder(RECESS_D / 2, -OVER, RECESS_DEPTH, 0.0, PIN_Y)
    return _one_solid(_cylinder(R, 0.0, RECESS_T).cut(recess, *_bores(0.0, RECESS_T)))


LOBE_T, LOBE_THIN, LOBE_Y = 18.0, 12.0, -15.0


def lobe_web() -> cq.Solid:
    """A disc 130 mm across whose hub is 18 mm thick (z 0..18) and whose counterweight lobe, the part of
    the disc with y < -15, is 12 mm thick: the outer face steps down to z = 12 there, with a plane step
    face at y = -15.  Both bores through (neither reaches y = -15).  Faces: planes (inner face, hub outer
    face, lobe outer face, step), cylinders (rim, both bores)."""
    step = cq.Solid.makeBox(DIAMETER + 2 * OVER, R + OVER + LOBE_Y, LOBE_T - LOBE_THIN + OVER,
                            cq.Vector(-R - OVER, -R - OVER, LOBE_THIN))
    return _one_solid(_cylinder(R, 0.0, LOBE_T).cut(step, *_bores(0.0, LOBE_T)))


# the shipped sample: a show web of the same invented engine
SAMPLE_T, SAMPLE_BOSS_D, SAMPLE_BOSS_TOP = 16.0, 34.0, 21.0
SAMPLE_CHAMFER_OUT, SAMPLE_CHAMFER_IN = 2.5, 1.0
SAMPLE_RECESS_D, SAMPLE_RECESS_DEPTH = 34.0, 2.0


def sample_web() -> cq.Solid:
    """The shipped sample (samples/model-web.step), an invented show web: a 16 mm disc (z 0..16), 130 mm
    across, with a boss 34 mm across round the main bore on the outer face up to z = 21, a 2.5 mm x 45 deg
    chamfer on the outer face's rim edge and 1 mm x 45 deg on the inner face's, and a rod-clearance recess
    34 mm across centred on the pin, 2 mm deep (z 0..2), in the inner face.  Pin bore 20 mm at (0, 30),
    main bore 22 mm, both through (z 0..16 and 0..21).  Nothing overlaps: the boss stays 3 mm clear of the
    pin bore, the recess 2 mm clear of the main bore.  Faces: planes, cylinders, 2 cones (the chamfers)."""
    disc = (cq.Workplane("XY").circle(R).extrude(SAMPLE_T)
            .faces(">Z").edges().chamfer(SAMPLE_CHAMFER_OUT)
            .faces("<Z").edges().chamfer(SAMPLE_CHAMFER_IN)).val()
    body = disc.fuse(_cylinder(SAMPLE_BOSS_D / 2, SAMPLE_T - OVER, SAMPLE_BOSS_TOP))
    recess = _cylinder(SAMPLE_RECESS_D / 2, -OVER, SAMPLE_RECESS_DEPTH, 0.0, PIN_Y)
    return _one_solid(body.cut(recess, *_bores(0.0, SAMPLE_BOSS_TOP)))


WEBS = {"prism": prism_web, "boss": boss_web, "chamfered": chamfered_web, "recessed": recessed_web,
        "lobe": lobe_web, "sample": sample_web}


def expected(name: str) -> tuple[float, tuple[float, float, float]]:
    """(volume mm^3, centroid (x, y, z) mm) of web `name` (a key of WEBS), by hand.  x is 0 for every web:
    each is symmetric about the plane x = 0."""
    if name == "prism":
        return total(_disc_with_bores(0.0, PRISM_T))
    if name == "boss":
        # the boss ring z 14..20: a circle of 25 less the main bore less its lens with the pin bore
        a_b, _, _ = circle_area(BOSS_D / 2)
        a_m, _, _ = circle_area(RM)
        a_l, my_l = lens(BOSS_D / 2, RP, PIN_Y)
        return total(_disc_with_bores(0.0, BOSS_T), prism(a_b - a_m - a_l, 0.0, -my_l, BOSS_T, BOSS_TOP))
    if name == "chamfered":
        return total(_disc_with_bores(0.0, CHAMFER_T),
                     minus=(chamfer_ring(CHAMFER_OUT, CHAMFER_T, +1), chamfer_ring(CHAMFER_IN, 0.0, -1)))
    if name == "recessed":
        # the recess z 0..2.5: its circle less the pin bore (inside it) less its lens with the main bore
        a_r, _, my_r = circle_area(RECESS_D / 2, 0.0, PIN_Y)
        a_p, _, my_p = circle_area(RP, 0.0, PIN_Y)
        a_l, my_l = lens(RM, RECESS_D / 2, PIN_Y)
        return total(_disc_with_bores(0.0, RECESS_T),
                     minus=(prism(a_r - a_p - a_l, 0.0, my_r - my_p - my_l, 0.0, RECESS_DEPTH),))
    if name == "lobe":
        # the lobe's missing top, z 12..18: the segment of the rim circle beyond y = -15
        a_s, g = segment(R, -LOBE_Y)
        return total(_disc_with_bores(0.0, LOBE_T), minus=(prism(a_s, 0.0, -a_s * g, LOBE_THIN, LOBE_T),))
    if name == "sample":
        a_b, _, _ = circle_area(SAMPLE_BOSS_D / 2)
        a_m, _, _ = circle_area(RM)
        a_r, _, my_r = circle_area(SAMPLE_RECESS_D / 2, 0.0, PIN_Y)
        a_p, _, my_p = circle_area(RP, 0.0, PIN_Y)
        return total(_disc_with_bores(0.0, SAMPLE_T),
                     prism(a_b - a_m, 0.0, 0.0, SAMPLE_T, SAMPLE_BOSS_TOP),
                     minus=(chamfer_ring(SAMPLE_CHAMFER_OUT, SAMPLE_T, +1),
                            chamfer_ring(SAMPLE_CHAMFER_IN, 0.0, -1),
                            prism(a_r - a_p, 0.0, my_r - my_p, 0.0, SAMPLE_RECESS_DEPTH)))
    raise KeyError(f"no web named {name!r}; the webs are {', '.join(WEBS)}")


# ================================================================ STEP files

#: the header's time stamp, fixed so that writing the same web again gives the same bytes
TIME_STAMP = "2000-01-01T00:00:00"


def write_step(shape, path, *, name: str, unit: str = "MM") -> Path:
    """Write one shape (a cadquery Shape or a TopoDS_Shape) to a STEP file, AP214, in `unit`
    (OpenCascade's write.step.unit: "MM", "CM", "M", "INCH", "FT", ...; the geometry is scaled to it and
    the file declares it).  The product is named `name`; the header names the file and this script."""
    from OCP.APIHeaderSection import APIHeaderSection_MakeHeader
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.Interface import Interface_Static
    from OCP.StepBasic import StepBasic_Product
    from OCP.STEPControl import STEPControl_AsIs, STEPControl_Writer
    from OCP.TCollection import TCollection_HAsciiString

    path = Path(path)
    raw = shape.wrapped if hasattr(shape, "wrapped") else shape
    writer = STEPControl_Writer()       # registers the write.step.* settings on first use
    # schema and unit are process-wide settings: set them for this file, put them back after
    old = Interface_Static.CVal_s("write.step.schema"), Interface_Static.CVal_s("write.step.unit")
    try:
        Interface_Static.SetCVal_s("write.step.schema", "AP214IS")
        Interface_Static.SetCVal_s("write.step.unit", unit)
        if writer.Transfer(raw, STEPControl_AsIs) != IFSelect_RetDone:
            raise RuntimeError(f"{path.name}: the STEP writer refused the shape")
    finally:
        Interface_Static.SetCVal_s("write.step.schema", old[0])
        Interface_Static.SetCVal_s("write.step.unit", old[1])
    model = writer.Model()
    for i in range(1, model.NbEntities() + 1):
        entity = model.Value(i)
        if isinstance(entity, StepBasic_Product):
            entity.SetId(TCollection_HAsciiString(name))
            entity.SetName(TCollection_HAsciiString(name))
    header = APIHeaderSection_MakeHeader(model)
    me = "geomgen samples/make_model_webs.py (cadquery, OpenCascade)"
    header.SetName(TCollection_HAsciiString(path.name))
    header.SetTimeStamp(TCollection_HAsciiString(TIME_STAMP))
    header.SetAuthorValue(1, TCollection_HAsciiString(""))
    header.SetOrganizationValue(1, TCollection_HAsciiString(""))
    header.SetOriginatingSystem(TCollection_HAsciiString(me))
    header.SetPreprocessorVersion(TCollection_HAsciiString(me))
    header.SetAuthorisation(TCollection_HAsciiString(""))
    header.SetDescriptionValue(1, TCollection_HAsciiString(f"invented flywheel web: {name}"))
    if writer.Write(str(path)) != IFSelect_RetDone:
        raise RuntimeError(f"{path.name}: the STEP writer failed")
    return path


# ---------------------------------------------------------------- reading the length unit from the text
# A STEP file (ISO 10303-21) gives its units in the geometric representation context of each shape, a
# complex entity such as
#   #281 = ( GEOMETRIC_REPRESENTATION_CONTEXT(3) GLOBAL_UNCERTAINTY_ASSIGNED_CONTEXT((#285))
#            GLOBAL_UNIT_ASSIGNED_CONTEXT((#282,#283,#284)) REPRESENTATION_CONTEXT('Context #1','...') );
#   #282 = ( LENGTH_UNIT() NAMED_UNIT(*) SI_UNIT(.MILLI.,.METRE.) );          <- millimetres
#   #283 = ( NAMED_UNIT(*) PLANE_ANGLE_UNIT() SI_UNIT($,.RADIAN.) );
#   #284 = ( NAMED_UNIT(*) SI_UNIT($,.STERADIAN.) SOLID_ANGLE_UNIT() );
#   #285 = UNCERTAINTY_MEASURE_WITH_UNIT(LENGTH_MEASURE(1.E-07),#282,'distance_accuracy_value',...);
# The unit in GLOBAL_UNIT_ASSIGNED_CONTEXT that is a LENGTH_UNIT is the file's length unit: an SI_UNIT
# (prefix, .METRE.) with prefix $ (none), .CENTI., .MILLI., ...; or a CONVERSION_BASED_UNIT('INCH', #m)
# whose #m = LENGTH_MEASURE_WITH_UNIT(25.4, #mm) gives its size in another length unit (OpenCascade
# writes 'INCH' and 'FOOT'; other writers spell the names differently, so the size decides).
# Attribute order inside the complex entity varies between writers: search, do not rely on position.

_SI_PREFIX_MM = {"$": 1000.0, ".KILO.": 1e6, ".DECI.": 100.0, ".CENTI.": 10.0, ".MILLI.": 1.0,
                 ".MICRO.": 1e-3}
#: mm per unit -> the unit's short name
_UNIT_NAMES = {1.0: "mm", 10.0: "cm", 1000.0: "m", 25.4: "in", 304.8: "ft", 1e-3: "um", 100.0: "dm",
               1e6: "km"}


def step_entities(text: str) -> dict[int, str]:
    """{instance number: the entity's text after '=', as written} of a STEP file's DATA section (strings
    kept whole, so a ';' or a '#' inside a quoted name does no harm; comments /* */ dropped)."""
    start = text.find("DATA;")
    data = text[start + len("DATA;"):] if start >= 0 else text
    out, buf, i, n = {}, [], 0, len(data)
    while i < n:
        ch = data[i]
        if ch == "'":                                   # a string: up to the closing quote ('' is a quote)
            j = i + 1
            while j < n and not (data[j] == "'" and data[j + 1:j + 2] != "'"):
                j += 2 if data[j] == "'" else 1
            buf.append(data[i:j + 1])
            i = j + 1
        elif data.startswith("/*", i):
            end = data.find("*/", i + 2)
            i = n if end < 0 else end + 2
        elif ch == ";":
            m = re.match(r"\s*#(\d+)\s*=\s*(.*?)\s*\Z", "".join(buf), re.S)
            if m:
                out[int(m.group(1))] = m.group(2)
            buf = []
            i += 1
        else:
            buf.append(ch)
            i += 1
    return out


def _refs(body: str) -> set[int]:
    return {int(r) for r in re.findall(r"#(\d+)", body)}


def _unit_mm(entities: dict[int, str], ref: int, depth: int = 0) -> float | None:
    """mm per unit of the unit entity #ref, or None when it is not a length unit."""
    upper = entities.get(ref, "").upper()
    if "LENGTH_UNIT" not in upper or depth > 4:
        return None
    si = re.search(r"SI_UNIT\s*\(\s*(\$|\.[A-Z]+\.)\s*,\s*\.METRE\.\s*\)", upper)
    if si:
        if si.group(1) not in _SI_PREFIX_MM:
            raise ValueError(f"length unit #{ref}: SI prefix {si.group(1)} not known here")
        return _SI_PREFIX_MM[si.group(1)]
    conv = re.search(r"CONVERSION_BASED_UNIT\s*\(\s*'[^']*'\s*,\s*#(\d+)\s*\)", upper)
    if conv:
        measure = entities.get(int(conv.group(1)), "").upper()
        m = re.search(r"LENGTH_MEASURE_WITH_UNIT\s*\(\s*(?:LENGTH_MEASURE\s*\(\s*)?([-+0-9.E]+)\s*\)?\s*,"
                      r"\s*#(\d+)\s*\)", measure)
        if m:
            base = _unit_mm(entities, int(m.group(2)), depth + 1)
            if base is not None:
                return float(m.group(1)) * base
    raise ValueError(f"length unit #{ref} not understood: {entities[ref]}")


def declared_length_unit(path) -> str | None:
    """The length unit a STEP file declares ("mm", "cm", "m", "in", "ft"; also "um", "dm", "km"), read from
    its text: the LENGTH_UNIT among the units of each GLOBAL_UNIT_ASSIGNED_CONTEXT.  None when no context
    declares one.  ValueError when the file's shapes declare different length units, or a unit whose size
    is none of those."""
    entities = step_entities(Path(path).read_text(encoding="latin-1"))
    found = set()
    for body in entities.values():
        m = re.search(r"GLOBAL_UNIT_ASSIGNED_CONTEXT\s*\(\s*\(([^)]*)\)\s*\)", body.upper())
        for ref in sorted(_refs(m.group(1))) if m else ():
            mm = _unit_mm(entities, ref)
            if mm is None:
                continue
            key = min(_UNIT_NAMES, key=lambda k: abs(k - mm) / k)
            if abs(key - mm) > 1e-9 * key:
                raise ValueError(f"{Path(path).name}: a length unit of {mm:g} mm, none of those known here")
            found.add(_UNIT_NAMES[key])
    if len(found) > 1:
        raise ValueError(f"{Path(path).name}: its shapes declare different length units: {sorted(found)}")
    return found.pop() if found else None


_GLOBAL_CONTEXTS = r"GLOBAL_(?:UNIT|UNCERTAINTY)_ASSIGNED_CONTEXT\s*\(\s*\(([^)]*)\)\s*\)\s*"


def strip_units(text: str) -> str:
    """The STEP text with its units taken out: every GLOBAL_UNIT_ASSIGNED_CONTEXT and
    GLOBAL_UNCERTAINTY_ASSIGNED_CONTEXT removed from the representation contexts, and the unit and
    uncertainty entities they named, with what those refer to (a conversion unit's measure, dimensional
    exponents), deleted where nothing else still uses them.  What is left declares no unit at all; see
    write_bad_models for what OpenCascade's reader makes of it."""
    entities = step_entities(text)
    bodies = {i: re.sub(_GLOBAL_CONTEXTS, "", b) for i, b in entities.items()}

    def closure(ids: set[int]) -> set[int]:
        out, frontier = set(ids), set(ids)
        while frontier:
            frontier = {r for i in frontier for r in _refs(entities.get(i, ""))} - out
            out |= frontier
        return out

    named = {r for b in entities.values() for m in re.finditer(_GLOBAL_CONTEXTS, b) for r in _refs(m.group(1))}
    doomed = closure(named)
    while True:                     # put back whatever a kept entity still refers to
        needed = {r for i, b in bodies.items() if i not in doomed for r in _refs(b)} & doomed
        if not needed:
            break
        doomed -= closure(needed)
    head = text[:text.find("DATA;") + len("DATA;")]
    tail = text[text.rfind("ENDSEC;"):]
    return head + "\n" + "".join(f"#{i} = {bodies[i]};\n" for i in sorted(bodies) if i not in doomed) + tail


# ================================================================ bad models

def write_bad_models(outdir) -> list[Path]:
    """Write the STEP files a model-web loader must refuse (or, with the key named, fix) into `outdir`:

    open-shell.step      the prism web's faces less its outer face (z = 18), written as a shell: no solid,
                         three free boundaries (the rim circle and both bore circles at z = 18)
    two-solids.step      two prism webs in one file, the second turned 180 deg about Y with its inner face
                         20 mm below the first's (a whole crank exported by mistake)
    wrong-frame.step     the prism web moved down 9 mm, so z runs -9..9 (inner face not at z = 0)
    pin-off-stroke.step  a prism web whose pin bore is centred at (0, 35): 5 mm further out than stroke/2
    pin-on-x.step        the prism web turned -90 deg about Z (clockwise seen from +Z), so its pin bore is
                         centred at (30, 0) on +X; model_rotate_deg = 90 (counter-clockwise positive seen
                         from +Z, turning +X onto +Y) brings it back into the frame
    no-length-unit.step  the prism web in mm with every unit taken out of the file (`strip_units`): no
                         GLOBAL_UNIT_ASSIGNED_CONTEXT, no LENGTH_UNIT.  OpenCascade's STEPControl_Reader
                         still reads it (status done, one solid) and, finding no length unit, takes its
                         numbers as millimetres, its own working unit: here right by luck; the same file
                         written in inches would load 25.4 times too small, silently.  Its FileUnits
                         lists no length unit.  A loader should ask for model_units.
    """
    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    web = prism_web()
    paths = []

    outer = [f for f in web.Faces() if f.geomType() == "PLANE" and f.Center().z > PRISM_T / 2]
    shell = cq.Shell.makeShell([f for f in web.Faces() if not f.isSame(outer[0])])
    paths.append(write_step(shell, outdir / "open-shell.step", name="open-shell"))

    turned = web.rotate((0, 0, 0), (0, 1, 0), 180).translate((0, 0, -20.0))   # z -38..-20
    paths.append(write_step(cq.Compound.makeCompound([web, turned]), outdir / "two-solids.step",
                            name="two-solids"))
    paths.append(write_step(web.translate((0, 0, -PRISM_T / 2)), outdir / "wrong-frame.step",
                            name="wrong-frame"))
    paths.append(write_step(prism_web(pin_y=PIN_Y + 5.0), outdir / "pin-off-stroke.step", name="pin-off-stroke"))
    paths.append(write_step(web.rotate((0, 0, 0), (0, 0, 1), -90), outdir / "pin-on-x.step", name="pin-on-x"))

    path = outdir / "no-length-unit.step"
    write_step(web, path, name="no-length-unit")
    path.write_text(strip_units(path.read_text(encoding="latin-1")), encoding="latin-1")
    paths.append(path)
    return paths


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("outdir", nargs="?", help="write every web here (default: samples/model-web.step only)")
    parser.add_argument("--bad", action="store_true", help="also write the bad models into OUTDIR/bad")
    args = parser.parse_args(argv)
    if args.outdir is None:
        if args.bad:
            parser.error("--bad needs OUTDIR")
        path = write_step(sample_web(), HERE / "model-web.step", name="model-web")
        print(f"wrote {path} ({path.stat().st_size} bytes)")
        return 0
    out = Path(args.outdir)
    out.mkdir(parents=True, exist_ok=True)
    for name, make in WEBS.items():
        path = write_step(make(), out / f"{name}.step", name=name)
        v, c = expected(name)
        print(f"wrote {path}: volume {v:.6f} mm^3, centroid ({c[0]:.6f}, {c[1]:.6f}, {c[2]:.6f}) mm")
    if args.bad:
        for path in write_bad_models(out / "bad"):
            print(f"wrote {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
