"""report.html: one self-contained page a designer can read, print and send.

Everything is inline (CSS, the web pictures as SVG drawn here from the exact
loops, the study figure as SVG from geomgen.plots); nothing is fetched and no
script runs.  The page carries no date or path, so the same job gives the
same bytes.  Numbers come from the plan.json document and the study result;
nothing is recomputed here.
"""

from __future__ import annotations

import html
import math
import re

_CSS = """
:root { --ink: #1d2733; --muted: #5b6673; --line: #c9d1da; --soft: #f3f5f8; --warn: #8a3b12;
        --removed: #b8322a; --added: #1f5f8b; --before: #d9822b; --after: #2a7d4f; }
* { box-sizing: border-box; }
body { font: 15px/1.45 "Helvetica Neue", Arial, sans-serif; color: var(--ink); margin: 0 auto;
       max-width: 1120px; padding: 24px 28px 48px; background: #fff; }
h1 { font-size: 26px; margin: 0 0 2px; }
h2 { font-size: 19px; margin: 30px 0 8px; padding-bottom: 4px; border-bottom: 2px solid var(--ink); }
h3 { font-size: 16px; margin: 18px 0 6px; }
p.sub { color: var(--muted); margin: 0 0 14px; }
.caution { border: 3px solid var(--warn); background: #fff6ee; padding: 10px 16px; margin: 12px 0 18px; }
.caution strong { color: var(--warn); font-size: 16px; letter-spacing: .02em; }
.caution ul { margin: 6px 0 0 18px; padding: 0; }
.figures { display: grid; grid-template-columns: repeat(auto-fill, minmax(200px, 1fr)); gap: 10px; }
.figure { background: var(--soft); border-left: 4px solid var(--ink); padding: 8px 12px; }
.figure .k { color: var(--muted); font-size: 12.5px; }
.figure .v { font-size: 19px; font-weight: 600; }
.ok { color: var(--after); } .bad { color: var(--removed); }
table { border-collapse: collapse; margin: 6px 0 12px; font-size: 13.5px; }
th, td { border: 1px solid var(--line); padding: 3px 8px; text-align: right; vertical-align: top; }
th { background: var(--soft); font-weight: 600; }
td.l, th.l { text-align: left; }
td:not(.l) { white-space: nowrap; }
.pair { display: flex; flex-wrap: wrap; gap: 18px; }
.pair figure { margin: 0; flex: 1 1 420px; }
figcaption { font-size: 13px; color: var(--muted); }
svg.web { width: 100%; max-width: 520px; height: auto; border: 1px solid var(--line); background: #fff; }
.study svg { width: 100%; height: auto; }
.note { font-size: 13px; color: var(--muted); }
.legend span { display: inline-block; margin-right: 16px; font-size: 13px; }
.sw { display: inline-block; width: 12px; height: 12px; border: 1.5px solid; vertical-align: -1px; margin-right: 4px; }
@media print { body { max-width: none; padding: 0; font-size: 12px; } h2 { break-after: avoid; }
  .web-block, table, figure { break-inside: avoid; } }
"""


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _n(value, digits: int = 1) -> str:
    """A number for the page; '-0.0' reads as a sign that means nothing, so it is dropped."""
    text = f"{value:,.{digits}f}"
    return text[1:] if re.fullmatch(r"-0\.?0*", text.replace(",", "")) else text


def _vec(v, digits: int = 1) -> str:
    return ", ".join(_n(x, digits) for x in v)


_LEFT = ' class="l"'


def _table(head: list[str], rows: list[list[str]], *, left: int = 1) -> str:
    """An HTML table; the first `left` columns are text (left-aligned), the rest numbers."""
    def cells(row, tag):
        return "".join(f"<{tag}{_LEFT if i < left else ''}>{c}</{tag}>" for i, c in enumerate(row))
    body = "".join(f"<tr>{cells(r, 'td')}</tr>" for r in rows)
    return f"<table><thead><tr>{cells(head, 'th')}</tr></thead><tbody>{body}</tbody></table>"


# ------------------------------------------------------------------ web pictures
def _path(points) -> str:
    """SVG path data of a closed polygon given in the web frame (y up), mm; SVG's y runs down."""
    pts = " L".join(f"{x:.2f},{-y:.2f}" for x, y in points)
    return f"M{pts} Z"


