"""plan.json: its layout, its number formatting, and reading its features back.

`plan_document` gathers the figures of a plan (the job, each web's target,
features, predicted and, once verified, exact and mesh properties, the crank,
the safety screens, a trim) into the dict written as plan.json;
`plan_json_bytes` writes it the one way that gives the same bytes for the
same job.  Mass properties keep 9 significant digits, every other figure 6
(geomgen.rounding).  `previous_features` reads an earlier plan's features for
a trim.  No CAD kernel.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path

import numpy as np

from . import __version__
from .calibrate import calibration_figures
from .crank import crank_figures, plug_density_range
from .errors import BadInput
from .features import feature_from_table, feature_to_table
from .massprops import MassProps
from .rounding import fine, num, vec
from .safety import safety_figures
from .screens import plug_warnings
from .trimming import job_fingerprint, trim_figures
from .uncertainty import band

#: the commands whose plan.json carries the balance-factor band (a trim answers a measurement instead)
BAND_COMMANDS = ("plan", "build")

CAUTIONS = (
    "A crank that comes apart at speed can kill. These figures are design aids, not a release for service.",
    "Check the machining and the balance on the real part before it runs.",
    "Plugs need a retention method (press fit, staking, welding or a cross pin) rated for the load shown, "
    "with margin, checked by someone qualified to do so.",
    "Follow the engine maker's limits, local rules and licensed practice; when they disagree with this "
    "report, they win.",
)


def massprops_figures(p: MassProps) -> dict:
    """A MassProps as plan.json shows it: mass (g), volume (mm^3), centre of mass (mm), unbalance
    (g*mm), inertia about Z (g*mm^2), 9 significant digits."""
    s = p.summary()
    return {"mass_g": fine(s["mass_g"]), "volume_mm3": fine(s["volume_mm3"]),
            "com_mm": [fine(v) for v in s["com_mm"]], "unbalance_gmm": [fine(v) for v in s["unbalance_gmm"]],
            "inertia_z_gmm2": fine(s["inertia_z_gmm2"])}


def feature_rows(features, section) -> list[dict]:
    """Each feature's table as in a job, plus its "effect" (mass and unbalance change) on this web."""
    rows = []
    for f in features:
        t = feature_to_table(f)
        t = {k: (num(v) if isinstance(v, float) else v) for k, v in t.items()}
        fx = section.change(f)
        t["effect"] = {"mass_g": fine(fx.mass), "unbalance_gmm": [fine(v) for v in fx.unbalance]}
        rows.append(t)
    return rows


def prism_comparison(section, tolerance: float) -> dict:
    """What a flat prism of the model's outline (less its bores) and mean thickness (volume / area) would
    have said of the bare web's unbalance, and how far that is from the model's exact figure."""
    from .loops import prism

    base = section.massprops()
    area = section.area_moments()
    mean_t = base.volume / area.area
    flat = prism(area, z0=0.0, z1=mean_t, density_g_cm3=section.density_g_cm3)
    gap = float(np.hypot(*(flat.unbalance - base.unbalance)))
    return {"mean_thickness_mm": num(mean_t), "prism_unbalance_gmm": vec(flat.unbalance),
            "model_unbalance_gmm": vec(base.unbalance), "prism_error_gmm": num(gap),
            "prism_error_share_of_tolerance": num(gap / tolerance) if tolerance > 0 else None}


def _outline_entry(spec):
    """Where the web's shape comes from: a DXF path, a diameter, or a model (its path and turn)."""
    if spec.model is not None:
        return {"model": str(spec.model), "model_rotate_deg": num(spec.model_rotate_deg)}
    return str(spec.outline) if spec.outline else {"diameter_mm": num(spec.diameter)}


