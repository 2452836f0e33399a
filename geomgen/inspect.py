"""`geomgen inspect FILE`: mass properties of a web as a file holds it.

Four kinds of file, four roads to the same MassProps (web frame, mm, g):
- a DXF outline (.dxf) swept through `--thickness`: the analytic section
  (exact lines and arcs, geomgen.section); no CAD kernel is imported;
- a STEP solid (.step/.stp): OpenCascade's exact volume integrals over the
  B-rep, one solid at a time at its own density (geomgen.verify);
- an STL mesh (.stl): trimesh's integrals over the triangles, refused unless
  the mesh is a closed volume; STL carries no unit, so `--units` scales it;

Each solid's density comes, first found first: from --density / --material
(web material) or --plug-density / --plug-material (plugs); from the file
itself (a geomgen STEP gives it in each product's description); from the
web-<name>.json that geomgen writes beside a web's STEP and STL when it still
describes this very file (its sha256); else the defaults, steel for the web
and ASTM B777 class 3 for a plug.  A geomgen web STL with its web-<name>.json
is weighed whole: the body mesh and the plugs mesh beside it, each plug piece
at its own density, as `plan` weighed it.
- a job (.toml): each web's bare section, the change each of its features
  makes, the total, the web's target and what is still needed; no CAD kernel.

`inspect_file` returns {"json": dict, "lines": [str]}: the command line
prints one or the other.  Everything here is a thin layer: the figures come
from MassProps, the wording and layout are this module's.
"""

from __future__ import annotations

import hashlib
import json
import math
from pathlib import Path

from .errors import BadInput, VerificationFailed
from .massprops import MassProps
from .units import to_internal

#: default material of a web body when neither --density nor --material is given
DEFAULT_MATERIAL = "steel"
#: default material of a plug solid ("plug-N", "web-a plug-N") in a STEP file (the job's default plug_material)
DEFAULT_PLUG_MATERIAL = "W-alloy-class-3"

SOURCES = {
    "dxf": "DXF outline, analytic section (exact lines and arcs)",
    "step": "STEP solid, exact B-rep (OpenCascade)",
    "stl": "STL mesh, mesh (trimesh)",
    "job": "job file, analytic section (exact lines and arcs) and closed-form features",
}
KNOWN = ".dxf, .step/.stp, .stl or a job .toml"

#: below this centre-of-mass offset (mm) the heavy spot has no direction worth printing
_CENTRED_MM = 1e-9
_LABEL = 20  # width of the label column of the plain output


# ------------------------------------------------------------------ figures
def heavy_spot_deg(unbalance, mass: float) -> float | None:
    """Angle of the unbalance vector (2,) g*mm from +Y, counter-clockwise, deg in [0, 360).

    None when the centre of mass lies within 1e-9 mm of the axis: the
    direction is then round-off, not a heavy spot.
    """
    ux, uy = float(unbalance[0]), float(unbalance[1])
    if math.hypot(ux, uy) <= _CENTRED_MM * max(abs(mass), 1e-300):
        return None
    # from +Y counter-clockwise: +Y -> 0, -X -> 90, -Y -> 180, +X -> 270
    return math.degrees(math.atan2(-ux, uy)) % 360.0


def figures(props: MassProps) -> dict:
    """The contract's keys for one body, plus |U| and the heavy-spot angle."""
    out = props.summary()
    out["unbalance_magnitude_gmm"] = props.unbalance_magnitude
    out["heavy_spot_deg"] = heavy_spot_deg(props.unbalance, props.mass)
    return out


def change_figures(props: MassProps) -> dict:
    """What a feature changes: mass, volume, unbalance, inertia (no centre of mass:
    a removal has negative mass, and its 'centre' would only confuse)."""
    s = props.summary()
    return {k: s[k] for k in ("mass_g", "volume_mm3", "unbalance_gmm", "inertia_z_gmm2", "inertia_tensor_gmm2")}


# ------------------------------------------------------------------ plain lines
def _row(label: str, text: str) -> str:
    return f"{label:<{_LABEL}}{text}"


def _angle_text(angle: float | None) -> str:
    return "none (centred)" if angle is None else f"{angle:.2f} deg from +Y, counter-clockwise"


def _clean(values, digits: int):
    """Round-off below the printed digits shown as 0, not -0."""
    return [round(float(v), digits) + 0.0 for v in values]


