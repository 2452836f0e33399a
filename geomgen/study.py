"""The balance study: one engine at max_rpm -> a JSON-ready dict, a summary, files.

`study()` needs only the engine, the balancer (or None) and the webs' shares,
so it runs without a job file.  It imports no CAD kernel; the plot module is
imported only inside `render()`.
"""

from __future__ import annotations

import json
import math

import numpy as np

from . import balance
from .errors import BadInput

LBF_N = 4.4482216152605  # 1 lbf in N (exact by definition of the pound-force)
CYCLE_STEP_DEG = 1
PEAK_SAMPLES = 3600  # crank angles per revolution for every peak (0.1 deg)
ORDERS = (1, 2, 4)

CAUTION = (
    "Design aid only, not a release for service: check the balance on the real part, "
    "follow the engine maker's limits, local rules and licensed practice."
)


def _num(x: float) -> float:
    """A float rounded to 6 significant digits, with round-off noise made 0.0.

    Same inputs give the same bytes, and -0.0 / 1e-13 never leak into JSON.
    """
    x = float(x)
    if not math.isfinite(x):
        raise ValueError(f"non-finite number in the study: {x!r}")
    if abs(x) < 1e-9:
        return 0.0
    return float(f"{x:.6g}") + 0.0


def _vec(v) -> list[float]:
    return [_num(c) for c in v]


def _web_shares(web_shares) -> list[tuple[str, float]]:
    pairs = []
    for item in web_shares:
        name, share = item
        pairs.append((str(name), float(share)))
    names = [n for n, _ in pairs]
    if len(set(names)) != len(names):
        raise BadInput(f"webs.name: web names must be unique, got {names}")
    return pairs


