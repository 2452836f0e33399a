"""A web given as the designer's own 3D model: a STEP solid read, checked against the job, and measured.

The model is in the web frame (crank axis Z, crankpin bore a cylinder parallel to Z at (0, stroke/2), the
inner face from z = 0, the outer face towards +Z, seen from +Z), in the STEP's own length unit
(`model_units` when it declares none), turned by `model_rotate_deg` about Z first.

What the rest of geomgen sees is a `ModelSection`: a `WebSection` whose outline is the model's silhouette
(its largest planar face outline, exact lines and arcs), whose `thickness` is the model's height, and whose
mass properties and feature changes are exact B-rep figures (OpenCascade GProp of the body and of the
boolean common of each tool with the body).  Where a feature enters the model is a `Column`: a stretch of
the web where both faces are flat, the entry face at `z_top` (outer) or `z_bot` (inner).  A feature's
depth is measured from its column's face; on a prism every column is (0, thickness), as before.

The CAD kernel is imported inside the functions: a job with a model loads it, a job without does not.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import BadInput
from .loops import Arc, Line, Loop
from .massprops import MassProps
from .section import WebSection

#: a length unit of a model with none declared, mm per unit
MODEL_UNITS_MM = {"mm": 1.0, "cm": 10.0, "m": 1000.0, "in": 25.4}
#: the lowest point of a model must be this close to z = 0, mm
FRAME_TOL_MM = 0.01
#: a bore's axis must be this close to where the job puts it, mm (and its diameter this close to the job's)
BORE_TOL_MM = 1e-3
#: chord of the shapely polygons used to compare faces, mm
FACE_CHORD_MM = 0.01
#: a column smaller than this in area is no place for a feature, mm^2
MIN_COLUMN_AREA_MM2 = 4.0
#: relative error asked of GProp for the booleans (as verify.GPROP_EPS)
GPROP_EPS = 1e-11

_SI_PREFIX_MM = {"": 1000.0, "$": 1000.0, ".MILLI.": 1.0, ".CENTI.": 10.0, ".DECI.": 100.0, ".KILO.": 1e6,
                 ".MICRO.": 1e-3}
_CONVERSION_MM = {"INCH": 25.4, "FOOT": 304.8, "MILLIMETRE": 1.0, "MILLIMETER": 1.0}


def declared_length_unit(text: str) -> float | None:
    """mm per unit of the STEP's declared length unit, None if it declares none.

    ISO 10303-41: a length unit is a LENGTH_UNIT that is also an SI_UNIT (prefix, METRE) or a
    CONVERSION_BASED_UNIT (a name such as 'INCH' and its factor)."""
    flat = re.sub(r"\s+", "", text.upper())
    for m in re.finditer(r"\(([^;]*?LENGTH_UNIT\(\)[^;]*?)\)\s*;", flat):
        body = m.group(1)
        si = re.search(r"SI_UNIT\((\.[A-Z]+\.|\$),\.METRE\.\)", body)
        if si:
            return _SI_PREFIX_MM.get(si.group(1))
        conv = re.search(r"CONVERSION_BASED_UNIT\('([A-Z]+)'", body)
        if conv and conv.group(1) in _CONVERSION_MM:
            return _CONVERSION_MM[conv.group(1)]
    return None


@dataclass(frozen=True)
class Column:
    """A stretch of the web where both faces are flat: a feature entering here meets material from z_bot
    to z_top.  outer / holes : its region, exact loops (ccw);  exact : False when the region was found as a
    polygon (two faces that overlap in part)."""

    outer: Loop
    holes: tuple
    z_bot: float
    z_top: float
    exact: bool = True

    @property
    def thickness(self) -> float:
        return self.z_top - self.z_bot

    def polygon(self, chord: float = FACE_CHORD_MM):
        import shapely

        return shapely.Polygon(self.outer.oriented(True).points(chord),
                               [h.oriented(False).points(chord) for h in self.holes])


@dataclass(frozen=True, eq=False)
class Model:
    """A model read and checked: its solid in the web frame (mm) and what was found on it."""

    path: Path
    shape: object                 # TopoDS_Solid, web frame, mm
    mm_per_unit: float
    rotate_deg: float
    z_top: float                  # the model's height above z = 0, mm
    base_volume: MassProps        # volume moments at density 1 g/cm^3 (mass figures are g at 1 g/cm^3)
    silhouette: Loop
    columns: tuple
    bores: tuple                  # Loops of the bores through the model (pin bore first)
    faces: int = 0
    _cache: dict = field(default_factory=dict, repr=False)

    def __getstate__(self):
        # the kernel's solid does not pickle (a copy sent to the helper process needs only the figures)
        return {k: v for k, v in self.__dict__.items() if k not in ("shape", "_cache")}

    def __setstate__(self, state):
        self.__dict__.update(state, shape=None, _cache={})

    def column_at(self, x: float, y: float, radius: float = 0.0) -> Column | None:
        """The column whose region holds the disc of `radius` at (x, y), else the one holding its centre."""
        import shapely

        pt = shapely.Point(x, y)
        disc = pt.buffer(radius, quad_segs=32) if radius > 0 else pt
        hits = [c for c in self.columns if _poly(c).covers(disc)]
        if not hits:
            hits = [c for c in self.columns if _poly(c).covers(pt)]
        return hits[0] if hits else None


def _poly(column: Column):
    key = id(column)
    got = _POLYS.get(key)
    if got is None or got[0] is not column:
        got = (column, column.polygon())
        _POLYS[key] = got
    return got[1]


_POLYS: dict = {}
_MODELS: dict = {}


# ------------------------------------------------------------------ reading
def load_model(path: Path, *, units: str | None, rotate_deg: float, stroke: float, pin_bore: float,
               main_bore: float, where: str) -> Model:
    """The model of a job web, read once per file state and options."""
    path = Path(path)
    try:
        stamp = path.stat().st_mtime_ns
    except OSError:
        raise BadInput(f"{where}.model: file not found: {path}") from None
    key = (str(path), stamp, units, rotate_deg, stroke, pin_bore, main_bore)
    if key not in _MODELS:
        _MODELS[key] = _read(path, units=units, rotate_deg=rotate_deg, stroke=stroke, pin_bore=pin_bore,
                             main_bore=main_bore, where=where)
    return _MODELS[key]


def _read(path: Path, *, units, rotate_deg, stroke, pin_bore, main_bore, where) -> Model:
    from OCP.BRepCheck import BRepCheck_Analyzer
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.ShapeAnalysis import ShapeAnalysis_Shell
    from OCP.STEPControl import STEPControl_Reader
    from OCP.TopAbs import TopAbs_SHELL, TopAbs_SOLID
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    from . import occ  # noqa: F401  (the kernel, its messages kept off standard output)

    key = f"{where}.model"
    try:
        text = path.read_text(encoding="latin-1")
    except OSError as exc:
        raise BadInput(f"{key}: cannot read {path}: {exc.strerror}") from None
    if not text.lstrip().startswith("ISO-10303-21"):
        raise BadInput(f"{key}: {path.name} is not a STEP file (ISO 10303-21); export the web as STEP")
    declared = declared_length_unit(text)
    if declared is None and units is None:
        raise BadInput(f"{key}: {path.name} declares no length unit; give model_units = "
                       f"{' | '.join(repr(u) for u in MODEL_UNITS_MM)}")
    if declared is not None and units is not None and abs(MODEL_UNITS_MM[units] - declared) > 1e-12:
        raise BadInput(f"{key}_units: {path.name} declares its own length unit ({declared:g} mm); "
                       f"model_units is only for a file that declares none")
    reader = STEPControl_Reader()
    if reader.ReadFile(str(path)) != IFSelect_RetDone:
        raise BadInput(f"{key}: {path.name} is not a readable STEP file")
    reader.TransferRoots()
    shape = reader.OneShape()
    solids = []
    exp = TopExp_Explorer(shape, TopAbs_SOLID)
    while exp.More():
        solids.append(TopoDS.Solid_s(exp.Current()))
        exp.Next()
    if len(solids) != 1:
        if not solids:
            found = "only an open or loose shell" if TopExp_Explorer(shape, TopAbs_SHELL).More() else "no shell"
            raise BadInput(f"{key}: {path.name} holds no solid ({found}); a web model must be one closed solid")
        raise BadInput(f"{key}: {path.name} holds {len(solids)} solids; a web model must be one closed solid "
                       "(export the web alone)")
    solid = solids[0]
    check = ShapeAnalysis_Shell()
    check.LoadShells(solid)
    if check.CheckOrientedShells(solid, True) and check.HasFreeEdges():
        raise BadInput(f"{key}: {path.name}'s solid is not closed (its shell has free edges); "
                       "a web model must be one closed solid")
    if not BRepCheck_Analyzer(solid).IsValid():
        raise BadInput(f"{key}: {path.name}'s solid is not a valid B-rep (OpenCascade's check fails); "
                       "repair it in the CAD program and export again")
    # the reader gives millimetres for a declared unit; a unitless file is read as millimetres too
    scale = 1.0 if declared is not None else MODEL_UNITS_MM[units]
    solid = _transformed(solid, scale=scale, rotate_deg=rotate_deg)
    box = _box(solid)
    if abs(box[2]) > FRAME_TOL_MM:
        raise BadInput(f"{key}: the model's lowest point is at z = {box[2]:.4g} mm; in the web frame the inner "
                       f"face starts at z = 0 and the outer face is towards +Z (crank axis Z)")
    if not (box[0] < 0 < box[3] and box[1] < 0 < box[4]):
        raise BadInput(f"{key}: the model spans x {box[0]:.4g} .. {box[3]:.4g}, y {box[1]:.4g} .. {box[4]:.4g} mm "
                       "and does not go round the crank axis (x = y = 0); the web frame puts the crank axis "
                       "on Z")
    cylinders = _z_cylinders(solid)
    pin = _find_bore(cylinders, (0.0, 0.5 * stroke), pin_bore, what="crankpin bore", key="pin_bore",
                     where=key, stroke=stroke)
    bores = [pin]
    if main_bore > 0:
        bores.append(_find_bore(cylinders, (0.0, 0.0), main_bore, what="main bore", key="main_bore",
                                where=key, stroke=stroke))
    base = _volume(solid)
    columns, silhouette = _columns(solid, where=key)
    z_top = box[5]
    return Model(path=path, shape=solid, mm_per_unit=declared or MODEL_UNITS_MM[units], rotate_deg=rotate_deg,
                 z_top=z_top, base_volume=base, silhouette=silhouette, columns=tuple(columns),
                 bores=tuple(_circle_loop(*b) for b in bores))


def _transformed(solid, *, scale: float, rotate_deg: float):
    from OCP.BRepBuilderAPI import BRepBuilderAPI_Transform
    from OCP.gp import gp_Ax1, gp_Dir, gp_Pnt, gp_Trsf
    from OCP.TopoDS import TopoDS

    if scale != 1.0:
        t = gp_Trsf()
        t.SetScale(gp_Pnt(0, 0, 0), scale)
        solid = TopoDS.Solid_s(BRepBuilderAPI_Transform(solid, t, True).Shape())
    if rotate_deg:
        t = gp_Trsf()
        t.SetRotation(gp_Ax1(gp_Pnt(0, 0, 0), gp_Dir(0, 0, 1)), math.radians(rotate_deg))
        solid = TopoDS.Solid_s(BRepBuilderAPI_Transform(solid, t, True).Shape())
    return solid


def _box(shape) -> tuple:
    from OCP.Bnd import Bnd_Box
    from OCP.BRepBndLib import BRepBndLib

    box = Bnd_Box()
    BRepBndLib.AddOptimal_s(shape, box, False, False)
    return box.Get()


def _faces(shape):
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    exp = TopExp_Explorer(shape, TopAbs_FACE)
    while exp.More():
        yield TopoDS.Face_s(exp.Current())
        exp.Next()


def _z_cylinders(solid) -> list[tuple[float, float, float]]:
    """(x, y, radius) of every cylindrical face whose axis is parallel to Z, mm."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_Cylinder

    out = []
    for face in _faces(solid):
        s = BRepAdaptor_Surface(face)
        if s.GetType() != GeomAbs_Cylinder:
            continue
        cyl = s.Cylinder()
        ax = cyl.Axis()
        if abs(abs(ax.Direction().Z()) - 1.0) > 1e-9:
            continue
        loc = ax.Location()
        item = (loc.X(), loc.Y(), cyl.Radius())
        if not any(max(abs(a - b) for a, b in zip(item, o, strict=True)) < 1e-9 for o in out):
            out.append(item)
    return out


