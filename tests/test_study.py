"""Tests of geomgen.study (the study.json contract) and geomgen.plots."""

import importlib
import json
import math
import subprocess
import sys
import textwrap
import xml.etree.ElementTree as ET
from dataclasses import dataclass, field

import pytest

from geomgen.errors import BadInput

# the module by its full name: `geomgen.study` on the package is the API's function
study_mod = importlib.import_module("geomgen.study")


@dataclass(frozen=True)
class FakeEngine:
    """Stand-in for job.Engine, so the study is tested without the job loader."""

    stroke: float = 64.0
    rod_length: float = 110.0
    max_rpm: float = 11000.0
    balance_factor: float = 0.55
    reciprocating: dict = field(default_factory=lambda: {"piston": 250.0, "small_end": 80.0})
    rotating: dict = field(default_factory=lambda: {"big_end": 200.0})
    crank_parts: dict = field(default_factory=lambda: {"crankpin": 140.0})
    cylinder_tilt: float = 0.0
    rotation: str = "ccw"

    crank_radius = property(lambda self: self.stroke / 2)
    m_reciprocating = property(lambda self: sum(self.reciprocating.values()))
    m_rotating = property(lambda self: sum(self.rotating.values()))
    m_crank_parts = property(lambda self: sum(self.crank_parts.values()))
    omega = property(lambda self: self.max_rpm * 2 * math.pi / 60)


@dataclass(frozen=True)
class FakeBalancer:
    share: float = 0.5
    offset: tuple = (60.0, -20.0)


@pytest.fixture(scope="module")
def demo():
    # invented demo engine (not any real product)
    return study_mod.study(engine=FakeEngine(), balancer=FakeBalancer(), name="demo",
                           rotor_mass_g=9000.0)


@pytest.fixture(scope="module")
def demo_files(demo):
    return study_mod.render(demo)


def test_contract_keys_and_sizes(demo):
    for key in ("cycle", "peak_N", "bob_weight_g", "target_per_web_gmm", "sweep",
                "best_balance_factor", "sweep_no_balancer", "best_balance_factor_no_balancer"):
        assert key in demo
    assert [row["angle_deg"] for row in demo["cycle"]] == list(range(360))
    assert {"angle_deg", "force_x_N", "force_y_N"} <= set(demo["cycle"][0])
    # the sweep covers the balance factors a job may ask for, 0 .. 1.5 in 0.01 steps
    assert len(demo["sweep"]) == 151 and len(demo["sweep_no_balancer"]) == 151
    assert [row["balance_factor"] for row in demo["sweep"]] == [round(i * 0.01, 2) for i in range(151)]
    assert {"balance_factor", "peak_N", "peak_along_N", "peak_across_N"} == set(demo["sweep"][0])


def test_masses_bob_weight_and_targets(demo):
    # worked by hand (common practice): bob = 200 + 0.55 * 330 = 381.5 g (the crankpin is on the crank);
    # the webs counter 381.5 + 140 = 521.5 g: together 521.5 * 32 = 16688 g*mm, 8344 each;
    # tolerance 0.005 * 330 * 32 = 52.8 g*mm
    assert demo["bob_weight_g"] == 381.5
    assert demo["countered_at_pin_g"] == 521.5
    assert demo["target_per_web_gmm"] == 8344.0
    assert demo["targets_gmm"] == {"a": [0.0, -8344.0], "b": [0.0, -8344.0]}
    assert demo["tolerance_gmm"] == pytest.approx(52.8)
    assert demo["tolerance_per_web_gmm"] == {"a": 26.4, "b": 26.4}


def test_unequal_shares_give_a_dict():
    r = study_mod.study(engine=FakeEngine(), web_shares=[("a", 0.6), ("b", 0.4)])
    # closed form: 0.6 and 0.4 of 16688 g*mm
    assert r["target_per_web_gmm"] == {"a": 10012.8, "b": 6675.2}
    with pytest.raises(BadInput, match="sum to 1"):
        study_mod.study(engine=FakeEngine(), web_shares=[("a", 0.6), ("b", 0.6)])