def study(
    *, engine, balancer=None, web_shares=(("a", 0.5), ("b", 0.5)),
    iso_grade: float = 6.3, rotor_mass_g: float | None = None,
    tolerance_bf: float = 0.005, name: str = "",
) -> dict:
    """Balance study of one engine at its max_rpm.

    engine : has stroke, rod_length, max_rpm, balance_factor, cylinder_tilt
        (mm, rpm, deg) and m_reciprocating, m_rotating (g), reciprocating /
        rotating dicts (g), crank_radius (mm), omega (rad/s) - a job.Engine.
    balancer : has share and offset (mm), or None.
    web_shares : (name, share) pairs; the shares of the webs' target, sum 1.
    iso_grade : ISO 21940-11 G-grade, mm/s.  rotor_mass_g : the rotating
        crank assembly's mass, g, for the ISO figure (None: not computed).
    tolerance_bf : tolerance in balance-factor points (0.005 = +-0.5).
    Returns the JSON-ready dict of the study.json contract.
    """
    r = float(engine.crank_radius)
    rod = float(engine.rod_length)
    omega = float(engine.omega)
    m_recip = float(engine.m_reciprocating)
    m_rot = float(engine.m_rotating)
    bf = float(engine.balance_factor)
    tilt = float(engine.cylinder_tilt)
    share = float(balancer.share) if balancer is not None else 0.0
    offset = tuple(float(v) for v in balancer.offset) if balancer is not None else (0.0, 0.0)
    shares = _web_shares(web_shares)
    if not tolerance_bf > 0.0:
        raise BadInput(f"tolerance_bf: must be > 0 balance-factor points, got {tolerance_bf!r}")

    common = dict(
        crank_radius=r, rod_length=rod, omega=omega,
        m_reciprocating=m_recip, m_rotating=m_rot, cylinder_tilt=tilt,
    )
    # Cycle at 1 deg for the contract; peaks on a 0.1 deg grid.
    cycle_deg = np.arange(0, 360, CYCLE_STEP_DEG)
    cycle_f = balance.shaking_force(
        np.radians(cycle_deg), balance_factor=bf, balancer_share=share, **common
    )
    cycle_along, cycle_across = balance.along_across(cycle_f, tilt)
    fine = np.arange(PEAK_SAMPLES) * (2.0 * math.pi / PEAK_SAMPLES)
    fine_f = balance.shaking_force(fine, balance_factor=bf, balancer_share=share, **common)
    fine_along, fine_across = balance.along_across(fine_f, tilt)
    magnitude = np.hypot(fine_f[:, 0], fine_f[:, 1])
    i_peak = int(np.argmax(magnitude))

    sweep = balance.balance_factor_sweep(balancer_share=share, samples=PEAK_SAMPLES, **common)
    sweep_free = balance.balance_factor_sweep(balancer_share=0.0, samples=PEAK_SAMPLES, **common)

    target = balance.web_target(
        m_rotating=m_rot, m_reciprocating=m_recip, balance_factor=bf, crank_radius=r
    )
    per_web = balance.split_target(target, [s for _, s in shares])
    equal = len({s for _, s in shares}) == 1
    tol_total = tolerance_bf * m_recip * r

    recip_inertia = -m_recip * balance.piston_acceleration(
        np.array([0.0, math.pi]), crank_radius=r, rod_length=rod, omega=omega
    ) * balance.GMM_S2_TO_N
    recip_fine = -m_recip * balance.piston_acceleration(
        fine, crank_radius=r, rod_length=rod, omega=omega
    ) * balance.GMM_S2_TO_N

    couple_peak = 0.0
    if share:
        couple = balance.balancer_couple(
            fine, m_reciprocating=m_recip, crank_radius=r, omega=omega,
            balancer_share=share, balancer_offset=offset, cylinder_tilt=tilt,
        )
        couple_peak = float(np.max(np.abs(couple)))

    iso = {"grade_mm_s": _num(iso_grade), "rotor_mass_g": None, "permissible_unbalance_gmm": None}
    if rotor_mass_g is not None:
        iso["rotor_mass_g"] = _num(rotor_mass_g)
        iso["permissible_unbalance_gmm"] = _num(balance.iso_permissible_unbalance(
            grade=iso_grade, rotor_mass_g=rotor_mass_g, rpm=engine.max_rpm
        ))

    def dead_centre(k: int) -> dict:
        f = cycle_f[k]
        return {"force_x_N": _num(f[0]), "force_y_N": _num(f[1]),
                "along_N": _num(cycle_along[k]), "across_N": _num(cycle_across[k]),
                "resultant_N": _num(math.hypot(f[0], f[1]))}

    def sweep_rows(s: dict) -> list[dict]:
        return [
            {"balance_factor": _num(b), "peak_N": _num(p),
             "peak_along_N": _num(a), "peak_across_N": _num(c)}
            for b, p, a, c in zip(s["balance_factor"], s["peak"], s["peak_along"], s["peak_across"])
        ]

    result = {
        "name": str(name),
        "inputs": {
            "stroke_mm": _num(engine.stroke), "rod_length_mm": _num(rod),
            "max_rpm": _num(engine.max_rpm), "balance_factor": _num(bf),
            "cylinder_tilt_deg": _num(tilt),
            "reciprocating_g": {k: _num(v) for k, v in sorted(engine.reciprocating.items())},
            "rotating_g": {k: _num(v) for k, v in sorted(engine.rotating.items())},
            "balancer": None if balancer is None else {"share": _num(share), "offset_mm": _vec(offset)},
            "web_shares": {n: _num(s) for n, s in shares},
            "tolerance_bf": _num(tolerance_bf),
        },
        "units": {"length": "mm", "mass": "g", "force": "N", "unbalance": "g*mm",
                  "angle": "deg", "speed": "rpm", "couple": "N*m"},
        "crank_radius_mm": _num(r),
        "rod_ratio_lambda": _num(r / rod),
        "omega_rad_s": _num(omega),
        "m_reciprocating_g": _num(m_recip),
        "m_rotating_g": _num(m_rot),
        "bob_weight_g": _num(balance.bob_weight(
            m_rotating=m_rot, m_reciprocating=m_recip, balance_factor=bf)),
        "target_webs_gmm": _vec(target),
        "target_per_web_gmm": (_num(np.hypot(*per_web[0])) if equal
                               else {n: _num(np.hypot(*u)) for (n, _), u in zip(shares, per_web)}),
        "targets_gmm": {n: _vec(u) for (n, _), u in zip(shares, per_web)},
        "tolerance_gmm": _num(tol_total),
        "tolerance_per_web_gmm": {n: _num(s * tol_total) for n, s in shares},
        "iso_21940_11": iso,
        "cycle": [
            {"angle_deg": int(a), "force_x_N": _num(f[0]), "force_y_N": _num(f[1]),
             "force_along_N": _num(fa), "force_across_N": _num(fc)}
            for a, f, fa, fc in zip(cycle_deg, cycle_f, cycle_along, cycle_across)
        ],
        "peak_N": _num(magnitude[i_peak]),
        "peak_angle_deg": _num(math.degrees(fine[i_peak])),
        "peak_along_N": _num(np.max(np.abs(fine_along))),
        "peak_across_N": _num(np.max(np.abs(fine_across))),
        "tdc": dead_centre(0),
        "bdc": dead_centre(180 // CYCLE_STEP_DEG),
        "reciprocating_inertia_tdc_N": _num(recip_inertia[0]),
        "reciprocating_inertia_bdc_N": _num(recip_inertia[1]),
        "harmonics_along_N": {str(k): _num(v) for k, v in
                              balance.harmonic_amplitudes(fine_along, ORDERS).items()},
        "harmonics_reciprocating_N": {str(k): _num(v) for k, v in
                                      balance.harmonic_amplitudes(recip_fine, ORDERS).items()},
        "balancer_couple_peak_Nm": _num(couple_peak),
        "sweep": sweep_rows(sweep),
        "best_balance_factor": _num(balance.best_balance_factor(sweep)),
        "sweep_no_balancer": sweep_rows(sweep_free),
        "best_balance_factor_no_balancer": _num(balance.best_balance_factor(sweep_free)),
        "peak_samples_per_rev": PEAK_SAMPLES,
        "caution": CAUTION,
    }
    return result


def study_of(job) -> dict:
    """The balance study of a loaded job (its webs' shares, tolerance and ISO grade)."""
    return study(engine=job.engine, balancer=job.balancer, web_shares=[(w.name, w.share) for w in job.webs],
                 iso_grade=job.correction.iso_grade, tolerance_bf=job.correction.tolerance_points / 100.0,
                 name=job.name)


def _n_lbf(newton: float) -> str:
    return f"{newton:.1f} N ({newton / LBF_N:.1f} lbf)"


def summary_lines(result: dict) -> list[str]:
    """A short plain summary of a study for stdout (N and lbf)."""
    inp = result["inputs"]
    lines = [
        f"engine: stroke {inp['stroke_mm']:g} mm, rod {inp['rod_length_mm']:g} mm, "
        f"{inp['max_rpm']:g} rpm, balance factor {inp['balance_factor']:g}, "
        f"cylinder tilt {inp['cylinder_tilt_deg']:g} deg",
        f"masses: reciprocating {result['m_reciprocating_g']:g} g, "
        f"rotating {result['m_rotating_g']:g} g",
        f"bob weight: {result['bob_weight_g']:g} g at {result['crank_radius_mm']:g} mm",
        "target per web: " + ", ".join(
            f"{n} {abs(u[1]):g} g*mm" for n, u in result["targets_gmm"].items()
        ) + f" (tolerance +-{result['tolerance_gmm']:g} g*mm whole crank)",
        f"peak residual force: {_n_lbf(result['peak_N'])} at {result['peak_angle_deg']:g} deg "
        f"(along {_n_lbf(result['peak_along_N'])}, across {_n_lbf(result['peak_across_N'])})",
        f"at TDC {_n_lbf(result['tdc']['resultant_N'])}, at BDC {_n_lbf(result['bdc']['resultant_N'])}",
    ]
    if inp["balancer"] is not None:
        lines.append(
            f"best balance factor: {result['best_balance_factor']:g} with the balancer, "
            f"{result['best_balance_factor_no_balancer']:g} without; "
            f"balancer rocking couple peak {result['balancer_couple_peak_Nm']:g} N*m"
        )
    else:
        lines.append(f"best balance factor: {result['best_balance_factor_no_balancer']:g} (no balancer)")
    iso = result["iso_21940_11"]
    if iso["permissible_unbalance_gmm"] is not None:
        lines.append(
            f"ISO 21940-11 G{iso['grade_mm_s']:g}: permissible residual unbalance "
            f"{iso['permissible_unbalance_gmm']:g} g*mm for {iso['rotor_mass_g']:g} g"
        )
    lines.append(result["caution"])
    return lines


def render(result: dict) -> dict[str, bytes]:
    """The study's files: {"study.json": bytes, "study.svg": bytes}."""
    from .plots import study_svg  # matplotlib only when a picture is wanted

    text = json.dumps(result, indent=2, sort_keys=True, allow_nan=False) + "\n"
    return {"study.json": text.encode("utf-8"), "study.svg": study_svg(result)}
