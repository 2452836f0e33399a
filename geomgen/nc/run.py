"""Every NC program of a plan, checked and drawn: what shop.render adds to a plan's or a trim's files."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class ProgramResult:
    """One program after its check: the program, what the check found, its back-plot (SVG bytes)."""

    program: object
    checked: object
    backplot_svg: bytes


@dataclass(frozen=True)
class NCResult:
    """files : {file name: bytes} of the programs;  programs : ProgramResult per program, in order;
    notes : features no program cuts."""

    files: dict = field(default_factory=dict)
    programs: tuple = ()
    notes: tuple = ()


def nc_programs(*, job, webs, draw: bool = True) -> NCResult:
    """Write, read back, simulate and check every program of the plan's new work (VerificationFailed, exit 4,
    if one disagrees with the plan); with `draw`, its back-plot too."""
    from .check import check
    from .program import programs

    progs, notes = programs(job, webs)
    results = []
    for p in progs:
        checked = check(p)
        picture = b""
        if draw:
            from .backplot import svg

            picture = svg(p, checked)
        results.append(ProgramResult(p, checked, picture))
    return NCResult(files={p.name: p.text.encode("ascii") for p in progs}, programs=tuple(results),
                    notes=tuple(notes))
