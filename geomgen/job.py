"""The job file: TOML in, validated frozen dataclasses out (mm, g, rpm, deg).

Every rule names the key path and what is allowed; everything wrong raises
`BadInput`.  The keys are listed in the README ("The job file").
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from .balance import bob_weight, rpm_to_omega, web_target
from .errors import BadInput
from .fits import DEFAULT_FIT, check_fit
from .materials import MATERIALS, Material, custom, material
from .nc.settings import KEYS as _MACHINING
from .tolerances import KEYS as _TOLERANCE_KEYS
from .units import to_internal

#: `outline_gap` default, mm: DXF ends closer than this are joined.  CAD exports commonly leave gaps of
#: a few micrometres up to 0.01 mm between entities drawn as meeting (common practice); twice that is
#: still far below what a rim is turned or ground to
OUTLINE_GAP_MM = 0.02
#: the largest `outline_gap`, mm: a wider gap is a fault of the drawing to be closed there, not noise
OUTLINE_GAP_MAX_MM = 0.1


@dataclass(frozen=True)
class Balancer:
    """A primary balancer shaft at crank speed, counter-rotating.

    share : its unbalance as a share of m_reciprocating * stroke/2 (0 .. 1.5)
    offset : its axis in the crank's XY frame, mm (for the rocking couple)
    """

    share: float = 0.5
    offset: tuple[float, float] = (0.0, 0.0)


@dataclass(frozen=True)
class Engine:
    """The engine of a job, in mm, g, rpm, degrees.

    reciprocating : weighed parts by name, g (piston, pin, rings, rod small end).
    rotating : the rod's rotating end by name, g (big end, bearing, cage, washers),
        at the crankpin radius (stroke/2); it goes on the bob weight.
    crank_parts : the crank's own metal at the crankpin radius by name, g (the
        crankpin, its nuts or plugs); the webs counter it, but it is part of the
        rotor on a balancing machine, so it is never on the bob weight.
    rotation : "ccw" or "cw", the crank's direction of rotation seen from web a's
        outer face (+Z); crank angles and heavy-spot angles follow it.
    """

    stroke: float
    rod_length: float
    max_rpm: float
    balance_factor: float
    reciprocating: dict = field(default_factory=dict)
    rotating: dict = field(default_factory=dict)
    cylinder_tilt: float = 0.0
    crank_parts: dict = field(default_factory=dict)
    rotation: str = "ccw"

    @property
    def crank_radius(self) -> float:
        return 0.5 * self.stroke

    @property
    def m_reciprocating(self) -> float:
        return float(sum(self.reciprocating.values()))

    @property
    def m_rotating(self) -> float:
        """The rod's rotating end, g (on the bob weight)."""
        return float(sum(self.rotating.values()))

    @property
    def m_crank_parts(self) -> float:
        """The crank's own parts at the pin radius, g (countered by the webs, not on the bob)."""
        return float(sum(self.crank_parts.values()))

    @property
    def m_at_pin(self) -> float:
        """Everything that turns at the crankpin radius: rod's rotating end plus crank parts, g."""
        return self.m_rotating + self.m_crank_parts

    @property
    def omega(self) -> float:
        """Crank speed at max_rpm, rad/s."""
        return rpm_to_omega(self.max_rpm)

    @property
    def bob_weight_g(self) -> float:
        """The bob weight to hang on the assembled crank's pin, g."""
        return bob_weight(m_rotating=self.m_rotating, m_reciprocating=self.m_reciprocating,
                          balance_factor=self.balance_factor)

    @property
    def bf_unit_gmm(self) -> float:
        """g*mm of web unbalance per balance-factor percent: m_reciprocating * stroke/2 / 100."""
        return self.m_reciprocating * self.crank_radius / 100.0

    def webs_target_gmm(self) -> tuple[float, float]:
        """The unbalance both webs together must carry, crank frame, g*mm (x, y)."""
        u = web_target(m_rotating=self.m_rotating, m_crank_parts=self.m_crank_parts,
                       m_reciprocating=self.m_reciprocating, balance_factor=self.balance_factor,
                       crank_radius=self.crank_radius)
        return (float(u[0]), float(u[1]))

    def balance_factor_of(self, webs_unbalance_y: float) -> float:
        """The balance factor that a crank whose webs carry `webs_unbalance_y` g*mm (crank frame) has."""
        return (-webs_unbalance_y / self.crank_radius - self.m_at_pin) / self.m_reciprocating


