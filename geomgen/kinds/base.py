"""What every feature kind answers, and the closed-form bodies they are built from.

A feature kind is a frozen dataclass in the web frame (crank axis Z, pin on +Y, z from 0 at the inner
face to the thickness at the outer face) that subclasses `FeatureKind` and answers:

- `read(table, where=..., thickness=..., plug_material=...)` / `to_table()`: the job and plan.json form;
- `check(where=..., thickness=...)`: sizes that make no solid;
- `footprint()` (an exact loops.Loop on the face), `z_range(thickness)`: where it is, for the walls;
- `massprops(thickness=..., web_density=...)`: the CHANGE it makes to the web (closed forms);
- `label()`, `report_cells()`, `fill_sheet(cells)`, `drawing_row(...)`, `dimensions()`, `tag_point()`:
  what the outputs print of it;
- `tool(thickness)` and `filler(thickness)`: its cutting tool and (for a plug) the solid that fills it,
  made behind the lazy CAD door (kinds/_tools.py), so this module imports no kernel.

The rest of geomgen asks the feature; the only table of kinds is the registry in kinds/__init__.py.
"""

from __future__ import annotations

import math
from abc import ABC, abstractmethod
from dataclasses import MISSING, asdict, dataclass
from typing import Any, ClassVar

import numpy as np

from ..errors import BadInput
from ..loops import Loop
from ..massprops import MassProps
from ..units import to_internal

FACES = ("outer", "inner")

#: turns a local +Z body into a -Z one (half a turn about X)
FLIP_Z = np.diag([1.0, -1.0, -1.0])


@dataclass(frozen=True)
class Dimension:
    """A dimension the drawing puts on a feature, in the web frame (mm, math angles from +X).

    what : "from_axis" (aligned, from the crank axis to `point`), "diameter" (at `point`, `radius`),
           "radius" (from the crank axis, `radius`, at `angle`), "span" (the angle between the radial
           lines at `angle` and `angle_end`, its arc at `radius`)
    """

    what: str
    point: tuple[float, float] = (0.0, 0.0)
    radius: float = 0.0
    angle: float = 0.0
    angle_end: float = 0.0


@dataclass(frozen=True)
class ReportCells:
    """A feature's cells in the report's feature table."""

    kind: str
    where: str
    size: str
    depth: str


