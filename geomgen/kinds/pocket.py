"""A kidney pocket: an annular sector with a flat floor and filleted corners."""

from __future__ import annotations

import math
from dataclasses import dataclass

from .. import loops as _loops
from ..errors import BadInput
from .base import Dimension, FeatureKind, ReportCells, deg, face_z_range, mm


@dataclass(frozen=True)
class Pocket(FeatureKind):
    """An annular-sector ("kidney") pocket with a flat floor.

    r_inner, r_outer : radii from the crank axis, mm
    angle_start, angle_end : deg from +Y, counter-clockwise in the web frame;
                             the pocket runs ccw from start to end
    depth : mm, from `face`
    corner_radius : mm, the radius of the four plan-view corners
                    (at most half the radial width)
    """

    r_inner: float
    r_outer: float
    angle_start: float
    angle_end: float
    depth: float
    corner_radius: float = 0.0
    face: str = "outer"
    kind: str = "pocket"

    LENGTH_KEYS = ("r_inner", "r_outer", "depth", "corner_radius")
    ANGLE_KEYS = ("angle_start", "angle_end")
    DRAWING_HEADINGS = (("r_inner", "mm"), ("r_outer", "mm"), ("angle_start", "deg"), ("angle_end", "deg"),
                        ("depth", "mm"), ("corner", "radius mm"))
    DRAWING_NOTE = "kidney pockets, flat floor; angles from +Y, counter-clockwise"
    SHEET_COLUMNS = (("r_inner", True), ("r_outer", True), ("angle_start_deg", False), ("angle_end_deg", False),
                     ("corner_radius", True))

    @property
    def span_deg(self) -> float:
        return (self.angle_end - self.angle_start) % 360.0 or 360.0

    def check(self, *, where, thickness):
        self.positive("depth", where)
        if not (0 <= self.r_inner < self.r_outer):
            raise BadInput(f"{where}: need 0 <= r_inner < r_outer, got {self.r_inner} and {self.r_outer}")
        if not (0 < self.span_deg < 360):
            raise BadInput(f"{where}: angle_end must differ from angle_start")
        if not (0 <= self.corner_radius <= 0.5 * (self.r_outer - self.r_inner) + 1e-12):
            raise BadInput(f"{where}.corner_radius: must be 0 .. half the radial width "
                           f"({0.5 * (self.r_outer - self.r_inner):g} mm), got {self.corner_radius}")
        if thickness is not None and self.depth >= thickness:
            raise BadInput(f"{where}.depth: a pocket must leave a floor; {self.depth:g} mm >= web {thickness:g} mm")

    # ---------------------------------------------------------------- geometry
    def footprint(self) -> _loops.Loop:
        return kidney_loop(r_inner=self.r_inner, r_outer=self.r_outer, angle_start=self.angle_start,
                           angle_end=self.angle_end, corner_radius=self.corner_radius)

    def z_range(self, thickness):
        return face_z_range(self.face, thickness, self.depth)


    def face_depth(self, thickness):
        return self.depth

    def order_key(self):
        return (0, self.angle_start)

    def massprops(self, *, thickness, web_density, plug_density=None):
        z0, z1 = self.z_range(thickness)
        return -_loops.prism(self.footprint().area_moments(), z0=z0, z1=z1, density_g_cm3=web_density)

    # ---------------------------------------------------------------- outputs
    def label(self) -> str:
        return (f"pocket r {self.r_inner:g}..{self.r_outer:g} mm, {self.angle_start:g}..{self.angle_end:g} deg, "
                f"depth {self.depth:g} mm, corners r{self.corner_radius:g}, {self.face} face")

    def tag_point(self):
        mid = math.radians(self.angle_start + 0.5 * self.span_deg + 90.0)
        rm = 0.5 * (self.r_inner + self.r_outer)
        return (rm * math.cos(mid), rm * math.sin(mid))

    def report_cells(self):
        where = (f"r {self.r_inner:,.2f}–{self.r_outer:,.2f} mm, {self.angle_start:,.1f}° to "
                 f"{self.angle_start + self.span_deg:,.1f}°, corners r {self.corner_radius:,.2f}")
        return ReportCells("pocket", where, "—", f"{self.depth:,.2f} (flat)")

    def fill_sheet(self, cells):
        start, end = self.angle_start, self.angle_start + self.span_deg
        if self.face == "inner":
            start, end = -end, -start
        cells.set("through", "no")
        cells.set("bottom", "flat")
        cells.put("depth", self.depth)
        cells.put("r_inner", self.r_inner)
        cells.put("r_outer", self.r_outer)
        cells.put_angle("angle_start_deg", start)
        cells.put_angle("angle_end_deg", end)
        cells.put("corner_radius", self.corner_radius)

    def drawing_row(self, *, thickness, drill_series, plug_fit, default_plug_density):
        return (mm(self.r_inner), mm(self.r_outer), deg(self.angle_start), deg(self.angle_end), mm(self.depth),
                mm(self.corner_radius))

    def dimensions(self):
        # the radii a fifth of the span in from each end, clear of the span's text in the middle
        first = self.angle_start + 90.0                   # math angle of the start radial line
        out = [Dimension("radius", radius=r, angle=first + share * self.span_deg)
               for r, share in ((self.r_outer, 0.8), (self.r_inner, 0.2)) if r > 0]
        out.append(Dimension("span", radius=self.r_inner if self.r_inner > 0 else self.r_outer, angle=first,
                             angle_end=first + self.span_deg))
        return out

    def tool(self, thickness):
        from . import _tools

        z0, z1 = _tools.blind_range(self.face, thickness, self.depth)
        return _tools.prism(self.footprint().oriented(True), z0, z1)


