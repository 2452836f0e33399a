"""A heavy-metal plug: a flat-bottomed bore reamed to a press fit, filled flush by the plug."""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..drills import designation
from ..errors import BadInput
from ..materials import MATERIALS
from ..materials import custom as custom_material
from ..materials import material as named_material
from ..plugbore import plug_bore
from ..units import to_internal
from .base import FeatureKind, ReportCells, RoundOnFace, axial_body, cylinder_massprops, face_z_range, mm


def least_plug_length(diameter: float, *, min_length: float, min_ratio: float) -> float:
    """The shortest plug of `diameter` mm that a press fit holds by the job's rule, mm:
    `plug_min_length`, and `plug_min_length_ratio` times the diameter."""
    return max(float(min_length), float(min_ratio) * float(diameter))


@dataclass(frozen=True)
class Plug(RoundOnFace, FeatureKind):
    """A flat-bottomed bore filled flush by a heavy-metal plug.

    x, y : centre, mm;  diameter : mm;  length : mm (= thickness for a
    through plug);  face : the face it is flush with;
    material : name from geomgen.materials, or None with `density` (g/cm^3)
    """

    x: float
    y: float
    diameter: float
    length: float
    material: str | None = "W-alloy-class-3"
    density: float | None = None
    face: str = "outer"
    kind: str = "plug"

    LENGTH_KEYS = ("x", "y", "diameter", "length")
    fills = True
    DRAWING_HEADINGS = (("x", "mm"), ("y", "mm"), ("bore", "mm"), ("reamed", "to, bottom"), ("bore", "depth mm"),
                        ("plug", "material"), ("plug", "g/cm3"), ("plug", "length mm"))
    DRAWING_NOTE = "plugs: bores reamed to the ISO 286 class shown (press fit, limits on operations.csv); plug flush"
    SHEET_COLUMNS = (("pre_ream", True), ("ream_stock", True), ("bore_fit", False), ("bore_min", True),
                     ("bore_max", True), ("plug_fit", False), ("plug_min", True), ("plug_max", True),
                     ("interference_min", True), ("interference_max", True), ("plug_length", True),
                     ("plug_material", False), ("plug_density_g_cm3", False))

    @classmethod
    def read_more(cls, table, values, *, where, thickness, plug_material):
        if "density" in table and "material" in table:
            raise BadInput(f"{where}: give the plug 'material' or 'density', not both")
        if "density" in table:
            rho = to_internal(table["density"], "density", f"{where}.density")
            values["density"] = custom_material(rho, f"{where}.density").density
            values["material"] = None
        elif "material" in table:
            values["material"] = named_material(str(table["material"]), f"{where}.material").name
        elif plug_material is not None:
            # a plug that names no material of its own is of the job's plug_material
            if plug_material.name in MATERIALS:
                values["material"] = plug_material.name
            else:
                values["material"], values["density"] = None, plug_material.density
        if "length" not in values and thickness is not None:
            values["length"] = thickness

    def check(self, *, where, thickness):
        self.positive("diameter", where)
        self.positive("length", where)
        if thickness is not None and self.length > thickness + 1e-9:
            raise BadInput(f"{where}.length: {self.length:g} mm is longer than the {thickness:g} mm web")
        if self.material is None and self.density is None:
            raise BadInput(f"{where}: a plug needs 'material' or 'density'")

    def plug_density(self) -> float:
        """g/cm^3: its own `density`, else its material's nominal one."""
        if self.density is not None:
            return float(self.density)
        return named_material(self.material, "plug.material").density

    def length_shortfall(self, *, min_length: float, min_ratio: float) -> str | None:
        """Why this plug is too short to be held by the job's rule (naming the key), or None."""
        tol = 1e-9
        if self.length < min_length - tol:
            return (f"{self.length:g} mm long, shorter than correction.plug_min_length = {min_length:g} mm")
        if self.length < min_ratio * self.diameter - tol:
            return (f"{self.length:g} mm long for its {self.diameter:g} mm diameter, length/diameter "
                    f"{self.length / self.diameter:.2f}, less than correction.plug_min_length_ratio = {min_ratio:g}")
        return None

    def plug_mass_g(self) -> float:
        return self.plug_density() * 1e-3 * math.pi * 0.25 * self.diameter ** 2 * self.length

    # ---------------------------------------------------------------- geometry
    def z_range(self, thickness):
        return face_z_range(self.face, thickness, self.length)

    def through_web(self, thickness: float) -> bool:
        return self.length >= thickness - 1e-9


    def face_depth(self, thickness):
        return None if self.through_web(thickness) else self.length

    def order_key(self):
        return self.clockwise_key(2)

    def massprops(self, *, thickness, web_density, plug_density=None):
        rho_plug = self.plug_density() if plug_density is None else plug_density
        down = self.face == "outer"
        body = axial_body(cylinder_massprops(radius=0.5 * self.diameter, height=self.length,
                                             density_g_cm3=rho_plug - web_density),
                          x=self.x, y=self.y, z_face=thickness if down else 0.0, into_minus_z=down)
        # the bore is filled flush: the web's volume does not change, only its mass
        return type(body)(body.mass, body.first_moment, body.second_moment, 0.0)

    # ---------------------------------------------------------------- outputs
    def _what(self) -> str:
        return self.material if self.material is not None else f"{self.density:g} g/cm^3"

    def label(self) -> str:
        return f"plug {self.diameter:g} mm x {self.length:g} mm at ({self.x:g}, {self.y:g}), {self._what()}"

    def report_cells(self):
        return ReportCells(f"plug ({self.material or 'custom'})", f"x {self.x:,.2f}, y {self.y:,.2f} mm",
                           f"{self.diameter:,.2f}", f"{self.length:,.2f} (plug length)")

    def fill_sheet(self, cells):
        c = cells.correction
        bore = plug_bore(diameter_mm=self.diameter, length_mm=self.length, thickness_mm=cells.thickness,
                         drills=c.drills, point_angle_deg=c.point_angle, fit=c.plug_fit, where=cells.where)
        cells.put("x", cells.face_view(self.x, self.face))
        cells.put("y", self.y)
        cells.put_size("diameter", self.diameter)
        cells.set("through", "yes" if bore.through else "no")
        cells.set("bottom", "" if bore.through else "flat")
        cells.put("depth", bore.depth_mm)
        cells.put("tip_depth", bore.tip_depth_mm)
        cells.put_angle("point_angle_deg", bore.point_angle_deg)
        cells.set("drill_size", designation(bore.drill_mm, c.drill_series if bore.drill_in_series else "list"))
        cells.put_size("drill", bore.drill_mm)
        cells.put_size("pre_ream", bore.pre_ream_mm)
        cells.put_size("ream_stock", bore.ream_stock_mm)
        lim = bore.limits
        low_bore = cells.put_limit("bore_min", lim.bore_min_mm, upper=False)
        high_bore = cells.put_limit("bore_max", lim.bore_max_mm, upper=True)
        low_plug = cells.put_limit("plug_min", lim.plug_min_mm, upper=False)
        high_plug = cells.put_limit("plug_max", lim.plug_max_mm, upper=True)
        # from the printed limits, so that the pair the shop measures inside them has this interference
        cells.put_size_value("interference_min", low_plug - high_bore)
        cells.put_size_value("interference_max", high_plug - low_bore)
        cells.set("bore_fit", lim.bore_class)
        cells.set("plug_fit", lim.plug_class)
        cells.put("plug_length", self.length)
        cells.set("plug_material", self.material or "custom")
        cells.set("plug_density_g_cm3", f"{cells.plug_density:.3f}" if cells.plug_density is not None else "")

    def drawing_row(self, *, thickness, drill_series, plug_fit, default_plug_density):
        through = self.through_web(thickness)
        rho = self.plug_density() if (self.material or self.density) else default_plug_density
        finish = f"{plug_fit.split('/')[0]} " + ("through" if through else "flat")
        return (mm(self.x), mm(self.y), mm(self.diameter), finish, mm(self.length), self.material or "custom",
                f"{rho:.2f}" if rho is not None else "", mm(self.length))

    def tool(self, thickness):
        from . import _tools

        return _tools.plug_bore_tool(x=self.x, y=self.y, diameter=self.diameter, length=self.length,
                                     face=self.face, thickness=thickness)

    def filler(self, thickness):
        from . import _tools

        return _tools.plug_filler(x=self.x, y=self.y, diameter=self.diameter, length=self.length,
                                  face=self.face, thickness=thickness)