def props_lines(props: MassProps, *, indent: str = "") -> list[str]:
    """The figures of one body as aligned lines with their units."""
    c, u, inertia = _clean(props.com, 4), _clean(props.unbalance, 2), props.inertia
    lines = [
        _row("mass", f"{props.mass:14.3f} g"),
        _row("volume", f"{props.volume:14.1f} mm^3"),
        _row("centre of mass", f"x {c[0]:11.4f}   y {c[1]:11.4f}   z {c[2]:11.4f} mm"),
        _row("unbalance", f"x {u[0]:11.2f}   y {u[1]:11.2f}   g*mm (about Z)"),
        _row("  magnitude", f"{props.unbalance_magnitude:14.2f} g*mm"),
        _row("  heavy spot", _angle_text(heavy_spot_deg(u, props.mass))),
        _row("inertia about Z", f"{props.inertia_z:14.6g} g*mm^2  ({props.inertia_z * 1e-9:.6g} kg*m^2)"),
        _row("inertia tensor", "g*mm^2, about the origin:"),
    ]
    lines += [_row("", "  ".join(f"{v:14.6g}" for v in row)) for row in inertia]
    return [indent + line for line in lines]


# ------------------------------------------------------------------ inputs
def _density(density: str | None, material_name: str | None, *, default: str = DEFAULT_MATERIAL,
             default_how: str = "default"):
    """(g/cm^3, label) from --density or --material, else the default material."""
    from .materials import custom, material

    if density is not None:
        rho = custom(to_internal(density, "density", "--density"), "--density").density
        return rho, f"{rho:g} g/cm^3 (--density)"
    m = material(material_name if material_name is not None else default, "--material")
    how = "--material" if material_name is not None else default_how
    return m.density, f"{m.density:g} g/cm^3 ({m.name}, {how}; {m.source})"


def _given(density, material_name, *, d_opt: str = "--density", m_opt: str = "--material"):
    """(g/cm^3, label) from a density option or a material option, or None when neither is given."""
    from .materials import custom, material

    if density is not None:
        rho = custom(to_internal(density, "density", d_opt), d_opt).density
        return rho, f"{rho:g} g/cm^3 ({d_opt})"
    if material_name is not None:
        m = material(material_name, m_opt)
        return m.density, f"{m.density:g} g/cm^3 ({m.name}, {m_opt}; {m.source})"
    return None


def _plug_default():
    return _density(None, None, default=DEFAULT_PLUG_MATERIAL, default_how="default for plugs")


# ------------------------------------------------------------------ web-<name>.json beside a file
def _sidecar_for(path: Path) -> tuple[dict | None, str | None]:
    """(the web-<name>.json beside `path` when it describes this very file, else None; a note when one is
    there but is not used).  web-a.step, web-a.stl and web-a-plugs.stl share web-a.json."""
    stem = path.stem[:-len("-plugs")] if path.stem.endswith("-plugs") else path.stem
    side = path.with_name(f"{stem}.json")
    if not side.is_file():
        return None, None
    try:
        doc = json.loads(side.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError):
        return None, f"{side.name} beside it is not readable JSON: not used"
    if not (isinstance(doc, dict) and isinstance(doc.get("sha256"), dict) and isinstance(doc.get("body"), dict)
            and isinstance(doc.get("plugs"), list)):
        return None, f"{side.name} beside it is not a geomgen web file: not used"
    want = doc["sha256"].get(path.name)
    if want is None:
        return None, f"{side.name} beside it does not describe {path.name}: not used"
    if hashlib.sha256(path.read_bytes()).hexdigest() != want:
        return None, f"{side.name} beside it describes another {path.name} (its sha256 differs): not used"
    return doc, None


def _side_density(entry, side_name: str, where: str) -> tuple[float, str]:
    """(g/cm^3, label) of one solid as web-<name>.json gives it; BadInput naming the file if it is wrong."""
    from .materials import custom

    value = entry.get("density_g_cm3") if isinstance(entry, dict) else None
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise BadInput(f"{side_name}: {where}.density_g_cm3 must be a number, got {value!r}")
    rho = custom(float(value), f"{side_name} {where}.density_g_cm3").density
    what = entry.get("material")
    return rho, f"{rho:g} g/cm^3 ({what + ', ' if isinstance(what, str) and what else ''}{side_name})"


def _file_label(rho: float, text: str) -> str:
    what = text.removeprefix("geomgen solid: ").split(", density")[0]
    return f"{rho:g} g/cm^3 ({what + ', ' if what and not what.startswith('density') else ''}from the file)"


def _refuse(option: str, value, why: str) -> None:
    if value is not None:
        raise BadInput(f"{option}: {why}")


