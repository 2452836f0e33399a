"""Screens of what holds a pressed-up crank together: the crankpin press fit, the
wall left around the pin bore, the wall that carries each plug at speed, and
whether each plug's own press fit stays closed under its pull.

Every figure here is a screen, not a rating.  It says where to look harder; it
never clears a part.  The formulas live in geomgen.loads; this module measures
the web (exact distances to lines and arcs) and puts the numbers together.

The press fit needs a hub, and a web is not a cylinder.  The hub is taken as a
ring around the pin bore whose outer radius is the shortest distance from the
pin centre to a free edge of the bare web (the rim, the main bore, any bore in
the outline).  A thinner ring stretches more for the same interference, so the
hoop stress at the bore is over-estimated (on the safe side for the web) and
the contact pressure, hence the grip, under-estimated (on the safe side for
holding the pin).  The pin's own stress grows with the pressure, so it is given
at the upper bound of the pressure, the hub taken as unbounded.
"""

from __future__ import annotations

import math

import shapely

from .fits import fit_limits
from .kinds import cylinder_massprops
from .loads import (
    bearing_stress_mpa,
    hub_hoop_stress_mpa,
    pin_hoop_stress_mpa,
    plug_load_n,
    press_fit_pressure_mpa,
    wall_shear_stress_mpa,
)
from .loops import Arc, Line, Loop

#: a bore of the section whose centre and radius agree with the pin bore to this, mm, is the pin bore
_SAME_CIRCLE_MM = 1e-6

CAUTION = ("A screen, not a rating: the real part, the engine maker's limits and a qualified person decide.")

PRESS_FIT_METHOD = (
    "Lamé thick-walled cylinders, plane stress, elastic (Shigley's Mechanical Engineering Design, press and "
    "shrink fits). The web is taken as a ring around the pin bore out to the nearest free edge of the bare web, "
    "which over-states the web's hoop stress and under-states the grip; the pin's stress is given with the web "
    "taken as unbounded, the highest pressure the fit can reach. Not included: the web's bore growing at speed "
    "(it lowers the grip), surface finish and the loss of interference on pressing, yield, the holes near the "
    "bore, the pin's bending and the torque it carries.")

LIGAMENT_METHOD = (
    "The shortest distance from the crankpin bore to each feature's outline on the face, exact for circles and "
    "for the arcs and lines of a pocket; a feature reaching into the bore shows as a negative ligament.")

PLUG_WALL_METHOD = (
    "Each plug's pull F = m ω² r carried by the wall between its bore and the rim: the wall is the shortest "
    "distance from the bore to the web's outline. Bearing = F / (diameter × length), the mean pressure on the "
    "bore's projected area; wall shear = F / (2 × wall × length), two planes torn out towards the rim, as for a "
    "pin near the edge of a plate. Mean stresses only: the peak at the bore is higher, and the retention "
    "(press fit, staking, welding or a cross pin) must hold the plug in its bore in the first place.")


PLUG_FIT_METHOD = (
    "Each plug's ISO 286 fit at its least interference (the smallest plug in the largest bore) gives the least "
    "contact pressure p (Lamé, as for the crankpin: the plug a solid pin, the web a ring around the bore out to "
    "the nearest free edge — rim, bore or other feature — which under-states p). The fit holds the plug's pull "
    "F = m ω² r without opening on the side towards the crank axis while the pull's mean bearing pressure "
    "F / (diameter × length) stays below p; the margin is p over that bearing pressure at the overspeed, and below "
    "{margin:g} it is thin (common practice). A plug given only as a density is taken as stiff as the web, "
    "which under-states p. Not included: the bore growing at speed and with heat (steel grows about twice as "
    "much as tungsten alloy, from memory, and a few µm of interference is soon gone), surface finish and what "
    "pressing wipes off. "
    "A thin margin means the retention (staking, welding, a cross pin) must carry the load, not the fit.")

#: below this ratio of the fit's least contact pressure to the plug's bearing pressure at the overspeed the
#: fit is reported as thin (common practice: a joint that must stay closed is given a factor of about 2 on
#: the load that would open it)
PLUG_FIT_MARGIN = 2.0


# ------------------------------------------------------------------ exact distances
#: splines and ellipses are measured on their flattening, whose chords lie within this of them, mm
CURVE_CHORD_MM = 1e-4

def _on_arc(arc: Arc, angle_deg: float) -> bool:
    a0, sweep = arc.start_deg, arc.sweep_deg
    off = (angle_deg - a0) % 360.0 if sweep > 0 else (a0 - angle_deg) % 360.0
    return off <= abs(sweep)