@dataclass(frozen=True)
class KeepOut:
    """A zone on the web face where nothing may be cut, web frame, mm.

    Either a circle (`center`, `diameter`) or a polygon (`points`).
    """

    center: tuple[float, float] | None = None
    diameter: float | None = None
    points: tuple[tuple[float, float], ...] | None = None


@dataclass(frozen=True)
class WebSpec:
    """One flywheel web as the job describes it (web frame, mm, g/cm^3)."""

    name: str
    thickness: float
    material: Material
    pin_bore: float
    main_bore: float = 0.0
    diameter: float | None = None          # parametric full-circle web ...
    outline: Path | None = None            # ... or a closed DXF outline
    outline_units: str | None = None
    outline_gap: float = OUTLINE_GAP_MM    # mm, DXF ends closer than this are joined
    features: tuple = ()
    share: float = 0.5                     # share of the crank's web target
    pin_interference: float = 0.0          # diametral crankpin press fit, mm (0 = no press-fit screen)
    pin_inner_diameter: float = 0.0        # the crankpin's own bore, mm (0 = solid pin)
    pin_material: Material | None = None   # the crankpin's material (None = the web's)
    shaft_diameter: float = 0.0            # an integral mainshaft where main_bore = 0: nothing new is cut there
    model: Path | None = None              # ... or the designer's own 3D model (a STEP solid)
    model_units: str | None = None         # the model's length unit when the STEP declares none
    model_rotate_deg: float = 0.0          # the model turned about Z by this first, deg counter-clockwise
    weighing: object | None = None         # calibrate.Weighing: what the builder weighed and measured
    calibration: object | None = None      # calibrate.Calibration: the web fitted to its weighed mass

    @property
    def density(self) -> float:
        return self.material.density


#: the shortest plug a press fit holds square, mm, and the least length / diameter: a plug shorter than
#: about its diameter cocks as it is pressed and is held on too little length (common practice: a
#: pressed plug or dowel is given an engagement of 0.5 to 1 diameter at least, and a few millimetres
#: at the very least; geomgen takes 5 mm and 0.75, the middle of that band)
PLUG_MIN_LENGTH_MM = 5.0
PLUG_MIN_LENGTH_RATIO = 0.75


@dataclass(frozen=True)
class Correction:
    """What the shop may do to reach the target."""

    kind: str = "holes"                    # holes | pockets | plugs | auto
    drill_series: str = "metric"           # "metric", "inch" or "list"
    drills: tuple[float, ...] = ()         # mm, ascending
    max_depth: float = 15.0
    min_wall: float = 3.0
    pin_wall: float = 6.0
    through: bool = True
    keep_out: tuple[KeepOut, ...] = ()
    plug_material: Material | None = None
    lighten: float = 0.0                   # g off each web
    point_angle: float = 118.0             # deg, drill point
    depth_step: float = 0.05               # mm, the depth a machinist can set
    bf_tolerance_percent: float = 0.5      # |deviation| allowed, balance-factor percent (0.5 = +-0.5 %)
    iso_grade: float = 6.3                 # ISO 21940-11 G-grade, mm/s
    plug_fit: str = "H7/p6"                # ISO 286 bore/plug fit of heavy-metal plugs
    plug_min_length: float = PLUG_MIN_LENGTH_MM        # mm: no plug shorter is planned; a shorter one is warned
    plug_min_length_ratio: float = PLUG_MIN_LENGTH_RATIO  # length / diameter, the same


@dataclass(frozen=True)
class Output:
    stl_tolerance: float = 0.01            # mm, absolute chord
    stl_angular_tolerance: float = 0.1     # rad
    sheet_units: str = "mm"                # operations.csv: "mm" or "inch"
    crank_step: bool = True                # also write crank.step
    crank_gap: float = 20.0                # mm between the webs' inner faces in crank.step


@dataclass(frozen=True)
class Job:
    name: str
    path: Path | None
    engine: Engine
    balancer: Balancer | None
    webs: tuple[WebSpec, ...]
    correction: Correction
    output: Output
    overspeed: float = 1.2                 # plug loads are also shown at overspeed * max_rpm
    warnings: tuple[str, ...] = ()         # things the job allows but a builder should look at
    tolerances: object | None = None       # tolerances.Tolerances: how well each input is known
    machining: object = None               # geomgen.nc.settings.Machining: the [machining] section

    @property
    def tolerance_gmm(self) -> float:
        """Allowed magnitude |ΔU| of the whole crank's deviation from target, g*mm (a vector bound)."""
        return self.correction.bf_tolerance_percent * self.engine.bf_unit_gmm

    def target_gmm(self, web: WebSpec) -> tuple[float, float]:
        """The unbalance this web must carry in its own frame, g*mm (x, y)."""
        total = self.engine.webs_target_gmm()[1]
        return (0.0, web.share * total)