def test_dead_centre_forces_closed_form(demo):
    # closed form: along = m_recip r w^2 [(1 +- lam) -+ ...]: at TDC the piston
    # gives +m r w^2 (1 + lam), the webs (BF) and the balancer (share) each
    # -x m r w^2; at BDC -(1 - lam) and +(BF + share).
    m, r, w = 330.0, 32.0, 11000 * 2 * math.pi / 60
    mrw2, lam = m * r * w * w * 1e-6, 32 / 110
    assert demo["tdc"]["along_N"] == pytest.approx(mrw2 * (1 + lam - 1.05), rel=1e-5)
    assert demo["bdc"]["along_N"] == pytest.approx(mrw2 * (-(1 - lam) + 1.05), rel=1e-5)
    assert demo["reciprocating_inertia_tdc_N"] == pytest.approx(mrw2 * (1 + lam), rel=1e-5)
    assert demo["reciprocating_inertia_bdc_N"] == pytest.approx(-mrw2 * (1 - lam), rel=1e-5)
    # across at 90 deg: (BF - share) m r w^2 = 0.05 m r w^2 (closed form)
    assert demo["cycle"][90]["force_across_N"] == pytest.approx(0.05 * mrw2, rel=1e-5)
    # rocking couple: 0.5 m r w^2 at |(60, -20)| mm (closed form), N*m
    assert demo["balancer_couple_peak_Nm"] == pytest.approx(0.5 * mrw2 * math.hypot(60, 20) / 1000,
                                                            rel=1e-4)


def test_peaks_consistent_with_cycle_and_sweep(demo):
    mags = [math.hypot(row["force_x_N"], row["force_y_N"]) for row in demo["cycle"]]
    # the peak is taken on a 0.1 deg grid, so it is at least the 1 deg cycle's
    assert demo["peak_N"] >= max(mags) * (1 - 1e-6)
    assert demo["peak_N"] == pytest.approx(max(mags), rel=1e-3)
    row = next(r for r in demo["sweep"] if r["balance_factor"] == 0.55)
    assert row["peak_N"] == pytest.approx(demo["peak_N"], rel=1e-5)
    best = min(demo["sweep"], key=lambda r: r["peak_N"])["balance_factor"]
    assert demo["best_balance_factor"] == best
    # common practice: with a 50 % balancer the least peak is at BF 0.5
    # (primary cancelled both ways; only the 2nd order is left)
    assert demo["best_balance_factor"] == 0.5


def test_harmonics_of_the_along_force(demo):
    # closed form: 1st order along = m r w^2 (1 - BF - share) = -0.05 m r w^2;
    # 2nd order = m r w^2 A2(lam)
    m, r, w, lam = 330.0, 32.0, 11000 * 2 * math.pi / 60, 32 / 110
    mrw2 = m * r * w * w * 1e-6
    assert demo["harmonics_along_N"]["1"] == pytest.approx(0.05 * mrw2, rel=1e-4)
    a2 = lam + lam**3 / 4 + 15 * lam**5 / 128
    assert demo["harmonics_along_N"]["2"] == pytest.approx(a2 * mrw2, rel=1e-4)
    assert demo["harmonics_reciprocating_N"]["1"] == pytest.approx(mrw2, rel=1e-5)


def test_iso_figure(demo):
    # ISO 21940-11: 1000 * 6.3 * 9 kg / 1151.917 rad/s = 49.22 g*mm (by hand)
    assert demo["iso_21940_11"]["permissible_unbalance_gmm"] == pytest.approx(49.22, abs=0.005)
    plain = study_mod.study(engine=FakeEngine(), balancer=None)
    assert plain["iso_21940_11"]["permissible_unbalance_gmm"] is None


def test_no_balancer_sweeps_agree():
    r = study_mod.study(engine=FakeEngine(), balancer=None)
    assert r["sweep"] == r["sweep_no_balancer"]
    assert r["balancer_couple_peak_Nm"] == 0.0
    assert r["inputs"]["balancer"] is None


