"""Plain SVG for the geometry drawings (the NC back-plot, a model web's section): no charting library.

A `Figure` holds the SVG tree (xml.etree.ElementTree, which escapes every text and attribute); a `Panel`
is a rectangle of it showing a range of data (mm or in) at equal aspect: one data unit is the same
number of px along both axes, so a circle stays a circle.  Its frame, light grid and labelled ticks
come at one round step for both axes, taken from the 1-2-5 series (`nice_step`).  Lines with NaN breaks
(a move, a break, the next move) become one <path> of M and L commands; every coordinate is written to
0.01 px, and the same calls give the same bytes (clip-path ids are named from a hash of the figure's own
content, so two figures inlined in one page do not share an id unless they are the same figure).
"""

from __future__ import annotations

import hashlib
import math
import textwrap
import xml.etree.ElementTree as ET

import numpy as np

FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"
INK = "#1d2733"
MUTED = "#5b6673"
GRID = "#dfe3e8"

#: mean advance of one character of the sans-serif fonts above, as a fraction of the font size (a rough
#: figure for sizing boxes and wrapping lines, common practice; on the wide side so that text fits)
CHAR_EM = 0.56


def fmt(v: float) -> str:
    """A coordinate or length to 0.01, without trailing zeros ("12.5", "-3", never "-0")."""
    text = f"{v:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def text_width(text: str, size: float) -> float:
    """Estimated width in px of `text` at font size `size` px (CHAR_EM per character)."""
    return CHAR_EM * size * len(text)


def nice_step(span: float, max_ticks: int = 8) -> float:
    """The smallest step of the 1-2-5 series (1, 2, 5, 10, 20, ...; common practice for chart axes) that
    puts at most `max_ticks` steps across `span`."""
    if not (span > 0 and math.isfinite(span)):
        return 1.0
    k = math.floor(math.log10(span / max(1, max_ticks)))
    while True:
        for m in (1.0, 2.0, 5.0):
            step = m * 10.0 ** k
            if span / step <= max_ticks + 1e-9:
                return step
        k += 1


def ticks(lo: float, hi: float, step: float) -> list[float]:
    """The multiples of `step` in [lo, hi]."""
    first = math.ceil(lo / step - 1e-9)
    last = math.floor(hi / step + 1e-9)
    return [k * step for k in range(first, last + 1)]


def tick_label(v: float, step: float) -> str:
    """A tick's value with as many decimals as the step needs ("0.25" for step 0.05, "40" for 20)."""
    decimals = max(0, -math.floor(math.log10(step) + 1e-9))
    text = f"{v:.{decimals}f}"
    return text[1:] if text.startswith("-") and float(text) == 0.0 else text


class Panel:
    """A rectangle of the figure, `box` = (left, top, width, height) px, showing at least the data range
    `xlim` x `ylim` (y up) at equal aspect: the range is widened about its centre along one axis so that
    both axes have the same px per data unit (`scale`).  `g` is the panel's group, clipped to the box."""

    def __init__(self, box, xlim, ylim, g: ET.Element | None = None) -> None:
        self.left, self.top, self.width, self.height = map(float, box)
        (x0, x1), (y0, y1) = sorted(map(float, xlim)), sorted(map(float, ylim))
        if x1 - x0 <= 0:
            x0, x1 = x0 - 0.5, x1 + 0.5
        if y1 - y0 <= 0:
            y0, y1 = y0 - 0.5, y1 + 0.5
        self.scale = min(self.width / (x1 - x0), self.height / (y1 - y0))
        cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
        hw, hh = 0.5 * self.width / self.scale, 0.5 * self.height / self.scale
        self.xlim, self.ylim = (cx - hw, cx + hw), (cy - hh, cy + hh)
        self.g = g
        self.step: float | None = None        # the tick step, once `Figure.panel` has drawn the grid

    def px(self, x, y):
        """Data (x, y) to figure px (X right, Y down); scalars or numpy arrays."""
        return (self.left + (np.asarray(x, dtype=float) - self.xlim[0]) * self.scale,
                self.top + (self.ylim[1] - np.asarray(y, dtype=float)) * self.scale)

    def data(self, X, Y):
        """Figure px back to data (x, y): the inverse of `px`."""
        return (self.xlim[0] + (np.asarray(X, dtype=float) - self.left) / self.scale,
                self.ylim[1] - (np.asarray(Y, dtype=float) - self.top) / self.scale)


