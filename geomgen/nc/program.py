"""One NC program per web and face with new work, from the planned features (what plan.json holds).

    web-<name>-outer.nc, web-<name>-inner.nc   drilling, plug bores and pockets, from that face
    web-<name>-rim.nc                          radial rim holes: their own set-up, the web on its edge

A face program's work zero is the crank axis on the face being cut (X0 Y0), Z0 on that face, Z up out
of the web; x and y as seen on that face, as operations.csv gives them (an inner-face feature mirrored
in x).  Work goes in this order, grouped by tool: pockets; holes and plug bores drilled; plug bores
opened and flat-bottomed with an end mill; plug bores reamed.

- holes: a drill of the hole's diameter, G81 to the drill travel of the sheet (the tip), G83 peck
  drilling where the travel is more than `peck_above` diameters (3 by default, common practice), pecks
  of one diameter unless [machining] peck_depth says; G80 after each;
- plug bores (geomgen.plugbore): drilled undersize to the sheet's drill travel; opened to the pre-ream
  diameter and flat-bottomed at the bore depth with an end mill of more than half the bore (so its
  circle clears the centre) on a helix at `ramp_angle` (no plunge) and a full circle at the bottom;
  reamed to the fit with a feed in and a feed out (no rapid out of a reamed bore); a through bore's end
  mill and reamer go `breakthrough` past the far face;
- kidney pockets: the largest end mill of the shop whose radius is at most the corner radius and that
  leaves room across the pocket; layers of `step_down`; each layer entered on a ramp along the innermost
  roughing ring (no plunge into uncut metal), rings of `stepover` outwards leaving `finish_allowance`,
  then the finishing contour with arcs (G2 / G3), climb milling (counter-clockwise round a pocket with
  M3); between layers the tool lifts to the R plane and feeds down into the cleared pocket.

A radial rim hole is drilled with the web on a dividing head or rotary table whose axis runs along the
machine's X: zero X0 on the web's inner face (+X towards the outer face), Y0 Z0 on the crank axis, Z up
along the hole's axis once the web is indexed; an M0 stop before each hole to index the web.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from ..drills import designation
from ..errors import BadInput
from ..kinds.base import point_length
from ..loops import Line
from ..plugbore import plug_bore
from . import cutting_data
from .geometry import face_loop, offset_inward, rings, split_loop_at, start_ring_at
from .settings import Machining
from .writer import Writer

#: kinds a face program cuts, and the one the rim set-up does
FACE_KINDS = ("pocket", "hole", "plug")
RIM_KIND = "radial"

CAUTIONS = (
    "CAUTION: this program is a design aid made by geomgen from the plan, not a release for service. "
    "The machinist's judgement, the engine maker's limits and the shop's practice come first.",
    "Prove it out before cutting: set the work zero as said below and check it; run the program once "
    "with the Z work offset raised well above the part (a dry run in the air), with the feed override low "
    "and a hand on feed hold; then single-block the first cut of each tool.",
    "Check every tool against the list below: diameter, reach and the tool length offset H of its number.",
    "Check speeds and feeds against the maker of each tool and the rigidity of the set-up.",
    "Clamp clear of every path drawn in the report's back-plot; the safe height only clears the part.",
)


@dataclass(frozen=True)
class Tool:
    """A tool of a program (mm).  kind : "drill" | "end_mill" | "reamer"."""

    kind: str
    diameter: float
    point_angle: float = 180.0
    note: str = ""

    @property
    def key(self) -> tuple:
        return (self.kind, round(self.diameter, 6), round(self.point_angle, 6))

    @property
    def radius(self) -> float:
        return 0.5 * self.diameter


@dataclass
class NCProgram:
    """One program: its file name, text, and what the check and the report need to know about it.

    face : "outer" | "inner" | "rim";  features : [(sheet number, feature)] it cuts (web frame);
    tools : {T number: Tool};  reach : {T number: deepest point below the face, mm};
    cuts : {T number: Cut};  units : "mm" | "inch";  notes : lines the report shows.
    """

    name: str
    web: str
    face: str
    units: str
    text: str
    features: list
    tools: dict
    reach: dict
    cuts: dict
    section: object
    thickness: float
    machining: Machining
    job: object
    notes: list = field(default_factory=list)


# ------------------------------------------------------------------ choosing tools
def _end_mill_for_pocket(pocket, sizes, m: Machining, where: str) -> float:
    width = pocket.r_outer - pocket.r_inner
    fit = [d for d in sizes if 0.5 * d <= pocket.corner_radius + 1e-9 and d < width - 2.0 * m.finish_allowance - 0.1]
    if not fit:
        raise BadInput(f"{where} (pocket): no end mill of machining.end_mills fits it: the tool's radius must be at "
                       f"most the {pocket.corner_radius:g} mm corner radius and the tool narrower than the "
                       f"{width:g} mm pocket; the shop's end mills are {', '.join(f'{d:g}' for d in sizes)} mm")
    return max(fit)


def _end_mill_for_bore(pre_ream: float, sizes, where: str) -> float:
    """More than half the bore (its circle then clears the centre), and at least 1 mm under it (a circle to
    run on); the largest up to 0.8 of the bore first (room for chips, common practice)."""
    fit = [d for d in sizes if 0.5 * pre_ream + 0.1 < d <= pre_ream - 1.0]
    if not fit:
        raise BadInput(f"{where} (plug bore): no end mill of machining.end_mills opens a {pre_ream:g} mm bore: it "
                       f"needs one between {0.5 * pre_ream + 0.1:.2f} and {pre_ream - 1.0:.2f} mm; the shop's end "
                       f"mills are {', '.join(f'{d:g}' for d in sizes)} mm")
    roomy = [d for d in fit if d <= 0.8 * pre_ream]
    return max(roomy or fit)


def _group(feature, work) -> str:
    """The cutting-data group of what `feature` cuts: tungsten heavy alloy if it enters an existing plug."""
    t = work.section.thickness
    lo, hi = feature.z_range(t)
    poly = feature.footprint_polygon(0.05)
    for other in work.existing:
        o_lo, o_hi = other.z_range(t)
        if other.fills and o_lo < hi and lo < o_hi and poly.intersection(other.footprint_polygon(0.05)).area > 1e-6:
            return "tungsten heavy alloy"
    return cutting_data.group_of(work.spec.material)


# ------------------------------------------------------------------ a face program
class _Face:
    """Writes one face program."""

    def __init__(self, job, work, face: str, numbered: list, m: Machining, *, thickness: float | None = None,
                 raised: float = 0.0, entry_z: float | None = None):
        self.job, self.work, self.face, self.m = job, work, face, m
        self.numbered = numbered
        self.units = job.output.sheet_units
        self.w = Writer(self.units)
        # a model web: the thickness where its features are, how far the model stands above their face
        # (the safe height and R plane in `m` are raised by as much), and that face's z in the model
        self.thickness = work.section.thickness if thickness is None else thickness
        self.raised, self.entry_z = raised, entry_z
        self.tools: dict[int, Tool] = {}
        self.reach: dict[int, float] = {}
        self.cuts: dict[int, cutting_data.Cut] = {}
        self.current: int | None = None
        self.rpm: float | None = None
        self.body: list[str] = []
        self.ops: list[str] = []
        self.series = job.correction.drill_series
        self.mills = m.end_mill_sizes(self.series)

    # ---------------------------------------------------------------- tools
    def number(self, tool: Tool) -> int:
        for n, t in self.tools.items():
            if t.key == tool.key:
                return n
        n = len(self.tools) + 1
        self.tools[n] = tool
        return n

    def load(self, tool: Tool, cut: cutting_data.Cut, x: float, y: float, deepest: float) -> int:
        """Put `tool` in the spindle (if it is not there), at speed, over (x, y) at the safe height."""
        w, m = self.w, self.m
        n = self.number(tool)
        self.reach[n] = max(self.reach.get(n, 0.0), deepest)
        self.cuts.setdefault(n, cut)
        if self.current != n:
            if self.current is not None:
                w.block("M9")
                w.block("M5")
            w.block(f"T{n}", "M6")
            w.comment(f"T{n}: {self.tool_words(tool)}")
            w.block(f"S{cut.rpm:.0f}", "M3")
            w.block("M8")
            w.rapid(x, y)
            w.rapid(z=m.clearance, extra=("G43", f"H{n}"))
            self.current, self.rpm = n, cut.rpm
        else:
            if self.rpm != cut.rpm:
                w.block(f"S{cut.rpm:.0f}", "M3")
                self.rpm = cut.rpm
            w.rapid(z=m.clearance)
            w.rapid(x, y)
        return n

    def tool_words(self, tool: Tool) -> str:
        d = self.w.length(tool.diameter)
        if tool.kind == "drill":
            point = "flat bottom" if tool.point_angle >= 180.0 else f"{tool.point_angle:g} deg point"
            return f"DRILL D{d} HSS twist drill {designation(tool.diameter, self.series)}, {point}{tool.note}"
        if tool.kind == "reamer":
            return f"REAMER D{d} HSS machine reamer{tool.note}"
        return f"END MILL D{d} solid carbide, {self.m.flutes} flutes, flat end{tool.note}"

    def cut_of(self, kind: str, diameter: float, group: str) -> cutting_data.Cut:
        return cutting_data.cut(kind, diameter, group, self.m)

    # ---------------------------------------------------------------- holes
    def drill(self, number: int, what: str, x: float, y: float, diameter: float, point_angle: float, tip: float,
              group: str, note: str = "") -> None:
        """Drill at (x, y) face view, tip `tip` mm below the face."""
        w, m = self.w, self.m
        tool = Tool("drill", diameter, point_angle, note)
        cut = self.cut_of("drill", diameter, group)
        self.load(tool, cut, x, y, tip)
        peck = tip > m.peck_above * diameter
        q = m.peck_depth or diameter
        w.comment(f"feature {number}, {what}: drill {w.show(diameter)} at X{w.length(x)} Y{w.length(y)} to "
                  f"Z{w.length(-tip)} (the drill's tip), {'G83 pecks of ' + w.show(q) if peck else 'G81'}; "
                  f"{group}, S{cut.rpm:.0f} F{w.feed(cut.feed_mm_min)}")
        w.cycle("G83" if peck else "G81", x=x, y=y, z=-tip, r=m.retract, f=cut.feed_mm_min, q=q if peck else None)
        w.block("G80")

    # ---------------------------------------------------------------- plug bores: mill and ream
    def helix_bore(self, number: int, x: float, y: float, bore: float, floor: float, tool_d: float, group: str,
                   what: str) -> None:
        """Open a bore of diameter `bore` at (x, y) down to `floor` mm below the face: a helix at the ramp angle,
        counter-clockwise (climb), a full circle at the bottom, back to the centre, out."""
        w, m = self.w, self.m
        tool = Tool("end_mill", tool_d)
        cut = self.cut_of("end_mill", tool_d, group)
        rc = 0.5 * (bore - tool_d)
        self.load(tool, cut, x + rc, y, floor)
        turn = 2.0 * math.pi * rc
        pitch = turn * math.tan(math.radians(m.ramp_angle))
        start = m.retract
        turns = max(1, math.ceil((start + floor) / pitch))
        ramp_f = 0.5 * cut.feed_mm_min
        w.comment(f"feature {number}, {what}: end mill {w.show(tool_d)}, helix of {turns} turns on a "
                  f"{w.show(2 * rc)} circle to Z{w.length(-floor)} (ramp {m.ramp_angle:g} deg), a full circle "
                  f"at the bottom; S{cut.rpm:.0f} F{w.feed(cut.feed_mm_min)}")
        w.rapid(z=m.retract)
        for k in range(1, turns + 1):
            z = start - (start + floor) * k / turns
            w.arc(cw=False, x=x + rc, y=y, z=z, i=-rc, j=0.0, f=ramp_f)
        w.arc(cw=False, x=x + rc, y=y, z=-floor, i=-rc, j=0.0, f=cut.feed_mm_min)
        w.line(x, y, -floor, f=cut.feed_mm_min)
        w.rapid(z=m.clearance)

    def ream(self, number: int, x: float, y: float, diameter: float, depth: float, fit: str, group: str) -> None:
        w, m = self.w, self.m
        tool = Tool("reamer", diameter, note=f", {fit} bore")
        cut = self.cut_of("reamer", diameter, group)
        self.load(tool, cut, x, y, depth)
        w.comment(f"feature {number}, plug bore: ream {w.show(diameter)} {fit} to Z{w.length(-depth)}, feed in and "
                  f"feed out; S{cut.rpm:.0f} F{w.feed(cut.feed_mm_min)}")
        w.rapid(z=m.retract)
        w.line(z=-depth, f=cut.feed_mm_min)
        w.line(z=m.retract, f=cut.feed_mm_min)
        w.rapid(z=m.clearance)

    # ---------------------------------------------------------------- pockets
    def pocket(self, number: int, pocket, group: str) -> None:
        w, m = self.w, self.m
        where = f"web {self.work.spec.name} feature {number}"
        d = _end_mill_for_pocket(pocket, self.mills, m, where)
        rt = 0.5 * d
        loop = face_loop(pocket.footprint(), self.face)
        finish = offset_inward(loop, rt)
        centre_region = finish.polygon(0.002)
        roughs = rings(centre_region.buffer(-m.finish_allowance, quad_segs=16), m.stepover * d)
        if not roughs:
            raise BadInput(f"{where} (pocket): too narrow for a roughing pass with the {d:g} mm end mill and "
                           f"machining.finish_allowance {m.finish_allowance:g} mm")
        step = m.step_down or 0.5 * d
        layers = max(1, math.ceil(pocket.depth / step - 1e-9))
        depths = [pocket.depth * k / layers for k in range(1, layers + 1)]
        tool = Tool("end_mill", d)
        cut = self.cut_of("end_mill", d, group)
        f, ramp_f = cut.feed_mm_min, 0.5 * cut.feed_mm_min
        inner = roughs[-1]
        self.load(tool, cut, inner[0][0], inner[0][1], pocket.depth)
        w.comment(f"feature {number}, pocket: end mill {w.show(d)} (radius <= the {w.show(pocket.corner_radius)} "
                  f"corners), {layers} layers to Z{w.length(-pocket.depth)}, each entered on a "
                  f"{m.ramp_angle:g} deg ramp, {len(roughs)} roughing ring(s) leaving {w.show(m.finish_allowance)}, "
                  f"then the finishing contour; S{cut.rpm:.0f} F{w.feed(f)}")
        slope = math.tan(math.radians(m.ramp_angle))
        above = 0.0
        for k, z in enumerate(depths, start=1):
            w.comment(f"feature {number}, pocket layer {k} of {layers}: Z{w.length(-z)}")
            w.rapid(inner[0][0], inner[0][1])
            w.rapid(z=m.retract)
            # down to the face, or into the layer above (cleared already), then the ramp
            enter = 0.0 if above == 0.0 else -above + 0.1
            w.line(z=enter, f=ramp_f)
            here = self._ramp(inner, enter, -z, slope, ramp_f, f)
            # outwards ring by ring, each entered at its point nearest the tool (a straight move inside)
            for ring in reversed(roughs[:-1]):
                ring = start_ring_at(ring, here)
                for p in ring:
                    w.line(p[0], p[1], f=f)
                here = ring[-1]
            segs = split_loop_at(finish, here)
            start = segs[0].start
            w.line(start[0], start[1], f=f)
            for s in segs:
                if isinstance(s, Line):
                    w.line(s.end[0], s.end[1], f=f)
                else:
                    w.arc(cw=s.sweep_deg < 0, x=s.end[0], y=s.end[1], i=s.center[0] - s.start[0],
                          j=s.center[1] - s.start[1], f=f)
            w.line(here[0], here[1], f=f)
            w.rapid(z=m.retract)
            above = z
        w.rapid(z=m.clearance)

    def _ramp(self, ring: np.ndarray, z_from: float, z_to: float, slope: float, ramp_f: float, f: float):
        """Down the ramp along the closed `ring` (last point = first) from z_from to z_to, then once round it
        at z_to; returns where the tool is."""
        w = self.w
        n = len(ring) - 1
        z, i = z_from, 0
        while True:
            a, b = ring[i % n], ring[i % n + 1]
            fall = float(np.hypot(*(b - a))) * slope
            if z - fall > z_to + 1e-9:
                z -= fall
                w.line(b[0], b[1], z, f=ramp_f)
                i += 1
                continue
            # stop part-way along this segment; never on a sliver of it (a rounded sliver would read as a plunge)
            run = float(np.hypot(*(b - a)))
            t = (z - z_to) / fall if fall > 0 else 0.0
            if run > 0:
                t = max(t, min(1.0, 0.05 / run))
            p = a + t * (b - a)
            w.line(p[0], p[1], z_to, f=ramp_f)
            break
        k = i % n
        for j in range(1, n + 1):
            q = ring[(k + j) % n]
            w.line(q[0], q[1], f=f)
        w.line(p[0], p[1], f=f)
        return p

    # ---------------------------------------------------------------- the whole program
    def write(self) -> NCProgram:
        job, work, m, w = self.job, self.work, self.m, self.w
        name = work.spec.name
        web_material = work.spec.material.name
        pockets = [(n, f) for n, f in self.numbered if f.kind == "pocket"]
        holes = [(n, f) for n, f in self.numbered if f.kind in ("hole", "plug")]
        c = job.correction
        bores = {}
        for n, f in holes:
            if f.kind == "plug":
                bores[n] = plug_bore(diameter_mm=f.diameter, length_mm=f.length, thickness_mm=self.thickness,
                                     drills=c.drills, point_angle_deg=c.point_angle, fit=c.plug_fit,
                                     where=f"web {name} feature {n}")
        fx = {n: (-f.x if self.face == "inner" else f.x) for n, f in holes}
        for n, f in pockets:
            self.pocket(n, f, _group(f, work))
        # drilling, one drill size at a time, in the sheet's order
        drills = []
        for n, f in holes:
            if f.kind == "hole":
                tip = (self.thickness if f.through else f.depth) + point_length(f.diameter, f.point_angle)
                spec = (f.diameter, f.point_angle, "")
                what = "hole"
            else:
                b = bores[n]
                tip, what = b.tip_depth_mm, "plug bore"
                spec = (b.drill_mm, b.point_angle_deg, "" if b.drill_in_series else
                        ", not in the job's drill series: grind or buy it")
            drills.append((spec, n, f, tip, what))
        for spec in dict.fromkeys(s for s, *_ in drills):
            for s, n, f, tip, what in drills:
                if s == spec:
                    self.drill(n, what, fx[n], f.y, spec[0], spec[1], tip, _group(f, work), spec[2])
        for n, f in holes:
            if f.kind == "plug":
                b = bores[n]
                if b.opened or not b.through:
                    floor = b.depth_mm + (m.breakthrough if b.through else 0.0)
                    d = _end_mill_for_bore(b.pre_ream_mm, self.mills, f"web {name} feature {n}")
                    what = "plug bore" + (f" opened to {w.show(b.pre_ream_mm)}" if b.opened else "") + \
                        ("" if b.through else f", flat bottom at {w.show(b.depth_mm)}")
                    self.helix_bore(n, fx[n], f.y, b.pre_ream_mm, floor, d, _group(f, work), what)
        for n, f in holes:
            if f.kind == "plug":
                b = bores[n]
                self.ream(n, fx[n], f.y, f.diameter, b.depth_mm + (m.breakthrough if b.through else 0.0),
                          b.limits.bore_class, _group(f, work))
        body = w.lines
        # the header, written last because it lists what the body used
        head = Writer(self.units)
        self._header(head, web_material, holes, pockets, bores)
        head.lines += ["G21 G17 G90 G94 G40 G49 G80" if self.units == "mm" else "G20 G17 G90 G94 G40 G49 G80",
                       "G54"]
        head.lines += body
        if head.lines[-1] != "G80":
            head.lines.append("G80")
        head.lines += [f"G0 Z{head.length(m.clearance)}", "M9", "M5", "M30"]
        face_name = f"web-{name}-{self.face}.nc"
        return NCProgram(name=face_name, web=name, face=self.face, units=self.units, text=head.text(),
                         features=list(self.numbered), tools=dict(self.tools), reach=dict(self.reach),
                         cuts=dict(self.cuts), section=work.section, thickness=self.thickness, machining=m, job=job)

    def _header(self, h: Writer, web_material, holes, pockets, bores) -> None:
        name, m = self.work.spec.name, self.m
        unit = h.unit_name()
        h.comment(f"geomgen NC program web-{name}-{self.face}.nc: web {name}, {self.face} face, job {self.job.name}")
        h.comment(f"ISO 6983 word address, plain codes, absolute {unit} ({'G21' if unit == 'mm' else 'G20'} G90), "
                  "XY plane, feeds per minute")
        for line in CAUTIONS:
            h.comment(line)
        turned = ("the web turned over about its Y axis, inner face up: X is mirrored, x = -x of the web frame, "
                  "as operations.csv gives it" if self.face == "inner" else
                  "the web clamped outer face up, seen as in the web frame")
        h.comment(f"WORK ZERO G54: X0 Y0 on the crank axis (the centre of the main bore or shaft), +Y towards the "
                  f"crankpin bore's centre, Z0 on the {self.face} face; {turned}. Check X0 Y0 on the crankpin "
                  f"bore: its centre is X0 Y{h.length(self.work.section.pin_center[1])}.")
        if getattr(self.work.section, "model", None) is not None and self.entry_z is not None:
            rise = (f"; the model stands up to {h.show(self.raised)} above that face (a boss or a step), so the "
                    "safe height and the R plane below are raised by as much" if self.raised > 1e-9 else "")
            h.comment(f"WEB GIVEN AS A 3D MODEL: Z0 on the {self.face} face where these features enter it, z "
                      f"{h.show(self.entry_z)} of the model; touch Z0 off on that face{rise}.")
        h.comment(f"SAFE HEIGHT Z{h.length(m.clearance)} (moves between operations), R PLANE "
                  f"Z{h.length(m.retract)} (canned cycles, ramps); web {h.show(self.thickness)} thick, "
                  f"{web_material}.")
        if any(f.kind == "hole" and f.through for _, f in holes) or any(b.through for b in bores.values()):
            h.comment(f"THROUGH CUTS: drills break through the far face and end mills and reamers go "
                      f"{h.show(m.breakthrough)} past it: support the web on parallels clear of every hole, or on "
                      "a sacrificial plate.")
        h.comment("TOOLS (T number = H number; reach = the deepest point below the face each must reach):")
        for n, t in self.tools.items():
            cut = self.cuts[n]
            cap = ", held at the spindle's top speed" if cut.capped else ""
            per = (f"fz {h.length(cut.per_tooth)} {unit}" if cut.per_tooth is not None else
                   f"f {h.length(cut.per_rev)} {unit}/rev")
            h.comment(_declare(n, t, self.reach[n], h))
            h.comment(f"T{n}: {self.tool_words(t)}, S{cut.rpm:.0f} (Vc {cut.surface_speed:.1f} m/min{cap}), {per}, "
                      f"F{h.feed(cut.feed_mm_min)} {unit}/min")
        sources = sorted({cut.source for cut in self.cuts.values()})
        for s in sources:
            h.comment(f"cutting data: {s}")
        h.comment("OPERATIONS (feature numbers as on operations.csv and drawing.dxf):")
        for n, f in self.numbered:
            h.comment(f"feature {n}: {_sheet_words(f, self.face, self.thickness, h)}")


def _declare(number: int, tool: Tool, reach: float, h: Writer) -> str:
    """The tool's declaration, one short line the check reads back: number, kind, diameter, reach (program
    units; reach = how far below the part's surface it must go)."""
    kind = {"drill": "DRILL", "end_mill": "END MILL", "reamer": "REAMER"}[tool.kind]
    return f"TOOL T{number}: {kind} D{h.length(tool.diameter)} REACH {h.length(reach)}"


