"""Calibrate a web to what the builder weighed (and, on a balancing stand, measured).

`weighed` is the web as it is, before any new work.  The model's mass is affine in the web's density
(rho V_steel + the plugs' mass) and, for a fixed set of features, in its thickness (a through hole or
plug grows with it, a blind one does not), so the fit is a straight-line solve, checked by evaluating
the fitted web again.  The fitted web is what the plan starts from.

A weighed mass the material's density range and the thickness tolerance cannot explain is flagged: the
outline, the material or a feature the model lacks is wrong.  A measured static unbalance of the bare
web (`measured_unbalance`, its heavy spot `measured_angle` from the crankpin in the direction of
rotation, as `geomgen trim` reads a balancing machine) checks the model's centre of mass: where the two
disagree by more than the stand and the model explain, the report says which way the part is heavier.

No CAD kernel.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, replace
from types import SimpleNamespace

from .errors import BadInput

MODES = ("density", "thickness")
_MASS_AT = re.compile(r"^\s*(?P<mass>.+?)\s+at\s+(?P<radius>.+?)\s*$")
#: a fit whose mass differs from the reading by more than this (g) after the straight-line solve is iterated
_FIT_TOL_G = 1e-9


@dataclass(frozen=True)
class Weighing:
    """What the builder measured on one web before any new work (g, g*mm, deg)."""

    weighed_g: float
    mode: str = "density"
    measured_unbalance_gmm: float | None = None
    measured_angle_deg: float | None = None


@dataclass(frozen=True)
class Calibration:
    """The fit: the nominal web, the weighed mass, the fitted density and thickness, the checks."""

    mode: str
    weighed_g: float
    model_g: float                 # the nominal model's mass (before the fit)
    nominal_density: float
    nominal_thickness: float
    density: float
    thickness: float
    mass_per_density: float        # g per g/cm^3 of the web, at the fitted thickness
    mass_per_thickness: float      # g per mm, at the fitted density
    check: dict | None = None      # measured unbalance against the model (see `stand_check`)
    range_check: dict | None = None

    @property
    def moved_percent(self) -> float:
        """How far the fitted quantity moved from the job's, percent."""
        if self.mode == "density":
            return 100.0 * (self.density / self.nominal_density - 1.0)
        return 100.0 * (self.thickness / self.nominal_thickness - 1.0)


def unbalance_value(text, where: str) -> float:
    """g*mm from a number, a unit string ("0.5 g*in") or mass at a radius ("0.8 g at 55 mm")."""
    from .units import to_internal

    m = _MASS_AT.match(text) if isinstance(text, str) else None
    if m:
        return to_internal(m["mass"], "mass", f"{where} (mass)") * to_internal(m["radius"], "length",
                                                                                 f"{where} (radius)")
    return to_internal(text, "unbalance", where)


def read_weighing(t: dict, where: str) -> Weighing | None:
    """The weighing keys of one web's table, or None when it has none."""
    from .units import to_internal

    keys = ("weighed", "calibrate", "measured_unbalance", "measured_angle")
    if not any(k in t for k in keys):
        return None
    weighed = None
    if "weighed" in t:
        weighed = to_internal(t["weighed"], "mass", f"{where}.weighed")
        if not weighed > 0:
            raise BadInput(f"{where}.weighed: the web's mass must be > 0 g, got {t['weighed']!r}")
    mode = t.get("calibrate", "density")
    if mode not in MODES:
        raise BadInput(f"{where}.calibrate: must be 'density' or 'thickness', got {mode!r}")
    for key in ("calibrate", "measured_unbalance", "measured_angle"):
        if key in t and weighed is None:
            raise BadInput(f"{where}.{key}: belongs to a weighed web (its mass fits the model, the stand checks "
                           "its centre of mass); give 'weighed' too")
    has_u, has_a = "measured_unbalance" in t, "measured_angle" in t
    if has_u != has_a:
        missing = "measured_angle" if has_u else "measured_unbalance"
        raise BadInput(f"{where}.{missing}: missing; a measured unbalance needs its heavy spot's angle (deg from "
                       "the crankpin in the direction of rotation) and its size")
    u = a = None
    if has_u:
        u = unbalance_value(t["measured_unbalance"], f"{where}.measured_unbalance")
        if not u >= 0:
            raise BadInput(f"{where}.measured_unbalance: must be >= 0, got {t['measured_unbalance']!r}")
        a = to_internal(t["measured_angle"], "angle", f"{where}.measured_angle")
    return Weighing(weighed_g=weighed, mode=mode, measured_unbalance_gmm=u, measured_angle_deg=a)


