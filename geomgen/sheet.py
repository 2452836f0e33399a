"""operations.csv: the machinist's sheet, one row per feature per web, in machining order.

The file is plain data (RFC 4180): the header on the first line, one row
per feature, CRLF line ends, no comments.  A column holds one type: numbers
as plain decimals, text from a short vocabulary, empty where it does not
apply.  How to read it is in `sheet_notes`, which the report and the drawing
carry.

Positions are given as the machinist sees the web on the machine: a feature
cut from the outer face is located in the web frame itself (the web is seen
from its outer face); a feature cut from the inner face is located after the
web is turned over about its Y axis, so its x is mirrored (x_face = -x_web)
and a pocket's angles become (-angle_end .. -angle_start).  The mass and
unbalance effects stay in the web frame, the frame the balance is reckoned in.

Rounding is what a machinist sets (common practice): positions, depths and
radii 0.01 mm or 0.0005 in; diameters and fit limits 0.001 mm or 0.00001 in
(inch fit limits rounded inwards, so a part inside them is inside the
metric limits); angles 0.1 deg; masses 0.01 g, unbalance 0.1 g*mm.
"""

from __future__ import annotations

import csv
import io
import math

from .drills import designation
from .kinds import KINDS
from .plugbore import plug_bore
from .units import MM_PER_INCH

SUFFIX = {"mm": "mm", "inch": "in"}
#: positions, depths, radii: (step, decimals) per sheet unit (common practice)
SET_STEP = {"mm": (0.01, 2), "inch": (0.0005, 4)}
#: diameters and fit limits: decimals per sheet unit
SIZE_DECIMALS = {"mm": 3, "inch": 5}
ANGLE_DECIMALS = 1


#: the columns every kind may fill, before the kinds' own and the effects
_COMMON = (("web", False), ("feature", False), ("status", False), ("kind", False), ("face", False),
           ("entry_z", True), ("x", True), ("y", True), ("diameter", True), ("through", False), ("bottom", False),
           ("depth", True), ("tip_depth", True), ("point_angle_deg", False), ("drill_size", False), ("drill", True))
_EFFECTS = (("mass_change_g", False), ("unbalance_change_x_gmm", False), ("unbalance_change_y_gmm", False))


def columns(units: str) -> list[str]:
    """The header of operations.csv for a sheet in `units` ("mm" | "inch"): the common columns, each kind's
    own (geomgen.kinds.KINDS, in order), then the mass and unbalance effect."""
    s = SUFFIX[units]
    names = list(_COMMON)
    for kind in KINDS.values():
        names += [c for c in kind.SHEET_COLUMNS if c not in names]
    names += _EFFECTS
    return [f"{n}_{s}" if is_length else n for n, is_length in names]


def _fixed(value: float, decimals: int) -> str:
    """`value` with `decimals` places, never "-0.00"."""
    text = f"{value:.{decimals}f}"
    return text[1:] if text.startswith("-") and float(text) == 0 else text


def _in_units(value_mm: float, units: str) -> float:
    return value_mm if units == "mm" else value_mm / MM_PER_INCH


def set_length(value_mm: float, units: str) -> str:
    """A position, depth or radius as the machinist sets it: mm to 0.01, or inch to 0.0005 (4 decimals)."""
    step, decimals = SET_STEP[units]
    return _fixed(round(_in_units(value_mm, units) / step) * step, decimals)


def size(value_mm: float, units: str) -> str:
    """A diameter: mm to 0.001, inch to 0.00001."""
    return _fixed(_in_units(value_mm, units), SIZE_DECIMALS[units])


def _limit(value_mm: float, units: str, *, upper: bool) -> float:
    """A fit limit in sheet units, rounded inwards (an upper limit down, a lower one up)."""
    scale = 10 ** SIZE_DECIMALS[units]
    v = _in_units(value_mm, units) * scale
    v = round(v, 6)                      # an exact metric limit must not move a step on float noise
    return (math.floor(v) if upper else math.ceil(v)) / scale


def _angle(deg: float) -> str:
    return _fixed(deg, ANGLE_DECIMALS)


def face_view(x: float, face: str) -> float:
    """x as the machinist sees it on `face`: mirrored for the inner face (web turned over about Y)."""
    return -x if face == "inner" else x


def _yes(flag: bool) -> str:
    return "yes" if flag else "no"


