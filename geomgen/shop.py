"""The outputs a person reads: operations.csv, drawing.dxf and report.html.

The pipeline calls `render` after the solids are verified; each file is made
by its own module from the job, the plan.json document and the planned webs.
"""

from __future__ import annotations


def render(*, job, doc: dict, webs, study: dict | None = None, study_svg: bytes | None = None) -> dict[str, bytes]:
    """{file name: bytes} for operations.csv, drawing.dxf, report.html and the NC programs (web-*.nc).

    job : geomgen.job.Job;  doc : the plan.json dict (pipeline.plan_document);
    webs : list of pipeline.WebWork;  study : the full study.study() result
    (its figure goes in the report); when it is not given it is worked out
    again from the job (pure numpy, a few milliseconds).  study_svg : the study
    figure already drawn for study.svg, so the report does not draw it again.
    """
    from .drawing import drawing_dxf
    from .nc.run import nc_programs
    from .report import report_html
    from .sheet import operations_csv

    if study is None:
        from .study import study_of

        study = study_of(job)
    from . import sidecar
    from .nc.run import backplot_requests, with_backplots

    side = sidecar.active()
    if side is not None and doc.get("balance_factor_band") is not None:
        from .band_report import band_request

        side.prefetch(band_request(doc))    # the helper draws it while this process goes on
    # the NC programs of the new work, each read back, simulated and checked (exit 4 if one disagrees)
    nc = nc_programs(job=job, webs=webs, draw=False)
    drawn = all(r.backplot_svg for r in nc.programs)     # ready, drawn, when the plan prepared them
    if side is not None and not drawn:
        for request in backplot_requests(nc.programs):
            side.prefetch(request)
    sheet = operations_csv(job=job, doc=doc, webs=webs)
    drawing = drawing_dxf(job=job, doc=doc, webs=webs)
    if not drawn:
        import dataclasses

        nc = dataclasses.replace(nc, programs=tuple(with_backplots(nc.programs)))
    return {
        "operations.csv": sheet,
        "drawing.dxf": drawing,
        "report.html": report_html(job=job, doc=doc, webs=webs, study=study, study_svg=study_svg, nc=nc),
        **nc.files,
    }