def model_mass(spec, stroke: float) -> float:
    """The web's mass as the model has it: the section and its existing features, g."""
    from .webs import features_massprops, web_section

    section = web_section(SimpleNamespace(engine=SimpleNamespace(stroke=stroke)), spec)
    feats = tuple(f.on(section) for f in spec.features)
    return float(section.massprops().mass + features_massprops(feats, section).mass)


def _solve(mass_of, x0: float, target: float, step: float) -> tuple[float, float]:
    """(x with mass_of(x) = target, d mass / dx): the straight-line solve of an affine mass, iterated
    (secant) until it holds to _FIT_TOL_G."""
    m0, m1 = mass_of(x0), mass_of(x0 + step)
    slope = (m1 - m0) / step
    x = x0 + (target - m0) / slope
    for _ in range(6):
        m = mass_of(x)
        if abs(m - target) <= _FIT_TOL_G * max(1.0, abs(target)):
            break
        x_next = x + (target - m) / slope
        x0, m0, x = x, m, x_next
        slope = (mass_of(x) - m0) / (x - x0) if x != x0 else slope
    return x, slope


def calibrate_web(spec, weighing: Weighing, *, stroke: float, rebuild, where: str):
    """The web fitted to its weighed mass (its density, or its thickness), with the record of the fit.

    rebuild(thickness) : the same web read again at another thickness (through features follow it).
    """
    from .materials import custom

    rho0, t0 = spec.material.density, spec.thickness
    is_model = getattr(spec, "model", None) is not None
    if is_model and weighing.mode == "thickness":
        raise BadInput(f"{where}.calibrate: a web given as a model has the model's own thickness; fit its "
                       "density to the weighing instead (calibrate = \"density\")")
    m_model = model_mass(spec, stroke)

    def with_density(rho):
        return replace(spec, material=replace(spec.material, density=rho))

    def thickness_mass(t):
        return model_mass(rebuild(t), stroke)

    target = weighing.weighed_g
    if weighing.mode == "density":
        rho, per_rho = _solve(lambda r: model_mass(with_density(r), stroke), rho0, target, 0.01 * rho0)
        low, high = 0.5, 25.0
        if not low <= rho <= high:
            raise BadInput(f"{where}.weighed: {target:g} g would need a web density of {rho:.3g} g/cm^3 (the model "
                           f"weighs {m_model:.1f} g at {rho0:g} g/cm^3); no metal is outside {low:g} .. {high:g} "
                           "g/cm^3: check the unit of weighed, the outline and the thickness")
        custom(rho, f"{where}.weighed")   # the same bounds a density given as a number is held to
        fitted = with_density(rho)
        fitted = replace(fitted, material=replace(
            fitted.material, source=f"fitted to the weighed {target:g} g ({spec.material.name} nominal {rho0:g})"))
        if is_model:
            # a model's thickness (its height, spec.thickness) tolerance scales it along Z, as the band takes
            # it: the mass in proportion
            per_t = model_mass(fitted, stroke) / t0
        else:
            per_t = (thickness_mass(t0 * 1.001) - thickness_mass(t0)) / (0.001 * t0) * (rho / rho0)
        t = t0
    else:
        t, per_t = _solve(_guarded(thickness_mass, where, target), t0, target, 0.001 * t0)
        if not 0.0 < t <= 200.0:
            raise BadInput(f"{where}.weighed: {target:g} g would need a web {t:.3g} mm thick (the model weighs "
                           f"{m_model:.1f} g at {t0:g} mm); check the unit of weighed and the outline")
        fitted = _guarded(rebuild, where, target)(t)
        rho = rho0
        per_rho = (model_mass(replace(fitted, material=replace(fitted.material, density=1.01 * rho0)), stroke)
                   - target) / (0.01 * rho0)
    record = Calibration(mode=weighing.mode, weighed_g=target, model_g=m_model, nominal_density=rho0,
                         nominal_thickness=t0, density=rho, thickness=t, mass_per_density=per_rho,
                         mass_per_thickness=per_t)
    return replace(fitted, weighing=weighing, calibration=record)


