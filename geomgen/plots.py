"""Charts of a balance study and of the band on the balance factor (pygal, SVG; imported only when called).

The study chart reads a `study.study()` result dict, nothing else, so it can be redrawn from a saved
study.json; the band chart reads plan.json's (or study.json's) "balance_factor_band" and "contributions".

Each picture is two pygal charts side by side, nested in one SVG document under one title.  pygal writes
a random chart id, a comment with today's date and a small configuration script for its own JavaScript
(which we do not ship); the id is fixed per chart and the comments and scripts are left out, so the same
figures give the same bytes on any day and the report fetches nothing.
"""

from __future__ import annotations

import math
import re
from xml.sax.saxutils import escape

FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"
INK = "#1d2733"
GRID = "#c9d0d6"
BLUE, ORANGE, RED, GREEN, GREY = "#1f5f8b", "#c8701e", "#b8322a", "#2a7d4f", "#5b6673"


def _chart(kind: str, chart_id: str, colours: list[str], *, width: int, height: int, **config):
    """A pygal chart of `kind` ("XY" or "HorizontalBar") in the house style, no JavaScript, a fixed id."""
    import pygal
    from pygal.style import Style

    style = Style(background="white", plot_background="white", foreground=INK, foreground_strong=INK,
                  foreground_subtle=GREY, font_family=FONT, title_font_family=FONT, label_font_size=11,
                  major_label_font_size=11, title_font_size=13, legend_font_size=11, value_font_size=11,
                  colors=tuple(colours), opacity=".28", opacity_hover=".28", stroke_opacity="1",
                  stroke_opacity_hover="1", stroke_width="1.6", stroke_width_hover="1.6", transition="0ms",
                  guide_stroke_color=GRID, major_guide_stroke_color=GRID, guide_stroke_dasharray="2,3",
                  major_guide_stroke_dasharray="2,3")
    settings = dict(width=width, height=height, style=style, js=[], disable_xml_declaration=True,
                    explicit_size=True, show_dots=False, legend_at_bottom=True, truncate_legend=-1,
                    truncate_label=-1, print_values=False, margin=8, margin_bottom=14, spacing=8)
    chart = getattr(pygal, kind)(**(settings | config))
    chart.uuid = chart_id
    return chart


def _render(chart, columns: int) -> str:
    """The chart's SVG, with room for every row of its bottom legend: pygal reserves (series // columns)
    rows where ceil(titled series / columns) are drawn, so an odd count lost its last row."""
    titled = sum(1 for s in chart.raw_series if s[1].get("title"))
    missing = math.ceil(titled / columns) - len(chart.raw_series) // columns
    if missing > 0:
        chart.margin_bottom = 14 + 20 * missing
    return chart.render(is_unicode=True)


def _square(chart, columns: int = 2) -> str:
    """`_render`ed with a square plot area: pygal sizes the plot from the chart's size less its labels and
    legend, so the chart is drawn once, its height changed by what the plot's width and height differ,
    and drawn again (the same pixels per unit on both axes of an XY chart with one range for both)."""
    svg = _render(chart, columns)
    found = re.search(r'class="plot"><rect x="0" y="0" width="([0-9.]+)" height="([0-9.]+)"', svg)
    if found:
        chart.height = round(chart.config.height + float(found.group(1)) - float(found.group(2)))
        svg = _render(chart, columns)
    return svg


def _clean(svg: str) -> str:
    """pygal's SVG without its comments (they carry today's date) and its scripts (for a library not shipped)."""
    svg = re.sub(r"<!--.*?-->", "", svg, flags=re.S)
    return re.sub(r"<script\b[^>]*>.*?</script>|<script\b[^>]*/>", "", svg, flags=re.S)


def _compose(width: int, height: int, title: str, panels: list[tuple[int, int, str]],
             notes: list[tuple[float, float, str]] = ()) -> bytes:
    """One SVG document: a white page, the title on top, each (x, y, chart SVG) nested where it says, and
    any (x, y, text) notes."""
    out = ["<?xml version='1.0' encoding='utf-8'?>",
           f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
           f'viewBox="0 0 {width} {height}" font-family="{FONT}">',
           f'<rect width="{width}" height="{height}" fill="white"/>',
           f'<text x="{width / 2:g}" y="24" text-anchor="middle" font-size="15" fill="{INK}">{escape(title)}</text>']
    for x, y, text in notes:
        out.append(f'<text x="{x:g}" y="{y:g}" text-anchor="middle" font-size="12" fill="{INK}">{escape(text)}</text>')
    for x, y, svg in panels:
        out.append(_clean(svg).replace("<svg ", f'<svg x="{x}" y="{y}" ', 1))
    out.append("</svg>\n")
    return "\n".join(out).encode("utf-8")


def _nice_limit(value: float) -> float:
    """The round number (1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6 or 8 times a power of ten) at or just above
    `value` (> 0): an axis limit that pygal can divide into round ticks."""
    power = 10.0 ** math.floor(math.log10(value))
    return next(k * power for k in (1.0, 1.2, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0)
                if k * power >= value * (1 - 1e-12))