def bounds(*arrays) -> tuple[tuple[float, float], tuple[float, float]] | None:
    """((xmin, xmax), (ymin, ymax)) of the finite points of (n, 2) arrays, or None if there are none."""
    pts = [np.asarray(a, dtype=float).reshape(-1, 2) for a in arrays if len(a)]
    pts = [p[np.isfinite(p).all(axis=1)] for p in pts]
    pts = [p for p in pts if len(p)]
    if not pts:
        return None
    allp = np.vstack(pts)
    lo, hi = allp.min(axis=0), allp.max(axis=0)
    return (float(lo[0]), float(hi[0])), (float(lo[1]), float(hi[1]))


def widen(lim, frac: float, at_least: float = 0.0):
    """A range widened on both sides by `frac` of its span (and at least `at_least`)."""
    lo, hi = lim
    pad = max(frac * (hi - lo), at_least)
    return lo - pad, hi + pad


def stretches(ok) -> list[tuple[int, int]]:
    """The index ranges [a, b) where the boolean array `ok` is true throughout."""
    edges = np.flatnonzero(np.diff(np.concatenate([[0], np.asarray(ok, dtype=np.int8), [0]])))
    return [(int(a), int(b)) for a, b in zip(edges[::2], edges[1::2])]


def runs(xs, ys) -> list[np.ndarray]:
    """The stretches of finite points between NaN breaks, each an (n, 2) array of at least 2 points."""
    pts = np.column_stack([np.asarray(xs, dtype=float).ravel(), np.asarray(ys, dtype=float).ravel()])
    return [pts[a:b] for a, b in stretches(np.isfinite(pts).all(axis=1)) if b - a >= 2]


