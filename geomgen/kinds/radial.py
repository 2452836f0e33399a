"""A radial rim hole: drilled from the rim towards the crank axis, in a plane parallel to the faces.

The usual way to take counterweight off a full-circle flywheel without touching its faces.  Its axis
lies on the radial line at `angle` deg from +Y (counter-clockwise, web frame) at height `z`; `depth` is
the full-diameter depth measured along the axis from where the axis meets the rim (the drill's first
touch on a convex rim), and the drill point lies beyond.  Its mass properties are exact: the
full-diameter part is clipped by the real rim (circle or DXF outline) by quadrature over the drill's
section (kinds/radial_maths.py); the point is a closed-form cone.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from .. import loops
from ..drills import designation
from ..errors import BadInput
from .base import Dimension, FeatureKind, ReportCells, cone_massprops, deg, mm, point_length
from .radial_maths import QUADRATURE_NODES, axes, full_diameter_volume, point_rotation, rim_distance

#: how far outside the rim the drill starts, mm
RIM_OVERSHOOT = 1.0


@dataclass(frozen=True)
class Radial(FeatureKind):
    """A hole drilled in from the rim.

    angle : its axis, deg from +Y, counter-clockwise (web frame)
    diameter : mm;  depth : full-diameter depth from the rim along the axis, mm
    z : height of the axis above the inner face, mm (default: mid-thickness)
    point_angle : included angle of the drill point, deg (180 = flat bottom)
    """

    angle: float
    diameter: float
    depth: float
    z: float | None = None
    point_angle: float = 118.0
    face: str = "rim"
    kind: str = "radial"
    rim: loops.Loop | None = field(default=None, compare=False, repr=False)

    LENGTH_KEYS = ("diameter", "depth", "z")
    ANGLE_KEYS = ("angle", "point_angle")
    opens_rim = True
    INTERNAL_FIELDS = ("rim",)
    DRAWING_HEADINGS = (("axis", "angle deg"), ("z", "mm"), ("diameter", "mm"), ("drill", ""),
                        ("enters at", "radius mm"), ("full-diameter", "depth mm"), ("drill travel", "mm"))
    DRAWING_NOTE = "radial holes, drilled from the rim: depth and travel from where the axis meets the rim"
    SHEET_COLUMNS = (("axis_angle_deg", False), ("z", True), ("entry_radius", True))

    @classmethod
    def allowed_faces(cls):
        return ("rim",)

    @classmethod
    def read_more(cls, table, values, *, where, thickness, plug_material):
        if "z" not in values:
            if thickness is None:
                raise BadInput(f"{where}.z: needed here (the height of the drill's axis above the inner face)")
            values["z"] = 0.5 * thickness

    def to_table(self) -> dict:
        table = super().to_table()
        table.pop("rim", None)
        return table

    @property
    def point_length(self) -> float:
        return point_length(self.diameter, self.point_angle)

    def check(self, *, where, thickness):
        self.positive("diameter", where)
        self.positive("depth", where)
        if not (60.0 <= self.point_angle <= 180.0):
            raise BadInput(f"{where}.point_angle: must be 60 .. 180 deg, got {self.point_angle}")
        r = 0.5 * self.diameter
        if thickness is not None and not (r < self.z < thickness - r):
            raise BadInput(f"{where}.z: a {self.diameter:g} mm radial hole at z = {self.z:g} mm breaks a face "
                           f"of the {thickness:g} mm web; need {r:g} < z < {thickness - r:g}")

    # ---------------------------------------------------------------- on the web
    def on(self, section) -> Radial:
        placed = replace(self, rim=section.outer)
        placed._require_rim("radial hole")
        return placed

    def _require_rim(self, where: str) -> None:
        if self.rim is None:
            raise BadInput(f"{where}: a radial hole must be placed on its web (its rim) first")
        s = self._rim_across()
        if not np.all(np.isfinite(s)):
            raise BadInput(f"{where}: the radial line at {self.angle:g} deg does not meet the rim across the "
                           f"{self.diameter:g} mm drill")
        if np.min(s) - self.shoulder_s <= 1e-6:
            raise BadInput(f"{where}.depth: {self.depth:g} mm does not reach full diameter inside the rim "
                           f"(the rim curves away {self.entry - float(np.min(s)):.3g} mm across the drill)")

    def _rim_across(self) -> np.ndarray:
        u = 0.5 * self.diameter * np.sin(np.linspace(-0.5 * math.pi, 0.5 * math.pi, QUADRATURE_NODES))
        return rim_distance(self.rim, self.angle, u)

    @property
    def entry(self) -> float:
        """Distance from the crank axis to where the drill's axis meets the rim, mm."""
        return float(rim_distance(self.rim, self.angle, [0.0])[0])

    @property
    def shoulder_s(self) -> float:
        return self.entry - self.depth

    def _outermost(self) -> float:
        return float(np.max(self._rim_across()))

    # ---------------------------------------------------------------- geometry
    def footprint(self) -> loops.Loop:
        """Its shadow on the face: the drill's width from the point's tip out past the rim (mm, ccw)."""
        self._require_rim("radial hole")
        e_s, e_u = axes(self.angle)
        a = 0.5 * self.diameter
        s0, s_out = self.shoulder_s, self._outermost() + RIM_OVERSHOOT
        local = [(s_out, -a), (s_out, a), (s0, a), (s0 - self.point_length, 0.0), (s0, -a)]
        if self.point_length <= 0:
            local.pop(3)
        pts = [tuple(s * e_s + u * e_u) for s, u in local]
        return loops.Loop.from_points(pts).oriented(True)

    def z_range(self, thickness):
        r = 0.5 * self.diameter
        return (self.z - r, self.z + r)


    def order_key(self):
        return (3, self.angle % 360.0)

    def removed(self, density: float):
        self._require_rim("radial hole")
        r = 0.5 * self.diameter
        body = full_diameter_volume(outer=self.rim, angle_deg=self.angle, radius=r, shoulder_s=self.shoulder_s,
                                    z=self.z, density_g_cm3=density)
        if self.point_length > 0:
            e_s, _ = axes(self.angle)
            base = self.shoulder_s * e_s
            body = body + cone_massprops(radius=r, height=self.point_length, density_g_cm3=density).transformed(
                rotation=point_rotation(self.angle), offset=(base[0], base[1], self.z))
        return body

    def massprops(self, *, thickness, web_density, plug_density=None):
        return -self.removed(web_density)

    # ---------------------------------------------------------------- outputs
    def label(self) -> str:
        return (f"radial hole {self.diameter:g} mm, {self.depth:g} mm deep from the rim at {self.angle:g} deg "
                f"from +Y, z {self.z:g} mm")

    def tag_point(self):
        e_s, _ = axes(self.angle)
        p = (self.entry - 0.5 * self.depth) * e_s
        return (float(p[0]), float(p[1]))

    @property
    def hidden_in_face_view(self) -> bool:
        return True

    def report_cells(self):
        return ReportCells("radial hole", f"axis {self.angle:,.1f}° from +Y, z {self.z:,.2f} mm, enters at "
                                          f"r {self.entry:,.2f}", f"{self.diameter:,.2f}",
                           f"{self.depth:,.2f} from the rim + {self.point_length:,.2f} point")

    def fill_sheet(self, cells):
        e_s, _ = axes(self.angle)
        x, y = self.entry * e_s
        cells.put("x", float(x))
        cells.put("y", float(y))
        cells.put_size("diameter", self.diameter)
        cells.set("through", "no")
        cells.set("bottom", "flat" if self.point_angle >= 180.0 else "point")
        cells.put("depth", self.depth)
        cells.put("tip_depth", self.depth + self.point_length)
        cells.put_angle("point_angle_deg", self.point_angle)
        cells.set("drill_size", designation(self.diameter, cells.correction.drill_series))
        cells.put_size("drill", self.diameter)
        cells.put_angle("axis_angle_deg", self.angle)
        cells.put("z", self.z)
        cells.put("entry_radius", self.entry)

    def drawing_row(self, *, thickness, drill_series, plug_fit, default_plug_density):
        return (deg(self.angle), mm(self.z), mm(self.diameter), designation(self.diameter, drill_series),
                mm(self.entry), mm(self.depth), mm(self.depth + self.point_length))

    def dimensions(self):
        e_s, _ = axes(self.angle)
        shoulder = self.shoulder_s * e_s
        return [Dimension("from_axis", point=(float(shoulder[0]), float(shoulder[1])))]

    def tool(self, thickness):
        from . import _tools

        return _tools.radial_drill(angle_deg=self.angle, z=self.z, start_s=self._outermost() + RIM_OVERSHOOT,
                                   shoulder_s=self.shoulder_s, diameter=self.diameter,
                                   point_length=self.point_length)
