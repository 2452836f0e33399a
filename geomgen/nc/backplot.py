"""The back-plot: what a program's simulated moves do, drawn over the face view (plain SVG, geomgen.svgdraw).

Feeds are solid lines, one colour per tool; rapids are dashed grey.  A face program is drawn as the
machinist sees the face (x mirrored for the inner face); a rim program as the web's outline with the
holes' axes beside a side view of the set-up (X along the crank axis, Z up along the indexed hole).
Every panel is at equal aspect in the program's unit; the same program gives the same bytes.
"""

from __future__ import annotations

import math

import numpy as np

from .. import svgdraw
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


WEB_FILL = "#e4e8ee"
RAPID = "#8a939c"
#: the figure's width, px (the report shows it about this wide)
WIDTH = 1000.0


def _outline_points(prog, view: str, scale: float):
    """[(points, fill)] of the web's outline and bores, and [(number, points, tag)] of the features, as
    seen on `view`, in the program's unit."""
    sec = prog.section
    loops = [(face_loop(loop, view).points(0.05) * scale, fill)
             for loop, fill in [(sec.outer, WEB_FILL)] + [(b, "#ffffff") for b in sec.bores]]
    feats = []
    for n, f in prog.features:
        tx, ty = f.tag_point()
        if view == "inner":
            tx = -tx
        feats.append((n, face_loop(f.footprint(), view).points(0.05) * scale, (tx * scale, ty * scale)))
    return loops, feats


def _draw_outline(fig, panel, loops, feats) -> None:
    for pts, fill in loops:
        fig.polygon(panel, pts, fill=fill, stroke=svgdraw.INK, width=1.0, cls="outline")
    for n, pts, (tx, ty) in feats:
        fig.polygon(panel, pts, fill="none", stroke=svgdraw.MUTED, width=0.9, dash="1.5 2", cls="feature")
        fig.label(panel, tx, ty, str(n), dx=6, dy=6, size=10)


def _lines(prog, moves, scale: float, axes=(0, 1)) -> dict:
    """{None: the rapids' (xs, ys), tool number: its feeds' (xs, ys)}, each with NaN between moves."""
    out = {None: _polyline(moves, axes=axes, rapid=True, scale=scale)}
    for n in sorted(prog.tools):
        out[n] = _polyline(moves, axes=axes, rapid=False, tool=n, scale=scale)
    return out


def _finite(*lines) -> np.ndarray:
    """The finite points of (xs, ys) polylines, (n, 2)."""
    pts = np.column_stack([np.concatenate([x for x, _ in lines] + [[]]),
                           np.concatenate([y for _, y in lines] + [[]])])
    return pts[np.isfinite(pts).all(axis=1)]


def _draw_paths(fig, panel, lines: dict, plunges: dict) -> None:
    xs, ys = lines[None]
    fig.path(panel, xs, ys, stroke=RAPID, width=0.9, dash="5 3", cls="rapid")
    for k, n in enumerate(sorted(plunges)):
        colour = COLOURS[k % len(COLOURS)]
        xs, ys = lines[n]
        fig.path(panel, xs, ys, stroke=colour, width=1.4, cls=f"feed T{n}")
        fig.plus(panel, plunges[n], colour=colour, cls=f"plunge T{n}")