class FeatureKind(ABC):
    """The protocol of a feature kind (see the module docstring); subclasses are frozen dataclasses."""

    kind: ClassVar[str]
    #: the kind's own keys that are lengths (mm) / angles (deg) in a job table
    LENGTH_KEYS: ClassVar[tuple[str, ...]] = ()
    ANGLE_KEYS: ClassVar[tuple[str, ...]] = ()
    #: fills its bore with a material of its own (a plug) instead of only taking material away
    fills: ClassVar[bool] = False
    #: enters through the rim (a radial hole): no wall to the rim is kept
    opens_rim: ClassVar[bool] = False
    #: the drawing's table for this kind: two-line headings
    DRAWING_HEADINGS: ClassVar[tuple[tuple[str, str], ...]] = ()
    #: the drawing's line above the table
    DRAWING_NOTE: ClassVar[str] = ""
    #: operations.csv columns only this kind fills, as (name, is_length) (lengths get the unit suffix)
    SHEET_COLUMNS: ClassVar[tuple[tuple[str, bool], ...]] = ()
    #: dataclass fields that are not job keys (set by `on`)
    INTERNAL_FIELDS: ClassVar[tuple[str, ...]] = ()
    #: how far the drawing's number tag stands off `tag_point` (a round feature's radius), mm
    tag_clearance: ClassVar[float] = 0.0

    face: str

    # ---------------------------------------------------------------- reading and writing
    @classmethod
    def read(cls, table: dict, *, where: str, thickness: float | None = None, plug_material=None):
        """The feature from a job or plan.json table; BadInput names `where` and the key."""
        allowed = set(cls.__dataclass_fields__) - set(cls.INTERNAL_FIELDS)
        unknown = sorted(set(table) - allowed)
        if unknown:
            raise BadInput(f"{where}: unknown key {unknown[0]!r} for a {cls.kind}; "
                           f"allowed: {', '.join(sorted(allowed))}")
        values: dict[str, Any] = {}
        for key in cls.LENGTH_KEYS + cls.ANGLE_KEYS:
            if key in table:
                values[key] = to_internal(table[key], "angle" if key in cls.ANGLE_KEYS else "length",
                                          f"{where}.{key}")
        if "face" in table:
            if table["face"] not in cls.allowed_faces():
                raise BadInput(f"{where}.face: must be {' or '.join(repr(f) for f in cls.allowed_faces())}, "
                               f"got {table['face']!r}")
            values["face"] = table["face"]
        cls.read_more(table, values, where=where, thickness=thickness, plug_material=plug_material)
        required = [k for k in cls.LENGTH_KEYS + cls.ANGLE_KEYS
                    if k not in values and cls.__dataclass_fields__[k].default is MISSING]
        if required:
            raise BadInput(f"{where}: a {cls.kind} needs {', '.join(required)}")
        feature = cls(**values)
        feature.check(where=where, thickness=thickness)
        return feature

    @classmethod
    def allowed_faces(cls) -> tuple[str, ...]:
        return FACES

    @classmethod  # noqa: B027  (a hook with a default: a pocket reads nothing more)
    def read_more(cls, table: dict, values: dict, *, where: str, thickness: float | None,
                  plug_material) -> None:
        """Kind-specific keys (flags, materials) into `values`; by default a kind has none (a pocket)."""

    def to_table(self) -> dict:
        """The table written to plan.json (the keys a job accepts)."""
        return {k: v for k, v in asdict(self).items() if v is not None}

    @abstractmethod
    def check(self, *, where: str, thickness: float | None) -> None:
        """Sizes that make no solid raise BadInput naming `where`."""

    def positive(self, name: str, where: str) -> None:
        value = getattr(self, name)
        if not value > 0:
            raise BadInput(f"{where}.{name}: must be > 0 mm, got {value}")

    # ---------------------------------------------------------------- geometry
    @abstractmethod
    def footprint(self) -> Loop:
        ...

    def footprint_polygon(self, max_chord_mm: float = 0.005):
        """The footprint as a shapely Polygon (flattened within `max_chord_mm` sagitta)."""
        return self.footprint().polygon(max_chord_mm)

    @abstractmethod
    def z_range(self, thickness: float) -> tuple[float, float]:
        ...

    @abstractmethod
    def massprops(self, *, thickness: float, web_density: float, plug_density: float | None = None) -> MassProps:
        ...

    def on(self, section) -> FeatureKind:
        """This feature placed on a web section (a radial hole finds its rim); most kinds need nothing."""
        return self

    @property
    def hidden_in_face_view(self) -> bool:
        """Drawn dashed on the face view (cut from the other face, or inside the web)."""
        return self.face == "inner"

    def face_depth(self, thickness: float) -> float | None:
        """How deep it goes into the web from a face (what max_depth limits), mm; None if it goes right
        through or does not enter from a face."""
        return None

    @abstractmethod
    def order_key(self) -> tuple:
        """Machining order: pockets first (they need the face), then holes and plug bores clockwise from +Y,
        then what needs another set-up (radial holes)."""
        ...

    # ---------------------------------------------------------------- outputs
    @abstractmethod
    def label(self) -> str:
        ...

    @abstractmethod
    def tag_point(self) -> tuple[float, float]:
        """Where the feature's number goes on a face view, web frame, mm."""
        ...

    @abstractmethod
    def report_cells(self) -> ReportCells:
        ...

    @abstractmethod
    def fill_sheet(self, cells) -> None:
        """Put this feature's columns of operations.csv through `cells` (a sheet.SheetCells)."""
        ...

    @abstractmethod
    def drawing_row(self, *, thickness: float, drill_series: str, plug_fit: str,
                    default_plug_density: float | None) -> tuple[str, ...]:
        """The cells under DRAWING_HEADINGS after the common no/status/face, and before mass/unbalance."""
        ...

    def dimensions(self) -> list[Dimension]:
        return []

    @abstractmethod
    def tool(self, thickness: float):
        """The solid (an OpenCascade shape, built in kinds/_tools.py) this feature cuts from the web."""
        ...

    def filler(self, thickness: float):
        """The solid that fills the cut (a plug), or None."""
        return None

    def plug_density(self) -> float | None:
        """g/cm^3 of what fills the cut, or None for a kind that fills nothing."""
        return None