# ---------------------------------------------------------------- loading

_TOP = {"name", "engine", "balancer", "web", "webs", "correction", "output", "overspeed", "tolerances",
        "machining"}
_ENGINE = {"stroke", "rod_length", "max_rpm", "balance_factor", "cylinder_tilt", "reciprocating", "rotating",
           "crank_parts", "rotation"}
_BALANCER = {"share", "offset"}
_WEB = {"diameter", "outline", "outline_units", "outline_gap", "thickness", "material", "density", "pin_bore",
        "main_bore", "features", "pin_interference", "pin_inner_diameter", "pin_material", "shaft_diameter",
        "weighed", "calibrate", "measured_unbalance", "measured_angle", "model", "model_units", "model_rotate_deg"}
#: the keys of what the builder weighed and measured on one web (geomgen.calibrate)
_WEIGHING = ("weighed", "calibrate", "measured_unbalance", "measured_angle")
_WEBS = _WEB | {"name", "share"}
_CORRECTION = {"kind", "drills", "max_depth", "min_wall", "pin_wall", "through", "keep_out",
               "plug_material", "lighten", "point_angle", "depth_step", "bf_tolerance_percent",
               "tolerance_points", "iso_grade", "plug_fit", "plug_min_length", "plug_min_length_ratio"}
_OUTPUT = {"stl_tolerance", "stl_angular_tolerance", "sheet_units", "crank_step", "crank_gap"}
#: the unit a job number is held in, by kind (the README's "The job file")
_UNIT_NAMES = {"length": "mm", "mass": "g", "speed": "rpm", "angle": "deg", "density": "g/cm^3"}
#: where each key lives, to point a key put in the wrong table to its home
_HOMES = {"the top level": _TOP, "engine": _ENGINE, "balancer": _BALANCER, "web": _WEB, "correction": _CORRECTION,
          "output": _OUTPUT, "tolerances": set(_TOLERANCE_KEYS), "machining": _MACHINING}
KINDS = ("holes", "pockets", "plugs", "radial", "auto")
ROTATIONS = ("ccw", "cw")


def _close_match(key: str, allowed: set) -> str:
    import difflib

    near = difflib.get_close_matches(key, sorted(allowed), n=1)
    return f" (did you mean {near[0]!r}?)" if near else ""


def _table(data, where: str, allowed: set) -> dict:
    if not isinstance(data, dict):
        raise BadInput(f"{where}: must be a table, got {type(data).__name__}")
    for key in data:
        if key not in allowed:
            home = next((table for table, keys in _HOMES.items() if key in keys and table != where), None)
            belongs = f"; {key} belongs in {home}" if home else ""
            raise BadInput(f"{where}.{key}: unknown key{_close_match(key, allowed) if not home else ''}{belongs}; "
                           f"allowed: {', '.join(sorted(allowed))}")
    return data


def _number(table: dict, key: str, where: str, kind: str, *, default=None, lo=None, hi=None,
            lo_open=False, hi_open=False) -> float:
    path = f"{where}.{key}" if where else key
    if key not in table:
        if default is None:
            raise BadInput(f"{path}: missing; it is required")
        return default
    value = to_internal(table[key], kind, path)
    low_bad = lo is not None and (value <= lo if lo_open else value < lo)
    high_bad = hi is not None and (value >= hi if hi_open else value > hi)
    if low_bad or high_bad:
        lo_txt = "" if lo is None else f"{'>' if lo_open else '>='} {lo:g}"
        hi_txt = "" if hi is None else f"{'<' if hi_open else '<='} {hi:g}"
        rng = " and ".join(t for t in (lo_txt, hi_txt) if t)
        unit = _UNIT_NAMES.get(kind, "")
        shown = f"{value:g} {unit}".strip()
        given = f"{table[key]!r} = {shown}" if isinstance(table[key], str) else shown
        raise BadInput(f"{path}: {given} is out of range; must be {rng} {unit}".rstrip())
    return value


def _bool(table: dict, key: str, where: str, default: bool) -> bool:
    value = table.get(key, default)
    if not isinstance(value, bool):
        raise BadInput(f"{where}.{key}: must be true or false, got {value!r}")
    return value