class SheetCells:
    """One row being filled: the kinds write their columns through it, in sheet units and roundings.

    thickness : web, mm;  correction : the job's Correction (drills, point angle, plug fit);
    plug_density : g/cm^3 of a plug;  where : names the feature in an error.
    """

    def __init__(self, row: dict, *, units: str, thickness: float, correction, plug_density: float | None,
                 where: str):
        self.row, self.units, self.thickness = row, units, thickness
        self.correction, self.plug_density, self.where = correction, plug_density, where
        self._s = SUFFIX[units]

    @staticmethod
    def face_view(x: float, face: str) -> float:
        """x as seen on the face being cut (see the module's face_view)."""
        return face_view(x, face)

    def set(self, key: str, text: str) -> None:
        self.row[key] = text

    def put(self, key: str, mm: float) -> None:
        """A position, depth or radius, as the machinist sets it."""
        self.row[f"{key}_{self._s}"] = set_length(mm, self.units)

    def put_size(self, key: str, mm: float) -> None:
        """A diameter."""
        self.row[f"{key}_{self._s}"] = size(mm, self.units)

    def put_size_value(self, key: str, value: float) -> None:
        """A size already in sheet units (e.g. an interference worked from printed limits)."""
        self.row[f"{key}_{self._s}"] = _fixed(value, SIZE_DECIMALS[self.units])

    def put_limit(self, key: str, mm: float, *, upper: bool) -> float:
        """A fit limit, rounded inwards; returns the printed value (sheet units)."""
        value = _limit(mm, self.units, upper=upper)
        self.put_size_value(key, value)
        return value

    def put_angle(self, key: str, deg: float) -> None:
        self.row[key] = _angle(deg)


def feature_row(feature, *, web: str, number: int, status: str, effect: dict, thickness: float,
                units: str, correction, plug_density: float | None = None) -> dict:
    """One row of the sheet (a dict keyed by `columns(units)`, values as text).

    number : the feature's number on the drawing and in the report;  status : "existing" | "new";
    effect : {"mass_g", "unbalance_gmm"} from plan.json;  correction : the job's Correction
    (drills, point angle, plug fit);  plug_density : g/cm^3, for a plug.
    """
    row = {c: "" for c in columns(units)}
    row.update({"web": web, "feature": str(number), "status": status, "kind": feature.kind, "face": feature.face,
                "mass_change_g": _fixed(effect["mass_g"], 2),
                "unbalance_change_x_gmm": _fixed(effect["unbalance_gmm"][0], 1),
                "unbalance_change_y_gmm": _fixed(effect["unbalance_gmm"][1], 1)})
    feature.fill_sheet(SheetCells(row, units=units, thickness=thickness, correction=correction,
                                  plug_density=plug_density, where=f"web {web} feature {number}"))
    return row


def _plug_density(feature, job) -> float | None:
    if not feature.fills:
        return None
    if getattr(feature, "material", None) or getattr(feature, "density", None):
        return feature.plug_density()
    return job.correction.plug_material.density


def sheet_rows(*, job, doc: dict, webs) -> list[dict]:
    """Every row of the sheet, web by web: existing features first, then the new ones in cutting order.

    job : geomgen.job.Job;  doc : the plan.json dict;  webs : pipeline.WebWork list.
    """
    units = job.output.sheet_units
    rows = []
    for w, entry in zip(webs, doc["webs"]):
        features = [("existing", f) for f in w.existing] + [("new", f) for f in w.plan.features]
        tables = entry["existing_features"] + entry["planned_features"]
        for number, ((status, feature), table) in enumerate(zip(features, tables), start=1):
            rho = _plug_density(feature, job)
            row = feature_row(feature, web=w.spec.name, number=number, status=status,
                              effect=table["effect"], thickness=w.section.column_thickness(feature), units=units,
                              correction=job.correction, plug_density=rho)
            entry_z = w.section.entry_z(feature)     # where its depth starts (a model: its stretch's face)
            if entry_z is not None:
                row[f"entry_z_{SUFFIX[units]}"] = set_length(entry_z, units)
            rows.append(row)
    return rows


def operations_csv(*, job, doc: dict, webs) -> bytes:
    """The sheet as CSV bytes: UTF-8, header first, CRLF line ends (RFC 4180); same job -> same bytes."""
    out = io.StringIO(newline="")
    writer = csv.DictWriter(out, fieldnames=columns(job.output.sheet_units), lineterminator="\r\n")
    writer.writeheader()
    writer.writerows(sheet_rows(job=job, doc=doc, webs=webs))
    return out.getvalue().encode("utf-8")


