"""Independent checks of a planned web, shared by test_planner, test_plan_cli and test_trim.

Nothing here trusts the planner: targets and tolerances are worked from the
README's definitions ("What the balance figures mean") with the job's own numbers; footprints, walls and the
allowed region are rebuilt with shapely from the feature tables of plan.json;
mass properties are OpenCascade's exact ones read back from the exported STEP.

Frames (README, "The job file", Frame): crank axis = Z, pin on +Y at
stroke/2, a web angle in deg from +Y counter-clockwise, so the point at radius
r and angle a is (-r sin a, r cos a).  Web b lies in the crank frame with
(x, y) -> (-x, y).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import shapely
import shapely.ops

#: quad_segs for circles rebuilt with shapely: the sagitta of a 30 mm radius is 30 (1 - cos(pi/1024)) = 1.4e-4 mm
QUAD = 512
#: slack on a wall measured on flattened footprints, mm (a few sagittas)
WALL_SLACK = 1e-3


# ------------------------------------------------------------------ the contract, by hand
def contract_target(job: dict, share: float = 0.5) -> np.ndarray:
    """(x, y) g*mm a web must carry: -(m_rot + m_crank_parts + BF m_rec) stroke/2 share on Y (the README's
    "Target": the webs counter the bob weight and the crank's own parts at the pin)."""
    e = job["engine"]
    m_rec = sum(e["reciprocating"].values())
    m_rot = sum(e["rotating"].values()) + sum(e.get("crank_parts", {}).values())
    return np.array([0.0, -(m_rot + e["balance_factor"] * m_rec) * 0.5 * e["stroke"] * share])


def contract_tolerance(job: dict, share: float = 0.5) -> float:
    """g*mm, the allowed |deviation| of one web: bf_tolerance_percent/100 m_rec stroke/2 share (the README's
    "Tolerance": a vector magnitude, as ISO 21940-11 treats unbalance)."""
    e = job["engine"]
    corr = job.get("correction", {})
    points = corr.get("bf_tolerance_percent", corr.get("tolerance_points", 0.5))
    return points / 100.0 * sum(e["reciprocating"].values()) * 0.5 * e["stroke"] * share


def disc_web_unbalance(*, diameter, thickness, density, stroke, pin_bore, main_bore=0.0) -> np.ndarray:
    """Closed form for a full-circle web with its pin bore empty: -rho t pi r_pin^2 (0, stroke/2), g*mm.

    (The disc and a main bore at the origin add nothing.)"""
    mass_pin = density * 1e-3 * thickness * math.pi * 0.25 * pin_bore ** 2
    return np.array([0.0, -mass_pin * 0.5 * stroke])


def disc_web_mass(*, diameter, thickness, density, pin_bore, main_bore=0.0) -> float:
    """g: rho t pi/4 (D^2 - d_pin^2 - d_main^2)."""
    return density * 1e-3 * thickness * math.pi * 0.25 * (diameter ** 2 - pin_bore ** 2 - main_bore ** 2)


def to_crank(u, index: int) -> np.ndarray:
    """A web-frame (x, y) vector in the crank frame: web b (index 1) mirrored in x (README, Frame)."""
    u = np.asarray(u, dtype=float)
    return u if index == 0 else np.array([-u[0], u[1]])


# ------------------------------------------------------------------ running the command line in-process
def run_cli(args) -> int:
    """geomgen.cli.main in this process (saves the ~1.5 s cadquery import per run)."""
    from geomgen.cli import main

    return main([str(a) for a in args])


def cli_output(args):
    """geomgen.cli.main in this process, as `python -m geomgen ARGS` runs it: a CompletedProcess with its
    exit code and what it printed (stdout, stderr).  Tests that must see a fresh interpreter (what it
    imports, a signal) start one; the rest save the interpreter's start and imports (about 0.5 s a run)."""
    import contextlib
    import io
    import subprocess

    from geomgen.cli import main

    args = [str(a) for a in args]
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(args)
    return subprocess.CompletedProcess(args, code, out.getvalue(), err.getvalue())


def read_plan(folder) -> dict:
    return json.loads((Path(folder) / "plan.json").read_text())


def web_entry(doc: dict, name: str) -> dict:
    return next(w for w in doc["webs"] if w["name"] == name)


# ------------------------------------------------------------------ the STEP, re-read
def step_solids(folder, name: str):
    """[(solid name, TopoDS_Shape)] of web-<name>.step."""
    from geomgen.export import read_step

    return read_step(Path(folder) / f"web-{name}.step")


def step_props(folder, name: str, *, web_density: float, plug_density: float | None = None):
    """OpenCascade exact MassProps of web-<name>.step: body at the web density, plug-N at the plug density."""
    from geomgen.verify import step_massprops

    names = [n for n, _ in step_solids(folder, name)]
    dens = {n: (web_density if n == "body" else plug_density) for n in names}
    return step_massprops(Path(folder) / f"web-{name}.step", dens)


def count_solids(shape) -> int:
    from OCP.TopAbs import TopAbs_SOLID
    from OCP.TopExp import TopExp_Explorer

    exp, n = TopExp_Explorer(shape, TopAbs_SOLID), 0
    while exp.More():
        n += 1
        exp.Next()
    return n


def assert_one_valid_body(folder, name: str, *, plugs: int = 0):
    """web-<name>.step holds exactly one solid named body, valid (BRepCheck_Analyzer), plus plug-1..plug-N."""
    from OCP.BRepCheck import BRepCheck_Analyzer

    solids = step_solids(folder, name)
    names = [n for n, _ in solids]
    assert names == ["body"] + [f"plug-{i + 1}" for i in range(plugs)], names
    body = solids[0][1]
    assert count_solids(body) == 1
    assert BRepCheck_Analyzer(body).IsValid()
    return body


def ring_volume_deficit(body, *, center, r_in, r_out, thickness) -> float:
    """Full annulus volume minus the body's volume inside it, mm^3 (0 when nothing cut into the ring).

    The annulus is an exact OpenCascade solid; Common and GProp are exact on
    planes and cylinders, so an intact wall zone gives 0 to ~1e-9 relative.
    """
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common, BRepAlgoAPI_Cut
    from OCP.BRepGProp import BRepGProp
    from OCP.BRepPrimAPI import BRepPrimAPI_MakeCylinder
    from OCP.gp import gp_Ax2, gp_Dir, gp_Pnt
    from OCP.GProp import GProp_GProps

    ax = gp_Ax2(gp_Pnt(center[0], center[1], -1.0), gp_Dir(0, 0, 1))
    outer = BRepPrimAPI_MakeCylinder(ax, r_out, thickness + 2.0).Shape()
    inner = BRepPrimAPI_MakeCylinder(ax, r_in, thickness + 2.0).Shape()
    ring = BRepAlgoAPI_Cut(outer, inner).Shape()
    common = BRepAlgoAPI_Common(body, ring).Shape()
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(common, props)
    full = math.pi * (r_out ** 2 - r_in ** 2) * thickness
    return full - props.Mass()


# ------------------------------------------------------------------ footprints and walls, rebuilt
def polar(r: float, a_deg: float) -> tuple[float, float]:
    a = math.radians(a_deg)
    return (-r * math.sin(a), r * math.cos(a))


def kidney_polygon(f: dict):
    """The kidney rebuilt from the contract's keys without geomgen: the union of every disc of
    corner_radius that fits the annular sector (its morphological opening), i.e. the set of points
    at least rc inside the sector grown by rc.  With rc = half the width that set is the mid arc
    (a slot with round ends)."""
    a0, a1 = f["angle_start"], f["angle_end"]
    ri, ro = f["r_inner"], f["r_outer"]
    rc = f.get("corner_radius", 0.0)
    span = (a1 - a0) % 360.0 or 360.0
    angles = np.linspace(a0, a0 + span, max(64, int(span * 8)))

    def sector(r_lo, r_hi):
        outer = [polar(r_hi, a) for a in angles]
        inner = [polar(r_lo, a) for a in angles[::-1]] if r_lo > 0 else [(0.0, 0.0)]
        return shapely.Polygon(outer + inner)

    if rc <= 0:
        return sector(ri, ro)
    if ro - ri - 2 * rc < 1e-9:
        core = shapely.LineString([polar(0.5 * (ri + ro), a) for a in angles])
    else:
        core = sector(ri + rc, ro - rc)
    sides = shapely.union_all([shapely.LineString([polar(ri, a), polar(ro, a)]).buffer(rc, quad_segs=QUAD)
                               for a in (a0, a0 + span)])
    return core.difference(sides).buffer(rc, quad_segs=QUAD)


def footprint(f: dict):
    """shapely polygon of a plan.json feature table (holes and plugs: circles)."""
    if f["kind"] == "pocket":
        return kidney_polygon(f)
    return shapely.Point(f["x"], f["y"]).buffer(0.5 * f["diameter"], quad_segs=QUAD)


def floor(f: dict, thickness: float) -> float | None:
    """Material left under a blind feature, mm (None for a through one): t - depth - drill point."""
    if f["kind"] == "hole":
        if f.get("through"):
            return None
        pa = f.get("point_angle", 118.0)
        point = 0.0 if pa >= 180 else 0.5 * f["diameter"] / math.tan(math.radians(0.5 * pa))
        return thickness - f["depth"] - point
    if f["kind"] == "plug":
        return None if f["length"] >= thickness - 1e-9 else thickness - f["length"]
    return thickness - f["depth"]


def _line(g):
    """The boundary of a region (its rings), or a line as it is."""
    return g.boundary if g.geom_type in ("Polygon", "MultiPolygon") else g


def distance(a, b, cap: float = math.inf) -> float:
    """shapely's `a.distance(b)` (to rounding) wherever it is below `cap`; at or above `cap` some value >= cap.

    GEOS measures two flattened circles (2048 segments each at QUAD) segment against segment, some 10 ms a
    pair; this gives the same figure on less of both.  Regions that meet are 0 apart; otherwise the distance
    is that of their boundaries, attained at points p* (on a) and q* (on b) with |p* - q*| = d.  Points of
    a and b a few nearest-point steps apart bound d from above by u, so with r = min(u, cap) and d <= r, p*
    lies within r of b's bounding box and q* within r of p*: clipping a's boundary to b's box grown by r,
    then b's to the clipped piece's box grown by r, keeps both, and the pieces (parts of the boundaries)
    are d apart (to rounding: a piece starts where GEOS cuts a segment).  If d > r the pieces are further
    apart than d, or empty.  The boxes' own gap is a lower bound: at or above cap it is returned as it is."""
    if a.intersects(b):
        return 0.0
    la, lb = _line(a), _line(b)
    gap = shapely.box(*la.bounds).distance(shapely.box(*lb.bounds))
    if gap >= cap:
        return gap
    q = shapely.Point(shapely.get_coordinates(lb)[0])
    for _ in range(3):
        p = shapely.ops.nearest_points(la, q)[0]
        q = shapely.ops.nearest_points(lb, p)[0]
    r = min(p.distance(q), cap) * (1.0 + 1e-9) + 1e-9       # a hair over: clip_by_rect keeps the box's edge

    def grown(g):
        x0, y0, x1, y1 = g.bounds
        return x0 - r, y0 - r, x1 + r, y1 + r

    piece_a = shapely.clip_by_rect(la, *grown(lb))
    if piece_a.is_empty:
        return math.inf
    piece_b = shapely.clip_by_rect(lb, *grown(piece_a))
    if piece_b.is_empty:
        return math.inf
    return piece_a.distance(piece_b)


def walls(features, *, outline, pin_center, pin_bore, bores=()) -> dict:
    """Smallest distances measured on the footprints, mm.

    outline : shapely Polygon of the rim (no bores)
    bores : [(x, y, diameter)] other than the pin bore (main bore)
    -> {"rim", "pin", "bores", "between"} (inf when there is nothing to measure)

    Each is the least of shapely's distances over its pairs (`distance`, each pair capped at the least
    found so far: a pair further apart cannot change the least).
    """
    polys = [footprint(f) for f in features]
    pin = shapely.Point(*pin_center).buffer(0.5 * pin_bore, quad_segs=QUAD)
    others = [shapely.Point(x, y).buffer(0.5 * d, quad_segs=QUAD) for x, y, d in bores]
    shapely.prepare(outline)
    out = {"rim": math.inf, "pin": math.inf, "bores": math.inf, "between": math.inf, "inside": True}

    def least(key, pairs):
        # nearest bounding boxes first, so the cap falls soon; a pair whose boxes are further apart than the
        # least found cannot be nearer
        gaps = [shapely.box(*a.bounds).distance(shapely.box(*b.bounds)) for a, b in pairs]
        for gap, (a, b) in sorted(zip(gaps, pairs), key=lambda item: item[0]):
            if gap >= out[key]:
                break
            out[key] = min(out[key], distance(a, b, out[key]))

    for p in polys:
        out["inside"] &= bool(outline.contains(p))
    least("rim", [(outline.exterior, p) for p in polys])
    least("pin", [(pin, p) for p in polys])
    least("bores", [(bore, p) for p in polys for bore in others])
    least("between", [(polys[i], polys[j]) for i in range(len(polys)) for j in range(i + 1, len(polys))])
    return out


def assert_walls(features, *, outline, pin_center, pin_bore, thickness, min_wall, pin_wall, max_depth,
                 bores=(), existing=()):
    """Every wall of the job's [correction] (README, "The job file") on the planned features, measured here."""
    w = walls(features, outline=outline, pin_center=pin_center, pin_bore=pin_bore, bores=bores)
    assert w["inside"], "a feature footprint leaves the outline"
    assert w["rim"] >= min_wall - WALL_SLACK, w
    assert w["pin"] >= max(pin_wall, min_wall) - WALL_SLACK, w
    assert w["bores"] >= min_wall - WALL_SLACK, w
    assert w["between"] >= min_wall - WALL_SLACK, w
    for f in features:
        fl = floor(f, thickness)
        if fl is not None:
            assert fl >= min_wall - 1e-6, (f, fl)
            depth = f["depth"] if f["kind"] != "plug" else f["length"]
            assert depth <= max_depth + 1e-6, (f, max_depth)
    for e in existing:
        pe = footprint(e)
        for f in features:
            assert distance(pe, footprint(f)) >= min_wall - WALL_SLACK, (e, f)
    return w


def disc_outline(diameter: float):
    return shapely.Point(0.0, 0.0).buffer(0.5 * diameter, quad_segs=QUAD)


# ------------------------------------------------------------------ DXF outlines written here
def arc_points(center, radius, a0_deg, a1_deg, n=400):
    """Points along an arc from a0 to a1, deg from +X counter-clockwise (ezdxf's convention)."""
    a = np.radians(np.linspace(a0_deg, a1_deg, n))
    return list(zip(center[0] + radius * np.cos(a), center[1] + radius * np.sin(a)))


def pear_geometry(*, r_big: float, y_big: float, r_small: float, y_pin: float):
    """A teardrop web: a big arc about (0, y_big) on the counterweight side, a smaller arc about the
    pin (0, y_pin), joined by the two outer tangent lines.

    -> (arcs, lines): arcs [(center, r, start_deg, end_deg)] ccw from +X; lines [(p, q)].
    The outer tangent's normal n satisfies n . (C2 - C1) = r_big - r_small (closed form).
    """
    d = y_pin - y_big
    ny = (r_big - r_small) / d
    if not -1 < ny < 1:
        raise ValueError("the small circle must stick out of the big one")
    th_r = math.degrees(math.atan2(ny, math.sqrt(1 - ny * ny)))
    th_l = 180.0 - th_r
    big = ((0.0, y_big), r_big, th_l, th_r + 360.0)     # the long way round, through -Y
    small = ((0.0, y_pin), r_small, th_r, th_l)          # over the top
    def at(c, r, th):
        return (c[0] + r * math.cos(math.radians(th)), c[1] + r * math.sin(math.radians(th)))
    lines = [(at(*big[:2], th_r), at(*small[:2], th_r)), (at(*small[:2], th_l), at(*big[:2], th_l))]
    return [big, small], lines


def flats_geometry(*, radius: float, flat_x: float):
    """A circle of `radius` with two vertical flats at x = +-flat_x (symmetric about Y)."""
    b = math.degrees(math.acos(flat_x / radius))
    arcs = [((0.0, 0.0), radius, b, 180.0 - b), ((0.0, 0.0), radius, 180.0 + b, 360.0 - b)]
    def at(th):
        return (radius * math.cos(math.radians(th)), radius * math.sin(math.radians(th)))
    lines = [(at(180.0 - b), at(180.0 + b)), (at(360.0 - b), at(b))]
    return arcs, lines


def write_outline_dxf(path, arcs, lines, circles=()):
    """ARC and LINE entities (and CIRCLEs, e.g. a drawn pin bore) in mm ($INSUNITS = 4)."""
    import ezdxf

    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4
    msp = doc.modelspace()
    for c, r, a0, a1 in arcs:
        msp.add_arc(c, r, a0 % 360.0, a1 % 360.0)
    for p, q in lines:
        msp.add_line(p, q)
    for c, r in circles:
        msp.add_circle(c, r)
    doc.saveas(path)
    return Path(path)


def outline_polygon(arcs, lines):
    """The same outline as a shapely polygon, from the arcs in the order drawn (inscribed, sagitta < 1e-4 mm)."""
    pts = []
    for c, r, a0, a1 in arcs:
        pts.append(arc_points(c, r, a0, a1, n=2000))
    # chain: arcs and lines alternate around the outline; sort the pieces by walking from the first arc
    pieces = [list(p) for p in pts] + [list(l) for l in lines]
    ring = pieces.pop(0)
    while pieces:
        end = ring[-1]
        k = min(range(len(pieces)), key=lambda i: min(math.dist(end, pieces[i][0]), math.dist(end, pieces[i][-1])))
        piece = pieces.pop(k)
        if math.dist(end, piece[-1]) < math.dist(end, piece[0]):
            piece = piece[::-1]
        ring.extend(piece[1:])
    poly = shapely.Polygon(ring)
    assert poly.is_valid
    return poly