def web_svg(w, *, features, com_before, com_after, title: str) -> str:
    """The web seen from its outer face, as inline SVG (viewBox in mm).

    w : pipeline.WebWork;  features : the features to draw;  com_* : (x, y, z) mm.
    """
    sec = w.section
    r = sec.rim_radius_max
    pad = 16.0
    half = r + pad
    chord = max(0.02, r / 800.0)
    out = [f'<svg class="web" xmlns="http://www.w3.org/2000/svg" viewBox="{-half:.1f} {-half - 6:.1f} '
           f'{2 * half:.1f} {2 * half + 12:.1f}" role="img" aria-label="{_e(title)}">']
    body = _path(sec.outer.oriented(True).points(chord))
    for b in sec.bores:
        body += " " + _path(b.oriented(False).points(chord))
    out.append(f'<path d="{body}" fill="#e4e8ee" stroke="#1d2733" stroke-width="0.6" fill-rule="evenodd"/>')
    for i, f in feature_numbers(w, features):
        pts = f.footprint().oriented(True).points(chord)
        dash = ' stroke-dasharray="2,1.2"' if f.hidden_in_face_view else ""
        style = 'fill="#1f5f8b" fill-opacity="0.85" stroke="#1f5f8b"' if f.fills else 'fill="#ffffff" stroke="#b8322a"'
        out.append(f'<path d="{_path(pts)}" {style} stroke-width="0.6"{dash}/>')
        tx, ty = f.tag_point()
        colour = "#ffffff" if f.fills else "#b8322a"
        out.append(f'<text x="{tx:.2f}" y="{-ty + 1.6:.2f}" font-size="4.6" text-anchor="middle" '
                   f'fill="{colour}" font-weight="bold">{_e(i)}</text>')
    # directions: crankpin up (+Y), counterweight down (-Y), crank axis cross
    out.append(f'<line x1="0" y1="{-(r + 4):.1f}" x2="0" y2="{r + 4:.1f}" stroke="#5b6673" stroke-width="0.3" '
               'stroke-dasharray="4,1.5,1,1.5"/>')
    out.append('<path d="M-4,0 H4 M0,-4 V4" stroke="#1d2733" stroke-width="0.5"/>')
    out.append(f'<text x="1.5" y="{-(r + 6):.1f}" font-size="4.6" fill="#1d2733">crankpin (+Y)</text>')
    out.append(f'<text x="1.5" y="{r + 10:.1f}" font-size="4.6" fill="#1d2733">counterweight (−Y)</text>')
    out.append(f'<text x="{-half + 2:.1f}" y="{-half:.1f}" font-size="4.6" font-weight="bold" fill="#1d2733">'
               f'{_e(title)}</text>')
    # labels well to the side with a leader, clear of the crank-axis cross and of each other
    for com, colour, label, dx, anchor in ((com_before, "#d9822b", "COM before", -12.0, "end"),
                                           (com_after, "#2a7d4f", "COM after", 12.0, "start")):
        if com is None:
            continue
        x, y = com[0], -com[1]
        out.append(f'<circle cx="{x:.2f}" cy="{y:.2f}" r="1.6" fill="none" stroke="{colour}" stroke-width="0.7"/>'
                   f'<path d="M{x - 2.6:.2f},{y:.2f} H{x + 2.6:.2f} M{x:.2f},{y - 2.6:.2f} V{y + 2.6:.2f}" '
                   f'stroke="{colour}" stroke-width="0.5"/>'
                   f'<line x1="{x + 0.2 * dx:.2f}" y1="{y:.2f}" x2="{x + 0.9 * dx:.2f}" y2="{y:.2f}" '
                   f'stroke="{colour}" stroke-width="0.3"/>'
                   f'<text x="{x + dx:.2f}" y="{y + 1.4:.2f}" font-size="3.8" text-anchor="{anchor}" '
                   f'fill="{colour}">{label}</text>')
    out.append("</svg>")
    return "".join(out)


def feature_numbers(w, features):
    """(label, feature) with the numbers of the sheet: E1.. for existing features, then the new ones."""
    n_existing = len(w.existing)
    index = {id(f): k for k, f in enumerate(w.all_features, start=1)}
    for f in features:
        k = index.get(id(f))
        yield (f"{'E' if k <= n_existing else ''}{k}", f)


# ------------------------------------------------------------------ sections
def _cautions(doc: dict) -> str:
    items = "".join(f"<li>{_e(c)}</li>" for c in doc.get("cautions", []))
    return (f'<div class="caution" role="note"><strong>Read this first</strong><ul>{items}</ul></div>')


def _figure(k: str, v: str, cls: str = "") -> str:
    return f'<div class="figure"><div class="k">{k}</div><div class="v {cls}">{v}</div></div>'


