"""drawing.dxf: each web's face view in its own frame, for the shop and for CAM.

Every web is drawn as seen from its outer face (the contract's web frame:
crank axis at the web's cross, crankpin on +Y, counterweight on -Y), side by
side: web i is shifted along +X so it clears the one before it, and a note
says by how much.  Each web has its own layers (`<web>-OUTLINE`, `-BORES`,
`-FEATURES`, `-COM`, `-AXES`, `-TABLE`, `-DIMS`); features cut from the inner
face are drawn dashed where they lie in the web frame.  Holes and plugs are
CIRCLEs, kidney pockets one closed LWPOLYLINE of exact arcs (bulges) and
lines, so CAM can pick each as one contour.  Under each web one table per
feature kind (geomgen.drawing_tables); the numbers tagged on the view are
the steps of operations.csv.  Units: mm ($INSUNITS = 4); styles in
geomgen.drawing_style.
"""

from __future__ import annotations

import io
import math

from .drawing_style import DIM_COLOUR, DIM_STYLE, new_document
from .drawing_tables import headings, note, web_rows

TEXT_H = 2.5          # mm, table and label text
TITLE_H = 4.0         # mm
ROW_H = 4.2           # mm between table lines
TABLE_GAP = 3.0       # mm between one table and the next
GAP_MM = 40.0         # mm between one web's drawing (or table) and the next
#: width of a character when sizing columns, mm: wide enough for LibreCAD's "standard" font (its average
#: advance is 0.72 of the height) and for the txt font of other readers
CHAR_W = 0.8 * TEXT_H
COLUMN_PAD = 4.0      # mm between columns
CURVE_CHORD_MM = 1e-3  # mm, a spline or an ellipse of an outline is drawn as chords within this of it

_LAYERS = {"OUTLINE": 7, "BORES": 8, "FEATURES": 1, "COM": 3, "AXES": 5, "TABLE": 7, "DIMS": DIM_COLOUR}


def _layers(doc, web: str) -> dict[str, str]:
    names = {}
    for key, colour in _LAYERS.items():
        name = f"{web}-{key}"
        if name not in doc.layers:
            doc.layers.add(name, color=colour)
        names[key] = name
    return names


def _text(msp, text: str, at, *, layer: str, height: float = TEXT_H, align: str = "LEFT"):
    from ezdxf.enums import TextEntityAlignment

    t = msp.add_text(text, height=height, dxfattribs={"layer": layer})
    t.set_placement((float(at[0]), float(at[1])), align=TextEntityAlignment[align])
    return t


def add_loop(msp, loop, *, offset, layer: str, linetype: str | None = None):
    """One closed loop: a CIRCLE if it is one (drawn solid), else a closed
    LWPOLYLINE with bulges (bulge = tan(sweep / 4), positive counter-clockwise)
    for its arcs; a dashed circle is a closed LWPOLYLINE of two half circles."""
    from .loops import Arc

    attribs = {"layer": layer}
    if linetype:
        attribs["linetype"] = linetype
    ox, oy = offset
    c = loop.as_circle()
    if c is not None and not linetype:
        return msp.add_circle((c[0] + ox, c[1] + oy), c[2], dxfattribs=attribs)
    if c is not None:
        # LibreCAD prints a CIRCLE solid whatever its line type; two half-circle bulges it dashes
        x, y, r = c[0] + ox, c[1] + oy, c[2]
        return msp.add_lwpolyline([(x + r, y, 1.0), (x - r, y, 1.0)], format="xyb", close=True,
                                  dxfattribs=attribs)
    pts = []
    for seg in loop.lines_and_arcs(CURVE_CHORD_MM).segments:   # a spline or an ellipse as its chords
        bulge = math.tan(math.radians(seg.sweep_deg) / 4.0) if isinstance(seg, Arc) else 0.0
        pts.append((seg.start[0] + ox, seg.start[1] + oy, bulge))
    return msp.add_lwpolyline(pts, format="xyb", close=True, dxfattribs=attribs)


