"""The section of a model web along its Y axis: the thickness profile and each feature's depth.

The profile is found on the solid itself: vertical lines at x = 0, every PROFILE_STEP_MM along Y, cut by
the model's faces (OpenCascade IntCurvesFace_ShapeIntersector), give the material's z intervals.  Each face
feature is drawn as its cut projected on the Y-Z plane (from its entry face to its floor or drill tip, its
width its extent along Y); one that does not cross x = 0 is drawn dashed.  It is drawn as plain SVG at equal
aspect (geomgen.svgdraw); the same plan gives the same SVG bytes.
"""

from __future__ import annotations

import numpy as np

from . import svgdraw

#: spacing of the vertical lines cast through the model, mm
PROFILE_STEP_MM = 0.25


def profile(section, x: float = 0.0) -> tuple[np.ndarray, list[list[tuple[float, float]]]]:
    """(y values, for each the material's (z_low, z_high) intervals along the vertical line at (x, y))."""
    from OCP.gp import gp_Dir, gp_Lin, gp_Pnt
    from OCP.IntCurvesFace import IntCurvesFace_ShapeIntersector

    inter = IntCurvesFace_ShapeIntersector()
    inter.Load(section.model.shape, 1e-7)
    r = section.rim_radius_max
    ys = np.arange(-r, r + 1e-9, PROFILE_STEP_MM)
    out = []
    for y in ys:
        inter.Perform(gp_Lin(gp_Pnt(x, float(y), -1.0), gp_Dir(0, 0, 1)), -1e9, 1e9)
        zs = sorted({round(inter.Pnt(i).Z(), 9) for i in range(1, inter.NbPnt() + 1)})
        out.append([(zs[i], zs[i + 1]) for i in range(0, len(zs) - 1, 2)])
    return ys, out


MATERIAL = "#c9d3dc"
CUT = "#b8322a"
#: the figure's width, px (the report shows it about this wide)
WIDTH = 1000.0


def section_svg(work, *, title: str) -> bytes:
    """The section along Y of one model web (a pipeline.WebWork whose section is a model) as SVG bytes."""
    section = work.section
    ys, spans = profile(section)
    layers = []           # per k: the k-th material interval's (lo, hi) along y, NaN where there is none
    for k in range(max((len(s) for s in spans), default=0)):
        lo = np.array([s[k][0] if len(s) > k else np.nan for s in spans])
        hi = np.array([s[k][1] if len(s) > k else np.nan for s in spans])
        layers.append((lo, hi))
    # features that project onto the same rectangle (a mirrored pair) share one outline and one label
    drawn: dict[tuple, list[int]] = {}
    for number, f in enumerate(work.plan.features, start=len(work.existing) + 1):
        if f.opens_rim:
            continue
        z0, z1 = section.column(f)
        lo, hi = f.z_range(z1 - z0)
        box = f.footprint().polygon(0.05).bounds      # (xmin, ymin, xmax, ymax)
        key = (round(box[1], 3), round(box[3], 3), round(z0 + lo, 3), round(z0 + hi, 3), box[0] <= 0.0 <= box[2])
        drawn.setdefault(key, []).append(number)
    pts = [np.column_stack([ys, z]) for lo, hi in layers for z in (lo, hi)]
    pts += [np.array([[y0, lo], [y1, hi]]) for (y0, y1, lo, hi, _), _n in drawn.items()]
    lim = svgdraw.bounds(*pts) or ((-1.0, 1.0), (0.0, 1.0))
    xlim = svgdraw.widen(lim[0], 0.02)
    ylim = svgdraw.widen(lim[1], 0.08, at_least=1.0)
    fig = svgdraw.Figure(WIDTH, 400.0)
    width = WIDTH - 75.0 - 30.0
    y = fig.wrapped(75.0 + 0.5 * width, 22, title + ": section at x = 0; cuts projected on it (dashed: not "
                    "crossing x = 0)", width=width, size=13, anchor="middle")
    top = y + 10
    # the panel as tall as the data at equal aspect (at least 150 px, so the ticks have room)
    height = min(420.0, max(150.0, width * (ylim[1] - ylim[0]) / (xlim[1] - xlim[0])))
    panel = fig.panel((75.0, top, width, height), xlim, ylim, xlabel="y along the web, mm (crankpin +Y)",
                      ylabel="z, mm (inner face 0)", min_tick_px=40.0)
    for lo, hi in layers:
        for a, b in svgdraw.stretches(np.isfinite(lo) & np.isfinite(hi)):   # where the layer is present
            ring = np.vstack([np.column_stack([ys[a:b], hi[a:b]]), np.column_stack([ys[a:b], lo[a:b]])[::-1]])
            fig.polygon(panel, ring, fill=MATERIAL, stroke=None, cls="material")
        fig.path(panel, ys, hi, stroke="#44515e", width=1.1, cls="outline")
        fig.path(panel, ys, lo, stroke="#44515e", width=1.1, cls="outline")
    for (y0, y1, lo, hi, on_axis), numbers in drawn.items():
        rect = np.array([[y0, lo], [y1, lo], [y1, hi], [y0, hi]])
        fig.polygon(panel, rect, fill="none", stroke=CUT, width=1.3, dash=None if on_axis else "5 3", cls="cut")
        fig.label(panel, 0.5 * (y0 + y1), hi, ", ".join(map(str, numbers)), dy=4, size=11, anchor="middle",
                  colour=CUT)
    entries = [("web material (x = 0)", {"fill": MATERIAL, "stroke": "#44515e"}),
               ("a new feature's cut, crossing x = 0", {"stroke": CUT, "width": 1.3}),
               ("a new feature's cut projected (not crossing x = 0)", {"stroke": CUT, "width": 1.3, "dash": "5 3"})]
    legend_top = top + height + 48
    fig.height = legend_top + fig.legend(75.0, legend_top, entries, width=width) + 12
    return fig.to_bytes()