def _scale_mm(units: str | None, where: str) -> float:
    from .dxf_outline import UNIT_NAMES_MM

    if units is None:
        return 1.0
    if units not in UNIT_NAMES_MM:
        raise BadInput(f"{where}: unknown unit {units!r}; allowed: mm, in, cm, m")
    return UNIT_NAMES_MM[units]


def scaled_to_mm(props: MassProps, scale: float) -> MassProps:
    """Properties computed in a drawing unit, expressed in mm: every length times `scale`.

    Volume and mass go as scale^3, first moments as scale^4, second moments
    as scale^5 (the density was already per mm^3 of the drawing unit cube).
    """
    s3 = scale ** 3
    return MassProps(props.mass * s3, props.first_moment * s3 * scale, props.second_moment * s3 * scale ** 2,
                     props.volume * s3)


# ------------------------------------------------------------------ the four roads
def _inspect_dxf(path: Path, *, thickness, density, material_name, units) -> dict:
    from .section import inspect_dxf

    if thickness is None:
        raise BadInput(f"--thickness: {path} is a plane outline; give the web thickness, "
                       "e.g. --thickness 18 (mm) or --thickness \"0.71 in\"")
    t = to_internal(thickness, "length", "--thickness")
    if not t > 0:
        raise BadInput(f"--thickness: must be > 0 mm, got {thickness!r}")
    rho, rho_label = _density(density, material_name)
    try:
        props = inspect_dxf(path, thickness=t, density_g_cm3=rho, units=units)
    except BadInput as exc:
        # the outline reader speaks the job's key; on the command line it is --units
        raise BadInput(str(exc).replace('give outline_units = "mm" or "in"', "give --units mm or --units in")
                       .replace("inspect outline_units:", "--units:")) from None
    unit_label = f"{units} (--units)" if units else "from the drawing's $INSUNITS"
    out = figures(props)
    out.update(source=SOURCES["dxf"], file=str(path), thickness_mm=t, density_g_cm3=rho,
               drawing_units=units or "header")
    lines = [f"{path.name}: {SOURCES['dxf']}",
             _row("drawing units", unit_label),
             _row("thickness", f"{t:g} mm, z from 0 to {t:g}"),
             _row("density", rho_label), ""] + props_lines(props)
    return {"json": out, "lines": lines}


def _step_densities(path: Path, names: list[str], *, body_opt, plug_opt, described: dict,
                    side: dict | None) -> tuple[list[tuple[float, str]], list[str]]:
    """([(g/cm^3, label)] per solid, notes).  A plug is named as geomgen names it: "plug-1" in a web file,
    "web-a plug-1" in a crank file (geomgen.solid.solid_part); a file of one solid is web material."""
    from .export import density_from_description
    from .solid import PLUG, solid_part

    side_dens = {}
    if side is not None and side.get("step") == path.name:
        side_name = path.with_name(f"{path.stem}.json").name
        entries = [("body", side["body"])] + [(f"plugs[{i}]", p) for i, p in enumerate(side["plugs"])]
        for where, entry in entries:
            if isinstance(entry, dict) and isinstance(entry.get("solid"), str):
                side_dens[entry["solid"]] = _side_density(entry, side_name, where)
    out, notes = [], []
    for name in names:
        is_plug = len(names) > 1 and solid_part(name) == PLUG
        option = plug_opt if is_plug else body_opt
        from_file = density_from_description(described.get(name))
        if from_file is not None:
            own = (from_file, _file_label(from_file, described[name]))
        elif name in side_dens:
            own = side_dens[name]
        else:
            own = None
        if option is not None:
            if own is not None and abs(own[0] - option[0]) > 1e-12 * own[0]:
                notes.append(f"{name}: {option[0]:g} g/cm^3 as given, in place of the file's {own[0]:g} g/cm^3")
            out.append(option)
        elif own is not None:
            out.append(own)
        else:
            out.append(_plug_default() if is_plug else _density(None, None))
    return out, notes


