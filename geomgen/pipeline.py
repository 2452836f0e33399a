"""The order of work for build, plan and trim.

Plan every web (pure maths: geomgen.webs, geomgen.planner), then build the
solids, export and verify them (the CAD kernel, imported here only inside the
functions that need it), then render every file of the run in memory:
plan.json (geomgen.plan_json), study.json/svg, operations.csv, drawing.dxf,
report.html.  Nothing here writes into the user's folder: geomgen.api's
`Verified.write` does, whole or nothing, through geomgen.output.staged.
"""

from __future__ import annotations

import tempfile
from dataclasses import dataclass
from pathlib import Path

# names that lived here before the split; the old spelling keeps working
from .crank import crank_figures, in_crank_frame, plug_density_range  # noqa: F401
from .plan_json import jsonable, plan_document, plan_json_bytes
from .planner import WebPlan, plan_web
from .safety import safety_figures  # noqa: F401
from .trimming import crank_frame_angle, heavy_spot_vector  # noqa: F401
from .webs import features_massprops, keep_out_of, limits_of, web_section


# ------------------------------------------------------------------ planning
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
        # a feature is placed on its web's section (a radial hole finds its rim)
        feats = tuple(f.on(section) for f in (existing[web.name] if existing is not None else web.features))
        target = targets[web.name] if targets else job.target_gmm(web)
        tol = tolerances[web.name] if tolerances else job.tolerance_gmm * web.share
        if method == "none":
            before = section.massprops() + features_massprops(feats, section)
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
                planner = plan_web if getattr(section, "model", None) is None else _plan_model
                plan = planner(name=web.name, section=section, existing=feats, target=target, tolerance=tol,
                                method=method or c.kind, limits=limits, plug_material=c.plug_material,
                                keep_out=keep_out_of(job, web), lighten=c.lighten if lighten is None else lighten)
        work = WebWork(web, section, feats, plan)
        out.append(work)
        done.append(work)
    return out


def _plan_model(**kw) -> WebPlan:
    from .plan_model import plan_model_web

    return plan_model_web(**kw)


# ------------------------------------------------------------------ solids
def build_and_verify(job, webs: list[WebWork], folder: Path) -> list[dict]:
    """Solids, STEP/STL, exact and mesh properties, compared with the prediction (exit 4 if apart).

    A web with the same section and features as one already built (the usual pair) reuses that
    solid, its verification and its mesh bytes; its STEP is written under its own name.
    """
    import dataclasses
    import shutil

    from .export import export_web, web_step_solids, write_crank_step, write_step
    from .solid import build_web, crank_assembly
    from .verify import verify_web

    out, solids, built = [], [], []
    for w in webs:
        twin = next((i for i, b in enumerate(built) if b.section == w.section
                     and b.all_features == w.all_features and b.existing == w.existing), None)
        if twin is not None:
            solid = dataclasses.replace(solids[twin], name=w.spec.name)
            stem_old, stem = f"web-{webs[twin].spec.name}", f"web-{w.spec.name}"
            write_step(web_step_solids(solid, body_material(w.spec)), folder / f"{stem}.step")
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
                               angular_tolerance=job.output.stl_angular_tolerance,
                               body_material=body_material(w.spec))
            v = verify_web(solid, w.plan.predicted, paths, tolerance=job.output.stl_tolerance)
            v["files"] = sorted(p.name for p in paths.values())
            v["wall_warnings"] = solid.wall_warnings
        v["solid"] = solid
        out.append(v)
        solids.append(solid)
        built.append(w)
    if job.output.crank_step and len(solids) == 2:
        write_crank_step(crank_assembly(solids[0], solids[1], gap_mm=job.output.crank_gap), folder / "crank.step")
    return out


def body_material(spec) -> str | None:
    """The name of a job web's material as the STEP and web-<name>.json give it; None for a web given
    as a density (its density alone is written)."""
    from .materials import MATERIALS

    return spec.material.name if spec.material.name in MATERIALS else None


def solid_files(job, webs: list[WebWork]) -> tuple[list[dict], dict[str, bytes]]:
    """`build_and_verify` in a private temporary folder: (one verification dict per web,
    {file name: bytes} of every STEP and STL, and each web's web-<name>.json, which says what they are
    made of).  The folder is gone when this returns."""
    from .export import sidecar_name, web_sidecar

    with tempfile.TemporaryDirectory(prefix="geomgen-solids-") as tmp:
        verified = build_and_verify(job, webs, Path(tmp))
        files = {p.name: p.read_bytes() for p in sorted(Path(tmp).iterdir())}
    for w, v in zip(webs, verified):
        solid = v.pop("solid")
        name = sidecar_name(w.spec.name)
        files[name] = web_sidecar(solid, body_material=body_material(w.spec), files=files)
        v["files"] = sorted([*v["files"], name])
    return verified, files


# ------------------------------------------------------------------ files
def render_files(job, command: str, webs: list[WebWork], verified: list[dict], *, study_result: dict | None,
                 trim: dict | None = None, with_shop: bool = True,
                 found_band: dict | None = None) -> tuple[dict, dict[str, bytes]]:
    """(the plan document at full precision, {file name: bytes}) for plan.json, study.json/svg (with a
    study) and, with `with_shop`, operations.csv, drawing.dxf and report.html.  plan.json holds
    `jsonable(doc)`: the figures rounded as plan_json writes them; the sheets read `doc` itself."""
    from . import shop
    from .study import render as study_files

    doc = plan_document(job, command, webs, verified, study_result, trim, found_band=found_band)
    files = {"plan.json": plan_json_bytes(jsonable(doc))}
    if study_result is not None:
        files.update(study_files(study_result))
    if with_shop:
        files.update(shop.render(job=job, doc=doc, webs=webs, study=study_result, study_svg=files.get("study.svg")))
    return doc, files