def test_render_is_byte_identical_and_parses(demo, demo_files):
    again = study_mod.render(study_mod.study(engine=FakeEngine(), balancer=FakeBalancer(),
                                             name="demo", rotor_mass_g=9000.0))
    assert again == demo_files
    assert set(demo_files) == {"study.json", "study.svg"}
    assert json.loads(demo_files["study.json"]) == demo
    assert demo_files["study.json"].endswith(b"\n")
    root = ET.fromstring(demo_files["study.svg"])
    assert root.tag.endswith("svg")
    text = demo_files["study.svg"].decode("utf-8")
    for label in ("peak force over one revolution, N", "balance factor",
                  "force along +X, N", "stroke 64 mm", "11000 rpm"):
        assert label in text


def test_summary_lines_in_newton_and_lbf(demo):
    lines = study_mod.summary_lines(demo)
    text = "\n".join(lines)
    # 1 lbf = 4.4482216152605 N (exact definition)
    assert f"{demo['peak_N']:.1f} N ({demo['peak_N'] / 4.4482216152605:.1f} lbf)" in text
    assert "521.5 g" in text and "not a release for service" in text


def test_tilted_cylinder_study_rotates_the_cycle():
    # closed form: a 30 deg tilt turns every cycle force by 30 deg ccw,
    # and leaves peaks and the sweep as they were
    flat = study_mod.study(engine=FakeEngine(), balancer=FakeBalancer())
    tilted = study_mod.study(engine=FakeEngine(cylinder_tilt=30.0), balancer=FakeBalancer())
    c, s = math.cos(math.radians(30)), math.sin(math.radians(30))
    for a, b in zip(flat["cycle"][::15], tilted["cycle"][::15]):
        x, y = a["force_x_N"], a["force_y_N"]
        assert b["force_x_N"] == pytest.approx(c * x - s * y, abs=1e-3 * flat["peak_N"] * 1e-2)
        assert b["force_y_N"] == pytest.approx(s * x + c * y, abs=1e-3 * flat["peak_N"] * 1e-2)
    assert tilted["peak_N"] == pytest.approx(flat["peak_N"], rel=1e-5)
    assert tilted["best_balance_factor"] == flat["best_balance_factor"]


def test_study_runs_without_cadquery(tmp_path):
    # the design rule: `geomgen study` must not import the CAD kernel, and
    # balance/study import the chart library only when a picture is drawn
    script = textwrap.dedent("""
        import sys
        class Block:
            def find_spec(self, name, path=None, target=None):
                if name.split(".")[0] in ("cadquery", "OCP"):
                    raise ImportError("blocked for the test: " + name)
                return None
        sys.meta_path.insert(0, Block())
        from dataclasses import dataclass
        import importlib
        from geomgen import balance
        study = importlib.import_module("geomgen.study")
        @dataclass(frozen=True)
        class E:
            stroke: float = 64.0; rod_length: float = 110.0; max_rpm: float = 9000.0
            balance_factor: float = 0.6; cylinder_tilt: float = 0.0
            reciprocating = {"piston": 300.0}; rotating = {"pin": 400.0}
            crank_radius = 32.0; m_reciprocating = 300.0; m_rotating = 400.0
            omega = 9000 * 2 * 3.141592653589793 / 60
        result = study.study(engine=E())
        assert "pygal" not in sys.modules  # the chart library only for render()
        files = study.render(result)
        assert files["study.svg"].startswith(b"<?xml")
        assert not any(m.split(".")[0] in ("cadquery", "OCP") for m in sys.modules)
        print("ok", len(files["study.json"]))
    """)
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True,
                         timeout=120, cwd=tmp_path)
    assert out.returncode == 0, out.stderr
    assert out.stdout.startswith("ok ")


def test_with_the_real_engine_type():
    from geomgen import job
    eng = job.Engine(stroke=64.0, rod_length=110.0, max_rpm=11000, balance_factor=0.55,
                     reciprocating={"piston": 250.0, "small_end": 80.0},
                     rotating={"big_end": 200.0, "crankpin": 140.0})
    r = study_mod.study(engine=eng, balancer=job.Balancer(share=0.5, offset=(60.0, -20.0)))
    ref = study_mod.study(engine=FakeEngine(), balancer=FakeBalancer())
    assert r["cycle"] == ref["cycle"] and r["sweep"] == ref["sweep"]


