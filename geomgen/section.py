"""The web section: its outline and bores as exact loops, and its mass properties.

A web is a prism: a plane section (the outline minus the bores) swept from
z = 0 (inner face) to z = thickness (outer face), in the contract's web
frame (crank axis = Z, pin centre at (0, stroke/2)).  Its mass properties
are exact for lines and arcs and for the splines and ellipses of a drawing
(geomgen.loops), so they serve as the reference the CAD solid is checked
against.

The crankpin bore is part of `bores`: a web's own unbalance is computed with
its pin bore empty (the crankpin is counted among the rotating parts).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely

from .dxf_outline import GAP_TOL_MM, read_outline
from .errors import BadInput
from .loops import CURVES, AreaMoments, Line, Loop, circle, prism
from .massprops import MassProps

#: a drawn circle whose centre is this close to the pin position (mm) is the pin bore
PIN_CENTRE_TOL_MM = 1e-3
#: a drawn pin bore and the job's `pin_bore` must agree to this, mm
PIN_DIAMETER_TOL_MM = 1e-3
#: chordal deviation of the polygons used for checks and the planner, mm
POLYGON_CHORD_MM = 0.005
#: chordal deviation of the flattening that gives a spline's or an ellipse's distance from the axis, mm
RADIUS_CHORD_MM = 1e-5
#: the rim may lie at most this many strokes from the crank axis.  A full-circle single-cylinder web
#: is some 2 to 3 strokes across (common practice), so 20 strokes of radius is far beyond any real
#: web, yet a drawing in mm read as metres (1000x) always lands past it, and one read as inches
#: (25.4x) does whenever the web's radius is more than 0.8 stroke.
RIM_MAX_STROKES = 20.0
#: a DXF outline that `inspect` measures (no engine to compare with) must be this size across, mm:
#: the smallest is below any pin bore a crank has, the largest beyond any flywheel web (common practice)
INSPECT_ACROSS_MM = (5.0, 3000.0)


def _fmt(p) -> str:
    return f"({p[0]:.6g}, {p[1]:.6g})"


@dataclass(frozen=True)
class WebSection:
    """One web as a prism of a plane section.

    outer : Loop, counter-clockwise, the rim (mm)
    bores : tuple of Loop, each stored COUNTER-CLOCKWISE and subtracted: the
            pin bore, the main bore if any, and holes already in the outline
    pin_center : (x, y) mm, (0, stroke/2)
    pin_bore : pin bore diameter, mm
    thickness : mm;  density_g_cm3 : g/cm^3
    main_bore : main bore diameter, mm (0 = integral mainshaft)
    """

    outer: Loop
    bores: tuple
    pin_center: tuple
    pin_bore: float
    thickness: float
    density_g_cm3: float
    main_bore: float = 0.0

    def area_moments(self) -> AreaMoments:
        """Exact area moments of the section: the outline minus the bores."""
        total = self.outer.oriented(True).area_moments()
        for bore in self.bores:
            total = total - bore.oriented(True).area_moments()
        return total

    def massprops(self) -> MassProps:
        """The web as a uniform prism from z = 0 to `thickness` (no features)."""
        return prism(self.area_moments(), z0=0.0, z1=self.thickness, density_g_cm3=self.density_g_cm3)

    def column(self, feature) -> tuple[float, float]:
        """(z_bot, z_top): where a feature meets the web's two faces (a prism: 0 and the thickness)."""
        return (0.0, self.thickness)

    def radial_z_band(self) -> tuple[float, float]:
        """(z_low, z_high): the heights between which a radial hole finds web material all along its way in
        from the rim (a prism: both faces)."""
        return (0.0, self.thickness)

    def entry_z(self, feature) -> float | None:
        """The height (web frame) of the face the feature enters, its depth's start: the top of its column
        for the outer face, the bottom for the inner; None for one that enters no face (a radial hole)."""
        z_bot, z_top = self.column(feature)
        return {"outer": z_top, "inner": z_bot}.get(feature.face)

    def column_thickness(self, feature) -> float:
        """How much web the feature's drill meets between its two faces, mm (a prism: the thickness)."""
        z0, z1 = self.column(feature)
        return z1 - z0

    def change(self, feature, plug_density: float | None = None) -> MassProps:
        """The change a feature makes to this web (the kind's closed forms on the prism)."""
        return feature.massprops(thickness=self.thickness, web_density=self.density_g_cm3,
                                 plug_density=plug_density)

    def polygon(self, max_chord_mm: float = POLYGON_CHORD_MM) -> shapely.Polygon:
        """The section as a shapely Polygon with the bores as interiors
        (flattened, inscribed: slightly smaller than the exact section)."""
        outer = self.outer.oriented(True).points(max_chord_mm)
        holes = [b.oriented(False).points(max_chord_mm) for b in self.bores]
        return shapely.Polygon(outer, holes)

    @property
    def rim_radius_min(self) -> float:
        """Smallest distance from the crank axis to the rim, mm (exact)."""
        return min(_radius_range(s)[0] for s in self.outer.segments)

    @property
    def rim_radius_max(self) -> float:
        """Largest distance from the crank axis to the rim, mm (exact)."""
        return max(_radius_range(s)[1] for s in self.outer.segments)