def plan_document(job, command: str, webs: list, verified: list[dict] | None, study_result: dict | None,
                  trim: dict | None = None, *, found_band: dict | None = None) -> dict:
    """The plan.json dict of one run.

    command : "plan" | "build" | "trim";  webs : the pipeline's WebWork list;  verified : one
    verification dict per web (pipeline.build_and_verify), or None for the prediction alone (the
    crank figures then use the predicted properties);  study_result : the study, or None (build);
    trim : the trim record (measured_gmm, reading_deg, crank_frame_deg, reading_direction, from, web);
    found_band : `uncertainty.band(job, webs)` when already worked out (it reads the prediction only, so
    the document before and after verification share it), else worked out here.
    """
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
            "thickness_mm": num(w.section.thickness),
            "material": w.spec.material.name,
            "density_g_cm3": num(w.section.density_g_cm3),
            "outline": _outline_entry(w.spec),
            "pin_bore_mm": num(w.spec.pin_bore),
            "main_bore_mm": num(w.spec.main_bore),
            "share": num(w.spec.share),
            "target_gmm": vec(p.target),
            "tolerance_gmm": num(p.tolerance),
            "method": p.method,
            "why": p.why,
            "binding": p.binding,
            "considered": list(p.considered),
            "existing_features": feature_rows(w.existing, w.section),
            "planned_features": feature_rows(p.features, w.section),
            "before": massprops_figures(p.before),
            "predicted": massprops_figures(p.predicted),
            "deviation_gmm": vec(deviation),
            # on the crank's scale (one BF point = the reciprocating mass at the pin radius / 100), which is
            # not the web's own: its share of the web's allowed |deviation| says how close it came
            "deviation_bf_percent": num(float(np.hypot(*deviation)) / e.bf_unit_gmm),
            "deviation_share_of_tolerance": num(float(np.hypot(*deviation)) / p.tolerance) if p.tolerance > 0 else None,
            "within_tolerance": p.within_tolerance,
        }
        entry["features"] = entry["existing_features"] + entry["planned_features"]
        if getattr(w.section, "model", None) is not None:
            entry["prism_comparison"] = prism_comparison(w.section, p.tolerance)
        calibration = calibration_figures(w.spec)
        if calibration is not None:
            entry["calibration"] = calibration
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
        "engine": {"stroke_mm": num(e.stroke), "rod_length_mm": num(e.rod_length), "max_rpm": num(e.max_rpm),
                   "balance_factor": num(e.balance_factor), "cylinder_tilt_deg": num(e.cylinder_tilt),
                   "rotation": e.rotation,
                   "m_reciprocating_g": num(e.m_reciprocating), "m_rotating_g": num(e.m_rotating),
                   "m_crank_parts_g": num(e.m_crank_parts),
                   "reciprocating_g": {k: num(v) for k, v in sorted(e.reciprocating.items())},
                   "rotating_g": {k: num(v) for k, v in sorted(e.rotating.items())},
                   "crank_parts_g": {k: num(v) for k, v in sorted(e.crank_parts.items())}},
        "correction": {"kind": job.correction.kind, "drills": job.correction.drill_series,
                       "min_wall_mm": num(job.correction.min_wall), "pin_wall_mm": num(job.correction.pin_wall),
                       "max_depth_mm": num(job.correction.max_depth), "through": job.correction.through,
                       "plug_material": job.correction.plug_material.name,
                       "plug_density_g_cm3": num(job.correction.plug_material.density),
                       "lighten_g": num(job.correction.lighten),
                       "plug_fit": job.correction.plug_fit,
                       "plug_min_length_mm": num(job.correction.plug_min_length),
                       "plug_min_length_ratio": num(job.correction.plug_min_length_ratio),
                       "bf_tolerance_percent": num(job.correction.bf_tolerance_percent)},
        "webs": doc_webs,
        "crank": crank_figures(job, webs, exact),
        "safety": safety_figures(job, webs),
        "cautions": list(CAUTIONS),
        # which job this plan belongs to, so that a trim from it can check (geomgen.trimming)
        "job_fingerprint": job_fingerprint(job),
    }
    if command in BAND_COMMANDS:
        # how sure the balance factor is (geomgen.uncertainty): the contract's two keys at the top, the rest
        # beside them
        found = copy.deepcopy(found_band) if found_band is not None else band(job, webs)
        doc["balance_factor_band"] = found.pop("balance_factor_band")
        doc["contributions"] = found.pop("contributions")
        doc["uncertainty"] = found
    density_range = plug_density_range(job, webs)
    if density_range is not None:
        doc["plug_density_range"] = density_range
    walls = [line for v in (verified or []) for line in v.get("wall_warnings", [])]
    iso = doc["crank"]["iso_21940_11"]
    deviation = float(np.hypot(*doc["crank"]["deviation_gmm"]))
    if deviation > iso["permissible_residual_gmm"]:
        doc["crank"]["warnings"].append(
            f"the crank's deviation from target, {deviation:.1f} g*mm, is more than the "
            f"{iso['permissible_residual_gmm']:.1f} g*mm ISO 21940-11 G{iso['grade_mm_s']:g} permits for this rotor "
            "at max_rpm: tighten bf_tolerance_percent or choose the grade you mean")
    doc["warnings"] = list(job.warnings) + walls + plug_warnings(job, webs) + doc["crank"]["warnings"] + \
        list((trim or {}).get("warnings", ()))
    if trim is not None:
        doc["trim"] = trim_figures(job, webs, exact, trim)
    if study_result is not None:
        doc["study"] = {k: study_result[k] for k in ("peak_N", "best_balance_factor", "best_balance_factor_no_balancer",
                                                     "bob_weight_g") if k in study_result}
    return doc


