"""Closed outlines from a DXF drawing, as exact loops (geomgen.loops).

The drawing's model space is read with ezdxf.  LINE, ARC, CIRCLE,
LWPOLYLINE / POLYLINE (with bulges), SPLINE and ELLIPSE are taken; other
entities (text, dimensions, hatches, points ...) are ignored.  Every entity
stays the curve it is: lines and arcs as Line / Arc, an ELLIPSE as an
EllipseArc, a SPLINE as a Spline of its own poles, knots and weights (a
spline drawn by fit points only is turned into poles by ezdxf's
`construction_tool`, the interpolation CAD programs use).  A closed periodic
spline is read on its parameter domain [knots[p], knots[n]], including the
form with n + 1 knots that the DXF reference gives for periodic splines, so
its two ends meet; every point a message names is a point on the curve, never
a control point.

Arcs are placed where they are drawn: an ARC or CIRCLE lives in its object
coordinate system (OCS), and one with extrusion (0, 0, -1) — a mirrored arc —
has its x axis reversed and runs clockwise in the world frame.  The OCS is
undone here, with ezdxf's own `ocs().to_wcs`.

Open pieces are chained end to end when their ends lie within `gap_tol`
(mm, the job key `outline_gap`, default GAP_TOL_MM: CAD exports commonly
leave gaps of a few micrometres up to 0.01 mm between entities that the
designer drew as meeting, common practice).  The gap is closed so the loop is
exact and valid: the end of an adjoining line moves onto the other end, or
the end pole of a spline does (the curve then moves by at most the gap), or
an arc is lengthened or shortened to the nearest point and a line of the
remaining length (across the arc) bridges it.  Anything else is bad input
with the place named: an open loop (the gap, its ends and the key that
joins them), three ends meeting at one point, a self-crossing loop, two
outer loops.

Units come from the header variable $INSUNITS; a unitless drawing (0) needs
the unit from the caller (the job key `outline_units`).  A unit the caller
gives overrides the header, because the header of many files only carries
the default of the program that wrote them (ezdxf.new() writes metres).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import shapely

from .errors import BadInput
from .job import OUTLINE_GAP_MAX_MM, OUTLINE_GAP_MM
from .loops import CURVES, Arc, EllipseArc, Line, Loop, Spline

#: default chaining tolerance, mm: ends closer than this are the same point (the job key outline_gap)
GAP_TOL_MM = OUTLINE_GAP_MM
#: the largest chaining tolerance a job may ask, mm
GAP_MAX_MM = OUTLINE_GAP_MAX_MM
#: ends this close are one point as they are, mm: round-off of the entities' own maths (1e-15 mm), far
#: below the kernel's confusion distance (1e-7 mm), so no zero-length bridge is ever made
SAME_POINT_MM = 1e-9
#: chordal deviation of the polygons used for validity and containment, mm
CHECK_CHORD_MM = 1e-3

#: mm per drawing unit for the $INSUNITS codes of the DXF reference
INSUNITS_MM = {
    1: 25.4,          # inches
    2: 304.8,         # feet
    4: 1.0,           # millimetres
    5: 10.0,          # centimetres
    6: 1000.0,        # metres
    8: 25.4e-6,       # microinches
    9: 25.4e-3,       # mils
    10: 914.4,        # yards
    13: 1e-3,         # micrometres
    14: 100.0,        # decimetres
}
#: the names of those codes, for messages (0 = unitless)
INSUNITS_NAMES = {0: "unitless", 1: "inches", 2: "feet", 3: "miles", 4: "millimetres", 5: "centimetres",
                  6: "metres", 7: "kilometres", 8: "microinches", 9: "mils", 10: "yards", 11: "angstroms",
                  12: "nanometres", 13: "micrometres", 14: "decimetres"}
#: units a caller may give for a unitless drawing
UNIT_NAMES_MM = {"mm": 1.0, "in": 25.4, "inch": 25.4, "cm": 10.0, "m": 1000.0}


@dataclass(frozen=True)
class Outline:
    """The closed loops of a drawing, in mm.

    outer : Loop, counter-clockwise — the loop that contains all others
    inner : tuple of Loop, each counter-clockwise — bores and holes inside it
    mm_per_unit : the drawing unit used, mm
    source : the file name, for messages
    header_units : the drawing's $INSUNITS code (0 when absent)
    units_given : the unit the caller gave ("mm", "in", ...), None when the header's was used
    """

    outer: Loop
    inner: tuple
    mm_per_unit: float
    source: str
    header_units: int = 0
    units_given: str | None = None

    def units_said(self, *, override: str) -> str:
        """How the unit was chosen, for a message about the outline's size.

        override : how the caller names the unit option ("outline_units" in a job, "--units" for inspect).
        """
        code = self.header_units
        header = f"the DXF header says $INSUNITS = {code} ({INSUNITS_NAMES.get(code, 'not a known unit')})"
        if self.units_given is not None:
            given = f"--units {self.units_given}" if override == "--units" else f'{override} = "{self.units_given}"'
            return f"{header}, and {given} was given"
        return f"{header}, read as {self.mm_per_unit:g} mm per drawing unit"

    def units_that_fit(self, size_mm: float, lo: float, hi: float) -> list[str]:
        """The unit names under which a size read as `size_mm` would lie within (lo, hi] mm."""
        drawn = size_mm / self.mm_per_unit
        return [name for name, mm in UNIT_NAMES_MM.items() if name != "inch" and lo < drawn * mm <= hi]


# --------------------------------------------------------------------------
# entities -> pieces
# --------------------------------------------------------------------------

def _fmt(p) -> str:
    return f"({p[0]:.6g}, {p[1]:.6g})"


def _check_planar(entity, where: str) -> None:
    ez = entity.dxf.get("extrusion", (0.0, 0.0, 1.0))
    if abs(abs(float(ez[2])) - 1.0) > 1e-9:
        raise BadInput(f"{where}: {entity.dxftype()} {entity.dxf.handle} is not drawn in the XY plane "
                       f"(extrusion {tuple(round(float(v), 6) for v in ez)}); the outline must lie in XY")


def _arc_from_entity(entity, scale: float, where: str, full: bool = False) -> Arc:
    """An ARC or CIRCLE entity as a world-frame Arc (mm), OCS undone."""
    _check_planar(entity, where)
    ocs = entity.ocs()
    c = ocs.to_wcs(entity.dxf.center)
    r = float(entity.dxf.radius) * scale
    if not r > 0:
        raise BadInput(f"{where}: {entity.dxftype()} {entity.dxf.handle} has radius {entity.dxf.radius}; must be > 0")
    flip = float(entity.dxf.get("extrusion", (0, 0, 1))[2]) < 0  # OCS x axis reversed: arc runs cw in WCS
    if full:
        start_ocs, sweep = 0.0, 360.0
    else:
        a0 = float(entity.dxf.start_angle)
        a1 = float(entity.dxf.end_angle)
        start_ocs = a0
        sweep = (a1 - a0) % 360.0 or 360.0
    p0 = ocs.to_wcs((math.cos(math.radians(start_ocs)) * entity.dxf.radius + entity.dxf.center[0],
                     math.sin(math.radians(start_ocs)) * entity.dxf.radius + entity.dxf.center[1],
                     entity.dxf.center[2]))
    start_w = math.degrees(math.atan2(p0[1] - c[1], p0[0] - c[0]))
    return Arc((c[0] * scale, c[1] * scale), r, start_w, -sweep if flip else sweep)


def _spline_from_entity(entity, scale: float, where: str) -> Spline:
    """A SPLINE entity as a world-frame Spline (mm) on its parameter domain.

    Control points, knots and weights as drawn (SPLINE coordinates are world coordinates); a spline
    of fit points only through ezdxf's `construction_tool` (the cubic interpolation CAD programs
    use).  A periodic spline stored the DXF reference's way, n control points and n + 1 knots, is
    unwrapped: the first p poles repeated at the end and the knots continued by their period."""
    handle = f"SPLINE {entity.dxf.handle}"
    try:
        n = entity.control_point_count()
        p = int(entity.dxf.degree)
        knots = [float(k) for k in entity.knots]
        periodic = bool(entity.dxf.flags & entity.PERIODIC)
        if n and periodic and p >= 1 and len(knots) == n + 1:
            cps = np.array([(v[0], v[1], v[2]) for v in entity.control_points], dtype=float)
            weights = [float(w) for w in entity.weights]
            period = knots[-1] - knots[0]
            cps = np.vstack([cps, cps[:p]])
            weights = weights + weights[:p] if weights else []
            knots = ([knots[n - p + i] - period for i in range(p)] + knots
                     + [knots[i + 1] + period for i in range(p)])
        else:
            tool = entity.construction_tool()
            cps = np.array([(v.x, v.y, v.z) for v in tool.control_points], dtype=float)
            knots, weights, p = list(tool.knots()), list(tool.weights()), tool.degree
    except (ValueError, IndexError, ZeroDivisionError) as exc:
        raise BadInput(f"{where}: {handle} cannot be read as a B-spline ({exc})") from None
    if len(cps) and np.ptp(cps[:, 2]) > 1e-9 * max(1.0, float(np.abs(cps).max())):
        raise BadInput(f"{where}: {handle} is not drawn in a plane parallel to XY (its control points span "
                       f"z {cps[:, 2].min():.6g} .. {cps[:, 2].max():.6g}); the outline must lie in XY")
    try:
        return Spline.from_nurbs(p, cps[:, :2] * scale, knots, weights)
    except ValueError as exc:
        raise BadInput(f"{where}: {handle} is not a valid B-spline ({exc})") from None


def _ellipse_from_entity(entity, scale: float, where: str) -> EllipseArc:
    """An ELLIPSE entity as a world-frame EllipseArc (mm): ezdxf's construction tool gives its axes in
    world coordinates (a mirrored ellipse, extrusion -Z, has its minor axis on the clockwise side)."""
    _check_planar(entity, where)
    e = entity.construction_tool()
    t0 = float(e.start_param)
    sweep = (float(e.end_param) - t0) % (2 * math.pi)
    if sweep <= 1e-12 or sweep >= 2 * math.pi - 1e-12:
        sweep = 2 * math.pi
    try:
        return EllipseArc((e.center.x * scale, e.center.y * scale), (e.major_axis.x * scale, e.major_axis.y * scale),
                          (e.minor_axis.x * scale, e.minor_axis.y * scale), t0, t0 + sweep)
    except ValueError as exc:
        raise BadInput(f"{where}: ELLIPSE {entity.dxf.handle} is not a valid ellipse ({exc})") from None


def _pieces(msp, scale: float, where: str):
    """Closed loops and open pieces (lists of segments) from model space."""
    closed: list[Loop] = []
    open_pieces: list[list] = []

    def add_entity(e):
        kind = e.dxftype()
        if kind == "LINE":
            s, t = e.dxf.start, e.dxf.end
            seg = Line((s[0] * scale, s[1] * scale), (t[0] * scale, t[1] * scale))
            if seg.length > 1e-12:
                open_pieces.append([seg])
        elif kind == "ARC":
            open_pieces.append([_arc_from_entity(e, scale, where)])
        elif kind == "CIRCLE":
            arc = _arc_from_entity(e, scale, where, full=True)
            # two half arcs, as loops.circle makes them
            closed.append(Loop((Arc(arc.center, arc.radius, arc.start_deg, 0.5 * arc.sweep_deg),
                                Arc(arc.center, arc.radius, arc.start_deg + 0.5 * arc.sweep_deg,
                                    0.5 * arc.sweep_deg))))
        elif kind in ("LWPOLYLINE", "POLYLINE"):
            if kind == "POLYLINE" and not (e.is_2d_polyline or e.is_3d_polyline):
                return  # polyface / polygon meshes are not outlines
            _check_planar(e, where)
            segs = []
            for v in e.virtual_entities():
                if v.dxftype() == "LINE":
                    s, t = v.dxf.start, v.dxf.end
                    line = Line((s[0] * scale, s[1] * scale), (t[0] * scale, t[1] * scale))
                    if line.length > 1e-12:
                        segs.append(line)
                elif v.dxftype() == "ARC":
                    segs.append(_arc_from_entity(v, scale, where))
            if segs:
                open_pieces.extend(_split_polyline(segs))
        elif kind == "SPLINE":
            open_pieces.append([_spline_from_entity(e, scale, where)])
        elif kind == "ELLIPSE":
            arc = _ellipse_from_entity(e, scale, where)
            if arc.is_full:
                closed.append(Loop((arc,)))
            else:
                open_pieces.append([arc])

    for entity in msp:
        add_entity(entity)
    return closed, open_pieces


def _split_polyline(segs):
    """A polyline's segments as one piece, oriented head to tail.

    Virtual ARC entities of a polyline are always ccw in their OCS, so an arc
    drawn clockwise comes back reversed; turn each to follow the chain.
    """
    out = [segs[0]]
    if len(segs) > 1:
        # orient the first segment towards the second
        s0, s1 = segs[0], segs[1]
        if min(math.dist(s0.start, s1.start), math.dist(s0.start, s1.end)) < \
           min(math.dist(s0.end, s1.start), math.dist(s0.end, s1.end)):
            out = [s0.reversed()]
    for s in segs[1:]:
        if math.dist(s.end, out[-1].end) < math.dist(s.start, out[-1].end):
            s = s.reversed()
        out.append(s)
    return [out]


# --------------------------------------------------------------------------
# chaining
# --------------------------------------------------------------------------

def _arc_towards(arc: Arc, point, *, at_end: bool) -> Arc:
    """The arc lengthened or shortened, at its end (or start), to the point of its circle nearest
    `point`; the arc itself when that would turn it inside out."""
    cx, cy = arc.center
    ang = math.degrees(math.atan2(point[1] - cy, point[0] - cx))
    if at_end:
        delta = (ang - arc.end_deg + 180.0) % 360.0 - 180.0
        sweep = arc.sweep_deg + delta
        start = arc.start_deg
    else:
        delta = (ang - arc.start_deg + 180.0) % 360.0 - 180.0
        sweep = arc.sweep_deg - delta
        start = arc.start_deg + delta
    if sweep * arc.sweep_deg <= 0 or abs(sweep) > 360.0:
        return arc
    return Arc(arc.center, arc.radius, start, sweep)


def _bridge(a, b) -> tuple:
    """(a', [lines], b'): segment `a` and `b` with the small gap from a's end to b's start closed.

    A line's end moves onto the other end; else a spline's end pole does; else an arc is brought to
    the point of its circle nearest the other end and a line bridges what is left (across the arc,
    so the loop never doubles back on itself); else a line bridges the gap."""
    gap = math.dist(a.end, b.start)
    if gap <= SAME_POINT_MM:
        return a, [], b
    if isinstance(b, Line) and b.length > 2 * gap:
        return a, [], Line(a.end, b.end)
    if isinstance(a, Line) and a.length > 2 * gap:
        return Line(a.start, b.start), [], b
    if isinstance(b, Spline):
        return a, [], b.with_ends(start=a.end)
    if isinstance(a, Spline):
        return a.with_ends(end=b.start), [], b
    if isinstance(a, Arc):
        a = _arc_towards(a, b.start, at_end=True)
    elif isinstance(b, Arc):
        b = _arc_towards(b, a.end, at_end=False)
    return a, ([] if math.dist(a.end, b.start) <= SAME_POINT_MM else [Line(a.end, b.start)]), b


def _join(segs: list, nxt) -> None:
    """Append segment `nxt` to `segs`, closing the small gap between them."""
    prev, extra, nxt = _bridge(segs[-1], nxt)
    segs[-1] = prev
    segs.extend(extra)
    segs.append(nxt)


def _close(segs: list) -> list:
    """Close the gap between the last segment's end and the first's start."""
    if len(segs) == 1:
        only = segs[0]
        if math.dist(only.end, only.start) <= SAME_POINT_MM:
            return segs
        if isinstance(only, Spline):       # a closed spline whose ends miss by a little
            return [only.with_ends(end=only.start)]
        return [only, Line(only.end, only.start)]
    last, extra, first = _bridge(segs[-1], segs[0])
    return [first] + segs[1:-1] + [last] + extra


def _gap_help(gap_tol: float, gap_key: str | None) -> str:
    """What a message about an open loop says of the joining tolerance."""
    if gap_key is None:
        return f"ends closer than {gap_tol:g} mm are joined"
    return f"{gap_key} = {gap_tol:g} mm joins closer ends; it may be raised to {GAP_MAX_MM:g} mm for export noise"


def _chain(open_pieces: list, gap_tol: float, source: str, gap_key: str | None = "outline_gap") -> list[Loop]:
    """Open pieces joined end to end into closed loops."""
    loops = []
    pieces = []
    for piece in open_pieces:
        # a piece closing on itself (a closed polyline, a closed spline) is a loop already
        closes = len(piece) > 1 or isinstance(piece[0], CURVES)
        if closes and math.dist(piece[0].start, piece[-1].end) <= gap_tol:
            loops.append(Loop(tuple(_close(list(piece)))))
        else:
            pieces.append(piece)
    if not pieces:
        return loops
    ends = np.array([p for piece in pieces for p in (piece[0].start, piece[-1].end)])
    n = len(ends)
    dist = np.linalg.norm(ends[:, None, :] - ends[None, :, :], axis=2)
    dist[np.arange(n), np.arange(n)] = np.inf
    dist[np.arange(0, n, 2), np.arange(1, n, 2)] = np.inf  # a piece's own two ends
    dist[np.arange(1, n, 2), np.arange(0, n, 2)] = np.inf
    near = dist <= gap_tol
    degree = near.sum(axis=1)
    free = np.flatnonzero(degree == 0)
    if free.size:
        i = int(free[0])
        others = [j for j in free if j != i]
        if others:
            j = min(others, key=lambda k: math.dist(ends[i], ends[k]))
            gap = math.dist(ends[i], ends[j])   # the true distance, also between one curve's own two ends
            raise BadInput(f"{source}: open loop: a gap of {gap:.4g} mm between {_fmt(ends[i])} "
                           f"and {_fmt(ends[j])} ({_gap_help(gap_tol, gap_key)}); close it in the drawing")
        raise BadInput(f"{source}: open loop: the outline ends at {_fmt(ends[i])} with no other end "
                       f"within {gap_tol:g} mm ({_gap_help(gap_tol, gap_key)}); close it in the drawing")
    branch = np.flatnonzero(degree > 1)
    if branch.size:
        raise BadInput(f"{source}: {int(degree[branch[0]]) + 1} ends meet at {_fmt(ends[branch[0]])}; "
                       "each point of an outline must join exactly two curves (remove doubled or crossing lines)")
    partner = near.argmax(axis=1)
    used = np.zeros(len(pieces), dtype=bool)
    for k in range(len(pieces)):
        if used[k]:
            continue
        used[k] = True
        segs = list(pieces[k])
        end_idx = 2 * k + 1
        while True:
            j = int(partner[end_idx])
            other = j // 2
            if other == k:
                break
            if used[other]:
                raise BadInput(f"{source}: the curves meeting at {_fmt(ends[j])} do not form a simple loop")
            used[other] = True
            piece = pieces[other]
            if j % 2 == 1:  # joined at its end: walk it backwards
                piece = [s.reversed() for s in reversed(piece)]
                end_idx = j - 1
            else:
                end_idx = j + 1
            for s in piece:
                _join(segs, s)
        loops.append(Loop(tuple(_close(segs))))
    return loops


# --------------------------------------------------------------------------
# reading
# --------------------------------------------------------------------------

def _mm_per_unit(doc, units: str | None, source: str) -> float:
    if units is not None:
        key = str(units).strip().lower()
        if key not in UNIT_NAMES_MM:
            raise BadInput(f"outline_units: must be one of {', '.join(UNIT_NAMES_MM)}, got {units!r}")
        return UNIT_NAMES_MM[key]
    code = int(doc.header.get("$INSUNITS", 0))
    if code == 0:
        raise BadInput(f"{source}: the drawing is unitless ($INSUNITS = 0); give outline_units = \"mm\" or \"in\"")
    if code not in INSUNITS_MM:
        raise BadInput(f"{source}: drawing unit $INSUNITS = {code} is not a length unit geomgen reads "
                       f"({', '.join(str(k) for k in INSUNITS_MM)}); give outline_units = \"mm\" or \"in\"")
    return INSUNITS_MM[code]


def _valid_polygon(loop: Loop, source: str):
    """The loop's polygon for containment checks; BadInput if it crosses itself.

    A crossing whose lobes hold no area worth naming (below 1e-9 of the
    loop's area: two arcs joined across a 1e-6 gap where both run
    tangentially) is not a fault of the drawing; the repaired polygon is used.
    """
    poly = loop.polygon(CHECK_CHORD_MM)
    if poly.is_valid:
        return poly
    repaired = shapely.make_valid(poly)
    ring_area = poly.area  # the shoelace sum of the ring: lobes of opposite winding cancel
    if ring_area > 0 and abs(repaired.area - ring_area) <= 1e-9 * ring_area:
        return repaired
    why = shapely.is_valid_reason(poly)
    raise BadInput(f"{source}: self-crossing loop ({why}); the loop starting at "
                   f"{_fmt(loop.segments[0].start)} must not cross itself")


def read_outline(path, *, units: str | None = None, gap_tol: float = GAP_TOL_MM,
                 where: str = "outline", gap_key: str | None = "outline_gap") -> Outline:
    """The outer loop and the inner loops of a DXF drawing, in mm.

    path : the DXF file;  units : "mm" | "in" | "cm" | "m" for a unitless
    drawing (overrides $INSUNITS when given);  gap_tol : mm, ends closer than
    this are joined;  where : the job key named in messages;  gap_key : the
    key that sets gap_tol, named in an open-loop message (None: none to name).
    Raises BadInput for a missing or unreadable file and for every fault of
    the outline (see the module notes).
    """
    import ezdxf  # at the edge: only a DXF outline needs it

    path = Path(path)
    source = f"{where} {path}"
    if not path.is_file():
        raise BadInput(f"{source}: file not found")
    try:
        doc = ezdxf.readfile(str(path))
    except (OSError, ezdxf.DXFError, UnicodeDecodeError, ValueError) as exc:
        raise BadInput(f"{source}: not a readable DXF file ({type(exc).__name__}: {exc})") from None
    scale = _mm_per_unit(doc, units, source)
    closed, open_pieces = _pieces(doc.modelspace(), scale, source)
    if not (gap_tol > 0 and math.isfinite(gap_tol)):
        raise ValueError(f"gap_tol must be > 0 mm, got {gap_tol}")
    loops = closed + _chain(open_pieces, gap_tol, source, gap_key)
    if not loops:
        raise BadInput(f"{source}: no closed outline found (LINE, ARC, CIRCLE, LWPOLYLINE, SPLINE, ELLIPSE)")
    loops = [loop.oriented(True) for loop in loops]
    polys = [_valid_polygon(loop, source) for loop in loops]
    # the outer loop contains every other; containment by area order
    order = sorted(range(len(loops)), key=lambda i: -polys[i].area)
    outer_i = order[0]
    outer_poly = polys[outer_i]
    inner = []
    for i in order[1:]:
        if not outer_poly.contains(polys[i]):
            if outer_poly.intersects(polys[i]) and not outer_poly.touches(polys[i]):
                raise BadInput(f"{source}: the loop starting at {_fmt(loops[i].segments[0].start)} crosses "
                               "the outer loop")
            raise BadInput(f"{source}: two outer loops: the loop starting at {_fmt(loops[i].segments[0].start)} "
                           f"lies outside the loop starting at {_fmt(loops[outer_i].segments[0].start)}; "
                           "draw one web per file")
        for k in inner:
            if polys[k].contains(polys[i]):
                raise BadInput(f"{source}: the loop starting at {_fmt(loops[i].segments[0].start)} lies inside "
                               f"the bore starting at {_fmt(loops[k].segments[0].start)}; islands are not allowed")
        inner.append(i)
    return Outline(loops[outer_i], tuple(loops[i] for i in inner), scale, str(path),
                   header_units=int(doc.header.get("$INSUNITS", 0)),
                   units_given=None if units is None else str(units).strip().lower())