def _summary(doc: dict) -> str:
    c = doc["crank"]
    iso = c["iso_21940_11"]
    deviation = math.hypot(*c["deviation_gmm"])
    within = c["deviation_bf_percent"] <= c["bf_tolerance_percent"] + 1e-9
    iso_ok = deviation <= iso["permissible_residual_gmm"]
    return "".join([
        '<div class="figures">',
        _figure("balance factor asked", _n(c["balance_factor_asked"], 3)),
        _figure("balance factor achieved (exact solids)", _n(c["balance_factor_achieved"], 4)),
        _figure("crank deviation from target (magnitude)", f"{_n(deviation, 1)} g·mm"),
        _figure("deviation in balance-factor percent",
                f"{_n(c['deviation_bf_percent'], 3)} % of ±{_n(c['bf_tolerance_percent'], 2)} %",
                "ok" if within else "bad"),
        _figure(f"ISO 21940-11 G{_n(iso['grade_mm_s'], 1)} permissible residual",
                f"{_n(iso['permissible_residual_gmm'], 1)} g·mm", "ok" if iso_ok else "bad"),
        _figure("bob weight to hang on the assembled crank", f"{_n(c['bob_weight_g'], 1)} g"),
        _figure("mass the webs counter at the pin radius", f"{_n(c['countered_at_pin_g'], 1)} g"),
        _figure("couple, as unbalance in each web's plane", f"±{_n(c['plane_unbalance_gmm'], 1)} g·mm",
                "ok" if c["plane_unbalance_gmm"] <= c["warn_above_gmm"] else "bad"),
        "</div>",
        f'<p class="note">The deviation is the two webs summed in the crank frame (web a\'s), from the exact '
        f'solids, against the target {_vec(c["target_gmm"])} g·mm, held as a vector magnitude (ISO 21940-11 treats '
        f'unbalance as a vector). Bob weight: {_e(c["bob_weight_note"])}; {_e(c["countered_note"])}. '
        f'ISO 21940-11: {_e(iso["formula"])}, with m = {_n(iso["rotor_mass_kg"], 3)} kg ({_e(iso["rotor_mass_note"])}) '
        f'at {_n(doc["engine"]["max_rpm"], 0)} rpm; {_e(iso["grade_note"])}.</p>',
    ])


def _band(doc: dict) -> str:
    """How sure the balance factor is (geomgen.band_report), for a document that has the band."""
    if "balance_factor_band" not in doc:
        return ""
    from .band_report import band_section

    return "<h2>How sure is the balance factor</h2>" + band_section(doc)


def _warnings(doc: dict) -> str:
    lines = doc.get("warnings", [])
    if not lines:
        return ""
    items = "".join(f"<li>{_e(w)}</li>" for w in lines)
    return f'<div class="caution" role="note"><strong>Look at these</strong><ul>{items}</ul></div>'


def _couple(doc: dict) -> str:
    c = doc["crank"]
    rows = [["couple about the rod's plane x, y (g·mm²)", _vec(c["couple_gmm2"], 0)],
            ["distance between the webs' mid-planes (mm)", _n(c["plane_distance_mm"], 1)],
            ["as opposite unbalances in those planes (g·mm)", f"±{_n(c['plane_unbalance_gmm'], 1)}"],
            ["flagged above (g·mm)", _n(c["warn_above_gmm"], 1)],
            ["webs' lever arms from the rod's plane (mm)", ", ".join(_n(v, 1) for v in c["levers_mm"])]]
    if "couple_free_shares" in c:
        rows.append(["split of the target that leaves no couple",
                     ", ".join(f"{_e(k)} {_n(v, 3)}" for k, v in c["couple_free_shares"].items())])
    return (_table(["couple (moment unbalance)", "value"], rows)
            + f'<p class="note">The couple is taken {_e(c["couple_note"])}; it is shown as '
              f'{_e(c["plane_unbalance_note"].removeprefix("the couple as "))}. Identical webs do not '
              "cancel a couple when their features lie off the Y axis or on one face only: turned 180° about Y, "
              "web b's x–z product keeps its sign.</p>")


def _engine(doc: dict) -> str:
    e = doc["engine"]
    c = doc["crank"]
    rows = [["stroke", f"{_n(e['stroke_mm'], 2)} mm"], ["rod length (centres)", f"{_n(e['rod_length_mm'], 2)} mm"],
            ["max speed", f"{_n(e['max_rpm'], 0)} rpm"], ["cylinder tilt", f"{_n(e['cylinder_tilt_deg'], 1)} deg"],
            ["rotation (seen from web a's outer face)",
             "counter-clockwise" if e.get("rotation", "ccw") == "ccw" else "clockwise"],
            ["balance factor asked", _n(e["balance_factor"], 3)]]
    masses = [[f"reciprocating: {_e(k)}", f"{_n(v, 1)} g"] for k, v in e["reciprocating_g"].items()]
    masses.append(["<b>reciprocating, total</b>", f"<b>{_n(e['m_reciprocating_g'], 1)} g</b>"])
    masses += [[f"rod's rotating end: {_e(k)}", f"{_n(v, 1)} g"] for k, v in e["rotating_g"].items()]
    masses.append(["<b>rod's rotating end, total</b> (at the pin radius)", f"<b>{_n(e['m_rotating_g'], 1)} g</b>"])
    masses += [[f"crank's own part: {_e(k)}", f"{_n(v, 1)} g"] for k, v in e.get("crank_parts_g", {}).items()]
    masses.append(["<b>crank's own parts, total</b> (at the pin radius, never on the bob)",
                   f"<b>{_n(e.get('m_crank_parts_g', 0.0), 1)} g</b>"])
    masses.append(["bob weight to hang on the assembled crank = rod's rotating end + balance factor × reciprocating",
                   f"<b>{_n(c['bob_weight_g'], 1)} g</b>"])
    masses.append(["mass the webs counter at the pin radius = bob weight + crank's own parts",
                   f"<b>{_n(c['countered_at_pin_g'], 1)} g</b>"])
    return ('<div class="pair"><div>' + _table(["engine", "value"], rows) + "</div><div>"
            + _table(["weighed parts", "mass"], masses, left=1) + "</div></div>")


