"""geomgen from Python: the same work as the command line, as functions that return results.

    import geomgen

    job = geomgen.load_job("samples/heavier-piston.toml")
    plan = geomgen.plan(job)                 # maths only: features, predicted mass properties
    done = plan.verify()                     # solids, STEP/STL, exact and mesh checks, every file in memory
    done.write("out")                        # whole or nothing; never over a non-empty folder without force

Units as everywhere in geomgen: mm, g, g/cm^3, rpm, deg, g*mm (unbalance),
g*mm^2 (inertia).  Web figures are in the web's own frame (crank axis Z, pin
on +Y); crank figures in the crank frame (web a's).

Nothing here prints.  Warnings are on the results (`Plan.warnings`,
`Verified.warnings`, `job.warnings`).  Errors are geomgen.errors' types, the
ones the command line turns into its exit codes: BadInput (2), Infeasible (3),
VerificationFailed (4).  Error messages name the command-line option a value
would come from (--unbalance, --angle, --web, --from).

`import geomgen` stays light: the CAD kernel is imported by `Plan.verify`
and by `inspect` of a STEP or STL file, pygal only to draw a chart.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from types import MappingProxyType
from typing import TYPE_CHECKING, Any, Union

from .errors import BadInput

if TYPE_CHECKING:
    from .job import Job
    from .massprops import MassProps
    from .pipeline import WebWork

#: a file or folder: a str or a path-like object
PathLike = Union[str, "os.PathLike[str]"]


# ------------------------------------------------------------------ results
@dataclass(frozen=True)
class Figures:
    """Mass properties as a file or a report gives them (plain numbers, web frame).

    mass_g : g;  volume_mm3 : mm^3;  com_mm : centre of mass (x, y, z), mm;
    unbalance_gmm : first moment about the crank axis (x, y), g*mm;
    inertia_z_gmm2 : moment of inertia about Z through the origin, g*mm^2.
    """

    mass_g: float
    volume_mm3: float
    com_mm: tuple[float, float, float]
    unbalance_gmm: tuple[float, float]
    inertia_z_gmm2: float

    @classmethod
    def from_summary(cls, s: Mapping[str, Any]) -> Figures:
        """From a MassProps.summary() dict (or an inspect --json document)."""
        return cls(mass_g=float(s["mass_g"]), volume_mm3=float(s["volume_mm3"]),
                   com_mm=tuple(float(v) for v in s["com_mm"]),
                   unbalance_gmm=tuple(float(v) for v in s["unbalance_gmm"]),
                   inertia_z_gmm2=float(s["inertia_z_gmm2"]))


@dataclass(frozen=True)
class PlannedWeb:
    """One web of a plan (web frame).

    method : "holes" | "pockets" | "plugs" | "none" (build, or nothing to do);
    existing : the features the web had before this run (the job's, or an earlier plan's for a trim);
    features : the new features, in machining order;  before / predicted : the web's MassProps with
    its existing features / after the new ones (analytic: g, mm, g*mm, g*mm^2);
    target_gmm : the unbalance it must carry (x, y), g*mm;  tolerance_gmm : the allowed magnitude of
    the deviation, g*mm;  deviation_gmm : predicted minus target (x, y), g*mm;  why / binding : why the
    plan is what it is, and the constraint that limits it;  considered : one line per method tried.
    """

    name: str
    method: str
    existing: tuple
    features: tuple
    before: MassProps
    predicted: MassProps
    target_gmm: tuple[float, float]
    tolerance_gmm: float
    deviation_gmm: tuple[float, float]
    within_tolerance: bool
    why: str
    binding: str
    considered: tuple[str, ...]
    #: the pipeline's record of the web (job spec, section, plan) that the sheets and solids read
    work: WebWork = field(repr=False, compare=False)

    @property
    def all_features(self) -> tuple:
        """The existing features, then the new ones: what the finished web carries."""
        return tuple(self.existing) + tuple(self.features)

    @classmethod
    def of(cls, work: WebWork) -> PlannedWeb:
        p = work.plan
        return cls(name=work.spec.name, method=p.method, existing=tuple(work.existing), features=tuple(p.features),
                   before=p.before, predicted=p.predicted, target_gmm=tuple(float(v) for v in p.target),
                   tolerance_gmm=float(p.tolerance), deviation_gmm=tuple(float(v) for v in p.deviation),
                   within_tolerance=bool(p.within_tolerance), why=p.why, binding=p.binding,
                   considered=tuple(p.considered), work=work)


@dataclass(frozen=True, eq=False)
class Plan:
    """A plan, a build or a trim worked out in maths only (no CAD kernel yet).

    job : the job;  command : "plan" | "build" | "trim";  webs : one PlannedWeb per web, in the job's
    order;  study : the study.json document (None for a build);  trim : what was measured and where it
    came from (None unless a trim).  `document` is plan.json as the prediction alone gives it (the crank
    figures from the predicted properties); `verify()` builds the solids and gives the real one.
    """

    job: Job
    command: str
    webs: tuple[PlannedWeb, ...]
    study: Mapping[str, Any] | None = None
    trim: Mapping[str, Any] | None = None

    @cached_property
    def figures(self) -> dict:
        """The plan document at full precision (what the summary reads), from the prediction."""
        from .plan_json import plan_document

        return plan_document(self.job, self.command, self._works, None, self._study_dict, self._trim_dict,
                             found_band=self._band)

    @cached_property
    def _band(self) -> dict | None:
        """The band on the balance factor (uncertainty.band), worked out once: it reads the prediction
        only, so the document from the prediction and the verified one share it."""
        from .plan_json import BAND_COMMANDS
        from .uncertainty import band

        return band(self.job, self._works) if self.command in BAND_COMMANDS else None

    @cached_property
    def document(self) -> dict:
        """plan.json's dict from the prediction alone (figures rounded as plan.json writes them)."""
        from .plan_json import jsonable

        return jsonable(self.figures)

    @property
    def crank(self) -> dict:
        """The crank's figures (crank frame): unbalance, target and deviation (g*mm), balance factor asked
        and achieved, the couple, the bob weight (g), the ISO 21940-11 permissible residual."""
        return self.document["crank"]

    @property
    def warnings(self) -> tuple[str, ...]:
        """The job's warnings and the crank's couple warnings (the solids' wall warnings come with verify)."""
        return tuple(self.document["warnings"])

    def web(self, name: str) -> PlannedWeb:
        """The web called `name`."""
        for w in self.webs:
            if w.name == name:
                return w
        raise BadInput(f"web: {name!r} is not a web of this job; its webs are {', '.join(w.name for w in self.webs)}")

    def summary_lines(self) -> list[str]:
        """The lines the command line prints, from the prediction."""
        from .summary import summary_lines

        return summary_lines(self.figures)

    def verify(self) -> Verified:
        """Build the solids, export STEP/STL, compare the exact (OpenCascade) and mesh (trimesh) properties
        with the prediction, and render every file in memory: plan.json, web-*.step, web-*.stl,
        crank.step, and for a plan or trim also operations.csv, drawing.dxf, report.html, study.json/svg.

        Raises VerificationFailed if a solid and its prediction are apart, BadInput if a feature
        breaks a wall the solid checks.
        """
        from . import kernel_child, sidecar
        from .pipeline import render_files, solid_files
        from .plan_json import jsonable

        works = self._works
        # the command line's child process has loaded the kernel while this one planned: it builds the
        # solids; the pictures are then drawn here (tenths of a second, no helper needed)
        child = kernel_child.take()
        done = child.solid_files(self.job, works, meanwhile=self._get_ready) if child is not None else None
        if done is not None:
            verified, files = done
            figures, rendered = render_files(self.job, self.command, works, verified,
                                             study_result=self._study_dict, trim=self._trim_dict,
                                             found_band=self._band, with_shop=self.command != "build")
        else:
            # trimesh is imported in a second process while this one builds the solids
            with sidecar.started() as side:
                if side is not None and self._study_dict is not None:
                    side.prefetch({"op": "svg", "study": self._study_dict})   # drawn there meanwhile
                verified, files = solid_files(self.job, works)
                figures, rendered = render_files(self.job, self.command, works, verified,
                                                 study_result=self._study_dict, trim=self._trim_dict,
                                                 found_band=self._band,
                                                 with_shop=self.command != "build")
        document = jsonable(figures)
        files.update(rendered)
        webs = tuple(VerifiedWeb(name=w.name, predicted=w.predicted, exact=v["exact_massprops"],
                                 mesh=Figures.from_summary(v["mesh"]), agreement=v["comparison"],
                                 files=tuple(v["files"]), wall_warnings=tuple(v["wall_warnings"]))
                     for w, v in zip(self.webs, verified))
        return Verified(plan=self, webs=webs, document=document, figures=figures,
                        files=MappingProxyType(dict(sorted(files.items()))), warnings=tuple(document["warnings"]))

    def _get_ready(self) -> None:
        """What the files need besides the solids, done while the command line's child builds them: the
        drawing's library loaded, the study and band charts drawn (plots remembers them), the NC programs
        written, checked and drawn (nc.run keeps them for the shop files)."""
        import ezdxf  # noqa: F401

        from . import plots

        if self._study_dict is not None:
            plots.study_svg(self._study_dict)
        if self.command != "build":
            if "balance_factor_band" in self.figures:
                from .band_report import band_figure_svg

                band_figure_svg(self.figures)
            from .nc.run import prepare

            prepare(job=self.job, webs=self._works)

    @property
    def _works(self) -> list:
        return [w.work for w in self.webs]

    @property
    def _study_dict(self) -> dict | None:
        return dict(self.study) if self.study is not None else None

    @property
    def _trim_dict(self) -> dict | None:
        return dict(self.trim) if self.trim is not None else None