def _say_prefix(dim, prefix: str) -> None:
    """Write the diameter or radius sign into the dimension text ("<>" = the measured value).

    ezdxf's rendered block already carries the sign; LibreCAD redraws every
    dimension from the entity and adds no sign of its own, so the entity says it."""
    dim.dimension.dxf.text = prefix + "<>"


def _dims(msp, f, *, offset, layer: str) -> None:
    """The dimensions each feature asks for (geomgen.kinds.Dimension): the distance from the crank axis,
    a diameter, a radius from the axis, an angular span."""
    ox, oy = offset
    attribs = {"layer": layer}
    for d in f.dimensions():
        px, py = d.point
        if d.what == "from_axis":
            msp.add_aligned_dim(p1=(ox, oy), p2=(ox + px, oy + py), distance=4.0, dimstyle=DIM_STYLE,
                                dxfattribs=attribs).render()
        elif d.what == "diameter":
            dim = msp.add_diameter_dim(center=(ox + px, oy + py), radius=d.radius, angle=d.angle,
                                       dimstyle=DIM_STYLE, dxfattribs=attribs)
            dim.render()
            _say_prefix(dim, "\u00d8")
        elif d.what == "radius":
            dim = msp.add_radius_dim(center=(ox, oy), radius=d.radius, angle=d.angle, dimstyle=DIM_STYLE,
                                     dxfattribs=attribs)
            dim.render()
            _say_prefix(dim, "R")
        elif d.what == "span":
            # a 2-line angular dimension (LibreCAD draws no 3-point one), its arc 6 mm inside `radius` (the
            # pocket's inner radius), off the rim; the text is turned off the centre line by a quarter span
            start, end = math.radians(d.angle), math.radians(d.angle_end)
            ends = [(ox + d.radius * math.cos(a), oy + d.radius * math.sin(a)) for a in (start, end)]
            at = start + 0.25 * (end - start)
            r_arc = max(d.radius - 6.0, 0.5 * d.radius)
            base = (ox + r_arc * math.cos(at), oy + r_arc * math.sin(at))
            msp.add_angular_dim_2l(base=base, line1=((ox, oy), ends[0]), line2=((ox, oy), ends[1]),
                                   dimstyle=DIM_STYLE, dxfattribs=attribs).render()


def _com_marker(msp, com, *, offset, layer: str, label: str, left: bool) -> None:
    ox, oy = offset
    x, y = ox + com[0], oy + com[1]
    msp.add_circle((x, y), 1.2, dxfattribs={"layer": layer})
    msp.add_line((x - 2.0, y), (x + 2.0, y), dxfattribs={"layer": layer})
    msp.add_line((x, y - 2.0), (x, y + 2.0), dxfattribs={"layer": layer})
    _text(msp, label, (x - 2.6, y) if left else (x + 2.6, y), layer=layer, height=2.0,
          align="MIDDLE_RIGHT" if left else "MIDDLE_LEFT")


def column_widths(kind: str, rows) -> list[float]:
    """Width of each column of a kind's table, mm: its longest cell or heading, plus a gap."""
    heads = headings(kind)
    return [max([len(p) for p in heads[j]] + [len(r.cells[j]) for r in rows]) * CHAR_W + COLUMN_PAD
            for j in range(len(heads))]


def _summary_lines(entry: dict) -> list[str]:
    before, after = entry["before"]["com_mm"], entry["predicted"]["com_mm"]
    return [
        f"target unbalance {entry['target_gmm'][0]:.1f}, {entry['target_gmm'][1]:.1f} g*mm, "
        f"tolerance +/-{entry['tolerance_gmm']:.1f} g*mm",
        f"predicted {entry['predicted']['unbalance_gmm'][0]:.1f}, {entry['predicted']['unbalance_gmm'][1]:.1f} g*mm",
        f"COM before {before[0]:.2f}, {before[1]:.2f} mm ({entry['before']['mass_g']:.1f} g); "
        f"after {after[0]:.2f}, {after[1]:.2f} mm ({entry['predicted']['mass_g']:.1f} g)",
        "no = step on operations.csv; existing = already on the web, check it;",
        "new = machine it; x, y in the web frame seen from the outer face",
    ]