def _balance_table(doc: dict) -> str:
    rows = []
    for w in doc["webs"]:
        achieved = w.get("exact", w["predicted"])["unbalance_gmm"]
        ok = w["within_tolerance"]
        rows.append([_e(w["name"]), _e(w["method"]), _vec(w["target_gmm"]), _vec(achieved),
                     f"{_n(w['tolerance_gmm'], 1)}", _vec(w["deviation_gmm"], 2), _share(w),
                     _n(w["deviation_bf_percent"], 3),
                     f'<span class="{"ok" if ok else "bad"}">{"yes" if ok else "NO"}</span>'])
    return _table(["web", "method", "target x, y (g·mm)", "achieved x, y, exact solid (g·mm)",
                   "allowed |deviation| (g·mm)", "deviation x, y (g·mm)", "|deviation| / allowed",
                   "|deviation| on the crank's BF scale (%)", "within tolerance"], rows, left=2)


def _share(w: dict) -> str:
    share = w.get("deviation_share_of_tolerance")
    return "–" if share is None else f"{_n(100 * share, 1)} %"


def _plug_range(doc: dict) -> str:
    r = doc.get("plug_density_range")
    if r is None:
        return ""
    rows = [[_e(n), _n(m["min_g_cm3"], 2), _n(m["nominal_g_cm3"], 3), _n(m["max_g_cm3"], 2), _e(m["source"])]
            for n, m in r["materials"].items()]
    effect = [["lightest alloy allowed", _vec(r["unbalance_change_at_low_gmm"], 1),
               f"{r['balance_factor_change_at_low_percent']:+.2f}"],
              ["heaviest alloy allowed", _vec(r["unbalance_change_at_high_gmm"], 1),
               f"{r['balance_factor_change_at_high_percent']:+.2f}"]]
    return ("<h3>Plug density: the ends of the standard's range</h3>"
            + _table(["plug material", "min (g/cm³)", "planned (g/cm³)", "max (g/cm³)", "source"], rows, left=1)
            + _table(["all plugs of", "crank unbalance change x, y (g·mm)", "balance factor change (%)"],
                     effect, left=1)
            + f'<p class="note">{_e(r["note"])}.</p>')


def _study_figures(study: dict | None) -> str:
    if study is None:
        return ""
    from .study import peak_line

    t = study["inertia_torque"]
    rows = [["peak residual force", _e(peak_line(study).split(": ", 1)[1])],
            ["at TDC / at BDC", f"{_n(study['tdc']['resultant_N'], 0)} N / {_n(study['bdc']['resultant_N'], 0)} N"],
            ["reciprocating inertia torque about the crank axis",
             f"peak {_n(t['peak_Nm'], 1)} N·m at {_n(t['at_crank_angle_deg'], 1)}° after TDC; "
             + ", ".join(f"order {k}: {_n(v, 1)} N·m" for k, v in t["harmonics_Nm"].items())]]
    if study["inputs"].get("balancer") is not None:
        at = study.get("balancer_couple_at_crank_angle_deg")
        rows.append(["balancer shaft's rocking couple about the crank axis",
                     f"peak {_n(study['balancer_couple_peak_Nm'], 1)} N·m"
                     + (f" at {_n(at, 1)}° after TDC" if at is not None else "")])
    return (_table(["what the study knows", "value"], rows, left=2)
            + f'<p class="note">{_e(t["note"])}. Crank angles are measured from TDC in the direction of rotation; '
              "force directions from +Y, counter-clockwise in the crank frame (web a seen from its outer face).</p>")


def _sheet_notes(job, doc: dict, webs=None) -> str:
    from .sheet import sheet_notes

    items = "".join(f"<li>{_e(line)}</li>" for line in sheet_notes(job, doc, webs))
    return f'<ul class="note">{items}</ul>'