def _find_bore(cylinders, centre, diameter, *, what, key, where, stroke) -> tuple:
    cx, cy = centre
    near = [c for c in cylinders if math.hypot(c[0] - cx, c[1] - cy) <= BORE_TOL_MM]
    match = [c for c in near if abs(2 * c[2] - diameter) <= BORE_TOL_MM]
    if match:
        return (cx, cy, 0.5 * diameter)
    if near:
        sizes = ", ".join(f"{2 * c[2]:.4g}" for c in near)
        raise BadInput(f"{where}: the model's bore at ({cx:g}, {cy:g}) mm is {sizes} mm across; the job's {key} "
                       f"is {diameter:g} mm")
    same = [c for c in cylinders if abs(2 * c[2] - diameter) <= BORE_TOL_MM]
    found = "; ".join(f"{2 * c[2]:.4g} mm at ({c[0]:.4g}, {c[1]:.4g})" for c in (same or cylinders)[:4])
    hint = ""
    if same and centre != (0.0, 0.0):
        x, y = same[0][:2]
        if abs(math.hypot(x, y) - 0.5 * stroke) <= BORE_TOL_MM:
            turn = math.degrees(math.atan2(-x, y))  # how far the pin sits from +Y, counter-clockwise
            hint = f"; the pin sits {turn:.4g} deg from +Y: set model_rotate_deg = {-turn:.4g}"
        else:
            hint = f"; it is {math.hypot(x, y):.4g} mm from the axis, the job's stroke/2 is {0.5 * stroke:g} mm"
    raise BadInput(f"{where}: no {what} of {diameter:g} mm parallel to Z at ({cx:g}, {cy:g}) mm; the model's "
                   f"bores parallel to Z: {found or 'none'}{hint}")