def _radius_range(seg) -> tuple[float, float]:
    """(nearest, farthest) distance of a segment from the origin, mm: exact for a Line or Arc; for a
    spline or an elliptic arc within RADIUS_CHORD_MM (from its flattening, whose chords lie within
    that of the curve)."""
    if isinstance(seg, CURVES):
        pts = seg.flatten(RADIUS_CHORD_MM)
        p0, d = pts[:-1], np.diff(pts, axis=0)
        span = np.einsum("ij,ij->i", d, d)
        t = np.clip(-np.einsum("ij,ij->i", p0, d) / np.where(span > 0, span, 1.0), 0.0, 1.0)
        near = np.hypot(*(p0 + t[:, None] * d).T)
        return (float(near.min()), float(np.hypot(*pts.T).max()))
    ends = (math.hypot(*seg.start), math.hypot(*seg.end))
    if isinstance(seg, Line):
        (x0, y0), (x1, y1) = seg.start, seg.end
        dx, dy = x1 - x0, y1 - y0
        t = min(1.0, max(0.0, -(x0 * dx + y0 * dy) / (dx * dx + dy * dy)))
        return (math.hypot(x0 + t * dx, y0 + t * dy), max(ends))
    cx, cy = seg.center
    d = math.hypot(cx, cy)
    lo, hi = min(ends), max(ends)
    # the nearest point of the full circle lies towards the origin, the farthest away from it
    toward = math.degrees(math.atan2(-cy, -cx)) if d > 0 else seg.start_deg

    def on_arc(angle):
        a0, sweep = seg.start_deg, seg.sweep_deg
        off = (angle - a0) % 360.0 if sweep > 0 else (a0 - angle) % 360.0
        return d == 0 or off <= abs(sweep)

    if on_arc(toward):
        lo = abs(d - seg.radius)
    if on_arc(toward + 180.0):
        hi = d + seg.radius
    return (lo, hi)


def _check_common(*, thickness: float, density_g_cm3: float, where: str) -> None:
    """where : the key prefix named in messages ("web" -> "web.thickness"; "-" -> "--thickness")."""
    sep = "-" if where == "-" else "."
    if not (isinstance(thickness, (int, float)) and thickness > 0 and math.isfinite(thickness)):
        raise BadInput(f"{where}{sep}thickness: must be > 0 mm, got {thickness!r}")
    if not (isinstance(density_g_cm3, (int, float)) and density_g_cm3 > 0 and math.isfinite(density_g_cm3)):
        raise BadInput(f"{where}{sep}density: must be > 0 g/cm^3, got {density_g_cm3!r}")


