"""Check a program against the plan, from what the program does (simulate.py), not from how it was written.

What is expected comes from the planned features themselves (web frame -> face view, geomgen.plugbore
for plug bores, the sheet's drill travel) and the job's [machining] heights; what is found comes from the
program's text read back by pygcode.  The rules:

1. the program's units are the sheet's (G21 mm / G20 inch), absolute (G90) in the XY plane (G17), only
   plain codes, ended by M30 with the spindle stopped; every tool it uses is declared in its header;
2. before every cut: a tool in the spindle (M6), its own length offset (G43 H = T), the spindle running
   forwards (M3) at S <= the machine's top speed, a feed F > 0 and <= max_feed;
3. no rapid below the R plane above the part: a rapid that moves in X or Y stays at or above it, a
   rapid down ends at or above it (a canned cycle's R plane, too, keeps `retract` above the part where
   it drills); only straight-up rapids (retracts) and a peck cycle's own moves inside its hole start lower;
4. every feed move below the surface lies inside the allowed region of one planned feature for the tool
   in the spindle: its path (with the tool's radius) inside the feature's footprint and no deeper than
   its floor for that tool (a drill of the hole's diameter to the sheet's drill travel; a plug bore's
   drill, end mill and reamer to theirs; an end mill in a pocket no deeper than its floor, the tool's
   radius no more than the corner radius);
5. every hole and plug bore drilled once, at its position (to the program's resolution) and to its drill
   travel, by a drill of its size; every plug bore's flat bottom or opening swept clear by the end mill
   and its bore reamed by a reamer of its size to its depth, leaving by a feed; every pocket's floor swept
   clear (nothing left wider than 0.1 mm);
6. no plunge of an end mill into uncut metal: an end mill going down steeper than the ramp angle ends no
   deeper than what is already cleared under the whole tool;
7. rim set-up: an M0 stop with the spindle stopped before each radial hole, drilled in the plan's order.

A mismatch is a bug in geomgen (exit code 4, as a solid that disagrees with its prediction).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely

from ..errors import VerificationFailed
from ..kinds.base import point_length
from ..plugbore import plug_bore
from .geometry import face_loop
from .simulate import INCH, Simulation, simulate

#: region containment and coverage tolerance, mm (polygonised arcs and the program's rounding)
REGION_TOL = 0.01
#: what may be left uncut on a floor, mm across
COVER_TOL = 0.05


@dataclass(frozen=True)
class Region:
    """Where one tool kind may cut for one feature (face view, mm): footprint polygon and the lowest Z."""

    number: int
    kind: str                 # tool kind: drill | end_mill | reamer
    footprint: object         # shapely Polygon
    floor: float              # lowest tool-tip Z allowed, mm (negative: below the face)
    diameter: float | None    # the tool diameter it must have (None: any within max_radius)
    max_radius: float | None  # an end mill's largest radius (a pocket's corner radius)
    section: int | None = None  # rim set-up: which radial hole (by M0 count)


@dataclass(frozen=True)
class Checked:
    """A program that passed: its simulation and what it was found to do."""

    simulation: Simulation
    time_s: float
    lines: tuple[str, ...]


def _resolution(units: str) -> float:
    return 0.001 if units == "mm" else 0.0001 * INCH


def _circle(x: float, y: float, r: float):
    return shapely.Point(x, y).buffer(r, quad_segs=64)


def _quad(r: float) -> int:
    """Buffer segments per quarter circle so that the polygon is within 0.005 mm of the circle."""
    return max(8, math.ceil(0.5 * math.pi / math.acos(max(-1.0, 1.0 - 0.005 / max(r, 0.005)))))


class _Expect:
    """What the plan asks of one program."""

    def __init__(self, prog):
        self.prog = prog
        m = prog.machining
        c = prog.job.correction
        self.rim = prog.face == "rim"
        self.regions: list[Region] = []
        self.drilled: list[tuple] = []        # (number, x, y, drill d, tip z, section)
        self.cleared: list[tuple] = []        # (number, polygon, floor z, what)
        self.reamed: list[tuple] = []         # (number, x, y, d, z reach)
        t = prog.thickness
        for k, (n, f) in enumerate(prog.features):
            if self.rim:
                tip = f.entry - f.depth - f.point_length
                fp = _circle(f.z, 0.0, 0.5 * f.diameter)
                self.regions.append(Region(n, "drill", fp, tip, f.diameter, None, section=k))
                self.drilled.append((n, f.z, 0.0, f.diameter, tip, k, f._outermost()))
                continue
            x = -f.x if prog.face == "inner" and hasattr(f, "x") else getattr(f, "x", 0.0)
            if f.kind == "hole":
                tip = (t if f.through else f.depth) + point_length(f.diameter, f.point_angle)
                self.regions.append(Region(n, "drill", _circle(x, f.y, 0.5 * f.diameter), -tip, f.diameter, None))
                self.drilled.append((n, x, f.y, f.diameter, -tip, None, 0.0))
            elif f.kind == "plug":
                b = plug_bore(diameter_mm=f.diameter, length_mm=f.length, thickness_mm=t, drills=c.drills,
                              point_angle_deg=c.point_angle, fit=c.plug_fit)
                floor = -(b.depth_mm + (m.breakthrough if b.through else 0.0))
                self.regions.append(Region(n, "drill", _circle(x, f.y, 0.5 * f.diameter), -b.tip_depth_mm,
                                           b.drill_mm, None))
                self.regions.append(Region(n, "end_mill", _circle(x, f.y, 0.5 * b.pre_ream_mm), floor, None,
                                           None))
                self.regions.append(Region(n, "reamer", _circle(x, f.y, 0.5 * f.diameter), floor, f.diameter,
                                           None))
                self.drilled.append((n, x, f.y, b.drill_mm, -b.tip_depth_mm, None, 0.0))
                if b.opened or not b.through:
                    self.cleared.append((n, _circle(x, f.y, 0.5 * b.pre_ream_mm), -b.depth_mm,
                                         "plug bore's " + ("opening" if b.through else "flat bottom")))
                self.reamed.append((n, x, f.y, f.diameter, -b.depth_mm))
            elif f.kind == "pocket":
                fp = face_loop(f.footprint(), prog.face).polygon(0.001)
                self.regions.append(Region(n, "end_mill", fp, -f.depth, None, f.corner_radius))
                self.cleared.append((n, fp, -f.depth, "pocket's floor"))


def _fail(prog, errors: list[str]) -> None:
    more = f" (and {len(errors) - 1} more: {'; '.join(errors[1:4])})" if len(errors) > 1 else ""
    raise VerificationFailed(f"{prog.name}: the program disagrees with the plan: {errors[0]}{more}")


def check(prog) -> Checked:
    """Read `prog` (a program.NCProgram) back, simulate it and hold it to the plan; VerificationFailed if not."""
    sim = simulate(prog.text)
    errors = list(sim.errors)
    m = prog.machining
    units = prog.job.output.sheet_units
    res = _resolution(units)
    pos_tol = 1.5 * res
    exp = _Expect(prog)
    # ---- 1: the program as a whole
    if sim.units != units:
        errors.append(f"units {sim.units or 'not set'}, the sheet is in {units}")
    if not sim.plane_xy:
        errors.append("the XY plane (G17) is not set")
    if not sim.ended:
        errors.append("no M30 at the end")
    elif sim.spindle_at_end > 0:
        errors.append("the spindle still runs at M30")
    for mv in sim.moves:
        if mv.tool is not None and mv.tool not in sim.declared:
            errors.append(f"line {mv.line}: T{mv.tool} is not in the header's tool list")
            break
    top_all = prog.section.rim_radius_max if exp.rim else 0.0
    cut_moves = []
    deepest: dict[int, float] = {}
    for mv in sim.moves:
        # ---- 2: tool, offset, spindle, feed before every cut
        if not mv.rapid:
            where = f"line {mv.line}"
            if mv.tool is None:
                errors.append(f"{where}: a feed move with no tool loaded")
            elif mv.offset != mv.tool:
                errors.append(f"{where}: T{mv.tool} cuts with tool length offset H{mv.offset}")
            if mv.spindle <= 0:
                errors.append(f"{where}: a feed move with the spindle stopped")
            elif mv.spindle > m.max_spindle_rpm + 0.5:
                errors.append(f"{where}: S{mv.spindle:g} is above the spindle's {m.max_spindle_rpm:g} rpm")
            if not mv.feed > 0:
                errors.append(f"{where}: a feed move with no feed rate")
            elif mv.feed > m.max_feed * (1 + 1e-6) + res:
                errors.append(f"{where}: F {mv.feed:.1f} mm/min is above machining.max_feed")
        # ---- 3: rapids
        if mv.rapid and mv.z_unknown and math.isfinite(mv.end[2]) and mv.end[2] < top_all + m.retract - pos_tol:
            errors.append(f"line {mv.line}: a rapid down to Z{mv.end[2]:.3f} mm, below the R plane over the part")
        if mv.rapid and not mv.z_unknown:
            moves_xy = math.dist(mv.start[:2], mv.end[:2]) > 1e-9
            low = min(mv.start[2], mv.end[2])
            if mv.cycle is not None and mv.phase == "to_r" and not moves_xy:
                local = _local_top(exp, mv, top_all)
                if mv.end[2] < local + m.retract - pos_tol and mv.end[2] < mv.start[2]:
                    errors.append(f"line {mv.line}: the {mv.cycle} R plane Z{mv.end[2]:.3f} mm is less than "
                                  f"{m.retract:g} mm above the part")
            elif mv.cycle is not None and mv.phase in ("peck_in", "out"):
                pass                                # inside the cycle's own hole, straight up or down
            elif moves_xy and low < top_all + m.retract - pos_tol:
                errors.append(f"line {mv.line}: a rapid at Z{low:.3f} mm, below the R plane over the part")
            elif not moves_xy and mv.end[2] < mv.start[2] and mv.end[2] < top_all + m.retract - pos_tol:
                errors.append(f"line {mv.line}: a rapid down to Z{mv.end[2]:.3f} mm, below the R plane over the part")
        if mv.tool is not None and not mv.z_unknown:
            low = min(mv.start[2], mv.end[2])
            deepest[mv.tool] = max(deepest.get(mv.tool, 0.0), _local_top(exp, mv, top_all) - low)
        if not mv.rapid and not mv.z_unknown and min(mv.start[2], mv.end[2]) < _local_top(exp, mv, top_all) - res:
            cut_moves.append(mv)
    for t, reach in deepest.items():
        if t in sim.declared and reach > sim.declared[t][2] * (INCH if units == "inch" else 1.0) + pos_tol + 1e-6:
            errors.append(f"T{t} reaches {reach:.3f} mm below the part, more than the header's reach")
    if errors:
        _fail(prog, errors)
    scale = INCH if units == "inch" else 1.0
    tools = {t: (kind, d * scale) for t, (kind, d, _) in sim.declared.items()}
    # ---- 4: every cut inside a feature's region
    paths = [shapely.LineString(mv.xy()) if math.dist(mv.start[:2], mv.end[:2]) > 1e-9 or mv.centre is not None
             else shapely.Point(mv.start[:2]) for mv in cut_moves]
    for mv, path in zip(cut_moves, paths):
        kind, d = tools[mv.tool]
        low = min(mv.start[2], mv.end[2])
        if not any(_inside(reg, kind, d, path, low, mv, res) for reg in exp.regions):
            errors.append(f"line {mv.line}: the {kind.replace('_', ' ')} {d:.3f} mm cuts at Z{low:.3f} mm outside "
                          f"every planned feature it may cut")
            if len(errors) > 5:
                break
    if errors:
        _fail(prog, errors)
    # ---- 5: holes drilled, bores and floors cleared, bores reamed
    cycles = [mv for mv in sim.moves if mv.cycle is not None and mv.phase == "cut"]
    bottoms: dict = {}
    for mv in cycles:
        key = (mv.line, round(mv.end[0], 6), round(mv.end[1], 6))
        if key not in bottoms or mv.end[2] < bottoms[key].end[2]:
            bottoms[key] = mv
    found = [(k[1], k[2], mv.end[2], mv) for k, mv in bottoms.items()]
    used = set()
    for n, x, y, d, tip, section, _ in exp.drilled:
        hits = [i for i, (cx, cy, z, mv) in enumerate(found) if i not in used and math.hypot(cx - x, cy - y) <= pos_tol
                and (section is None or mv.stops == section + 1)]
        if not hits:
            errors.append(f"feature {n}: no drilling cycle at X{x:.3f} Y{y:.3f} mm")
            continue
        i = hits[0]
        used.add(i)
        cx, cy, z, mv = found[i]
        kind, td = tools[mv.tool]
        if kind != "drill" or abs(td - d) > pos_tol:
            errors.append(f"feature {n}: drilled with T{mv.tool} ({kind} {td:.3f} mm), needs a {d:.3f} mm drill")
        if abs(z - tip) > pos_tol:
            errors.append(f"feature {n}: drilled to Z{z:.3f} mm, the drill travel is Z{tip:.3f} mm")
    for i, (cx, cy, _z, mv) in enumerate(found):
        if i not in used:
            errors.append(f"line {mv.line}: a drilling cycle at X{cx:.3f} Y{cy:.3f} mm where the plan has no hole")
    swept = _swept(cut_moves, paths, tools)
    for n, poly, floor, what in exp.cleared:
        mine = [sh for mv, sh in zip(cut_moves, swept)
                if tools[mv.tool][0] == "end_mill" and min(mv.start[2], mv.end[2]) <= floor + pos_tol]
        left = poly.difference(shapely.union_all(mine)) if mine else poly
        if not left.buffer(-COVER_TOL).is_empty:
            errors.append(f"feature {n}: the {what} at Z{floor:.3f} mm is not swept clear "
                          f"({left.area:.2f} mm^2 left)")
    for n, x, y, d, z in exp.reamed:
        hits = [k for k, mv in enumerate(sim.moves) if not mv.rapid and mv.tool is not None
                and tools[mv.tool][0] == "reamer" and abs(tools[mv.tool][1] - d) <= pos_tol
                and math.hypot(mv.end[0] - x, mv.end[1] - y) <= pos_tol and mv.end[2] <= z + pos_tol]
        if not hits:
            errors.append(f"feature {n}: not reamed to {d:.3f} mm down to Z{z:.3f} mm")
            continue
        after = sim.moves[hits[-1] + 1] if hits[-1] + 1 < len(sim.moves) else None
        if after is None or after.rapid:
            errors.append(f"feature {n}: the reamer leaves the bore by a rapid; feed it out")
    # ---- 6: no plunge of an end mill into uncut metal
    errors += _plunges(cut_moves, swept, tools, m.ramp_angle, res)
    # ---- 7: the rim set-up's stops
    if exp.rim:
        if sim.stops < len(exp.drilled):
            errors.append(f"{sim.stops} M0 stop(s) for {len(exp.drilled)} radial holes: one before each")
        if any(s > 0 for s in sim.spindle_at_stops):
            errors.append("the spindle runs at an M0 stop")
    if errors:
        _fail(prog, errors)
    time_s = sim.time_s(rapid_rate=m.rapid_rate, tool_change_s=m.tool_change_s)
    lines = (f"{len(exp.drilled)} hole(s) drilled at position and depth",
             f"{len(exp.cleared)} floor(s) and bore(s) swept clear inside their features",
             f"{len(exp.reamed)} bore(s) reamed", f"{len(cut_moves)} cutting moves inside the plan's features",
             f"{len(sim.moves)} moves simulated, {sim.tool_changes} tool change(s)")
    return Checked(simulation=sim, time_s=time_s, lines=lines)


def _local_top(exp: _Expect, mv, top_all: float) -> float:
    """The part's surface under a move: the face (Z0), or on the rim the rim where the current hole enters."""
    if not exp.rim:
        return 0.0
    k = mv.stops - 1
    if 0 <= k < len(exp.drilled):
        return exp.drilled[k][6]
    return top_all