@dataclass(frozen=True)
class VerifiedWeb:
    """One web's solid against its prediction (web frame).

    predicted : analytic MassProps;  exact : OpenCascade's B-rep MassProps of the built solid (body and
    plugs, each at its density);  mesh : trimesh's figures from the exported STL;  agreement : the
    comparison as plan.json's "agreement" shows it;  files : this web's file names;
    wall_warnings : thin walls of the web's existing features.
    """

    name: str
    predicted: MassProps
    exact: MassProps
    mesh: Figures
    agreement: Mapping[str, Any]
    files: tuple[str, ...]
    wall_warnings: tuple[str, ...]


@dataclass(frozen=True, eq=False)
class Verified:
    """A plan with its solids built, exported and checked; every file rendered, nothing written yet.

    plan : the Plan it came from;  webs : one VerifiedWeb per web;  document : plan.json's dict as it
    will be written;  figures : the same at full precision (the summary reads it);
    files : {file name: bytes} of every file of the run;  warnings : the job's, the walls' and the
    couple's warnings (plan.json's "warnings").
    """

    plan: Plan
    webs: tuple[VerifiedWeb, ...]
    document: Mapping[str, Any]
    figures: Mapping[str, Any] = field(repr=False)
    files: Mapping[str, bytes] = field(repr=False)
    warnings: tuple[str, ...] = ()

    def summary_lines(self) -> list[str]:
        """The lines the command line prints after a build, plan or trim."""
        from .summary import summary_lines

        return summary_lines(self.figures)

    def write(self, out: PathLike, *, force: bool = False) -> list[str]:
        """Write every file into the folder `out`, whole or nothing (through a staging folder beside it).

        An existing non-empty `out` is refused (BadInput) unless `force`, which replaces it whole.
        Returns the names written, sorted.
        """
        from .output import staged, write_files

        with staged(out, force=force) as stage:
            write_files(stage, dict(self.files))
        return sorted(self.files)


