"""The report's section "How sure is the balance factor": the band, the residual beside the tolerance and
ISO 21940-11, the verdict, the pictures, the contributions, both propagations side by side, the
tolerances used and each weighed web's calibration.  Everything is read from the plan.json document.
"""

from __future__ import annotations

import math
import re

from .report import _e, _figure, _n, _table, _vec


def band_request(doc: dict, title: str = "") -> dict:
    """The sidecar request that draws the band's picture (also sent ahead, `sidecar.Sidecar.prefetch`)."""
    tol = doc["crank"]["bf_tolerance_percent"] if "crank" in doc else doc["inputs"]["bf_tolerance_percent"]
    return {"op": "band_svg", "band": doc["balance_factor_band"], "contributions": doc["contributions"],
            "tolerance_points": tol, "title": title}


def band_figure_svg(doc: dict, title: str = "") -> str:
    """The band's picture as inline SVG (drawn by the sidecar when one runs, else here)."""
    from . import sidecar

    request = band_request(doc, title)
    tol = request["tolerance_points"]
    side = sidecar.active()
    answer = side.ask(request) if side is not None else None
    if answer is not None:
        svg = answer["svg"]
    else:
        from .plots import band_svg

        svg = band_svg(doc["balance_factor_band"], doc["contributions"], tolerance_points=tol,
                       title=title).decode("utf-8")
    svg = svg[svg.index("<svg"):]
    return re.sub(r'<svg([^>]*?) width="[^"]*" height="[^"]*"', r"<svg\1", svg, count=1)


_OK_BOX = ' style="border-color: var(--after); background: #f1f8f3"'
_OK_TEXT = ' style="color: var(--after)"'


def _pts(fraction: float, digits: int = 2) -> str:
    return _n(100.0 * fraction, digits)


def band_section(doc: dict) -> str:
    """The HTML of the section (empty for a document without a band, e.g. a trim)."""
    b = doc.get("balance_factor_band")
    if b is None:
        return ""
    u = doc["uncertainty"]
    r = u["residual_unbalance_band"]
    v = u["verdict"]
    c = doc["crank"]
    tol_pts = c["bf_tolerance_percent"]
    iso = r.get("iso_permissible_gmm")
    within = r["high_95_gmm"] <= r["tolerance_gmm"]
    parts = [
        '<div class="figures">',
        _figure("balance factor, 95 % of cranks (Monte Carlo)", f"{_n(b['low_95'], 4)} – {_n(b['high_95'], 4)}"),
        _figure("expected balance factor (mean)", _n(b["mean"], 4)),
        _figure("the plan's own figure / asked", f"{_n(b['nominal'], 4)} / {_n(b['asked'], 3)}"),
        _figure("standard uncertainty", f"±{_pts(b['u'])} points"),
        _figure("residual unbalance, 95 % of cranks within", f"{_n(r['high_95_gmm'], 1)} g·mm",
                "ok" if within else "bad"),
        _figure("the job's tolerance", f"{_n(r['tolerance_gmm'], 1)} g·mm (±{_n(tol_pts, 2)} points)"),
        _figure("ISO 21940-11 permissible residual", "–" if iso is None else f"{_n(iso, 1)} g·mm",
                "" if iso is None else ("ok" if r["high_95_gmm"] <= iso else "bad")),
        _figure("cranks within the tolerance", f"{_n(100.0 * r['within_tolerance_probability'], 1)} %",
                "ok" if within else "bad"),
        "</div>",
        # a tolerance within reach is good news: the caution box in the report's green
        f'<div class="caution" role="note"{_OK_BOX if v["attainable"] else ""}><strong'
        f'{_OK_TEXT if v["attainable"] else ""}>{"Attainable" if v["attainable"] else "Not attainable"}'
        f' with these instruments</strong><p>{_e(v["head"][0].upper() + v["head"][1:])}.</p>',
    ]
    if v.get("actions"):
        items = "".join(f"<li>{_e(a['text'])}</li>" for a in v["actions"])
        parts.append(f"<p>What would make it so, in order:</p><ol>{items}</ol>")
    if v.get("tail"):
        parts.append(f"<p>{_e(v['tail'][0].upper() + v['tail'][1:])}.</p>")
    parts.append("<p>Whatever the band, a balancing machine with the bob weight on the pin checks the finished "
                 "crank, and <code>geomgen trim</code> takes off what it finds.</p></div>")
    parts.append(f'<figure class="study">{band_figure_svg(doc)}<figcaption>Left: where cranks made to this plan '
                 f"land, {b['samples']} Monte Carlo draws of every input (JCGM 101:2008), with the first-order "
                 "normal curve of the same mean and standard uncertainty (JCGM 100:2008) and the asked balance "
                 "factor's tolerance. Right: how far each input alone swings the balance factor across its bounds."
                 "</figcaption></figure>")
    rows = [[_e(x["input"]), _e(x["source"]), _n(x["bf_points"], 3), _n(x["u_bf_points"], 3),
             _n(100.0 * x["share"], 1), f"{x['mean_shift_points']:+.3f}"] for x in doc["contributions"]]
    parts.append("<h3>Which input moves the balance factor most</h3>")
    parts.append(_table(["input", "bounds from", "± swing (BF points)", "standard uncertainty (BF points)",
                         "share of the variance (%)", "shift of the mean (BF points)"], rows, left=2))
    parts.append('<p class="note">One balance-factor point is 0.01 of the balance factor '
                 f"(m_reciprocating × stroke/2 / 100 = {_n(doc['crank']['tolerance_gmm'] / tol_pts, 1)} g·mm). "
                 "The swing is what the input alone does between its bounds, the others held; a group of "
                 "independent inputs adds its members' swings in quadrature. The shift of the mean is what an input "
                 "whose bounds lie to one side of the plan's value does to the expected balance factor: a drill "
                 "cuts over its size, an ISO 286 p6 plug is ground over its nominal diameter. Every input is taken "
                 "as equally likely anywhere between its bounds (JCGM 100:2008 4.3.7). The webs of one material "
                 "share one density (one bar, one heat: common practice); all plugs of one alloy share theirs.</p>")
    lin, ag = b["linear"], b["agreement"]
    rows = [["mean", _n(lin["mean"], 5), _n(b["mean"], 5)],
            ["standard uncertainty", _n(lin["u"], 5), _n(b["u"], 5)],
            ["95 % interval", f"{_n(lin['low_95'], 5)} – {_n(lin['high_95'], 5)} (± 1.96 u)",
             f"{_n(b['low_95'], 5)} – {_n(b['high_95'], 5)} (2.5 and 97.5 percentiles)"]]
    parts.append("<h3>Two ways: first order and Monte Carlo</h3>")
    parts.append(_table(["balance factor", "first order (JCGM 100:2008)", "Monte Carlo (JCGM 101:2008)"], rows,
                        left=1))
    verdict = ("validated: the first-order interval agrees with the Monte Carlo one" if ag["validated"] else
               "not validated: the output is not Gaussian enough for y ± 1.96 u to be its 95 % interval (its "
               "inputs are spread evenly between their bounds; the fewer they are, or the more one of them "
               "dominates, the flatter the output), so the Monte Carlo interval is the one to use")
    apart = _n(100.0 * abs(ag["u_ratio_mc_to_linear"] - 1), 2)
    parts.append(f'<p class="note">The standard uncertainties agree to {apart} '
                 f"%. JCGM 101:2008 8.2: the ends of the intervals differ by {_n(ag['d_low'], 5)} and "
                 f"{_n(ag['d_high'], 5)} against a numerical tolerance of {_n(ag['delta'], 6)}: {verdict}. "
                 f"{_e(r['note'])}. The closed forms at the plan's nominal inputs reproduce the planner's prediction "
                 f"to {u['model_check']['unbalance_gmm']:.1g} g·mm.</p>")
    rows = [[_e(t["key"]), _e(t["value"]), _e(t["source"])] for t in u["tolerances"]]
    parts.append("<h3>The tolerances used</h3>" + _table(["[tolerances] key", "bound", "from"], rows, left=3))
    parts.append(_calibration(doc))
    return "".join(parts)


