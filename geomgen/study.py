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
from .rounding import num as _num
from .rounding import vec as _vec

LBF_N = 4.4482216152605  # 1 lbf in N (exact by definition of the pound-force)
CYCLE_STEP_DEG = 1
PEAK_SAMPLES = 3600  # crank angles per revolution for every peak (0.1 deg)
ORDERS = (1, 2, 4)

ISO_ROTOR_NOTE = ("the rotor as it is spun on the balancing machine: both webs, the crank's own parts at the "
                  "pin and the bob weight")
ISO_GRADE_NOTE = ("the G-grade is the user's choice; the standard's rows for crankshaft drives concern the "
                  "whole drive (crank, flywheel, clutch, pulley), not a crank alone")

CAUTION = (
    "Design aid only, not a release for service: check the balance on the real part, "
    "follow the engine maker's limits, local rules and licensed practice."
)


def _web_shares(web_shares) -> list[tuple[str, float]]:
    pairs = []
    for item in web_shares:
        name, share = item
        pairs.append((str(name), float(share)))
    names = [n for n, _ in pairs]
    if len(set(names)) != len(names):
        raise BadInput(f"webs.name: web names must be unique, got {names}")
    return pairs


def _mirror_x(forces: np.ndarray) -> np.ndarray:
    out = np.array(forces, dtype=float, copy=True)
    out[..., 0] *= -1.0
    return out


def _peak_info(fine: np.ndarray, magnitude: np.ndarray, forces: np.ndarray, tilt: float) -> dict:
    """Where the peak resultant occurs: crank angle after TDC, the force's direction, its mirror."""
    n = len(fine)
    i_peak = int(np.argmax(magnitude))
    peak = float(magnitude[i_peak])
    fx, fy = forces[i_peak]
    along, across = balance.along_across(forces[i_peak:i_peak + 1], tilt)
    # the same peak on the other side of TDC (the force is symmetric about the cylinder axis)
    i_mirror = (n - i_peak) % n
    mirrored = i_mirror != i_peak and abs(magnitude[i_mirror] - peak) <= 1e-9 * max(peak, 1.0)
    return {
        "crank_angle_after_tdc_deg": _num(math.degrees(fine[i_peak])),
        "direction_deg": _num(math.degrees(math.atan2(-fx, fy)) % 360.0),
        "along_N": _num(along[0]), "across_N": _num(across[0]),
        "same_peak_at_deg": _num(math.degrees(fine[i_mirror])) if mirrored else None,
    }