@dataclass(frozen=True)
class Inspection:
    """What `inspect` found in a file.

    kind : "dxf" | "step" | "stl" | "job";  document : the dict `geomgen inspect --json` prints;
    lines : the plain lines it prints without --json;  figures : the body's mass properties (web
    frame, mm, g), None for a job (its webs are in document["webs"]).
    """

    kind: str
    document: Mapping[str, Any]
    lines: tuple[str, ...]
    figures: Figures | None


# ------------------------------------------------------------------ functions
def load_job(source: PathLike | Mapping[str, Any], *, base: PathLike | None = None) -> Job:
    """A validated Job from a TOML file or from a dict as parsed TOML.

    Relative paths in it (a DXF outline) resolve against `base`; by default the file's folder, or the
    working folder for a dict.  Raises BadInput naming the key or the file.
    """
    from . import job as jobmod

    base_path = Path(base) if base is not None else None
    if isinstance(source, Mapping):
        return jobmod.from_dict(dict(source), base=base_path)
    if isinstance(source, (str, os.PathLike)):
        return jobmod.load(source, base=base_path)
    raise BadInput(f"load_job: expected a job file's path or a dict as parsed TOML, got {type(source).__name__}")


def study(job: Job | PathLike | Mapping[str, Any]) -> dict:
    """The balance study at max_rpm: the study.json document (masses, bob weight, target per web,
    shaking force over a revolution in N, balance-factor sweep, ISO 21940-11 figure).  No CAD."""
    from .study import study_of

    return study_of(_as_job(job))


