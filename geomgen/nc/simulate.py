"""Read a program back with an independent parser and simulate what the machine would do.

The words of each block come from pygcode (a G-code parser from PyPI, not geomgen's writer); this module
interprets them as a plain ISO 6983 controller does: modal motion (G0 G1 G2 G3, canned cycles G81 and
G83 until G80), absolute coordinates (G90), G20 / G21, G98 / G99 return levels, F, S, M3 / M5, T with M6,
tool length offsets G43 H / G49, M0 stops, M30.  Canned cycles and arcs are expanded into moves:

- G81 at X Y: a rapid to X Y at the current level (up to the R plane first if below it), a rapid down to
  R, a feed to Z, a rapid back to R (G99) or to the level the cycle started from (G98);
- G83 (peck): from R a feed down by Q, a rapid back to R, a rapid down to PECK_CLEARANCE above the last
  depth, the next feed by Q ... to Z, then the return as G81;
- G2 / G3 with I J (the centre relative to the start), in the XY plane, Z moving evenly along the arc
  (a helix); start = end is a full circle.

Anything outside that plain set (G91, cutter compensation, an R-form arc, a code this interpreter does
not know) is an error of the program, as is an arc whose start and end lie at different radii.  All
positions come out in mm.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

import numpy as np

INCH = 25.4
#: G83's retreat above the last depth before the next peck, mm (a controller setting; 0.25 mm is
#: LinuxCNC's 0.010 in, common practice)
PECK_CLEARANCE = 0.25
#: the codes a program may use
G_CODES = {0, 1, 2, 3, 17, 20, 21, 40, 43, 49, 54, 80, 81, 83, 90, 94, 98, 99}
M_CODES = {0, 3, 5, 6, 8, 9, 30}
#: the radii of an arc's start and end may differ by this, mm (controllers refuse worse)
ARC_RADIUS_TOL = 0.005

_TOOL_LINE = re.compile(r"^TOOL T(\d+): (DRILL|END MILL|REAMER) D([0-9.]+) REACH ([0-9.]+)$")


@dataclass(frozen=True)
class Move:
    """One straight or circular move, mm.

    rapid : G0 (or a canned cycle's rapid);  start, end : (x, y, z);  centre : (x, y) of an arc, else
    None;  cw : the arc's direction;  tool : the T in the spindle (None before the first M6);
    offset : the active G43 H number (None if none);  spindle : rpm, 0 when stopped;  feed : mm/min;
    line : the program line (1-based);  cycle : "G81" / "G83" for a canned cycle's moves;  phase : the
    cycle's step ("to_xy", "to_r", "cut", "out", "peck_in");  stops : the number of M0 stops before it;
    z_unknown : the move starts at the tool-change height (Z not yet known).
    """

    rapid: bool
    start: tuple
    end: tuple
    centre: tuple | None
    cw: bool
    tool: int | None
    offset: int | None
    spindle: float
    feed: float
    line: int
    cycle: str | None = None
    phase: str | None = None
    stops: int = 0
    z_unknown: bool = False

    @property
    def length(self) -> float:
        if self.z_unknown or not all(map(math.isfinite, self.start + self.end)):
            return math.dist(self.start[:2], self.end[:2])        # at the tool-change height: XY only
        if self.centre is None:
            return math.dist(self.start, self.end)
        sweep = abs(_sweep(self)) * math.hypot(self.start[0] - self.centre[0], self.start[1] - self.centre[1])
        return math.hypot(sweep, self.end[2] - self.start[2])

    def xy(self, chord: float = 0.002) -> np.ndarray:
        """(n, 2) points along the move in the XY plane (an arc flattened within `chord` mm)."""
        if self.centre is None:
            return np.array([self.start[:2], self.end[:2]], dtype=float)
        r = math.hypot(self.start[0] - self.centre[0], self.start[1] - self.centre[1])
        sweep = _sweep(self)
        step = 2.0 * math.acos(max(-1.0, 1.0 - chord / r)) if r > chord else math.pi
        n = max(2, math.ceil(abs(sweep) / step) + 1)
        a0 = math.atan2(self.start[1] - self.centre[1], self.start[0] - self.centre[0])
        a = a0 + np.linspace(0.0, sweep, n)
        pts = np.column_stack([self.centre[0] + r * np.cos(a), self.centre[1] + r * np.sin(a)])
        pts[-1] = self.end[:2]
        return pts


def _sweep(m: Move) -> float:
    """Signed sweep of an arc move, rad (full circle when start and end coincide)."""
    cx, cy = m.centre
    a0 = math.atan2(m.start[1] - cy, m.start[0] - cx)
    a1 = math.atan2(m.end[1] - cy, m.end[0] - cx)
    if m.cw:
        s = (a0 - a1) % (2 * math.pi)
        return -(s if s > 1e-12 else 2 * math.pi)
    s = (a1 - a0) % (2 * math.pi)
    return s if s > 1e-12 else 2 * math.pi


@dataclass
class Simulation:
    """What the program does: its moves (mm), the tools its header declares, and what is wrong with it.

    units : "mm" | "inch" (from G21 / G20);  declared : {T: (kind, diameter mm, reach mm)} from the
    header's TOOL lines;  tool_changes : how many M6;  stops : how many M0;  errors : plain lines;
    ended : M30 was reached;  spindle_at_end : rpm running at M30;  spindle_at_stops : rpm at each M0.
    """

    moves: list = field(default_factory=list)
    units: str | None = None
    declared: dict = field(default_factory=dict)
    tool_changes: int = 0
    stops: int = 0
    errors: list = field(default_factory=list)
    ended: bool = False
    spindle_at_end: float = 0.0
    spindle_at_stops: list = field(default_factory=list)
    absolute: bool = False
    plane_xy: bool = False

    def time_s(self, *, rapid_rate: float, tool_change_s: float) -> float:
        """Machining time from the path lengths: feeds at their F, rapids at `rapid_rate` (mm/min), and each
        tool change; M0 stops are not counted (the time to index is the machinist's)."""
        t = 0.0
        for m in self.moves:
            rate = rapid_rate if m.rapid else m.feed
            if rate > 0:
                t += 60.0 * m.length / rate
        return t + tool_change_s * self.tool_changes


def _words(block) -> list[tuple[str, float]]:
    out = []
    for w in block.words:
        value = w.value
        out.append((w.letter.upper(), float(value)))
    return out


def simulate(text: str) -> Simulation:
    """Read `text` with pygcode and run it through the interpreter above."""
    from pygcode import Line

    sim = Simulation()
    scale = None                      # mm per program unit
    pos = [None, None, None]          # mm; None: not known yet (Z is at the tool-change height)
    motion = None
    ret98 = True
    feed = 0.0
    speed = 0.0
    spindle = 0.0
    tool_selected = None
    tool = None
    offset = None
    initial_z = None
    cyc = {"R": None, "Z": None, "Q": None}
    for number, raw in enumerate(text.splitlines(), start=1):
        stripped = raw.strip()
        if stripped in ("", "%"):
            continue
        if sim.ended:
            sim.errors.append(f"line {number}: a block after M30")
            break
        try:
            parsed = Line(stripped)
        except Exception as exc:  # noqa: BLE001  (any parse failure is the program's error)
            sim.errors.append(f"line {number}: pygcode cannot read {stripped!r} ({exc})")
            continue
        if parsed.comment is not None:
            m = _TOOL_LINE.search(parsed.comment.text)
            if m:
                sim.declared[int(m[1])] = (m[2].lower().replace(" ", "_"), float(m[3]), float(m[4]))
        if parsed.block is None:
            continue
        words = _words(parsed.block)
        if not words:
            continue
        g = [int(v) if v == int(v) else v for k, v in words if k == "G"]
        mcodes = [int(v) for k, v in words if k == "M"]
        vals = {k: v for k, v in words if k not in "GM"}
        for code in g:
            if code not in G_CODES:
                sim.errors.append(f"line {number}: G{code:g} is not one of the plain codes these programs use")
        for code in mcodes:
            if code not in M_CODES:
                sim.errors.append(f"line {number}: M{code} is not one of the plain codes these programs use")
        # ---- modal settings, in the order a controller applies them
        if 20 in g or 21 in g:
            new = "inch" if 20 in g else "mm"
            if sim.units is not None and new != sim.units:
                sim.errors.append(f"line {number}: the units change inside the program")
            sim.units, scale = new, (INCH if new == "inch" else 1.0)
        if 90 in g:
            sim.absolute = True
        if 17 in g:
            sim.plane_xy = True
        if 98 in g:
            ret98 = True
        if 99 in g:
            ret98 = False
        if "F" in vals:
            feed = vals["F"] * (scale or 1.0)
        if "S" in vals:
            speed = vals["S"]
            if spindle > 0:
                spindle = speed
        if "T" in vals:
            tool_selected = int(vals["T"])
        if 6 in mcodes:
            if tool_selected is None:
                sim.errors.append(f"line {number}: M6 with no tool selected (T)")
            tool, offset = tool_selected, None
            sim.tool_changes += 1
            pos[2] = None                       # at the machine's tool-change height
            motion = None if motion in (81, 83) else motion
        if 3 in mcodes:
            spindle = speed
        if 5 in mcodes:
            spindle = 0.0
        if 49 in g:
            offset = None
        if 43 in g:
            if "H" not in vals:
                sim.errors.append(f"line {number}: G43 with no H")
            else:
                offset = int(vals["H"])
        if 0 in mcodes:
            sim.stops += 1
            sim.spindle_at_stops.append(spindle)
        if 80 in g:
            motion = None
        for code in (0, 1, 2, 3, 81, 83):
            if code in g:
                if code in (81, 83) and motion not in (81, 83):
                    initial_z = pos[2]
                motion = code
        axes = {k: vals[k] * scale for k in "XYZ" if k in vals} if scale else {}
        if any(k in vals for k in "XYZ") and scale is None:
            sim.errors.append(f"line {number}: a move before the units are set (G20 / G21)")
            continue
        for k in "RQ":
            if k in vals and scale is not None:
                cyc[k] = vals[k] * scale
        if not axes:
            if 30 in mcodes:
                sim.ended, sim.spindle_at_end = True, spindle
            continue
        if motion is None:
            sim.errors.append(f"line {number}: coordinates with no motion mode (after G80)")
            continue
        if not sim.absolute:
            sim.errors.append(f"line {number}: a move before G90 (absolute coordinates) is set")
        now = {"tool": tool, "offset": offset, "spindle": spindle, "feed": feed, "line": number,
               "stops": sim.stops}

        def emit(target, *, rapid, centre=None, cw=False, cycle=None, phase=None, now=now):
            start = tuple(pos)
            unknown = start[2] is None
            s = tuple(target[i] if start[i] is None else start[i] for i in range(3))
            sim.moves.append(Move(rapid=rapid, start=s, end=tuple(target), centre=centre, cw=cw, cycle=cycle,
                                  phase=phase, z_unknown=unknown, **now))
            pos[:] = list(target)

        if motion in (0, 1):
            target = [axes.get(a, pos[i]) for i, a in enumerate("XYZ")]
            if None in target[:2]:
                sim.errors.append(f"line {number}: a move from an unknown X or Y")
                pos[:] = [t if t is not None else 0.0 for t in target[:2]] + [target[2]]
                continue
            if target[2] is None:
                # XY only, at the tool-change height
                sim.moves.append(Move(rapid=motion == 0, start=(target[0] if pos[0] is None else pos[0],
                                                                target[1] if pos[1] is None else pos[1], math.inf),
                                      end=(target[0], target[1], math.inf), centre=None, cw=False, z_unknown=True,
                                      **now))
                pos[:2] = target[:2]
                continue
            emit(target, rapid=motion == 0)
        elif motion in (2, 3):
            if "R" in vals:
                sim.errors.append(f"line {number}: an arc by R; these programs give arcs by I and J")
                continue
            if None in pos:
                sim.errors.append(f"line {number}: an arc from an unknown position")
                continue
            i, j = vals.get("I", 0.0) * scale, vals.get("J", 0.0) * scale
            target = [axes.get(a, pos[k]) for k, a in enumerate("XYZ")]
            centre = (pos[0] + i, pos[1] + j)
            r0 = math.hypot(pos[0] - centre[0], pos[1] - centre[1])
            r1 = math.hypot(target[0] - centre[0], target[1] - centre[1])
            if abs(r0 - r1) > ARC_RADIUS_TOL or r0 < 1e-6:
                sim.errors.append(f"line {number}: the arc's start and end are {r0:.4f} and {r1:.4f} mm from its "
                                  f"centre")
            emit(target, rapid=False, centre=centre, cw=motion == 2)
        else:
            code = f"G{motion}"
            x = axes.get("X", pos[0])
            y = axes.get("Y", pos[1])
            if "Z" in axes:
                cyc["Z"] = axes["Z"]
            z_bottom, r = cyc["Z"], cyc["R"]
            if x is None or y is None or z_bottom is None or r is None:
                sim.errors.append(f"line {number}: {code} needs X, Y, Z and R")
                continue
            if motion == 83 and not (cyc["Q"] and cyc["Q"] > 0):
                sim.errors.append(f"line {number}: G83 needs a peck depth Q > 0")
                continue
            if z_bottom >= r:
                sim.errors.append(f"line {number}: {code}'s depth Z is not below its R plane")
                continue
            level = pos[2]
            if level is None:
                sim.errors.append(f"line {number}: {code} from an unknown height (no Z since the tool change)")
                continue
            if level < r:
                emit([pos[0], pos[1], r], rapid=True, cycle=code, phase="to_r")
                level = r
            if initial_z is None or initial_z < r:
                initial_z = level
            emit([x, y, pos[2]], rapid=True, cycle=code, phase="to_xy")
            emit([x, y, r], rapid=True, cycle=code, phase="to_r")
            if motion == 81:
                emit([x, y, z_bottom], rapid=False, cycle=code, phase="cut")
            else:
                depth = r
                while depth > z_bottom + 1e-9:
                    nxt = max(depth - cyc["Q"], z_bottom)
                    emit([x, y, nxt], rapid=False, cycle=code, phase="cut")
                    depth = nxt
                    if depth > z_bottom + 1e-9:
                        emit([x, y, r], rapid=True, cycle=code, phase="out")
                        emit([x, y, depth + PECK_CLEARANCE], rapid=True, cycle=code, phase="peck_in")
            emit([x, y, initial_z if ret98 else r], rapid=True, cycle=code, phase="out")
        if 30 in mcodes:
            sim.ended, sim.spindle_at_end = True, spindle
    return sim
