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

from .fits import DEFAULT_FIT
from .kinds import KINDS

#: each heading on two lines, as the table prints it; COLUMNS joins them with a space.  Every kind's table
#: starts with the step number, status and face and ends with the mass and unbalance change; between them
#: stand the kind's own columns (geomgen.kinds: DRAWING_HEADINGS)
_HEAD = (("no", ""), ("status", ""), ("face", ""))
_TAIL = (("mass", "g"), ("unbalance", "x, y g*mm"))


def headings(kind: str) -> tuple[tuple[str, str], ...]:
    """The two-line headings of `kind`'s table (read from the registry when asked, so a kind registered
    later has its table too)."""
    return _HEAD + KINDS[kind].DRAWING_HEADINGS + _TAIL


def columns(kind: str) -> tuple[str, ...]:
    """`kind`'s headings on one line each."""
    return tuple(" ".join(p for p in h if p) for h in headings(kind))


def note(kind: str) -> str:
    """The line above `kind`'s table, so nobody reads a plug bore as a drilled hole."""
    return KINDS[kind].DRAWING_NOTE


@dataclass(frozen=True)
class Row:
    """One feature's line: its kind and the cells under columns(kind)."""

    kind: str
    cells: tuple[str, ...]


def _effect(table: dict) -> tuple[str, str]:
    eff = table["effect"]
    return f"{eff['mass_g']:.2f}", f"{eff['unbalance_gmm'][0]:.1f}, {eff['unbalance_gmm'][1]:.1f}"


def feature_row(feature, *, step: int, status: str, table: dict, thickness: float, drill_series: str,
                default_plug_density: float | None = None, plug_fit: str = DEFAULT_FIT) -> Row:
    """The row of `feature` (a geomgen.kinds feature) for its kind's table.

    table : its plan.json entry (for the "effect");  thickness : web, mm;
    default_plug_density : g/cm3 for a plug that names neither material nor density.
    """
    mass, unbalance = _effect(table)
    own = feature.drawing_row(thickness=thickness, drill_series=drill_series, plug_fit=plug_fit,
                              default_plug_density=default_plug_density)
    return Row(feature.kind, (str(step), status, feature.face) + tuple(own) + (mass, unbalance))


def web_rows(web, entry: dict, *, drill_series: str, default_plug_density: float | None = None,
             plug_fit: str = DEFAULT_FIT) -> dict[str, list[Row]]:
    """{kind: rows} of one web (pipeline.WebWork and its plan.json entry), kinds with no rows left out."""
    tables = entry["existing_features"] + entry["planned_features"]
    statuses = ["existing"] * len(web.existing) + ["new"] * (len(tables) - len(web.existing))
    out: dict[str, list[Row]] = {}
    for step, (feature, table, status) in enumerate(zip(web.all_features, tables, statuses), start=1):
        row = feature_row(feature, step=step, status=status, table=table,
                          thickness=web.section.column_thickness(feature),
                          drill_series=drill_series, default_plug_density=default_plug_density,
                          plug_fit=plug_fit)
        out.setdefault(row.kind, []).append(row)
    return {k: out[k] for k in KINDS if k in out}
