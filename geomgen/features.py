"""Features on a web, as functions over the feature kinds (geomgen.kinds).

The kinds themselves (Hole, Pocket, Plug, Radial) live one module each in `geomgen.kinds`; these
functions ask the feature and are kept so callers can say `footprint(f)` as well as `f.footprint()`.
"""

from __future__ import annotations

from .kinds import (
    FACES,
    KINDS,
    Feature,
    FeatureKind,
    Hole,
    Plug,
    Pocket,
    Radial,
    cone_massprops,
    cylinder_massprops,
    feature_from_table,
    kidney_loop,
)
from .loops import Loop
from .massprops import MassProps


def feature_to_table(feature: FeatureKind) -> dict:
    """The table written to plan.json (the same keys a job accepts)."""
    return feature.to_table()


def feature_massprops(feature: FeatureKind, *, thickness: float, web_density: float,
                      plug_density: float | None = None) -> MassProps:
    """The CHANGE a feature makes to the web's mass properties, web frame.

    Hole, pocket, radial hole: minus the material removed (web density; volume negative).  Plug: the
    bore filled flush, +(plug_density - web_density) times its cylinder (volume change 0).
    thickness : web thickness, mm;  densities : g/cm^3 (plug_density defaults to the plug's own).
    """
    return feature.massprops(thickness=thickness, web_density=web_density, plug_density=plug_density)


def footprint(feature: FeatureKind) -> Loop:
    """The exact plan-view outline of a feature on the face (ccw, mm)."""
    return feature.footprint()


def footprint_polygon(feature: FeatureKind, max_chord_mm: float = 0.005):
    """The footprint as a shapely Polygon (flattened within `max_chord_mm` sagitta)."""
    return feature.footprint_polygon(max_chord_mm)


def z_range(feature: FeatureKind, thickness: float) -> tuple[float, float]:
    """(z_low, z_high) mm of the material a feature takes or fills, drill point included."""
    return feature.z_range(thickness)


def plug_density_of(feature: FeatureKind, where: str = "plug") -> float | None:
    """g/cm^3 of what fills a feature's cut (a plug's own density or its material's), None if nothing."""
    return feature.plug_density()


def check_dimensions(feature: FeatureKind, *, where: str, thickness: float | None) -> None:
    """Sizes that make no solid: zero or negative, deeper than the web, etc."""
    feature.check(where=where, thickness=thickness)


__all__ = ["FACES", "KINDS", "Feature", "Hole", "Pocket", "Plug", "Radial", "cone_massprops", "cylinder_massprops",
           "feature_from_table", "feature_to_table", "feature_massprops", "footprint", "footprint_polygon",
           "z_range", "plug_density_of", "check_dimensions", "kidney_loop"]
