"""The commands that build solids: build, plan, trim.

Each one: check the output folder, load the job, do all the maths (no CAD),
then build, export and verify the solids inside a staging folder, write the
sheets, and move the folder into place.  A failure anywhere leaves nothing.
"""

from __future__ import annotations

import json
import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from . import __version__
from .errors import BadInput, warn_all
from .features import feature_from_table, feature_massprops, feature_to_table, Plug, plug_density_of
from .massprops import MassProps
from .output import check_target, staged, write_files
from .planner import Limits, WebPlan, plan_web
from .study import _num, _vec, study_of

CAUTIONS = (
    "A crank that comes apart at speed can kill. These figures are design aids, not a release for service.",
    "Check the machining and the balance on the real part before it runs.",
    "Plugs need a retention method (press fit, staking, welding or a cross pin) rated for the load shown, "
    "with margin, checked by someone qualified to do so.",
    "Follow the engine maker's limits, local rules and licensed practice; when they disagree with this "
    "report, they win.",
)


# ------------------------------------------------------------------ sections and limits
def web_section(job, web):
    """The WebSection of one job web (no features)."""
    from .section import outline_web, parametric_web

    where = f"web {web.name}"
    if web.diameter is not None:
        return parametric_web(diameter=web.diameter, thickness=web.thickness, density_g_cm3=web.density,
                              stroke=job.engine.stroke, pin_bore=web.pin_bore, main_bore=web.main_bore,
                              where=where)
    return outline_web(path=web.outline, thickness=web.thickness, density_g_cm3=web.density,
                       stroke=job.engine.stroke, pin_bore=web.pin_bore, main_bore=web.main_bore,
                       units=web.outline_units, where=f"{where} outline")


def limits_of(job) -> Limits:
    c = job.correction
    return Limits(min_wall=c.min_wall, pin_wall=c.pin_wall, max_depth=c.max_depth, through=c.through,
                  drills=c.drills, point_angle=c.point_angle, depth_step=c.depth_step)


def _props(features, section) -> MassProps:
    """The change the features make to the bare web (each plug with its own material)."""
    return sum((feature_massprops(f, thickness=section.thickness, web_density=section.density_g_cm3)
                for f in features), MassProps.zero())


@dataclass(frozen=True)
class WebWork:
    """One web through the pipeline."""

    spec: object          # job.WebSpec
    section: object       # section.WebSection
    existing: tuple       # features the web had before this run
    plan: WebPlan

    @property
    def all_features(self) -> tuple:
        return tuple(self.existing) + tuple(self.plan.features)


def _same_web(a, b) -> bool:
    """Two job webs that differ only in name: one plan serves both."""
    fields = ("thickness", "material", "pin_bore", "main_bore", "diameter", "outline", "outline_units",
              "features", "share")
    return all(getattr(a, f) == getattr(b, f) for f in fields)


def plan_webs(job, *, existing=None, targets=None, tolerances=None, method=None, lighten=None) -> list[WebWork]:
    """Plan every web of the job (pure maths).

    existing : {name: features} to use instead of the job's own (trim)
    targets / tolerances : {name: (x, y) g*mm} / {name: g*mm} instead of the job's
    method : "none" to plan nothing (build); default the job's correction.kind
    """
    c = job.correction
    limits = limits_of(job)
    out, done = [], []
    for web in job.webs:
        section = web_section(job, web)
        feats = tuple(existing[web.name]) if existing is not None else tuple(web.features)
        target = targets[web.name] if targets else job.target_gmm(web)
        tol = tolerances[web.name] if tolerances else job.tolerance_gmm * web.share
        if method == "none":
            before = section.massprops() + _props(feats, section)
            plan = WebPlan(web.name, "none", (), before, before, tuple(target), tol,
                           "build: the job's own features only", "none")
        else:
            twin = next((w for w in done if existing is None and targets is None and _same_web(w.spec, web)), None)
            if twin is not None:
                plan = WebPlan(web.name, twin.plan.method, twin.plan.features, twin.plan.before,
                               twin.plan.predicted, twin.plan.target, twin.plan.tolerance,
                               twin.plan.why + f" (web {web.name} is the same web with the same layout; see the "
                               "crank's couple for what the pair leaves)", twin.plan.binding, twin.plan.considered)
            else:
                plan = plan_web(name=web.name, section=section, existing=feats, target=target, tolerance=tol,
                                method=method or c.kind, limits=limits, plug_material=c.plug_material,
                                keep_out=c.keep_out, lighten=c.lighten if lighten is None else lighten)
        work = WebWork(web, section, feats, plan)
        out.append(work)
        done.append(work)
    return out