def _circle_loop(x, y, r) -> Loop:
    return Loop((Arc((x, y), r, 0.0, 360.0),))


# ------------------------------------------------------------------ faces to loops
def _wire_loop(wire, face) -> Loop:
    """A face's wire as an exact loop: lines and circular arcs kept, other curves as chords."""
    from OCP.BRep import BRep_Tool
    from OCP.BRepAdaptor import BRepAdaptor_Curve
    from OCP.BRepTools import BRepTools_WireExplorer
    from OCP.GCPnts import GCPnts_QuasiUniformDeflection
    from OCP.GeomAbs import GeomAbs_Circle, GeomAbs_Line
    from OCP.TopAbs import TopAbs_REVERSED

    segs = []
    exp = BRepTools_WireExplorer(wire, face)
    while exp.More():
        edge = exp.Current()
        exp.Next()
        if BRep_Tool.Degenerated_s(edge):
            continue
        c = BRepAdaptor_Curve(edge)
        t0, t1 = c.FirstParameter(), c.LastParameter()
        rev = edge.Orientation() == TopAbs_REVERSED
        p0, p1 = c.Value(t0), c.Value(t1)
        a, b = (p1, p0) if rev else (p0, p1)
        kind = c.GetType()
        if kind == GeomAbs_Line:
            segs.append(Line((a.X(), a.Y()), (b.X(), b.Y())))
        elif kind == GeomAbs_Circle and abs(abs(c.Circle().Axis().Direction().Z()) - 1.0) < 1e-9:
            circ = c.Circle()
            ctr = circ.Location()
            up = circ.Axis().Direction().Z() > 0
            sweep = math.degrees(t1 - t0) * (1 if up else -1) * (-1 if rev else 1)
            start = math.degrees(math.atan2(a.Y() - ctr.Y(), a.X() - ctr.X()))
            segs.append(Arc((ctr.X(), ctr.Y()), circ.Radius(), start, sweep))
        else:
            d = GCPnts_QuasiUniformDeflection(c, 0.25 * FACE_CHORD_MM, t0, t1)
            pts = [d.Value(i) for i in range(1, d.NbPoints() + 1)]
            if rev:
                pts.reverse()
            for p, q in zip(pts, pts[1:], strict=False):
                segs.append(Line((p.X(), p.Y()), (q.X(), q.Y())))
    return Loop(tuple(segs))


