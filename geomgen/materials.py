"""Materials: a small table of densities, and any density given as a number.

Densities in g/cm^3.  Each entry records where its figure comes from.

The four tungsten heavy-alloy classes are those of ASTM B777-15, Table 1
(tungsten content, weight %, and the density range the standard allows).
The nominal density used for planning is the middle of that range; the
report gives what the ends of the range do to a plug's effect, because a
plug of the lightest permitted alloy under-corrects.
"""

from __future__ import annotations

from dataclasses import dataclass

from .errors import BadInput


@dataclass(frozen=True)
class Material:
    name: str
    density: float            # g/cm^3 used for planning
    density_min: float        # g/cm^3, lower end of the allowed or typical range
    density_max: float        # g/cm^3
    source: str


def _b777(cls_no: int, tungsten_pct: float, lo: float, hi: float) -> Material:
    return Material(
        name=f"W-alloy-class-{cls_no}",
        density=round(0.5 * (lo + hi), 4),
        density_min=lo,
        density_max=hi,
        source=f"ASTM B777-15 Table 1, class {cls_no}: {tungsten_pct} % W, {lo}-{hi} g/cm^3",
    )


MATERIALS: dict[str, Material] = {m.name: m for m in [
    Material("steel", 7.85, 7.75, 7.95, "carbon and low-alloy steel, common practice"),
    Material("alloy-steel", 7.85, 7.80, 7.90, "Cr-Mo / Ni-Cr-Mo forging steels, common practice"),
    Material("stainless-steel", 7.95, 7.75, 8.05, "austenitic stainless, common practice"),
    Material("cast-iron", 7.20, 7.00, 7.35, "grey and ductile iron, common practice"),
    Material("aluminium", 2.70, 2.66, 2.81, "wrought aluminium alloys, common practice"),
    _b777(1, 90, 16.85, 17.30),
    _b777(2, 92.5, 17.15, 17.85),
    _b777(3, 95, 17.75, 18.35),
    _b777(4, 97, 18.25, 18.85),
]}

ALIASES = {"aluminum": "aluminium", "iron": "cast-iron"}


def material(name: str, where: str) -> Material:
    """The named material, or BadInput listing the names allowed."""
    key = ALIASES.get(str(name).strip().lower(), str(name).strip())
    for known in MATERIALS:
        if known.lower() == key.lower():
            return MATERIALS[known]
    raise BadInput(f"{where}: unknown material {name!r}; known: {', '.join(MATERIALS)}, "
                   "or give a density in g/cm^3")


def custom(density: float, where: str) -> Material:
    if not (0.5 <= density <= 25.0):
        raise BadInput(f"{where}: density {density} g/cm^3 is outside 0.5 .. 25 g/cm^3")
    return Material(f"density {density:g}", density, density, density, f"given in the job ({where})")
