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
from .errors import BadInput
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
                               twin.plan.why + f" (web {web.name} is the same web: the same layout, so the crank "
                               "gains no couple)", twin.plan.binding, twin.plan.considered)
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


def crank_figures(job, webs: list[WebWork], props: list[MassProps]) -> dict:
    e = job.engine
    gap = job.output.crank_gap
    placed = [in_crank_frame(p, i, gap=gap) for i, p in enumerate(props)]
    total = sum(placed, MassProps.zero())
    u = total.unbalance
    z_mid = -0.5 * gap
    couple = total.product_zx_zy - z_mid * total.first_moment[:2]
    bf = (-u[1] / e.crank_radius - e.m_rotating) / e.m_reciprocating
    bob = e.m_rotating + e.balance_factor * e.m_reciprocating
    rotor_kg = (sum(p.mass for p in props) + bob) / 1000.0
    omega = e.omega
    u_per = 1000.0 * job.correction.iso_grade * rotor_kg / omega
    target_total = np.array([0.0, -(e.m_rotating + e.balance_factor * e.m_reciprocating) * e.crank_radius])
    return {
        "unbalance_gmm": _vec(u),
        "target_gmm": _vec(target_total),
        "residual_gmm": _vec(u - target_total),
        "residual_bf_points": _num(100.0 * float(np.hypot(*(u - target_total))) / (e.m_reciprocating * e.crank_radius)),
        "balance_factor_asked": _num(e.balance_factor),
        "balance_factor_achieved": _num(bf),
        "couple_gmm2": _vec(couple),
        "couple_note": f"products of inertia about the crank's mid-plane with the webs {gap:g} mm apart",
        "tolerance_gmm": _num(job.tolerance_gmm),
        "bob_weight_g": _num(bob),
        "iso_21940_11": {
            "grade_mm_s": _num(job.correction.iso_grade),
            "rotor_mass_kg": _num(rotor_kg),
            "rotor_mass_note": "both webs plus the bob weight, as spun on a balancing machine",
            "permissible_residual_gmm": _num(u_per),
            "formula": "U_per = 1000 * G * m / Omega (g*mm; G mm/s, m kg, Omega rad/s)",
        },
    }


def safety_figures(job, webs: list[WebWork]) -> dict:
    from .loads import disc_hoop_stress_mpa, plug_load_n

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
        discs.append({"web": w.spec.name, "outer_radius_mm": _num(r_out), "bore_radius_mm": _num(bore),
                      "hoop_stress_MPa_max_rpm": _num(disc_hoop_stress_mpa(
                          density_g_cm3=w.section.density_g_cm3, outer_radius_mm=r_out, bore_radius_mm=bore,
                          rpm=e.max_rpm)),
                      "hoop_stress_MPa_overspeed": _num(disc_hoop_stress_mpa(
                          density_g_cm3=w.section.density_g_cm3, outer_radius_mm=r_out, bore_radius_mm=bore,
                          rpm=over))})
    return {"max_rpm": _num(e.max_rpm), "overspeed_rpm": _num(over), "plugs": plugs, "discs": discs,
            "disc_method": "thin rotating disc of constant thickness, nu = 0.3 (Timoshenko & Goodier); "
                           "ignores the crankpin bore, the correction holes and the press fit, which all raise "
                           "the real stress: a lower bound, not a rating"}


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
    a = math.radians(trim["heavy_spot_deg"])
    heavy = trim["measured_gmm"] * np.array([-math.sin(a), math.cos(a)])
    change = after.unbalance - before.unbalance
    left = heavy + change
    return {"measured_gmm": _num(trim["measured_gmm"]), "heavy_spot_deg": _num(trim["heavy_spot_deg"]),
            "heavy_spot_gmm": _vec(heavy), "on_webs": trim["web"], "from": trim["from"],
            "change_gmm": _vec(change), "left_gmm": _vec(left),
            "left_share_of_measured": _num(float(np.hypot(*left)) / trim["measured_gmm"])}


def plan_document(job, command: str, webs: list[WebWork], verified: list[dict], study_result: dict | None,
                  trim: dict | None = None) -> dict:
    e = job.engine
    exact = [v["exact_massprops"] for v in verified] if verified else [w.plan.predicted for w in webs]
    unit_bf = e.m_reciprocating * e.crank_radius / 100.0   # g*mm per balance-factor point
    doc_webs = []
    for w, v in zip(webs, verified or [None] * len(webs)):
        p = w.plan
        resid = p.residual
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
            "residual_gmm": _vec(resid),
            "residual_bf_points": _num(float(np.hypot(*resid)) / unit_bf),
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
                   "m_reciprocating_g": _num(e.m_reciprocating), "m_rotating_g": _num(e.m_rotating),
                   "reciprocating_g": {k: _num(v) for k, v in sorted(e.reciprocating.items())},
                   "rotating_g": {k: _num(v) for k, v in sorted(e.rotating.items())}},
        "correction": {"kind": job.correction.kind, "drills": job.correction.drill_series,
                       "min_wall_mm": _num(job.correction.min_wall), "pin_wall_mm": _num(job.correction.pin_wall),
                       "max_depth_mm": _num(job.correction.max_depth), "through": job.correction.through,
                       "plug_material": job.correction.plug_material.name,
                       "plug_density_g_cm3": _num(job.correction.plug_material.density),
                       "lighten_g": _num(job.correction.lighten),
                       "tolerance_bf_points": _num(job.correction.tolerance_points)},
        "webs": doc_webs,
        "crank": crank_figures(job, webs, exact),
        "safety": safety_figures(job, webs),
        "cautions": list(CAUTIONS),
    }
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
def _shop_files(job, doc, webs, study_result) -> dict[str, bytes]:
    """operations.csv, drawing.dxf and report.html, when the shop module is present."""
    try:
        from . import shop
    except ImportError:
        return {}
    return shop.render(job=job, doc=doc, webs=webs, study=study_result)