def _sheet_words(f, face: str, thickness: float, h: Writer) -> str:
    """A feature named as the sheet names it: kind, size, position as seen on the face."""
    x = -f.x if face == "inner" and hasattr(f, "x") else getattr(f, "x", 0.0)
    if f.kind == "hole":
        depth = "through" if f.through else f"{h.show(f.depth)} deep"
        return f"hole {h.show(f.diameter)} {depth} at X{h.length(x)} Y{h.length(f.y)}"
    if f.kind == "plug":
        return (f"plug bore {h.show(f.diameter)} x {h.show(f.length)} at X{h.length(x)} Y{h.length(f.y)} "
                f"({'through' if f.length >= thickness - 1e-9 else 'blind, flat bottom'})")
    if f.kind == "pocket":
        a0, a1 = f.angle_start, f.angle_start + f.span_deg
        if face == "inner":
            a0, a1 = -a1, -a0
        return (f"pocket r {h.length(f.r_inner)} .. {h.length(f.r_outer)}, {a0:.1f} .. {a1:.1f} deg from +Y, depth "
                f"{h.show(f.depth)}, corners r {h.length(f.corner_radius)}")
    return f"{f.kind}"


# ------------------------------------------------------------------ the rim set-up
def rim_program(job, work, numbered: list, m: Machining) -> NCProgram:
    """Radial rim holes: one set-up, the web on a dividing head, an M0 stop to index before each hole."""
    units = job.output.sheet_units
    w = Writer(units)
    name = work.spec.name
    section = work.section
    rim_max = section.rim_radius_max
    safe = rim_max + m.clearance
    tools: dict[int, Tool] = {}
    reach: dict[int, float] = {}
    cuts: dict[int, cutting_data.Cut] = {}
    series = job.correction.drill_series
    current = None
    for n, f in numbered:
        tool = Tool("drill", f.diameter, f.point_angle)
        number = next((k for k, t in tools.items() if t.key == tool.key), len(tools) + 1)
        tools[number] = tool
        group = _group(f, work)
        cut = cutting_data.cut("drill", f.diameter, group, m)
        cuts.setdefault(number, cut)
        top = f._outermost()
        tip = f.entry - f.depth - f.point_length
        reach[number] = max(reach.get(number, 0.0), top - tip)
        r_plane = top + m.retract
        peck = f.depth + f.point_length > m.peck_above * f.diameter
        q = m.peck_depth or f.diameter
        if current is not None:
            w.block("G80")
            w.rapid(z=safe)
        w.block("M9")
        w.block("M5")
        w.comment(f"feature {n}, radial hole: STOP - index the web so that its radial line at {f.angle:.3f} deg "
                  f"from the crankpin (+Y, counter-clockwise seen from the outer face) points straight up, +Z; "
                  f"lock the head, then cycle start")
        w.block("M0")
        if current != number:
            w.block(f"T{number}", "M6")
            w.comment(f"T{number}: DRILL D{w.length(f.diameter)} HSS twist drill {designation(f.diameter, series)}, "
                      f"{f.point_angle:g} deg point")
            current = number
        w.block(f"S{cut.rpm:.0f}", "M3")
        w.block("M8")
        w.rapid(f.z, 0.0)
        w.rapid(z=safe, extra=("G43", f"H{number}"))
        w.comment(f"feature {n}, radial hole: drill {w.show(f.diameter)} from the rim at Z{w.length(f.entry)} "
                  f"(the axis meets the rim there) to Z{w.length(tip)} (tip; full diameter to "
                  f"Z{w.length(f.entry - f.depth)}), {'G83' if peck else 'G81'}; {group}, S{cut.rpm:.0f} "
                  f"F{w.feed(cut.feed_mm_min)}")
        w.cycle("G83" if peck else "G81", x=f.z, y=0.0, z=tip, r=r_plane, f=cut.feed_mm_min,
                q=q if peck else None)
    w.block("G80")
    w.rapid(z=safe)
    body = w.lines
    h = Writer(units)
    unit = h.unit_name()
    h.comment(f"geomgen NC program web-{name}-rim.nc: web {name}, radial holes from the rim, job {job.name}")
    h.comment(f"ISO 6983 word address, plain codes, absolute {unit} ({'G21' if unit == 'mm' else 'G20'} G90)")
    for line in CAUTIONS:
        h.comment(line)
    h.comment("SET-UP: the web on its edge on a dividing head or rotary table whose axis runs along the machine's "
              "X, on a mandrel through the main bore (or held by its shaft), the crank axis on the head's axis, "
              "inner face towards -X. Each hole is drilled with its radial line indexed straight up (+Z).")
    size = (f"web given as a 3D model, {h.show(section.thickness)} high overall (X0 on its inner face, "
            "z = 0 of the model; each hole's X is its height above that face)"
            if getattr(section, "model", None) is not None else f"web {h.show(section.thickness)} thick")
    h.comment(f"WORK ZERO G54: X0 on the web's inner face, +X towards the outer face; Y0 Z0 on the crank axis "
              f"(the head's axis). The rim is at most {h.show(rim_max)} from the axis; {size}. Check Z0 by "
              "touching the rim at a known radius.")
    h.comment(f"SAFE HEIGHT Z{h.length(safe)} (rim + {h.show(m.clearance)}); each hole's R plane is "
              f"{h.show(m.retract)} above the rim where the drill meets it.")
    h.comment("TOOLS (T number = H number; reach = from the rim to the tip):")
    for k, t in tools.items():
        cut = cuts[k]
        cap = ", held at the spindle's top speed" if cut.capped else ""
        h.comment(_declare(k, t, reach[k], h))
        h.comment(f"T{k}: DRILL D{h.length(t.diameter)} HSS twist drill {designation(t.diameter, series)}, "
                  f"{t.point_angle:g} deg point, S{cut.rpm:.0f} (Vc "
                  f"{cut.surface_speed:.1f} m/min{cap}), f {h.length(cut.per_rev)} {unit}/rev, "
                  f"F{h.feed(cut.feed_mm_min)} {unit}/min")
    for s in sorted({cut.source for cut in cuts.values()}):
        h.comment(f"cutting data: {s}")
    h.comment("OPERATIONS (feature numbers as on operations.csv and drawing.dxf):")
    for n, f in numbered:
        h.comment(f"feature {n}: radial hole {h.show(f.diameter)}, axis {f.angle:.3f} deg from +Y, z "
                  f"{h.show(f.z)}, {h.show(f.depth)} deep from the rim at r {h.show(f.entry)}")
    h.lines += ["G21 G17 G90 G94 G40 G49 G80" if units == "mm" else "G20 G17 G90 G94 G40 G49 G80", "G54"]
    h.lines += body
    h.lines += ["M9", "M5", "M30"]
    return NCProgram(name=f"web-{name}-rim.nc", web=name, face="rim", units=units, text=h.text(),
                     features=list(numbered), tools=tools, reach=reach, cuts=cuts, section=section,
                     thickness=section.thickness, machining=m, job=job)


