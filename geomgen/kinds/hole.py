"""A drilled hole from either face: full-diameter depth plus a drill point, or right through."""

from __future__ import annotations

from dataclasses import dataclass

from ..drills import designation
from ..errors import BadInput
from ..massprops import MassProps
from .base import (
    FeatureKind,
    ReportCells,
    RoundOnFace,
    axial_body,
    cone_massprops,
    cylinder_massprops,
    deg,
    face_z_range,
    mm,
    point_length,
)


@dataclass(frozen=True)
class Hole(RoundOnFace, FeatureKind):
    """A drilled hole.

    x, y : centre on the face, mm (web frame)
    diameter : mm
    depth : full-diameter depth (to the shoulder of the drill point), mm;
            for a through hole the web thickness
    point_angle : included angle of the drill point, deg (118 common
                  practice; 180 = flat bottom)
    face : "outer" | "inner" — the face it is drilled from
    through : right through the web (no point)
    """

    x: float
    y: float
    diameter: float
    depth: float
    point_angle: float = 118.0
    face: str = "outer"
    through: bool = False
    kind: str = "hole"

    LENGTH_KEYS = ("x", "y", "diameter", "depth")
    ANGLE_KEYS = ("point_angle",)
    DRAWING_HEADINGS = (("x", "mm"), ("y", "mm"), ("diameter", "mm"), ("drill", ""),
                        ("full-diameter", "depth mm"), ("drill travel", "mm"), ("point", "angle deg"))
    DRAWING_NOTE = "holes: drill travel = to the tip of the drill point"

    @classmethod
    def read_more(cls, table, values, *, where, thickness, plug_material):
        through = table.get("through", False)
        if not isinstance(through, bool):
            raise BadInput(f"{where}.through: must be true or false, got {through!r}")
        values["through"] = through
        if through:
            if thickness is not None:
                if "depth" in values and abs(values["depth"] - thickness) > 1e-6:
                    raise BadInput(f"{where}.depth: a through hole is as deep as the web ({thickness:g} mm), "
                                   f"got {values['depth']:g} mm; leave depth out or set through = false")
                values["depth"] = thickness
            elif "depth" not in values:
                raise BadInput(f"{where}.depth: needed for a through hole here (on a web given as a model, the "
                               "thickness of the stretch it goes through)")

    def to_table(self) -> dict:
        table = super().to_table()
        if not self.through:
            table.pop("through")
        return table

    @property
    def point_length(self) -> float:
        """Axial length of the drill point (cone) beyond the shoulder, mm."""
        return 0.0 if self.through else point_length(self.diameter, self.point_angle)

    def check(self, *, where, thickness):
        self.positive("diameter", where)
        self.positive("depth", where)
        if not (60.0 <= self.point_angle <= 180.0):
            raise BadInput(f"{where}.point_angle: must be 60 .. 180 deg, got {self.point_angle}")
        if thickness is not None and not self.through and self.depth + self.point_length > thickness + 1e-9:
            raise BadInput(f"{where}.depth: {self.depth:g} mm plus the {self.point_length:.3g} mm drill point "
                           f"goes past the {thickness:g} mm web; make it through = true or shallower")

    # ---------------------------------------------------------------- geometry
    def z_range(self, thickness):
        if self.through:
            return (0.0, thickness)
        return face_z_range(self.face, thickness, self.depth + self.point_length)

    def face_depth(self, thickness):
        return None if self.through else self.depth

    def order_key(self):
        return self.clockwise_key(1)

    def removed(self, thickness: float, density: float) -> MassProps:
        """The material the drill takes out (a positive body), web frame."""
        r = 0.5 * self.diameter
        depth = thickness if self.through else self.depth
        down = self.face == "outer"  # drilled from z = thickness towards -Z
        z_face = thickness if down else 0.0
        body = axial_body(cylinder_massprops(radius=r, height=depth, density_g_cm3=density),
                          x=self.x, y=self.y, z_face=z_face, into_minus_z=down)
        if self.point_length > 0.0:
            z_shoulder = z_face - depth if down else z_face + depth
            body = body + axial_body(cone_massprops(radius=r, height=self.point_length, density_g_cm3=density),
                                     x=self.x, y=self.y, z_face=z_shoulder, into_minus_z=down)
        return body

    def massprops(self, *, thickness, web_density, plug_density=None):
        return -self.removed(thickness, web_density)

    # ---------------------------------------------------------------- outputs
    def _depth_words(self) -> str:
        if self.through:
            return "through"
        if self.point_angle >= 180.0:
            return f"{self.depth:g} mm deep, flat bottom"
        return f"{self.depth:g} mm deep + {self.point_angle:g} deg point"

    def label(self) -> str:
        return f"hole {self.diameter:g} mm {self._depth_words()} at ({self.x:g}, {self.y:g}), {self.face} face"

    def report_cells(self):
        depth = "through" if self.through else f"{self.depth:,.2f} + {self.point_length:,.2f} point"
        return ReportCells("hole", f"x {self.x:,.2f}, y {self.y:,.2f} mm", f"{self.diameter:,.2f}", depth)

    def fill_sheet(self, cells):
        depth = cells.thickness if self.through else self.depth
        cells.put("x", cells.face_view(self.x, self.face))
        cells.put("y", self.y)
        cells.put_size("diameter", self.diameter)
        cells.set("through", "yes" if self.through else "no")
        cells.set("bottom", "" if self.through else ("flat" if self.point_angle >= 180.0 else "point"))
        cells.put("depth", depth)
        # through: the drill travels its point length past the far face to cut full diameter there
        cells.put("tip_depth", depth + point_length(self.diameter, self.point_angle))
        cells.put_angle("point_angle_deg", self.point_angle)
        cells.set("drill_size", designation(self.diameter, cells.correction.drill_series))
        cells.put_size("drill", self.diameter)

    def drawing_row(self, *, thickness, drill_series, plug_fit, default_plug_density):
        depth = thickness if self.through else self.depth
        travel = "through" if self.through else mm(self.depth + self.point_length)
        angle = deg(self.point_angle) + (" (flat)" if self.point_angle >= 180.0 else "")
        return (mm(self.x), mm(self.y), mm(self.diameter), designation(self.diameter, drill_series), mm(depth),
                travel, angle)

    def tool(self, thickness):
        from . import _tools

        return _tools.drill(x=self.x, y=self.y, diameter=self.diameter, depth=self.depth,
                            point_length=self.point_length, face=self.face, through=self.through,
                            thickness=thickness)