def block_width(entry: dict, tables: dict) -> float:
    """The width of the text under one web, mm: its widest table, table note or summary line."""
    widths = [max(sum(column_widths(k, rows)), len(note(k)) * CHAR_W) for k, rows in tables.items()]
    widths += [len(line) * CHAR_W for line in _summary_lines(entry)]
    return max(widths)


def web_pitch(webs, table_widths) -> list[float]:
    """x offset of each web's crank axis, mm: each clears the web (or table) before it by GAP_MM."""
    offsets, prev_right = [], None
    for w, width in zip(webs, table_widths):
        r = w.section.rim_radius_max
        x = 0.0 if prev_right is None else prev_right + GAP_MM + r
        offsets.append(x)
        prev_right = x + max(r, width - r)
    return offsets


def _draw_view(msp, doc, w, entry: dict, *, offset, lay: dict) -> None:
    ox, oy = offset
    sec = w.section
    add_loop(msp, sec.outer, offset=offset, layer=lay["OUTLINE"])
    for bore in sec.bores:
        add_loop(msp, bore, offset=offset, layer=lay["BORES"])
    for step, f in enumerate(w.all_features, start=1):
        add_loop(msp, f.footprint(), offset=offset, layer=lay["FEATURES"],
                 linetype="DASHED" if f.hidden_in_face_view else None)
        tx, ty = f.tag_point()
        if f.tag_clearance > 0:
            # the tag sits just outside a round feature, away from the dimensions drawn from the axis
            r = math.hypot(tx, ty)
            ux, uy = (tx / r, ty / r) if r > 1e-6 else (0.0, 1.0)
            reach = f.tag_clearance + 3.5
            tx, ty = tx + ux * reach, ty + uy * reach
        tag_at = (ox + tx, oy + ty)
        _text(msp, str(step), tag_at, layer=lay["FEATURES"], height=3.0, align="MIDDLE_CENTER")
        _dims(msp, f, offset=offset, layer=lay["DIMS"])

    r_rim = sec.rim_radius_max
    # axes: crank axis cross, pin direction (+Y), counterweight direction (-Y)
    msp.add_line((ox - 8, oy), (ox + 8, oy), dxfattribs={"layer": lay["AXES"]})
    msp.add_line((ox, oy - 8), (ox, oy + 8), dxfattribs={"layer": lay["AXES"]})
    msp.add_line((ox, oy + 8), (ox, oy + r_rim + 8), dxfattribs={"layer": lay["AXES"], "linetype": "CENTER"})
    msp.add_line((ox, oy - 8), (ox, oy - r_rim - 8), dxfattribs={"layer": lay["AXES"], "linetype": "CENTER"})
    px, py = sec.pin_center
    msp.add_line((ox + px - 4, oy + py), (ox + px + 4, oy + py), dxfattribs={"layer": lay["AXES"]})
    _text(msp, "crankpin (+Y)", (ox + 1.5, oy + r_rim + 9), layer=lay["AXES"], align="BOTTOM_LEFT")
    _text(msp, "counterweight (-Y)", (ox + 1.5, oy - r_rim - 9), layer=lay["AXES"], align="TOP_LEFT")
    _text(msp, "crank axis", (ox + 9, oy + 1.0), layer=lay["AXES"], height=2.0, align="BOTTOM_LEFT")
    before, after = entry["before"]["com_mm"], entry["predicted"]["com_mm"]
    _com_marker(msp, before, offset=offset, layer=lay["COM"], label="COM before", left=True)
    _com_marker(msp, after, offset=offset, layer=lay["COM"], label="COM after", left=False)


