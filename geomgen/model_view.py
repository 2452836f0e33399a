"""The section of a model web along its Y axis: the thickness profile and each feature's depth.

The profile is found on the solid itself: vertical lines at x = 0, every PROFILE_STEP_MM along Y, cut by
the model's faces (OpenCascade IntCurvesFace_ShapeIntersector), give the material's z intervals.  Each face
feature is drawn as its cut projected on the Y-Z plane (from its entry face to its floor or drill tip, its
width its extent along Y); one that does not cross x = 0 is drawn dashed.  Matplotlib draws it; the same plan
gives the same SVG bytes.
"""

from __future__ import annotations

import io

import numpy as np

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


def section_svg(work, *, title: str) -> bytes:
    """The section along Y of one model web (a pipeline.WebWork whose section is a model) as SVG bytes."""
    import matplotlib
    from matplotlib.figure import Figure
    from matplotlib.patches import Rectangle

    section = work.section
    ys, spans = profile(section)
    fig = Figure(figsize=(9.0, 3.2))
    ax = fig.add_subplot(1, 1, 1)
    for k in range(max((len(s) for s in spans), default=0)):
        lo = np.array([s[k][0] if len(s) > k else np.nan for s in spans])
        hi = np.array([s[k][1] if len(s) > k else np.nan for s in spans])
        ax.fill_between(ys, lo, hi, color="#c9d3dc", linewidth=0, label="web material (x = 0)" if k == 0 else None)
        ax.plot(ys, hi, color="#44515e", linewidth=0.8)
        ax.plot(ys, lo, color="#44515e", linewidth=0.8)
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
    for (y0, y1, lo, hi, on_axis), numbers in drawn.items():
        ax.add_patch(Rectangle((y0, lo), y1 - y0, hi - lo, fill=False, edgecolor="#b8322a",
                               linewidth=1.0, linestyle="-" if on_axis else "--"))
        ax.annotate(", ".join(map(str, numbers)), (0.5 * (y0 + y1), hi), textcoords="offset points",
                    xytext=(0, 3), ha="center", fontsize=8, color="#b8322a")
    ax.set_xlabel("y along the web, mm (crankpin +Y)")
    ax.set_ylabel("z, mm (inner face 0)")
    ax.set_title(title + ": section at x = 0; cuts projected on it (dashed: not crossing x = 0)", fontsize=9)
    ax.set_aspect("equal", adjustable="datalim")
    ax.grid(True, linewidth=0.3, color="#dddddd")
    fig.tight_layout()
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": "geomgen-section", "svg.fonttype": "none"}):
        fig.savefig(buf, format="svg", metadata={"Date": None})
    return buf.getvalue()
