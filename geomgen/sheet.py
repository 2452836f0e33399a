"""operations.csv: the machinist's sheet, one row per feature per web, in machining order.

Positions are given as the machinist sees the web on the machine: a feature
cut from the outer face is located in the web frame itself (the web is seen
from its outer face); a feature cut from the inner face is located after the
web is turned over about its Y axis, so its x is mirrored (x_face = -x_web)
and a pocket's angles become (-angle_end .. -angle_start).  The mass and
unbalance effects stay in the web frame, the frame the balance is reckoned in.

Rounding is what a machinist sets: 0.01 mm or 0.0005 in for lengths, 0.1 deg
for angles (common practice); masses to 0.01 g, unbalance to 0.1 g*mm.
"""

from __future__ import annotations

import csv
import io
import math

from .drills import designation
from .features import Hole, Plug, Pocket
from .units import MM_PER_INCH

#: length step a machinist sets, per sheet unit (common practice)
LENGTH_STEP = {"mm": 0.01, "inch": 0.0005}
LENGTH_DECIMALS = {"mm": 2, "inch": 4}
LENGTH_SUFFIX = {"mm": "mm", "inch": "in"}
ANGLE_DECIMALS = 1

_LENGTH_COLUMNS = ("x", "y", "diameter", "depth_shoulder", "depth_point", "plug_length",
                   "r_inner", "r_outer", "corner_radius")


def columns(units: str) -> list[str]:
    """The header of operations.csv for a sheet in `units` ("mm" | "inch")."""
    s = LENGTH_SUFFIX[units]
    return ["web", "step", "status", "kind", "face", "view",
            f"x_{s}", f"y_{s}", f"diameter_{s}", "drill",
            f"depth_shoulder_{s}", f"depth_point_{s}", "point_angle_deg", "through",
            f"r_inner_{s}", f"r_outer_{s}", "angle_start_deg", "angle_end_deg", f"corner_radius_{s}",
            "plug_material", "plug_density_g_cm3", f"plug_length_{s}",
            "mass_change_g", "unbalance_change_x_gmm", "unbalance_change_y_gmm"]


def set_length(value_mm: float, units: str) -> str:
    """A length as the machinist sets it: mm to 0.01, or inch to 0.0005 (4 decimals)."""
    value = value_mm if units == "mm" else value_mm / MM_PER_INCH
    step = LENGTH_STEP[units]
    stepped = round(value / step) * step
    text = f"{stepped:.{LENGTH_DECIMALS[units]}f}"
    return "0." + "0" * LENGTH_DECIMALS[units] if text.startswith("-") and float(text) == 0 else text


def _angle(deg: float) -> str:
    text = f"{deg:.{ANGLE_DECIMALS}f}"
    return "0.0" if float(text) == 0 else text


def point_length_mm(diameter_mm: float, point_angle_deg: float) -> float:
    """Axial length of a drill point, mm: d / 2 / tan(angle / 2) (0 for a flat bottom)."""
    if point_angle_deg >= 180.0:
        return 0.0
    return 0.5 * diameter_mm / math.tan(math.radians(0.5 * point_angle_deg))


def face_view(x: float, face: str) -> float:
    """x as the machinist sees it on `face`: mirrored for the inner face (web turned over about Y)."""
    return -x if face == "inner" else x