def _guarded(fn, where: str, target: float):
    def call(t):
        try:
            return fn(t)
        except BadInput as exc:
            raise BadInput(f"{where}.weighed: fitting the thickness to the weighed {target:g} g gives a web "
                           f"{t:.4g} mm thick, where the web no longer holds ({exc}); check weighed or fit the "
                           "density instead (calibrate = \"density\")") from None
    return call


# ------------------------------------------------------------------ the checks (with the job's tolerances)
def range_check(spec, tol) -> tuple[dict, str | None]:
    """Does the material's density range, with the thickness and the scale's bounds, explain the weighed
    mass?  (the figures, a warning line or None)."""
    c = spec.calibration
    mat = spec.material
    per_rho = c.mass_per_density
    per_t = abs(c.mass_per_thickness)
    # the model's mass at the nominal thickness over the material's range, then widened
    at_rho = [c.model_g + per_rho * (r - c.nominal_density) for r in (mat.density_min, mat.density_max)]
    low = min(at_rho) - per_t * tol.thickness - tol.scale
    high = max(at_rho) + per_t * tol.thickness + tol.scale
    fig = {"explained_low_g": low, "explained_high_g": high, "within": low <= c.weighed_g <= high,
           "note": f"the model's mass over {mat.name}'s {mat.density_min:g}-{mat.density_max:g} g/cm^3, the "
                   f"±{tol.thickness:g} mm thickness and the ±{tol.scale:g} g scale"}
    if fig["within"]:
        return fig, None
    need = c.nominal_density + (c.weighed_g - c.model_g) / per_rho
    line = (f"web {spec.name}: weighed {c.weighed_g:.1f} g, the model {c.model_g:.1f} g "
            f"({c.weighed_g - c.model_g:+.1f} g, a density of {need:.3f} g/cm^3): more than {mat.name}'s "
            f"{mat.density_min:g}-{mat.density_max:g} g/cm^3, the ±{tol.thickness:g} mm thickness and the "
            f"±{tol.scale:g} g scale explain ({low:.1f} .. {high:.1f} g); check the outline, the material and "
            "for a feature the model lacks (an oil way, a filled or plugged hole): the plan starts from the "
            "fitted web regardless")
    return fig, line


