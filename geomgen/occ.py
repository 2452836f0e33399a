"""The CAD kernel: the few OpenCascade (OCP) calls geomgen makes to build solids.

geomgen's solids are plain OpenCascade shapes (`TopoDS_Shape`).  Importing OCP
loads the whole kernel, one shared library, in about 1.5 s; nothing in the
maths imports this module (geomgen.solid and the kinds' tools do, and only
when a solid is built).

Each builder here is the kernel call a general CAD wrapper makes for the same
request, with the same options (a face from wires: the outer wire fixed, the
face's orientation fixed; a boolean cut of several tools at once, run in
parallel; a clean that merges faces of one surface and keeps no internal
edge), so a shape built here is the shape such a wrapper builds.  Points are
(x, y, z) tuples in mm, angles in degrees.

Importing this module also keeps the kernel's own messages (STEP transfer
statistics) off standard output; every module that reads or writes STEP
imports it first.

Every function that takes a shape also takes an object that carries one as
`.wrapped` (a cadquery shape), so scripts and tests may hand in either.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence

from OCP.BRepAlgoAPI import BRepAlgoAPI_Common, BRepAlgoAPI_Cut
from OCP.BRepBuilderAPI import (
    BRepBuilderAPI_MakeEdge,
    BRepBuilderAPI_MakeFace,
    BRepBuilderAPI_MakePolygon,
    BRepBuilderAPI_MakeWire,
    BRepBuilderAPI_Transform,
)
from OCP.BRepCheck import BRepCheck_Analyzer
from OCP.BRepGProp import BRepGProp
from OCP.BRepPrimAPI import BRepPrimAPI_MakeCylinder, BRepPrimAPI_MakePrism, BRepPrimAPI_MakeRevol
from OCP.GC import GC_MakeArcOfCircle
from OCP.gp import gp_Ax1, gp_Ax2, gp_Circ, gp_Dir, gp_Pnt, gp_Trsf, gp_Vec
from OCP.GProp import GProp_GProps
from OCP.Message import Message, Message_Gravity
from OCP.ShapeFix import ShapeFix_Face, ShapeFix_Shape
from OCP.ShapeUpgrade import ShapeUpgrade_UnifySameDomain
from OCP.TopAbs import TopAbs_SOLID
from OCP.TopExp import TopExp
from OCP.TopoDS import TopoDS, TopoDS_Shape
from OCP.TopTools import TopTools_IndexedMapOfShape, TopTools_ListOfShape

Point = Sequence[float]

# OpenCascade prints its STEP transfer statistics and warnings on standard output; geomgen's output is its
# own (a plan's summary, a file's figures), so the kernel reports failures only
for _printer in Message.DefaultMessenger_s().Printers():
    _printer.SetTraceLevel(Message_Gravity.Message_Fail)


def raw(obj) -> TopoDS_Shape:
    """The OpenCascade shape of `obj`: itself, or what a wrapper object carries as `.wrapped`."""
    return obj.wrapped if hasattr(obj, "wrapped") else obj


def _pnt(p: Point) -> gp_Pnt:
    return gp_Pnt(float(p[0]), float(p[1]), float(p[2]))


def _dir(d: Point) -> gp_Dir:
    return gp_Dir(float(d[0]), float(d[1]), float(d[2]))


# ------------------------------------------------------------------ edges and wires
def line(a: Point, b: Point):
    """The straight edge from a to b."""
    return BRepBuilderAPI_MakeEdge(_pnt(a), _pnt(b)).Edge()


def arc_through(a: Point, mid: Point, b: Point):
    """The circular arc edge from a through mid to b."""
    return BRepBuilderAPI_MakeEdge(GC_MakeArcOfCircle(_pnt(a), _pnt(mid), _pnt(b)).Value()).Edge()


def circle(radius: float, center: Point, normal: Point = (0.0, 0.0, 1.0)):
    """The full circle edge about `normal` (counter-clockwise seen from its tip)."""
    return BRepBuilderAPI_MakeEdge(gp_Circ(gp_Ax2(_pnt(center), _dir(normal)), float(radius))).Edge()


def edge_of(curve, *bounds: float):
    """The edge of a Geom curve, whole or between two of its parameters."""
    return BRepBuilderAPI_MakeEdge(curve, *bounds).Edge()


def wire(edges: Iterable):
    """One wire of the edges (given in order, end to start).  Raises ValueError if they do not join."""
    builder = BRepBuilderAPI_MakeWire()
    listed = TopTools_ListOfShape()
    for e in edges:
        listed.Append(raw(e))
    builder.Add(listed)
    builder.Build()
    if not builder.IsDone():
        raise ValueError(f"the kernel could not join the edges into one wire (error {builder.Error()})")
    return builder.Wire()


def polygon(points: Iterable[Point]):
    """The closed polygon wire through the points."""
    builder = BRepBuilderAPI_MakePolygon()
    for p in points:
        builder.Add(_pnt(p))
    builder.Close()
    return builder.Wire()


def planar_face(outer, inner: Sequence = ()):
    """The planar face bounded by the outer wire, with the inner wires as holes."""
    fix = ShapeFix_Shape(raw(outer))
    fix.Perform()
    builder = BRepBuilderAPI_MakeFace(TopoDS.Wire_s(fix.Shape()), True)
    for w in inner:
        builder.Add(raw(w))
    builder.Build()
    if not builder.IsDone():
        raise ValueError(f"the kernel could not make a face of the wires (error {builder.Error()})")
    face_fix = ShapeFix_Face(builder.Face())
    face_fix.FixOrientation()
    face_fix.Perform()
    return face_fix.Result()


# ------------------------------------------------------------------ solids
def prism(outer, inner: Sequence = (), *, height: float):
    """The face of the wires swept `height` mm along +Z (down for a negative height)."""
    face = planar_face(outer, inner)
    return BRepPrimAPI_MakePrism(face, gp_Vec(0.0, 0.0, float(height)), True).Shape()


def revolved(profile, *, axis_point: Point, axis_dir: Point, angle_deg: float = 360.0):
    """The face of a closed profile wire turned about the axis."""
    face = planar_face(profile)
    axis = gp_Ax1(_pnt(axis_point), _dir(axis_dir))
    return BRepPrimAPI_MakeRevol(face, axis, math.radians(angle_deg), True).Shape()


def cylinder(radius: float, height: float, base: Point, axis_dir: Point = (0.0, 0.0, 1.0)):
    """The solid cylinder on `base`, `height` mm along `axis_dir`."""
    ax = gp_Ax2(_pnt(base), _dir(axis_dir))
    return BRepPrimAPI_MakeCylinder(ax, float(radius), float(height), 2.0 * math.pi).Shape()


def cut(shape, tools: Iterable):
    """`shape` less every tool, in one boolean operation."""
    op = BRepAlgoAPI_Cut()
    args, cutters = TopTools_ListOfShape(), TopTools_ListOfShape()
    args.Append(raw(shape))
    for t in tools:
        cutters.Append(raw(t))
    op.SetArguments(args)
    op.SetTools(cutters)
    op.SetRunParallel(True)
    op.Build()
    return op.Shape()


def common(a, b):
    """What the two shapes share."""
    return BRepAlgoAPI_Common(raw(a), raw(b)).Shape()


def cleaned(shape):
    """The faces (and edges) that lie on one surface merged, no internal edge kept."""
    upgrader = ShapeUpgrade_UnifySameDomain(raw(shape), True, True, True)
    upgrader.AllowInternalEdges(False)
    upgrader.Build()
    return upgrader.Shape()


# ------------------------------------------------------------------ placement
def transformed(shape, trsf: gp_Trsf):
    """A copy of the shape (its geometry copied, not only placed) moved by `trsf`."""
    return BRepBuilderAPI_Transform(raw(shape), trsf, True).Shape()


def rotated(shape, *, axis_point: Point, axis_dir: Point, angle_deg: float):
    t = gp_Trsf()
    t.SetRotation(gp_Ax1(_pnt(axis_point), _dir(axis_dir)), math.radians(angle_deg))
    return transformed(shape, t)


def translated(shape, offset: Point):
    t = gp_Trsf()
    t.SetTranslation(gp_Vec(float(offset[0]), float(offset[1]), float(offset[2])))
    return transformed(shape, t)


# ------------------------------------------------------------------ questions
def solids(shape) -> list:
    """The distinct solids of the shape, in the kernel's order."""
    found = TopTools_IndexedMapOfShape()
    TopExp.MapShapes_s(raw(shape), TopAbs_SOLID, found)
    return [TopoDS.Solid_s(found.FindKey(i)) for i in range(1, found.Extent() + 1)]


def is_valid(shape) -> bool:
    """True if OpenCascade's checker finds no defect in the shape or any part of it."""
    return BRepCheck_Analyzer(raw(shape)).IsValid()


def volume(shape) -> float:
    """The enclosed volume, mm^3 (OpenCascade's default volume integration)."""
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(raw(shape), props)
    return props.Mass()