def _draw_tables(msp, tables: dict, *, x0: float, y: float, layer: str) -> float:
    """The tables from (x0, y) down; returns the y below the last one."""
    for kind, rows in tables.items():
        _text(msp, note(kind), (x0, y), layer=layer)
        y -= ROW_H
        xs = [x0]
        for width in column_widths(kind, rows)[:-1]:
            xs.append(xs[-1] + width)
        for line in (0, 1):
            for x, head in zip(xs, headings(kind)):
                if head[line]:
                    _text(msp, head[line], (x, y), layer=layer)
            y -= ROW_H
        for row in rows:
            for x, cell in zip(xs, row.cells):
                _text(msp, cell, (x, y), layer=layer)
            y -= ROW_H
        y -= TABLE_GAP
    if not tables:
        _text(msp, "no features", (x0, y), layer=layer)
        y -= ROW_H
    return y


def _draw_web(msp, doc, w, entry: dict, tables: dict, *, offset) -> float:
    """One web: view, title, summary and tables; returns the lowest y used."""
    lay = _layers(doc, w.spec.name)
    ox, oy = offset
    sec = w.section
    _draw_view(msp, doc, w, entry, offset=offset, lay=lay)
    r_rim = sec.rim_radius_max
    top = oy + r_rim + 22
    _text(msp, f"web {w.spec.name}: seen from the outer face, web frame, mm", (ox - r_rim, top),
          layer=lay["TABLE"], height=TITLE_H)
    if getattr(sec, "model", None) is not None:
        # a model is not one thickness: say where its features' depths start (operations.csv: entry_z)
        faces = sorted({(f.face, sec.entry_z(f)) for f in w.all_features if sec.entry_z(f) is not None})
        starts = ", ".join(f"{face} face at z = {z:.2f} mm" for face, z in faces) or "none"
        size = (f"3D model {sec.thickness:.2f} mm high overall; depths from the face each feature enters: {starts}")
    else:
        size = f"thickness {sec.thickness:.2f} mm"
    _text(msp, f"{size}, {entry['material']} {entry['density_g_cm3']:g} g/cm3; "
               "dashed = cut from the inner face", (ox - r_rim, top - 6), layer=lay["TABLE"])
    y = oy - r_rim - 22
    x0 = ox - r_rim
    lines = _summary_lines(entry)
    for line in lines:
        _text(msp, line, (x0, y), layer=lay["TABLE"])
        y -= ROW_H
    low = _draw_tables(msp, tables, x0=x0, y=y - 1.0, layer=lay["TABLE"])
    return _draw_rim_view(msp, w, x0=x0, y=low - 8.0, lay=lay)


def _draw_rim_view(msp, w, *, x0: float, y: float, lay: dict) -> float:
    """The rim unrolled, for features drilled in from the rim (radial holes): a strip as long as the arc
    they span (mm along the rim) and as high as the web, inner face at the bottom, each hole where the
    drill meets the rim, with its number, its axis angle and its height z.  Returns the lowest y used."""
    marks = [(i, f) for i, f in enumerate(w.all_features, start=1) if f.opens_rim]
    if not marks:
        return y
    t = w.section.thickness
    radius = max(f.entry for _, f in marks)
    angles = [f.angle for _, f in marks]
    lo, hi = min(angles) - 12.0, max(angles) + 12.0
    width = math.radians(hi - lo) * radius

    def at(angle: float) -> float:
        # seen from outside the rim with the outer face up, counter-clockwise angles run to the left
        return x0 + math.radians(hi - angle) * radius

    top = y - 11.0
    _text(msp, f"rim unrolled at r {radius:.2f} mm, seen from outside: inner face at the bottom, outer face "
               f"at the top; angles from +Y, counter-clockwise (to the left)", (x0, y), layer=lay["TABLE"])
    bottom = top - t
    box = [(x0, bottom), (x0 + width, bottom), (x0 + width, top), (x0, top)]
    msp.add_lwpolyline(box, close=True, dxfattribs={"layer": lay["OUTLINE"]})
    for i, f in marks:
        cx, cz = at(f.angle), bottom + f.z
        msp.add_circle((cx, cz), 0.5 * f.diameter, dxfattribs={"layer": lay["FEATURES"]})
        msp.add_line((cx, bottom - 2.0), (cx, top + 2.0), dxfattribs={"layer": lay["AXES"], "linetype": "CENTER"})
        _text(msp, str(i), (cx, top + 4.5), layer=lay["FEATURES"], height=3.0, align="MIDDLE_CENTER")
        _text(msp, f"{f.angle:.1f}\u00b0", (cx, bottom - 4.5), layer=lay["TABLE"], align="MIDDLE_CENTER")
    first = marks[0][1]
    msp.add_linear_dim(base=(x0 - 6.0, bottom), p1=(x0, bottom), p2=(at(first.angle), bottom + first.z), angle=90,
                       dimstyle=DIM_STYLE, dxfattribs={"layer": lay["DIMS"]}).render()
    return bottom - 8.0


