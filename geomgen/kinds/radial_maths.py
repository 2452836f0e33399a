"""Mass properties of a radial rim hole: a drill entering the rim, its axis on a radial line of the web.

The drill's axis lies in the plane z = `z` of the web, along the radial line at `angle` deg from +Y
(counter-clockwise, web frame), pointing at the crank axis.  Local frame: s along the radial line
(outwards), u across it in the face plane, w along Z; e_s x e_u = e_z.

The full-diameter part is the set of points of the drill's cylinder (radius a) between the shoulder
s = s0 and the rim.  The rim is the web's outline (a prism), so at lateral offset u the material runs
from s0 to s_rim(u), the outermost crossing of the line {u = const} with the outline, whatever w is.
Its moments are exact integrals over the drill's cross-section disc:

    ∫ f dV = ∫_{-a}^{a} ∫_{-c(u)}^{c(u)} ∫_{s0}^{s_rim(u)} f ds dw du,   c(u) = sqrt(a² - u²)

The s and w integrals are polynomial and done in closed form; the u integral is done with
Gauss-Legendre quadrature after u = a sin(t), which makes the integrand smooth (for a circular rim,
s_rim(u) = sqrt(R² - u²) is analytic on |u| <= a < R), so 48 nodes give the integral to round-off.
The drill point beyond the shoulder is a closed-form cone.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from ..loops import Arc, Line, Loop
from ..massprops import MassProps

#: Gauss-Legendre nodes over t in [-pi/2, pi/2] for the u = a sin t integral
QUADRATURE_NODES = 48
#: a spline or elliptic rim is crossed on its flattening, whose chords lie within this of it, mm
RIM_CHORD_MM = 1e-6


@lru_cache(maxsize=4)
def _nodes(n: int) -> tuple[np.ndarray, np.ndarray]:
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * math.pi * x, 0.5 * math.pi * w


def axes(angle_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """(e_s, e_u): the outward radial direction at `angle_deg` from +Y (ccw) and the one across it."""
    a = math.radians(angle_deg)
    return np.array([-math.sin(a), math.cos(a)]), np.array([-math.cos(a), -math.sin(a)])


def rim_distance(outer: Loop, angle_deg: float, u) -> np.ndarray:
    """s of the outermost crossing of each line {u = const} with the outline, (n,) mm; nan if none.

    outer : the web's rim (Lines and Arcs exact; splines and ellipses on chords within RIM_CHORD_MM);
    u : (n,) lateral offsets, mm.
    """
    u = np.atleast_1d(np.asarray(u, dtype=float))
    # a layout's search asks the same lines of the same rim again and again (each depth it tries): the loop
    # is frozen, so what it answered is kept on it (as its flattenings are), a bounded number of answers
    cache = outer.__dict__.setdefault("_rim_distance", {})
    key = (float(angle_deg), u.tobytes())
    if key not in cache:
        if len(cache) >= RIM_CACHE_SIZE:
            cache.clear()
        cache[key] = _rim_distance(outer, float(angle_deg), u)
    return cache[key].copy()


#: how many answers of `rim_distance` one rim keeps
RIM_CACHE_SIZE = 4096


def _rim_distance(outer: Loop, angle_deg: float, u: np.ndarray) -> np.ndarray:
    e_s, e_u = axes(angle_deg)
    best = np.full(u.shape, -np.inf)
    segments = outer.lines_and_arcs(RIM_CHORD_MM).segments
    lines = np.array([(*s.start, *s.end) for s in segments if isinstance(s, Line)]).reshape(-1, 4)
    if len(lines):   # every line at once (a flattened spline has thousands)
        s0, s1 = lines[:, :2] @ e_s, lines[:, 2:] @ e_s
        u0, u1 = lines[:, :2] @ e_u, lines[:, 2:] @ e_u
        keep = np.abs(u1 - u0) >= 1e-15
        s0, s1, u0, u1 = s0[keep], s1[keep], u0[keep], u1[keep]
        t = (u[:, None] - u0) / (u1 - u0)
        ok = (t >= -1e-12) & (t <= 1 + 1e-12)
        s = np.where(ok, s0 + t * (s1 - s0), -np.inf)
        if s.shape[1]:
            best = np.maximum(best, s.max(axis=1))
    for seg in segments:
        if isinstance(seg, Arc):
            c = np.asarray(seg.center)
            cs, cu = c @ e_s, c @ e_u
            disc = seg.radius ** 2 - (u - cu) ** 2
            root = np.sqrt(np.clip(disc, 0.0, None))
            for sign in (1.0, -1.0):
                s = cs + sign * root
                xy = s[:, None] * e_s + u[:, None] * e_u - c
                ang = np.degrees(np.arctan2(xy[:, 1], xy[:, 0]))
                ok = (disc >= 0.0) & _on_arc(ang, seg)
                best = np.where(ok, np.maximum(best, s), best)
    return np.where(np.isfinite(best), best, np.nan)


def _on_arc(ang_deg: np.ndarray, arc: Arc) -> np.ndarray:
    lo = arc.start_deg if arc.sweep_deg > 0 else arc.start_deg + arc.sweep_deg
    rel = (ang_deg - lo) % 360.0
    span = abs(arc.sweep_deg)
    return (rel <= span + 1e-9) | (rel >= 360.0 - 1e-9)


def full_diameter_volume(*, outer: Loop, angle_deg: float, radius: float, shoulder_s: float,
                         z: float, density_g_cm3: float) -> MassProps:
    """The drill's full-diameter part between the shoulder (s = shoulder_s) and the rim, web frame."""
    t, wt = _nodes(QUADRATURE_NODES)
    a = radius
    u = a * np.sin(t)
    du = a * np.cos(t) * wt                      # du = a cos t dt, with the quadrature weights
    c = a * np.cos(t)                            # half-chord of the disc at u
    s1 = rim_distance(outer, angle_deg, u)
    if np.any(~np.isfinite(s1)) or np.any(s1 < shoulder_s):
        raise ValueError("the drill does not reach into the web across its whole diameter")
    s0 = shoulder_s
    length = s1 - s0
    first_s = 0.5 * (s1 ** 2 - s0 ** 2)
    second_s = (s1 ** 3 - s0 ** 3) / 3.0
    # w integrals over [-c, c]: ∫dw = 2c, ∫w dw = 0, ∫w² dw = 2c³/3
    v = float(np.sum(2 * c * length * du))
    m_s = float(np.sum(2 * c * first_s * du))
    m_u = float(np.sum(2 * c * u * length * du))
    ss = float(np.sum(2 * c * second_s * du))
    uu = float(np.sum(2 * c * u * u * length * du))
    ww = float(np.sum(2 * c ** 3 / 3.0 * length * du))
    su = float(np.sum(2 * c * u * first_s * du))
    local = np.array([[ss, su, 0.0], [su, uu, 0.0], [0.0, 0.0, ww]])
    body = MassProps.from_density(volume=v, centroid=(m_s / v, m_u / v, 0.0), volume_second_moment=local,
                                  density_g_cm3=density_g_cm3)
    return body.transformed(rotation=_rotation(angle_deg), offset=(0.0, 0.0, z))


def _rotation(angle_deg: float) -> np.ndarray:
    """Columns: where the local s, u, w axes point in the web frame."""
    e_s, e_u = axes(angle_deg)
    return np.array([[e_s[0], e_u[0], 0.0], [e_s[1], e_u[1], 0.0], [0.0, 0.0, 1.0]])


def point_rotation(angle_deg: float) -> np.ndarray:
    """Columns: a local +Z body (a cone from cone_massprops) pointing at the crank axis: x' = e_z,
    y' = e_u, z' = -e_s (right-handed)."""
    e_s, e_u = axes(angle_deg)
    return np.array([[0.0, e_u[0], -e_s[0]], [0.0, e_u[1], -e_s[1]], [1.0, 0.0, 0.0]])