def write_study(result: Mapping[str, Any], out: PathLike, *, force: bool = False) -> list[str]:
    """Write study.json and study.svg of a `study` result into `out`, whole or nothing (as
    `Verified.write`).  Returns the names written."""
    from .output import staged, write_files
    from .study import render

    files = render(dict(result))
    with staged(out, force=force) as stage:
        write_files(stage, files)
    return sorted(files)


def plan(job: Job | PathLike | Mapping[str, Any]) -> Plan:
    """Plan the correction of every web (maths only): the job's [correction] kind, its walls and
    limits, to each web's share of the target.  Raises Infeasible when a web's target is out of reach,
    naming what can be reached and the constraint that binds."""
    from .pipeline import plan_webs
    from .study import study_of

    job = _as_job(job)
    works = plan_webs(job)
    return Plan(job=job, command="plan", webs=tuple(PlannedWeb.of(w) for w in works),
                study=MappingProxyType(study_of(job)))


def build(job: Job | PathLike | Mapping[str, Any]) -> Plan:
    """The webs with the job's own features only (nothing planned): their predicted properties now,
    their solids with `verify()`."""
    from .pipeline import plan_webs

    job = _as_job(job)
    works = plan_webs(job, method="none")
    return Plan(job=job, command="build", webs=tuple(PlannedWeb.of(w) for w in works))


def trim(job: Job | PathLike | Mapping[str, Any], *, previous: PathLike | Plan | Verified,
         unbalance: float | str, angle: float | str, against_rotation: bool = False,
         web: str | None = None, accept_other_plan: bool = False) -> Plan:
    """A correction that takes off an unbalance measured on the assembled crank with its bob weight.

    previous : the folder of an earlier plan or build (its plan.json), or a Plan / Verified; its
        features are read as plan.json gives them, so both roads plan the same trim.
    unbalance : g*mm, or a unit string ("0.5 g*in"), or mass at a radius ("0.8 g at 55 mm").
    angle : the heavy spot from the crankpin as the balancing machine gives it, deg (or a unit
        string): in the direction of rotation ([engine] rotation), or against it with `against_rotation`.
    web : take it all off this web; default shared between the webs by their shares.
    accept_other_plan : trim from a plan whose job_fingerprint differs from this job's (else BadInput
        naming what differs); a plan written before the fingerprint existed is used with a warning.
    """
    from .pipeline import plan_webs
    from .study import study_of
    from .trimming import crank_frame_angle, measured_unbalance, trim_request, trim_targets
    from .units import to_internal

    job = _as_job(job)
    unbalance_gmm = measured_unbalance(unbalance)
    reading = to_internal(angle, "angle", "--angle")
    crank_deg = crank_frame_angle(reading, rotation=job.engine.rotation, against_rotation=against_rotation)
    existing, source, checked, warnings = _previous_features(job, previous, accept_other=accept_other_plan)
    changes = trim_request(job, unbalance_gmm=unbalance_gmm, angle_deg=crank_deg, web_name=web)
    targets, tolerances = trim_targets(job, existing=existing, changes=changes, unbalance_gmm=unbalance_gmm)
    works = plan_webs(job, existing=existing, targets=targets, tolerances=tolerances, lighten=0.0)
    record = {"measured_gmm": unbalance_gmm, "reading_deg": reading, "crank_frame_deg": crank_deg,
              "reading_direction": "against the rotation" if against_rotation else "in the direction of rotation",
              "from": source, "web": f"web {web}" if web else "both webs by their shares",
              "from_check": checked, "warnings": tuple(warnings)}
    return Plan(job=job, command="trim", webs=tuple(PlannedWeb.of(w) for w in works),
                study=MappingProxyType(study_of(job)), trim=MappingProxyType(record))