def _face_region(face) -> tuple[Loop, tuple]:
    from OCP.BRepTools import BRepTools
    from OCP.TopAbs import TopAbs_WIRE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    outer_wire = BRepTools.OuterWire_s(face)
    outer = _wire_loop(outer_wire, face).oriented(True)
    holes = []
    exp = TopExp_Explorer(face, TopAbs_WIRE)
    while exp.More():
        w = TopoDS.Wire_s(exp.Current())
        exp.Next()
        if not w.IsSame(outer_wire):
            holes.append(_wire_loop(w, face).oriented(True))
    return outer, tuple(holes)


def _flat_faces(solid):
    """(+1 | -1, z, outer Loop, holes) of each planar face normal to Z: +1 faces up (an outer-side face)."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_Plane
    from OCP.TopAbs import TopAbs_REVERSED

    out = []
    for face in _faces(solid):
        s = BRepAdaptor_Surface(face)
        if s.GetType() != GeomAbs_Plane:
            continue
        pln = s.Plane()
        nz = pln.Axis().Direction().Z()
        if abs(abs(nz) - 1.0) > 1e-9:
            continue
        if face.Orientation() == TopAbs_REVERSED:
            nz = -nz
        outer, holes = _face_region(face)
        out.append((1 if nz > 0 else -1, pln.Location().Z(), outer, holes))
    return out


def _columns(solid, *, where) -> tuple[list[Column], Loop]:
    """The flat stretches of the web (a top face over a bottom face) and the silhouette (the outline of
    the largest flat face)."""
    import shapely

    faces = _flat_faces(solid)
    tops = [f for f in faces if f[0] > 0]
    bots = [f for f in faces if f[0] < 0]
    if not tops or not bots:
        raise BadInput(f"{where}: the model has no flat face normal to Z on {'the outer' if not tops else 'the inner'} "
                       "side; a web model needs flat faces to drill from (the crank axis is Z)")

    def poly(f):
        return shapely.Polygon(f[2].points(FACE_CHORD_MM), [h.oriented(False).points(FACE_CHORD_MM) for h in f[3]])

    columns = []
    for t in tops:
        tp = poly(t)
        for b in bots:
            if b[1] >= t[1]:
                continue
            bp = poly(b)
            common = tp.intersection(bp)
            if common.area < MIN_COLUMN_AREA_MM2:
                continue
            if tp.difference(bp).area <= 1e-6 * tp.area:
                columns.append(Column(t[2], t[3], b[1], t[1]))
            elif bp.difference(tp).area <= 1e-6 * bp.area:
                columns.append(Column(b[2], b[3], b[1], t[1]))
            else:
                for g in getattr(common, "geoms", [common]):
                    if g.geom_type == "Polygon" and g.area >= MIN_COLUMN_AREA_MM2:
                        columns.append(Column(Loop.from_points(np.asarray(g.exterior.coords)).oriented(True),
                                              tuple(Loop.from_points(np.asarray(r.coords)).oriented(True)
                                                    for r in g.interiors), b[1], t[1], exact=False))
    columns.sort(key=lambda c: (-c.outer.area, c.z_bot, -c.z_top))
    return columns, _silhouette(solid, max(faces, key=lambda f: f[2].area)[2])


def _silhouette(solid, largest: Loop) -> Loop:
    """The model's outline seen along Z: the union of its faces' triangles, projected.  Where that is the
    outline of its largest flat face (a prism, a stepped web), that face's exact loop is kept; where it is
    the circle of one of its cylinders parallel to Z (a full-circle rim whose edges are chamfered or
    rounded, so that no flat face reaches it), that exact circle."""
    import shapely
    from OCP.BRep import BRep_Tool
    from OCP.BRepMesh import BRepMesh_IncrementalMesh
    from OCP.TopLoc import TopLoc_Location

    BRepMesh_IncrementalMesh(solid, 0.5 * FACE_CHORD_MM, False, 0.1, True)
    tris = []
    for face in _faces(solid):
        loc = TopLoc_Location()
        tri = BRep_Tool.Triangulation_s(face, loc)
        if tri is None:
            continue
        trsf = loc.Transformation()
        pts = [tri.Node(i).Transformed(trsf) for i in range(1, tri.NbNodes() + 1)]
        xy = np.array([(p.X(), p.Y()) for p in pts])
        idx = np.array([tri.Triangle(i).Get() for i in range(1, tri.NbTriangles() + 1)]) - 1
        tris.extend(shapely.polygons(xy[idx]))
    shape = shapely.union_all([t for t in tris if t.area > 0]).buffer(0)
    if shape.geom_type != "Polygon":
        shape = max(shape.geoms, key=lambda g: g.area)
    outline = shapely.Polygon(shape.exterior)
    for loop in [largest] + [_circle_loop(x, y, r) for x, y, r in _z_cylinders(solid)]:
        exact = shapely.Polygon(loop.points(FACE_CHORD_MM))
        if outline.symmetric_difference(exact).area <= 2 * FACE_CHORD_MM * exact.length:
            return loop
    return Loop.from_points(np.asarray(outline.exterior.coords)).oriented(True)


# ------------------------------------------------------------------ the section geomgen plans on
@dataclass(frozen=True)
class ModelSection(WebSection):
    """A web section whose body is a model: outline = the silhouette, thickness = the model's height, mass
    properties and feature changes exact from the B-rep."""

    model: Model | None = None

    def massprops(self) -> MassProps:
        return self.model.base_volume.with_density_ratio(self.density_g_cm3)

    def column(self, feature) -> tuple[float, float]:
        """(z_bot, z_top) of the column the feature enters (the model's full height for one that enters no
        face, a radial hole)."""
        col = self.column_of(feature)
        return (0.0, self.thickness) if col is None else (col.z_bot, col.z_top)

    def column_of(self, feature) -> Column | None:
        if getattr(feature, "opens_rim", False):
            return None
        x, y = feature.tag_point()
        fp = feature.footprint()
        r = max(math.hypot(px - x, py - y) for px, py in fp.points(0.05))
        return self.model.column_at(x, y, r)

    def change(self, feature, plug_density: float | None = None) -> MassProps:
        """The exact change of the feature to this solid: minus the web material its tool meets, plus its
        filler at the plug's density."""
        key = (feature, plug_density)
        cache = self.model._cache
        if key not in cache:
            cache[key] = exact_change(self, feature, plug_density)
        return cache[key]