class RoundOnFace:
    """What a feature centred at (x, y) on a face with a `diameter` (a hole, a plug bore) shows: its circle,
    its number just outside it, its distance from the crank axis and its diameter."""

    x: float
    y: float
    diameter: float

    def footprint(self) -> Loop:
        from ..loops import circle

        return circle(self.x, self.y, 0.5 * self.diameter)

    def tag_point(self) -> tuple[float, float]:
        return (self.x, self.y)

    @property
    def tag_clearance(self) -> float:
        return 0.5 * self.diameter

    def dimensions(self) -> list[Dimension]:
        out = []
        if math.hypot(self.x, self.y) > 1e-6:
            out.append(Dimension("from_axis", point=(self.x, self.y)))
        out.append(Dimension("diameter", point=(self.x, self.y), radius=0.5 * self.diameter,
                             angle=math.degrees(math.atan2(self.y, self.x)) + 45.0))
        return out

    def clockwise_key(self, rank: int) -> tuple:
        """(rank, angle clockwise from +Y, farthest first): the order a machinist works round the face."""
        return (rank, round(-math.atan2(-self.x, self.y), 6) % (2 * math.pi), -math.hypot(self.x, self.y))


# ---------------------------------------------------------------- closed-form bodies
def cylinder_massprops(*, radius: float, height: float, density_g_cm3: float) -> MassProps:
    """A solid cylinder, base centred at the origin, axis +Z (mm, g/cm^3).

    Closed forms: V = pi r^2 h;  ∫x² dV = ∫y² dV = V r²/4;  ∫z dV = V h/2;
    ∫z² dV = V h²/3 (integrals of the disc and of z over 0..h).
    """
    v = math.pi * radius * radius * height
    s = np.diag([v * radius * radius / 4.0, v * radius * radius / 4.0, v * height * height / 3.0])
    return MassProps.from_density(volume=v, centroid=(0.0, 0.0, 0.5 * height),
                                  volume_second_moment=s, density_g_cm3=density_g_cm3)


def cone_massprops(*, radius: float, height: float, density_g_cm3: float) -> MassProps:
    """A solid right cone, base of `radius` centred at the origin, apex at (0, 0, height).

    Closed forms: V = pi r^2 h / 3; centroid h/4 from the base (Machinery's
    Handbook); ∫x² dV = ∫y² dV = 3 V r²/20; ∫z² dV = V h²/10 (the disc of
    radius r(1 - z/h) integrated over 0..h).
    """
    v = math.pi * radius * radius * height / 3.0
    s = np.diag([3.0 * v * radius * radius / 20.0, 3.0 * v * radius * radius / 20.0,
                 v * height * height / 10.0])
    return MassProps.from_density(volume=v, centroid=(0.0, 0.0, 0.25 * height),
                                  volume_second_moment=s, density_g_cm3=density_g_cm3)


def point_length(diameter: float, point_angle: float) -> float:
    """Axial length of a drill point of `point_angle` (deg) on a `diameter` drill, mm; 0 for a flat bottom."""
    if point_angle >= 180.0:
        return 0.0
    return 0.5 * diameter / math.tan(math.radians(0.5 * point_angle))


def axial_body(body_up: MassProps, *, x: float, y: float, z_face: float, into_minus_z: bool) -> MassProps:
    """A local +Z body placed with its base at (x, y, z_face), turned to point -Z if asked."""
    return body_up.transformed(rotation=FLIP_Z if into_minus_z else None, offset=(x, y, z_face))


def face_z_range(face: str, thickness: float, reach: float) -> tuple[float, float]:
    """(z_low, z_high) of something `reach` deep from `face`."""
    if face == "outer":
        return (thickness - reach, thickness)
    return (0.0, reach)


def mm(value: float) -> str:
    """A length for the drawing's tables: 0.01 mm, never "-0.00"."""
    text = f"{value:.2f}"
    return "0.00" if float(text) == 0 else text


def deg(value: float) -> str:
    text = f"{value:.1f}"
    return "0.0" if float(text) == 0 else text