def _inspect_step(path: Path, *, density, material_name, plug_density=None, plug_material=None) -> dict:
    from .export import read_step, step_product_descriptions
    from .verify import solid_massprops

    solids = read_step(path)
    if not solids:
        raise BadInput(f"{path}: the STEP file holds no shapes")
    names = [n for n, _ in solids]
    side, side_note = _sidecar_for(path)
    dens, notes = _step_densities(
        path, names, body_opt=_given(density, material_name),
        plug_opt=_given(plug_density, plug_material, d_opt="--plug-density", m_opt="--plug-material"),
        described=step_product_descriptions(path), side=side)
    if side_note is not None:
        notes.append(side_note)
    parts = []
    for (name, shape), (rho, _) in zip(solids, dens):
        try:
            parts.append(solid_massprops(shape, rho))
        except VerificationFailed as exc:
            raise BadInput(f"{path}: shape {name!r} is not a closed solid ({exc})") from None
    # the sum is what verify.step_massprops computes; kept per solid to show each share
    total = sum(parts, MassProps.zero())
    per_solid = {n: rho for n, (rho, _) in zip(names, dens)}
    out = figures(total)
    out.update(source=SOURCES["step"], file=str(path),
               density_g_cm3=(dens[0][0] if len({r for r, _ in dens}) == 1 else per_solid),
               solids=[{"name": n, "density_g_cm3": rho, "density_from": label, "mass_g": p.mass,
                        "volume_mm3": p.volume, "unbalance_gmm": [float(v) for v in p.unbalance]}
                       for n, (rho, label), p in zip(names, dens, parts)],
               notes=notes)
    lines = [f"{path.name}: {SOURCES['step']}, {len(solids)} solid{'s' if len(solids) > 1 else ''}"]
    for n, (_rho, label), p in zip(names, dens, parts):
        lines.append(f"  {n}: {p.mass:.3f} g, {p.volume:.1f} mm^3, at {label}")
    lines += [f"  note: {n}" for n in notes]
    lines += [""] + props_lines(total)
    return {"json": out, "lines": lines}


def _inspect_stl(path: Path, *, density, material_name, units, plug_density=None, plug_material=None) -> dict:
    from .verify import mesh_massprops, mesh_plugs_from_file

    scale = _scale_mm(units, "--units")
    body_opt = _given(density, material_name)
    plug_opt = _given(plug_density, plug_material, d_opt="--plug-density", m_opt="--plug-material")
    side, side_note = _sidecar_for(path)
    notes = [side_note] if side_note is not None else []
    side_name = path.with_name(f"{path.stem.removesuffix('-plugs')}.json").name
    role = None
    if side is not None:
        role = "body" if side.get("stl") == path.name else "plugs" if side.get("plugs_stl") == path.name else None
        if role is None:
            notes.append(f"{side_name} beside it names neither web mesh {path.name}: not used")
    if role is not None and units not in (None, "mm"):
        raise BadInput(f"--units: {side_name} says {path.name} is in mm, as geomgen writes every mesh")

    def plug_list(doc):
        rows = []
        for i, p in enumerate(doc["plugs"]):
            rho, label = plug_opt if plug_opt is not None else _side_density(p, side_name, f"plugs[{i}]")
            try:
                x, y = float(p["x_mm"]), float(p["y_mm"])
            except (KeyError, TypeError, ValueError):
                raise BadInput(f"{side_name}: plugs[{i}] needs x_mm and y_mm, its axis") from None
            rows.append((str(p.get("solid", f"plug-{i + 1}")), x, y, rho, label))
        return rows

    def plugs_props(plugs_path, plugs):
        try:
            return mesh_plugs_from_file(plugs_path, [(x, y, rho) for _, x, y, rho, _ in plugs])
        except VerificationFailed as exc:
            raise BadInput(f"{plugs_path}: {exc}; {side_name} lists {len(plugs)} plug(s)") from None

    parts = []          # (file, (g/cm^3, label) of a one-material mesh or None, props, plugs or None)
    if role == "body":
        body_rho = body_opt if body_opt is not None else _side_density(side["body"], side_name, "body")
        parts.append((path.name, body_rho, mesh_massprops(path, body_rho[0]), None))
        plugs_name = side.get("plugs_stl")
        if side["plugs"] and isinstance(plugs_name, str):
            plugs_path = path.with_name(plugs_name)
            with_plugs, why = _sidecar_for(plugs_path) if plugs_path.is_file() else (None, "not beside it")
            if with_plugs is None:
                notes.append(f"{plugs_name}, its plugs: {why}; the body alone")
            else:
                plugs = plug_list(side)
                parts.append((plugs_name, None, plugs_props(plugs_path, plugs), plugs))
    elif role == "plugs":
        plugs = plug_list(side)
        parts.append((path.name, None, plugs_props(path, plugs), plugs))
    elif path.stem.endswith("-plugs"):
        chosen = plug_opt or body_opt or _plug_default()
        parts.append((path.name, chosen, mesh_massprops(path, chosen[0]), None))
    else:
        _refuse("--plug-density", plug_density, f"{path.name} is one mesh of one material: give --density")
        _refuse("--plug-material", plug_material, f"{path.name} is one mesh of one material: give --material")
        chosen = body_opt or _density(None, None)
        parts.append((path.name, chosen, mesh_massprops(path, chosen[0]), None))
    # trimesh integrates in the file's unit at rho per mm^3-of-that-unit; scaling afterwards is exact
    parts = [(f, rho, scaled_to_mm(p, scale), plugs) for f, rho, p, plugs in parts]
    total = sum((p for _, _, p, _ in parts), MassProps.zero())
    per_solid, rows = {}, []
    for f, rho, p, plugs in parts:
        row = {"file": f, "mass_g": p.mass, "volume_mm3": p.volume, "unbalance_gmm": [float(v) for v in p.unbalance]}
        if plugs is None:
            row.update(density_g_cm3=rho[0], density_from=rho[1])
            per_solid["body" if role == "body" else f] = rho[0]
        else:
            row["plugs"] = [{"solid": n, "x_mm": x, "y_mm": y, "density_g_cm3": r, "density_from": label}
                            for n, x, y, r, label in plugs]
            per_solid.update({n: r for n, _, _, r, _ in plugs})
        rows.append(row)
    out = figures(total)
    whole = role == "body" and (len(parts) == 2 or not side["plugs"])
    out.update(source=SOURCES["stl"], file=str(path), mesh_units=units or "mm", parts=rows, notes=notes,
               density_g_cm3=next(iter(per_solid.values())) if len(set(per_solid.values())) == 1 else per_solid,
               whole_web=whole)
    lines = [f"{path.name}: {SOURCES['stl']}" + (", the whole web: body and plugs" if whole and len(parts) == 2
                                                  else ""),
             _row("mesh units", f"{units} (--units)" if units else "mm (STL carries no unit; --units to change)")]
    for f, rho, _p, plugs in parts:
        if plugs is None:
            lines.append(_row("density", rho[1] if len(parts) == 1 else f"{f}: {rho[1]}"))
        else:
            lines.append(_row("plugs", f"{f}: {len(plugs)} piece(s), each at its plug's density"))
            lines += [_row("", f"  {n} at ({x:g}, {y:g}): {label}") for n, x, y, _, label in plugs]
    lines += [f"  note: {n}" for n in notes]
    lines += [""] + props_lines(total)
    return {"json": out, "lines": lines}