def _finish(args, job, command, webs, *, with_study=True, with_shop=True, trim=None):
    from . import study as study_mod

    study_result = study_of(job) if with_study else None
    with staged(args.out, force=args.force) as stage:
        verified = build_and_verify(job, webs, stage)
        doc = plan_document(job, command, webs, verified, study_result, trim)
        _clean_for_json(verified)
        files = {"plan.json": plan_json_bytes(_jsonable(doc))}
        if study_result is not None:
            files.update(study_mod.render(study_result))
        if with_shop:
            files.update(_shop_files(job, doc, webs, study_result))
        write_files(stage, files)
        written = sorted(p.name for p in stage.iterdir())
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
        lines.append(f"trim: measured {t['measured_gmm']:.1f} g*mm at {t['heavy_spot_deg']:g} deg from the pin (crank "
                     f"frame), taken off {t['on_webs']}; left after the trim {math.hypot(*t['left_gmm']):.2f} g*mm "
                     f"({100 * t['left_share_of_measured']:.2f} % of the measured)")
        if t["on_webs"].startswith("web "):
            cx, cy = crank["couple_gmm2"]
            lines.append(f"  all on one web: the crank keeps a couple of {math.hypot(cx, cy):.0f} g*mm^2 "
                         f"({cx:.0f}, {cy:.0f}) about its mid-plane; a dynamic balance shows it")
        lines.append("  (the balance factor below is against the design target; the trim answers the measurement)")
    lines += [
             f"balance factor asked {crank['balance_factor_asked']:.3f}, achieved {crank['balance_factor_achieved']:.4f} "
             f"(residual {crank['residual_bf_points']:.3f} points, allowed {doc['correction']['tolerance_bf_points']:g})",
             f"crank residual {math.hypot(*crank['residual_gmm']):.1f} g*mm; ISO 21940-11 G{crank['iso_21940_11']['grade_mm_s']:g} "
             f"permits {crank['iso_21940_11']['permissible_residual_gmm']:.1f} g*mm at max_rpm"]
    for w in doc["webs"]:
        lines.append(f"web {w['name']}: {w['method']}, {len(w['planned_features'])} new feature(s); target "
                     f"{w['target_gmm'][1]:.1f} g*mm, predicted {w['predicted']['unbalance_gmm'][1]:.1f}, "
                     f"residual {w['residual_gmm'][0]:+.2f}, {w['residual_gmm'][1]:+.2f} g*mm (tolerance "
                     f"{w['tolerance_gmm']:.1f})")
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
    webs = plan_webs(job, method="none")
    return _finish(args, job, "build", webs, with_study=False, with_shop=False)


def run_plan(args) -> int:
    from . import job as jobmod

    check_target(args.out, force=args.force)
    job = jobmod.load(args.job)
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


def trim_request(job, *, unbalance_gmm: float, angle_deg: float, web_name: str | None):
    """Per-web changes (web frames) that take off a heavy spot measured in the crank frame.

    The heavy spot at angle A (deg from the pin, counter-clockwise, crank frame) is
    U (-sin A, cos A); the webs must change by minus that, shared or all on one web.
    A point (x, y) of web b is (-x, y) in the crank frame, so its change is mirrored.
    """
    names = [w.name for w in job.webs]
    if web_name is not None and web_name not in names:
        raise BadInput(f"--web: {web_name!r} is not a web of this job; its webs are {', '.join(names)}")
    a = math.radians(angle_deg)
    heavy = unbalance_gmm * np.array([-math.sin(a), math.cos(a)])
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
    unbalance = measured_unbalance(args.unbalance)
    angle = to_internal(args.angle, "angle", "--angle")
    existing = previous_features(job, Path(args.from_dir))
    changes = trim_request(job, unbalance_gmm=unbalance, angle_deg=angle, web_name=args.web)
    targets, tolerances = {}, {}
    for web in job.webs:
        section = web_section(job, web)
        now = section.massprops() + _props(existing[web.name], section)
        targets[web.name] = tuple(now.unbalance + changes[web.name])
        share = float(np.hypot(*changes[web.name])) / unbalance
        # 1 % of the measured residual per web keeps the pair within 2 % of it
        tolerances[web.name] = max(0.01 * unbalance * share, 0.05)
    webs = plan_webs(job, existing=existing, targets=targets, tolerances=tolerances, lighten=0.0)
    trim = {"measured_gmm": unbalance, "heavy_spot_deg": angle, "from": str(args.from_dir),
            "web": f"web {args.web}" if args.web else "both webs by their shares"}
    return _finish(args, job, "trim", webs, trim=trim)