def _polar(r: float, deg: float) -> tuple[float, float]:
    a = math.radians(deg)
    return (r * math.cos(a), r * math.sin(a))


def kidney_loop(*, r_inner: float, r_outer: float, angle_start: float, angle_end: float,
                corner_radius: float = 0.0, where: str = "pocket") -> _loops.Loop:
    """The plan view of an annular-sector pocket, counter-clockwise (mm).

    Angles in deg from +Y, ccw (the contract's web angles); the pocket runs
    ccw from angle_start to angle_end.  Each of the four corners is a fillet
    of `corner_radius` tangent to the radial line and to the arc: an outer
    fillet's centre lies at r_outer - rc, an inner one's at r_inner + rc
    (the inner arc is concave seen from the pocket), each rc from the radial
    line.  With r_inner = 0 the sector comes to a point at the axis, rounded
    by a fillet tangent to both radial lines when the span is under 180 deg.
    """
    span = (angle_end - angle_start) % 360.0 or 360.0
    t_s = angle_start + 90.0          # math angle (from +X) of the start radial line
    t_e = t_s + span
    ri, ro, rc = float(r_inner), float(r_outer), float(corner_radius)
    Arc, Line, Loop = _loops.Arc, _loops.Line, _loops.Loop
    if rc <= 0.0:
        outer = Arc((0.0, 0.0), ro, t_s, span)
        if ri > 0.0:
            inner = Arc((0.0, 0.0), ri, t_e, -span)
            return Loop((outer, Line(outer.end, inner.start), inner, Line(inner.end, outer.start)))
        return Loop((outer, Line(outer.end, (0.0, 0.0)), Line((0.0, 0.0), outer.start)))

    d_o = math.degrees(math.asin(rc / (ro - rc)))
    if 2.0 * d_o >= span:
        raise BadInput(f"{where}.corner_radius: {rc:g} mm corners do not fit a {span:g} deg pocket at "
                       f"r_outer {ro:g} mm (need about 2 * corner_radius / r_outer rad of span)")
    c_oe = _polar(ro - rc, t_e - d_o)
    c_os = _polar(ro - rc, t_s + d_o)
    segs = [Arc((0.0, 0.0), ro, t_s + d_o, span - 2.0 * d_o),
            Arc(c_oe, rc, t_e - d_o, 90.0 + d_o)]
    if ri > 0.0:
        d_i = math.degrees(math.asin(rc / (ri + rc)))
        if 2.0 * d_i >= span:
            raise BadInput(f"{where}.corner_radius: {rc:g} mm corners do not fit a {span:g} deg pocket at "
                           f"r_inner {ri:g} mm")
        c_ie = _polar(ri + rc, t_e - d_i)
        c_is = _polar(ri + rc, t_s + d_i)
        fil_ie = Arc(c_ie, rc, t_e + 90.0, 90.0 - d_i)
        inner = Arc((0.0, 0.0), ri, t_e - d_i, -(span - 2.0 * d_i))
        fil_is = Arc(c_is, rc, t_s + d_i + 180.0, 90.0 - d_i)
        tail = [fil_ie, inner, fil_is]
    elif span < 180.0:
        half = 0.5 * math.radians(span)
        apex = _polar(rc / math.sin(half), t_s + 0.5 * span)
        tail = [Arc(apex, rc, t_e + 90.0, 180.0 - span)]
    else:
        tail = []
    fil_os = Arc(c_os, rc, t_s - 90.0, 90.0 + d_o)
    chain = segs + tail + [fil_os]
    # radial lines between the fillets (skipped where two fillets meet)
    out = []
    for k, seg in enumerate(chain):
        out.append(seg)
        nxt = chain[(k + 1) % len(chain)]
        if math.dist(seg.end, nxt.start) > 1e-9 * max(1.0, ro):
            out.append(Line(seg.end, nxt.start))
    return Loop(tuple(out))


