"""How sure the balance factor is: every input with its bounds, propagated two independent ways.

The measurement model is the plan's own, written on the 2D closed forms so that numpy evaluates it for
a whole array of input values at once:

- a web body is a prism: mass rho t A, unbalance rho t Q (A, Q: the section's area and first area
  moment, exact from geomgen.loops); a web given as a 3D model is the prism of its height T with the
  model's exact volume and first moment (A = V / T, Q = V c / T), so its thickness scales it along Z,
  and a through feature there is as long as its own column, scaled alike;
- a drilled hole removes rho V (x, y), V = pi r^2 depth (+ the drill point's cone, pi r^2 (r cot(a/2)) / 3),
  depth = the web's thickness for a through hole;
- a plug adds (rho_plug pi/4 D_plug^2 - rho_web pi/4 D_bore^2) length (x, y), length = the thickness for
  a through plug;  a pocket removes rho depth (A_f, Q_f) of its footprint;
- a radial rim hole (clipped by the real rim, no 2D closed form) enters through its exact mass
  properties and their derivatives in diameter and depth (central differences of kinds/radial.py);
- a weighed web's density (or, with calibrate = "thickness", its thickness) is solved from its true
  mass, which is the reading within the scale's bound: the model is affine in either, so the solve is
  exact for every sample;
- the crank: U = web a + web b (web b's x mirrored), balance factor
  BF = (-U_y / r - m_rotating - m_crank_parts) / m_reciprocating, each weighed part within the scale's
  bound; the residual is U minus the target at the asked balance factor with the true masses.

Propagation:

1. First order, JCGM 100:2008 (GUM) 5.1.2, eq. (10): u_c^2(y) = sum_i (df/dx_i)^2 u^2(x_i), inputs
   independent, y = f(E[x]) (GUM 4.1.4).  The sensitivities df/dx_i are the exact derivatives of the
   closed forms, taken by the complex step (f(x + ih) = f(x) + ih f'(x) + O(h^2), so Im f / h is f' to
   rounding for h = 1e-20), all inputs in one vectorised call.
2. Monte Carlo, JCGM 101:2008: 100 000 draws of every input from its distribution (rectangular, GUM
   4.3.7), the model evaluated on the arrays, the probabilistically symmetric 95 % coverage interval
   (JCGM 101 7.7) from the 2.5 and 97.5 percentiles.  A fixed seed: the same job gives the same bytes.

JCGM 101 section 8 says when the first can be trusted: its interval y +- 1.96 u_c must agree with the Monte
Carlo interval within the numerical tolerance of u_c given to two significant digits (k = 1.96, the
normal distribution's 95 % point, JCGM 100:2008 Table G.1).  Both are shown.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from .tolerances import FLOORS, Tolerances

SAMPLES = 100_000
SEED = 21940            # any fixed number: the same job gives the same figures
COVERAGE = 0.95
#: the coverage factor of a 95 % interval of a normal distribution, JCGM 100:2008 Table G.1 (k_p = 1.960)
K95 = 1.96
COMPLEX_STEP = 1e-20
HISTOGRAM_BINS = 60


# ------------------------------------------------------------------ inputs
@dataclass(frozen=True)
class Input:
    """One input quantity: rectangular between `low` and `high` (GUM 4.3.7), `nominal` what the plan used.

    group : the contributions row it is counted in;  knob : what the builder can change to narrow it
    ("scale", "weigh:a", "plugs:<material>", "drill_oversize", "hole_position", "depth",
    "pocket_depth", "thickness");  unit : of its values;  source : where its bounds come from.
    """

    name: str
    group: str
    knob: str
    low: float
    high: float
    nominal: float
    unit: str
    source: str

    @property
    def mean(self) -> float:
        return 0.5 * (self.low + self.high)

    @property
    def half_width(self) -> float:
        return 0.5 * (self.high - self.low)

    @property
    def u(self) -> float:
        """Standard uncertainty of a rectangular distribution: half-width / sqrt(3) (GUM 4.3.7, eq. (7))."""
        return self.half_width / math.sqrt(3.0)


# ------------------------------------------------------------------ terms of a web (vectorised closed forms)
def _get(values: dict, key: str | None, nominal: float):
    return nominal if key is None else values[key]


@dataclass
class _Hole:
    x: float
    y: float
    d: float
    depth: float | None          # None: through (the web's thickness)
    k_point: float               # cot(point angle / 2); 0 for a flat bottom or a through hole
    keys: dict = field(default_factory=dict)   # "d", "x", "y", "depth" -> input name
    scale: float = 1.0           # through: its length over the web's thickness (a model's column / its height)

    def eval(self, v, rho, t, rho_p):
        d = _get(v, self.keys.get("d"), self.d)
        x = _get(v, self.keys.get("x"), self.x)
        y = _get(v, self.keys.get("y"), self.y)
        r = 0.5 * d
        if self.depth is None:
            vol = math.pi * r * r * t * self.scale
        else:
            depth = _get(v, self.keys.get("depth"), self.depth)
            vol = math.pi * r * r * depth + math.pi * r * r * (r * self.k_point) / 3.0
        m = -rho * 1e-3 * vol
        return m, m * x, m * y


@dataclass
class _Plug:
    x: float
    y: float
    d: float
    length: float | None         # None: through (the web's thickness)
    material: str
    keys: dict = field(default_factory=dict)   # "x", "y", "length", "bore", "plug" -> input name
    scale: float = 1.0           # through: its length over the web's thickness (a model's column / its height)

    def eval(self, v, rho, t, rho_p):
        x = _get(v, self.keys.get("x"), self.x)
        y = _get(v, self.keys.get("y"), self.y)
        length = t * self.scale if self.length is None else _get(v, self.keys.get("length"), self.length)
        bore = _get(v, self.keys.get("bore"), self.d)
        plug = _get(v, self.keys.get("plug"), self.d)
        m = 1e-3 * length * math.pi * 0.25 * (rho_p[self.material] * plug * plug - rho * bore * bore)
        return m, m * x, m * y


@dataclass
class _Pocket:
    area: float
    sx: float
    sy: float
    depth: float
    key: str | None = None

    def eval(self, v, rho, t, rho_p):
        h = _get(v, self.key, self.depth)
        k = -rho * 1e-3 * h
        return k * self.area, k * self.sx, k * self.sy


@dataclass
class _Linear:
    """A feature with no 2D closed form (a radial rim hole): its exact change at 1 g/cm^3 and the
    derivatives of that change in the inputs named in `slopes` ({input: (value, (dm, dux, duy))})."""

    m1: float
    ux1: float
    uy1: float
    slopes: dict = field(default_factory=dict)

    def eval(self, v, rho, t, rho_p):
        m, ux, uy = self.m1, self.ux1, self.uy1
        for key, (nominal, (dm, dx, dy)) in self.slopes.items():
            step = v[key] - nominal
            m, ux, uy = m + dm * step, ux + dx * step, uy + dy * step
        return rho * m, rho * ux, rho * uy


@dataclass
class _Web:
    name: str
    sign: float                  # x in the crank frame: +1 web a, -1 web b (turned about Y)
    area: float
    qx: float
    qy: float
    rho0: float
    t0: float
    existing: list
    new: list
    rho_key: str | None = None   # sampled density (a web not weighed, or calibrated in thickness)
    t_key: str | None = None     # sampled thickness (a web not weighed, or calibrated in density)
    mass_key: str | None = None  # the weighed web's true mass
    mode: str = "none"           # "none" | "density" | "thickness"

    def _mass_before(self, v, rho, t, rho_p):
        m = rho * 1e-3 * t * self.area
        for term in self.existing:
            m = m + term.eval(v, rho, t, rho_p)[0]
        return m

    def state(self, v, rho_p):
        """(density, thickness) of the web for these input values: sampled, or solved from its mass."""
        if self.mode == "density":
            t = v[self.t_key]
            b = self._mass_before(v, 0.0, t, rho_p)
            a = self._mass_before(v, 1.0, t, rho_p) - b
            return (v[self.mass_key] - b) / a, t
        if self.mode == "thickness":
            rho = v[self.rho_key]
            b = self._mass_before(v, rho, 0.0, rho_p)
            a = self._mass_before(v, rho, 1.0, rho_p) - b
            return rho, (v[self.mass_key] - b) / a
        return _get(v, self.rho_key, self.rho0), _get(v, self.t_key, self.t0)

    def eval(self, v, rho_p, *, with_new: bool = True):
        """(mass, U_x, U_y) of the web in its own frame, g and g*mm."""
        rho, t = self.state(v, rho_p)
        k = rho * 1e-3 * t
        m, ux, uy = k * self.area, k * self.qx, k * self.qy
        for term in self.existing + (self.new if with_new else []):
            dm, dx, dy = term.eval(v, rho, t, rho_p)
            m, ux, uy = m + dm, ux + dx, uy + dy
        return m, ux, uy


# ------------------------------------------------------------------ the model
@dataclass
class Model:
    """The measurement model of one crank: its inputs and a vectorised evaluation."""

    inputs: list[Input]
    webs: list[_Web]
    plug_keys: dict              # material -> input name of its density
    plug_nominal: dict           # material -> nominal density
    recip: list[str]
    rotating: list[str]          # the rod's rotating end and the crank's parts at the pin
    radius: float
    bf_asked: float
    target_y: float | None = None   # webs at target exactly (the study): their U_y, crank frame

    def evaluate(self, v: dict) -> dict:
        """{"bf", "du_x", "du_y"} (arrays) for input values `v` ({name: array}); the balance factor is a
        fraction, the residual in g*mm (crank frame)."""
        rho_p = {mat: v[key] for mat, key in self.plug_keys.items()}
        ux = uy = 0.0
        if self.target_y is not None:
            uy = self.target_y
        for w in self.webs:
            _, wx, wy = w.eval(v, rho_p)
            ux, uy = ux + w.sign * wx, uy + wy
        m_recip = sum(v[k] for k in self.recip)
        m_pin = sum(v[k] for k in self.rotating)
        bf = (-uy / self.radius - m_pin) / m_recip
        du_y = uy + (m_pin + self.bf_asked * m_recip) * self.radius
        return {"bf": bf, "du_x": ux + 0.0 * bf, "du_y": du_y}

    def at(self, which: str) -> dict:
        return {i.name: getattr(i, which) for i in self.inputs}


def _part_inputs(job, tol: Tolerances) -> tuple[list[Input], list[str], list[str]]:
    e = job.engine
    s = tol.scale
    src = f"each weighing within ±{s:g} g ({tol.source('scale')})"
    inputs, recip, rot = [], [], []
    for table, group, names in ((e.reciprocating, "reciprocating", recip), (e.rotating, "rotating", rot),
                                (e.crank_parts, "crank parts", rot)):
        n = len(table)
        for part, mass in sorted(table.items()):
            name = f"{group}: {part}"
            label = {"reciprocating": "reciprocating parts", "rotating": "rod's rotating end",
                     "crank parts": "crank's own parts"}[group]
            inputs.append(Input(name, f"weighing: {label} ({n} × ±{s:g} g)", "scale", mass - s, mass + s, mass,
                                "g", src))
            names.append(name)
    return inputs, recip, rot


def _material_range(mat) -> tuple[float, float, str]:
    return mat.density_min, mat.density_max, mat.source


def build(job, webs, tol: Tolerances | None = None, *, weigh=(), weighed_plugs=None) -> Model:
    """The model of a planned crank.

    webs : the pipeline's WebWork list (section, existing and new features);  tol : the job's
    tolerances;  weigh : names of webs to treat as weighed at their model mass (what weighing them
    would buy);  weighed_plugs : {material: grams} plugs of that material weighed together to that
    bound (their density and diameter then known from the weighing).
    """
    from .materials import material as named_material

    tol = tol or Tolerances()
    weighed_plugs = weighed_plugs or {}
    inputs, recip, rot = _part_inputs(job, tol)
    plug_keys, plug_nominal, plug_volume, plug_count = {}, {}, {}, {}
    model_webs = []
    plug_fit = job.correction.plug_fit

    def plug_material_key(f) -> str:
        return f.material if f.material is not None else f"{float(f.density):g} g/cm^3"

    # the plugs' total volume per material first (a density given as a number is known to scale / volume)
    for w in webs:
        for f in tuple(w.existing) + tuple(w.plan.features):
            if getattr(f, "fills", False):
                key = plug_material_key(f)
                length = w.section.thickness if f.through_web(w.section.thickness) else f.length
                plug_volume[key] = plug_volume.get(key, 0.0) + math.pi * 0.25 * f.diameter ** 2 * length
                plug_count[key] = plug_count.get(key, 0) + 1
                plug_nominal[key] = f.plug_density()
    for key in sorted(plug_nominal):
        rho = plug_nominal[key]
        vol_cm3 = plug_volume[key] * 1e-3
        named = not key.endswith("g/cm^3")
        if key in weighed_plugs:
            a = weighed_plugs[key] / vol_cm3
            lo, hi = rho - a, rho + a
            src = f"the {plug_count[key]} plugs weighed together within ±{weighed_plugs[key]:g} g"
        elif tol.plug_density is not None:
            lo, hi, src = rho - tol.plug_density, rho + tol.plug_density, tol.source("plug_density")
        elif named:
            lo, hi, src = _material_range(named_material(key, "plug material"))
        else:
            a = tol.scale / vol_cm3
            lo, hi = rho - a, rho + a
            src = (f"a density given as a number: taken as the {plug_count[key]} plugs weighed together "
                   f"within ±{tol.scale:g} g (scale)")
        name = f"plug density: {key}"
        inputs.append(Input(name, f"plug density: {key} ({plug_count[key]} plug(s))", f"plugs:{key}", lo, hi,
                            rho, "g/cm^3", src))
        plug_keys[key] = name

    # the webs sharing a material share its density; those not weighed at all can be weighed
    densities: dict = {}
    for w in webs:
        mode = _mode(w.spec, w.spec.name in weigh)
        if mode != "density":
            key = (w.spec.material.name, w.section.density_g_cm3)
            if key not in densities:
                same = [v.spec.name for v in webs if (v.spec.material.name, v.section.density_g_cm3) == key
                        and _mode(v.spec, v.spec.name in weigh) == "none"]
                inp = _density_input(w.spec.material, w.section.density_g_cm3, tol, same)
                densities[key] = inp.name
                inputs.append(inp)
    for index, w in enumerate(webs):
        model_webs.append(_web_model(job, w, index, tol, inputs, plug_material_key, plug_fit,
                                     weighed_plugs, weigh=w.spec.name in weigh, densities=densities))
    return Model(inputs=inputs, webs=model_webs, plug_keys=plug_keys, plug_nominal=plug_nominal, recip=recip,
                 rotating=rot, radius=job.engine.crank_radius, bf_asked=job.engine.balance_factor)


def engine_model(job, tol: Tolerances | None = None) -> Model:
    """The weighed parts alone, the webs exactly at target (what `geomgen study` can say)."""
    tol = tol or Tolerances()
    inputs, recip, rot = _part_inputs(job, tol)
    return Model(inputs=inputs, webs=[], plug_keys={}, plug_nominal={}, recip=recip, rotating=rot,
                 radius=job.engine.crank_radius, bf_asked=job.engine.balance_factor,
                 target_y=job.engine.webs_target_gmm()[1])


def _density_input(mat, rho0: float, tol: Tolerances, weighable: list[str]) -> Input:
    """The density of the webs of one material that are not fitted to a weighing.

    weighable : the webs not weighed at all (weighing them is the remedy); empty when every web that
    samples it is weighed and fitted in thickness.
    """
    lo, hi, src = _material_range(mat)
    if tol.web_density is not None:
        lo, hi, src = rho0 - tol.web_density, rho0 + tol.web_density, tol.source("web_density")
    elif hi - lo <= 0.0:
        lo, hi, src = rho0 - 0.1, rho0 + 0.1, ("a density given as a number: ±0.1 g/cm^3, the spread of "
                                               "carbon steels (common practice)")
    names = ", ".join(weighable)
    label = f"web density: {mat.name}" + (f" (web{'s' if len(weighable) > 1 else ''} {names})" if names else "")
    knob = f"weigh:{','.join(weighable)}" if weighable else "web_density"
    return Input(f"web density: {mat.name} {rho0:g}", label, knob, lo, hi, rho0, "g/cm^3", src)


def _web_model(job, work, index: int, tol: Tolerances, inputs: list, plug_key, plug_fit, weighed_plugs, *,
               weigh: bool, densities: dict) -> _Web:
    from .fits import fit_limits

    spec, sec = work.spec, work.section
    am = sec.area_moments()
    name = spec.name
    weighing = getattr(spec, "weighing", None)
    mode = _mode(spec, weigh)
    web = _Web(name=name, sign=1.0 if index == 0 else -1.0, area=am.area, qx=am.sx, qy=am.sy,
               rho0=sec.density_g_cm3, t0=sec.thickness, existing=[], new=[], mode=mode)
    t0, rho0 = sec.thickness, sec.density_g_cm3
    if getattr(sec, "model", None) is not None:
        # a web given as a 3D model: its body is the model's exact volume and first moment, as an equivalent
        # prism of its height (A = V / T, Q = V c / T); the thickness input then scales the model along Z
        base = sec.massprops()
        k = rho0 * 1e-3 * t0
        web.area, web.qx, web.qy = base.mass / k, float(base.unbalance[0]) / k, float(base.unbalance[1]) / k

    def add(inp: Input) -> str:
        inputs.append(inp)
        return inp.name

    # the web's density: one input for the webs of one material (one bar, one heat: common practice)
    if mode != "density":
        key = (spec.material.name, rho0)
        if key not in densities:
            densities[key] = add(_density_input(spec.material, rho0, tol, [name] if mode == "none" else []))
        web.rho_key = densities[key]
    if mode != "thickness":
        th = tol.thickness
        web.t_key = add(Input(f"web {name}: thickness", f"web {name}: thickness", "thickness", t0 - th, t0 + th, t0,
                              "mm", f"±{th:g} mm ({tol.source('thickness')})"))
    if mode != "none":
        m_obs = weighing.weighed_g if weighing is not None else None
        if m_obs is None:   # what weighing it would buy: the reading taken as the model's own mass
            m_obs = float(sec.massprops().mass + sum(sec.change(f).mass for f in work.existing))
        s = tol.scale
        web.mass_key = add(Input(f"web {name}: weighed mass", f"weighing: web {name}", "scale", m_obs - s, m_obs + s,
                                 m_obs, "g", f"within ±{s:g} g ({tol.source('scale')})"))

    for new, features in ((False, work.existing), (True, work.plan.features)):
        for k, f in enumerate(features, start=1):
            tag = f"web {name} {'new' if new else 'existing'} {f.kind} {k}"
            term = _term(f, tag, t0, new, tol, add, plug_key, plug_fit, weighed_plugs, fit_limits,
                         t_col=sec.column_thickness(f))
            (web.new if new else web.existing).append(term)
    return web


def _mode(spec, weigh: bool) -> str:
    """How the web's density and thickness are known: "density" (fitted to its weighing), "thickness"
    (fitted, calibrate = "thickness") or "none" (not weighed)."""
    weighing = getattr(spec, "weighing", None)
    return weighing.mode if weighing is not None else ("density" if weigh else "none")



def _place_inputs(term, add, tol, tag: str, f, depth) -> None:
    """A drilled feature's x and y (hole_position) and, for a blind one, its depth: `depth` is
    (the term's key, the words, the nominal mm) or None."""
    pos = tol.hole_position
    for axis, value in (("x", f.x), ("y", f.y)):
        term.keys[axis] = add(Input(f"{tag}: {axis}", f"hole positions (±{pos:g} mm in x and y)",
                                    "hole_position", value - pos, value + pos, value, "mm",
                                    tol.source("hole_position")))
    if depth is not None:
        key, words, nominal = depth
        dp = tol.depth
        term.keys[key] = add(Input(f"{tag}: {words}", f"blind depths (±{dp:g} mm)", "depth",
                                   nominal - dp, nominal + dp, nominal, "mm", tol.source("depth")))

def _term(f, tag, t0, new, tol, add, plug_key, plug_fit, weighed_plugs, fit_limits, t_col=None):
    """The closed-form term of one feature, its inputs added when it is new work.  t_col : the thickness of
    web the feature meets (a model's column; the web's thickness on a prism)."""
    t_col = t0 if t_col is None else t_col
    kind = f.kind
    if kind == "hole":
        through = bool(f.through)
        k_point = 0.0 if through or f.point_angle >= 180.0 else 1.0 / math.tan(math.radians(0.5 * f.point_angle))
        term = _Hole(f.x, f.y, f.diameter, None if through else f.depth, k_point, scale=t_col / t0)
        if new:
            a = tol.drill_oversize
            term.keys["d"] = add(Input(f"{tag}: diameter", f"hole diameters (drill oversize 0..+{a:g} mm)",
                                       "drill_oversize", f.diameter, f.diameter + a, f.diameter, "mm",
                                       f"0 .. +{a:g} mm over the drill ({tol.source('drill_oversize')})"))
            _place_inputs(term, add, tol, tag, f, None if through else ("depth", "depth", f.depth))
        return term
    if kind == "plug":
        through = f.through_web(t_col)
        mat = plug_key(f)
        term = _Plug(f.x, f.y, f.diameter, None if through else f.length, mat, scale=t_col / t0)
        if new:
            _place_inputs(term, add, tol, tag, f, None if through else ("length", "bore depth", f.length))
            if f.material is not None and mat not in weighed_plugs:
                lim = fit_limits(plug_fit, f.diameter)
                term.keys["bore"] = add(Input(
                    f"{tag}: bore", f"plug bores ({lim.bore_class}, ISO 286)", f"plugs:{mat}", lim.bore_min_mm,
                    lim.bore_max_mm, f.diameter, "mm", f"ISO 286-1 {lim.bore_class} limits of the reamed bore"))
                term.keys["plug"] = add(Input(
                    f"{tag}: plug diameter", f"plug diameters ({lim.plug_class}, ISO 286)", f"plugs:{mat}",
                    lim.plug_min_mm, lim.plug_max_mm, f.diameter, "mm",
                    f"ISO 286-1 {lim.plug_class} limits of the ground plug (a weighed plug has it in its mass)"))
        return term
    if kind == "pocket":
        am = f.footprint().area_moments()
        term = _Pocket(am.area, am.sx, am.sy, f.depth)
        if new:
            dp = tol.pocket_depth
            term.key = add(Input(f"{tag}: depth", f"pocket depths (±{dp:g} mm)", "pocket_depth", f.depth - dp,
                                 f.depth + dp, f.depth, "mm", tol.source("pocket_depth")))
        return term
    return _linear_term(f, tag, t0, new, tol, add)


#: the exact change of a feature with no closed form and its slopes, by (feature, its rim, thickness):
#: the verdict builds the model again for every figure it tries, and the rim quadrature is the slow part
_SLOPES: dict = {}


def _exact_slopes(f, t0: float, attrs: tuple[str, ...]):
    key = (f, id(getattr(f, "rim", None)), t0, attrs)
    if key not in _SLOPES:
        def change(g):
            p = g.massprops(thickness=t0, web_density=1.0)
            return np.array([p.mass, p.unbalance[0], p.unbalance[1]])

        h = 1e-4
        slopes = {}
        for attr in attrs:
            value = getattr(f, attr)
            slopes[attr] = tuple(float(x) for x in (change(replace(f, **{attr: value + h}))
                                                    - change(replace(f, **{attr: value - h}))) / (2 * h))
        if len(_SLOPES) > 256:
            _SLOPES.clear()
        _SLOPES[key] = (tuple(float(x) for x in change(f)), slopes)
    return _SLOPES[key]


def _linear_term(f, tag, t0, new, tol, add) -> _Linear:
    """A kind with no 2D closed form (a radial hole): its exact change and central-difference slopes."""
    steps = []
    if new and hasattr(f, "diameter") and not getattr(f, "fills", False):
        a = tol.drill_oversize
        steps.append(("diameter", Input(f"{tag}: diameter", f"hole diameters (drill oversize 0..+{a:g} mm)",
                                        "drill_oversize", f.diameter, f.diameter + a, f.diameter, "mm",
                                        f"0 .. +{a:g} mm over the drill ({tol.source('drill_oversize')})")))
    if new and hasattr(f, "depth"):
        dp = tol.depth
        steps.append(("depth", Input(f"{tag}: depth", f"blind depths (±{dp:g} mm)", "depth", f.depth - dp,
                                     f.depth + dp, f.depth, "mm", tol.source("depth"))))
    base, slopes = _exact_slopes(f, t0, tuple(attr for attr, _ in steps))
    term = _Linear(*base)
    for attr, inp in steps:
        term.slopes[add(inp)] = (getattr(f, attr), slopes[attr])
    return term


# ------------------------------------------------------------------ propagation
def linear(model: Model) -> dict:
    """First order (GUM): y = f(E[x]), the sensitivities by the complex step, u_c by eq. (10).

    Returns {"y": {output: value}, "c": {output: (n,) sensitivities}, "u_inputs": (n,),
    "u": {output: u_c}} in the outputs' units (bf a fraction, du_* g*mm).
    """
    n = len(model.inputs)
    v = {}
    steps = np.array([COMPLEX_STEP * max(abs(i.mean), 1.0) for i in model.inputs])
    for j, inp in enumerate(model.inputs):
        col = np.full(n, inp.mean, dtype=complex)
        col[j] += 1j * steps[j]
        v[inp.name] = col
    out = model.evaluate(v)
    u_in = np.array([i.u for i in model.inputs])
    result = {"y": {}, "c": {}, "u": {}, "u_inputs": u_in}
    for key, arr in out.items():
        arr = np.asarray(arr, dtype=complex) * np.ones(n)
        c = arr.imag / steps if n else np.zeros(0)
        result["y"][key] = float(arr.real[0]) if n else float(np.real(arr))
        result["c"][key] = c
        result["u"][key] = float(math.sqrt(float(np.sum((c * u_in) ** 2))))
    return result


def nominal(model: Model) -> dict:
    """The model at the plan's own nominal inputs (what the plan predicts)."""
    out = model.evaluate({i.name: np.array([i.nominal]) for i in model.inputs})
    return {k: float(np.asarray(v).ravel()[0]) for k, v in out.items()}


def monte_carlo(model: Model, samples: int = SAMPLES, seed: int = SEED) -> dict:
    """JCGM 101: every input drawn rectangular between its bounds, the model on the arrays."""
    rng = np.random.default_rng(seed)
    v = {i.name: i.low + (i.high - i.low) * rng.random(samples) for i in model.inputs}
    out = model.evaluate(v)
    return {k: np.asarray(a, dtype=float) * np.ones(samples) for k, a in out.items()}


def coverage(values: np.ndarray, p: float = COVERAGE) -> tuple[float, float]:
    """The probabilistically symmetric coverage interval (JCGM 101 7.7): the (1-p)/2 and (1+p)/2 quantiles."""
    lo, hi = np.quantile(values, [0.5 * (1.0 - p), 0.5 * (1.0 + p)])
    return float(lo), float(hi)


def jcgm101_validation(y: float, u: float, low: float, high: float) -> dict:
    """JCGM 101 8.2: does the GUM interval y +- k u (k = 1.96, normal) agree with the Monte Carlo one?

    The numerical tolerance: u written with two significant digits as c x 10^l, delta = 10^l / 2
    (JCGM 101 7.9.2); the GUM is validated when |y - k u - low| and |y + k u - high| are both <= delta.
    """
    if u <= 0.0:
        return {"delta": 0.0, "d_low": abs(y - low), "d_high": abs(y - high), "validated": low == high == y}
    ell = math.floor(math.log10(u)) - 1
    delta = 0.5 * 10.0 ** ell
    d_low, d_high = abs(y - K95 * u - low), abs(y + K95 * u - high)
    return {"delta": delta, "d_low": d_low, "d_high": d_high, "validated": d_low <= delta and d_high <= delta}


# ------------------------------------------------------------------ contributions
def contributions(model: Model, lin: dict, output: str = "bf") -> list[dict]:
    """One row per group of inputs, largest first, in balance-factor points (1 point = 0.01 BF).

    bf_points : the +- the group alone swings the balance factor across its bounds, the others held
    (|c| x half-width; a group of independent inputs combines its members' swings in quadrature);
    u_bf_points : its standard-uncertainty contribution |c| u (GUM 5.1.3), in quadrature over the group;
    share : its part of u_c^2;  mean_shift_points : how far it moves the expected balance factor from the
    plan's (an input whose bounds do not straddle the plan's value: a drill cuts over its size, an ISO 286
    p6 plug is ground over its nominal diameter), first order.
    """
    c = lin["c"][output]
    total = sum((ci * i.u) ** 2 for ci, i in zip(c, model.inputs))
    groups: dict[str, dict] = {}
    for ci, inp in zip(c, model.inputs):
        g = groups.setdefault(inp.group, {"input": inp.group, "knob": inp.knob, "swing2": 0.0, "var": 0.0,
                                          "inputs": 0, "source": inp.source, "shift": 0.0})
        g["shift"] += ci * (inp.mean - inp.nominal)
        g["swing2"] += (ci * inp.half_width) ** 2
        g["var"] += (ci * inp.u) ** 2
        g["inputs"] += 1
    rows = []
    for g in groups.values():
        rows.append({"input": g["input"], "bf_points": 100.0 * math.sqrt(g["swing2"]),
                     "u_bf_points": 100.0 * math.sqrt(g["var"]), "share": g["var"] / total if total else 0.0,
                     "mean_shift_points": 100.0 * g["shift"],
                     "knob": g["knob"], "inputs": g["inputs"], "source": g["source"]})
    rows.sort(key=lambda r: (-r["bf_points"], r["input"]))
    return rows


def knob_variances(model: Model, lin: dict, output: str = "bf") -> dict[str, float]:
    c = lin["c"][output]
    out: dict[str, float] = {}
    for ci, inp in zip(c, model.inputs):
        out[inp.knob] = out.get(inp.knob, 0.0) + (ci * inp.u) ** 2
    return out


# ------------------------------------------------------------------ the band of a plan
def _summary_of(model: Model, samples: int = SAMPLES) -> dict:
    lin = linear(model)
    mc = monte_carlo(model, samples)
    bf = mc["bf"]
    low, high = coverage(bf)
    residual = np.hypot(mc["du_x"], mc["du_y"])
    return {"lin": lin, "mc": mc, "bf_low": low, "bf_high": high, "residual": residual}


_ONE_TWO_FIVE = (1.0, 2.0, 5.0)


def round_down_125(value: float) -> float:
    """The largest of 1, 2, 5 x 10^k not above `value` (a figure a builder can ask of an instrument)."""
    if value <= 0.0:
        return 0.0
    e = math.floor(math.log10(value))
    best = 10.0 ** e
    for m in _ONE_TWO_FIVE:
        if m * 10.0 ** e <= value * (1 + 1e-12):
            best = m * 10.0 ** e
    return float(f"{best:.3g}")


def band(job, webs, *, samples: int = SAMPLES) -> dict:
    """The balance-factor band of a planned crank, its contributions and a verdict (plan.json's figures)."""
    tol = getattr(job, "tolerances", None) or Tolerances()
    model = build(job, webs, tol)
    s = _summary_of(model, samples)
    return _document(job, model, s, tol, webs=webs)


def parts_band(job, *, samples: int = SAMPLES) -> dict:
    """The band the weighed parts alone give (`geomgen study`): the webs taken exactly at target."""
    tol = getattr(job, "tolerances", None) or Tolerances()
    model = engine_model(job, tol)
    s = _summary_of(model, samples)
    doc = _document(job, model, s, tol, webs=None)
    doc["note"] = ("the weighed parts alone, each within the scale's bound, with the webs exactly at target; "
                   "`geomgen plan` adds the webs, the plugs and the machining")
    return doc


def _band_figures(job, model, s) -> dict:
    lin, mc = s["lin"], s["mc"]
    y, u = lin["y"]["bf"], lin["u"]["bf"]
    bf = mc["bf"]
    u_mc = float(np.std(bf, ddof=1))
    validation = jcgm101_validation(y, u, s["bf_low"], s["bf_high"])
    counts, edges = np.histogram(bf, bins=HISTOGRAM_BINS)
    return {
        "mean": float(np.mean(bf)), "low_95": s["bf_low"], "high_95": s["bf_high"], "method": "monte_carlo",
        "u": u_mc, "samples": int(bf.size), "seed": SEED,
        "nominal": nominal(model)["bf"], "asked": job.engine.balance_factor,
        "linear": {"mean": y, "u": u, "low_95": y - K95 * u, "high_95": y + K95 * u, "coverage_factor": K95,
                   "method": "first order, JCGM 100:2008 eq. (10), sensitivities by the complex step"},
        "agreement": {"u_ratio_mc_to_linear": (u_mc / u) if u > 0 else 1.0, **validation,
                      "note": "JCGM 101:2008 8.2: the first-order interval y +- 1.96 u is validated when both ends lie "
                              "within delta of the Monte Carlo interval (delta: half a unit in the second "
                              "significant digit of u)"},
        "histogram": {"edges": [float(e) for e in edges], "counts": [int(c) for c in counts]},
    }


def _residual_figures(job, s, crank_iso: float | None) -> dict:
    residual = s["residual"]
    tol_gmm = job.tolerance_gmm
    return {"mean_gmm": float(np.mean(residual)), "high_95_gmm": float(np.quantile(residual, COVERAGE)),
            "tolerance_gmm": tol_gmm, "iso_permissible_gmm": crank_iso,
            "within_tolerance_probability": float(np.mean(residual <= tol_gmm)),
            "note": "the magnitude of the crank's deviation from the target at the asked balance factor, with the "
                    "true masses (a vector, ISO 21940-11); a magnitude near zero is far from linear, so only the "
                    "Monte Carlo gives it (JCGM 101 5.9)"}


def _document(job, model: Model, s: dict, tol: Tolerances, *, webs) -> dict:
    from .crank import rotor_mass_g

    iso = None
    if webs is not None:
        from .balance import iso_permissible_unbalance

        props = [w.plan.predicted for w in webs]
        iso = iso_permissible_unbalance(grade=job.correction.iso_grade, rotor_mass_g=rotor_mass_g(job, props),
                                        rpm=job.engine.max_rpm)
    figures = _band_figures(job, model, s)
    rows = contributions(model, s["lin"])
    residual = _residual_figures(job, s, iso)
    doc = {"balance_factor_band": figures, "contributions": rows, "residual_unbalance_band": residual,
           "tolerances": tolerance_rows(tol, model),
           "inputs": len(model.inputs)}
    doc["verdict"] = verdict(job, webs, model, s, tol, residual)
    if webs is not None:
        doc["model_check"] = model_check(model, webs)
    return doc


def tolerance_rows(tol: Tolerances, model: Model) -> list[dict]:
    """The tolerances used, each with its source (plan.json and the report)."""
    from .tolerances import KEYS

    rows = []
    for key in KEYS:
        value = getattr(tol, key)
        if key == "web_density" and value is None:
            text = "each web's material range"
        elif key == "plug_density" and value is None:
            text = "each plug alloy's range (a number: the scale over the plugs' volume)"
        elif key == "stand" and value is None:
            text = "not given"
        else:
            unit = {"mass": "g", "density": "g/cm^3", "length": "mm", "unbalance": "g*mm"}[KEYS[key][0]]
            text = f"{'0 .. +' if key == 'drill_oversize' else '±'}{value:g} {unit}"
        rows.append({"key": key, "value": text, "source": tol.source(key)})
    return rows


def model_check(model: Model, webs) -> dict:
    """The vectorised closed forms at the plan's nominal inputs against the planner's own prediction."""
    v = {i.name: np.array([i.nominal]) for i in model.inputs}
    rho_p = {mat: v[key] for mat, key in model.plug_keys.items()}
    worst_u, worst_m = 0.0, 0.0
    for mw, w in zip(model.webs, webs):
        m, ux, uy = (float(np.asarray(a).ravel()[0]) for a in mw.eval(v, rho_p))
        p = w.plan.predicted
        worst_u = max(worst_u, math.hypot(ux - p.unbalance[0], uy - p.unbalance[1]))
        worst_m = max(worst_m, abs(m - p.mass))
    return {"unbalance_gmm": worst_u, "mass_g": worst_m,
            "note": "the band's closed forms at the plan's nominal inputs against the planner's prediction"}


# ------------------------------------------------------------------ verdict: attainable, and what would make it so


def _remedy_text(knob: str, value, model: Model, tol: Tolerances) -> str:
    if knob == "scale":
        return f"weigh every part on a scale good to ±{value:g} g (now ±{tol.scale:g} g)"
    if knob.startswith("weigh:"):
        names = knob.split(":", 1)[1].split(",")
        which = f"web {names[0]}" if len(names) == 1 else "webs " + " and ".join(names)
        return (f"weigh {which} as {'it is' if len(names) == 1 else 'they are'}, before any new work "
                f"(weighed = \"... g\" in each [[webs]] entry), so geomgen fits the density instead of taking "
                "the material's whole range")
    if knob.startswith("plugs:"):
        mat = knob.split(":", 1)[1]
        return (f"weigh the {mat} plugs together to ±{value:g} g and give their density as a number "
                f"(plug_material = \"<their mass / their volume> g/cm^3\") instead of the alloy's whole range")
    words = {"drill_oversize": ("hold the drilled holes to +{v:g} mm over size (a sharp drill, checked on a "
                                "test hole; now 0 .. +{now:g} mm)", tol.drill_oversize),
             "hole_position": ("hold hole positions to ±{v:g} mm (now ±{now:g} mm)", tol.hole_position),
             "depth": ("hold blind depths to ±{v:g} mm (now ±{now:g} mm)", tol.depth),
             "pocket_depth": ("hold pocket depths to ±{v:g} mm (now ±{now:g} mm)", tol.pocket_depth),
             "thickness": ("measure each web's thickness to ±{v:g} mm (a micrometer; now ±{now:g} mm)",
                           tol.thickness)}
    text, now = words.get(knob, (f"narrow {knob} to ±{{v:g}}", 0.0))
    return text.format(v=value, now=now)


def _knob_now(knob: str, tol: Tolerances, model: Model) -> float | None:
    """The knob's present bound, for the knobs that scale with a bound (variance ~ bound^2)."""
    if knob in FLOORS:
        return getattr(tol, knob)
    if knob.startswith("plugs:"):
        mat = knob.split(":", 1)[1]
        inp = next(i for i in model.inputs if i.name == model.plug_keys[mat])
        vol_cm3 = _plug_volume_cm3(model, mat)
        return inp.half_width * vol_cm3     # the grams that bound would mean for the plugs together
    return None


def _plug_volume_cm3(model: Model, mat: str) -> float:
    total = 0.0
    for w in model.webs:
        for term in w.existing + w.new:
            if isinstance(term, _Plug) and term.material == mat:
                length = w.t0 * term.scale if term.length is None else term.length
                total += math.pi * 0.25 * term.d ** 2 * length * 1e-3
    return total


def _apply(tol: Tolerances, weigh: set, plugs: dict, knob: str, value) -> tuple[Tolerances, set, dict]:
    if knob.startswith("weigh:"):
        return tol, weigh | set(knob.split(":", 1)[1].split(",")), plugs
    if knob.startswith("plugs:"):
        return tol, weigh, {**plugs, knob.split(":", 1)[1]: value}
    return replace(tol, **{knob: value}), weigh, plugs


def _ladder(low: float, high: float) -> list[float]:
    """The 1-2-5 values strictly between `low` and `high`, largest first."""
    out, e = [], math.floor(math.log10(max(low, 1e-9))) - 1
    while 10.0 ** e < high * 10:
        for m in _ONE_TWO_FIVE:
            v = float(f"{m * 10.0 ** e:.3g}")
            if low * (1 + 1e-9) < v < high * (1 - 1e-9):
                out.append(v)
        e += 1
    return sorted(set(out), reverse=True)


def _trial(job, webs, tol: Tolerances, chosen: list) -> Model:
    weigh, plugs, t = set(), {}, tol
    for knob, value in chosen:
        t, weigh, plugs = _apply(t, weigh, plugs, knob, value)
    return build(job, webs, t, weigh=weigh, weighed_plugs=plugs) if webs is not None else engine_model(job, t)


def _variance(model: Model) -> float:
    return sum(knob_variances(model, linear(model)).values())


def verdict(job, webs, model: Model, s: dict, tol: Tolerances, residual: dict) -> dict:
    """Is the job's tolerance attainable with these instruments, and if not, what would make it so.

    Attainable: 95 % of the Monte Carlo cranks within the tolerance on |deviation|.  Otherwise the
    largest contributions are narrowed in turn (first order, k = 1.96, against the tolerance less the shift
    of the expected balance factor), never below what the instrument can do (tolerances.FLOORS); then each
    is loosened again to the widest 1-2-5 figure that still does; the result is checked by a Monte Carlo
    run with those figures.
    """
    tol_gmm = job.tolerance_gmm
    tol_pts = job.correction.bf_tolerance_percent
    high = residual["high_95_gmm"]
    attainable = high <= tol_gmm
    lin = s["lin"]
    bias = (lin["y"]["bf"] - job.engine.balance_factor) * 100.0
    shift = (lin["y"]["bf"] - nominal(model)["bf"]) * 100.0
    out = {"attainable": bool(attainable), "tolerance_gmm": tol_gmm, "high_95_gmm": high,
           "expected_offset_points": bias, "expected_shift_points": shift, "actions": []}
    what = "cranks made to this plan" if webs is not None else "cranks whose webs are exactly at target"
    note = _shift_note(model, lin, shift, tol_pts)
    if attainable:
        out["head"] = (f"attainable with these instruments: 95 % of {what} land within {high:.1f} g*mm of "
                       f"target; the tolerance is {tol_gmm:.1f} g*mm (±{tol_pts:g} balance-factor points)")
        out["tail"] = note.removeprefix("; ")
        out["text"] = out["head"] + note
        return out
    budget = ((tol_pts - abs(bias)) / K95) ** 2 / 1e4
    chosen: list = []
    now_of = {}
    knobs = knob_variances(model, lin)
    for _ in range(12):
        total = sum(knobs.values())
        if total <= budget or budget <= 0:
            break
        step = None
        done = {c[0] for c in chosen}
        tol_now = _trial_tolerances(tol, chosen)
        for knob in sorted((k for k in knobs if k not in done and knobs[k] > 0), key=lambda k: -knobs[k]):
            if knob.startswith("weigh:"):
                step = (knob, None)
                break
            now = _knob_now(knob, tol_now, model)
            if now is None or now <= 0:
                continue
            allowed = max(budget - (total - knobs[knob]), 0.0)
            needed = now * math.sqrt(allowed / knobs[knob])
            value = max(round_down_125(needed), FLOORS.get(knob, 0.01))
            if value < now:
                step, now_of[knob] = (knob, value), now
                break
        if step is None:
            break
        chosen.append(step)
        trial = _trial(job, webs, tol, chosen)
        knobs = knob_variances(trial, linear(trial))
    if chosen and _variance(_trial(job, webs, tol, chosen)) <= budget:
        # loosen each figure again as far as the others allow
        for i, (knob, value) in enumerate(chosen):
            if value is None:
                continue
            for looser in _ladder(value, now_of[knob]):
                attempt = chosen[:i] + [(knob, looser)] + chosen[i + 1:]
                if _variance(_trial(job, webs, tol, attempt)) <= budget:
                    chosen = attempt
                    break
    if chosen:
        ts = _summary_of(_trial(job, webs, tol, chosen))
        after = float(np.quantile(ts["residual"], COVERAGE))
        out["actions"] = [{"knob": k, "value": v, "text": _remedy_text(k, v, model, tol)} for k, v in chosen]
        out["after"] = {"high_95_gmm": after, "low_95": ts["bf_low"], "high_95": ts["bf_high"],
                        "attainable": bool(after <= tol_gmm)}
    out["text"] = _verdict_text(out, tol_gmm, tol_pts, high, abs(bias), what) + note
    out["tail"] += note
    return out


def _shift_note(model: Model, lin: dict, shift: float, tol_pts: float) -> str:
    """Words for an expected balance factor away from the plan's (inputs whose bounds lie to one side)."""
    if abs(shift) < 0.2 * tol_pts:
        return ""
    rows = contributions(model, lin)
    top = max(rows, key=lambda r: abs(r["mean_shift_points"]))
    return (f"; the expected balance factor lies {abs(shift):.2f} points {'above' if shift > 0 else 'below'} "
            f"the plan's, mostly from {top['input']} ({top['mean_shift_points']:+.2f} points)")


def _trial_tolerances(tol: Tolerances, chosen: list) -> Tolerances:
    weigh, plugs, t = set(), {}, tol
    for knob, value in chosen:
        t, weigh, plugs = _apply(t, weigh, plugs, knob, value)
    return t


def _verdict_text(out: dict, tol_gmm: float, tol_pts: float, high: float, bias: float, what: str) -> str:
    """The verdict in one line; also stores its parts: "head" (the finding), "tail" (what the actions give)."""
    head = (f"not attainable with these instruments: 95 % of {what} land within {high:.1f} g*mm "
            f"of target, the tolerance is {tol_gmm:.1f} g*mm (±{tol_pts:g} balance-factor points)")
    out["head"] = head
    if bias >= tol_pts:
        out["tail"] = (f"the expected balance factor itself is {bias:.2f} points off the asked one, so no "
                       "instrument closes it: balance the assembled crank with its bob weight and trim")
        return f"{head}; {out['tail']}"
    if not out["actions"]:
        out["tail"] = "balance the assembled crank with its bob weight on a balancing machine and trim"
        return f"{head}; {out['tail']}"
    steps = "; ".join(a["text"] for a in out["actions"])
    after = out["after"]
    if after["attainable"]:
        out["tail"] = f"then 95 % land within {after['high_95_gmm']:.1f} g*mm (Monte Carlo with those figures)"
    else:
        out["tail"] = (f"even then 95 % land within {after['high_95_gmm']:.1f} g*mm (Monte Carlo): balance the "
                       "assembled crank with its bob weight and trim")
    return f"{head}. To make it so: {steps}; {out['tail']}"


def rounded(obj):
    """`obj` with every float at 6 significant digits (geomgen.rounding.num), as study.json writes figures."""
    from .rounding import num

    if isinstance(obj, dict):
        return {k: rounded(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [rounded(v) for v in obj]
    if isinstance(obj, (float, np.floating)):
        return num(float(obj))
    if isinstance(obj, np.integer):
        return int(obj)
    return obj


# ------------------------------------------------------------------ one web before new work (the stand check)
def web_unbalance_u(job, spec, section, existing, tol: Tolerances | None = None) -> float:
    """The standard uncertainty of a bare web's modelled unbalance magnitude direction-free, g*mm:
    sqrt(u(U_x)^2 + u(U_y)^2), first order, from its density (or its weighing) and thickness."""
    from types import SimpleNamespace

    tol = tol or Tolerances()
    work = SimpleNamespace(spec=spec, section=section, existing=tuple(existing),
                           plan=SimpleNamespace(features=()))
    inputs: list[Input] = []
    web = _web_model(job, work, 0, tol, inputs, lambda f: f.material or f"{float(f.density):g} g/cm^3",
                     job.correction.plug_fit, {}, weigh=False, densities={})
    plug_keys = {}
    for f in existing:
        if getattr(f, "fills", False):
            key = f.material or f"{float(f.density):g} g/cm^3"
            if key not in plug_keys:
                from .materials import material as named_material

                rho = f.plug_density()
                lo, hi = ((rho - tol.plug_density, rho + tol.plug_density) if tol.plug_density is not None else
                          (named_material(key, "plug").density_min, named_material(key, "plug").density_max)
                          if f.material is not None else (rho, rho))
                inputs.append(Input(f"plug density: {key}", "plug", f"plugs:{key}", lo, hi, rho, "g/cm^3", ""))
                plug_keys[key] = f"plug density: {key}"
    n = len(inputs)
    steps = np.array([COMPLEX_STEP * max(abs(i.mean), 1.0) for i in inputs])
    v = {}
    for j, inp in enumerate(inputs):
        col = np.full(n, inp.mean, dtype=complex)
        col[j] += 1j * steps[j]
        v[inp.name] = col
    rho_p = {mat: v[key] for mat, key in plug_keys.items()}
    _, ux, uy = web.eval(v, rho_p)
    u_in = np.array([i.u for i in inputs])
    cx = (np.asarray(ux) * np.ones(n)).imag / steps
    cy = (np.asarray(uy) * np.ones(n)).imag / steps
    return float(math.sqrt(float(np.sum((cx * u_in) ** 2 + (cy * u_in) ** 2))))