#: charts already drawn in this process, by the JSON of what they were drawn from: a plan whose solids
#: are built by the command line's child process draws its charts while it waits (`warm_up`), and the
#: report then finds them here (the last few only: a long notebook session does not keep every chart)
_DRAWN: dict[str, bytes] = {}
_KEEP = 8


def _remembered(draw):
    """`draw` (a chart function of JSON-able arguments) answering again from `_DRAWN`."""
    import functools
    import json

    @functools.wraps(draw)
    def wrapper(*args, **kwargs):
        key = json.dumps([draw.__name__, args, kwargs], sort_keys=True)
        if key not in _DRAWN:
            while len(_DRAWN) >= _KEEP:
                del _DRAWN[next(iter(_DRAWN))]       # the oldest first
            _DRAWN[key] = draw(*args, **kwargs)
        return _DRAWN[key]

    return wrapper


@_remembered
def study_svg(result: dict) -> bytes:
    """The study picture as SVG bytes: the force's locus in the crank frame beside the balance-factor
    sweep.  The same result gives the same bytes."""
    inp = result["inputs"]
    title = (f"stroke {inp['stroke_mm']:g} mm, rod {inp['rod_length_mm']:g} mm, "
             f"{inp['max_rpm']:g} rpm, balance factor {inp['balance_factor']:g}, "
             f"peak {result['peak_N']:.0f} N")
    if result.get("name"):
        title = f"{result['name']}: {title}"

    # Left: the residual force's tip over one revolution, drawn in the crank frame seen from +Z (+Y up
    # towards the crankpin at TDC, +X right): its distance from the centre is the force, its direction
    # the force's direction.  Both axes share one range, so the panel is square and a circle stays round.
    cycle = result["cycle"]
    pts = [(row["force_x_N"], row["force_y_N"]) for row in cycle]
    lim = _nice_limit(max(max(math.hypot(x, y) for x, y in pts), 1e-9) * 1.08)
    tilt = math.radians(inp["cylinder_tilt_deg"])
    axis_end = (-lim * math.sin(tilt), lim * math.cos(tilt))
    locus = _chart("XY", "geomgen-study-locus", [BLUE, RED, RED, GREEN], width=560, height=610,
                   title="Residual force on the engine at max rpm, N",
                   x_title="force along +X, N", y_title="force along +Y (towards the head at TDC), N",
                   range=(-lim, lim), xrange=(-lim, lim), legend_at_bottom_columns=2)
    locus.add("the force's tip over one revolution", pts + pts[:1])
    locus.add("cylinder axis (towards the head)", [(0.0, 0.0), axis_end], stroke_style={"dasharray": "7,4"})
    locus.add("force at TDC (0 deg)", [pts[0]], stroke=False, show_dots=True, dots_size=5)
    locus.add("force at 90 deg after TDC", [pts[90 % len(pts)]], stroke=False, show_dots=True, dots_size=5)

    # Right: the peak forces over a revolution against the balance factor.
    sweep = result["sweep"]
    bf_axis = [row["balance_factor"] for row in sweep]
    has_balancer = inp["balancer"] is not None
    best = result["best_balance_factor"]
    best_peak = next(row["peak_N"] for row in sweep if row["balance_factor"] == best)
    top = _nice_limit(max(max(row[k] for row in rows for k in ("peak_N", "peak_along_N", "peak_across_N"))
                          for rows in (sweep, result["sweep_no_balancer"])) * 1.05)
    styles = (("peak_N", "resultant", INK), ("peak_along_N", "along cylinder", BLUE),
              ("peak_across_N", "across cylinder", ORANGE))
    colours, series = [], []
    for key, label, colour in styles:
        tag = " (no balancer)" if has_balancer else ""
        colours.append(colour)
        series.append((f"peak {label}{tag}", [row[key] for row in result["sweep_no_balancer"]],
                       {"dasharray": "6,3", "width": 1.4} if has_balancer else {"width": 1.6}))
        if has_balancer:
            colours.append(colour)
            series.append((f"peak {label} (with balancer, share {inp['balancer']['share']:g})",
                           [row[key] for row in sweep], {"width": 2.0}))
    colours += [RED, INK]
    bf_chart = _chart("XY", "geomgen-study-sweep", colours, width=660, height=610,
                      title=f"Balance-factor sweep at {inp['max_rpm']:g} rpm",
                      x_title="balance factor (share of reciprocating mass), -",
                      y_title="peak force over one revolution, N", range=(0.0, top),
                      xrange=(0.0, max(bf_axis)), legend_at_bottom_columns=2)
    for label, values, stroke in series:
        bf_chart.add(label, list(zip(bf_axis, values)), stroke_style=stroke)
    bf_chart.add(f"job balance factor {inp['balance_factor']:g}",
                 [(inp["balance_factor"], 0.0), (inp["balance_factor"], top)], stroke_style={"width": 1.2})
    bf_chart.add(f"smallest peak: BF {best:g}, {best_peak:.0f} N", [(best, best_peak)], stroke=False,
                 show_dots=True, dots_size=6)
    return _compose(1250, 650, title, [(10, 36, _square(locus)), (580, 36, _render(bf_chart, 2))])