def _masses(table, where: str) -> dict:
    if not isinstance(table, dict) or not table:
        raise BadInput(f"{where}: must be a table of weighed parts in g, e.g. piston = 250.0")
    out = {}
    for part, _value in table.items():
        out[part] = _number(table, part, where, "mass", lo=0.0, lo_open=True)
    return out


# names in [engine.rotating] that say "this is the crank's own metal": it belongs in [engine.crank_parts]
_CRANK_PART_WORDS = ("crankpin", "crank_pin", "crank-pin", "pin", "pin_nut", "pin_nuts", "pin_plug", "pin_plugs")


def _looks_like_crank_part(name: str) -> bool:
    words = [w for w in name.lower().replace("-", "_").split("_") if w]
    return "crankpin" in words or (bool(words) and words[0] == "pin") or name.lower() in _CRANK_PART_WORDS


def crank_part_warnings(engine: Engine, where: str = "engine") -> tuple[str, ...]:
    """A warning for each [engine.rotating] part whose name says it is part of the crank."""
    return tuple(
        f"{where}.rotating.{part}: looks like a part of the crank; move it to [{where}.crank_parts] so it "
        f"stays off the bob weight (the webs' target is the same either way; the bob weight is "
        f"{engine.bob_weight_g:.1f} g with it, {engine.bob_weight_g - mass:.1f} g without)"
        for part, mass in sorted(engine.rotating.items()) if _looks_like_crank_part(part))


def _engine(data, where="engine") -> Engine:
    t = _table(data, where, _ENGINE)
    stroke = _number(t, "stroke", where, "length", lo=0.0, lo_open=True, hi=1000.0)
    rod = _number(t, "rod_length", where, "length", lo=0.0, lo_open=True)
    if rod <= stroke / 2:
        raise BadInput(f"{where}.rod_length: {rod:g} mm must be longer than stroke/2 = {stroke / 2:g} mm")
    if "reciprocating" not in t:
        raise BadInput(f"{where}.reciprocating: missing; list the weighed reciprocating parts in g")
    if "rotating" not in t:
        raise BadInput(f"{where}.rotating: missing; list the weighed rotating parts in g")
    rotation = t.get("rotation", "ccw")
    if rotation not in ROTATIONS:
        raise BadInput(f"{where}.rotation: must be 'ccw' or 'cw' (as seen from web a's outer face), got {rotation!r}")
    crank_parts = t.get("crank_parts", {})
    return Engine(
        stroke=stroke,
        rod_length=rod,
        max_rpm=_number(t, "max_rpm", where, "speed", lo=0.0, lo_open=True, hi=100000.0),
        balance_factor=_number(t, "balance_factor", where, "dimensionless", lo=0.0, hi=1.5),
        cylinder_tilt=_number(t, "cylinder_tilt", where, "angle", default=0.0, lo=-180.0, hi=180.0),
        reciprocating=_masses(t["reciprocating"], f"{where}.reciprocating"),
        rotating=_masses(t["rotating"], f"{where}.rotating"),
        crank_parts=_masses(crank_parts, f"{where}.crank_parts") if crank_parts != {} else {},
        rotation=rotation,
    )


def _balancer(data) -> Balancer:
    t = _table(data, "balancer", _BALANCER)
    share = _number(t, "share", "balancer", "dimensionless", default=0.5, lo=0.0, hi=1.5)
    offset = t.get("offset", [0.0, 0.0])
    if not (isinstance(offset, list) and len(offset) == 2):
        raise BadInput(f"balancer.offset: must be [x, y] in mm, got {offset!r}")
    off = tuple(to_internal(v, "length", f"balancer.offset[{i}]") for i, v in enumerate(offset, 1))
    return Balancer(share=share, offset=off)


def _resolve_material(t: dict, where: str) -> Material:
    if "density" in t and "material" in t:
        raise BadInput(f"{where}: give 'material' or 'density', not both")
    if "density" in t:
        return custom(_number(t, "density", where, "density", lo=0.0, lo_open=True), f"{where}.density")
    return material(t.get("material", "steel"), f"{where}.material")