# ------------------------------------------------------------------ crank figures
def in_crank_frame(props: MassProps, index: int, *, gap: float) -> MassProps:
    """A web's properties in the crank frame: web a as it is; web b turned 180 deg about Y,
    its inner face `gap` mm from web a's inner face (on -z)."""
    if index == 0:
        return props
    return props.transformed(rotation=np.diag([-1.0, 1.0, -1.0]), offset=(0.0, 0.0, -gap))


COUPLE_WARN_SHARE = 0.5   # a couple is flagged when its plane unbalance passes this share of the tolerance


def _web_levers(placed: list[MassProps], z_mid: float) -> list[float]:
    """Each web's lever arm from the rod's plane: its couple over its unbalance along Y, mm."""
    out = []
    for p in placed:
        uy = float(p.unbalance[1])
        cy = float(p.product_zx_zy[1] - z_mid * p.first_moment[1])
        out.append(abs(cy / uy) if abs(uy) > 1e-9 else 0.0)
    return out


def couple_figures(job, props: list[MassProps]) -> dict:
    """The crank's couple (moment unbalance) from both webs' products of inertia.

    The webs are placed as in crank.step (web b turned 180 deg about Y, `crank_gap` mm from web a);
    the rod, the bob weight and the crank's parts at the pin act in the rod's plane (mid-gap), so
    they add no couple about it.  Identical webs do not cancel a couple when their features lie off
    the Y axis or on one face: turned about Y, the x-z product keeps its sign.
    """
    gap = job.output.crank_gap
    placed = [in_crank_frame(p, i, gap=gap) for i, p in enumerate(props)]
    total = sum(placed, MassProps.zero())
    z_mid = -0.5 * gap
    couple = total.product_zx_zy - z_mid * total.first_moment[:2]
    plane_distance = gap + 0.5 * sum(w.thickness for w in job.webs)
    plane_unbalance = float(np.hypot(*couple)) / plane_distance
    limit = COUPLE_WARN_SHARE * job.tolerance_gmm
    levers = _web_levers(placed, z_mid)
    out = {
        "couple_gmm2": _vec(couple),
        "couple_note": f"about the rod's plane, with the webs' inner faces {gap:g} mm apart (crank.step's placing)",
        "plane_distance_mm": _num(plane_distance),
        "plane_unbalance_gmm": _num(plane_unbalance),
        "plane_unbalance_note": "the couple as the pair of opposite unbalances it equals in the two webs' "
                                "mid-planes; a static balance does not show it, a two-plane (dynamic) one does",
        "warn_above_gmm": _num(limit),
        "levers_mm": [_num(v) for v in levers],
        "warnings": [],
    }
    if plane_unbalance > limit:
        out["warnings"].append(
            f"the crank keeps a couple of {np.hypot(*couple):.0f} g*mm^2, i.e. +-{plane_unbalance:.1f} g*mm in the "
            f"webs' planes, {plane_distance:g} mm apart: more than {COUPLE_WARN_SHARE:.0%} of the "
            f"{job.tolerance_gmm:.1f} g*mm tolerance; a dynamic balance will show it")
    a, b = job.webs
    unequal = abs(a.share - b.share) > 1e-9 or abs(a.thickness - b.thickness) > 1e-9
    if unequal and sum(levers) > 0:
        free_a = levers[1] / (levers[0] + levers[1])
        out["couple_free_shares"] = {a.name: _num(free_a), b.name: _num(1.0 - free_a)}
        out["warnings"].append(
            f"the webs differ (shares {a.share:g}/{b.share:g}, thicknesses {a.thickness:g}/{b.thickness:g} mm): "
            f"their unbalances act {levers[0]:.1f} and {levers[1]:.1f} mm from the rod's plane, so the split "
            f"that leaves no couple is {a.name} {free_a:.3f}, {b.name} {1 - free_a:.3f}")
    return out


def rotor_mass_g(job, props: list[MassProps]) -> float:
    """The rotor as spun on a balancing machine: both webs, the crank's parts at the pin, the bob weight."""
    return sum(p.mass for p in props) + job.engine.m_crank_parts + job.engine.bob_weight_g


