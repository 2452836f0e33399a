"""Correction features on a web: holes, kidney pockets, heavy-metal plugs.

Every feature is given in its web's frame (crank axis = Z, pin on +Y, z from
0 at the inner face to the thickness at the outer face).  A feature cut from
the outer face starts at z = thickness and goes down; one from the inner face
starts at z = 0 and goes up.

This module holds the feature types, their reading from and writing to job /
plan tables, and (below) their analytic mass properties, footprints and
depth ranges.
"""

from __future__ import annotations

import math
from dataclasses import MISSING as _MISSING, asdict, dataclass

from .errors import BadInput
from .units import to_internal

FACES = ("outer", "inner")


@dataclass(frozen=True)
class Hole:
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

    @property
    def point_length(self) -> float:
        """Axial length of the drill point (cone) beyond the shoulder, mm."""
        if self.through or self.point_angle >= 180.0:
            return 0.0
        return 0.5 * self.diameter / math.tan(math.radians(0.5 * self.point_angle))


@dataclass(frozen=True)
class Pocket:
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

    @property
    def span_deg(self) -> float:
        return (self.angle_end - self.angle_start) % 360.0 or 360.0


@dataclass(frozen=True)
class Plug:
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


Feature = Hole | Pocket | Plug
KINDS = {"hole": Hole, "pocket": Pocket, "plug": Plug}

_LENGTH_KEYS = {
    "hole": ("x", "y", "diameter", "depth"),
    "pocket": ("r_inner", "r_outer", "depth", "corner_radius"),
    "plug": ("x", "y", "diameter", "length"),
}
_ANGLE_KEYS = {"hole": ("point_angle",), "pocket": ("angle_start", "angle_end"), "plug": ()}


def feature_from_table(table: dict, *, where: str, thickness: float | None = None) -> Feature:
    """A feature from a job or plan.json table; BadInput names `where` and the key.

    thickness : the web thickness, mm, used to fill `depth` of a through hole
    and `length` of a plug when they are left out.
    """
    if not isinstance(table, dict):
        raise BadInput(f"{where}: a feature must be a table with 'kind', got {table!r}")
    kind = table.get("kind")
    if kind not in KINDS:
        raise BadInput(f"{where}.kind: must be one of {', '.join(KINDS)}, got {kind!r}")
    cls = KINDS[kind]
    allowed = set(cls.__dataclass_fields__)
    unknown = sorted(set(table) - allowed)
    if unknown:
        raise BadInput(f"{where}: unknown key {unknown[0]!r} for a {kind}; allowed: {', '.join(sorted(allowed))}")
    values: dict = {}
    for key in _LENGTH_KEYS[kind] + _ANGLE_KEYS[kind]:
        if key in table:
            values[key] = to_internal(table[key], "angle" if key in _ANGLE_KEYS[kind] else "length",
                                      f"{where}.{key}")
    if "face" in table:
        if table["face"] not in FACES:
            raise BadInput(f"{where}.face: must be 'outer' or 'inner', got {table['face']!r}")
        values["face"] = table["face"]
    if kind == "hole":
        through = table.get("through", False)
        if not isinstance(through, bool):
            raise BadInput(f"{where}.through: must be true or false, got {through!r}")
        values["through"] = through
        if through and "depth" not in values:
            if thickness is None:
                raise BadInput(f"{where}.depth: needed for a through hole here")
            values["depth"] = thickness
    if kind == "plug":
        if "density" in table:
            values["density"] = to_internal(table["density"], "density", f"{where}.density")
            values["material"] = table.get("material")
        elif "material" in table:
            values["material"] = str(table["material"])
        if "length" not in values and thickness is not None:
            values["length"] = thickness
    required = [k for k in _LENGTH_KEYS[kind] + _ANGLE_KEYS[kind]
                if k not in values and cls.__dataclass_fields__[k].default is _MISSING]
    if required:
        raise BadInput(f"{where}: a {kind} needs {', '.join(required)}")
    feature = cls(**values)
    check_dimensions(feature, where=where, thickness=thickness)
    return feature


def check_dimensions(feature: Feature, *, where: str, thickness: float | None) -> None:
    """Sizes that make no solid: zero or negative, deeper than the web, etc."""
    def positive(name):
        value = getattr(feature, name)
        if not value > 0:
            raise BadInput(f"{where}.{name}: must be > 0 mm, got {value}")

    if isinstance(feature, Hole):
        positive("diameter")
        positive("depth")
        if not (60.0 <= feature.point_angle <= 180.0):
            raise BadInput(f"{where}.point_angle: must be 60 .. 180 deg, got {feature.point_angle}")
        if thickness is not None and feature.depth + (0 if feature.through else feature.point_length) > thickness + 1e-9:
            if not feature.through:
                raise BadInput(f"{where}.depth: {feature.depth:g} mm plus the {feature.point_length:.3g} mm drill point "
                               f"goes past the {thickness:g} mm web; make it through = true or shallower")
    elif isinstance(feature, Pocket):
        positive("depth")
        if not (0 <= feature.r_inner < feature.r_outer):
            raise BadInput(f"{where}: need 0 <= r_inner < r_outer, got {feature.r_inner} and {feature.r_outer}")
        if not (0 < feature.span_deg < 360):
            raise BadInput(f"{where}: angle_end must differ from angle_start")
        if not (0 <= feature.corner_radius <= 0.5 * (feature.r_outer - feature.r_inner) + 1e-12):
            raise BadInput(f"{where}.corner_radius: must be 0 .. half the radial width "
                           f"({0.5 * (feature.r_outer - feature.r_inner):g} mm), got {feature.corner_radius}")
        if thickness is not None and feature.depth >= thickness:
            raise BadInput(f"{where}.depth: a pocket must leave a floor; {feature.depth:g} mm >= web {thickness:g} mm")
    elif isinstance(feature, Plug):
        positive("diameter")
        positive("length")
        if thickness is not None and feature.length > thickness + 1e-9:
            raise BadInput(f"{where}.length: {feature.length:g} mm is longer than the {thickness:g} mm web")
        if feature.material is None and feature.density is None:
            raise BadInput(f"{where}: a plug needs 'material' or 'density'")


def feature_to_table(feature: Feature) -> dict:
    """The table written to plan.json (the same keys a job accepts)."""
    table = {k: v for k, v in asdict(feature).items() if v is not None}
    if isinstance(feature, Hole) and not feature.through:
        table.pop("through")
    return table