def _web(t: dict, where: str, name: str, share: float, engine: Engine, base: Path,
         plug_material: Material | None) -> WebSpec:
    has_d, has_o, has_m = "diameter" in t, "outline" in t, "model" in t
    if has_d + has_o + has_m != 1:
        raise BadInput(f"{where}: give exactly one of 'diameter' (a full-circle web), 'outline' (a DXF file) "
                       "or 'model' (a STEP solid)")
    pin_bore = _number(t, "pin_bore", where, "length", lo=0.0, lo_open=True)
    main_bore = _number(t, "main_bore", where, "length", default=0.0, lo=0.0)
    model = model_units = None
    model_rotate = 0.0
    if has_m:
        model, model_units, model_rotate, thickness = _model(t, where, engine, base, pin_bore, main_bore)
    else:
        for key in ("model_units", "model_rotate_deg"):
            if key in t:
                raise BadInput(f"{where}.{key}: only for a web given as a model (model = \"web.step\")")
        thickness = _number(t, "thickness", where, "length", lo=0.0, lo_open=True, hi=200.0)
    # a web with no main bore carries its mainshaft there: as thick as the crankpin unless the job says
    # (common practice, from memory); 0 = the web is free at its centre
    shaft = _number(t, "shaft_diameter", where, "length", default=0.0 if main_bore else pin_bore, lo=0.0)
    if main_bore and "shaft_diameter" in t:
        raise BadInput(f"{where}.shaft_diameter: the web has a {main_bore:g} mm main bore; shaft_diameter is for "
                       "a web with an integral mainshaft (main_bore = 0)")
    r = engine.crank_radius
    if main_bore and main_bore / 2 + pin_bore / 2 >= r:
        raise BadInput(f"{where}.main_bore: a {main_bore:g} mm main bore meets the {pin_bore:g} mm pin bore "
                       f"at {r:g} mm from the axis; need main_bore/2 + pin_bore/2 < stroke/2")
    diameter = outline = units = None
    gap = OUTLINE_GAP_MM
    if has_m:
        pass
    elif has_d:
        diameter = _number(t, "diameter", where, "length", lo=0.0, lo_open=True)
        if r + pin_bore / 2 >= diameter / 2:
            raise BadInput(f"{where}.pin_bore: the {pin_bore:g} mm crankpin bore at {r:g} mm from the axis does not "
                           f"fit inside the {diameter:g} mm web; need stroke/2 + pin_bore/2 < diameter/2")
    else:
        if not isinstance(t["outline"], str):
            raise BadInput(f"{where}.outline: must be a path to a DXF file, got {t['outline']!r}")
        outline = (base / t["outline"]).resolve()
        if not outline.is_file():
            raise BadInput(f"{where}.outline: file not found: {outline}")
        units = t.get("outline_units")
        if units is not None and units not in ("mm", "in", "cm", "m"):
            raise BadInput(f"{where}.outline_units: must be 'mm', 'in', 'cm' or 'm', got {units!r}")
        gap = _number(t, "outline_gap", where, "length", default=OUTLINE_GAP_MM, lo=0.0, lo_open=True,
                      hi=OUTLINE_GAP_MAX_MM)
    raw = t.get("features", [])
    if not isinstance(raw, list):
        raise BadInput(f"{where}.features: must be a list of feature tables")
    features: tuple = ()
    if raw:
        # the feature kinds (and shapely under them) load only for a web that has features: `study` of a
        # plain web stays light
        from .kinds import feature_from_table

        # on a web given as a model the thickness differs from stretch to stretch: a through feature there
        # gives its own depth (that of the stretch it goes through), as plan.json writes it
        features = tuple(feature_from_table(f, where=f"{where}.features[{i}]",
                                            thickness=None if model is not None else thickness,
                                            plug_material=plug_material)
                         for i, f in enumerate(raw, 1))
    web_material = _resolve_material(t, where)
    fit, pin_inner, pin_material = _press_fit(t, where, pin_bore, web_material)
    spec = WebSpec(name=name, thickness=thickness, material=web_material, pin_bore=pin_bore,
                   main_bore=main_bore, diameter=diameter, outline=outline, outline_units=units, outline_gap=gap,
                   model=model, model_units=model_units, model_rotate_deg=model_rotate, shaft_diameter=shaft,
                   features=features, share=share, pin_interference=fit, pin_inner_diameter=pin_inner,
                   pin_material=pin_material)
    if any(k in t for k in _WEIGHING):
        # the web as weighed: its density (or thickness) fitted to the scale; the plan starts from it
        from .calibrate import calibrate_web, read_weighing

        bare = {k: v for k, v in t.items() if k not in _WEIGHING}

        def rebuild(new_thickness: float) -> WebSpec:
            return _web({**bare, "thickness": new_thickness}, where, name, share, engine, base, plug_material)

        spec = calibrate_web(spec, read_weighing(t, where), stroke=engine.stroke, rebuild=rebuild, where=where)
    return spec