def _trim(doc: dict) -> str:
    t = doc.get("trim")
    if t is None:
        return ""
    rows = [["measured unbalance (assembled crank, with its bob weight)", f"{_n(t['measured_gmm'], 1)} g·mm"],
            ["heavy spot as read", f"{_n(t['reading_deg'], 1)}° from the crankpin, {_e(t['reading_direction'])}"],
            ["crank's rotation (seen from web a's outer face)",
             "counter-clockwise" if t["rotation"] == "ccw" else "clockwise"],
            ["heavy spot in the crank frame", f"{_n(t['heavy_spot_crank_frame_deg'], 1)}° from +Y, counter-clockwise; "
                                             f"{_vec(t['heavy_spot_gmm'], 1)} g·mm"],
            ["taken off", _e(t["on_webs"])]]
    rows += [[f"change on web {_e(k)} (crank frame)", f"{_vec(v, 1)} g·mm"] for k, v in t["change_per_web_gmm"].items()]
    rows += [["change, both webs (crank frame)", f"{_vec(t['change_gmm'], 1)} g·mm"],
             ["left of the measured unbalance", f"{_vec(t['left_gmm'], 2)} g·mm "
                                                f"({_n(100 * t['left_share_of_measured'], 2)} % of it)"]]
    return ("<h2>Trim: the measured heavy spot and what is taken off</h2>" + _table(["trim", "value"], rows, left=2)
            + '<p class="note">Spin the crank again with the same bob weight after the trim; what is left is the '
              "prediction, the machine has the last word.</p>")


def _feature_rows(w, entry: dict) -> list[list[str]]:
    tables = entry["existing_features"] + entry["planned_features"]
    rows = []
    for (label, f), t in zip(feature_numbers(w, w.all_features), tables):
        eff = t["effect"]
        status = "existing" if label.startswith("E") else "new"
        c = f.report_cells()
        rows.append([label, status, _e(c.kind), _e(f.face), _e(c.where), _e(c.size), _e(c.depth),
                     _n(eff["mass_g"], 2), _vec(eff["unbalance_gmm"])])
    return rows


def _model_section(w) -> str:
    """A model web's section along Y (geomgen.model_view), inline; nothing for a prism web."""
    if getattr(w.section, "model", None) is None or getattr(w.section.model, "shape", None) is None:
        return ""
    from .model_view import section_svg
    from .nc.report_section import _svg_inline

    svg = section_svg(w, title=f"web {w.spec.name}")
    return (f'<figure class="study">{_svg_inline(svg)}<figcaption>Web {_e(w.spec.name)} cut along its Y axis: '
            "the model's thickness profile and each new feature's depth from the face it enters, numbered as "
            "on the sheet.</figcaption></figure>")


def _prism_note(entry: dict) -> str:
    """For a web given as a 3D model: what a flat prism of its outline and mean thickness would have said."""
    c = entry.get("prism_comparison")
    if c is None:
        return ""
    share = c["prism_error_share_of_tolerance"]
    return (f'<p class="note"><b>Planned on the 3D model.</b> A flat web of the same outline and its mean '
            f'thickness ({_n(c["mean_thickness_mm"], 2)} mm) would have put the bare web at '
            f'{_vec(c["prism_unbalance_gmm"])} g·mm; the model is at {_vec(c["model_unbalance_gmm"])} g·mm: '
            f'{_n(c["prism_error_gmm"], 1)} g·mm apart'
            + (f", {_n(100 * share, 0)} % of the web's allowed deviation" if share is not None else "")
            + ", the error a flat drawing would have carried into the plan.</p>")


