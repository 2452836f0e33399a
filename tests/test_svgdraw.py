"""Plain-SVG drawings (geomgen.svgdraw) and the two figures drawn with it: the NC back-plot and a model web's
section.

Sources: the 1-2-5 series of round axis steps (common practice for chart axes); closed forms for the px
transform (px per mm = the smaller of the box's width and height over the data range); the NC program's own
text (its header's TOOL lines give each tool's diameter in the program's unit) and its simulated moves;
samples/make_model_webs.py (the maker's dimensions of the shipped model sample: a 16 mm disc whose boss
stands to z = 21).  The sample jobs are invented demo data.
"""

from __future__ import annotations

import re
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

import geomgen
from geomgen import svgdraw
from geomgen.nc.backplot import COLOURS, drawing, svg
from geomgen.nc.run import nc_programs

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
NS = "{http://www.w3.org/2000/svg}"


def _programs(sample: str):
    plan = geomgen.plan(SAMPLES / f"{sample}.toml")
    return nc_programs(job=plan.job, webs=[w.work for w in plan.webs], draw=False).programs


@pytest.fixture(scope="module")
def teardrop():
    """The teardrop sample's first program: one end mill, a pocket of lines and arcs."""
    return _programs("lighter-piston-teardrop")[0]


@pytest.fixture(scope="module")
def stroker():
    """The stroker sample's first program: three tools (drill, end mill, reamer), in inch."""
    return _programs("plugs-stroker")[0]


def _path_points(d: str) -> list[list[tuple[float, float]]]:
    """The M/L stretches of an SVG path's d (absolute M and L only, as svgdraw writes them)."""
    out = []
    for cmd, body in re.findall(r"([MLZhv])([^MLZhv]*)", d):
        nums = [float(v) for v in body.split()]
        if cmd == "M":
            out.append([(nums[0], nums[1])])
        elif cmd == "L":
            out[-1] += list(zip(nums[0::2], nums[1::2]))
    return out


# ------------------------------------------------------------------ ticks and the transform
@pytest.mark.parametrize("span, max_ticks, step", [
    (137.0, 8, 20.0),     # 10 would give 13.7 steps, 20 gives 6.85
    (12.0, 8, 2.0),       # 1 would give 12
    (0.9, 8, 0.2),        # 0.1 would give 9
    (1000.0, 5, 200.0),   # exactly 5 steps of 200
    (3.0, 8, 0.5),        # 0.2 would give 15, 0.5 gives 6
])
def test_tick_steps_follow_the_1_2_5_series(span, max_ticks, step):
    """The smallest of 1, 2, 5 times a power of ten that puts at most max_ticks steps across the span
    (common practice for chart axes)."""
    assert svgdraw.nice_step(span, max_ticks) == pytest.approx(step)


def test_ticks_and_their_labels():
    assert svgdraw.ticks(0.0, 137.0, 20.0) == [0.0, 20.0, 40.0, 60.0, 80.0, 100.0, 120.0]
    assert [svgdraw.tick_label(v, 0.5) for v in svgdraw.ticks(-1.2, 1.2, 0.5)] == ["-1.0", "-0.5", "0.0", "0.5",
                                                                                    "1.0"]
    assert svgdraw.tick_label(-0.0001, 0.05) == "0.00"


def test_the_transform_keeps_a_circle_round():
    """A panel 400 x 200 px showing at least 40 x 40 mm: 200 / 40 = 5 px per mm on both axes (the smaller
    ratio), so the x range widens to 400 / 5 = 80 mm about its centre; a circle of radius 10 mm is drawn
    100 px across both ways (to the 0.01 px the coordinates are written with)."""
    fig = svgdraw.Figure(500, 300)
    p = fig.panel((50, 40, 400, 200), (-20, 20), (-20, 20))
    assert p.scale == pytest.approx(5.0)
    assert p.xlim == pytest.approx((-40.0, 40.0)) and p.ylim == pytest.approx((-20.0, 20.0))
    a = np.linspace(0.0, 2 * np.pi, 721)
    fig.polygon(p, np.column_stack([3.0 + 10.0 * np.cos(a), -2.0 + 10.0 * np.sin(a)]), fill="none", cls="circle")
    root = ET.fromstring(fig.to_bytes())
    (circle,) = [e for e in root.iter(f"{NS}path") if e.get("class") == "circle"]
    pts = np.array([q for run in _path_points(circle.get("d")) for q in run])
    w, h = np.ptp(pts[:, 0]), np.ptp(pts[:, 1])
    assert abs(w - h) <= 0.01 + 1e-9
    assert w == pytest.approx(100.0, abs=0.01)
    # the centre in px: 50 + (3 + 40) * 5 = 265, 40 + (20 - (-2)) * 5 = 150; and back again
    assert (pts[:, 0].min() + pts[:, 0].max()) / 2 == pytest.approx(265.0, abs=0.01)
    assert (pts[:, 1].min() + pts[:, 1].max()) / 2 == pytest.approx(150.0, abs=0.01)
    assert p.data(265.0, 150.0) == pytest.approx((3.0, -2.0))


