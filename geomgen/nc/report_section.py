"""The report's section on the NC programs: how to prove them out, and per program its tools, its time,
what its check found and its back-plot."""

from __future__ import annotations

import html
import re

PROVE_OUT = (
    "Read the program's header first: work zero, safe height, R plane and the tool list with each tool's reach.",
    "Load the tools as listed, each with the length offset H of its own number; measure them.",
    "Set the work zero as the header says and check it: touch or indicate the crankpin bore and compare its "
    "centre with the position the header gives.",
    "Dry run: raise the Z work offset well above the part (by more than the deepest cut), run the whole program "
    "in the air with the feed and rapid overrides low and a hand on feed hold; compare what the machine does "
    "with the back-plot below.",
    "Then cut: single-block the first move of each tool into the part, watch the first hole and the first "
    "layer of each pocket, and measure before going on (a plug bore before pressing, against the sheet's "
    "limits).",
    "The program is a design aid: the machinist's judgement, the tool makers' data and the shop's practice "
    "decide the speeds, feeds, work holding and the order of work.",
)


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _svg_inline(data: bytes) -> str:
    svg = data.decode("utf-8")
    svg = svg[svg.index("<svg"):]
    return re.sub(r'<svg([^>]*?) width="[^"]*" height="[^"]*"', r"<svg\1", svg, count=1)


def section_html(nc) -> str:
    """The HTML of the section, from a geomgen.nc.run.NCResult."""
    if nc is None:
        return ""
    if not nc.programs:
        if nc.notes:
            return "<h2>NC programs</h2>" + "".join(f'<p class="note">{_e(n)}</p>' for n in nc.notes)
        return ("<h2>NC programs</h2><p>No new work on a face or the rim, or [machining] programs = false: "
                "no program was written.</p>")
    steps = "".join(f"<li>{_e(s)}</li>" for s in PROVE_OUT)
    out = ["<h2>NC programs</h2>",
           '<div class="caution" role="note"><strong>Before a program touches metal</strong><ol>' + steps
           + "</ol></div>",
           '<p class="note">One ISO 6983 program per web and face with new work (web-&lt;name&gt;-&lt;face&gt;.nc; '
           "the rim set-up of radial holes as web-&lt;name&gt;-rim.nc), plain G and M codes, absolute, in the "
           "sheet's units. Each was read back by an independent G-code parser (pygcode), simulated (canned cycles "
           "and arcs expanded) and held to the plan before it was written. The times are path lengths over the "
           "feeds and the rapid rate, plus the tool changes; set-up, measuring and indexing are extra.</p>"]
    for r in nc.programs:
        p, c = r.program, r.checked
        unit = "mm" if p.units == "mm" else "in"
        scale = 1.0 if p.units == "mm" else 1.0 / 25.4
        rows = []
        for n, t in sorted(p.tools.items()):
            cut = p.cuts[n]
            rows.append(f"<tr><td>T{n}</td><td class=\"l\">{_e(t.kind.replace('_', ' '))}</td>"
                        f"<td>{t.diameter * scale:.4g}</td><td>{p.reach[n] * scale:.4g}</td><td>{cut.rpm:.0f}</td>"
                        f"<td>{cut.feed_mm_min * scale:.4g}</td><td class=\"l\">{_e(cut.source)}</td></tr>")
        table = ("<table><thead><tr><th>tool</th><th class=\"l\">kind</th><th>diameter " + unit + "</th><th>reach "
                 + unit + "</th><th>S rpm</th><th>F " + unit + "/min</th><th class=\"l\">cutting data</th></tr>"
                 "</thead><tbody>" + "".join(rows) + "</tbody></table>")
        found = "; ".join(c.lines)
        feats = ", ".join(str(n) for n, _ in p.features)
        out.append(f"<h3>{_e(p.name)}: web {_e(p.web)}, {_e(p.face)}{' face' if p.face != 'rim' else ''}</h3>"
                   f"<p>Features {feats}; about <b>{c.time_s / 60:.1f} min</b> of machining. Checked: {_e(found)}.</p>"
                   + table + f'<figure class="study">{_svg_inline(r.backplot_svg)}<figcaption>Back-plot of '
                   f"{_e(p.name)}: feeds solid (one colour per tool), rapids dashed; dotted: the planned features, "
                   "numbered as on the sheet.</figcaption></figure>")
    for note in nc.notes:
        out.append(f'<p class="note">{_e(note)}</p>')
    return "".join(out)