@_remembered
def band_svg(band: dict, contributions: list[dict], *, tolerance_points: float, title: str = "") -> bytes:
    """How sure the balance factor is, as SVG bytes: the Monte Carlo histogram of the balance factor (with
    the first-order normal curve, the asked value and its tolerance) beside the inputs that move it, in
    balance-factor points.  The same figures give the same bytes."""
    edges = [100.0 * e for e in band["histogram"]["edges"]]
    counts = band["histogram"]["counts"]
    width = edges[1] - edges[0]
    total = max(sum(counts), 1)
    density = [c / (total * width) for c in counts]
    steps = [(edges[0], 0.0)]
    for x0, x1, d in zip(edges[:-1], edges[1:], density):
        steps += [(x0, d), (x1, d)]
    steps.append((edges[-1], 0.0))
    lin = band["linear"]
    mu, u = 100.0 * lin["mean"], 100.0 * lin["u"]
    normal = []
    if u > 0:
        xs = [edges[0] + (edges[-1] - edges[0]) * i / 200.0 for i in range(201)]
        normal = [(x, math.exp(-0.5 * ((x - mu) / u) ** 2) / (u * math.sqrt(2 * math.pi))) for x in xs]
    peak = max([d for d in density] + [y for _, y in normal] + [1e-12])
    top = _nice_limit(peak * 1.08)
    asked = 100.0 * band["asked"]
    lo_x = min(edges[0], asked - tolerance_points)
    hi_x = max(edges[-1], asked + tolerance_points)
    pad = 0.03 * (hi_x - lo_x)
    hist = _chart("XY", "geomgen-band-histogram", [GREEN, BLUE, ORANGE, GREEN, INK, RED, RED],
                  width=640, height=560, title="Balance factor achieved: where the cranks land",
                  x_title="balance factor achieved, % of the reciprocating mass",
                  y_title="probability density, 1/point", range=(0.0, top), xrange=(lo_x - pad, hi_x + pad),
                  legend_at_bottom_columns=2)
    # the tolerance band first, so the histogram and the lines are drawn over it
    span = [(asked - tolerance_points, 0.0), (asked - tolerance_points, top), (asked + tolerance_points, top),
            (asked + tolerance_points, 0.0)]
    hist.add(f"asked {band['asked']:g} ± {tolerance_points:g} points", span, fill=True, stroke_style={"width": 0.6})
    hist.add(f"Monte Carlo, {band['samples']} samples", steps, fill=True, stroke_style={"width": 1.0})
    if normal:
        hist.add("first order (GUM): normal, same mean and u", normal, stroke_style={"width": 1.8})
    else:
        hist.add("first order (GUM): no spread", [])
    hist.add(f"asked {band['asked']:g}", [(asked, 0.0), (asked, top)], stroke_style={"width": 1.4})
    nominal = 100.0 * band["nominal"]
    hist.add("the plan's own figure", [(nominal, 0.0), (nominal, top)], stroke_style={"dasharray": "2,3"})
    for key, label in (("low_95", "95 % interval (Monte Carlo)"), ("high_95", "")):
        x = 100.0 * band[key]
        hist.add(label or None, [(x, 0.0), (x, top)], stroke_style={"dasharray": "7,4", "width": 1.4})

    rows = contributions[:8]
    names = [r["input"] if len(r["input"]) <= 60 else r["input"][:58] + "…" for r in rows]
    longest = max([tolerance_points] + [r["bf_points"] for r in rows])
    bars = _chart("HorizontalBar", "geomgen-band-contributions", [BLUE], width=560, height=560,
                  title="What moves it most",
                  x_title="± balance-factor points over the input's range", show_legend=False,
                  value_formatter=lambda v: f"{v:g}", range=(0.0, _nice_limit(1.18 * longest)))
    # pygal lays horizontal bars bottom-up: the list is given smallest first so the largest stands on top;
    # the job's tolerance is the first (lowest) bar, green, to read the others against; each label ends
    # with its bar's figure
    entries = [{"value": tolerance_points, "color": GREEN}]
    labels = [f"the job's tolerance, ±{tolerance_points:.2f}"]
    for name, r in reversed(list(zip(names, rows))):
        entries.append({"value": r["bf_points"], "color": BLUE})
        labels.append(f"{name}, ±{r['bf_points']:.2f}")
    bars.x_labels = labels
    bars.add("± balance-factor points", entries)
    return _compose(1230, 610 if title else 590, title, [(10, 40 if title else 20, _render(hist, 2)),
                                                        (660, 40 if title else 20, bars.render(is_unicode=True))])


def warm_up() -> None:
    """Import what drawing the charts needs (the sidecar does this while a plan builds its solids)."""
    import pygal  # noqa: F401