def _inside(reg: Region, kind: str, d: float, path, low: float, mv, res: float) -> bool:
    if reg.kind != kind:
        return False
    if reg.section is not None and mv.stops != reg.section + 1:
        return False
    if reg.diameter is not None and abs(d - reg.diameter) > 1.5 * res:
        return False
    if reg.max_radius is not None and 0.5 * d > reg.max_radius + 1.5 * res:
        return False
    if low < reg.floor - 1.5 * res:
        return False
    if not reg.footprint.covers(path):
        return False
    return reg.footprint.exterior.distance(path) >= 0.5 * d - REGION_TOL


def _swept(cut_moves, paths, tools) -> list:
    """The area each cutting move sweeps with its tool's radius (within 0.005 mm of the true circle)."""
    out = [None] * len(cut_moves)
    by_radius: dict[float, list[int]] = {}
    for i, mv in enumerate(cut_moves):
        by_radius.setdefault(0.5 * tools[mv.tool][1], []).append(i)
    for r, idx in by_radius.items():
        shapes = shapely.buffer(np.array([paths[i] for i in idx], dtype=object), r, quad_segs=_quad(r))
        for i, sh in zip(idx, shapes):
            out[i] = sh
    return out


def _plunges(cut_moves, swept, tools, ramp_deg: float, res: float) -> list[str]:
    """An end mill going down steeper than the ramp must end where the whole tool is over metal already cut
    at least as deep (by the moves before it)."""
    slope = math.tan(math.radians(ramp_deg)) * 1.05
    out = []
    tree = shapely.STRtree(swept) if swept else None
    lows = [min(mv.start[2], mv.end[2]) for mv in cut_moves]
    for k, mv in enumerate(cut_moves):
        kind, d = tools[mv.tool]
        if kind != "end_mill":
            continue
        length = mv.length
        run = math.sqrt(max(length ** 2 - (mv.end[2] - mv.start[2]) ** 2, 0.0))
        fall = mv.start[2] - mv.end[2]
        if fall <= slope * run + 5 * res:
            continue
        r = 0.5 * d
        z = mv.end[2]
        disc = shapely.Point(mv.end[:2]).buffer(r - 0.02, quad_segs=_quad(r))
        near = [i for i in tree.query(disc) if i < k and lows[i] <= z + 5 * res]
        if not near or not shapely.union_all([swept[i] for i in near]).covers(disc):
            out.append(f"line {mv.line}: the end mill plunges to Z{z:.3f} mm into metal not yet cut")
    return out


def check_all(programs) -> dict[str, Checked]:
    """{file name: Checked} of every program; VerificationFailed at the first that disagrees."""
    return {p.name: check(p) for p in programs}


__all__ = ["check", "check_all", "Checked", "Region", "np"]
