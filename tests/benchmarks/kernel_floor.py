"""The bare kernel floors the build and plan benchmarks measure geomgen against.

A fresh Python process that imports the kernel and does by hand the kernel work
geomgen does for a web: the body extruded with its pin bore, ONE multi-tool
cut of the holes (a cylinder each, with a cone for a drill point), a STEP and
a binary STL export for each named web, one GProp evaluation.  Nothing of
geomgen is imported, so the ratio geomgen / floor is what geomgen adds.

Two kernels: through cadquery (`SCRIPT`, the floor as first defined, when
geomgen built its solids with cadquery), and through OpenCascade's own Python
binding OCP alone (`OCP_SCRIPT`, `floor(spec, kernel="ocp")`), which is what
geomgen now loads: the fair and stricter floor.

Two ways to leave: as a plain script does (the interpreter tears the kernel's
modules down, most of a second), or at once with os._exit, as geomgen's command
line leaves (`floor(spec, leave_at_once=True)`, the stricter reference).

spec (JSON): {"thickness", "radius" (web), "pin_y", "pin_radius" (mm),
"holes": [{"x", "y", "diameter", "depth", "point_angle"?, "through"?}],
"webs": ["a", ...] (one STEP + STL each)}.
"""

from __future__ import annotations

import json
import subprocess
import sys
import time

SCRIPT = r"""
import json, math, os, sys, tempfile, time
t0 = time.perf_counter()
import cadquery as cq
from OCP.BRepGProp import BRepGProp
from OCP.GProp import GProp_GProps
t1 = time.perf_counter()
spec = json.loads(sys.argv[1])
t, r_web, pin_y, r_pin = spec["thickness"], spec["radius"], spec["pin_y"], spec["pin_radius"]
outer = cq.Wire.makeCircle(r_web, cq.Vector(0, 0, 0), cq.Vector(0, 0, 1))
bore = cq.Wire.makeCircle(r_pin, cq.Vector(0, pin_y, 0), cq.Vector(0, 0, 1))
body = cq.Solid.extrudeLinear(outer, [bore], cq.Vector(0, 0, t))
tools = []
for h in spec["holes"]:
    r = 0.5 * h["diameter"]
    if h.get("through"):
        tools.append(cq.Solid.makeCylinder(r, t + 2.0, cq.Vector(h["x"], h["y"], -1.0)))
        continue
    z = t - h["depth"]
    tools.append(cq.Solid.makeCylinder(r, h["depth"] + 1.0, cq.Vector(h["x"], h["y"], z)))
    angle = h.get("point_angle", 118.0)
    if angle < 180.0:
        point = r / math.tan(math.radians(0.5 * angle))
        tools.append(cq.Solid.makeCone(r, 0.0, point, cq.Vector(h["x"], h["y"], z), cq.Vector(0, 0, -1)))
web = body.cut(*tools)
t2 = time.perf_counter()
out = tempfile.mkdtemp()
for name in spec["webs"]:
    cq.exporters.export(web, os.path.join(out, f"web-{name}.step"))
    web.exportStl(os.path.join(out, f"web-{name}.stl"), tolerance=0.01, angularTolerance=0.1, ascii=False)
t3 = time.perf_counter()
props = GProp_GProps()
BRepGProp.VolumeProperties_s(web.wrapped, props)
props.MatrixOfInertia()
t4 = time.perf_counter()
import shutil
shutil.rmtree(out)
print(json.dumps({"import": t1 - t0, "build": t2 - t1, "export": t3 - t2, "props": t4 - t3}), flush=True)
if sys.argv[2:] == ["at-once"]:
    os._exit(0)   # as geomgen's command line leaves: without the interpreter's tear-down of the kernel
"""