class Figure:
    """An SVG drawing `width` x `height` px (the height may grow before `to_bytes`)."""

    def __init__(self, width: float, height: float) -> None:
        self.width, self.height = float(width), float(height)
        self.root = ET.Element("svg", {"xmlns": "http://www.w3.org/2000/svg"})
        self.defs = ET.SubElement(self.root, "defs")
        self.body = ET.SubElement(self.root, "g", {"font-family": FONT, "fill": INK})
        self.panels: list[Panel] = []
        self._clips: list[tuple[ET.Element, ET.Element]] = []

    # -------------------------------------------------------------- elements
    def _el(self, tag: str, attrs: dict, parent: ET.Element | None = None) -> ET.Element:
        return ET.SubElement(self.body if parent is None else parent, tag,
                             {k: v for k, v in attrs.items() if v is not None})

    def text(self, x: float, y: float, s: str, *, size: float = 11.0, anchor: str = "start",
             rotate: float | None = None, colour: str | None = None, weight: str | None = None,
             parent: ET.Element | None = None) -> ET.Element:
        """A line of real SVG text, its baseline at (x, y) px."""
        el = self._el("text", {"x": fmt(x), "y": fmt(y), "font-size": fmt(size),
                               "text-anchor": anchor if anchor != "start" else None, "fill": colour,
                               "font-weight": weight,
                               "transform": f"rotate({fmt(rotate)} {fmt(x)} {fmt(y)})" if rotate else None},
                      parent)
        el.text = s
        return el

    def wrapped(self, x: float, y: float, s: str, *, width: float, size: float = 12.0, anchor: str = "start",
                **kw) -> float:
        """`s` in lines no wider than `width` px (estimated), the first baseline at y; returns the y below."""
        chars = max(10, int(width / (CHAR_EM * size)))
        for line in textwrap.wrap(s, chars) or [""]:
            self.text(x, y, line, size=size, anchor=anchor, **kw)
            y += 1.3 * size
        return y

    def path(self, panel: Panel, xs, ys, *, stroke: str, width: float = 1.0, dash: str | None = None,
             cls: str | None = None, closed: bool = False, fill: str = "none") -> ET.Element | None:
        """One <path> through the data points (NaN breaks start a new M; a stretch that starts where the
        last one ended goes on without one), in `panel`, clipped to it."""
        X, Y = panel.px(xs, ys)
        parts, last = [], None
        for run in runs(X, Y):
            coords = [(fmt(a), fmt(b)) for a, b in run.tolist()]
            if coords[0] != last:
                parts.append(f"M{coords[0][0]} {coords[0][1]}")
            parts.append("L" + " ".join(f"{a} {b}" for a, b in coords[1:]))
            if closed:
                parts.append("Z")
                last = None
            else:
                last = coords[-1]
        if not parts:
            return None
        return self._el("path", {"class": cls, "d": "".join(parts), "fill": fill, "stroke": stroke,
                                 "stroke-width": fmt(width), "stroke-dasharray": dash,
                                 "stroke-linejoin": "round"}, panel.g)

    def polygon(self, panel: Panel, pts, *, fill: str, stroke: str | None = INK, width: float = 1.0,
                dash: str | None = None, cls: str | None = None) -> ET.Element | None:
        """A closed (n, 2) loop of data points, filled."""
        pts = np.asarray(pts, dtype=float)
        return self.path(panel, pts[:, 0], pts[:, 1], stroke=stroke or "none", width=width, dash=dash, cls=cls,
                         closed=True, fill=fill)

    def plus(self, panel: Panel, pts, *, colour: str, size: float = 12.0, width: float = 1.6,
             cls: str | None = None) -> ET.Element | None:
        """A '+' marker `size` px across at each data point."""
        if not len(pts):
            return None
        h = 0.5 * size
        d = []
        for x, y in pts:
            X, Y = panel.px(x, y)
            d.append(f"M{fmt(X - h)} {fmt(Y)}h{fmt(size)}M{fmt(X)} {fmt(Y - h)}v{fmt(size)}")
        return self._el("path", {"class": cls, "d": "".join(d), "fill": "none", "stroke": colour,
                                 "stroke-width": fmt(width)}, panel.g)

    def label(self, panel: Panel, x: float, y: float, s: str, *, dx: float = 0.0, dy: float = 0.0,
              size: float = 10.0, anchor: str = "start", colour: str | None = None) -> ET.Element:
        """Text at a data point, offset by (dx, dy) px (dy up), inside the panel's clip."""
        X, Y = panel.px(x, y)
        return self.text(float(X) + dx, float(Y) - dy, s, size=size, anchor=anchor, colour=colour, parent=panel.g)

    # -------------------------------------------------------------- panels
    def panel(self, box, xlim, ylim, *, title: str = "", xlabel: str = "", ylabel: str = "",
              min_tick_px: float = 45.0) -> Panel:
        """A framed panel with its grid, ticks every `nice_step` (the same step on both axes, no closer than
        `min_tick_px`), tick labels, axis labels and title; draw into it with `path`, `polygon`, ..."""
        p = Panel(box, xlim, ylim)
        span_px = max(p.width, p.height)
        step = nice_step(span_px / p.scale, max(2, int(span_px / min_tick_px)))
        p.step = step
        k = len(self._clips)
        clip = ET.SubElement(self.defs, "clipPath", {"id": ""})
        ET.SubElement(clip, "rect", {"x": fmt(p.left), "y": fmt(p.top), "width": fmt(p.width),
                                     "height": fmt(p.height)})
        frame = {"x": fmt(p.left), "y": fmt(p.top), "width": fmt(p.width), "height": fmt(p.height)}
        self._el("rect", {**frame, "fill": "#ffffff", "stroke": "none"})
        grid = self._el("g", {"stroke": GRID, "stroke-width": "0.8", "fill": "none"})
        tick_g = self._el("g", {"fill": MUTED})
        bottom, right = p.top + p.height, p.left + p.width
        for v in ticks(*p.xlim, step):
            X = fmt(float(p.px(v, 0.0)[0]))
            ET.SubElement(grid, "line", {"x1": X, "y1": fmt(p.top), "x2": X, "y2": fmt(bottom)})
            self.text(float(X), bottom + 15, tick_label(v, step), size=11, anchor="middle", parent=tick_g)
        for v in ticks(*p.ylim, step):
            Y = fmt(float(p.px(0.0, v)[1]))
            ET.SubElement(grid, "line", {"x1": fmt(p.left), "y1": Y, "x2": fmt(right), "y2": Y})
            self.text(p.left - 5, float(Y) + 4, tick_label(v, step), size=11, anchor="end", parent=tick_g)
        p.g = self._el("g", {"clip-path": "", "data-panel": str(k)})
        self._clips.append((clip, p.g))
        self._el("rect", {**frame, "fill": "none", "stroke": INK, "stroke-width": "0.8"})
        if title:
            self.text(p.left + 0.5 * p.width, p.top - 8, title, size=12, anchor="middle")
        if xlabel:
            self.text(p.left + 0.5 * p.width, bottom + 32, xlabel, size=12, anchor="middle")
        if ylabel:
            widest = max([text_width(tick_label(v, step), 11) for v in ticks(*p.ylim, step)] or [0.0])
            x = p.left - widest - 14
            self.text(x, p.top + 0.5 * p.height, ylabel, size=12, anchor="middle", rotate=-90)
        self.panels.append(p)
        return p

    def legend(self, x: float, y: float, entries, *, width: float, size: float = 11.0) -> float:
        """A framed legend whose top left corner is at (x, y) px, at most `width` px wide; `entries` are
        (text, style) with style a dict: stroke, width, dash (a line sample), fill (a swatch), plus (a '+'
        over the sample).  Entries flow left to right in rows; returns the legend's height in px."""
        sample, gap, pad, row_h = 26.0, 18.0, 8.0, 1.6 * size
        g = self._el("g", {"class": "legend"})
        frame = self._el("rect", {"x": fmt(x), "y": fmt(y), "fill": "#ffffff", "stroke": "#b9c0c8",
                                  "stroke-width": "0.8"}, g)
        cx, cy, used = x + pad, y + pad, 0.0
        for text, style in entries:
            w = sample + 6 + text_width(text, size)
            if cx > x + pad and cx + w > x + width - pad:
                cx, cy = x + pad, cy + row_h
            mid = cy + 0.5 * row_h
            if style.get("fill"):
                self._el("rect", {"x": fmt(cx + 4), "y": fmt(mid - 6), "width": fmt(sample - 8), "height": "12",
                                  "fill": style["fill"], "stroke": style.get("stroke", INK),
                                  "stroke-width": fmt(style.get("width", 0.8)),
                                  "stroke-dasharray": style.get("dash")}, g)
            else:
                self._el("line", {"x1": fmt(cx), "y1": fmt(mid), "x2": fmt(cx + sample), "y2": fmt(mid),
                                  "stroke": style.get("stroke", INK), "stroke-width": fmt(style.get("width", 1.0)),
                                  "stroke-dasharray": style.get("dash")}, g)
            if style.get("plus"):
                c = cx + 0.5 * sample
                self._el("path", {"d": f"M{fmt(c - 5)} {fmt(mid)}h10M{fmt(c)} {fmt(mid - 5)}v10", "fill": "none",
                                  "stroke": style.get("stroke", INK), "stroke-width": "1.6"}, g)
            self.text(cx + sample + 6, mid + 0.36 * size, text, size=size, parent=g)
            used = max(used, cx + w - x)
            cx += w + gap
        height = cy + row_h + pad - y
        frame.set("width", fmt(used + pad))
        frame.set("height", fmt(height))
        return height

    # -------------------------------------------------------------- output
    def to_bytes(self) -> bytes:
        """The SVG document (UTF-8, with an XML declaration).  Root width, height and viewBox in px."""
        self.root.attrib.update({"width": fmt(self.width), "height": fmt(self.height),
                                 "viewBox": f"0 0 {fmt(self.width)} {fmt(self.height)}"})
        # ids from the content itself: the same figure, the same ids; another figure, others
        for k, (clip, g) in enumerate(self._clips):
            clip.set("id", f"clip{k}")
            g.set("clip-path", f"url(#clip{k})")
        digest = hashlib.sha1(ET.tostring(self.root)).hexdigest()[:10]
        for k, (clip, g) in enumerate(self._clips):
            clip.set("id", f"c{digest}-{k}")
            g.set("clip-path", f"url(#c{digest}-{k})")
        return b'<?xml version="1.0" encoding="utf-8"?>\n' + ET.tostring(self.root, encoding="utf-8",
                                                                           xml_declaration=False) + b"\n"
