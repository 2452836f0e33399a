"""The job's [tolerances]: how well each number behind the balance factor is known.

Every key is optional; each default says where it comes from.  A tolerance is a
bound, ± about the nominal (drill oversize: 0 .. the bound above the drill's size),
and is read as a rectangular distribution between its ends: when only the bounds
of a quantity are known, JCGM 100:2008 (GUM) 4.3.7 takes every value between
them as equally likely, with standard uncertainty half-width / sqrt(3).

No CAD kernel, no numpy: `geomgen study` reads this too.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .errors import BadInput
from .units import to_internal

#: key: (kind for units.to_internal, default or None, where the default comes from)
KEYS: dict[str, tuple[str, float | None, str]] = {
    "scale": ("mass", 0.1, "common practice: the 0.1 g digital balance pistons, pins and rod ends are weighed on"),
    "web_density": ("density", None, "the web material's density range (geomgen.materials)"),
    "plug_density": ("density", None, "a named plug alloy: its density range (ASTM B777-15 Table 1 for the "
                                      "tungsten classes); a plug density given as a number: the scale over the "
                                      "plugs' volume (it is taken to come from weighing them)"),
    "drill_oversize": ("length", 0.05, "common practice, from memory: a sharp twist drill cuts a few hundredths "
                                       "of a millimetre over its size, never under"),
    "hole_position": ("length", 0.1, "common practice: a manual mill with a digital read-out, in x and in y"),
    "depth": ("length", 0.1, "common practice: a quill stop or read-out, on blind holes, plug bores and "
                             "radial holes"),
    "pocket_depth": ("length", 0.1, "common practice: a milled floor set from the face"),
    "thickness": ("length", 0.05, "common practice: a caliper reading of the web thickness"),
    "stand": ("unbalance", None, "no default: the accuracy of the balancing stand that read measured_unbalance"),
}

#: the floor each instrument can reasonably reach (what a remedy may ask for at most), common practice
FLOORS = {"scale": 0.01, "drill_oversize": 0.01, "hole_position": 0.01, "depth": 0.01, "pocket_depth": 0.01,
          "thickness": 0.005}


@dataclass(frozen=True)
class Tolerances:
    """±bounds in the internal units (g, g/cm^3, mm, g*mm); None = worked out from the job (see KEYS)."""

    scale: float = 0.1
    web_density: float | None = None
    plug_density: float | None = None
    drill_oversize: float = 0.05
    hole_position: float = 0.1
    depth: float = 0.1
    pocket_depth: float = 0.1
    thickness: float = 0.05
    stand: float | None = None
    #: the keys the job gave (the others are defaults)
    given: tuple[str, ...] = field(default=())

    def source(self, key: str) -> str:
        return "given in the job" if key in self.given else KEYS[key][2]


def read(data, where: str = "tolerances") -> Tolerances:
    """The [tolerances] table (or {}); BadInput for an unknown key or a negative bound."""
    if not isinstance(data, dict):
        raise BadInput(f"{where}: must be a table, got {type(data).__name__}")
    values: dict = {}
    for key, raw in data.items():
        if key not in KEYS:
            import difflib

            near = difflib.get_close_matches(key, sorted(KEYS), n=1)
            hint = f" (did you mean {near[0]!r}?)" if near else ""
            raise BadInput(f"{where}.{key}: unknown key{hint}; allowed: {', '.join(sorted(KEYS))}")
        kind = KEYS[key][0]
        if key == "stand" and isinstance(raw, str) and " at " in raw:
            from .calibrate import unbalance_value

            value = unbalance_value(raw, f"{where}.stand")
        else:
            value = to_internal(raw, kind, f"{where}.{key}")
        if value < 0:
            raise BadInput(f"{where}.{key}: a tolerance is a bound and must be >= 0, got {raw!r}")
        values[key] = value
    return Tolerances(**values, given=tuple(sorted(values)))