def crank_figures(job, webs: list[WebWork], props: list[MassProps]) -> dict:
    from .balance import iso_permissible_unbalance
    from .study import ISO_GRADE_NOTE, ISO_ROTOR_NOTE

    e = job.engine
    gap = job.output.crank_gap
    placed = [in_crank_frame(p, i, gap=gap) for i, p in enumerate(props)]
    u = sum(placed, MassProps.zero()).unbalance
    rotor_g = rotor_mass_g(job, props)
    u_per = iso_permissible_unbalance(grade=job.correction.iso_grade, rotor_mass_g=rotor_g, rpm=e.max_rpm)
    target_total = np.array(e.webs_target_gmm())
    deviation = u - target_total
    return {
        "unbalance_gmm": _vec(u),
        "target_gmm": _vec(target_total),
        "deviation_gmm": _vec(deviation),
        "deviation_bf_percent": _num(float(np.hypot(*deviation)) / e.bf_unit_gmm),
        "balance_factor_asked": _num(e.balance_factor),
        "balance_factor_achieved": _num(e.balance_factor_of(float(u[1]))),
        **couple_figures(job, props),
        "tolerance_gmm": _num(job.tolerance_gmm),
        "bf_tolerance_percent": _num(job.correction.bf_tolerance_percent),
        "bob_weight_g": _num(e.bob_weight_g),
        "bob_weight_note": "to hang on the assembled crank's pin: the rod's rotating end plus the balance factor "
                           "times the reciprocating mass",
        "countered_at_pin_g": _num(e.bob_weight_g + e.m_crank_parts),
        "countered_note": "the mass the webs counter at the pin radius: the bob weight plus the crank's own parts",
        "iso_21940_11": {
            "grade_mm_s": _num(job.correction.iso_grade),
            "rotor_mass_kg": _num(rotor_g / 1000.0),
            "rotor_mass_note": ISO_ROTOR_NOTE,
            "grade_note": ISO_GRADE_NOTE,
            "permissible_residual_gmm": _num(u_per),
            "formula": "U_per = 1000 * G * m / Omega (g*mm; G mm/s, m kg, Omega rad/s)",
        },
    }


def plug_density_range(job, webs: list[WebWork]) -> dict | None:
    """What the ends of each plug material's density range do to the crank's unbalance.

    A plug's effect is (rho_plug - rho_web) V (x, y); at another plug density only the
    (rho_end - rho_nominal) V (x, y) part changes.  Crank frame; balance-factor percent
    of m_reciprocating * stroke/2 (a lighter alloy under-corrects).
    """
    from .materials import material

    e = job.engine
    ends = {"low": np.zeros(2), "high": np.zeros(2)}
    used = {}
    for i, w in enumerate(webs):
        for f in w.all_features:
            if not isinstance(f, Plug) or f.material is None:
                continue
            m = material(f.material, "plug material")
            used[m.name] = m
            volume = math.pi * 0.25 * f.diameter ** 2 * f.length
            x = f.x if i == 0 else -f.x
            for end, rho in (("low", m.density_min), ("high", m.density_max)):
                ends[end] += (rho - m.density) * 1e-3 * volume * np.array([x, f.y])
    if not used:
        return None
    return {
        "materials": {n: {"nominal_g_cm3": _num(m.density), "min_g_cm3": _num(m.density_min),
                          "max_g_cm3": _num(m.density_max), "source": m.source} for n, m in sorted(used.items())},
        **{f"unbalance_change_at_{end}_gmm": _vec(v) for end, v in ends.items()},
        **{f"balance_factor_change_at_{end}_percent": _num(-v[1] / e.bf_unit_gmm) for end, v in ends.items()},
        "note": "plugs of the lightest and the heaviest alloy the standard allows, against the nominal "
                "density the plan used; weigh the plugs to know where yours lie",
    }