def _model(t: dict, where: str, engine: Engine, base: Path, pin_bore: float, main_bore: float):
    """(path, model_units, model_rotate_deg, thickness) of a web given as a STEP model; the model is read
    and checked against the job here (geomgen.model3d), so a bad model is refused as the job loads."""
    for key in ("thickness", "outline_units", "outline_gap"):
        if key in t:
            raise BadInput(f"{where}.{key}: a web given as a model takes its shape from the model; leave {key} out")
    if not isinstance(t["model"], str):
        raise BadInput(f"{where}.model: must be a path to a STEP file, got {t['model']!r}")
    path = (base / t["model"]).resolve()
    if not path.is_file():
        raise BadInput(f"{where}.model: file not found: {path}")
    from .model3d import MODEL_UNITS_MM, load_model

    units = t.get("model_units")
    if units is not None and units not in MODEL_UNITS_MM:
        raise BadInput(f"{where}.model_units: must be {', '.join(repr(u) for u in MODEL_UNITS_MM)}, got {units!r}")
    rotate = _number(t, "model_rotate_deg", where, "angle", default=0.0, lo=-360.0, hi=360.0)
    model = load_model(path, units=units, rotate_deg=rotate, stroke=engine.stroke, pin_bore=pin_bore,
                       main_bore=main_bore, where=where)
    return path, units, rotate, model.z_top


def _press_fit(t: dict, where: str, pin_bore: float, web_material: Material):
    """(pin_interference, pin_inner_diameter, pin_material) of one web."""
    # 1 % of the diameter strains steel past yield many times over: a bigger figure is a slip of units
    fit = _number(t, "pin_interference", where, "length", default=0.0, lo=0.0)
    if fit > 0.01 * pin_bore:
        raise BadInput(f"{where}.pin_interference: {fit:g} mm is more than 1 % of the {pin_bore:g} mm pin bore "
                       f"({0.01 * pin_bore:g} mm); give the diametral interference in mm, e.g. "
                       f"{0.002 * pin_bore:.2g} (0 = no press-fit screen)")
    pin_inner = _number(t, "pin_inner_diameter", where, "length", default=0.0, lo=0.0)
    if pin_inner >= pin_bore:
        raise BadInput(f"{where}.pin_inner_diameter: {pin_inner:g} mm must be smaller than the "
                       f"{pin_bore:g} mm pin bore (0 = a solid crankpin)")
    pin_material = None
    if "pin_material" in t:
        if not isinstance(t["pin_material"], str):
            raise BadInput(f"{where}.pin_material: must be a material name, got {t['pin_material']!r}")
        pin_material = material(t["pin_material"], f"{where}.pin_material")
    if fit > 0 and not web_material.has_elastic:
        raise BadInput(f"{where}.pin_interference: the press-fit screen needs the web's stiffness, and a web "
                       f"given as a density has none; name its material instead (one of {', '.join(MATERIALS)})")
    return fit, pin_inner, pin_material


def _webs(data: dict, engine: Engine, base: Path, plug_material: Material | None = None) -> tuple[WebSpec, ...]:
    defaults = _table(data.get("web", {}), "web", _WEB)
    if "webs" not in data:
        if "web" not in data:
            raise BadInput("web: missing; describe the webs in [web] (both alike) or [[webs]] (one by one)")
        return tuple(_web(defaults, "web", n, 0.5, engine, base, plug_material) for n in ("a", "b"))
    listed = data["webs"]
    if not isinstance(listed, list) or len(listed) != 2:
        raise BadInput("webs: [[webs]] must list exactly two webs (a pressed-up crank has two)")
    webs, names = [], set()
    for i, entry in enumerate(listed):
        where = f"webs[{i + 1}]"
        t = _table(entry, where, _WEBS)
        name = str(t.get("name", "ab"[i]))
        if not name or not all(c.isalnum() or c in "-_" for c in name):
            raise BadInput(f"{where}.name: {name!r} must be letters, digits, '-' or '_' (it names files)")
        if name in names:
            raise BadInput(f"{where}.name: {name!r} is used twice")
        names.add(name)
        merged = {**defaults, **{k: v for k, v in t.items() if k not in ("name", "share")}}
        # a web that names its own shape (diameter, outline or model) drops the others [web] gives
        shapes = ("diameter", "outline", "model")
        own = [k for k in shapes if k in t]
        if len(own) == 1:
            for k in shapes:
                if k != own[0]:
                    merged.pop(k, None)
            if own[0] == "model":
                for k in ("thickness", "outline_units", "outline_gap"):
                    merged.pop(k, None)
            else:
                for k in ("model_units", "model_rotate_deg"):
                    merged.pop(k, None)
        if "density" in t and "material" not in t:
            merged.pop("material", None)
        if "material" in t and "density" not in t:
            merged.pop("density", None)
        share = _number(t, "share", where, "dimensionless", default=0.5, lo=0.0, hi=1.0)
        webs.append(_web(merged, where, name, share, engine, base, plug_material))
    total = sum(w.share for w in webs)
    if abs(total - 1.0) > 1e-9:
        raise BadInput(f"webs: the shares must add up to 1, they add up to {total:g}")
    return tuple(webs)