#: the radial lines along which `radial_band` looks for the material's heights: their angular and radial
#: spacing (deg, mm)
BAND_STEP_DEG, BAND_STEP_MM = 2.0, 1.0


def radial_band(section: ModelSection, *, axis_deg: float, spread_deg: float, r_in: float) -> tuple[float, float]:
    """(z_low, z_high): the heights between which the model has material at every point of the radial lines
    from the rim in to `r_in` (mm from the crank axis), at angles within `spread_deg` of `axis_deg` (deg from +Y,
    counter-clockwise seen from +Z, as a radial hole's angle).

    Vertical lines every BAND_STEP_MM along each line, every BAND_STEP_DEG, are cut by the model's faces
    (IntCurvesFace_ShapeIntersector); at each the longest material interval counts (a line through a
    bore, with none, does not).  A radial hole kept inside the band meets no face on its way in but the
    rim; the 3D walls (`model_walls`) check what falls between the lines."""
    from OCP.gp import gp_Dir, gp_Lin, gp_Pnt
    from OCP.IntCurvesFace import IntCurvesFace_ShapeIntersector

    inter = IntCurvesFace_ShapeIntersector()
    inter.Load(section.model.shape, 1e-7)
    lo, hi = 0.0, section.thickness
    n = max(1, int(math.ceil(spread_deg / BAND_STEP_DEG)))
    r_out = section.rim_radius_max
    for k in range(-n, n + 1):
        a = math.radians(axis_deg + spread_deg * k / n)
        ux, uy = -math.sin(a), math.cos(a)
        for r in np.arange(r_out - 0.01, r_in - 1e-9, -BAND_STEP_MM):
            inter.Perform(gp_Lin(gp_Pnt(float(r * ux), float(r * uy), -1.0), gp_Dir(0, 0, 1)), -1e9, 1e9)
            zs = sorted({round(inter.Pnt(i).Z(), 9) for i in range(1, inter.NbPnt() + 1)})
            spans = [(zs[i], zs[i + 1]) for i in range(0, len(zs) - 1, 2)]
            if spans:
                z0, z1 = max(spans, key=lambda s: s[1] - s[0])
                lo, hi = max(lo, z0), min(hi, z1)
    return (lo, hi) if hi > lo else (0.0, 0.0)


