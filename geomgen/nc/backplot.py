"""The back-plot: what a program's simulated moves do, drawn over the face view (matplotlib, SVG).

Feeds are solid lines, one colour per tool; rapids are dashed grey.  A face program is drawn as the
machinist sees the face (x mirrored for the inner face); a rim program as the web's outline with the
holes' axes beside a side view of the set-up (X along the crank axis, Z up along the indexed hole).
"""

from __future__ import annotations

import io
import math

import numpy as np

from .geometry import face_loop

COLOURS = ("#b8322a", "#1f5f8b", "#2a7d4f", "#8a5a00", "#6b3fa0", "#00838f", "#c2185b", "#455a64")


def _tool_label(n, tool, units: str) -> str:
    d = tool.diameter if units == "mm" else tool.diameter / 25.4
    u = "mm" if units == "mm" else "in"
    return f"T{n} {tool.kind.replace('_', ' ')} {d:.4g} {u}"


def _polyline(moves, *, axes=(0, 1), rapid: bool, tool=None, scale: float = 1.0):
    """x, y arrays with NaN between moves, in the program's unit (mm times `scale`)."""
    xs, ys = [], []
    for mv in moves:
        if mv.rapid != rapid or (tool is not None and mv.tool != tool):
            continue
        if not all(map(math.isfinite, mv.start + mv.end)):
            continue
        if axes == (0, 1):
            pts = mv.xy(0.02)
        else:
            pts = np.array([[mv.start[axes[0]], mv.start[axes[1]]], [mv.end[axes[0]], mv.end[axes[1]]]])
        xs += list(pts[:, 0] * scale) + [np.nan]
        ys += list(pts[:, 1] * scale) + [np.nan]
    return np.array(xs), np.array(ys)


def _plunge_points(moves, tool, scale: float, axes=(0, 1)):
    """Where a tool feeds straight along Z (a drill, a reamer): its XY, once each."""
    pts = {(round(mv.end[axes[0]] * scale, 6), round(mv.end[axes[1]] * scale, 6)) for mv in moves
           if not mv.rapid and mv.tool == tool and all(map(math.isfinite, mv.start + mv.end))
           and math.dist(mv.start[:2], mv.end[:2]) < 1e-9 and axes == (0, 1)}
    return sorted(pts)


def _outline(ax, prog, face: str, scale: float) -> None:
    sec = prog.section
    view = face if face != "rim" else "outer"
    for loop, fill in [(sec.outer, "#e4e8ee")] + [(b, "#ffffff") for b in sec.bores]:
        pts = face_loop(loop, view).points(0.05) * scale
        ax.fill(pts[:, 0], pts[:, 1], facecolor=fill, edgecolor="#1d2733", lw=0.7, zorder=1)
    for n, f in prog.features:
        pts = face_loop(f.footprint(), view).points(0.05) * scale
        closed = np.vstack([pts, pts[:1]])
        ax.plot(closed[:, 0], closed[:, 1], color="#5b6673", lw=0.6, ls=":", zorder=2)
        tx, ty = f.tag_point()
        if view == "inner":
            tx = -tx
        ax.annotate(str(n), (tx * scale, ty * scale), xytext=(6, 6), textcoords="offset points", fontsize=7,
                    color="#1d2733", zorder=6)


def _paths(ax, prog, moves, scale: float, axes=(0, 1), legend: bool = True) -> None:
    xs, ys = _polyline(moves, axes=axes, rapid=True, scale=scale)
    ax.plot(xs, ys, color="#8a939c", lw=0.6, ls=(0, (3, 2)), label="rapid (G0)" if legend else None, zorder=3)
    for k, (n, tool) in enumerate(sorted(prog.tools.items())):
        colour = COLOURS[k % len(COLOURS)]
        xs, ys = _polyline(moves, axes=axes, rapid=False, tool=n, scale=scale)
        ax.plot(xs, ys, color=colour, lw=0.9, label=f"feed, {_tool_label(n, tool, prog.units)}" if legend else None,
                zorder=4)
        pts = _plunge_points(moves, n, scale, axes)
        if pts:
            ax.plot([p[0] for p in pts], [p[1] for p in pts], ls="none", marker="+", ms=9, mew=1.2, color=colour,
                    zorder=5)