def study(
    *, engine, balancer=None, web_shares=(("a", 0.5), ("b", 0.5)),
    iso_grade: float = 6.3, rotor_mass_g: float | None = None,
    bf_tolerance_percent: float = 0.5, name: str = "",
) -> dict:
    """Balance study of one engine at its max_rpm.

    engine : a job.Engine: stroke, rod_length, max_rpm, balance_factor,
        cylinder_tilt, rotation (mm, rpm, deg), the weighed parts (g) and the
        derived crank_radius (mm), omega (rad/s), m_reciprocating, m_rotating
        (the rod's rotating end), m_crank_parts (the crank's own parts at the pin).
    balancer : has share and offset (mm), or None.
    web_shares : (name, share) pairs; the shares of the webs' target, sum 1.
    iso_grade : ISO 21940-11 G-grade, mm/s.  rotor_mass_g : the rotor as spun
        on the balancing machine (webs, crank parts and bob weight), g, for the
        ISO figure (None: not computed).
    bf_tolerance_percent : the allowed |deviation| in balance-factor percent (0.5 = +-0.5 %).
    Returns the JSON-ready dict of the study.json contract.
    """
    r = float(engine.crank_radius)
    rod = float(engine.rod_length)
    omega = float(engine.omega)
    m_recip = float(engine.m_reciprocating)
    m_rot = float(engine.m_rotating)
    m_parts = float(getattr(engine, "m_crank_parts", 0.0))
    rotation = getattr(engine, "rotation", "ccw")
    bf = float(engine.balance_factor)
    tilt = float(engine.cylinder_tilt)
    share = float(balancer.share) if balancer is not None else 0.0
    offset = tuple(float(v) for v in balancer.offset) if balancer is not None else (0.0, 0.0)
    shares = _web_shares(web_shares)
    if not bf_tolerance_percent > 0.0:
        raise BadInput(f"correction.bf_tolerance_percent: must be > 0, got {bf_tolerance_percent!r}")

    # The maths turns the crank counter-clockwise (seen from +Z).  A clockwise crank is its mirror
    # image in x: solve the mirrored engine (tilt and balancer offset mirrored), then mirror back.
    cw = rotation == "cw"
    solve_tilt = -tilt if cw else tilt
    solve_offset = (-offset[0], offset[1]) if cw else offset

    def mirrored(forces):
        return _mirror_x(forces) if cw else forces

    # everything at the pin radius turns with the crank: the rod's rotating end and the crank's parts
    common = dict(
        crank_radius=r, rod_length=rod, omega=omega,
        m_reciprocating=m_recip, m_rotating=m_rot + m_parts, cylinder_tilt=solve_tilt,
    )
    # Cycle at 1 deg for the contract; peaks on a 0.1 deg grid.
    cycle_deg = np.arange(0, 360, CYCLE_STEP_DEG)
    cycle_f = mirrored(balance.shaking_force(
        np.radians(cycle_deg), balance_factor=bf, balancer_share=share, **common
    ))
    cycle_along, cycle_across = balance.along_across(cycle_f, tilt)
    fine = np.arange(PEAK_SAMPLES) * (2.0 * math.pi / PEAK_SAMPLES)
    fine_f = mirrored(balance.shaking_force(fine, balance_factor=bf, balancer_share=share, **common))
    fine_along, fine_across = balance.along_across(fine_f, tilt)
    magnitude = np.hypot(fine_f[:, 0], fine_f[:, 1])
    peak = _peak_info(fine, magnitude, fine_f, tilt)

    sweep = balance.balance_factor_sweep(balancer_share=share, samples=PEAK_SAMPLES, **common)
    # without a balancer the two sweeps are one
    sweep_free = sweep if share == 0.0 else balance.balance_factor_sweep(balancer_share=0.0, samples=PEAK_SAMPLES,
                                                                         **common)

    target = balance.web_target(
        m_rotating=m_rot, m_crank_parts=m_parts, m_reciprocating=m_recip, balance_factor=bf, crank_radius=r
    )
    per_web = balance.split_target(target, [s for _, s in shares])
    equal = len({s for _, s in shares}) == 1
    tol_total = bf_tolerance_percent / 100.0 * m_recip * r

    recip_inertia = -m_recip * balance.piston_acceleration(
        np.array([0.0, math.pi]), crank_radius=r, rod_length=rod, omega=omega
    ) * balance.GMM_S2_TO_N
    recip_fine = -m_recip * balance.piston_acceleration(
        fine, crank_radius=r, rod_length=rod, omega=omega
    ) * balance.GMM_S2_TO_N
    torque = balance.reciprocating_torque(fine, crank_radius=r, rod_length=rod, omega=omega,
                                          m_reciprocating=m_recip)
    i_torque = int(np.argmax(np.abs(torque)))

    couple_peak = 0.0
    couple_angle = None
    if share:
        couple = balance.balancer_couple(
            fine, m_reciprocating=m_recip, crank_radius=r, omega=omega,
            balancer_share=share, balancer_offset=solve_offset, cylinder_tilt=solve_tilt,
        )
        i_couple = int(np.argmax(np.abs(couple)))
        couple_peak = float(abs(couple[i_couple]))
        couple_angle = _num(math.degrees(fine[i_couple]))

    iso = {"grade_mm_s": _num(iso_grade), "rotor_mass_g": None, "permissible_unbalance_gmm": None,
           "rotor_mass_note": ISO_ROTOR_NOTE, "grade_note": ISO_GRADE_NOTE}
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

    bob = balance.bob_weight(m_rotating=m_rot, m_reciprocating=m_recip, balance_factor=bf)
    result = {
        "name": str(name),
        "inputs": {
            "stroke_mm": _num(engine.stroke), "rod_length_mm": _num(rod),
            "max_rpm": _num(engine.max_rpm), "balance_factor": _num(bf),
            "cylinder_tilt_deg": _num(tilt), "rotation": rotation,
            "reciprocating_g": {k: _num(v) for k, v in sorted(engine.reciprocating.items())},
            "rotating_g": {k: _num(v) for k, v in sorted(engine.rotating.items())},
            "crank_parts_g": {k: _num(v) for k, v in sorted(getattr(engine, "crank_parts", {}).items())},
            "balancer": None if balancer is None else {"share": _num(share), "offset_mm": _vec(offset)},
            "web_shares": {n: _num(s) for n, s in shares},
            "bf_tolerance_percent": _num(bf_tolerance_percent),
        },
        "units": {"length": "mm", "mass": "g", "force": "N", "unbalance": "g*mm",
                  "angle": "deg", "speed": "rpm", "couple": "N*m", "torque": "N*m"},
        "crank_radius_mm": _num(r),
        "rod_ratio_lambda": _num(r / rod),
        "omega_rad_s": _num(omega),
        "m_reciprocating_g": _num(m_recip),
        "m_rotating_g": _num(m_rot),
        "m_crank_parts_g": _num(m_parts),
        "bob_weight_g": _num(bob),
        "bob_weight_note": "hang on the assembled crank's pin: the rod's rotating end plus the balance factor "
                           "times the reciprocating mass; the crank's own parts are on the crank already",
        "countered_at_pin_g": _num(bob + m_parts),
        "target_webs_gmm": _vec(target),
        "target_per_web_gmm": (_num(np.hypot(*per_web[0])) if equal
                               else {n: _num(np.hypot(*u)) for (n, _), u in zip(shares, per_web)}),
        "targets_gmm": {n: _vec(u) for (n, _), u in zip(shares, per_web)},
        "tolerance_gmm": _num(tol_total),
        "tolerance_note": "the magnitude of the crank's deviation from target, as a vector (ISO 21940-11 "
                          "treats unbalance as a vector), shared between the webs by their shares",
        "tolerance_per_web_gmm": {n: _num(s * tol_total) for n, s in shares},
        "iso_21940_11": iso,
        "cycle": [
            {"angle_deg": int(a), "force_x_N": _num(f[0]), "force_y_N": _num(f[1]),
             "force_along_N": _num(fa), "force_across_N": _num(fc)}
            for a, f, fa, fc in zip(cycle_deg, cycle_f, cycle_along, cycle_across)
        ],
        "peak_N": _num(magnitude[int(np.argmax(magnitude))]),
        "peak_angle_deg": peak["crank_angle_after_tdc_deg"],
        "peak": peak,
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
        "inertia_torque": {
            "peak_Nm": _num(abs(torque[i_torque])),
            "at_crank_angle_deg": _num(math.degrees(fine[i_torque])),
            "harmonics_Nm": {str(k): _num(v) for k, v in
                             balance.harmonic_amplitudes(torque, (1, 2, 3, 4)).items()},
            "note": "the reciprocating parts' inertia torque about the crank axis (mean zero); "
                    "counterweights and balancer shafts at constant speed do not change it",
        },
        "balancer_couple_peak_Nm": _num(couple_peak),
        "balancer_couple_at_crank_angle_deg": couple_angle,
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
    result = study(engine=job.engine, balancer=job.balancer, web_shares=[(w.name, w.share) for w in job.webs],
                   iso_grade=job.correction.iso_grade, bf_tolerance_percent=job.correction.bf_tolerance_percent,
                   name=job.name)
    result["warnings"] = list(job.warnings)
    # how sure the balance factor is from the weighed parts alone (geomgen.uncertainty)
    from .uncertainty import parts_band, rounded

    found = rounded(parts_band(job))
    result["balance_factor_band"] = found.pop("balance_factor_band")
    result["contributions"] = found.pop("contributions")
    result["uncertainty"] = found
    return result


def _n_lbf(newton: float) -> str:
    return f"{newton:.1f} N ({newton / LBF_N:.1f} lbf)"


def peak_line(result: dict) -> str:
    """The peak residual force in words: how large, at which crank angle, pointing where."""
    p = result["peak"]
    twin = (f"; the same peak at {p['same_peak_at_deg']:.1f} deg, the other side of TDC"
            if p["same_peak_at_deg"] is not None else "")
    return (f"peak residual force: {_n_lbf(result['peak_N'])} at crank angle {p['crank_angle_after_tdc_deg']:.1f} deg "
            f"after TDC, pointing {p['direction_deg']:.1f} deg from +Y (ccw, crank frame){twin}; over a revolution "
            f"the largest along the cylinder is {_n_lbf(result['peak_along_N'])}, across "
            f"{_n_lbf(result['peak_across_N'])}")


def summary_lines(result: dict) -> list[str]:
    """A short plain summary of a study for stdout (N and lbf)."""
    inp = result["inputs"]
    lines = [
        f"engine: stroke {inp['stroke_mm']:g} mm, rod {inp['rod_length_mm']:g} mm, "
        f"{inp['max_rpm']:g} rpm, balance factor {inp['balance_factor']:g}, "
        f"cylinder tilt {inp['cylinder_tilt_deg']:g} deg",
        f"masses: reciprocating {result['m_reciprocating_g']:g} g, rod's rotating end "
        f"{result['m_rotating_g']:g} g, crank's own parts at the pin {result['m_crank_parts_g']:g} g",
        f"bob weight to hang on the assembled crank: {result['bob_weight_g']:g} g at {result['crank_radius_mm']:g} mm; "
        f"the webs counter {result['countered_at_pin_g']:g} g at the pin radius",
        "target per web: " + ", ".join(
            f"{n} {abs(u[1]):g} g*mm" for n, u in result["targets_gmm"].items()
        ) + f" (the crank within {result['tolerance_gmm']:g} g*mm of it, as a vector magnitude: "
            f"+-{result['inputs']['bf_tolerance_percent']:g} % balance factor)",
        peak_line(result),
        f"at TDC {_n_lbf(result['tdc']['resultant_N'])}, at BDC {_n_lbf(result['bdc']['resultant_N'])}",
        f"reciprocating inertia torque about the crank axis: peak {result['inertia_torque']['peak_Nm']:.1f} N*m "
        f"at {result['inertia_torque']['at_crank_angle_deg']:.1f} deg after TDC (no counterweight changes it)",
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
            f"{iso['permissible_unbalance_gmm']:g} g*mm for {iso['rotor_mass_g']:g} g ({iso['rotor_mass_note']})"
        )
    from .uncertainty_text import band_lines

    lines += band_lines(result)
    lines.append(result["caution"])
    return lines


def render(result: dict) -> dict[str, bytes]:
    """The study's files: {"study.json": bytes, "study.svg": bytes}."""
    from . import sidecar

    text = json.dumps(result, indent=2, sort_keys=True, allow_nan=False) + "\n"
    side = sidecar.active()
    answer = side.ask({"op": "svg", "study": result}) if side is not None else None
    if answer is not None:
        svg = answer["svg"].encode("utf-8")
    else:
        from .plots import study_svg  # the chart library only when a picture is wanted

        svg = study_svg(result)
    return {"study.json": text.encode("utf-8"), "study.svg": svg}