def plan_json_bytes(doc: dict) -> bytes:
    """plan.json's bytes: sorted keys, two-space indent, one final newline (same job, same bytes)."""
    return (json.dumps(doc, indent=2, sort_keys=True) + "\n").encode()


def jsonable(obj):
    """`obj` with numpy numbers and arrays made plain, every float through `fine` (9 digits)."""
    if isinstance(obj, dict):
        return {k: jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [jsonable(v) for v in obj]
    if isinstance(obj, (np.floating, float)):
        return fine(float(obj))
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, np.ndarray):
        return [jsonable(v) for v in obj.tolist()]
    return obj


def read_plan(from_dir: Path) -> tuple[dict, Path]:
    """(the plan.json document, its path) in `from_dir`, an earlier plan or build."""
    path = Path(from_dir) / "plan.json"
    try:
        doc = json.loads(path.read_text())
    except FileNotFoundError:
        raise BadInput(f"--from {from_dir}: no plan.json there; give the folder of an earlier plan or build") from None
    except (OSError, ValueError) as exc:
        raise BadInput(f"--from {path}: cannot read it ({exc})") from None
    if not isinstance(doc, dict):
        raise BadInput(f"--from {path}: not a geomgen plan.json (its top level is not a table)")
    return doc, path


def previous_features(job, from_dir: Path) -> dict:
    """{web name: features} of the plan.json in `from_dir` (an earlier plan or build), for a trim."""
    doc, path = read_plan(from_dir)
    return document_features(job, doc, where=f"--from {path}", file_name=path.name)


def document_features(job, doc: dict, *, where: str, file_name: str = "plan.json") -> dict:
    """{web name: features} of a plan.json document, each feature read back from its table as a
    trim from the written folder reads it (the figures as printed, 6 significant digits).

    where : how error messages name the document;  file_name : how they name its feature rows.
    """
    webs = {w.get("name"): w for w in doc.get("webs", []) if isinstance(w, dict)}
    out = {}
    for web in job.webs:
        if web.name not in webs:
            raise BadInput(f"{where}: no web named {web.name!r} (it has {', '.join(map(str, webs))})")
        rows = webs[web.name].get("features", [])
        # plan.json adds each feature's computed effect: figures, not part of the feature
        out[web.name] = tuple(feature_from_table({k: v for k, v in t.items() if k != "effect"},
                                                 where=f"{file_name} web {web.name} feature {i + 1}",
                                                 thickness=None if web.model is not None else web.thickness)
                              for i, t in enumerate(rows))
    return out
