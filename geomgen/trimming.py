"""The trim's maths: a residual unbalance measured on the assembled crank
(with its bob weight) turned into a change of each web, and what the new webs
leave of it.

A balancing machine gives the heavy spot's angle from the crankpin, in the
direction of rotation unless told otherwise; the crank frame measures
counter-clockwise from +Y seen from web a's outer face.  A point (x, y) of web
b is (-x, y) in the crank frame.  No CAD kernel.
"""

from __future__ import annotations

import hashlib
import json
import math
import re

import numpy as np

from .crank import in_crank_frame
from .errors import BadInput
from .massprops import MassProps
from .rounding import fine, num, vec
from .webs import features_massprops, web_section

_MASS_AT = re.compile(r"^\s*(?P<mass>.+?)\s+at\s+(?P<radius>.+?)\s*$")


def measured_unbalance(text) -> float:
    """g*mm from "120", "0.5 g*in", "0.5 oz*in" or "0.8 g at 55 mm" (or a plain number, g*mm)."""
    from .units import to_internal

    m = _MASS_AT.match(text) if isinstance(text, str) else None
    if m:
        mass = to_internal(m["mass"], "mass", "--unbalance (mass)")
        radius = to_internal(m["radius"], "length", "--unbalance (radius)")
        value = mass * radius
    else:
        value = to_internal(text, "unbalance", "--unbalance")
    if not value > 0:
        raise BadInput(f"--unbalance: must be > 0, got {text!r}")
    return value


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


def trim_targets(job, *, existing: dict, changes: dict, unbalance_gmm: float) -> tuple[dict, dict]:
    """({web name: (x, y) g*mm}, {web name: g*mm}): each web's new target (its unbalance with the
    features it has, plus its change) and the tolerance it is planned to."""
    targets, tolerances = {}, {}
    for web in job.webs:
        section = web_section(job, web)
        now = section.massprops() + features_massprops(existing[web.name], section)
        targets[web.name] = tuple(now.unbalance + changes[web.name])
        share = float(np.hypot(*changes[web.name])) / unbalance_gmm
        # 1 % of the measured unbalance per web keeps the pair within 2 % of it
        tolerances[web.name] = max(0.01 * unbalance_gmm * share, 0.05)
    return targets, tolerances


def trim_figures(job, webs: list, exact: list[MassProps], trim: dict) -> dict:
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
        per_web[w.spec.name] = vec(d)
    return {"measured_gmm": num(trim["measured_gmm"]), "reading_deg": num(trim["reading_deg"]),
            "reading_direction": trim["reading_direction"], "rotation": job.engine.rotation,
            "heavy_spot_crank_frame_deg": num(trim["crank_frame_deg"] % 360.0),
            "heavy_spot_gmm": vec(heavy), "on_webs": trim["web"], "from": trim["from"],
            "from_check": trim.get("from_check", "not checked"),
            "change_gmm": vec(change), "change_per_web_gmm": per_web, "left_gmm": vec(left),
            "left_share_of_measured": num(float(np.hypot(*left)) / trim["measured_gmm"])}


# ------------------------------------------------------------------ which job a plan belongs to
def _fig(x) -> float:
    return fine(float(x))