def _plug_lines(job, doc: dict, webs=None) -> list[str]:
    """One line per kind of plug bore on the sheet: how it is made and the limits of its fit."""
    inch = job.output.sheet_units == "inch"
    series = job.correction.drill_series
    seen, lines = set(), []
    for i, entry in enumerate(doc["webs"]):
        work = webs[i] if webs is not None else None
        for k, f in enumerate(entry["features"]):
            if f["kind"] != "plug":
                continue
            # the web a plug goes through: a model's stretch where it sits, else the web's thickness
            thickness = (work.section.column_thickness(work.all_features[k]) if work is not None
                         else entry["thickness_mm"])
            bore = plug_bore(diameter_mm=f["diameter"], length_mm=f.get("length", thickness), thickness_mm=thickness,
                             drills=job.correction.drills, point_angle_deg=job.correction.point_angle,
                             fit=job.correction.plug_fit, where=f"web {entry['name']} plug")
            key = (round(bore.diameter_mm, 6), bore.through)
            if key in seen:
                continue
            seen.add(key)
            lim, d = bore.limits, designation(bore.diameter_mm, series)
            steps = [f"drill {designation(bore.drill_mm, series if bore.drill_in_series else 'list')}"]
            if bore.opened:
                steps.append(f"open to {bore.pre_ream_mm:.2f} mm")
            steps.append("through" if bore.through else f"flat bottom at {bore.pre_ream_mm:.2f} mm")
            steps += [f"ream {d} {lim.bore_class}", f"press the {lim.plug_class} plug flush"]
            text = (f"plug {d} {lim.fit}, {'through' if bore.through else 'blind'}: bore {lim.bore_min_mm:.3f} .. "
                    f"{lim.bore_max_mm:.3f} mm, plug {lim.plug_min_mm:.3f} .. {lim.plug_max_mm:.3f} mm")
            if inch:
                bounds = [_limit(lim.bore_min_mm, "inch", upper=False), _limit(lim.bore_max_mm, "inch", upper=True),
                          _limit(lim.plug_min_mm, "inch", upper=False), _limit(lim.plug_max_mm, "inch", upper=True)]
                b = [_fixed(v, SIZE_DECIMALS["inch"]) for v in bounds]
                text += f" (bore {b[0]} .. {b[1]} in, plug {b[2]} .. {b[3]} in)"
            text += (f", interference {lim.interference_min_um / 1000:.3f} .. {lim.interference_max_um / 1000:.3f} mm;"
                     f" made by: {', '.join(steps)}.")
            lines.append(text)
            if lim.interference_min_um <= 0:
                lines.append(f"{lim.fit} is a transition fit at {d}: the loosest pair has "
                             f"{-lim.interference_min_um} um clearance and does not hold a plug by itself.")
    return lines


def sheet_notes(job, doc: dict, webs=None) -> list[str]:
    """How to read operations.csv, as plain lines (no comment marks) for the report, the drawing and the README.

    job : geomgen.job.Job;  doc : the plan.json dict (its "cautions" end the list);  webs : the planned
    pipeline.WebWork list, when there is one (a model web's plug goes through its own stretch).
    """
    u = SUFFIX[job.output.sheet_units]
    lines = [
        f"operations.csv, job {job.name}: one row per feature per web, existing features first, then the new "
        f"ones in cutting order. Lengths in {u} (column names end in _{u}), angles in deg, mass in g, "
        "unbalance in g*mm; an empty cell means the column does not apply to that feature.",
        "Frame: crank axis at x = y = 0, crankpin on +y, counterweight on -y; angles from +y, counter-clockwise.",
        "face outer: the web clamped outer face up; x and y as in the web frame.",
        "face inner: the web turned over about its y axis, inner face up: x is mirrored (x = -x_web) and a "
        "pocket's angles are mirrored (-angle_end .. -angle_start).",
        "feature: the number on drawing.dxf and in report.html (E1, E2 ... there for existing features). "
        "status existing: already on the web, check it is there; status new: machine it, in row order.",
        "entry_z: the height of the face the feature enters above the inner face (z of the web frame): the "
        "web's thickness for the outer face, 0 for the inner; on a web given as a 3D model, the face of the "
        "flat stretch it enters, where Z0 is touched off and depth is measured from.",
        "kind hole, pocket or plug. depth: full-diameter depth from the face (a pocket's floor, a plug bore's "
        "flat bottom); tip_depth: the drill's travel to its tip (a through hole's drill goes on until it cuts "
        "full diameter at the far face); through: yes or no; bottom: point or flat, empty when through.",
        "plug rows, in order: drill (drill_size) to tip_depth; where pre_ream is larger than the drill, open "
        "the bore to pre_ream; in a blind bore cut the bottom flat at pre_ream diameter down to depth, no "
        "deeper; ream to diameter, class bore_fit (a bottoming reamer in a blind bore), taking ream_stock; "
        "press the plug, class plug_fit, plug_length long, flush with the face.",
        "Fits are ISO 286-2 hole-basis limits (bore_min .. bore_max, plug_min .. plug_max); "
        "interference_min .. interference_max is what a bore and a plug inside them give. Measure both "
        "before pressing.",
    ]
    if u == "in":
        lines.append("Inch fit limits are the metric ISO limits rounded inwards to 0.00001 in, so a part "
                     "inside them is inside the metric limits.")
        lines.append("drawing.dxf stays in mm (its header says so), as the STEP files do: compare its "
                     "figures with this sheet at 1 in = 25.4 mm.")
    lines += _plug_lines(job, doc, webs)
    lines.append("mass_change and unbalance_change: what each feature does to its web, in the web frame "
                 "(seen from the outer face).")
    lines += [f"CAUTION: {c}" for c in doc.get("cautions", [])]
    lines.append("CAUTION: a press fit alone is not a rated retention; the plug also needs the retention "
                 "method the report asks for.")
    return lines