def test_the_chart_is_the_same_on_any_day_and_fetches_nothing(demo_files):
    # pygal writes today's date in a comment and a script for its own JavaScript; neither is kept, and the
    # two charts carry fixed ids (a random id would change the bytes on every run)
    text = demo_files["study.svg"].decode("utf-8")
    assert "<!--" not in text and "<script" not in text and "http://pygal" not in text
    root = ET.fromstring(demo_files["study.svg"])
    nested = [el.get("id") for el in root.iter() if el.tag.endswith("svg") and el is not root]
    assert nested == ["chart-geomgen-study-locus", "chart-geomgen-study-sweep"]


def test_the_locus_axes_share_one_range_so_a_circle_stays_round(demo):
    # the left panel is the crank frame: x and y get the same limits, the round number just above the
    # largest force times 1.08 (the 1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8 series: common practice for axis
    # limits), and the same pixels per newton both ways (read off the tick labels' positions)
    import re

    from geomgen.plots import _nice_limit

    assert _nice_limit(4777.0 * 1.08) == 6000.0
    assert _nice_limit(0.0123) == pytest.approx(0.015)
    assert _nice_limit(2.0) == 2.0
    text = study_mod.render(demo)["study.svg"].decode("utf-8")
    lim = _nice_limit(demo["peak_N"] * 1.08)
    locus = text[text.index("chart-geomgen-study-locus"):text.index("chart-geomgen-study-sweep")]
    x_axis = locus[locus.index('class="axis x'):]
    y_axis = locus[locus.index('class="axis y'):locus.index('class="axis x')]
    xs = [(float(v), float(p)) for p, v in re.findall(r'<text x="([0-9.]+)" y="[0-9.]+"[^>]*>(-?[0-9.]+)</text>',
                                                       x_axis)]
    ys = [(float(v), float(p)) for p, v in re.findall(r'<text x="-?[0-9.]+" y="([0-9.]+)"[^>]*>(-?[0-9.]+)</text>',
                                                       y_axis)]
    assert (xs[0][0], xs[-1][0]) == (-lim, lim) and (ys[0][0], ys[-1][0]) == (-lim, lim)
    px_x = (xs[-1][1] - xs[0][1]) / (2 * lim)
    px_y = (ys[0][1] - ys[-1][1]) / (2 * lim)          # SVG y grows downwards
    assert px_x == pytest.approx(px_y, rel=0.01)


def test_a_chart_drawn_again_is_the_one_remembered_and_only_the_last_few_are_kept(demo, monkeypatch):
    from geomgen import plots

    monkeypatch.setattr(plots, "_KEEP", 3)
    monkeypatch.setattr(plots, "_DRAWN", {})
    first = plots.study_svg(demo)
    assert plots.study_svg(demo) is first                       # the same bytes object: not drawn again
    for k in range(plots._KEEP + 2):                             # other results push it out, oldest first
        plots.study_svg(dict(demo, name=f"other {k}"))
    assert len(plots._DRAWN) == plots._KEEP
    again = plots.study_svg(demo)
    assert again == first and again is not first                 # drawn anew, to the same bytes


@pytest.mark.parametrize("balancer", [True, False])
def test_every_legend_row_of_the_charts_lies_inside_its_chart(balancer):
    # without a balancer the sweep has five legend entries in two columns: three rows, where the chart
    # library reserves room for two; each legend box (12 px) must end above its chart's own height
    import re

    result = study_mod.study(engine=FakeEngine(), balancer=FakeBalancer() if balancer else None, name="demo")
    text = study_mod.render(result)["study.svg"].decode("utf-8")
    for chart in re.split(r'(?=<svg x=")', text)[1:]:
        height = float(re.search(r'height="([0-9.]+)"', chart).group(1))
        dy = float(re.search(r'transform="translate\([0-9.]+, ([0-9.]+)\)" class="legends"', chart).group(1))
        boxes = [float(y) for y in re.findall(r'<rect x="[0-9.]+" y="([0-9.]+)" width="12" height="12"', chart)]
        assert boxes and dy + max(boxes) + 12 <= height, (dy, max(boxes), height)
