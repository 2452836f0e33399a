"""Web solids: the outline extruded with its bores, the features cut in one go.

The CAD kernel (OpenCascade, through geomgen.occ) is imported lazily inside the
functions that build shapes, so importing this module costs nothing; the
feature check (`check_features`, geomgen.walls) is plain shapely and never
touches it.

Frame: the contract's web frame — crank axis Z, crankpin centre on +Y,
z = 0 at the inner face and z = thickness at the outer face, mm.

Why the shapes are built the way they are:
- every feature's tool (made by its kind, geomgen.kinds) is one tool of ONE boolean cut: a cut per
  feature grows with the square of the count (measured: 240 holes 0.23 s in
  one cut, 5.5 s one at a time);
- a tool that leaves a face is extended `kinds._tools.OVERSHOOT` mm beyond it, so the
  kernel never meets coplanar faces;
- a plug is a separate solid built from the same cylinder as its bore, so it
  fills the bore exactly and never overlaps the body.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .errors import BadInput, VerificationFailed
from .walls import MIN_SOLID_WALL_MM, WallShortfall, measure_walls  # noqa: F401  (MIN_SOLID_WALL_MM: public)

#: relative volume agreement demanded of a clean()ed shape (clean() can corrupt a
#: solid that still reports itself valid)
_CLEAN_REL = 1e-9


@dataclass(frozen=True)
class PlugSolid:
    """One heavy-metal plug: its shape, density (g/cm^3) and feature index."""

    shape: object
    density_g_cm3: float
    index: int
    name: str


@dataclass(frozen=True)
class WebSolid:
    """A web as solids in its own frame.

    body : OpenCascade solid (TopoDS_Solid), the web material with every feature cut
    plugs : the plugs, each a separate solid filling its bore
    density_g_cm3 : the web material
    thickness : mm
    """

    name: str
    body: object
    density_g_cm3: float
    thickness: float
    plugs: tuple[PlugSolid, ...] = field(default_factory=tuple)
    features: tuple = field(default_factory=tuple)
    wall_shortfalls: tuple[WallShortfall, ...] = field(default_factory=tuple)

    def solids(self) -> list[tuple[str, object, float]]:
        """(name, shape, density g/cm^3) of every solid, body first: "body", "plug-1", ..."""
        return [(BODY, self.body, self.density_g_cm3)] + [
            (p.name, p.shape, p.density_g_cm3) for p in self.plugs]

    @property
    def wall_warnings(self) -> list[str]:
        """The existing features' walls thinner than the job asks, one line each."""
        return [s.line(self.name) for s in self.wall_shortfalls]


# ------------------------------------------------------------------ solid names
#: the web material's solid in a per-web STEP file; plugs are "plug-1", "plug-2", ...
BODY = "body"
PLUG = "plug"


def crank_solid_name(web: str, part: str) -> str:
    """A solid's name in crank.step: "web-a body", "web-b plug-1"."""
    return f"web-{web} {part}"


def solid_part(name: str) -> str:
    """"plug" or "body": what a named solid of a geomgen STEP file is.

    Reads the per-web names ("body", "plug-1"), the crank names
    ("web-a body", "web-a plug-1") and the older crank names ("a-plug-1"):
    a name whose last word is "plug" or "plug-N" is a plug, anything else is
    web material.
    """
    last = str(name).strip().lower().split()[-1] if str(name).strip() else ""
    head, _, number = last.rpartition("-")
    if last == PLUG or (number.isdigit() and (head == PLUG or head.endswith("-" + PLUG))):
        return PLUG
    return BODY


def check_features(section, features, *, name: str, min_wall: float = 0.0, pin_wall: float = 0.0,
                   existing=0) -> float:
    """Refuse features that break through the rim, a face or a bore, overlap
    one another, or (new features only) keep less than the job's walls;
    return the smallest wall found, mm.  See geomgen.walls.

    existing : the features already on the web (a count n = the first n, or
               a set of 0-based indices): their thin walls are warnings
               (`geomgen.walls.wall_warnings`), not refusals
    Raises BadInput naming the web, the feature (counted from 1) and the wall.
    """
    smallest, _ = measure_walls(section, features, name=name, min_wall=min_wall, pin_wall=pin_wall,
                                existing=existing)
    return smallest


# --------------------------------------------------------------------------
# kernel shapes
# --------------------------------------------------------------------------

def _tools_and_plugs(features, section):
    """Every feature's cutting tool, and the plugs that fill theirs (each kind makes its own), each at the
    faces it enters (a prism's two faces; on a model, its column's)."""
    from .model3d import placed_filler, placed_tool

    tools, plugs = [], []
    for i, f in enumerate(features):
        tools.append(placed_tool(section, f))
        filler = placed_filler(section, f)
        if filler is not None:
            plugs.append(PlugSolid(filler, f.plug_density(), i, f"{PLUG}-{len(plugs) + 1}"))
    return tools, plugs