def _correction(data) -> Correction:
    from .drills import series

    t = _table(data, "correction", _CORRECTION)
    w = "correction"
    kind = t.get("kind", "holes")
    if kind not in KINDS:
        raise BadInput(f"correction.kind: must be one of {', '.join(KINDS)}, got {kind!r}")
    drills_raw = t.get("drills", "metric")
    if isinstance(drills_raw, str):
        drill_series, drills = drills_raw, series(drills_raw)
    elif isinstance(drills_raw, list) and drills_raw:
        drill_series = "list"
        drills = tuple(sorted({to_internal(v, "length", f"correction.drills[{i}]")
                               for i, v in enumerate(drills_raw, 1)}))
        if drills[0] <= 0:
            raise BadInput(f"correction.drills: diameters must be > 0 mm, got {drills[0]:g}")
    else:
        raise BadInput("correction.drills: must be 'metric', 'inch' or a list of diameters in mm")
    keep = t.get("keep_out", [])
    if not isinstance(keep, list):
        raise BadInput("correction.keep_out: must be a list of circles {x, y, diameter} or polygons {points}")
    zones = []
    for i, z in enumerate(keep, 1):
        zw = f"correction.keep_out[{i}]"
        if isinstance(z, dict) and set(z) <= {"x", "y", "diameter"} and "diameter" in z:
            zones.append(KeepOut(center=(_number(z, "x", zw, "length", default=0.0),
                                         _number(z, "y", zw, "length", default=0.0)),
                                 diameter=_number(z, "diameter", zw, "length", lo=0.0, lo_open=True)))
        elif isinstance(z, dict) and set(z) == {"points"} and isinstance(z["points"], list) and len(z["points"]) >= 3:
            pts = []
            for j, p in enumerate(z["points"], 1):
                if not (isinstance(p, list) and len(p) == 2):
                    raise BadInput(f"{zw}.points[{j}]: must be [x, y] in mm")
                pts.append(tuple(to_internal(v, "length", f"{zw}.points[{j}]") for v in p))
            zones.append(KeepOut(points=tuple(pts)))
        else:
            raise BadInput(f"{zw}: must be a circle {{x, y, diameter}} or a polygon "
                           "{points = [[x, y], ...]} (3+ points)")
    plug_raw = t.get("plug_material", "W-alloy-class-3")
    if isinstance(plug_raw, str):
        try:
            plug = material(plug_raw, "correction.plug_material")
        except BadInput:
            if not any(ch.isdigit() for ch in plug_raw):
                raise
            # a density with its unit ("17.6 g/cm^3"), as any job number may be
            plug = custom(to_internal(plug_raw, "density", "correction.plug_material"), "correction.plug_material")
    else:
        plug = custom(to_internal(plug_raw, "density", "correction.plug_material"), "correction.plug_material")
    return Correction(
        kind=kind, drill_series=drill_series, drills=drills,
        max_depth=_number(t, "max_depth", w, "length", default=15.0, lo=0.0, lo_open=True),
        min_wall=_number(t, "min_wall", w, "length", default=3.0, lo=0.0),
        pin_wall=_number(t, "pin_wall", w, "length", default=6.0, lo=0.0),
        through=_bool(t, "through", w, True),
        keep_out=tuple(zones),
        plug_material=plug,
        lighten=_number(t, "lighten", w, "mass", default=0.0, lo=0.0),
        point_angle=_number(t, "point_angle", w, "angle", default=118.0, lo=60.0, hi=180.0),
        depth_step=_number(t, "depth_step", w, "length", default=0.05, lo=0.001, hi=1.0),
        bf_tolerance_percent=_bf_tolerance(t),
        iso_grade=_number(t, "iso_grade", w, "dimensionless", default=6.3, lo=0.0, lo_open=True, hi=4000.0),
        plug_fit=check_fit(t.get("plug_fit", DEFAULT_FIT), "correction.plug_fit"),
        plug_min_length=_number(t, "plug_min_length", w, "length", default=PLUG_MIN_LENGTH_MM, lo=0.0, hi=200.0),
        plug_min_length_ratio=_number(t, "plug_min_length_ratio", w, "dimensionless",
                                      default=PLUG_MIN_LENGTH_RATIO, lo=0.0, hi=10.0),
    )


