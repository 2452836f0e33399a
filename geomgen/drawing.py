"""drawing.dxf: each web's face view in its own frame, for the shop and for CAM.

Every web is drawn as seen from its outer face (the contract's web frame:
crank axis at the web's cross, crankpin on +Y, counterweight on -Y), side by
side: web i is shifted along +X so it clears the one before it, and a note
says by how much.  Each web has its own layers (`<web>-OUTLINE`, `-BORES`,
`-FEATURES`, `-COM`, `-AXES`, `-TABLE`, `-DIMS`); features cut from the inner
face are drawn dashed where they lie in the web frame.  Holes and plugs are
CIRCLEs, kidney pockets one closed LWPOLYLINE of exact arcs (bulges) and
lines, so CAM can pick each as one contour.  Units: mm ($INSUNITS = 4).
"""

from __future__ import annotations

import io
import math

from .features import Hole, Plug, Pocket, footprint

TEXT_H = 2.5          # mm, table and label text
TITLE_H = 4.0         # mm
ROW_H = 4.2           # mm between table lines
GAP_MM = 40.0         # mm between one web's drawing (or table) and the next
DIM_STYLE = "GEOMGEN"

#: table columns: (heading, width mm)
_TABLE = (("no", 8), ("kind", 22), ("face", 12), ("x mm", 16), ("y mm", 16), ("dia mm", 15), ("drill", 32),
          ("depth mm", 28), ("mass g", 16), ("dU x, y g*mm", 30))
TABLE_WIDTH = sum(w for _, w in _TABLE)

_LAYERS = {"OUTLINE": 7, "BORES": 8, "FEATURES": 1, "COM": 3, "AXES": 5, "TABLE": 7, "DIMS": 4}


def _setup(doc) -> None:
    doc.header["$INSUNITS"] = 4          # mm
    doc.header["$MEASUREMENT"] = 1       # metric
    doc.header["$LUNITS"] = 2            # decimal
    style = doc.dimstyles.duplicate_entry("EZDXF", DIM_STYLE)
    # EZDXF's own style measures metres as cm (dimlfac 100): set it for a drawing in mm
    style.dxf.dimlfac = 1.0
    style.dxf.dimtxt = 2.0
    style.dxf.dimasz = 2.0
    style.dxf.dimexe = 1.0
    style.dxf.dimexo = 0.6
    style.dxf.dimgap = 0.6
    style.dxf.dimdec = 2
    style.dxf.dimtfac = 1.0
    style.dxf.dimblk = ""                # closed filled arrows
    style.dxf.dimtsz = 0.0
    for key in ("dimclrd", "dimclre", "dimclrt"):
        setattr(style.dxf, key, _LAYERS["DIMS"])   # dimension blocks draw BYBLOCK: colour them here
    doc.layers.add("NOTES", color=7)


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
    """One closed loop: a CIRCLE if it is one, else a closed LWPOLYLINE with
    bulges (bulge = tan(sweep / 4), positive counter-clockwise) for its arcs."""
    from .loops import Arc

    attribs = {"layer": layer}
    if linetype:
        attribs["linetype"] = linetype
        attribs["ltscale"] = 0.5         # dashes a small hole can show
    ox, oy = offset
    c = loop.as_circle()
    if c is not None:
        return msp.add_circle((c[0] + ox, c[1] + oy), c[2], dxfattribs=attribs)
    pts = []
    for seg in loop.segments:
        bulge = math.tan(math.radians(seg.sweep_deg) / 4.0) if isinstance(seg, Arc) else 0.0
        pts.append((seg.start[0] + ox, seg.start[1] + oy, bulge))
    return msp.add_lwpolyline(pts, format="xyb", close=True, dxfattribs=attribs)


def _depth_text(f, thickness: float) -> str:
    if isinstance(f, Hole):
        if f.through:
            return "through"
        return f"{f.depth:.2f} + {f.point_length:.2f} pt"
    if isinstance(f, Plug):
        return f"{f.length:.2f} flat" + (" (thru)" if f.length >= thickness - 1e-9 else "")
    return f"{f.depth:.2f} flat"


