"""The assembled crank's figures from its two webs: the crank frame, the couple
(moment unbalance), the rotor on the balancing machine with its ISO 21940-11
permissible residual, and what the ends of a plug alloy's density range do.

Crank frame (the README's "Frame"): web a as it is; web b turned 180 deg about
Y, so a point (x, y) of web b lies at (-x, y).  No CAD kernel.
"""

from __future__ import annotations

import math

import numpy as np

from .massprops import MassProps
from .rounding import num, vec


def in_crank_frame(props: MassProps, index: int, *, gap: float) -> MassProps:
    """A web's properties in the crank frame: web a as it is; web b turned 180 deg about Y,
    its inner face `gap` mm from web a's inner face (on -z)."""
    if index == 0:
        return props
    return props.transformed(rotation=np.diag([-1.0, 1.0, -1.0]), offset=(0.0, 0.0, -gap))


COUPLE_WARN_SHARE = 0.5   # a couple is flagged when its plane unbalance passes this share of the tolerance


def _web_levers(placed: list[MassProps], z_mid: float) -> list[float]:
    """Each web's lever arm from the rod's plane: its couple over its unbalance along Y, mm."""
    out = []
    for p in placed:
        uy = float(p.unbalance[1])
        cy = float(p.product_zx_zy[1] - z_mid * p.first_moment[1])
        out.append(abs(cy / uy) if abs(uy) > 1e-9 else 0.0)
    return out


def couple_figures(job, props: list[MassProps]) -> dict:
    """The crank's couple (moment unbalance) from both webs' products of inertia.

    The webs are placed as in crank.step (web b turned 180 deg about Y, `crank_gap` mm from web a);
    the rod, the bob weight and the crank's parts at the pin act in the rod's plane (mid-gap), so
    they add no couple about it.  Identical webs do not cancel a couple when their features lie off
    the Y axis or on one face: turned about Y, the x-z product keeps its sign.
    """
    gap = job.output.crank_gap
    placed = [in_crank_frame(p, i, gap=gap) for i, p in enumerate(props)]
    total = sum(placed, MassProps.zero())
    z_mid = -0.5 * gap
    couple = total.product_zx_zy - z_mid * total.first_moment[:2]
    plane_distance = gap + 0.5 * sum(w.thickness for w in job.webs)
    plane_unbalance = float(np.hypot(*couple)) / plane_distance
    limit = COUPLE_WARN_SHARE * job.tolerance_gmm
    levers = _web_levers(placed, z_mid)
    out = {
        "couple_gmm2": vec(couple),
        "couple_note": f"about the rod's plane, with the webs' inner faces {gap:g} mm apart (crank.step's placing)",
        "plane_distance_mm": num(plane_distance),
        "plane_unbalance_gmm": num(plane_unbalance),
        "plane_unbalance_note": "the couple as the pair of opposite unbalances it equals in the two webs' "
                                "mid-planes; a static balance does not show it, a two-plane (dynamic) one does",
        "warn_above_gmm": num(limit),
        "levers_mm": [num(v) for v in levers],
        "warnings": [],
    }
    if plane_unbalance > limit:
        out["warnings"].append(
            f"the crank keeps a couple of {np.hypot(*couple):.0f} g*mm^2, i.e. +-{plane_unbalance:.1f} g*mm in the "
            f"webs' planes, {plane_distance:g} mm apart: more than {COUPLE_WARN_SHARE:.0%} of the "
            f"{job.tolerance_gmm:.1f} g*mm tolerance; a dynamic balance will show it")
    a, b = job.webs
    unequal = abs(a.share - b.share) > 1e-9 or abs(a.thickness - b.thickness) > 1e-9
    if unequal and sum(levers) > 0:
        free_a = levers[1] / (levers[0] + levers[1])
        out["couple_free_shares"] = {a.name: num(free_a), b.name: num(1.0 - free_a)}
        out["warnings"].append(
            f"the webs differ (shares {a.share:g}/{b.share:g}, thicknesses {a.thickness:g}/{b.thickness:g} mm): "
            f"their unbalances act {levers[0]:.1f} and {levers[1]:.1f} mm from the rod's plane, so the split "
            f"that leaves no couple is {a.name} {free_a:.3f}, {b.name} {1 - free_a:.3f}")
    return out