def safety_figures(job, webs: list[WebWork]) -> dict:
    from .loads import POISSON_STEEL, disc_hoop_stress_mpa, plug_load_n
    from .screens import screen_figures

    e = job.engine
    over = e.max_rpm * job.overspeed
    plugs, discs = [], []
    for w in webs:
        for i, f in enumerate(w.all_features):
            if isinstance(f, Plug):
                rho = plug_density_of(f)
                mass = rho * 1e-3 * math.pi * 0.25 * f.diameter ** 2 * f.length
                radius = math.hypot(f.x, f.y)
                plugs.append({"web": w.spec.name, "feature": i + 1, "diameter_mm": _num(f.diameter),
                              "length_mm": _num(f.length), "mass_g": _num(mass), "radius_mm": _num(radius),
                              "load_N_max_rpm": _num(plug_load_n(mass_g=mass, radius_mm=radius, rpm=e.max_rpm)),
                              "load_N_overspeed": _num(plug_load_n(mass_g=mass, radius_mm=radius, rpm=over))})
        r_out = w.section.rim_radius_max
        bore = 0.5 * w.section.main_bore
        # a web given only as a density has no Poisson's ratio: the steel figure (nu moves the result a few % at most)
        nu = w.spec.material.poisson_ratio if w.spec.material.poisson_ratio is not None else POISSON_STEEL
        discs.append({"web": w.spec.name, "outer_radius_mm": _num(r_out), "bore_radius_mm": _num(bore),
                      "poisson_ratio": _num(nu),
                      "hoop_stress_MPa_max_rpm": _num(disc_hoop_stress_mpa(
                          density_g_cm3=w.section.density_g_cm3, outer_radius_mm=r_out, bore_radius_mm=bore,
                          rpm=e.max_rpm, poisson=nu)),
                      "hoop_stress_MPa_overspeed": _num(disc_hoop_stress_mpa(
                          density_g_cm3=w.section.density_g_cm3, outer_radius_mm=r_out, bore_radius_mm=bore,
                          rpm=over, poisson=nu))})
    return {"max_rpm": _num(e.max_rpm), "overspeed_rpm": _num(over), "plugs": plugs, "discs": discs,
            "disc_method": "thin rotating disc of constant thickness, each web's own Poisson's ratio (0.3 for a "
                           "web given only as a density) (Timoshenko & Goodier); "
                           "ignores the crankpin bore, the correction holes and the press fit, which all raise "
                           "the real stress: a lower bound, not a rating",
            **screen_figures(job, webs)}


# ------------------------------------------------------------------ plan.json
def _fine(x: float) -> float:
    """Mass properties keep 9 significant digits in plan.json, so predicted and exact figures that agree
    to 1e-12 print alike; round-off noise below 1e-9 becomes 0.0."""
    x = float(x)
    return 0.0 if abs(x) < 1e-9 else float(f"{x:.9g}") + 0.0


def _summary(p: MassProps) -> dict:
    s = p.summary()
    return {"mass_g": _fine(s["mass_g"]), "volume_mm3": _fine(s["volume_mm3"]),
            "com_mm": [_fine(v) for v in s["com_mm"]], "unbalance_gmm": [_fine(v) for v in s["unbalance_gmm"]],
            "inertia_z_gmm2": _fine(s["inertia_z_gmm2"])}


def _feature_rows(features, section):
    rows = []
    for f in features:
        t = feature_to_table(f)
        t = {k: (_num(v) if isinstance(v, float) else v) for k, v in t.items()}
        fx = feature_massprops(f, thickness=section.thickness, web_density=section.density_g_cm3)
        t["effect"] = {"mass_g": _fine(fx.mass), "unbalance_gmm": [_fine(v) for v in fx.unbalance]}
        rows.append(t)
    return rows


def trim_figures(job, webs: list[WebWork], exact: list[MassProps], trim: dict) -> dict:
    """What the trim takes off, in the crank frame, against the measured heavy spot."""
    gap = job.output.crank_gap
    before = sum((in_crank_frame(w.plan.before, i, gap=gap) for i, w in enumerate(webs)), MassProps.zero())
    after = sum((in_crank_frame(p, i, gap=gap) for i, p in enumerate(exact)), MassProps.zero())
    heavy = heavy_spot_vector(trim["measured_gmm"], trim["crank_frame_deg"])
    change = after.unbalance - before.unbalance
    left = heavy + change
    per_web = {}
    for i, (w, p) in enumerate(zip(webs, exact)):
        d = in_crank_frame(p, i, gap=gap).unbalance - in_crank_frame(w.plan.before, i, gap=gap).unbalance
        per_web[w.spec.name] = _vec(d)
    return {"measured_gmm": _num(trim["measured_gmm"]), "reading_deg": _num(trim["reading_deg"]),
            "reading_direction": trim["reading_direction"], "rotation": job.engine.rotation,
            "heavy_spot_crank_frame_deg": _num(trim["crank_frame_deg"] % 360.0),
            "heavy_spot_gmm": _vec(heavy), "on_webs": trim["web"], "from": trim["from"],
            "change_gmm": _vec(change), "change_per_web_gmm": per_web, "left_gmm": _vec(left),
            "left_share_of_measured": _num(float(np.hypot(*left)) / trim["measured_gmm"])}