def _table_cells(i: int, f, table: dict, *, thickness: float, drill_series: str) -> list[str]:
    from .drills import designation

    eff = table["effect"]
    du = f"{eff['unbalance_gmm'][0]:.1f}, {eff['unbalance_gmm'][1]:.1f}"
    if isinstance(f, Pocket):
        return [str(i), "pocket", f.face, f"r {f.r_inner:.2f}", f"..{f.r_outer:.2f}",
                f"rc {f.corner_radius:.2f}", f"{f.angle_start:.1f}..{f.angle_start + f.span_deg:.1f} deg",
                _depth_text(f, thickness), f"{eff['mass_g']:.2f}", du]
    kind = "hole" if isinstance(f, Hole) else "plug"
    return [str(i), kind, f.face, f"{f.x:.2f}", f"{f.y:.2f}", f"{f.diameter:.2f}",
            designation(f.diameter, drill_series), _depth_text(f, thickness), f"{eff['mass_g']:.2f}", du]


def _dims(msp, f, *, offset, layer: str) -> None:
    """Dimensions from the crank axis: the radius to a hole's centre and its
    diameter; a pocket's two radii and its angular span."""
    ox, oy = offset
    attribs = {"layer": layer}
    if isinstance(f, (Hole, Plug)):
        r = math.hypot(f.x, f.y)
        if r > 1e-6:
            msp.add_aligned_dim(p1=(ox, oy), p2=(ox + f.x, oy + f.y), distance=4.0, dimstyle=DIM_STYLE,
                                dxfattribs=attribs).render()
        ang = math.degrees(math.atan2(f.y, f.x)) + 45.0
        msp.add_diameter_dim(center=(ox + f.x, oy + f.y), radius=0.5 * f.diameter, angle=ang,
                             dimstyle=DIM_STYLE, dxfattribs=attribs).render()
    elif isinstance(f, Pocket):
        mid = f.angle_start + 0.5 * f.span_deg + 90.0           # math angle of the kidney's middle
        for r, turn in ((f.r_outer, 4.0), (f.r_inner, -4.0)):
            if r > 0:
                msp.add_radius_dim(center=(ox, oy), radius=r, angle=mid + turn, dimstyle=DIM_STYLE,
                                   dxfattribs=attribs).render()
        start = f.angle_start + 90.0
        msp.add_angular_dim_cra(center=(ox, oy), radius=f.r_outer, start_angle=start,
                                end_angle=start + f.span_deg, distance=6.0, dimstyle=DIM_STYLE,
                                dxfattribs=attribs).render()


def _com_marker(msp, com, *, offset, layer: str, label: str, left: bool) -> None:
    ox, oy = offset
    x, y = ox + com[0], oy + com[1]
    msp.add_circle((x, y), 1.2, dxfattribs={"layer": layer})
    msp.add_line((x - 2.0, y), (x + 2.0, y), dxfattribs={"layer": layer})
    msp.add_line((x, y - 2.0), (x, y + 2.0), dxfattribs={"layer": layer})
    _text(msp, label, (x - 2.6, y) if left else (x + 2.6, y), layer=layer, height=2.0,
          align="MIDDLE_RIGHT" if left else "MIDDLE_LEFT")


def web_pitch(webs) -> list[float]:
    """x offset of each web's crank axis, mm: each clears the web (or table) before it by GAP_MM."""
    offsets, x = [], 0.0
    prev_right = None
    for w in webs:
        r = w.section.rim_radius_max
        if prev_right is None:
            x = 0.0
        else:
            x = prev_right + GAP_MM + r
        offsets.append(x)
        prev_right = x + max(r, TABLE_WIDTH - r)
    return offsets