def inspect(path: PathLike, *, thickness: float | str | None = None, density: float | str | None = None,
            material: str | None = None, units: str | None = None, plug_density: float | str | None = None,
            plug_material: str | None = None) -> Inspection:
    """Mass properties of a web as a file holds it: a DXF outline (give `thickness`, mm or a unit
    string), a STEP (exact B-rep), an STL (mesh) or a job .toml (each web and its features).

    density : g/cm^3 or a unit string, or `material` by name, of the web material (default: what a
    geomgen file says, else steel);  plug_density / plug_material : the same for every plug (default:
    what the file says, else ASTM B777 class 3);  units : "mm" | "in" | "cm" | "m", for a unitless DXF
    or an STL.  A geomgen web STL with its web-<name>.json beside it is weighed whole, body and plugs.
    Raises BadInput for a file or option that does not fit.
    """
    from .inspect import inspect_file

    path = Path(path)
    report = inspect_file(path, thickness=thickness, density=density, material_name=material, units=units,
                          plug_density=plug_density, plug_material=plug_material)
    doc = report["json"]
    kinds = {".dxf": "dxf", ".step": "step", ".stp": "step", ".stl": "stl", ".toml": "job"}
    kind = kinds[path.suffix.lower()]
    return Inspection(kind=kind, document=doc, lines=tuple(report["lines"]),
                      figures=None if kind == "job" else Figures.from_summary(doc))


# ------------------------------------------------------------------ helpers
def _as_job(job) -> Job:
    from .job import Job

    return job if isinstance(job, Job) else load_job(job)


def _previous_features(job: Job, previous, *, accept_other: bool) -> tuple[dict, str, str, list[str]]:
    """({web name: features}, where they came from, how the plan was checked to be this job's,
    warnings) of an earlier plan or build."""
    from .plan_json import document_features, read_plan
    from .trimming import check_plan_belongs

    if isinstance(previous, (Plan, Verified)):
        plan_of = previous if isinstance(previous, Plan) else previous.plan
        name = f"the earlier {plan_of.command} of {plan_of.job.name}"
        doc, where, source = dict(previous.document), f"previous ({name})", f"{name} (in memory)"
    elif isinstance(previous, (str, os.PathLike)):
        doc, path = read_plan(Path(previous))
        where, source = f"--from {path}", str(previous)
    else:
        raise BadInput(f"--from: expected a folder, a Plan or a Verified, got {type(previous).__name__}")
    # the plan must be this job's before its features are read as this job's webs
    checked, warnings = check_plan_belongs(job, doc, where=where, accept_other=accept_other)
    features = document_features(job, doc, where=where, file_name="plan.json")
    return features, source, checked, warnings

__all__ = ["Figures", "Inspection", "Plan", "PlannedWeb", "Verified", "VerifiedWeb", "build", "inspect",
           "load_job", "plan", "study", "trim", "write_study"]