def _feature_label(f) -> str:
    return f.label()


_ROW = 14  # label width of the job table


def _table_row(label: str, mass: float, u, iz: float) -> str:
    ux, uy = _clean(u, 2)
    return f"  {label:<{_ROW}}{mass:12.3f}{ux:12.2f}{uy:12.2f}{iz:16.6g}"


def _web_lines(job, web, bare: MassProps, rows: list[dict], changes: list[MassProps], total: MassProps,
               target, needed, tol: float) -> list[str]:
    shape = f"{web.diameter:g} mm disc" if web.diameter is not None else f"outline {web.outline.name}"
    lines = ["", f"web {web.name}: {shape}, {web.thickness:g} mm thick, {web.material.name} "
                 f"{web.density:g} g/cm^3, pin bore {web.pin_bore:g} mm at y = {job.engine.crank_radius:g} mm"]
    if rows:
        lines.append("  features (web frame, mm):")
        lines += [f"    {i}  {row['label']}" for i, row in enumerate(rows, 1)]
    else:
        lines.append("  features: none in the job")
    lines += [f"  {'':<{_ROW}}{'mass g':>12}{'Ux g*mm':>12}{'Uy g*mm':>12}{'Iz g*mm^2':>16}",
              _table_row("bare web", bare.mass, bare.unbalance, bare.inertia_z)]
    for i, (row, change) in enumerate(zip(rows, changes), 1):
        lines.append(_table_row(f"{i} {row['feature']['kind']}", change.mass, change.unbalance, change.inertia_z))
    # a vector bound, as ISO 21940-11 treats unbalance
    within = "within" if math.hypot(*needed) <= tol else "not within"
    lines += [_table_row("total", total.mass, total.unbalance, total.inertia_z),
              f"  {'target':<{_ROW}}{'':12}{target[0]:12.2f}{target[1]:12.2f}",
              f"  {'still needed':<{_ROW}}{'':12}{needed[0] + 0.0:12.2f}{needed[1] + 0.0:12.2f}"
              f"   ({within} the +-{tol:.2f} g*mm tolerance)"]
    c = _clean(total.com, 4)
    lines.append(f"  total: centre of mass x {c[0]:.4f}  y {c[1]:.4f}  z {c[2]:.4f} mm; heavy spot "
                 f"{_angle_text(heavy_spot_deg(total.unbalance, total.mass))}")
    return lines