def plan_document(job, command: str, webs: list[WebWork], verified: list[dict], study_result: dict | None,
                  trim: dict | None = None) -> dict:
    e = job.engine
    exact = [v["exact_massprops"] for v in verified] if verified else [w.plan.predicted for w in webs]
    doc_webs = []
    for w, v in zip(webs, verified or [None] * len(webs)):
        p = w.plan
        deviation = p.deviation
        entry = {
            "name": w.spec.name,
            "frame": "crank axis = Z through the origin, crankpin on +Y, counterweight on -Y; z from 0 "
                     "(inner face) to the thickness (outer face), seen from the outer face",
            "thickness_mm": _num(w.section.thickness),
            "material": w.spec.material.name,
            "density_g_cm3": _num(w.section.density_g_cm3),
            "outline": str(w.spec.outline) if w.spec.outline else {"diameter_mm": _num(w.spec.diameter)},
            "pin_bore_mm": _num(w.spec.pin_bore),
            "main_bore_mm": _num(w.spec.main_bore),
            "share": _num(w.spec.share),
            "target_gmm": _vec(p.target),
            "tolerance_gmm": _num(p.tolerance),
            "method": p.method,
            "why": p.why,
            "binding": p.binding,
            "considered": list(p.considered),
            "existing_features": _feature_rows(w.existing, w.section),
            "planned_features": _feature_rows(p.features, w.section),
            "before": _summary(p.before),
            "predicted": _summary(p.predicted),
            "deviation_gmm": _vec(deviation),
            "deviation_bf_percent": _num(float(np.hypot(*deviation)) / e.bf_unit_gmm),
            "within_tolerance": p.within_tolerance,
        }
        entry["features"] = entry["existing_features"] + entry["planned_features"]
        if v is not None:
            entry["exact"] = v["exact"]
            entry["mesh"] = v["mesh"]
            entry["agreement"] = v["comparison"]
            entry["files"] = v["files"]
        doc_webs.append(entry)
    doc = {
        "geomgen_version": __version__,
        "command": command,
        "job": job.name,
        "units": {"length": "mm", "mass": "g", "unbalance": "g*mm", "inertia": "g*mm^2", "angle": "deg",
                  "density": "g/cm^3", "force": "N", "stress": "MPa", "speed": "rpm"},
        "engine": {"stroke_mm": _num(e.stroke), "rod_length_mm": _num(e.rod_length), "max_rpm": _num(e.max_rpm),
                   "balance_factor": _num(e.balance_factor), "cylinder_tilt_deg": _num(e.cylinder_tilt),
                   "rotation": e.rotation,
                   "m_reciprocating_g": _num(e.m_reciprocating), "m_rotating_g": _num(e.m_rotating),
                   "m_crank_parts_g": _num(e.m_crank_parts),
                   "reciprocating_g": {k: _num(v) for k, v in sorted(e.reciprocating.items())},
                   "rotating_g": {k: _num(v) for k, v in sorted(e.rotating.items())},
                   "crank_parts_g": {k: _num(v) for k, v in sorted(e.crank_parts.items())}},
        "correction": {"kind": job.correction.kind, "drills": job.correction.drill_series,
                       "min_wall_mm": _num(job.correction.min_wall), "pin_wall_mm": _num(job.correction.pin_wall),
                       "max_depth_mm": _num(job.correction.max_depth), "through": job.correction.through,
                       "plug_material": job.correction.plug_material.name,
                       "plug_density_g_cm3": _num(job.correction.plug_material.density),
                       "lighten_g": _num(job.correction.lighten),
                       "bf_tolerance_percent": _num(job.correction.bf_tolerance_percent)},
        "webs": doc_webs,
        "crank": crank_figures(job, webs, exact),
        "safety": safety_figures(job, webs),
        "cautions": list(CAUTIONS),
    }
    density_range = plug_density_range(job, webs)
    if density_range is not None:
        doc["plug_density_range"] = density_range
    walls = [line for v in (verified or []) for line in v.get("wall_warnings", [])]
    doc["warnings"] = list(job.warnings) + walls + doc["crank"]["warnings"]
    if trim is not None:
        doc["trim"] = trim_figures(job, webs, exact, trim)
    if study_result is not None:
        doc["study"] = {k: study_result[k] for k in ("peak_N", "best_balance_factor", "best_balance_factor_no_balancer",
                                                     "bob_weight_g") if k in study_result}
    return doc