def point_segment_distance(point, segment) -> float:
    """Shortest distance from `point` (x, y) mm to a Line or Arc, mm (exact)."""
    px, py = point
    if isinstance(segment, Line):
        (x0, y0), (x1, y1) = segment.start, segment.end
        dx, dy = x1 - x0, y1 - y0
        span = dx * dx + dy * dy
        t = 0.0 if span == 0 else min(1.0, max(0.0, ((px - x0) * dx + (py - y0) * dy) / span))
        return math.hypot(px - (x0 + t * dx), py - (y0 + t * dy))
    cx, cy = segment.center
    d = math.hypot(px - cx, py - cy)
    if d == 0.0:
        return segment.radius
    if _on_arc(segment, math.degrees(math.atan2(py - cy, px - cx))):
        return abs(d - segment.radius)
    return min(math.dist(point, segment.start), math.dist(point, segment.end))


def point_loop_distance(point, loop: Loop) -> float:
    """Shortest distance from `point` to the outline of a loop, mm (exact for lines and arcs, within
    CURVE_CHORD_MM for splines and ellipses); the sign is not given."""
    return min(point_segment_distance(point, s) for s in loop.lines_and_arcs(CURVE_CHORD_MM).segments)


def circle_ligament(center, radius: float, loop: Loop) -> float:
    """Material between a circle (a bore) and a region's outline that lies outside it, mm.

    Negative when they overlap: by how much the region reaches into the circle, or, with the circle's
    centre inside the region, the circle's radius plus the distance to the outline."""
    gap = point_loop_distance(center, loop)
    if loop.polygon().contains(shapely.Point(center)):
        return -(gap + radius)
    return gap - radius


def _is_pin_bore(loop: Loop, section) -> bool:
    c = loop.as_circle()
    return (c is not None and math.dist(c[:2], section.pin_center) <= _SAME_CIRCLE_MM
            and abs(c[2] - 0.5 * section.pin_bore) <= _SAME_CIRCLE_MM)


def hub_edge(section) -> tuple[float, str]:
    """(radius, what) of the nearest free edge of the bare web seen from the pin centre, mm:
    the rim, the main bore or another bore drawn in the outline."""
    pin = section.pin_center
    best = (point_loop_distance(pin, section.outer), "rim")
    for bore in section.bores:
        if _is_pin_bore(bore, section):
            continue
        c = bore.as_circle()
        what = "main bore" if c is not None and math.hypot(c[0], c[1]) <= _SAME_CIRCLE_MM else "bore in the outline"
        best = min(best, (point_loop_distance(pin, bore), what))
    return best


# ------------------------------------------------------------------ the screens
def _num(x):
    return None if x is None else float(f"{float(x):.6g}") + 0.0


def press_fit(web) -> dict | None:
    """The crankpin press-fit screen of one pipeline WebWork, or None without `pin_interference`."""
    spec, section = web.spec, web.section
    if not spec.pin_interference:
        return None
    hub_mat = spec.material
    pin_mat = spec.pin_material or spec.material
    d = section.pin_bore
    edge_r, edge = hub_edge(section)
    ring = 2.0 * edge_r
    common = dict(interference_mm=spec.pin_interference, diameter_mm=d, pin_inner_diameter_mm=spec.pin_inner_diameter,
                  hub_e_mpa=hub_mat.youngs_modulus_gpa * 1e3, hub_nu=hub_mat.poisson_ratio,
                  pin_e_mpa=pin_mat.youngs_modulus_gpa * 1e3, pin_nu=pin_mat.poisson_ratio)
    p_ring = press_fit_pressure_mpa(hub_outer_diameter_mm=ring, **common)
    p_top = press_fit_pressure_mpa(hub_outer_diameter_mm=math.inf, **common)
    return {
        "web": spec.name,
        "interference_mm": _num(spec.pin_interference),
        "interference_per_diameter": _num(spec.pin_interference / d),
        "pin_diameter_mm": _num(d),
        "pin_inner_diameter_mm": _num(spec.pin_inner_diameter),
        "hub_outer_diameter_mm": _num(ring),
        "hub_wall_mm": _num(edge_r - 0.5 * d),
        "hub_edge": edge,
        "web_material": hub_mat.name, "web_E_GPa": _num(hub_mat.youngs_modulus_gpa),
        "web_nu": _num(hub_mat.poisson_ratio),
        "pin_material": pin_mat.name, "pin_E_GPa": _num(pin_mat.youngs_modulus_gpa),
        "pin_nu": _num(pin_mat.poisson_ratio),
        "contact_pressure_MPa": _num(p_ring),
        "contact_pressure_MPa_unbounded_hub": _num(p_top),
        "web_hoop_MPa": _num(hub_hoop_stress_mpa(pressure_mpa=p_ring, diameter_mm=d, hub_outer_diameter_mm=ring)),
        "pin_hoop_MPa": _num(pin_hoop_stress_mpa(pressure_mpa=p_top, diameter_mm=d,
                                                 pin_inner_diameter_mm=spec.pin_inner_diameter, at_bore=True)),
    }