def exact_change(section: ModelSection, feature, plug_density: float | None = None) -> MassProps:
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common

    from .verify import solid_massprops

    z0, z1 = section.column(feature)
    t = z1 - z0
    tool = _placed(feature.tool(t), z0)
    common = BRepAlgoAPI_Common(section.model.shape, tool)
    common.Build()
    taken = _volume(common.Shape())
    out = -taken.with_density_ratio(section.density_g_cm3) if taken is not None else MassProps.zero()
    filler = feature.filler(t)
    if filler is not None:
        dens = plug_density if plug_density is not None else feature.plug_density()
        out = out + solid_massprops(_placed(filler, z0), dens)
    return out


def _volume(shape) -> MassProps | None:
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape, props, GPROP_EPS)
    if props.Mass() <= 0:
        return None
    c = props.CentreOfMass()
    m = props.MatrixOfInertia()
    inertia = np.array([[m.Value(i, j) for j in (1, 2, 3)] for i in (1, 2, 3)])
    return MassProps.from_centroidal(mass=1e-3 * props.Mass(), com=(c.X(), c.Y(), c.Z()),
                                     inertia_com=1e-3 * inertia, volume=props.Mass())


def _placed(shape, z0: float):
    """A tool or filler made for a column from 0 moved up to the column's bottom."""
    from . import occ

    return occ.translated(shape, (0.0, 0.0, z0)) if z0 else occ.raw(shape)