def _inspect_job(path: Path) -> dict:
    from . import job as jobmod
    from .webs import web_section

    job = jobmod.load(path)
    webs_json, lines = [], [f"{path.name}: {SOURCES['job']}"]
    for web in job.webs:
        section = web_section(job, web)
        bare = section.massprops()
        rows, changes = [], []
        for f in (f.on(section) for f in web.features):
            change = section.change(f)
            row = {"feature": f.to_table(), "label": f.label(), "change": change_figures(change)}
            if f.fills:
                row["plug_density_g_cm3"] = f.plug_density()
            rows.append(row)
            changes.append(change)
        total = sum(changes, bare)
        target = job.target_gmm(web)
        needed = (target[0] - float(total.unbalance[0]), target[1] - float(total.unbalance[1]))
        tol = job.tolerance_gmm * web.share
        lines += _web_lines(job, web, bare, rows, changes, total, target, needed, tol)
        webs_json.append({"name": web.name, "thickness_mm": web.thickness, "density_g_cm3": web.density,
                          "material": web.material.name, "bare": figures(bare), "features": rows,
                          "total": figures(total), "target_gmm": list(target), "still_needed_gmm": list(needed),
                          "tolerance_gmm": tol, "within_tolerance": max(map(abs, needed)) <= tol})
    return {"json": {"source": SOURCES["job"], "file": str(path), "job": job.name, "webs": webs_json},
            "lines": lines}


# ------------------------------------------------------------------ entry point
def inspect_file(path: Path, *, thickness: str | None = None, density: str | None = None,
                 material_name: str | None = None, units: str | None = None, plug_density: str | None = None,
                 plug_material: str | None = None) -> dict:
    """Mass properties of the web in `path`: {"json": dict, "lines": [str]}.

    thickness : DXF only, mm or a unit string;  density : g/cm^3 or a unit
    string, or material_name, of the web material (default: what the file
    says, else steel; not for a job, which names its own);  plug_density /
    plug_material : the same for every plug of a STEP or a plugs STL (default:
    what the file says, else ASTM B777 class 3);  units : "mm" | "in" | "cm" |
    "m", for a unitless DXF or an STL.
    Raises BadInput for an unknown file type, a missing file, or an option
    that does not apply to the file.
    """
    path = Path(path)
    suffix = path.suffix.lower()
    kinds = {".dxf": "dxf", ".step": "step", ".stp": "step", ".stl": "stl", ".toml": "job"}
    if suffix not in kinds:
        raise BadInput(f"{path}: unknown file type '{suffix or '(none)'}'; inspect reads {KNOWN}")
    if not path.is_file():
        raise BadInput(f"{path}: file not found")
    kind = kinds[suffix]
    if kind != "dxf":
        _refuse("--thickness", thickness, f"only a DXF outline needs a thickness; {path.name} carries its own")
    if kind == "step":
        _refuse("--units", units, "a STEP file carries its own unit; --units is for a unitless DXF or an STL")
    if density is not None and material_name is not None:
        raise BadInput("--density, --material: give one of them, not both")
    if plug_density is not None and plug_material is not None:
        raise BadInput("--plug-density, --plug-material: give one of them, not both")
    if kind in ("dxf", "job"):
        why = ("a DXF outline is one material" if kind == "dxf" else
               "a job names each plug's material itself (correction.plug_material or the plug's own)")
        _refuse("--plug-density", plug_density, why)
        _refuse("--plug-material", plug_material, why)
    if kind == "job":
        _refuse("--units", units, "a job names its outline's units itself (outline_units)")
        _refuse("--density", density, "a job names each web's material itself (web.material or web.density)")
        _refuse("--material", material_name, "a job names each web's material itself (web.material or web.density)")
        return _inspect_job(path)
    if kind == "dxf":
        return _inspect_dxf(path, thickness=thickness, density=density, material_name=material_name, units=units)
    if kind == "step":
        return _inspect_step(path, density=density, material_name=material_name, plug_density=plug_density,
                             plug_material=plug_material)
    return _inspect_stl(path, density=density, material_name=material_name, units=units,
                        plug_density=plug_density, plug_material=plug_material)
