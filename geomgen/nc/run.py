"""Every NC program of a plan, checked and drawn: what shop.render adds to a plan's or a trim's files."""

from __future__ import annotations

import dataclasses
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


#: programs worked out ahead for one (job, webs), drawn (`prepare`): a plan whose solids the command line's
#: child builds gets its programs ready while it waits, and `shop.render` takes them from here
_READY: list = []


def prepare(*, job, webs) -> None:
    """Work out and draw the programs of (job, webs) now; the next `nc_programs` of the very same objects
    answers with them (once)."""
    _READY[:] = [(job, list(webs), nc_programs(job=job, webs=webs, draw=True))]


def nc_programs(*, job, webs, draw: bool = True) -> NCResult:
    """Write, read back, simulate and check every program of the plan's new work (VerificationFailed, exit 4,
    if one disagrees with the plan); with `draw`, its back-plot too."""
    if _READY:
        (ready_job, ready_webs, ready), = _READY
        _READY.clear()
        if ready_job is job and len(ready_webs) == len(webs) and all(a is b for a, b in zip(ready_webs, webs)):
            return ready
    from .check import check
    from .program import programs

    progs, notes = programs(job, webs)
    results = []
    done: list[tuple] = []
    for p in progs:
        # the usual pair of webs gives two programs that differ only in the web's name: the same blocks in
        # the same order do the same thing, so the second reuses the first's check
        same = _neutral(p)
        checked = next((c for key, q, c in done if key == same and q.features == p.features
                        and q.section == p.section and q.face == p.face), None)
        if checked is None:
            checked = check(p)
            done.append((same, p, checked))
        results.append(ProgramResult(p, checked, b""))
    if draw:
        results = with_backplots(results)
    return NCResult(files={p.name: p.text.encode("ascii") for p in progs}, programs=tuple(results),
                    notes=tuple(notes))


def backplot_requests(results) -> list[dict]:
    """The sidecar requests that draw these programs' back-plots (sent ahead by `shop.render`)."""
    import base64
    import pickle

    return [{"op": "backplot", "pickle": base64.b64encode(pickle.dumps((r.program, r.checked))).decode()}
            for r in results]


def with_backplots(results) -> list:
    """The results with their back-plots drawn (by the plan's helper process when one runs)."""
    return [dataclasses.replace(r, backplot_svg=_backplot(r.program, r.checked, request))
            for r, request in zip(results, backplot_requests(results))]


def _backplot(p, checked, request: dict | None = None) -> bytes:
    """The back-plot's SVG: drawn by the plan's helper process when there is one (it draws while this
    process writes the sheet and the drawing; the program and its simulated moves cross the pipe pickled,
    and the helper runs the very same `backplot.svg`, so the bytes are the same), else here."""
    from .. import sidecar

    side = sidecar.active()
    if side is not None:
        answer = side.ask(request if request is not None else backplot_requests([ProgramResult(p, checked, b"")])[0])
        if answer is not None and isinstance(answer.get("svg"), str):
            return answer["svg"].encode("utf-8")
    from .backplot import svg

    return svg(p, checked)


def _neutral(p) -> str:
    """The program's text with its web's name taken out (comments and file name)."""
    return p.text.replace(f"web-{p.web}-", "web-*-").replace(f"web {p.web}", "web *")