def placed_tool(section, feature):
    """The feature's cutting tool in the web frame of its section (an OpenCascade shape)."""
    z0, z1 = section_column(section, feature)
    return _placed(feature.tool(z1 - z0), z0)


def placed_filler(section, feature):
    """The solid that fills the feature's cut (a plug) in the web frame of its section, or None."""
    z0, z1 = section_column(section, feature)
    filler = feature.filler(z1 - z0)
    return None if filler is None else _placed(filler, z0)


def section_column(section, feature) -> tuple[float, float]:
    """(z_bot, z_top) a feature enters on any section: a prism's is (0, thickness)."""
    col = getattr(section, "column", None)
    return col(feature) if col is not None else (0.0, float(section.thickness))


def model_section(model: Model, *, density_g_cm3: float, stroke: float, pin_bore: float,
                  main_bore: float) -> ModelSection:
    return ModelSection(outer=model.silhouette, bores=model.bores, pin_center=(0.0, 0.5 * stroke),
                        pin_bore=pin_bore, thickness=model.z_top, density_g_cm3=density_g_cm3,
                        main_bore=main_bore, model=model)


# ------------------------------------------------------------------ walls measured on the solid
@dataclass(frozen=True)
class ModelWalls:
    """Walls of a model web's features measured in 3D on the solid (OpenCascade BRepExtrema).

    walls : (feature index 0-based, to what, wall mm, required mm, rule) for every feature and neighbour
    shortfalls : geomgen.walls.WallShortfall of existing features (warnings)
    """

    walls: tuple
    shortfalls: tuple

    @property
    def smallest(self) -> float:
        return min((w[2] for w in self.walls), default=math.inf)


def _box_gap(a, b) -> float:
    """The distance between two shapes' bounding boxes, mm: no more than the shapes' own distance."""
    p, q = _box(a), _box(b)
    gaps = [max(0.0, q[i] - p[i + 3], p[i] - q[i + 3]) for i in range(3)]
    return math.sqrt(sum(g * g for g in gaps))


def _distance(a, b, enough: float = math.inf) -> float:
    """The least distance between two shapes, mm (OpenCascade BRepExtrema); a pair whose bounding boxes
    are already more than `enough` apart gives that box gap, a lower bound that clears the wall."""
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape

    gap = _box_gap(a, b)
    if gap > enough:
        return gap
    d = BRepExtrema_DistShapeShape(a, b)
    if not d.IsDone():
        return math.nan
    return d.Value()