def plan_json_bytes(doc: dict) -> bytes:
    return (json.dumps(doc, indent=2, sort_keys=True) + "\n").encode()


# ------------------------------------------------------------------ solids
def build_and_verify(job, webs: list[WebWork], folder: Path) -> list[dict]:
    """Solids, STEP/STL, exact and mesh properties, compared with the prediction (exit 4 if apart).

    A web with the same section and features as one already built (the usual pair) reuses that
    solid, its verification and its mesh bytes; its STEP is written under its own name.
    """
    import dataclasses
    import shutil

    from .export import export_web, write_crank_step, write_step
    from .solid import build_web, crank_assembly
    from .verify import verify_web

    out, solids, built = [], [], []
    for w in webs:
        twin = next((i for i, b in enumerate(built) if b.section == w.section
                     and b.all_features == w.all_features and b.existing == w.existing), None)
        if twin is not None:
            solid = dataclasses.replace(solids[twin], name=w.spec.name)
            stem_old, stem = f"web-{webs[twin].spec.name}", f"web-{w.spec.name}"
            write_step([(n, s) for n, s, _ in solid.solids()], folder / f"{stem}.step")
            files = [f"{stem}.step"]
            for name in out[twin]["files"]:
                if name.endswith(".stl"):
                    shutil.copyfile(folder / name, folder / name.replace(stem_old, stem, 1))
                    files.append(name.replace(stem_old, stem, 1))
            v = dict(out[twin], files=sorted(files), wall_warnings=solid.wall_warnings)
        else:
            # the solid's own wall check, independent of the planner, holds new features to the job's
            # walls; the web's existing features are facts: their thin walls are warnings
            solid = build_web(w.section, w.all_features, name=w.spec.name, min_wall=job.correction.min_wall,
                              pin_wall=job.correction.pin_wall, existing=len(w.existing))
            paths = export_web(solid, folder, tolerance=job.output.stl_tolerance,
                               angular_tolerance=job.output.stl_angular_tolerance)
            v = verify_web(solid, w.plan.predicted, paths, tolerance=job.output.stl_tolerance)
            v["files"] = sorted(p.name for p in paths.values())
            v["wall_warnings"] = solid.wall_warnings
        out.append(v)
        solids.append(solid)
        built.append(w)
    if job.output.crank_step and len(solids) == 2:
        write_crank_step(crank_assembly(solids[0], solids[1], gap_mm=job.output.crank_gap), folder / "crank.step")
    return out


def _clean_for_json(verified):
    for v in verified:
        v.pop("exact_massprops", None)
    return verified


# ------------------------------------------------------------------ commands
def _shop_files(job, doc, webs, study_result, study_svg: bytes | None) -> dict[str, bytes]:
    """operations.csv, drawing.dxf and report.html."""
    from . import shop

    return shop.render(job=job, doc=doc, webs=webs, study=study_result, study_svg=study_svg)


def _finish(args, job, command, webs, *, with_study=True, with_shop=True, trim=None):
    from . import study as study_mod

    study_result = study_of(job) if with_study else None
    study_files = study_mod.render_soon(study_result) if study_result is not None else None
    with staged(args.out, force=args.force) as stage:
        verified = build_and_verify(job, webs, stage)
        doc = plan_document(job, command, webs, verified, study_result, trim)
        _clean_for_json(verified)
        files = {"plan.json": plan_json_bytes(_jsonable(doc))}
        if study_files is not None:
            files.update(study_files())
        if with_shop:
            files.update(_shop_files(job, doc, webs, study_result, files.get("study.svg")))
        write_files(stage, files)
        written = sorted(p.name for p in stage.iterdir())
    warn_all(line for line in doc["warnings"] if line not in job.warnings)
    for line in summary_lines(doc):
        print(line)
    print(f"wrote {len(written)} files to {args.out}: {', '.join(written)}")
    return 0


def _jsonable(obj):
    if isinstance(obj, dict):
        return {k: _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_jsonable(v) for v in obj]
    if isinstance(obj, (np.floating, float)):
        return _fine(float(obj))
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, np.ndarray):
        return [_jsonable(v) for v in obj.tolist()]
    return obj