def check_bores(outer: Loop, bores, *, where: str, names=None) -> None:
    """BadInput if a bore is not wholly inside the outline or two bores cross.

    names : optional labels of the bores for the message (default: where each starts).
    """
    rim = outer.polygon(POLYGON_CHORD_MM)
    polys = [b.polygon(POLYGON_CHORD_MM) for b in bores]
    labels = list(names) if names else [f"the bore starting at {_fmt(b.segments[0].start)}" for b in bores]
    for label, poly in zip(labels, polys):
        if not rim.contains(poly):
            c = poly.centroid
            raise BadInput(f"{where}: {label} (centre {_fmt((c.x, c.y))}) is not inside the web outline; "
                           "it crosses or touches the rim")
    for i in range(len(polys)):
        for j in range(i + 1, len(polys)):
            if polys[i].intersects(polys[j]):
                raise BadInput(f"{where}: {labels[i]} and {labels[j]} overlap or touch; bores must be apart")


def parametric_web(*, diameter: float, thickness: float, density_g_cm3: float, stroke: float,
                   pin_bore: float, main_bore: float = 0.0, where: str = "web") -> WebSection:
    """A full-circle web of `diameter` (mm) with the pin bore at (0, stroke/2)
    and, if main_bore > 0, a main bore at the origin."""
    _check_common(thickness=thickness, density_g_cm3=density_g_cm3, where=where)
    for key, value in (("diameter", diameter), ("pin_bore", pin_bore)):
        if not value > 0:
            raise BadInput(f"{where}.{key}: must be > 0 mm, got {value}")
    if not stroke > 0:
        raise BadInput(f"engine.stroke: must be > 0 mm, got {stroke}")
    if main_bore < 0:
        raise BadInput(f"{where}.main_bore: must be >= 0 mm (0 = integral mainshaft), got {main_bore}")
    pin_y = 0.5 * stroke
    if 0.5 * diameter > RIM_MAX_STROKES * stroke:
        raise BadInput(f"{where}.diameter: a {diameter:g} mm web has its rim {0.5 * diameter:g} mm from the axis, "
                       f"more than {RIM_MAX_STROKES:g} x the {stroke:g} mm stroke ({RIM_MAX_STROKES * stroke:g} mm) "
                       "any web of this crank reaches; check the unit of diameter")
    if pin_y + 0.5 * pin_bore >= 0.5 * diameter:
        raise BadInput(f"{where}.pin_bore: a {pin_bore:g} mm bore at {pin_y:g} mm from the axis reaches "
                       f"{pin_y + 0.5 * pin_bore:g} mm, past the {0.5 * diameter:g} mm rim of the "
                       f"{diameter:g} mm web")
    if main_bore > 0 and 0.5 * main_bore + 0.5 * pin_bore >= pin_y:
        raise BadInput(f"{where}.main_bore: a {main_bore:g} mm main bore and the {pin_bore:g} mm pin bore "
                       f"overlap at stroke {stroke:g} mm (need main_bore/2 + pin_bore/2 < stroke/2)")
    bores = [circle(0.0, pin_y, 0.5 * pin_bore)]
    if main_bore > 0:
        bores.append(circle(0.0, 0.0, 0.5 * main_bore))
    return WebSection(circle(0.0, 0.0, 0.5 * diameter), tuple(bores), (0.0, pin_y), float(pin_bore),
                      float(thickness), float(density_g_cm3), float(main_bore))


def _find_circle(loops, centre, tol):
    """Index of the inner loop that is a full circle centred within tol of centre, else None."""
    for i, loop in enumerate(loops):
        c = loop.as_circle()
        if c is not None and math.dist(c[:2], centre) <= tol:
            return i
    return None


def _drawn_bore(loops, centre, diameter, *, key, source):
    """Index of the drawn circle at `centre`, or None; BadInput if its size disagrees with the job's `key`."""
    i = _find_circle(loops, centre, PIN_CENTRE_TOL_MM)
    if i is not None:
        drawn = 2.0 * loops[i].as_circle()[2]
        if abs(drawn - diameter) > PIN_DIAMETER_TOL_MM:
            what = key.replace("_", " ")
            raise BadInput(f"{source}: the {what} disagrees: the DXF says {drawn:.6g} mm, "
                           f"the job says {key} = {diameter:.6g} mm")
    return i