def drawing(prog, checked) -> svgdraw.Figure:
    """The back-plot of one checked program as an svgdraw.Figure (its `panels` give the px transforms),
    in the program's unit."""
    moves = checked.simulation.moves
    minutes = checked.time_s / 60.0
    scale = 1.0 if prog.units == "mm" else 1.0 / 25.4
    unit = "mm" if prog.units == "mm" else "in"
    title = (f"{prog.name}: web {prog.web}, {prog.face} face" if prog.face != "rim"
             else f"{prog.name}: web {prog.web}, radial holes from the rim")
    fig = svgdraw.Figure(WIDTH, 600.0)
    y = fig.wrapped(20, 22, f"{title}; about {minutes:.1f} min at the feeds and rapid rate (plus set-up and "
                    "indexing); feeds solid, rapids dashed, + where a tool feeds straight down",
                    width=WIDTH - 40, size=13)
    top, side = y + 16, 400.0
    left_box, right_box = (75.0, top, side, side), (WIDTH - 30.0 - side, top, side, side)
    view = prog.face if prog.face != "rim" else "outer"
    axes = (0, 1) if prog.face != "rim" else (0, 2)
    lines = _lines(prog, moves, scale, axes)
    plunges = {n: _plunge_points(moves, n, scale, axes) for n in sorted(prog.tools)}
    loops, feats = _outline_points(prog, view, scale)
    everything = [p for p, _ in loops] + [p for _, p, _ in feats]
    if prog.face == "rim":
        axes_lines = []
        for _n, f in prog.features:
            a = math.radians(f.angle + 90.0)
            axes_lines.append(np.array([[0.0, 0.0], [f.entry * math.cos(a) * scale, f.entry * math.sin(a) * scale]]))
        xl, yl = svgdraw.bounds(*everything, *axes_lines)
        left = fig.panel(left_box, svgdraw.widen(xl, 0.04), svgdraw.widen(yl, 0.04),
                         title="the web seen from its outer face: the holes' axes",
                         xlabel=f"X on the outer face, {unit}", ylabel=f"Y, {unit} (crankpin up)")
        _draw_outline(fig, left, loops, feats)
        for line in axes_lines:
            fig.path(left, line[:, 0], line[:, 1], stroke=svgdraw.MUTED, width=0.8, dash="6 3 1.5 3", cls="axis")
        t = prog.thickness * scale
        r = prog.section.rim_radius_max * scale
        block = np.array([[0.0, 0.0], [t, 0.0], [t, r], [0.0, r]])
        holes = []
        for _n, f in prog.features:
            half = 0.5 * f.diameter
            tip = f.entry - f.depth - f.point_length
            holes.append(np.column_stack([np.array([f.z - half, f.z - half, f.z, f.z + half, f.z + half]),
                                          np.array([f.entry, f.entry - f.depth, tip, f.entry - f.depth,
                                                    f.entry])]) * scale)
        xr, yr = svgdraw.bounds(block, *holes, _finite(*lines.values()))
        right = fig.panel(right_box, svgdraw.widen(xr, 0.05), svgdraw.widen(yr, 0.05),
                          title="side view of the set-up, every hole at its index",
                          xlabel=f"X along the crank axis from the inner face, {unit}",
                          ylabel=f"Z from the crank axis (hole indexed up), {unit}")
        fig.polygon(right, block, fill=WEB_FILL, stroke=svgdraw.INK, width=1.0, cls="outline")
        for h in holes:
            fig.path(right, h[:, 0], h[:, 1], stroke=svgdraw.MUTED, width=0.9, dash="1.5 2", cls="feature")
        _draw_paths(fig, right, lines, plunges)
    else:
        xl, yl = svgdraw.bounds(*everything, _finite(*lines.values()))
        xlabel = f"X on the {prog.face} face, {unit}" + (" (the web frame's x mirrored)"
                                                          if prog.face == "inner" else "")
        left = fig.panel(left_box, svgdraw.widen(xl, 0.04), svgdraw.widen(yl, 0.04), title="the whole face",
                         xlabel=xlabel, ylabel=f"Y, {unit} (crankpin up)")
        feeds = _finite(*(v for n, v in lines.items() if n is not None))
        if len(feeds):
            lo, hi = feeds.min(axis=0), feeds.max(axis=0)
            pad = 0.15 * max(hi - lo) + 6.0 * scale
            xr, yr = (lo[0] - pad, hi[0] + pad), (lo[1] - pad, hi[1] + pad)
        else:
            xr, yr = left.xlim, left.ylim
        right = fig.panel(right_box, xr, yr, title="the toolpaths, closer", xlabel=xlabel)
        for panel in (left, right):
            _draw_outline(fig, panel, loops, feats)
            _draw_paths(fig, panel, lines, plunges)
    entries = [("the web", {"fill": WEB_FILL, "stroke": svgdraw.INK}),
               ("planned feature (numbered as on the sheet)", {"stroke": svgdraw.MUTED, "dash": "1.5 2"}),
               ("rapid (G0)", {"stroke": RAPID, "width": 0.9, "dash": "5 3"})]
    for k, (n, tool) in enumerate(sorted(prog.tools.items())):
        entries.append((f"feed, {_tool_label(n, tool, prog.units)}",
                        {"stroke": COLOURS[k % len(COLOURS)], "width": 1.4,
                         "plus": bool(plunges[n])}))
    legend_top = top + side + 48
    fig.height = legend_top + fig.legend(left_box[0], legend_top, entries, width=WIDTH - left_box[0] - 30) + 12
    return fig


def svg(prog, checked) -> bytes:
    """The back-plot as SVG bytes; the same program gives the same bytes."""
    return drawing(prog, checked).to_bytes()