def summary_lines(doc: dict) -> list[str]:
    crank = doc["crank"]
    lines = [f"{doc['command']}: {doc['job']}"]
    if "trim" in doc:
        t = doc["trim"]
        lines.append(f"trim: measured unbalance {t['measured_gmm']:.1f} g*mm, heavy spot {t['reading_deg']:g} deg from "
                     f"the pin {t['reading_direction']} ({t['heavy_spot_crank_frame_deg']:g} deg ccw in the crank "
                     f"frame), taken off {t['on_webs']}; left after the trim {math.hypot(*t['left_gmm']):.2f} g*mm "
                     f"({100 * t['left_share_of_measured']:.2f} % of the measured)")
        lines.append("  (the balance factor below is against the design target; the trim answers the measurement)")
    lines += [
             f"balance factor asked {crank['balance_factor_asked']:.3f}, achieved {crank['balance_factor_achieved']:.4f} "
             f"(deviation {crank['deviation_bf_percent']:.3f} %, allowed {crank['bf_tolerance_percent']:g} %)",
             f"bob weight to hang on the assembled crank {crank['bob_weight_g']:.1f} g; the webs counter "
             f"{crank['countered_at_pin_g']:.1f} g at the pin radius",
             f"crank deviation {math.hypot(*crank['deviation_gmm']):.1f} g*mm; ISO 21940-11 G{crank['iso_21940_11']['grade_mm_s']:g} "
             f"permits {crank['iso_21940_11']['permissible_residual_gmm']:.1f} g*mm at max_rpm",
             f"couple {math.hypot(*crank['couple_gmm2']):.0f} g*mm^2 (+-{crank['plane_unbalance_gmm']:.1f} g*mm in the "
             f"webs' planes)"]
    for w in doc["webs"]:
        lines.append(f"web {w['name']}: {w['method']}, {len(w['planned_features'])} new feature(s); target "
                     f"{w['target_gmm'][1]:.1f} g*mm, predicted {w['predicted']['unbalance_gmm'][1]:.1f}, "
                     f"deviation {w['deviation_gmm'][0]:+.2f}, {w['deviation_gmm'][1]:+.2f} g*mm (|deviation| "
                     f"allowed {w['tolerance_gmm']:.1f})")
        if "agreement" in w:
            pe = w["agreement"]["predicted_vs_exact"]
            lines.append(f"  verified: exact B-rep vs prediction {pe['unbalance_gmm']:.3g} g*mm, mass "
                         f"{pe['mass_rel']:.1e} relative; mesh within its stated bound")
        for f in w["planned_features"]:
            lines.append("  " + _feature_line(f))
    lines.append("CAUTION: " + CAUTIONS[0])
    return lines


def _feature_line(f: dict) -> str:
    if f["kind"] == "pocket":
        return (f"pocket r {f['r_inner']}..{f['r_outer']} mm, {f['angle_start']}..{f['angle_end']} deg, depth "
                f"{f['depth']} mm, corners r{f['corner_radius']}")
    if f["kind"] == "plug":
        return f"plug {f['diameter']} mm x {f['length']} mm at ({f['x']}, {f['y']})"
    depth = "through" if f.get("through") else f"{f['depth']} mm deep"
    return f"hole {f['diameter']} mm {depth} at ({f['x']}, {f['y']})"


def run_build(args) -> int:
    from . import job as jobmod

    check_target(args.out, force=args.force)
    job = jobmod.load(args.job)
    warn_all(job.warnings)
    webs = plan_webs(job, method="none")
    return _finish(args, job, "build", webs, with_study=False, with_shop=False)


def run_plan(args) -> int:
    from . import job as jobmod

    check_target(args.out, force=args.force)
    job = jobmod.load(args.job)
    warn_all(job.warnings)
    webs = plan_webs(job)
    return _finish(args, job, "plan", webs)


# ------------------------------------------------------------------ trim
_MASS_AT = re.compile(r"^\s*(?P<mass>.+?)\s+at\s+(?P<radius>.+?)\s*$")


def measured_unbalance(text: str) -> float:
    """g*mm from "120", "0.5 g*in", "0.5 oz*in" or "0.8 g at 55 mm"."""
    from .units import to_internal

    m = _MASS_AT.match(text)
    if m:
        mass = to_internal(m["mass"], "mass", "--unbalance (mass)")
        radius = to_internal(m["radius"], "length", "--unbalance (radius)")
        value = mass * radius
    else:
        value = to_internal(text, "unbalance", "--unbalance")
    if not value > 0:
        raise BadInput(f"--unbalance: must be > 0, got {text!r}")
    return value


