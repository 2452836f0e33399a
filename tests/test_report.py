"""report.html of a real `plan` run (tests/_shop_run.py): parses, self-contained, complete."""

from __future__ import annotations

import html
import re
from html.parser import HTMLParser

import pytest

from geomgen.shop import render

from _shop_run import plan_run

pytestmark = pytest.mark.cad  # every test reads the shared `plan` run, which builds the solids


class _Collect(HTMLParser):
    """Tags, attributes and text of a page (the standard library's HTML parser)."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags, self.attrs, self.text, self.stack, self.tables = [], [], [], [], 0

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs.extend((tag, k, v or "") for k, v in attrs)

    def handle_data(self, data):
        self.text.append(data)


def _shows(text: str, value: float, digits: int) -> bool:
    """Does the page print `value` to `digits` decimals?  plan.json keeps 6 significant figures and
    the page is made from the unrounded numbers, so allow one last digit either way or 1e-5 relative."""
    numbers = [float(n.replace(",", "")) for n in re.findall(r"-?\d[\d,]*(?:\.\d+)?", text.replace("−", "-"))]
    tol = max(10.0 ** -digits, 1e-5 * abs(value))
    return any(abs(n - value) <= tol * 1.01 for n in numbers)


@pytest.fixture(scope="module")
def run():
    r = dict(plan_run())
    r["bytes"] = (r["out"] / "report.html").read_bytes()
    r["page"] = r["bytes"].decode("utf-8")
    parser = _Collect()
    parser.feed(r["page"])
    parser.close()
    r["parsed"] = parser
    r["text"] = re.sub(r"\s+", " ", " ".join(parser.text))  # cells apart, so numbers stay apart
    return r


def test_parses_and_is_self_contained(run):
    p = run["parsed"]
    assert p.tags[0] == "html" and "body" in p.tags and "title" in p.tags
    # nothing fetched: no scripts, no linked files, no external references of any kind
    assert "script" not in p.tags and "link" not in p.tags and "img" not in p.tags and "iframe" not in p.tags
    for tag, key, value in p.attrs:
        if key in ("src", "href", "xlink:href"):
            assert value.startswith("#"), (tag, key, value)
    # url() only to the page's own SVG clip paths (url(#id)), never to a file or a server
    assert all(ref.startswith("#") for ref in re.findall(r"url\(\s*['\"]?([^)'\"]*)", run["page"]))
    assert "@import" not in run["page"]
    assert not re.search(r"""(src|href)\s*=\s*["'](https?:|file:|/|\.\.?/)""", run["page"])


def test_contains_the_plots(run):
    p = run["parsed"]
    n_webs = len(run["doc"]["webs"])
    # the study figure (polar residual force + balance-factor sweep) and each web before and after
    assert p.tags.count("svg") >= 1 + 2 * n_webs
    assert "Balance-factor sweep" in run["text"]
    assert "Residual force on the engine at max rpm" in run["text"]
    for web in run["doc"]["webs"]:
        assert f"web {web['name']} before" in run["text"] and f"web {web['name']} after" in run["text"]
    assert "COM before" in run["text"] and "COM after" in run["text"]


def test_cautions_at_the_top(run):
    text = run["text"]
    first_heading = text.index("Result at a glance")
    for caution in run["doc"]["cautions"]:
        assert caution in text
        # the contract's cautions come before any result
        assert text.index(caution) < first_heading
    for words in ("not a release for service", "real part", "retention", "licensed practice"):
        assert words in text


def test_iso_figure_balance_factor_and_targets(run):
    doc, text = run["doc"], run["text"]
    iso = doc["crank"]["iso_21940_11"]
    assert f"ISO 21940-11 G{iso['grade_mm_s']:.1f}" in text
    assert _shows(text, iso["permissible_residual_gmm"], 1)
    # U_per = 1000 G m / Omega (ISO 21940-11), worked here from the figures the page prints
    omega = doc["engine"]["max_rpm"] * 2 * 3.141592653589793 / 60
    assert iso["permissible_residual_gmm"] == pytest.approx(1000 * iso["grade_mm_s"] * iso["rotor_mass_kg"] / omega,
                                                            rel=1e-5)
    assert _shows(text, doc["crank"]["balance_factor_achieved"], 4)
    assert _shows(text, doc["crank"]["bob_weight_g"], 1)
    for web in doc["webs"]:
        assert _shows(text, web["tolerance_gmm"], 1)
        assert _shows(text, web["target_gmm"][1], 1)
        assert _shows(text, web["deviation_bf_percent"], 3)
        # the web's own share of its allowed |deviation|: |(dx, dy)| / tolerance, worked from plan.json's figures
        share = (web["deviation_gmm"][0] ** 2 + web["deviation_gmm"][1] ** 2) ** 0.5 / web["tolerance_gmm"]
        assert web["deviation_share_of_tolerance"] == pytest.approx(share, rel=1e-4)  # plan.json keeps 6 digits
        assert _shows(text, 100 * share, 1)


def test_each_web_has_its_feature_table(run):
    text = run["text"]
    for web in run["doc"]["webs"]:
        start = text.index(f"Web {web['name']}:")
        block = text[start:]
        for f in web["features"]:
            if f["kind"] == "pocket":
                assert f"r {f['r_inner']:.2f}–{f['r_outer']:.2f} mm" in block
            else:
                assert f"x {f['x']:.2f}, y {f['y']:.2f} mm" in block
            assert _shows(block, f["effect"]["mass_g"], 2)
        assert web["why"] in block


def test_verification_and_loads(run):
    text, doc = run["text"], run["doc"]
    assert "exact B-rep" in text and "mesh (STL)" in text and "stated mesh bound" in text
    for web in doc["webs"]:
        assert _shows(text, web["exact"]["mass_g"], 2)
        assert _shows(text, web["mesh"]["inertia_z_gmm2"] / 1000.0, 2)          # printed in kg*mm^2
        assert _shows(text, web["agreement"]["mesh_bound"]["unbalance_gmm"], 2)
    assert doc["safety"]["plugs"]
    for plug in doc["safety"]["plugs"]:
        assert _shows(text, plug["load_N_max_rpm"], 0) and _shows(text, plug["load_N_overspeed"], 0)
    assert html.unescape(doc["safety"]["disc_method"]) in text


def test_same_job_same_bytes(run):
    first = render(job=run["job"], doc=run["doc"], webs=run["webs"], study=run["study"])
    again = render(job=run["job"], doc=run["doc"], webs=run["webs"], study=run["study"])
    # nothing dated or random: the same inputs give the same files
    assert first == again
    assert not re.search(r"20\d\d-\d\d-\d\d|\d\d:\d\d:\d\d", run["page"])
    assert str(run["out"]) not in run["page"]
