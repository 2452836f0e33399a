"""The feature tables of drawing.dxf: one table per feature kind, as text cells.

Each kind has the columns a machinist reads for it: a hole its drill and
depths, a pocket its radii and angles, a plug its bore and the plug.  Words
follow drafting use: "full-diameter depth" is the depth to the shoulder of
the drill point, "drill travel" the depth to the tip of the point (what the
machine is set to).  Kinds are "hole" / "pocket" / "plug", status "existing"
(already on the web: check it is there) or "new" (to be machined); the
number is the step on operations.csv.

Lengths in mm to 0.01 and angles in degrees to 0.1, as a machinist sets them
(common practice); mass change in g to 0.01, unbalance change in g*mm to 0.1.
All positions are in the web frame, seen from the outer face.
"""

from __future__ import annotations

from dataclasses import dataclass

from .drills import designation
from .fits import DEFAULT_FIT
from .features import Hole, Plug, Pocket, plug_density_of

KINDS = ("hole", "pocket", "plug")
#: each heading on two lines, as the table prints it; COLUMNS joins them with a space
HEADINGS = {
    "hole": (("no", ""), ("status", ""), ("face", ""), ("x", "mm"), ("y", "mm"), ("diameter", "mm"),
             ("drill", ""), ("full-diameter", "depth mm"), ("drill travel", "mm"), ("point", "angle deg"),
             ("mass", "g"), ("unbalance", "x, y g*mm")),
    "pocket": (("no", ""), ("status", ""), ("face", ""), ("r_inner", "mm"), ("r_outer", "mm"),
               ("angle_start", "deg"), ("angle_end", "deg"), ("depth", "mm"), ("corner", "radius mm"),
               ("mass", "g"), ("unbalance", "x, y g*mm")),
    "plug": (("no", ""), ("status", ""), ("face", ""), ("x", "mm"), ("y", "mm"), ("bore", "mm"),
             ("bore", "finish"), ("bore", "depth mm"), ("plug", "material"), ("plug", "g/cm3"),
             ("plug", "length mm"), ("mass", "g"), ("unbalance", "x, y g*mm")),
}
COLUMNS = {kind: tuple(" ".join(p for p in h if p) for h in heads) for kind, heads in HEADINGS.items()}
HOLE_COLUMNS, POCKET_COLUMNS, PLUG_COLUMNS = COLUMNS["hole"], COLUMNS["pocket"], COLUMNS["plug"]

#: the line above each table, so nobody reads a plug bore as a drilled hole
NOTES = {
    "hole": "holes: drill travel = to the tip of the drill point",
    "pocket": "kidney pockets, flat floor; angles from +Y, counter-clockwise",
    "plug": "plugs: bores reamed to the ISO 286 class shown (press fit, limits on operations.csv); plug flush",
}


def _mm(value: float) -> str:
    text = f"{value:.2f}"
    return "0.00" if float(text) == 0 else text


def _deg(value: float) -> str:
    text = f"{value:.1f}"
    return "0.0" if float(text) == 0 else text


@dataclass(frozen=True)
class Row:
    """One feature's line: its kind and the cells under COLUMNS[kind]."""

    kind: str
    cells: tuple[str, ...]


def _effect(table: dict) -> tuple[str, str]:
    eff = table["effect"]
    return f"{eff['mass_g']:.2f}", f"{eff['unbalance_gmm'][0]:.1f}, {eff['unbalance_gmm'][1]:.1f}"


def feature_row(feature, *, step: int, status: str, table: dict, thickness: float, drill_series: str,
                default_plug_density: float | None = None, plug_fit: str = DEFAULT_FIT) -> Row:
    """The row of `feature` (a geomgen.features type) for its kind's table.

    table : its plan.json entry (for the "effect");  thickness : web, mm;
    default_plug_density : g/cm3 for a plug that names neither material nor density.
    """
    mass, unbalance = _effect(table)
    head = (str(step), status, feature.face)
    if isinstance(feature, Hole):
        depth = thickness if feature.through else feature.depth
        travel = "through" if feature.through else _mm(feature.depth + feature.point_length)
        angle = _deg(feature.point_angle) + (" (flat)" if feature.point_angle >= 180.0 else "")
        return Row("hole", head + (_mm(feature.x), _mm(feature.y), _mm(feature.diameter),
                                   designation(feature.diameter, drill_series), _mm(depth), travel, angle,
                                   mass, unbalance))
    if isinstance(feature, Pocket):
        return Row("pocket", head + (_mm(feature.r_inner), _mm(feature.r_outer), _deg(feature.angle_start),
                                     _deg(feature.angle_end), _mm(feature.depth), _mm(feature.corner_radius),
                                     mass, unbalance))
    if isinstance(feature, Plug):
        through = feature.length >= thickness - 1e-9
        rho = plug_density_of(feature) if (feature.material or feature.density) else default_plug_density
        return Row("plug", head + (_mm(feature.x), _mm(feature.y), _mm(feature.diameter),
                                   f"{_bore_class(plug_fit)} reamed, " + ("through" if through else "flat bottom"),
                                   _mm(feature.length),
                                   feature.material or "custom", f"{rho:.2f}" if rho is not None else "",
                                   _mm(feature.length), mass, unbalance))
    raise TypeError(f"not a feature: {feature!r}")


def _bore_class(fit: str) -> str:
    return fit.split("/")[0]


def web_rows(web, entry: dict, *, drill_series: str, default_plug_density: float | None = None,
             plug_fit: str = DEFAULT_FIT) -> dict[str, list[Row]]:
    """{kind: rows} of one web (pipeline.WebWork and its plan.json entry), kinds with no rows left out."""
    tables = entry["existing_features"] + entry["planned_features"]
    statuses = ["existing"] * len(web.existing) + ["new"] * (len(tables) - len(web.existing))
    out: dict[str, list[Row]] = {}
    for step, (feature, table, status) in enumerate(zip(web.all_features, tables, statuses), start=1):
        row = feature_row(feature, step=step, status=status, table=table, thickness=web.section.thickness,
                          drill_series=drill_series, default_plug_density=default_plug_density,
                          plug_fit=plug_fit)
        out.setdefault(row.kind, []).append(row)
    return {k: out[k] for k in KINDS if k in out}
