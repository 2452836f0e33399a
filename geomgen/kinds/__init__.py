"""Feature kinds: one module a kind, each a frozen dataclass answering the protocol of `base.FeatureKind`.

`KINDS` is the registry, the one table of kinds in geomgen: reading a feature table, the sheet's columns
and the drawing's tables are built from it.  A new kind is one module here, its tool in `_tools.py`,
its entry in KINDS, and its tests.
"""

from __future__ import annotations

from ..errors import BadInput
from .base import FACES, Dimension, FeatureKind, ReportCells, cone_massprops, cylinder_massprops, point_length
from .hole import Hole
from .plug import Plug
from .pocket import Pocket, kidney_loop
from .radial import Radial

#: every kind, by its `kind` name, in the order the outputs list them
KINDS: dict[str, type[FeatureKind]] = {k.kind: k for k in (Hole, Pocket, Plug, Radial)}

Feature = Hole | Pocket | Plug | Radial


def register_kind(cls: type[FeatureKind]) -> type[FeatureKind]:
    """Add a feature kind to the registry (usable as a class decorator); returns the class.

    The class must subclass FeatureKind (so a missing method stops it being made), be a frozen dataclass
    and name a `kind` no other kind uses.  Reading, walls, solids, verification, the sheet, the drawing and
    the report then take it with no other change.
    """
    import dataclasses

    if not (isinstance(cls, type) and issubclass(cls, FeatureKind)):
        raise TypeError(f"{cls!r} is not a FeatureKind subclass")
    if not dataclasses.is_dataclass(cls) or not cls.__dataclass_params__.frozen:
        raise TypeError(f"{cls.__name__} must be a frozen dataclass")
    name = cls.__dataclass_fields__["kind"].default if "kind" in cls.__dataclass_fields__ else None
    if not isinstance(name, str) or not name:
        raise TypeError(f"{cls.__name__} must give its `kind` a default name")
    if name in KINDS and KINDS[name] is not cls:
        raise ValueError(f"a feature kind named {name!r} is registered already")
    KINDS[name] = cls
    return cls


def feature_from_table(table: dict, *, where: str, thickness: float | None = None,
                       plug_material=None) -> FeatureKind:
    """A feature from a job or plan.json table; BadInput names `where` and the key.

    thickness : the web thickness, mm (fills a through hole's depth, a plug's length, a radial hole's z);
    plug_material : the job's `plug_material`, which a plug naming neither material nor density is made of.
    """
    if not isinstance(table, dict):
        raise BadInput(f"{where}: a feature must be a table with 'kind', got {table!r}")
    kind = table.get("kind")
    if kind not in KINDS:
        raise BadInput(f"{where}.kind: must be one of {', '.join(KINDS)}, got {kind!r}")
    body = {k: v for k, v in table.items() if k != "kind"}
    return KINDS[kind].read(body, where=where, thickness=thickness, plug_material=plug_material)


__all__ = ["KINDS", "FACES", "Feature", "FeatureKind", "Dimension", "ReportCells", "Hole", "Pocket", "Plug",
           "Radial", "feature_from_table", "register_kind", "kidney_loop", "cylinder_massprops", "cone_massprops",
           "point_length"]