def _near_miss(loops, centre, name, where, hint):
    """A drawn circle that covers `centre` but is not centred on it: the stroke and drawing disagree."""
    for loop in loops:
        c = loop.as_circle()
        if c is not None and math.dist(c[:2], centre) < c[2]:
            raise BadInput(f"{where}: the drawing has a circle at {_fmt(c[:2])} near the {name} position "
                           f"{_fmt(centre)} but not centred on it; {hint}")


def _across(loop: Loop) -> float:
    """The largest extent of a loop along X or Y, mm."""
    x0, y0, x1, y1 = loop.polygon(POLYGON_CHORD_MM).bounds
    return max(x1 - x0, y1 - y0)


def _unit_fix(outline, size_mm: float, lo: float, hi: float, *, override: str) -> str:
    """What to set so that a size read as `size_mm` lies in (lo, hi]: the override, with the units that fit."""
    fits = outline.units_that_fit(size_mm, lo, hi)
    spoken = {"mm": "millimetres", "in": "inches", "cm": "centimetres", "m": "metres"}
    if override == "--units":
        return (f"if it is drawn in {spoken[fits[0]]}, give --units {fits[0]}" if fits
                else "check the drawing's unit and give --units mm, in, cm or m")
    return (f'if it is drawn in {spoken[fits[0]]}, set {override} = "{fits[0]}" for this web' if fits
            else f'check the drawing\'s unit and set {override} = "mm", "in", "cm" or "m" for this web')


def check_size_for_engine(outline, *, stroke: float, pin_bore: float, source: str, override: str) -> None:
    """BadInput if the outline cannot be a web of this crank: its rim must reach beyond the pin bore's
    far edge (stroke/2 + pin_bore/2) and lie within RIM_MAX_STROKES strokes of the crank axis.

    A wrong drawing unit (most often the metres ezdxf.new() writes into $INSUNITS) is the usual cause,
    so the message names the unit header, the size read and the override that fixes it.
    """
    rim = max(_radius_range(s)[1] for s in outline.outer.segments)
    lo, hi = 0.5 * stroke + 0.5 * pin_bore, RIM_MAX_STROKES * stroke
    if lo < rim <= hi:
        return
    across = _across(outline.outer)
    if rim > hi:
        what = (f"the outline cannot be a web of this crank: its rim lies up to {rim:.6g} mm from the crank "
                f"axis ({across:.6g} mm across), more than {RIM_MAX_STROKES:g} x the {stroke:g} mm stroke "
                f"({hi:g} mm) any web of this crank reaches")
    else:
        what = (f"the pin bore ({pin_bore:g} mm at {_fmt((0.0, 0.5 * stroke))}) is not inside the outline: "
                f"its rim lies at most {rim:.6g} mm from the crank axis ({across:.6g} mm across), not beyond "
                f"the far edge of the pin bore at {lo:g} mm")
    fix = _unit_fix(outline, rim, lo, hi, override=override)
    if rim <= lo:  # too small may also be a wrong stroke or origin, not only a unit
        fix += ", or check engine.stroke and the drawing's origin"
    raise BadInput(f"{source}: {what}; {outline.units_said(override=override)}; {fix}")


def check_size_plausible(outline, *, source: str) -> None:
    """BadInput if an outline measured without an engine is not INSPECT_ACROSS_MM across (a unit slip)."""
    lo, hi = INSPECT_ACROSS_MM
    across = _across(outline.outer)
    if lo <= across <= hi:
        return
    bound = f"larger than {hi:g} mm" if across > hi else f"smaller than {lo:g} mm"
    fix = _unit_fix(outline, across, lo, hi, override="--units")
    raise BadInput(f"{source}: the outline is {across:.6g} mm across, {bound}, so it is no crank web; "
                   f"{outline.units_said(override='--units')}; {fix}")