def rotor_mass_g(job, props: list[MassProps]) -> float:
    """The rotor as spun on a balancing machine: both webs, the crank's parts at the pin, the bob weight."""
    return sum(p.mass for p in props) + job.engine.m_crank_parts + job.engine.bob_weight_g


def crank_figures(job, webs: list, props: list[MassProps]) -> dict:
    from .balance import iso_permissible_unbalance
    from .study import ISO_GRADE_NOTE, ISO_ROTOR_NOTE

    e = job.engine
    gap = job.output.crank_gap
    placed = [in_crank_frame(p, i, gap=gap) for i, p in enumerate(props)]
    u = sum(placed, MassProps.zero()).unbalance
    rotor_g = rotor_mass_g(job, props)
    u_per = iso_permissible_unbalance(grade=job.correction.iso_grade, rotor_mass_g=rotor_g, rpm=e.max_rpm)
    target_total = np.array(e.webs_target_gmm())
    deviation = u - target_total
    return {
        "unbalance_gmm": vec(u),
        "target_gmm": vec(target_total),
        "deviation_gmm": vec(deviation),
        "deviation_bf_percent": num(float(np.hypot(*deviation)) / e.bf_unit_gmm),
        "balance_factor_asked": num(e.balance_factor),
        "balance_factor_achieved": num(e.balance_factor_of(float(u[1]))),
        **couple_figures(job, props),
        "tolerance_gmm": num(job.tolerance_gmm),
        "bf_tolerance_percent": num(job.correction.bf_tolerance_percent),
        "bob_weight_g": num(e.bob_weight_g),
        "bob_weight_note": "to hang on the assembled crank's pin: the rod's rotating end plus the balance factor "
                           "times the reciprocating mass",
        "countered_at_pin_g": num(e.bob_weight_g + e.m_crank_parts),
        "countered_note": "the mass the webs counter at the pin radius: the bob weight plus the crank's own parts",
        "iso_21940_11": {
            "grade_mm_s": num(job.correction.iso_grade),
            "rotor_mass_kg": num(rotor_g / 1000.0),
            "rotor_mass_note": ISO_ROTOR_NOTE,
            "grade_note": ISO_GRADE_NOTE,
            "permissible_residual_gmm": num(u_per),
            "formula": "U_per = 1000 * G * m / Omega (g*mm; G mm/s, m kg, Omega rad/s)",
        },
    }


def plug_density_range(job, webs: list) -> dict | None:
    """What the ends of each plug material's density range do to the crank's unbalance.

    A plug's effect is (rho_plug - rho_web) V (x, y); at another plug density only the
    (rho_end - rho_nominal) V (x, y) part changes.  Crank frame; balance-factor percent
    of m_reciprocating * stroke/2 (a lighter alloy under-corrects).
    """
    from .materials import material

    e = job.engine
    ends = {"low": np.zeros(2), "high": np.zeros(2)}
    used = {}
    for i, w in enumerate(webs):
        for f in w.all_features:
            if not f.fills or getattr(f, "material", None) is None:
                continue
            m = material(f.material, "plug material")
            used[m.name] = m
            volume = math.pi * 0.25 * f.diameter ** 2 * f.length
            x = f.x if i == 0 else -f.x
            for end, rho in (("low", m.density_min), ("high", m.density_max)):
                ends[end] += (rho - m.density) * 1e-3 * volume * np.array([x, f.y])
    if not used:
        return None
    return {
        "materials": {n: {"nominal_g_cm3": num(m.density), "min_g_cm3": num(m.density_min),
                          "max_g_cm3": num(m.density_max), "source": m.source} for n, m in sorted(used.items())},
        **{f"unbalance_change_at_{end}_gmm": vec(v) for end, v in ends.items()},
        **{f"balance_factor_change_at_{end}_percent": num(-v[1] / e.bf_unit_gmm) for end, v in ends.items()},
        "note": "plugs of the lightest and the heaviest alloy the standard allows, against the nominal "
                "density the plan used; weigh the plugs to know where yours lie",
    }


