"""Materials: a small table of densities and elastic constants, and any density given as a number.

Densities in g/cm^3, Young's modulus in GPa.  Each entry records where its
figures come from.

The four tungsten heavy-alloy classes are those of ASTM B777-15, Table 1
(tungsten content, weight %, and the density range the standard allows).
The nominal density used for planning is the middle of that range; the
report gives what the ends of the range do to a plug's effect, because a
plug of the lightest permitted alloy under-corrects.

Elastic constants (Young's modulus E, Poisson's ratio nu) feed the press-fit
and rotating-disc screens only.  The steels, stainless and aluminium are the
room-temperature values of Shigley's Mechanical Engineering Design, Table A-5
(recalled from memory; the same 30 Mpsi / 0.292 for steel appear in the book's
press-fit problems).  ASTM B777 sets no modulus: the heavy-alloy figures are
typical producer data, from memory.  A material given only as a density has no
elastic constants: a density says nothing reliable about stiffness, so a
screen that needs them asks for a named material instead of guessing.
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
    youngs_modulus_gpa: float | None = None   # E, GPa; None = not known (a density given as a number)
    poisson_ratio: float | None = None
    elastic_source: str = ""

    @property
    def has_elastic(self) -> bool:
        return self.youngs_modulus_gpa is not None and self.poisson_ratio is not None


_SHIGLEY = "Shigley's Mechanical Engineering Design, Table A-5 (from memory)"


def _b777(cls_no: int, tungsten_pct: float, lo: float, hi: float, e_gpa: float) -> Material:
    return Material(
        name=f"W-alloy-class-{cls_no}",
        density=round(0.5 * (lo + hi), 4),
        density_min=lo,
        density_max=hi,
        source=f"ASTM B777-15 Table 1, class {cls_no}: {tungsten_pct} % W, {lo}-{hi} g/cm^3",
        youngs_modulus_gpa=e_gpa,
        poisson_ratio=0.28,
        elastic_source="typical producer data for tungsten heavy alloys, from memory (ASTM B777 sets no modulus)",
    )


MATERIALS: dict[str, Material] = {m.name: m for m in [
    Material("steel", 7.85, 7.75, 7.95, "carbon and low-alloy steel, common practice",
             207.0, 0.292, f"carbon steel, {_SHIGLEY}"),
    Material("alloy-steel", 7.85, 7.80, 7.90, "Cr-Mo / Ni-Cr-Mo forging steels, common practice",
             207.0, 0.292, f"alloy steel, {_SHIGLEY}"),
    Material("stainless-steel", 7.95, 7.75, 8.05, "austenitic stainless, common practice",
             190.0, 0.305, f"stainless steel, {_SHIGLEY}"),
    # the stiffer of the two irons: a grey-iron web (about 100 GPa) then shows press-fit stresses on the
    # high side, never the low side
    Material("cast-iron", 7.20, 7.00, 7.35, "grey and ductile iron, common practice",
             169.0, 0.275, "ductile iron, from memory (grey iron is about 100 GPa, nu 0.211, Shigley Table A-5)"),
    Material("aluminium", 2.70, 2.66, 2.81, "wrought aluminium alloys, common practice",
             71.7, 0.333, f"aluminium alloy, {_SHIGLEY}"),
    _b777(1, 90, 16.85, 17.30, 310.0),
    _b777(2, 92.5, 17.15, 17.85, 330.0),
    _b777(3, 95, 17.75, 18.35, 345.0),
    _b777(4, 97, 18.25, 18.85, 365.0),
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
    return Material(f"density {density:g}", density, density, density, f"given in the job ({where})",
                    elastic_source="not known: the material is given as a density only")