def _bf_tolerance(t: dict) -> float:
    """`bf_tolerance_percent`, or its earlier spelling `tolerance_points` (the same number)."""
    if "bf_tolerance_percent" in t and "tolerance_points" in t:
        raise BadInput("correction: give 'bf_tolerance_percent' or its old spelling 'tolerance_points', not both")
    key = "tolerance_points" if "tolerance_points" in t else "bf_tolerance_percent"
    return _number(t, key, "correction", "dimensionless", default=0.5, lo=0.0, lo_open=True, hi=100.0)


def _output(data) -> Output:
    t = _table(data, "output", _OUTPUT)
    units = t.get("sheet_units", "mm")
    if units not in ("mm", "inch"):
        raise BadInput(f"output.sheet_units: must be 'mm' or 'inch', got {units!r}")
    return Output(
        stl_tolerance=_number(t, "stl_tolerance", "output", "length", default=0.01, lo=0.0005, hi=1.0),
        stl_angular_tolerance=_number(t, "stl_angular_tolerance", "output", "dimensionless", default=0.1,
                                      lo=0.01, hi=1.0),
        sheet_units=units,
        crank_step=_bool(t, "crank_step", "output", True),
        crank_gap=_number(t, "crank_gap", "output", "length", default=20.0, lo=0.0, lo_open=True),
    )


def from_dict(data: dict, *, path: Path | None = None, base: Path | None = None) -> Job:
    """A validated Job from parsed TOML.  Relative paths resolve against `base`, else `path`'s folder,
    else the working folder."""
    _table(data, "job", _TOP)
    if base is None:
        base = path.parent if path is not None else Path.cwd()
    base = Path(base)
    if "engine" not in data:
        raise BadInput("engine: missing; the [engine] table is required")
    engine = _engine(data["engine"])
    name = data.get("name", path.stem if path else "job")
    if not isinstance(name, str):
        raise BadInput(f"name: must be text, got {name!r}")
    correction = _correction(data.get("correction", {}))
    from .tolerances import read as read_tolerances

    tolerances = read_tolerances(data.get("tolerances", {}))
    job = Job(
        name=name,
        path=path,
        engine=engine,
        balancer=_balancer(data["balancer"]) if "balancer" in data else None,
        webs=_webs(data, engine, base, correction.plug_material),
        correction=correction,
        output=_output(data.get("output", {})),
        overspeed=_number(data, "overspeed", "", "dimensionless", default=1.2, lo=1.0, hi=3.0),
        warnings=crank_part_warnings(engine),
        tolerances=tolerances,
        machining=_machining(data.get("machining", {})),
    )
    if any(w.weighing is not None for w in job.webs):
        import dataclasses

        from .calibrate import checked

        webs, lines = checked(job, tolerances)
        job = dataclasses.replace(job, webs=webs, warnings=job.warnings + lines)
    return job


def _machining(data):
    """The [machining] section (geomgen.nc.settings): the shop's mill and tools for the NC programs."""
    from .nc.settings import read_machining

    return read_machining(data)


#: files people pass for a job by mistake, and what they are
_OTHER_FILES = {".step": "a STEP file", ".stp": "a STEP file", ".stl": "an STL mesh", ".dxf": "a DXF drawing"}


def load(path, *, base=None) -> Job:
    """Read and validate a job file; every problem is a BadInput naming the file or key.
    Relative paths in it resolve against `base`, default the file's folder."""
    path = Path(path)
    other = _OTHER_FILES.get(path.suffix.lower())
    if other is not None:
        raise BadInput(f"{path}: this is {other}, not a job; build, plan, study and trim read a job file (TOML), "
                       "and `geomgen inspect` reads DXF, STEP and STL files")
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise BadInput(f"{path}: job file not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise BadInput(f"{path}: cannot read the job file ({exc})") from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise BadInput(f"{path}: not valid TOML ({exc})") from None
    try:
        return from_dict(data, path=path.resolve(), base=base)
    except BadInput as exc:
        raise BadInput(f"{path.name}: {exc}") from None