def pin_ligament(web, *, pin_wall: float) -> dict:
    """The least wall between the crankpin bore and any feature of one web (existing or planned)."""
    section = web.section
    centre, radius = section.pin_center, 0.5 * section.pin_bore
    nearest = None
    for i, f in enumerate(web.all_features):
        gap = circle_ligament(centre, radius, f.footprint())
        if nearest is None or gap < nearest[0]:
            nearest = (gap, i + 1, f.kind, "existing" if i < len(web.existing) else "new")
    rim_r, edge = hub_edge(section)
    row = {"web": web.spec.name, "pin_wall_mm": _num(pin_wall), "edge_wall_mm": _num(rim_r - radius),
           "edge": edge, "ligament_mm": None, "feature": None, "feature_kind": None, "feature_origin": None,
           "below_pin_wall": False}
    if nearest is not None:
        row.update(ligament_mm=_num(nearest[0]), feature=nearest[1], feature_kind=nearest[2],
                   feature_origin=nearest[3], below_pin_wall=bool(nearest[0] < pin_wall - 1e-9))
    return row


def plug_walls(web, *, max_rpm: float, overspeed_rpm: float) -> list[dict]:
    """Each plug of one web: the wall to the rim and the mean stresses the plug's pull puts on it."""
    rows = []
    for i, f in enumerate(web.all_features):
        if not f.fills:
            continue
        mass = cylinder_massprops(radius=0.5 * f.diameter, height=f.length, density_g_cm3=f.plug_density()).mass
        radius = math.hypot(f.x, f.y)
        wall = point_loop_distance((f.x, f.y), web.section.outer) - 0.5 * f.diameter
        row = {"web": web.spec.name, "feature": i + 1, "diameter_mm": _num(f.diameter), "length_mm": _num(f.length),
               "wall_to_rim_mm": _num(wall)}
        for tag, rpm in (("max_rpm", max_rpm), ("overspeed", overspeed_rpm)):
            load = plug_load_n(mass_g=mass, radius_mm=radius, rpm=rpm)
            row[f"load_N_{tag}"] = _num(load)
            row[f"bearing_MPa_{tag}"] = _num(bearing_stress_mpa(load_n=load, diameter_mm=f.diameter,
                                                                length_mm=f.length))
            shear = wall_shear_stress_mpa(load_n=load, wall_mm=wall, length_mm=f.length)
            row[f"wall_shear_MPa_{tag}"] = None if math.isinf(shear) else _num(shear)
        rows.append(row)
    return rows


def _plug_edge(web, i: int, f) -> tuple[float, str]:
    """(distance, what) from plug `i`'s centre to the nearest free edge around it: the rim, a bore of the
    section or another feature's outline, mm."""
    centre = (f.x, f.y)
    best = (point_loop_distance(centre, web.section.outer), "rim")
    for bore in web.section.bores:
        best = min(best, (point_loop_distance(centre, bore), "pin bore" if _is_pin_bore(bore, web.section)
                          else "bore"))
    for j, other in enumerate(web.all_features):
        if j != i:
            best = min(best, (point_loop_distance(centre, other.footprint()), f"feature {j + 1}"))
    return best


def plug_fits(web, *, fit: str, overspeed_rpm: float) -> list[dict]:
    """Each plug of one web: its fit's least contact pressure against the bearing pressure of its pull at
    the overspeed (PLUG_FIT_METHOD)."""
    rows = []
    hub = web.spec.material
    for i, f in enumerate(web.all_features):
        if not f.fills:
            continue
        limits = fit_limits(fit, f.diameter, f"web {web.spec.name} feature {i + 1}.diameter")
        edge_r, edge = _plug_edge(web, i, f)
        row = {"web": web.spec.name, "feature": i + 1, "diameter_mm": _num(f.diameter), "length_mm": _num(f.length),
               "fit": fit, "interference_min_um": limits.interference_min_um,
               "web_ring_outer_diameter_mm": _num(2.0 * edge_r), "ring_edge": edge,
               "contact_pressure_MPa_min": None, "load_N_overspeed": None, "bearing_MPa_overspeed": None,
               "margin_overspeed": None,
               "thin": False, "screened": hub.has_elastic}
        if hub.has_elastic:
            from .materials import material as named

            plug = named(f.material, "plug.material") if f.material is not None else hub
            plug = plug if plug.has_elastic else hub
            interference = max(limits.interference_min_um, 0) / 1000.0
            pressure = 0.0
            if interference > 0 and 2.0 * edge_r > f.diameter:
                pressure = press_fit_pressure_mpa(
                    interference_mm=interference, diameter_mm=f.diameter, hub_outer_diameter_mm=2.0 * edge_r,
                    hub_e_mpa=hub.youngs_modulus_gpa * 1e3, hub_nu=hub.poisson_ratio,
                    pin_e_mpa=plug.youngs_modulus_gpa * 1e3, pin_nu=plug.poisson_ratio)
            load = plug_load_n(mass_g=f.plug_mass_g(), radius_mm=math.hypot(f.x, f.y), rpm=overspeed_rpm)
            bearing = bearing_stress_mpa(load_n=load, diameter_mm=f.diameter, length_mm=f.length)
            margin = pressure / bearing if bearing > 0 else math.inf
            row.update(contact_pressure_MPa_min=_num(pressure), load_N_overspeed=_num(load),
                       bearing_MPa_overspeed=_num(bearing), margin_overspeed=None if math.isinf(margin) else
                       _num(margin), thin=bool(margin < PLUG_FIT_MARGIN))
        rows.append(row)
    return rows


