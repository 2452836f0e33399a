"""The command line: `geomgen COMMAND ...` (also `python -m geomgen`).

argparse and printing over geomgen.api: each command checks its --out folder
before any work, loads the job, calls the API, writes the result whole and
prints the warnings (`geomgen: warning: ...` on stderr) and a summary.  Errors
the user can fix are `GeomgenError`s: one line on stderr, the error's exit
code, nothing written.  The CAD kernel is imported only by the commands that
build solids (and by inspect of a STEP or STL).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

from . import __version__, api
from .errors import BadInput, GeomgenError, warn_all
from .output import Terminated, check_target, staged, write_files


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line and exit 2, as for every other bad input
        help_cmd = "geomgen --help" if " " not in self.prog else f"geomgen {self.prog.split()[-1]} --help"
        self.exit(2, f"geomgen: {message} (see '{help_cmd}')\n")


def _add_out(p, required=True):
    p.add_argument("--out", required=required, metavar="DIR", help="folder for the results (created)")
    p.add_argument("--force", action="store_true", help="replace DIR if it already holds files")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="geomgen", description="Crank-web balance study, correction geometry and verified solids.")
    parser.add_argument("--version", action="version", version=f"geomgen {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True

    p = sub.add_parser("study", help="balance study at max_rpm: masses, bob weight, target, shaking force, sweep")
    p.add_argument("job", metavar="JOB", help="job file (TOML)")
    _add_out(p)

    p = sub.add_parser("inspect", help="mass properties of a DXF outline, STEP or STL file, or of a job's webs")
    p.add_argument("file", metavar="FILE", help=".dxf (needs --thickness), .step/.stp, .stl, or a job .toml")
    p.add_argument("--thickness", help="web thickness for a DXF outline, mm or a unit string")
    group = p.add_mutually_exclusive_group()
    group.add_argument("--density", help="web material, g/cm^3 or a unit string (default: what a geomgen file "
                                         "says, else steel, 7.85)")
    group.add_argument("--material", help="web material by name, e.g. steel, cast-iron")
    group = p.add_mutually_exclusive_group()
    group.add_argument("--plug-density", help="every plug, g/cm^3 or a unit string (default: what a geomgen file "
                                              "says, else W-alloy-class-3)")
    group.add_argument("--plug-material", help="every plug by material name, e.g. W-alloy-class-2")
    p.add_argument("--units", choices=("mm", "in", "cm", "m"), help="unit of a unitless DXF or of an STL")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")

    for name, text in (("build", "the webs with the job's own features only: solids and plan.json"),
                       ("plan", "study + correction plan + solids + verification + shop sheets")):
        p = sub.add_parser(name, help=text)
        p.add_argument("job", metavar="JOB", help="job file (TOML)")
        _add_out(p)

    p = sub.add_parser("trim", help="take off an unbalance measured on the assembled crank with its bob weight")
    p.add_argument("job", metavar="JOB", help="job file (TOML)")
    p.add_argument("--from", dest="from_dir", required=True, metavar="DIR", help="the earlier plan or build folder")
    p.add_argument("--unbalance", required=True, metavar="U",
                   help="measured unbalance, g*mm or a unit string (\"0.5 g*in\"), or mass at a radius "
                        "(\"0.8 g at 55 mm\")")
    p.add_argument("--angle", required=True, metavar="A",
                   help="heavy spot as the balancing machine reads it: deg from the crankpin, measured in the "
                        "direction of rotation ([engine] rotation)")
    p.add_argument("--against-rotation", action="store_true",
                   help="the --angle reading was taken against the direction of rotation")
    p.add_argument("--web", metavar="NAME", help="take it all off this web (default: shared between both)")
    p.add_argument("--accept-other-plan", action="store_true",
                   help="trim from a --from plan made for a job that differs from JOB (named in a warning)")
    _add_out(p)
    return parser


def _cmd_study(args) -> int:
    from .study import summary_lines

    check_target(args.out, force=args.force)
    job = _load(args)
    result = api.study(job)
    written = api.write_study(result, args.out, force=args.force)
    print("\n".join(summary_lines(result)))
    print(f"wrote {', '.join(written)} to {args.out}")
    return 0


def _cmd_inspect(args) -> int:
    found = api.inspect(Path(args.file), thickness=args.thickness, density=args.density, material=args.material,
                        units=args.units, plug_density=args.plug_density, plug_material=args.plug_material)
    if args.json:
        print(json.dumps(found.document, indent=2, sort_keys=True))
    else:
        print("\n".join(found.lines))
    return 0


def _cmd_build(args) -> int:
    check_target(args.out, force=args.force)
    job = _load(args)
    return _finish(args, api.build(job))


def _cmd_plan(args) -> int:
    check_target(args.out, force=args.force)
    job = _load(args)
    return _finish(args, api.plan(job))


def _cmd_trim(args) -> int:
    check_target(args.out, force=args.force)
    if Path(args.out).resolve() == Path(args.from_dir).resolve():
        raise BadInput("--out: must differ from --from (the earlier plan is kept as it is)")
    job = _load(args)
    plan = api.trim(job, previous=args.from_dir, unbalance=args.unbalance, angle=args.angle,
                    against_rotation=args.against_rotation, web=args.web,
                    accept_other_plan=args.accept_other_plan)
    return _finish(args, plan)


def _load(args):
    """The job, its warnings printed at once (before the long part of the work)."""
    from . import kernel_child

    job = api.load_job(args.job)
    if any(getattr(w, "model", None) for w in job.webs):
        kernel_child.release()        # a 3D model web is planned with the kernel in this process
    warn_all(job.warnings)
    return job


def _finish(args, plan) -> int:
    """Solids, checks and files of a build, plan or trim; then the new warnings and the summary."""
    # the staging folder is open while the solids are built (the long part), so that SIGTERM or a
    # failure there removes it as it would during the writing itself
    with staged(args.out, force=args.force) as stage:
        verified = plan.verify()
        write_files(stage, dict(verified.files))
    written = sorted(verified.files)
    warn_all(line for line in verified.warnings if line not in plan.job.warnings)
    for line in verified.summary_lines():
        print(line)
    print(f"wrote {len(written)} files to {args.out}: {', '.join(written)}")
    return 0


COMMANDS = {"study": _cmd_study, "inspect": _cmd_inspect, "build": _cmd_build, "plan": _cmd_plan,
            "trim": _cmd_trim}


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return COMMANDS[args.command](args)
    except GeomgenError as exc:
        print(f"geomgen: {exc}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("geomgen: interrupted; nothing was written", file=sys.stderr)
        return 130
    except Terminated:
        print("geomgen: terminated (SIGTERM); nothing was written", file=sys.stderr)
        return 128 + 15


#: the commands whose solids the console entry's child process builds (geomgen.kernel_child)
KERNEL_COMMANDS = ("plan", "build", "trim")


def run() -> None:
    """The console entry (`geomgen`, `python -m geomgen`): `main`, then leave at once with its exit code.

    By then every file is written and closed and the helper process has its end of input.  What is
    skipped is the interpreter's own tear-down of the CAD kernel's modules and objects, which takes
    close to a second after a plan and changes nothing the user gets.  An exception `main` does not
    map to an exit code propagates as usual, with its traceback."""
    from . import kernel_child

    if len(sys.argv) > 1 and sys.argv[1] in KERNEL_COMMANDS:
        # numpy, shapely and geomgen's own maths are loaded once, here, before the fork: the child (and the
        # mesh helper it forks in turn) finds them in memory and goes straight to its own libraries
        from . import pipeline, verify  # noqa: F401

        kernel_child.start()          # the kernel loads in a child process while this one plans
    try:
        code = main()
    finally:
        kernel_child.release()
    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except (OSError, ValueError):   # a closed pipe (`geomgen plan ... | head`): nothing more to say
        pass
    os._exit(code)


__all__ = ["main", "run", "build_parser", "BadInput"]