def previous_features(job, from_dir: Path) -> dict:
    path = Path(from_dir) / "plan.json"
    try:
        doc = json.loads(path.read_text())
    except FileNotFoundError:
        raise BadInput(f"--from {from_dir}: no plan.json there; give the folder of an earlier plan or build") from None
    except (OSError, ValueError) as exc:
        raise BadInput(f"--from {path}: cannot read it ({exc})") from None
    webs = {w.get("name"): w for w in doc.get("webs", []) if isinstance(w, dict)}
    out = {}
    for web in job.webs:
        if web.name not in webs:
            raise BadInput(f"--from {path}: no web named {web.name!r} (it has {', '.join(map(str, webs))})")
        rows = webs[web.name].get("features", [])
        # plan.json adds each feature's computed effect: figures, not part of the feature
        out[web.name] = tuple(feature_from_table({k: v for k, v in t.items() if k != "effect"},
                                                 where=f"{path.name} web {web.name} feature {i + 1}",
                                                 thickness=web.thickness)
                              for i, t in enumerate(rows))
    return out


def heavy_spot_vector(unbalance_gmm: float, crank_frame_deg: float) -> np.ndarray:
    """The heavy spot as a crank-frame vector, g*mm: U (-sin A, cos A), A ccw from the pin (+Y)."""
    a = math.radians(crank_frame_deg)
    return unbalance_gmm * np.array([-math.sin(a), math.cos(a)])


def crank_frame_angle(reading_deg: float, *, rotation: str, against_rotation: bool = False) -> float:
    """A balancing machine's heavy-spot angle (from the pin, in the direction of rotation unless
    `against_rotation`) as the crank frame's counter-clockwise angle from +Y (web a seen from its
    outer face)."""
    with_rotation = -reading_deg if against_rotation else reading_deg
    return with_rotation if rotation == "ccw" else -with_rotation


def trim_request(job, *, unbalance_gmm: float, angle_deg: float, web_name: str | None):
    """Per-web changes (web frames) that take off a heavy spot given in the crank frame.

    angle_deg : counter-clockwise from the pin in the crank frame (see `crank_frame_angle`);
    the webs must change by minus the heavy spot, shared or all on one web.  A point (x, y)
    of web b is (-x, y) in the crank frame, so its change is mirrored.
    """
    names = [w.name for w in job.webs]
    if web_name is not None and web_name not in names:
        raise BadInput(f"--web: {web_name!r} is not a web of this job; its webs are {', '.join(names)}")
    heavy = heavy_spot_vector(unbalance_gmm, angle_deg)
    changes = {}
    for i, w in enumerate(job.webs):
        share = (1.0 if w.name == web_name else 0.0) if web_name else w.share
        delta = -heavy * share
        if i == 1:
            delta = np.array([-delta[0], delta[1]])
        changes[w.name] = delta
    return changes


def run_trim(args) -> int:
    from . import job as jobmod
    from .units import to_internal

    check_target(args.out, force=args.force)
    if Path(args.out).resolve() == Path(args.from_dir).resolve():
        raise BadInput("--out: must differ from --from (the earlier plan is kept as it is)")
    job = jobmod.load(args.job)
    warn_all(job.warnings)
    unbalance = measured_unbalance(args.unbalance)
    reading = to_internal(args.angle, "angle", "--angle")
    against = bool(getattr(args, "against_rotation", False))
    angle = crank_frame_angle(reading, rotation=job.engine.rotation, against_rotation=against)
    existing = previous_features(job, Path(args.from_dir))
    changes = trim_request(job, unbalance_gmm=unbalance, angle_deg=angle, web_name=args.web)
    targets, tolerances = {}, {}
    for web in job.webs:
        section = web_section(job, web)
        now = section.massprops() + _props(existing[web.name], section)
        targets[web.name] = tuple(now.unbalance + changes[web.name])
        share = float(np.hypot(*changes[web.name])) / unbalance
        # 1 % of the measured unbalance per web keeps the pair within 2 % of it
        tolerances[web.name] = max(0.01 * unbalance * share, 0.05)
    webs = plan_webs(job, existing=existing, targets=targets, tolerances=tolerances, lighten=0.0)
    trim = {"measured_gmm": unbalance, "reading_deg": reading, "crank_frame_deg": angle,
            "reading_direction": "against the rotation" if against else "in the direction of rotation",
            "from": str(args.from_dir),
            "web": f"web {args.web}" if args.web else "both webs by their shares"}
    return _finish(args, job, "trim", webs, trim=trim)