def figure(prog, checked):
    """The back-plot of one checked program (a matplotlib Figure, no pyplot), in the program's unit."""
    from matplotlib.figure import Figure

    moves = checked.simulation.moves
    minutes = checked.time_s / 60.0
    scale = 1.0 if prog.units == "mm" else 1.0 / 25.4
    unit = "mm" if prog.units == "mm" else "in"
    title = (f"{prog.name}: web {prog.web}, {prog.face} face" if prog.face != "rim"
             else f"{prog.name}: web {prog.web}, radial holes from the rim")
    fig = Figure(figsize=(11.0, 5.6))
    left = fig.add_subplot(1, 2, 1)
    right = fig.add_subplot(1, 2, 2)
    if prog.face == "rim":
        _outline(left, prog, "rim", scale)
        left.set_title("the web seen from its outer face: the holes' axes", fontsize=9)
        for _n, f in prog.features:
            a = math.radians(f.angle + 90.0)
            left.plot([0, f.entry * math.cos(a) * scale], [0, f.entry * math.sin(a) * scale], color="#5b6673",
                      lw=0.5, ls="-.")
        t = prog.thickness * scale
        r = prog.section.rim_radius_max * scale
        right.fill([0, t, t, 0], [0, 0, r, r], facecolor="#e4e8ee", edgecolor="#1d2733", lw=0.7)
        for _n, f in prog.features:
            half = 0.5 * f.diameter
            tip = f.entry - f.depth - f.point_length
            right.plot(np.array([f.z - half, f.z - half, f.z, f.z + half, f.z + half]) * scale,
                       np.array([f.entry, f.entry - f.depth, tip, f.entry - f.depth, f.entry]) * scale,
                       color="#5b6673", lw=0.5, ls=":")
        _paths(right, prog, moves, scale, axes=(0, 2))
        right.set_xlabel(f"X along the crank axis from the inner face, {unit}")
        right.set_ylabel(f"Z from the crank axis (hole indexed up), {unit}")
        right.set_title("side view of the set-up, every hole at its index", fontsize=9)
        right.legend(fontsize=7, loc="lower right")
    else:
        for ax in (left, right):
            _outline(ax, prog, prog.face, scale)
            _paths(ax, prog, moves, scale, legend=ax is right)
        left.set_title("the whole face", fontsize=9)
        right.set_title("the toolpaths, closer", fontsize=9)
        feeds = np.array([p for mv in moves if not mv.rapid and all(map(math.isfinite, mv.start + mv.end))
                          for p in mv.xy(0.05)]) * scale
        if len(feeds):
            lo, hi = feeds.min(axis=0), feeds.max(axis=0)
            pad = 0.15 * max(hi - lo) + 6.0 * scale
            right.set_xlim(lo[0] - pad, hi[0] + pad)
            right.set_ylim(lo[1] - pad, hi[1] + pad)
        for ax in (left, right):
            ax.set_xlabel(f"X on the {prog.face} face, {unit}" + (" (the web frame's x mirrored)"
                                                                   if prog.face == "inner" else ""))
        left.set_ylabel(f"Y, {unit} (crankpin up)")
        right.legend(fontsize=7, loc="best")
    for ax in (left, right):
        ax.set_aspect("equal", adjustable="box" if ax is right and prog.face != "rim" else "datalim")
        ax.grid(True, lw=0.3, alpha=0.5)
        ax.tick_params(labelsize=7)
    fig.suptitle(f"{title}; about {minutes:.1f} min at the feeds and rapid rate (plus set-up and indexing); "
                 "feeds solid, rapids dashed, + where a tool feeds straight down", fontsize=9)
    fig.subplots_adjust(left=0.07, right=0.98, top=0.88, bottom=0.1, wspace=0.22)
    return fig


def svg(prog, checked) -> bytes:
    """The back-plot as SVG bytes; the same program gives the same bytes."""
    import matplotlib

    fig = figure(prog, checked)
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": f"geomgen-{prog.name}", "svg.fonttype": "none"}):
        fig.savefig(buf, format="svg", metadata={"Date": None})
    return buf.getvalue()