def body_shape(section):
    """The plain web: outline face with its bores as inner wires, extruded
    from z = 0 to the thickness in one step."""
    from . import occ
    from .kinds._tools import loop_wire

    model = getattr(section, "model", None)
    if model is not None:
        return occ.raw(model.shape)
    outer = loop_wire(section.outer.oriented(True))
    inner = [loop_wire(b.oriented(False)) for b in section.bores]
    return occ.prism(outer, inner, height=float(section.thickness))


def _one_solid(shape, *, name: str):
    """The single solid of a cut result, or VerificationFailed."""
    from . import occ

    solids = occ.solids(shape)
    valid = occ.is_valid(shape)
    if len(solids) != 1 or not valid:
        raise VerificationFailed(f"web {name}: the kernel's cut gave {len(solids)} solid(s), "
                                 f"valid={valid}; expected one valid solid")
    return solids[0]


def _cleaned(shape):
    """clean() (merge coplanar faces) kept only if valid and of the same volume."""
    from . import occ

    try:
        cleaned = occ.cleaned(shape)
    except Exception:  # the kernel can fail here; the raw cut is still right
        return shape
    v0, v1 = occ.volume(shape), occ.volume(cleaned)
    if occ.is_valid(cleaned) and abs(v1 - v0) <= _CLEAN_REL * abs(v0):
        return cleaned
    return shape


def build_web(section, features=(), *, name: str, min_wall: float = 0.0, pin_wall: float = 0.0,
              existing=0, clean: bool = True) -> WebSolid:
    """The web solid with its features, in the web frame.

    section : WebSection (outer Loop, bores, thickness mm, density g/cm^3)
    features : Hole / Pocket / Plug, in the web frame
    min_wall : mm, the wall demanded between features, rim, bores and faces
    pin_wall : mm, the wall demanded around the crankpin bore
    existing : the features already on the web, a count n (the first n) or a
               set of 0-based indices: their walls short of min_wall/pin_wall
               are kept and reported in `WebSolid.wall_warnings`
    Raises BadInput for a feature that breaks out or overlaps another, or a
    new feature short of the walls.
    """
    features = tuple(features)
    if getattr(section, "model", None) is not None:
        from .model3d import model_walls

        short = model_walls(section, features, name=name, min_wall=min_wall, pin_wall=pin_wall,
                            existing=existing).shortfalls
    else:
        _, short = measure_walls(section, features, name=name, min_wall=min_wall, pin_wall=pin_wall,
                                 existing=existing)
    t = float(section.thickness)
    body = body_shape(section)
    plugs: list[PlugSolid] = []
    if features:
        from . import occ

        tools, plugs = _tools_and_plugs(features, section)
        body = _one_solid(occ.cut(body, tools), name=name)
        if clean:
            body = _one_solid(_cleaned(body), name=name)
    return WebSolid(name=name, body=body, density_g_cm3=float(section.density_g_cm3), thickness=t,
                    plugs=tuple(plugs), features=features, wall_shortfalls=tuple(short))


def crank_assembly(web_a: WebSolid, web_b: WebSolid, *, gap_mm: float):
    """Both webs in the crank frame: web a as it is, web b turned 180 deg
    about Y (so its (x, y, z) lands at (-x, y, -z - gap_mm): its inner face
    `gap_mm` from web a's inner face, on the -z side).

    Returns a list of (name, shape, density g/cm^3), web a's solids first,
    named by `crank_solid_name` ("web-a body", "web-a plug-1", "web-b body",
    ...).  Web b's solids are new shapes with the turn built into their
    geometry, never a second placement of web a's: twin webs share their
    shapes, and a STEP writer merges two placements of one shape into one
    product (a crank file of two alike webs then held only web b).
    """
    from OCP.gp import gp_Ax1, gp_Dir, gp_Pnt, gp_Trsf, gp_Vec

    from . import occ

    if not gap_mm >= 0:
        raise BadInput(f"crank gap: must be >= 0 mm, got {gap_mm}")
    if web_a.name == web_b.name:
        raise BadInput(f"crank: both webs are named {web_a.name!r}; the crank file needs two names")
    turn, shift = gp_Trsf(), gp_Trsf()
    turn.SetRotation(gp_Ax1(gp_Pnt(0, 0, 0), gp_Dir(0, 1, 0)), math.pi)   # (x, y, z) -> (-x, y, -z)
    shift.SetTranslation(gp_Vec(0, 0, -float(gap_mm)))                    # inner face z = 0 -> -gap
    placed = shift.Multiplied(turn)

    out = [(crank_solid_name(web_a.name, n), s, d) for n, s, d in web_a.solids()]
    out += [(crank_solid_name(web_b.name, n), occ.transformed(s, placed), d) for n, s, d in web_b.solids()]
    return out
