"""What build, plan and trim print when they are done: a few lines read from
the plan.json dict, for the person at the terminal (the report says more).
"""

from __future__ import annotations

import math

from .plan_json import CAUTIONS
from .uncertainty_text import band_lines


def summary_lines(doc: dict) -> list[str]:
    """The lines a build, plan or trim prints from its plan.json dict: the trim, the crank's balance
    factor, bob weight, deviation and couple, each web and its new features, the first caution."""
    crank = doc["crank"]
    lines = [f"{doc['command']}: {doc['job']}"]
    if "trim" in doc:
        t = doc["trim"]
        lines.append(f"trim: measured unbalance {t['measured_gmm']:.1f} g*mm, heavy spot {t['reading_deg']:g} deg from "
                     f"the pin {t['reading_direction']} ({t['heavy_spot_crank_frame_deg']:g} deg ccw in the crank "
                     f"frame), taken off {t['on_webs']}; left after the trim {math.hypot(*t['left_gmm']):.2f} g*mm "
                     f"({100 * t['left_share_of_measured']:.2f} % of the measured)")
        lines.append("  (the balance factor below is against the design target; the trim answers the measurement)")
    lines += [
             f"balance factor asked {crank['balance_factor_asked']:.3f}, "
             f"achieved {crank['balance_factor_achieved']:.4f} "
             f"(deviation {crank['deviation_bf_percent']:.3f} %, allowed {crank['bf_tolerance_percent']:g} %)",
             f"bob weight to hang on the assembled crank {crank['bob_weight_g']:.1f} g; the webs counter "
             f"{crank['countered_at_pin_g']:.1f} g at the pin radius",
             f"crank deviation {math.hypot(*crank['deviation_gmm']):.1f} g*mm; "
             f"ISO 21940-11 G{crank['iso_21940_11']['grade_mm_s']:g} "
             f"permits {crank['iso_21940_11']['permissible_residual_gmm']:.1f} g*mm at max_rpm",
             f"couple {math.hypot(*crank['couple_gmm2']):.0f} g*mm^2 (+-{crank['plane_unbalance_gmm']:.1f} g*mm in the "
             f"webs' planes)"]
    lines += band_lines(doc)
    for w in doc["webs"]:
        lines.append(f"web {w['name']}: {w['method']}, {len(w['planned_features'])} new feature(s); target "
                     f"{w['target_gmm'][1]:.1f} g*mm, predicted {w['predicted']['unbalance_gmm'][1]:.1f}, "
                     f"deviation {w['deviation_gmm'][0]:+.2f}, {w['deviation_gmm'][1]:+.2f} g*mm (|deviation| "
                     f"allowed {w['tolerance_gmm']:.1f}{_share_text(w)})")
        if "agreement" in w:
            pe = w["agreement"]["predicted_vs_exact"]
            lines.append(f"  verified: exact B-rep vs prediction {pe['unbalance_gmm']:.3g} g*mm, mass "
                         f"{pe['mass_rel']:.1e} relative; mesh within its stated bound")
        for f in w["planned_features"]:
            lines.append("  " + _feature_line(f))
    lines.append("CAUTION: " + CAUTIONS[0])
    return lines


def _share_text(w: dict) -> str:
    share = w.get("deviation_share_of_tolerance")
    return "" if share is None else f", {100 * share:.0f} % of it used"


def _feature_line(f: dict) -> str:
    """A plan.json feature row in words, as its kind says it."""
    from .features import feature_from_table

    return feature_from_table({k: v for k, v in f.items() if k != "effect"}, where="plan.json feature").label()