def _canon(value):
    """`value` as plan.json holds it: floats at 9 significant digits, tuples as lists, numpy made plain."""
    if isinstance(value, dict):
        return {str(k): _canon(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_canon(v) for v in value]
    if isinstance(value, (float, np.floating)):
        return _fig(value)
    if isinstance(value, np.integer):
        return int(value)
    return value


def _file_sha256(path) -> str | None:
    try:
        return hashlib.sha256(path.read_bytes()).hexdigest()
    except (OSError, AttributeError):
        return None


def _canonical(job) -> dict:
    """The job's facts that decide a web's features, as the job gives them (9 significant digits):
    engine stroke, rod length, balance factor and every weighed mass; each web's name, geometry
    (diameter, or the outline file's sha256 and outline_units), thickness, material, density, pin and
    main bore, and its own features.  Not in it: max_rpm, shares, tilt, rotation, [correction] and
    [output], which a trim may change without making the earlier plan another job's."""
    e = job.engine
    webs = []
    for w in job.webs:
        webs.append({"name": w.name,
                     "diameter": None if w.diameter is None else _fig(w.diameter),
                     "outline_sha256": None if w.outline is None else _file_sha256(w.outline),
                     "outline_units": w.outline_units,
                     "thickness": _fig(w.thickness), "material": w.material.name, "density": _fig(w.density),
                     "pin_bore": _fig(w.pin_bore), "main_bore": _fig(w.main_bore),
                     "features": [_canon(f.to_table()) for f in w.features]})
    return {"engine": {"stroke": _fig(e.stroke), "rod_length": _fig(e.rod_length),
                       "balance_factor": _fig(e.balance_factor),
                       "reciprocating": {k: _fig(v) for k, v in sorted(e.reciprocating.items())},
                       "rotating": {k: _fig(v) for k, v in sorted(e.rotating.items())},
                       "crank_parts": {k: _fig(v) for k, v in sorted(e.crank_parts.items())}},
            "webs": webs}


def _digest(fields: dict) -> str:
    return hashlib.sha256(json.dumps(fields, sort_keys=True, separators=(",", ":")).encode()).hexdigest()


def job_fingerprint(job) -> dict:
    """plan.json's "job_fingerprint": {"sha256": hex digest of the canonical JSON of `fields`, "fields"}."""
    fields = _canonical(job)
    return {"sha256": _digest(fields), "fields": fields}


def _show(value) -> str:
    if isinstance(value, float):
        return f"{value:g}"
    if isinstance(value, list):
        return f"{len(value)} feature(s)" if all(isinstance(v, dict) for v in value) else str(value)
    if value is None:
        return "none"
    return str(value)


def _differences(job_side, plan_side, key: str):
    """(key, in the job, in the plan) for each leaf that differs."""
    if isinstance(job_side, dict) and isinstance(plan_side, dict):
        for k in sorted(set(job_side) | set(plan_side)):
            yield from _differences(job_side.get(k), plan_side.get(k), f"{key}.{k}" if key else k)
    elif key == "webs" and isinstance(job_side, list) and isinstance(plan_side, list):
        names_job = [w.get("name") for w in job_side]
        names_plan = [w.get("name") for w in plan_side if isinstance(w, dict)]
        if names_job != names_plan:
            yield ("webs", ", ".join(map(str, names_job)), ", ".join(map(str, names_plan)))
            return
        for a, b in zip(job_side, plan_side):
            yield from _differences(a, b, f"web {a['name']}")
    elif key.endswith(".features") and isinstance(job_side, list) and isinstance(plan_side, list) \
            and len(job_side) == len(plan_side):
        for i, (a, b) in enumerate(zip(job_side, plan_side)):
            yield from _differences(a, b, f"{key}[{i}]")
    elif job_side != plan_side:
        yield (key.replace(".outline_sha256", ".outline (file contents)"), job_side, plan_side)


def check_plan_belongs(job, doc: dict, *, where: str, accept_other: bool) -> tuple[str, list[str]]:
    """Check that the plan.json document `doc` was made for `job`.

    Returns (how it was checked, for the trim record; warning lines).  Raises BadInput naming the
    first thing that differs unless `accept_other` (--accept-other-plan).
    """
    mine = job_fingerprint(job)
    theirs = doc.get("job_fingerprint")
    if theirs is None:
        return ("not checked: the plan has no job_fingerprint",
                [f"{where}: has no job_fingerprint (written by a geomgen before it recorded one), so it cannot "
                 "be checked to belong to this job; make sure it does"])
    if isinstance(theirs, dict) and theirs.get("sha256") == mine["sha256"]:
        return ("matches the job", [])
    fields = theirs.get("fields") if isinstance(theirs, dict) else None
    diffs = list(_differences(mine["fields"], fields if isinstance(fields, dict) else {}, ""))
    if diffs:
        key, a, b = diffs[0]
        what = f"{key}: {_show(a)} in the job, {_show(b)} in {where}"
        if len(diffs) > 1:
            what += f" (and {len(diffs) - 1} more difference{'s' if len(diffs) > 2 else ''})"
    else:
        what = "its job_fingerprint does not match this job's"
    if not accept_other:
        raise BadInput(f"{where} was made for another job: {what}; give the folder of this job's plan, or add "
                       "--accept-other-plan to trim from it anyway")
    return (f"made for another job ({what}); used with --accept-other-plan",
            [f"{where} was made for another job ({what}); trimming from it as --accept-other-plan asks"])