def _draw_web(msp, doc, w, entry: dict, *, offset, drill_series: str) -> None:
    lay = _layers(doc, w.spec.name)
    ox, oy = offset
    sec = w.section
    add_loop(msp, sec.outer, offset=offset, layer=lay["OUTLINE"])
    for bore in sec.bores:
        add_loop(msp, bore, offset=offset, layer=lay["BORES"])

    tables = entry["existing_features"] + entry["planned_features"]
    n_existing = len(w.existing)
    for i, (f, table) in enumerate(zip(w.all_features, tables), start=1):
        fp = footprint(f)
        add_loop(msp, fp, offset=offset, layer=lay["FEATURES"], linetype="DASHED" if f.face == "inner" else None)
        if isinstance(f, Pocket):
            mid = math.radians(f.angle_start + 0.5 * f.span_deg + 90.0)
            rm = 0.5 * (f.r_inner + f.r_outer)
            tag_at = (ox + rm * math.cos(mid), oy + rm * math.sin(mid))
        else:
            # the tag sits just outside the circle, away from the dimensions drawn from the axis
            r = math.hypot(f.x, f.y)
            ux, uy = (f.x / r, f.y / r) if r > 1e-6 else (0.0, 1.0)
            reach = 0.5 * f.diameter + 3.5
            tag_at = (ox + f.x + ux * reach, oy + f.y + uy * reach)
        tag = f"{'E' if i <= n_existing else ''}{i}"
        _text(msp, tag, tag_at, layer=lay["FEATURES"], height=3.0, align="MIDDLE_CENTER")
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

    # title above, table below
    top = oy + r_rim + 22
    _text(msp, f"web {w.spec.name}: seen from the outer face, web frame, mm", (ox - r_rim, top),
          layer=lay["TABLE"], height=TITLE_H)
    _text(msp, f"thickness {sec.thickness:.2f} mm, {entry['material']} {entry['density_g_cm3']:g} g/cm3; "
               "dashed = cut from the inner face", (ox - r_rim, top - 6), layer=lay["TABLE"])
    y = oy - r_rim - 22
    x0 = ox - r_rim
    lines = [
        f"target unbalance {entry['target_gmm'][0]:.1f}, {entry['target_gmm'][1]:.1f} g*mm; predicted "
        f"{entry['predicted']['unbalance_gmm'][0]:.1f}, {entry['predicted']['unbalance_gmm'][1]:.1f} g*mm; "
        f"tolerance +/-{entry['tolerance_gmm']:.1f} g*mm",
        f"COM before {before[0]:.2f}, {before[1]:.2f} mm ({entry['before']['mass_g']:.1f} g); "
        f"COM after {after[0]:.2f}, {after[1]:.2f} mm ({entry['predicted']['mass_g']:.1f} g)",
        "feature table (E = already on the web; x, y in the web frame seen from the outer face):",
    ]
    for line in lines:
        _text(msp, line, (x0, y), layer=lay["TABLE"])
        y -= ROW_H
    xs = [x0]
    for _, width in _TABLE[:-1]:
        xs.append(xs[-1] + width)
    for x, (head, _) in zip(xs, _TABLE):
        _text(msp, head, (x, y), layer=lay["TABLE"])
    y -= ROW_H
    for i, (f, table) in enumerate(zip(w.all_features, tables), start=1):
        cells = _table_cells(i, f, table, thickness=sec.thickness, drill_series=drill_series)
        cells[0] = f"{'E' if i <= n_existing else ''}{i}"
        for x, cell in zip(xs, cells):
            _text(msp, cell, (x, y), layer=lay["TABLE"])
        y -= ROW_H
    if not tables:
        _text(msp, "no features", (x0, y), layer=lay["TABLE"])


def drawing_dxf(*, job, doc: dict, webs) -> bytes:
    """The DXF (R2010, mm) as bytes.

    job : geomgen.job.Job;  doc : the plan.json dict;  webs : pipeline.WebWork list.
    """
    import ezdxf

    dxf = ezdxf.new("R2010", setup=True)
    _setup(dxf)
    msp = dxf.modelspace()
    offsets = web_pitch(webs)
    for w, entry, ox in zip(webs, doc["webs"], offsets):
        _draw_web(msp, dxf, w, entry, offset=(ox, 0.0), drill_series=job.correction.drill_series)
    top = max(w.section.rim_radius_max for w in webs) + 40
    _text(msp, f"geomgen correction drawing, job: {job.name}; all dimensions in mm", (-webs[0].section.rim_radius_max, top),
          layer="NOTES", height=TITLE_H + 1)
    spacing = "; ".join(f"web {w.spec.name} crank axis at x = {ox:.1f} mm" for w, ox in zip(webs, offsets))
    _text(msp, f"webs drawn side by side, each in its own frame: {spacing}", (-webs[0].section.rim_radius_max, top - 7),
          layer="NOTES")
    bottom = -max(w.section.rim_radius_max for w in webs) - 40 - ROW_H * (4 + max(len(w.all_features) for w in webs))
    for k, line in enumerate(doc.get("cautions", [])):
        _text(msp, ("CAUTION: " if k == 0 else "") + line, (-webs[0].section.rim_radius_max, bottom - k * ROW_H),
              layer="NOTES")
    stream = io.StringIO()
    # ezdxf stamps the time and random GUIDs on every save; its fixed metadata keeps the file
    # the same for the same job (the option is process-wide: put it back)
    meta = dxf.ezdxf_metadata()
    if "CREATED_BY_EZDXF" in meta:
        meta["CREATED_BY_EZDXF"] = f"{ezdxf.__version__} for geomgen"
    keep = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True
    try:
        dxf.write(stream)
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = keep
    return stream.getvalue().encode("utf-8")