def outline_web(*, path, thickness: float, density_g_cm3: float, stroke: float, pin_bore: float,
                main_bore: float = 0.0, units: str | None = None, where: str = "web.outline",
                gap_tol: float = GAP_TOL_MM) -> WebSection:
    """A web from a DXF outline (crank axis at the drawing origin, pin on +Y).

    A drawn circle at (0, stroke/2) is the pin bore and must agree with
    `pin_bore`; without one, the pin bore is cut from `pin_bore`.  Likewise a
    drawn circle at the origin is the main bore and must agree with
    `main_bore` when that is > 0 (with main_bore = 0 a drawn one is kept as
    drawn).  Every other inner loop is kept as a bore (an existing hole).
    units : "mm" | "in" for a unitless drawing (the job key outline_units).
    """
    _check_common(thickness=thickness, density_g_cm3=density_g_cm3, where=where.rsplit(".", 1)[0])
    if not pin_bore > 0:
        raise BadInput(f"{where.rsplit('.', 1)[0]}.pin_bore: must be > 0 mm, got {pin_bore}")
    outline = read_outline(path, units=units, gap_tol=gap_tol, where=where,
                           gap_key=None if where == "inspect" else "outline_gap")
    source = f"{where} {path}"
    override = "--units" if where == "inspect" else "outline_units"
    check_size_for_engine(outline, stroke=stroke, pin_bore=pin_bore, source=source, override=override)
    pin_centre = (0.0, 0.5 * stroke)
    bores = list(outline.inner)
    names = [f"the drawn loop starting at {_fmt(b.segments[0].start)}" for b in bores]

    i = _drawn_bore(bores, pin_centre, pin_bore, key="pin_bore", source=source)
    if i is not None:
        names[i] = f"the pin bore ({pin_bore:g} mm at {_fmt(pin_centre)})"
    else:
        _near_miss(bores, pin_centre, "pin", source,
                   "check engine.stroke or the drawing's origin (crank axis at 0, 0; pin on +Y)")
        pin = circle(pin_centre[0], pin_centre[1], 0.5 * pin_bore)
        if not outline.outer.polygon(POLYGON_CHORD_MM).contains(pin.polygon(POLYGON_CHORD_MM)):
            raise BadInput(f"{source}: the pin bore ({pin_bore:g} mm at {_fmt(pin_centre)}) is not inside "
                           "the outline; check engine.stroke, pin_bore and the drawing's origin")
        bores.append(pin)
        names.append(f"the pin bore ({pin_bore:g} mm at {_fmt(pin_centre)})")

    if main_bore > 0:
        k = _drawn_bore(bores, (0.0, 0.0), main_bore, key="main_bore", source=source)
        if k is not None:
            names[k] = f"the main bore ({main_bore:g} mm)"
        else:
            bores.append(circle(0.0, 0.0, 0.5 * main_bore))
            names.append(f"the main bore ({main_bore:g} mm)")
    elif main_bore < 0:
        raise BadInput(f"{where.rsplit('.', 1)[0]}.main_bore: must be >= 0 mm, got {main_bore}")

    check_bores(outline.outer, bores, where=source, names=names)
    return WebSection(outline.outer, tuple(bores), pin_centre, float(pin_bore), float(thickness),
                      float(density_g_cm3), float(main_bore))


def inspect_dxf(path, *, thickness: float, density_g_cm3: float, units: str | None = None,
                stroke: float | None = None, pin_bore: float | None = None) -> MassProps:
    """Mass properties of a DXF outline as drawn (inner loops as holes),
    swept from z = 0 to `thickness` (mm) at `density_g_cm3`.

    With `stroke` and `pin_bore` both given, the pin bore is checked or cut
    as in `outline_web`.
    """
    if stroke is not None and pin_bore is not None:
        return outline_web(path=path, thickness=thickness, density_g_cm3=density_g_cm3, stroke=stroke,
                           pin_bore=pin_bore, units=units, where="inspect").massprops()
    _check_common(thickness=thickness, density_g_cm3=density_g_cm3, where="-")
    outline = read_outline(path, units=units, where="inspect", gap_key=None)
    check_size_plausible(outline, source=f"inspect {path}")
    check_bores(outline.outer, outline.inner, where=f"inspect {path}")
    return WebSection(outline.outer, outline.inner, (math.nan, math.nan), math.nan, float(thickness),
                      float(density_g_cm3)).massprops()