OCP_SCRIPT = r"""
import json, math, os, sys, tempfile, time
t0 = time.perf_counter()
from OCP.BRepAlgoAPI import BRepAlgoAPI_Cut
from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeEdge, BRepBuilderAPI_MakeFace, BRepBuilderAPI_MakeWire
from OCP.BRepGProp import BRepGProp
from OCP.BRepMesh import BRepMesh_IncrementalMesh
from OCP.BRepPrimAPI import BRepPrimAPI_MakeCone, BRepPrimAPI_MakeCylinder, BRepPrimAPI_MakePrism
from OCP.gp import gp_Ax2, gp_Circ, gp_Dir, gp_Pnt, gp_Vec
from OCP.GProp import GProp_GProps
from OCP.STEPControl import STEPControl_AsIs, STEPControl_Writer
from OCP.StlAPI import StlAPI_Writer
from OCP.TopTools import TopTools_ListOfShape
t1 = time.perf_counter()
spec = json.loads(sys.argv[1])
t, r_web, pin_y, r_pin = spec["thickness"], spec["radius"], spec["pin_y"], spec["pin_radius"]
up, down = gp_Dir(0, 0, 1), gp_Dir(0, 0, -1)
def ring(r, y, d):
    return BRepBuilderAPI_MakeWire(BRepBuilderAPI_MakeEdge(gp_Circ(gp_Ax2(gp_Pnt(0, y, 0), d), r)).Edge()).Wire()
face = BRepBuilderAPI_MakeFace(ring(r_web, 0.0, up), True)
face.Add(ring(r_pin, pin_y, down))
body = BRepPrimAPI_MakePrism(face.Face(), gp_Vec(0, 0, t), True).Shape()
tools = TopTools_ListOfShape()
for h in spec["holes"]:
    r = 0.5 * h["diameter"]
    if h.get("through"):
        tools.Append(BRepPrimAPI_MakeCylinder(gp_Ax2(gp_Pnt(h["x"], h["y"], -1.0), up), r, t + 2.0).Shape())
        continue
    z = t - h["depth"]
    tools.Append(BRepPrimAPI_MakeCylinder(gp_Ax2(gp_Pnt(h["x"], h["y"], z), up), r, h["depth"] + 1.0).Shape())
    angle = h.get("point_angle", 118.0)
    if angle < 180.0:
        point = r / math.tan(math.radians(0.5 * angle))
        tools.Append(BRepPrimAPI_MakeCone(gp_Ax2(gp_Pnt(h["x"], h["y"], z), down), r, 0.0, point).Shape())
args = TopTools_ListOfShape()
args.Append(body)
cut = BRepAlgoAPI_Cut()
cut.SetArguments(args)
cut.SetTools(tools)
cut.SetRunParallel(True)
cut.Build()
web = cut.Shape()
t2 = time.perf_counter()
out = tempfile.mkdtemp()
for name in spec["webs"]:
    writer = STEPControl_Writer()
    writer.Transfer(web, STEPControl_AsIs)
    writer.Write(os.path.join(out, f"web-{name}.step"))
    BRepMesh_IncrementalMesh(web, 0.01, False, 0.1, True)
    stl = StlAPI_Writer()
    stl.ASCIIMode = False
    stl.Write(web, os.path.join(out, f"web-{name}.stl"))
t3 = time.perf_counter()
props = GProp_GProps()
BRepGProp.VolumeProperties_s(web, props)
props.MatrixOfInertia()
t4 = time.perf_counter()
import shutil
shutil.rmtree(out)
print(json.dumps({"import": t1 - t0, "build": t2 - t1, "export": t3 - t2, "props": t4 - t3}), flush=True)
if sys.argv[2:] == ["at-once"]:
    os._exit(0)
"""


def run_script(code: str, *args: str) -> dict:
    """Run `code` in a fresh interpreter; its last stdout line (JSON phase times) plus "wall", s."""
    start = time.perf_counter()
    proc = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, check=True)
    inner = json.loads(proc.stdout.strip().splitlines()[-1])
    inner["wall"] = time.perf_counter() - start
    return inner


def floor(spec: dict, *, leave_at_once: bool = False, kernel: str = "cadquery") -> dict:
    """Phase times and wall time (s) of the floor for `spec` (see the module notes); kernel "cadquery"
    or "ocp"."""
    code = {"cadquery": SCRIPT, "ocp": OCP_SCRIPT}[kernel]
    return run_script(code, json.dumps(spec), *(["at-once"] if leave_at_once else []))