def _calibration(doc: dict) -> str:
    rows, checks = [], []
    for w in doc["webs"]:
        c = w.get("calibration")
        if c is None:
            continue
        rc = c.get("range_check", {})
        fitted = (f"density {_n(c['density_g_cm3'], 4)} g/cm³ (was {_n(c['nominal_density_g_cm3'], 3)})"
                  if c["fitted"] == "density" else
                  f"thickness {_n(c['thickness_mm'], 3)} mm (was {_n(c['nominal_thickness_mm'], 3)})")
        ok = rc.get("within", True)
        span = f"{_n(rc.get('explained_low_g', math.nan), 1)} – {_n(rc.get('explained_high_g', math.nan), 1)} g"
        rows.append([_e(w["name"]), fitted, _n(c["weighed_g"], 1), _n(c["model_g"], 1),
                     _n(c["weighed_g"] - c["model_g"], 1), f"{c['moved_percent']:+.3f}",
                     f'<span class="{"ok" if ok else "bad"}">{"yes" if ok else "NO"}</span> ({span})'])
        m = c.get("measured_unbalance")
        if m is not None:
            checks.append([_e(w["name"]), _vec(m["measured_gmm"], 1), _vec(m["model_gmm"], 1),
                           f"{_n(m['difference_magnitude_gmm'], 1)} towards {_n(m['heavier_towards_deg'], 1)}°",
                           _n(m["explained_gmm"], 1), f"{_vec(m['part_com_mm'], 3)} / {_vec(m['model_com_mm'], 3)}",
                           f'<span class="{"ok" if m["within"] else "bad"}">{"yes" if m["within"] else "NO"}</span>'])
    if not rows:
        return ('<p class="note">No web was weighed: each web\'s density is taken anywhere in its material\'s range. '
                "Weighing a web as it is (<code>weighed</code>) lets geomgen fit its density to the scale.</p>")
    out = ["<h3>The webs as weighed</h3>",
           _table(["web", "fitted", "weighed (g)", "model (g)", "difference (g)", "moved (%)",
                   "explained by the material's range, thickness and scale"], rows, left=2),
           '<p class="note">The web as it was weighed, before any new work. The plan starts from the fitted web. A '
           "weighed mass outside what the material's density range, the thickness tolerance and the scale explain "
           "points to a wrong outline, a wrong material or a feature the model lacks.</p>"]
    if checks:
        out.append(_table(["web", "balancing stand x, y (g·mm)", "model x, y (g·mm)", "difference (g·mm)",
                           "explained up to (g·mm)", "centre of mass, part / model (mm)", "agree"], checks, left=1))
        out.append('<p class="note">Web frame, seen from its outer face, angles from +Y counter-clockwise; the '
                   "stand's heavy spot as read from the crankpin in the direction of rotation. The plan uses the "
                   "model; where they disagree, check the outline and balance the assembled crank.</p>")
    return "".join(out)