# ------------------------------------------------------------------ every program of a plan
def programs(job, webs) -> tuple[list[NCProgram], list[str]]:
    """(every program of the plan's new work, notes on features no program cuts).

    job : geomgen.job.Job;  webs : pipeline.WebWork list (their planned, new features are programmed;
    existing ones are on the web already).
    """
    m = job.machining or Machining()
    if not m.programs:
        return [], []
    out, notes = [], []
    for work in webs:
        first = len(work.existing) + 1
        numbered = list(enumerate(work.plan.features, start=first))
        for face in ("outer", "inner"):
            mine = [(n, f) for n, f in numbered if f.kind in FACE_KINDS and f.face == face]
            if not mine:
                continue
            columns = {work.section.column(f) for _, f in mine}
            if len(columns) > 1:
                # a model whose features on this face sit on stretches of different thickness: one program
                # zeroed on one face would drill the others' through holes and plug bores wrong
                notes.append(f"web {work.spec.name} is a 3D model whose {face}-face features sit on flat "
                             "stretches of different thickness, so no program is written for that face; cut it "
                             "from the sheet, each depth from the face it enters")
                continue
            (z_bot, z_top), = columns
            # Z0 on the face the features enter; where the model stands higher on that side (a boss, a
            # step), the safe height and the R plane are raised by as much
            entry_z = work.section.entry_z(mine[0][1])
            above = (work.section.thickness - entry_z) if face == "outer" else entry_z
            mm = replace(m, clearance=m.clearance + above, retract=m.retract + above) if above > 1e-9 else m
            out.append(_Face(job, work, face, mine, mm, thickness=z_top - z_bot, raised=above,
                             entry_z=entry_z).write())
        rim = [(n, f) for n, f in numbered if f.kind == RIM_KIND]
        if rim:
            out.append(rim_program(job, work, rim, m))
        for n, f in numbered:
            if f.kind not in FACE_KINDS + (RIM_KIND,):
                notes.append(f"web {work.spec.name} feature {n} ({f.kind}) is in no program: cut it from the sheet")
    return out, notes