def _face_names(section) -> list[tuple[object, str, float | None]]:
    """(face, what it is, z of a planar face normal to Z or None) of every face of the model."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_Cylinder, GeomAbs_Plane

    px, py = section.pin_center
    out = []
    for face in _faces(section.model.shape):
        s = BRepAdaptor_Surface(face)
        kind, z, name = s.GetType(), None, "the rim or a side face"
        if kind == GeomAbs_Plane and abs(abs(s.Plane().Axis().Direction().Z()) - 1.0) < 1e-9:
            z = s.Plane().Location().Z()
            name = f"the face at z = {z:.4g} mm"
        elif kind == GeomAbs_Cylinder:
            c = s.Cylinder()
            loc = c.Axis().Location()
            d = 2 * c.Radius()
            if math.hypot(loc.X() - px, loc.Y() - py) < BORE_TOL_MM and abs(d - section.pin_bore) < BORE_TOL_MM:
                name = "the crankpin bore"
            elif math.hypot(loc.X(), loc.Y()) < BORE_TOL_MM and abs(d - section.main_bore) < BORE_TOL_MM:
                name = "the main bore"
        out.append((face, name, z))
    return out


def model_walls(section: ModelSection, features, *, name: str, min_wall: float = 0.0, pin_wall: float = 0.0,
                existing=0) -> ModelWalls:
    """Every feature's walls on the model, measured between its placed tool and the model's faces it does
    not enter, and between tools.  A new feature short of min_wall (pin_wall to the crankpin bore) is
    refused (BadInput), an existing one warned; a tool that meets a face other than the faces it enters
    breaks out of the web and is refused either way.  Walls more than twice the rule are given as the
    gap of the bounding boxes (a lower bound); nearer ones are measured exactly."""
    features = tuple(features)
    key = ("walls", features, float(min_wall), float(pin_wall), existing if isinstance(existing, int)
           else frozenset(existing))
    cache = section.model._cache
    if key not in cache:
        cache[key] = _model_walls(section, features, name=name, min_wall=min_wall, pin_wall=pin_wall,
                                  existing=existing)
    return cache[key]


def _model_walls(section, features, *, name, min_wall, pin_wall, existing) -> ModelWalls:
    from .walls import MIN_SOLID_WALL_MM, WallShortfall, existing_set

    ex = existing_set(existing, len(features))
    need_all = max(float(min_wall), MIN_SOLID_WALL_MM)
    enough = 2.0 * max(need_all, float(pin_wall))
    faces = _face_names(section)
    tools = [placed_tool(section, f) for f in features]
    walls, short = [], []

    def judge(i, f, to, wall, pin):
        required = max(need_all, float(pin_wall)) if pin else need_all
        rule = "pin_wall" if pin and float(pin_wall) > need_all else "min_wall"
        walls.append((i, to, wall, required, rule))
        if wall >= required - 1e-6:
            return
        if wall < MIN_SOLID_WALL_MM or i not in ex:
            what = "breaks into" if wall < MIN_SOLID_WALL_MM else f"leaves {wall:.2f} mm to"
            raise BadInput(f"web {name}: feature {i + 1} ({f.kind}) {what} {to}, measured on the model; "
                           f"{rule} asks {required:g} mm")
        short.append(WallShortfall(i, f.kind, to, wall, required, rule, f"{f.tag_point()}"))

    for i, (f, tool) in enumerate(zip(features, tools, strict=True)):
        z0, z1 = section.column(f)
        lo, hi = _box(tool)[2], _box(tool)[5]
        enters = {z for z in (z0, z1) if lo <= z + 1e-6 and hi >= z - 1e-6}
        nearest: dict[str, float] = {}
        for face, what, z in faces:
            d = _distance(tool, face, enough)
            if d < 1e-7 and ((z is not None and any(abs(z - e) < 1e-6 for e in enters))
                             or (z is None and f.opens_rim and what == "the rim or a side face")):
                continue  # a face the feature is cut from
            nearest[what] = min(d, nearest.get(what, math.inf))
        for what, d in sorted(nearest.items()):
            judge(i, f, what, d, what == "the crankpin bore")
        for j in range(i):
            judge(i, f, f"feature {j + 1} ({features[j].kind})", _distance(tool, tools[j], enough), False)
    return ModelWalls(tuple(walls), tuple(short))
