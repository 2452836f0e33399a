"""The command line: `geomgen COMMAND ...` (also `python -m geomgen`).

Each command is a thin function: read the inputs, call the pure stages, write
the outputs whole through `output.staged`.  Errors the user can fix are
`GeomgenError`s: one line on stderr, the error's exit code, nothing written.
The CAD kernel is imported only by the commands that build solids.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import __version__
from .errors import BadInput, GeomgenError, warn_all


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
    group.add_argument("--density", help="g/cm^3 or a unit string (default: steel, 7.85)")
    group.add_argument("--material", help="a material name, e.g. steel, W-alloy-class-3")
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
                   help="measured unbalance, g*mm or a unit string (\"0.5 g*in\"), or mass at a radius (\"0.8 g at 55 mm\")")
    p.add_argument("--angle", required=True, metavar="A",
                   help="heavy spot as the balancing machine reads it: deg from the crankpin, measured in the "
                        "direction of rotation ([engine] rotation)")
    p.add_argument("--against-rotation", action="store_true",
                   help="the --angle reading was taken against the direction of rotation")
    p.add_argument("--web", metavar="NAME", help="take it all off this web (default: shared between both)")
    _add_out(p)
    return parser


def _cmd_study(args) -> int:
    from . import job as jobmod
    from . import study
    from .output import check_target, staged, write_files

    check_target(args.out, force=args.force)
    job = jobmod.load(args.job)
    warn_all(job.warnings)
    result = study.study_of(job)
    files = study.render(result)
    with staged(args.out, force=args.force) as stage:
        write_files(stage, files)
    print("\n".join(study.summary_lines(result)))
    print(f"wrote {', '.join(sorted(files))} to {args.out}")
    return 0


def _cmd_inspect(args) -> int:
    from .inspect import inspect_file

    report = inspect_file(Path(args.file), thickness=args.thickness, density=args.density,
                          material_name=args.material, units=args.units)
    if args.json:
        print(json.dumps(report["json"], indent=2, sort_keys=True))
    else:
        print("\n".join(report["lines"]))
    return 0


def _cmd_build(args) -> int:
    from .pipeline import run_build

    return run_build(args)


def _cmd_plan(args) -> int:
    from .pipeline import run_plan

    return run_plan(args)


def _cmd_trim(args) -> int:
    from .pipeline import run_trim

    return run_trim(args)


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


__all__ = ["main", "build_parser", "BadInput"]