def feature_row(feature, *, web: str, step: int, status: str, effect: dict, thickness: float,
                units: str, drill_series: str, plug_density: float | None) -> dict:
    """One row of the sheet (a dict keyed by `columns(units)`, values as text)."""
    s = LENGTH_SUFFIX[units]
    row = {c: "" for c in columns(units)}
    face = feature.face
    row.update({"web": web, "step": str(step), "status": status, "face": face,
                "view": "outer face up" if face == "outer" else "inner face up (x mirrored)",
                "mass_change_g": f"{effect['mass_g']:.2f}",
                "unbalance_change_x_gmm": f"{effect['unbalance_gmm'][0]:.1f}",
                "unbalance_change_y_gmm": f"{effect['unbalance_gmm'][1]:.1f}"})

    def put(key, mm):
        row[f"{key}_{s}"] = set_length(mm, units)

    if isinstance(feature, (Hole, Plug)):
        put("x", face_view(feature.x, face))
        put("y", feature.y)
        put("diameter", feature.diameter)
        row["drill"] = designation(feature.diameter, drill_series)
    if isinstance(feature, Hole):
        row["kind"] = "drill"
        depth = thickness if feature.through else feature.depth
        point = point_length_mm(feature.diameter, feature.point_angle)
        put("depth_shoulder", depth)
        # through: the drill travels its point length past the far face to cut full diameter
        put("depth_point", depth + point)
        row["point_angle_deg"] = _angle(feature.point_angle)
        row["through"] = "through" if feature.through else "blind"
    elif isinstance(feature, Plug):
        row["kind"] = "plug bore + plug"
        put("depth_shoulder", feature.length)
        put("depth_point", feature.length)          # flat-bottomed bore
        row["point_angle_deg"] = "180.0"
        row["through"] = "through" if feature.length >= thickness - 1e-9 else "blind"
        row["plug_material"] = feature.material or "custom"
        row["plug_density_g_cm3"] = f"{plug_density:.3f}" if plug_density is not None else ""
        put("plug_length", feature.length)
    elif isinstance(feature, Pocket):
        row["kind"] = "pocket"
        start, end = feature.angle_start, feature.angle_start + feature.span_deg
        if face == "inner":
            start, end = -end, -start
        put("depth_shoulder", feature.depth)
        put("depth_point", feature.depth)           # flat floor
        row["through"] = "blind"
        put("r_inner", feature.r_inner)
        put("r_outer", feature.r_outer)
        row["angle_start_deg"] = _angle(start)
        row["angle_end_deg"] = _angle(end)
        put("corner_radius", feature.corner_radius)
    return row


def header_lines(*, job_name: str, units: str) -> list[str]:
    """Comment lines (starting with '#') that tell the machinist how to read the sheet."""
    u = LENGTH_SUFFIX[units]
    return [
        f"# geomgen operations sheet, job: {job_name}; lengths in {u}, angles in deg, mass in g, unbalance in g*mm",
        "# frame: crank axis at x = y = 0, crankpin on +y, counterweight on -y; angles from +y, counter-clockwise",
        "# face 'outer': web clamped outer face up, x and y as in the web frame",
        "# face 'inner': web turned over about its y axis, inner face up: x is mirrored (x = -x_web), "
        "pocket angles are mirrored too",
        "# depth_shoulder: full-diameter depth from the face; depth_point: to the drill point "
        "(through holes: drill travel to cut full diameter at the far face)",
        "# status 'existing': already on the web, check it is there; 'cut': machine it, in step order",
        "# mass and unbalance changes are in the web frame (seen from the outer face)",
        "# CAUTION: design aid, not a release for service; check the part and its balance before it runs",
    ]


def operations_csv(*, job, doc: dict, webs) -> bytes:
    """The sheet as CSV bytes (UTF-8, '\\n' line ends, same job -> same bytes).

    job : geomgen.job.Job;  doc : the plan.json dict;  webs : pipeline.WebWork list.
    """
    from .features import plug_density_of

    units = job.output.sheet_units
    out = io.StringIO()
    for line in header_lines(job_name=job.name, units=units):
        out.write(line + "\n")
    writer = csv.DictWriter(out, fieldnames=columns(units), lineterminator="\n")
    writer.writeheader()
    for w, entry in zip(webs, doc["webs"]):
        rows = [("existing", f) for f in w.existing] + [("cut", f) for f in w.plan.features]
        tables = entry["existing_features"] + entry["planned_features"]
        for step, ((status, feature), table) in enumerate(zip(rows, tables), start=1):
            rho = None
            if isinstance(feature, Plug):
                rho = (plug_density_of(feature) if feature.material or feature.density
                       else job.correction.plug_material.density)
            writer.writerow(feature_row(feature, web=w.spec.name, step=step, status=status,
                                        effect=table["effect"], thickness=w.section.thickness, units=units,
                                        drill_series=job.correction.drill_series, plug_density=rho))
    return out.getvalue().encode("utf-8")