def _web_block(w, entry: dict) -> str:
    before = w.existing
    pics = [
        web_svg(w, features=before, com_before=entry["before"]["com_mm"], com_after=None,
                title=f"web {w.spec.name} before"),
        web_svg(w, features=w.all_features, com_before=entry["before"]["com_mm"],
                com_after=entry["predicted"]["com_mm"], title=f"web {w.spec.name} after"),
    ]
    caps = [f"Before: {_n(entry['before']['mass_g'], 1)} g, centre of mass "
            f"{_vec(entry['before']['com_mm'][:2], 2)} mm, unbalance {_vec(entry['before']['unbalance_gmm'])} g·mm.",
            f"After: {_n(entry['predicted']['mass_g'], 1)} g, centre of mass "
            f"{_vec(entry['predicted']['com_mm'][:2], 2)} mm, unbalance "
            f"{_vec(entry['predicted']['unbalance_gmm'])} g·mm."]
    figs = "".join(f"<figure>{p}<figcaption>{c}</figcaption></figure>" for p, c in zip(pics, caps))
    rows = _feature_rows(w, entry)
    table = _table(["no", "status", "kind", "face", "where (web frame)", "diameter (mm)", "depth (mm)",
                    "mass change (g)", "unbalance change x, y (g·mm)"], rows, left=5) + \
        ('<p class="note">Mass change of a plug: the plug less the web material its bore took out '
         "(the plug's own mass is in the loads table).</p>" if any(f.fills for f in w.all_features)
         else "") if rows else "<p>No features: the web already meets its target.</p>"
    considered = "".join(f"<li>{_e(c)}</li>" for c in entry.get("considered", []))
    size = (f"given as a 3D model, {_n(entry['thickness_mm'], 2)} mm high overall"
            if getattr(w.section, "model", None) is not None else f"{_n(entry['thickness_mm'], 2)} mm thick")
    return "".join([
        f'<div class="web-block"><h3>Web {_e(w.spec.name)}: {size}, '
        f'{_e(entry["material"])} ({_n(entry["density_g_cm3"], 3)} g/cm³), crankpin bore '
        f'{_n(entry["pin_bore_mm"], 2)} mm</h3>',
        '<p class="legend"><span><i class="sw" style="border-color:#b8322a;background:#fff"></i>material taken off'
        '</span><span><i class="sw" style="border-color:#1f5f8b;background:#1f5f8b"></i>heavy-metal plug</span>'
        '<span>dashed outline: cut from the inner face, or inside the web (a radial hole)</span>'
        '<span style="color:#d9822b">⊕ COM before</span><span style="color:#2a7d4f">⊕ COM after</span></p>',
        f'<div class="pair">{figs}</div>',
        f"<p><b>Why this plan:</b> {_e(entry['why'])}. <b>What limits it:</b> {_e(entry['binding'])}.</p>",
        _prism_note(entry),
        _model_section(w),
        # the planner's `why` usually lists what it tried; show the list only when it adds to it
        f"<ul class=\"note\">{considered}</ul>" if considered and not all(
            c in entry["why"] for c in entry.get("considered", [])) else "",
        table, "</div>"])


def _verification(doc: dict) -> str:
    parts = []
    for w in doc["webs"]:
        if "exact" not in w:
            parts.append(f"<p>Web {_e(w['name'])}: not verified on a solid in this run.</p>")
            continue
        p, x, m = w["predicted"], w["exact"], w["mesh"]
        bound = w["agreement"]["mesh_bound"]
        # plan.json keeps 6 significant figures: print no more than that, or equal numbers look apart
        rows = [["mass (g)", _n(p["mass_g"], 2), _n(x["mass_g"], 2), _n(m["mass_g"], 2), f"±{_n(bound['mass_g'], 2)}"],
                ["centre of mass x, y, z (mm)", _vec(p["com_mm"], 4), _vec(x["com_mm"], 4), _vec(m["com_mm"], 4), ""],
                ["unbalance x, y (g·mm)", _vec(p["unbalance_gmm"], 2), _vec(x["unbalance_gmm"], 2),
                 _vec(m["unbalance_gmm"], 2), f"±{_n(bound['unbalance_gmm'], 2)}"],
                ["I<sub>z</sub> about the crank axis (kg·mm²)", _n(p["inertia_z_gmm2"] / 1e3, 2),
                 _n(x["inertia_z_gmm2"] / 1e3, 2), _n(m["inertia_z_gmm2"] / 1e3, 2),
                 f"±{_n(bound['inertia_z_gmm2'] / 1e3, 2)}"]]
        pe = w["agreement"]["predicted_vs_exact"]
        parts.append(f"<h3>Web {_e(w['name'])}</h3>" + _table(
            ["", "predicted (closed forms)", "exact B-rep (STEP solid)", "mesh (STL)", "stated mesh bound"], rows)
            + f'<p class="note">Prediction vs exact solid: unbalance apart by {pe["unbalance_gmm"]:.3g} g·mm, mass by '
              f'{pe["mass_rel"]:.2g} relative. The mesh is checked only against its stated bound (STL chord '
              f'{_n(bound["tolerance_mm"], 3)} mm); it always reads a little light.</p>')
    return "".join(parts)