def test_nan_breaks_give_separate_stretches():
    fig = svgdraw.Figure(200, 200)
    p = fig.panel((0, 0, 200, 200), (0, 10), (0, 10))
    el = fig.path(p, [0, 1, np.nan, 2, 3, np.nan, 3, 4], [0, 1, np.nan, 2, 3, np.nan, 3, 4], stroke="#000")
    runs = _path_points(el.get("d"))
    # the third stretch starts where the second ended: it goes on without a new M
    assert len(runs) == 2 and len(runs[0]) == 2 and len(runs[1]) == 3


# ------------------------------------------------------------------ the back-plot
def test_back_plot_parses_and_is_the_same_bytes_twice(teardrop):
    data = svg(teardrop.program, teardrop.checked)
    assert data == svg(teardrop.program, teardrop.checked)
    root = ET.fromstring(data)
    assert root.tag == f"{NS}svg"
    assert root.get("viewBox") == f"0 0 {root.get('width')} {root.get('height')}"
    assert float(root.get("width")) == 1000.0
    # every clip-path reference names a clip path of the same figure
    ids = {e.get("id") for e in root.iter(f"{NS}clipPath")}
    refs = {re.fullmatch(r"url\(#(.+)\)", e.get("clip-path")).group(1) for e in root.iter() if e.get("clip-path")}
    assert refs and refs <= ids
    texts = " ".join(t.text or "" for t in root.iter(f"{NS}text"))
    assert f"about {teardrop.checked.time_s / 60:.1f} min" in texts and "the toolpaths, closer" in texts


def test_back_plot_legend_names_each_tool_s_diameter(stroker):
    """One legend text per tool, with the diameter the program's header gives (TOOL Tn: ... D<d>)."""
    header = dict(re.findall(r"\(TOOL T(\d+): [A-Z ]+ D([0-9.]+) ", stroker.program.text))
    assert len(header) == 3
    root = ET.fromstring(svg(stroker.program, stroker.checked))
    (legend,) = [g for g in root.iter(f"{NS}g") if g.get("class") == "legend"]
    texts = [t.text for t in legend.iter(f"{NS}text")]
    for n, d in header.items():
        mine = [t for t in texts if t.startswith(f"feed, T{n} ")]
        assert len(mine) == 1
        assert float(re.search(r"([0-9.]+) in$", mine[0]).group(1)) == pytest.approx(float(d), abs=1e-4)


