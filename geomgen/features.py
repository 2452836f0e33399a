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

import numpy as _np

from . import loops as _loops
from .errors import BadInput
from .massprops import MassProps
from .materials import custom as _custom_material
from .materials import MATERIALS as _MATERIALS
from .materials import material as _material
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


def feature_from_table(table: dict, *, where: str, thickness: float | None = None,
                       plug_material=None) -> Feature:
    """A feature from a job or plan.json table; BadInput names `where` and the key.

    thickness : the web thickness, mm, used to fill `depth` of a through hole
    and `length` of a plug when they are left out.
    plug_material : the job's `plug_material` (a materials.Material), which a plug
    that names neither `material` nor `density` is made of.
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
        if through:
            if thickness is not None:
                if "depth" in values and abs(values["depth"] - thickness) > 1e-6:
                    raise BadInput(f"{where}.depth: a through hole is as deep as the web ({thickness:g} mm), "
                                   f"got {values['depth']:g} mm; leave depth out or set through = false")
                values["depth"] = thickness
            elif "depth" not in values:
                raise BadInput(f"{where}.depth: needed for a through hole here")
    if kind == "plug":
        if "density" in table and "material" in table:
            raise BadInput(f"{where}: give the plug 'material' or 'density', not both")
        if "density" in table:
            rho = to_internal(table["density"], "density", f"{where}.density")
            values["density"] = _custom_material(rho, f"{where}.density").density
            values["material"] = None
        elif "material" in table:
            values["material"] = _material(str(table["material"]), f"{where}.material").name
        elif plug_material is not None:
            if plug_material.name in _MATERIALS:
                values["material"] = plug_material.name
            else:
                values["material"], values["density"] = None, plug_material.density
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


# --------------------------------------------------------------------------
# analytic mass properties, footprints and depth ranges
# --------------------------------------------------------------------------
#
# Each feature is built from closed-form bodies in a local frame (base of
# the body at the origin, axis along +Z) and placed with
# MassProps.transformed, the one home of the parallel-axis theorem.


#: turns a local +Z body into a -Z one (half a turn about X)
_FLIP_Z = _np.diag([1.0, -1.0, -1.0])


def cylinder_massprops(*, radius: float, height: float, density_g_cm3: float) -> MassProps:
    """A solid cylinder, base centred at the origin, axis +Z (mm, g/cm^3).

    Closed forms: V = pi r^2 h;  ∫x² dV = ∫y² dV = V r²/4;  ∫z dV = V h/2;
    ∫z² dV = V h²/3 (integrals of the disc and of z over 0..h).
    """
    v = math.pi * radius * radius * height
    s = _np.diag([v * radius * radius / 4.0, v * radius * radius / 4.0, v * height * height / 3.0])
    return MassProps.from_density(volume=v, centroid=(0.0, 0.0, 0.5 * height),
                                  volume_second_moment=s, density_g_cm3=density_g_cm3)


def cone_massprops(*, radius: float, height: float, density_g_cm3: float) -> MassProps:
    """A solid right cone, base of `radius` centred at the origin, apex at (0, 0, height).

    Closed forms: V = pi r^2 h / 3; centroid h/4 from the base (Machinery's
    Handbook); ∫x² dV = ∫y² dV = 3 V r²/20; ∫z² dV = V h²/10 (the disc of
    radius r(1 - z/h) integrated over 0..h).
    """
    v = math.pi * radius * radius * height / 3.0
    s = _np.diag([3.0 * v * radius * radius / 20.0, 3.0 * v * radius * radius / 20.0,
                  v * height * height / 10.0])
    return MassProps.from_density(volume=v, centroid=(0.0, 0.0, 0.25 * height),
                                  volume_second_moment=s, density_g_cm3=density_g_cm3)


def _hole_depth(feature: Hole, thickness: float) -> float:
    return thickness if feature.through else feature.depth


def z_range(feature: Feature, thickness: float) -> tuple[float, float]:
    """(z_low, z_high) mm of the material a feature takes or fills, drill point included."""
    if isinstance(feature, Hole):
        if feature.through:
            return (0.0, thickness)
        reach = feature.depth + feature.point_length
    elif isinstance(feature, Pocket):
        reach = feature.depth
    elif isinstance(feature, Plug):
        reach = feature.length
    else:
        raise TypeError(f"not a feature: {feature!r}")
    if feature.face == "outer":
        return (thickness - reach, thickness)
    return (0.0, reach)


def _axial_body(body_up: MassProps, *, x: float, y: float, z_face: float, into_minus_z: bool) -> MassProps:
    """A local +Z body placed with its base at (x, y, z_face), turned to point -Z if asked."""
    return body_up.transformed(rotation=_FLIP_Z if into_minus_z else None, offset=(x, y, z_face))


def _hole_volume_massprops(feature: Hole, thickness: float, density: float) -> MassProps:
    """The material a hole removes (positive body) in the web frame."""
    r = 0.5 * feature.diameter
    depth = _hole_depth(feature, thickness)
    down = feature.face == "outer"  # drilled from z = thickness towards -Z
    z_face = thickness if down else 0.0
    body = _axial_body(cylinder_massprops(radius=r, height=depth, density_g_cm3=density),
                       x=feature.x, y=feature.y, z_face=z_face, into_minus_z=down)
    point = feature.point_length
    if point > 0.0:
        z_shoulder = z_face - depth if down else z_face + depth
        body = body + _axial_body(cone_massprops(radius=r, height=point, density_g_cm3=density),
                                  x=feature.x, y=feature.y, z_face=z_shoulder, into_minus_z=down)
    return body


def feature_massprops(feature: Feature, *, thickness: float, web_density: float,
                      plug_density: float | None = None) -> MassProps:
    """The CHANGE a feature makes to the web's mass properties, web frame.

    Hole or pocket: minus the material removed (web density; volume
    negative).  Plug: the bore filled flush, +(plug_density - web_density)
    times its cylinder (volume change 0: the web keeps its volume).
    thickness : web thickness, mm;  densities : g/cm^3 (plug_density defaults
    to the plug's own material, see `plug_density`).
    """
    if isinstance(feature, Hole):
        return -_hole_volume_massprops(feature, thickness, web_density)
    if isinstance(feature, Pocket):
        z0, z1 = z_range(feature, thickness)
        return -_loops.prism(footprint(feature).area_moments(), z0=z0, z1=z1, density_g_cm3=web_density)
    if isinstance(feature, Plug):
        rho_plug = plug_density_of(feature) if plug_density is None else plug_density
        down = feature.face == "outer"
        body = _axial_body(cylinder_massprops(radius=0.5 * feature.diameter, height=feature.length,
                                              density_g_cm3=rho_plug - web_density),
                           x=feature.x, y=feature.y, z_face=thickness if down else 0.0, into_minus_z=down)
        # the bore is filled flush: the web's volume does not change, only its mass
        return MassProps(body.mass, body.first_moment, body.second_moment, 0.0)
    raise TypeError(f"not a feature: {feature!r}")


def plug_density_of(feature: Plug, where: str = "plug") -> float:
    """The plug's density, g/cm^3: its own `density`, else its material's nominal one."""
    if feature.density is not None:
        return float(feature.density)
    return _material(feature.material, f"{where}.material").density


def plug_density(feature: Plug, where: str = "plug") -> float:
    """Alias of `plug_density_of` (the name of the issue's contract)."""
    return plug_density_of(feature, where)


# -- footprints --------------------------------------------------------------

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


def footprint(feature: Feature) -> _loops.Loop:
    """The exact plan-view outline of a feature on its face (ccw, mm):
    a circle for a hole or plug, the filleted kidney for a pocket."""
    if isinstance(feature, (Hole, Plug)):
        return _loops.circle(feature.x, feature.y, 0.5 * feature.diameter)
    if isinstance(feature, Pocket):
        return kidney_loop(r_inner=feature.r_inner, r_outer=feature.r_outer,
                           angle_start=feature.angle_start, angle_end=feature.angle_end,
                           corner_radius=feature.corner_radius)
    raise TypeError(f"not a feature: {feature!r}")


def footprint_polygon(feature: Feature, max_chord_mm: float = 0.005):
    """The footprint as a shapely Polygon (flattened within `max_chord_mm` sagitta)."""
    return footprint(feature).polygon(max_chord_mm)
