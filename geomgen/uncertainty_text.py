"""The balance-factor band in words: the lines `plan`, `build` and `study` print (from their documents)."""

from __future__ import annotations


def calibration_lines(doc: dict) -> list[str]:
    """One line per weighed web: what it weighed, what the model said, what was fitted."""
    lines = []
    for w in doc.get("webs", []):
        c = w.get("calibration")
        if c is None:
            continue
        fitted = (f"density fitted {c['density_g_cm3']:.4f} g/cm^3 (was {c['nominal_density_g_cm3']:g})"
                  if c["fitted"] == "density" else
                  f"thickness fitted {c['thickness_mm']:.3f} mm (was {c['nominal_thickness_mm']:g})")
        lines.append(f"web {w['name']}: weighed {c['weighed_g']:.1f} g, the model {c['model_g']:.1f} g: {fitted}, "
                     f"{c['moved_percent']:+.3f} %")
    return lines


def band_lines(doc: dict) -> list[str]:
    """The band, its largest input and the verdict (nothing for a document without a band)."""
    b = doc.get("balance_factor_band")
    if b is None:
        return []
    lines = calibration_lines(doc)
    lin = b["linear"]
    lines.append(f"balance factor band, 95 % (Monte Carlo, {b['samples']} samples): {b['low_95']:.4f} .. "
                 f"{b['high_95']:.4f}, mean {b['mean']:.4f} (first order: {lin['mean']:.4f} +- "
                 f"{lin['coverage_factor'] * lin['u']:.4f}, k = {lin['coverage_factor']:g})")
    rows = doc.get("contributions") or []
    if rows:
        top = rows[0]
        lines.append(f"  moves it most: {top['input']}, +-{top['bf_points']:.2f} balance-factor points "
                     f"({100 * top['share']:.0f} % of the variance)")
    verdict = (doc.get("uncertainty") or {}).get("verdict")
    if verdict is not None:
        lines.append(f"  {verdict['text']}")
    # the terminal gets the plain spelling the other lines use
    return [line.replace("±", "+-") for line in lines]