def _safety(doc: dict) -> str:
    s = doc["safety"]
    out = []
    if s["plugs"]:
        rows = [[_e(p["web"]), str(p["feature"]), _n(p["diameter_mm"], 2), _n(p["length_mm"], 2), _n(p["mass_g"], 2),
                 _n(p["radius_mm"], 2), _n(p["load_N_max_rpm"], 0), _n(p["load_N_overspeed"], 0)] for p in s["plugs"]]
        out.append(_table(["web", "feature", "diameter (mm)", "length (mm)", "plug mass (g)", "radius (mm)",
                           f"load at {_n(s['max_rpm'], 0)} rpm (N)", f"load at {_n(s['overspeed_rpm'], 0)} rpm (N)"],
                          rows, left=2))
        out.append('<p class="note">Centrifugal pull of each plug on its bore, F = m ω² r. The retention (press '
                   'fit, staking, welding or a cross pin) must be rated for the overspeed figure, with margin.</p>')
    else:
        out.append("<p>No heavy-metal plugs in this plan.</p>")
    rows = [[_e(d["web"]), _n(d["outer_radius_mm"], 2), _n(d["bore_radius_mm"], 2),
             _n(d["hoop_stress_MPa_max_rpm"], 1), _n(d["hoop_stress_MPa_overspeed"], 1)] for d in s["discs"]]
    out.append("<h3>Rotating-disc hoop-stress screen</h3>")
    out.append(_table(["web", "outer radius (mm)", "central bore radius (mm)",
                       f"hoop stress at {_n(s['max_rpm'], 0)} rpm (MPa)",
                       f"at {_n(s['overspeed_rpm'], 0)} rpm (MPa)"], rows))
    out.append(f'<p class="note"><b>Caveat:</b> {_e(s["disc_method"])}. Use it to spot a design that needs a '
               "proper stress check, never to clear one.</p>")
    out.append("<h3>Crankpin press fit</h3>")
    if s.get("press_fit"):
        rows = [[_e(f["web"]), f"{_e(f['web_material'])} / {_e(f['pin_material'])}", _n(f["interference_mm"], 3),
                 _n(f["pin_diameter_mm"], 2), _n(f["pin_inner_diameter_mm"], 2),
                 f"{_n(f['hub_outer_diameter_mm'], 2)} ({_e(f['hub_edge'])})",
                 f"{_n(f['contact_pressure_MPa'], 0)} – {_n(f['contact_pressure_MPa_unbounded_hub'], 0)}",
                 _n(f["web_hoop_MPa"], 0), _n(f["pin_hoop_MPa"], 0)] for f in s["press_fit"]]
        out.append(_table(["web", "web / pin material", "interference, diametral (mm)", "pin (mm)",
                           "crankpin's own bore (mm)", "web as a ring, outer diameter (mm)", "contact pressure (MPa)",
                           "web hoop stress at the bore (MPa)", "pin hoop stress, largest (MPa)"], rows, left=2))
        out.append(f'<p class="note">{_e(s["press_fit_method"])} The pressure runs from the ring to the unbounded '
                   "web; a negative hoop stress is compression.</p>")
    else:
        out.append("<p>No press-fit screen: the job gives no <code>pin_interference</code>.</p>")
    out.append("<h3>Wall around the crankpin bore</h3>")
    rows = [[_e(g["web"]),
             "no features" if g["feature"] is None else f"{g['feature']} ({_e(g['feature_kind'])}, "
                                                         f"{_e(g['feature_origin'])})",
             "–" if g["ligament_mm"] is None else
             (f'<span class="bad">{_n(g["ligament_mm"], 2)}</span>' if g["below_pin_wall"]
              else _n(g["ligament_mm"], 2)),
             _n(g["pin_wall_mm"], 2), f"{_n(g['edge_wall_mm'], 2)} ({_e(g['edge'])})"]
            for g in s.get("pin_ligaments", [])]
    out.append(_table(["web", "nearest feature", "least wall to it (mm)", "pin_wall asked (mm)",
                       "least wall to a free edge (mm)"], rows, left=2))
    out.append(f'<p class="note">{_e(s.get("pin_ligament_method", ""))}</p>')
    if s.get("plug_walls"):
        out.append("<h3>Wall between each plug and the rim</h3>")
        rows = [[_e(p["web"]), str(p["feature"]), _n(p["wall_to_rim_mm"], 2), _n(p["load_N_overspeed"], 0),
                 _n(p["bearing_MPa_max_rpm"], 1), _n(p["bearing_MPa_overspeed"], 1),
                 "–" if p["wall_shear_MPa_max_rpm"] is None else _n(p["wall_shear_MPa_max_rpm"], 1),
                 "–" if p["wall_shear_MPa_overspeed"] is None else _n(p["wall_shear_MPa_overspeed"], 1)]
                for p in s["plug_walls"]]
        out.append(_table(["web", "feature", "wall to the rim (mm)", f"load at {_n(s['overspeed_rpm'], 0)} rpm (N)",
                           f"bearing at {_n(s['max_rpm'], 0)} rpm (MPa)", f"at {_n(s['overspeed_rpm'], 0)} rpm (MPa)",
                           f"wall shear at {_n(s['max_rpm'], 0)} rpm (MPa)",
                           f"at {_n(s['overspeed_rpm'], 0)} rpm (MPa)"],
                          rows, left=2))
        out.append(f'<p class="note">{_e(s["plug_wall_method"])}</p>')
    if s.get("plug_fits"):
        out.append("<h3>Each plug's press fit against its pull</h3>")

        def margin(p):
            if p["margin_overspeed"] is None:
                return "not screened" if not p["screened"] else "–"
            text = _n(p["margin_overspeed"], 2)
            return f'<span class="bad">{text}</span>' if p["thin"] else text

        rows = [[_e(p["web"]), str(p["feature"]), _e(p["fit"]), str(p["interference_min_um"]),
                 f"{_n(p['web_ring_outer_diameter_mm'], 2)} ({_e(p['ring_edge'])})",
                 "–" if p["contact_pressure_MPa_min"] is None else _n(p["contact_pressure_MPa_min"], 1),
                 "–" if p["bearing_MPa_overspeed"] is None else _n(p["bearing_MPa_overspeed"], 1), margin(p)]
                for p in s["plug_fits"]]
        out.append(_table(["web", "feature", "fit", "least interference (µm)", "web as a ring, outer diameter (mm)",
                           "least contact pressure (MPa)", f"bearing at {_n(s['overspeed_rpm'], 0)} rpm (MPa)",
                           "margin"], rows, left=3))
        out.append(f'<p class="note">{_e(s["plug_fit_method"])}</p>')
    if "screen_caution" in s:
        out.append(f'<p class="note"><b>{_e(s["screen_caution"])}</b></p>')
    return "".join(out)