def test_feed_path_maps_back_to_the_moves(teardrop):
    """The zoomed panel's feed path, mapped back through that panel's transform, passes through the start
    and end of every simulated feed move (to the 0.01 px it is written with), and every point of it lies on
    one of those moves (an arc's points on its circle)."""
    fig = drawing(teardrop.program, teardrop.checked)
    root = ET.fromstring(fig.to_bytes())
    right = fig.panels[1]
    (group,) = [g for g in root.iter(f"{NS}g") if g.get("data-panel") == "1"]
    (feed,) = [e for e in group.iter(f"{NS}path") if e.get("class") == "feed T1"]
    assert feed.get("stroke") == COLOURS[0]
    px = np.array([q for run in _path_points(feed.get("d")) for q in run])
    x, y = right.data(px[:, 0], px[:, 1])
    drawn = np.column_stack([x, y])
    moves = [m for m in teardrop.checked.simulation.moves if not m.rapid
             and all(map(np.isfinite, m.start + m.end))]
    assert len(moves) > 100
    ends = np.array([m.start[:2] for m in moves] + [m.end[:2] for m in moves])
    tol = 0.0051 / right.scale * np.sqrt(2)
    nearest = np.concatenate([np.min(np.linalg.norm(chunk[:, None, :] - drawn[None, :, :], axis=2), axis=1)
                              for chunk in np.array_split(ends, max(1, len(ends) // 100))])
    assert nearest.max() <= tol
    # and every drawn point lies on a feed move: on its segment, or on its arc's circle (closed forms)
    off = np.full(len(drawn), np.inf)
    for m in moves:
        a, b = np.array(m.start[:2]), np.array(m.end[:2])
        if m.centre is None:
            ab = b - a
            t = np.clip(((drawn - a) @ ab) / max(ab @ ab, 1e-300), 0.0, 1.0)
            d = np.linalg.norm(drawn - (a + t[:, None] * ab), axis=1)
        else:
            c = np.array(m.centre)
            d = np.abs(np.linalg.norm(drawn - c, axis=1) - np.linalg.norm(a - c))
        off = np.minimum(off, d)
    assert off.max() <= tol


def test_no_matplotlib_in_the_drawings():
    """Drawing a back-plot loads no charting library (run in a fresh process)."""
    code = ("import sys, geomgen\n"
            "from geomgen.nc.run import nc_programs\n"
            "import geomgen.model_view\n"
            "plan = geomgen.plan(sys.argv[1])\n"
            "r = nc_programs(job=plan.job, webs=[w.work for w in plan.webs], draw=True)\n"
            "assert all(p.backplot_svg.startswith(b'<?xml') for p in r.programs)\n"
            "print(sorted(m for m in sys.modules if m.split('.')[0] == 'matplotlib'))\n")
    out = subprocess.run([sys.executable, "-c", code, str(SAMPLES / "radial-rim.toml")], capture_output=True,
                         text=True, check=True, cwd=Path(__file__).resolve().parent.parent)
    assert out.stdout.strip() == "[]"


# ------------------------------------------------------------------ a model web's section
@pytest.mark.cad
def test_model_section_is_drawn_at_the_model_s_heights():
    """The shipped model sample's section: the material's top edge, mapped back through the panel, reaches
    the boss top z = 21 and the disc's face z = 16 (the maker's dimensions), and each new feature's number
    is a text of the figure."""
    from geomgen import api
    from geomgen.model_view import CUT, section_svg

    plan = api.plan(SAMPLES / "model-web.toml")
    work = plan.webs[0].work
    data = section_svg(work, title="web a")
    assert data == section_svg(work, title="web a")
    root = ET.fromstring(data)
    panel_box = [e for e in root.iter(f"{NS}clipPath")][0][0]
    left, top = float(panel_box.get("x")), float(panel_box.get("y"))
    material = [e for e in root.iter(f"{NS}path") if e.get("class") == "material"]
    assert material
    pys = np.array([q[1] for e in material for run in _path_points(e.get("d")) for q in run])
    pxs = np.array([q[0] for e in material for run in _path_points(e.get("d")) for q in run])
    # the transform from the axis labels: z = 0 and z = 20 ticks give px per mm and the zero
    grid = {t.text: float(t.get("y")) - 4 for t in root.iter(f"{NS}text") if t.get("text-anchor") == "end"}
    per_mm = (grid["0"] - grid["20"]) / 20.0
    z = (grid["0"] - pys) / per_mm
    assert z.max() == pytest.approx(21.0, abs=0.01) and z.min() == pytest.approx(0.0, abs=0.01)
    # the disc's face z = 16 is the top edge over most of the web's length
    tops = np.round(z, 1)
    assert np.count_nonzero(tops == 16.0) > 10
    assert pxs.min() >= left and pys.min() >= top
    # the feature numbers: the texts in the cuts' colour inside the panel
    (group,) = [g for g in root.iter(f"{NS}g") if g.get("data-panel") == "0"]
    numbers = {n for t in group.iter(f"{NS}text") if t.get("fill") == CUT for n in t.text.split(", ")}
    first = len(work.existing) + 1
    assert numbers == {str(k) for k in range(first, first + len(work.plan.features))
                       if not work.plan.features[k - first].opens_rim}