def plug_warnings(job, webs) -> list[str]:
    """Warnings about the plugs of a plan: a plug shorter than the job's rule (naming the key; the planner
    never plans one, so these are the web's own, hand-placed or from an earlier plan), a fit whose margin
    against the pull at the overspeed is thin, and a web whose fit cannot be screened."""
    c = job.correction
    over = job.engine.max_rpm * job.overspeed
    out = []
    for w in webs:
        for i, f in enumerate(w.all_features):
            if f.fills:
                short = f.length_shortfall(min_length=c.plug_min_length, min_ratio=c.plug_min_length_ratio)
                if short is not None:
                    out.append(f"web {w.spec.name} feature {i + 1} ({f.label()}): {short}; a press fit that short "
                               "may not hold it square (modelled as it is; a longer plug or another retention)")
        rows = plug_fits(w, fit=c.plug_fit, overspeed_rpm=over)
        if rows and not rows[0]["screened"]:
            out.append(f"web {w.spec.name}: its plugs' press fit is not screened: the web is given as a density "
                       f"only; name its material (one of the materials geomgen knows) to have it screened")
        thin = [r for r in rows if r["thin"]]
        if thin:
            worst = min(thin, key=lambda r: r["margin_overspeed"])
            which = ", ".join(str(r["feature"]) for r in thin)
            least = worst["interference_min_um"] / 1000.0
            if least > 0:
                held = (f"at its least interference ({least:.3f} mm) it presses at "
                        f"{worst['contact_pressure_MPa_min']:.3g} MPa")
            elif least == 0:
                held = "at its limits it is line to line, pressing at 0 MPa"
            else:
                held = f"at its limits it can be loose ({-least:.3f} mm clearance), pressing at 0 MPa"
            out.append(f"web {w.spec.name}: the {c.plug_fit} press fit of plug feature(s) {which} is thin against "
                       f"the pull at the {over:.0f} rpm overspeed: for feature {worst['feature']} {held} against "
                       f"the {worst['bearing_MPa_overspeed']:.3g} MPa bearing pressure of its "
                       f"{worst['load_N_overspeed'] / 1000:.3g} kN pull, margin {worst['margin_overspeed']:.2f}, "
                       f"below {PLUG_FIT_MARGIN:g} (correction.plug_fit): a tighter fit, more wall around it, or a "
                       "retention (staking, welding, a cross pin) rated for the load")
    return out


def screen_figures(job, webs) -> dict:
    """JSON-ready screens of a plan: press fit, pin-bore ligament, plug walls.

    job : geomgen.job.Job;  webs : the pipeline's WebWork list (spec, section, existing, plan).
    """
    over = job.engine.max_rpm * job.overspeed
    fits = [f for f in (press_fit(w) for w in webs) if f is not None]
    return {
        "press_fit": fits,
        "press_fit_method": PRESS_FIT_METHOD,
        "pin_ligaments": [pin_ligament(w, pin_wall=job.correction.pin_wall) for w in webs],
        "pin_ligament_method": LIGAMENT_METHOD,
        "plug_walls": [row for w in webs for row in plug_walls(w, max_rpm=job.engine.max_rpm, overspeed_rpm=over)],
        "plug_wall_method": PLUG_WALL_METHOD,
        "plug_fits": [row for w in webs for row in plug_fits(w, fit=job.correction.plug_fit, overspeed_rpm=over)],
        "plug_fit_method": PLUG_FIT_METHOD.format(margin=PLUG_FIT_MARGIN),
        "screen_caution": CAUTION,
    }