def _study(study: dict | None, figure: bytes | None = None) -> str:
    if study is None:
        return "<p>No balance study in this run.</p>"
    if figure is None:
        from .plots import study_svg

        figure = study_svg(study)
    svg = figure.decode("utf-8")
    # keep the <svg> element only: an XML declaration or DOCTYPE is not allowed inside HTML
    svg = svg[svg.index("<svg"):]
    svg = re.sub(r'<svg([^>]*?) width="[^"]*" height="[^"]*"', r"<svg\1", svg, count=1)
    bal = study["inputs"].get("balancer")
    note = ("the job has a balancer shaft: solid lines with it, dashed without" if bal else
            "the job has no balancer shaft")
    return (f'<div class="study">{svg}</div><p class="note">Left: the tip of the residual shaking force over one '
            f"revolution at max speed, webs at target, drawn in the crank frame seen from +Z (+Y up, towards the "
            f"cylinder head when it is upright): the distance from the centre is the force, the direction from the "
            f"centre its direction. Right: the peak force against the balance factor; {note}. Smallest peak at "
            f"balance factor {_n(study['best_balance_factor'], 2)}.</p>")


def report_html(*, job, doc: dict, webs, study: dict | None, study_svg: bytes | None = None, nc=None) -> bytes:
    """The report as UTF-8 bytes.

    job : geomgen.job.Job;  doc : the plan.json dict;  webs : pipeline.WebWork list;
    study : the study.study() result (its figure), or None;  study_svg : that figure, when already drawn;
    nc : the checked NC programs (geomgen.nc.run.NCResult), or None.
    """
    from .nc.report_section import section_html

    title = (f"Crank web trim: {doc['job']}" if doc["command"] == "trim"
             else f"Crank web correction: {doc['job']}")
    blocks = "".join(_web_block(w, entry) for w, entry in zip(webs, doc["webs"]))
    body = [
        f"<h1>{_e(title)}</h1>",
        f'<p class="sub">geomgen {_e(doc.get("geomgen_version", ""))}, command “{_e(doc["command"])}”. '
        "Lengths in mm, masses in g, unbalance in g·mm. Web frame: crank axis at the centre, crankpin on +Y, "
        "counterweight on −Y, seen from the outer face; angles from +Y, counter-clockwise.</p>",
        _cautions(doc), _warnings(doc), _trim(doc),
        "<h2>Result at a glance</h2>", _summary(doc), _band(doc),
        "<h2>Engine and weighed masses</h2>", _engine(doc),
        "<h2>Balance of each web</h2>", _balance_table(doc),
        "<h2>Couple</h2>", _couple(doc), _plug_range(doc),
        "<h2>Shaking force and balance-factor sweep</h2>", _study(study, study_svg), _study_figures(study),
        "<h2>The webs before and after</h2>", blocks,
        "<h2>Verification: prediction, exact solid and mesh</h2>", _verification(doc),
        "<h2>Loads at speed</h2>", _safety(doc),
        section_html(nc),
        "<h2>Reading the shop sheet</h2>", _sheet_notes(job, doc, webs),
        f'<p class="note">Files of this plan: plan.json, operations.csv (the machinist\'s sheet, '
        f"{_e(job.output.sheet_units)}), drawing.dxf, the STEP and STL of each web, an NC program per web and "
        "face with new work. "
        "These figures are design aids, not a release for service.</p>",
    ]
    page = ('<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
            f'<meta name="viewport" content="width=device-width, initial-scale=1"><title>{_e(title)}</title>'
            f"<style>{_CSS}</style></head><body>\n" + "\n".join(body) + "\n</body></html>\n")
    return page.encode("utf-8")