def _write(dxf) -> bytes:
    import ezdxf

    stream = io.StringIO()
    # ezdxf stamps the time and random GUIDs on every save; its fixed metadata keeps the file
    # the same for the same job (the option is process-wide: put it back)
    meta = dxf.ezdxf_metadata()
    if "CREATED_BY_EZDXF" in meta:
        meta["CREATED_BY_EZDXF"] = f"{ezdxf.__version__} for geomgen"
    # the CLASSES section in a fixed order: ezdxf registers some classes in an order that changes from run
    # to run; those it adds while saving then keep their places
    dxf.classes.add_required_classes(dxf.dxfversion)
    dxf.classes.classes = dict(sorted(dxf.classes.classes.items()))
    keep = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True
    try:
        dxf.write(stream)
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = keep
    return stream.getvalue().encode("utf-8")


def drawing_dxf(*, job, doc: dict, webs) -> bytes:
    """The DXF (R2010, mm) as bytes.

    job : geomgen.job.Job;  doc : the plan.json dict;  webs : pipeline.WebWork list.
    """
    dxf = new_document()
    dxf.layers.add("NOTES", color=7)
    msp = dxf.modelspace()
    rho = job.correction.plug_material.density if job.correction.plug_material is not None else None
    tables = [web_rows(w, entry, drill_series=job.correction.drill_series, default_plug_density=rho,
                       plug_fit=job.correction.plug_fit)
              for w, entry in zip(webs, doc["webs"])]
    offsets = web_pitch(webs, [block_width(e, t) for e, t in zip(doc["webs"], tables)])
    lowest = 0.0
    for w, entry, table, ox in zip(webs, doc["webs"], tables, offsets):
        lowest = min(lowest, _draw_web(msp, dxf, w, entry, table, offset=(ox, 0.0)))
    left = -webs[0].section.rim_radius_max
    top = max(w.section.rim_radius_max for w in webs) + 40
    units_note = ("all dimensions in mm (operations.csv is in inch: 1 in = 25.4 mm)"
                  if job.output.sheet_units == "inch" else "all dimensions in mm")
    _text(msp, f"geomgen correction drawing, job: {job.name}; {units_note}", (left, top),
          layer="NOTES", height=TITLE_H + 1)
    spacing = "; ".join(f"web {w.spec.name} crank axis at x = {ox:.1f} mm" for w, ox in zip(webs, offsets))
    _text(msp, f"webs drawn side by side, each in its own frame: {spacing}", (left, top - 7), layer="NOTES")
    bottom = lowest - 2 * ROW_H
    for k, line in enumerate(doc.get("cautions", [])):
        _text(msp, ("CAUTION: " if k == 0 else "") + line, (left, bottom - k * ROW_H), layer="NOTES")
    return _write(dxf)