def stand_check(job, spec, index: int, tol) -> tuple[dict, str | None]:
    """A measured static unbalance of the bare web against the model's: (the figures, a warning or None).

    The reading's angle is from the crankpin in the direction of rotation (as `geomgen trim` reads it); in
    the crank frame that is the ccw angle `trimming.crank_frame_angle` gives, and web b's own frame is the
    crank frame mirrored in x.
    """
    from .trimming import crank_frame_angle, heavy_spot_vector
    from .uncertainty import web_unbalance_u
    from .webs import features_massprops, web_section

    w = spec.weighing
    section = web_section(job, spec)
    feats = tuple(f.on(section) for f in spec.features)
    model = section.massprops() + features_massprops(feats, section)
    crank_deg = crank_frame_angle(w.measured_angle_deg, rotation=job.engine.rotation)
    measured = heavy_spot_vector(w.measured_unbalance_gmm, crank_deg)
    if index == 1:
        measured = measured * [-1.0, 1.0]
    ux, uy = float(model.unbalance[0]), float(model.unbalance[1])
    dx, dy = float(measured[0]) - ux, float(measured[1]) - uy
    diff = math.hypot(dx, dy)
    u_model = web_unbalance_u(job, spec, section, feats, tol)
    u_stand = tol.stand / math.sqrt(3.0) if tol.stand is not None else 0.0
    bound = 2.0 * math.hypot(u_model, u_stand)
    mass = spec.calibration.weighed_g

    def angle(x, y):
        return math.degrees(math.atan2(-x, y)) % 360.0

    fig = {"measured_gmm": [float(measured[0]), float(measured[1])], "model_gmm": [ux, uy],
           "difference_gmm": [dx, dy], "difference_magnitude_gmm": diff,
           "heavier_towards_deg": angle(dx, dy) if diff > 0 else 0.0,
           "model_com_mm": [ux / float(model.mass), uy / float(model.mass)],
           "part_com_mm": [float(measured[0]) / mass, float(measured[1]) / mass],
           "explained_gmm": bound, "stand_given": tol.stand is not None,
           "within": diff <= bound,
           "note": "web frame (seen from its outer face, angles from +Y ccw); explained = 2 x the model's and the "
                   "stand's standard uncertainties combined"
                   + ("" if tol.stand is not None else "; the stand's accuracy is not given ([tolerances] stand), "
                      "so only the model's is counted")}
    if fig["within"]:
        return fig, None
    line = (f"web {spec.name}: the balancing stand reads {math.hypot(*measured):.1f} g*mm at "
            f"{angle(*measured):.1f} deg, the model {math.hypot(ux, uy):.1f} g*mm at {angle(ux, uy):.1f} deg (web "
            f"frame): the part carries {diff:.1f} g*mm more than the model towards {fig['heavier_towards_deg']:.1f} "
            f"deg, beyond the {bound:.1f} g*mm the stand and the model explain; the model's centre of mass is "
            f"({fig['model_com_mm'][0]:.3f}, {fig['model_com_mm'][1]:.3f}) mm, the part's "
            f"({fig['part_com_mm'][0]:.3f}, {fig['part_com_mm'][1]:.3f}) mm: check the outline and for features "
            "the model lacks; the plan uses the model, so balance the assembled crank and trim")
    return fig, line


def checked(job, tol) -> tuple[tuple, tuple[str, ...]]:
    """(the webs with their checks recorded, the warning lines) for a job whose webs may be weighed."""
    webs, lines = [], []
    for index, spec in enumerate(job.webs):
        if spec.weighing is None:
            webs.append(spec)
            continue
        fig, line = range_check(spec, tol)
        if line:
            lines.append(line)
        spec = replace(spec, calibration=replace(spec.calibration, range_check=fig))
        if spec.weighing.measured_unbalance_gmm is not None:
            fig, line = stand_check(job, spec, index, tol)
            if line:
                lines.append(line)
            spec = replace(spec, calibration=replace(spec.calibration, check=fig))
        webs.append(spec)
    return tuple(webs), tuple(lines)


def calibration_figures(spec) -> dict | None:
    """plan.json's per-web "calibration" (when the web was weighed)."""
    c = spec.calibration
    if c is None:
        return None
    out = {"density_g_cm3": c.density, "thickness_mm": c.thickness, "weighed_g": c.weighed_g, "model_g": c.model_g,
           "fitted": c.mode, "nominal_density_g_cm3": c.nominal_density, "nominal_thickness_mm": c.nominal_thickness,
           "moved_percent": c.moved_percent,
           "note": "the web as it was weighed, before any new work; the plan starts from the fitted web"}
    if c.range_check is not None:
        out["range_check"] = c.range_check
    if c.check is not None:
        out["measured_unbalance"] = c.check
    return out
