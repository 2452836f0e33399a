"""Pictures of a balance study (matplotlib, Agg; imported only when called).

The figure reads a `study.study()` result dict, nothing else, so it can be
redrawn from a saved study.json.
"""

from __future__ import annotations

import io
import math


def study_figure(result: dict):
    """The study figure: force locus (polar) beside the balance-factor sweep.

    Returns a matplotlib Figure (not attached to pyplot).
    """
    from matplotlib.figure import Figure

    inp = result["inputs"]
    # No canvas is attached here: savefig picks the one its format needs (SVG or Agg), so an SVG
    # never pays for loading the raster backend.
    fig = Figure(figsize=(12.5, 6.4))
    polar = fig.add_subplot(1, 2, 1, projection="polar")
    sweep_ax = fig.add_subplot(1, 2, 2)

    # Polar: 0 at the top = +Y of the crank frame, angles counter-clockwise as
    # on the webs, so the picture is the crank frame seen from +Z.
    polar.set_theta_zero_location("N")
    polar.set_theta_direction(1)
    fx = [row["force_x_N"] for row in result["cycle"]]
    fy = [row["force_y_N"] for row in result["cycle"]]
    phi = [math.atan2(-x, y) for x, y in zip(fx, fy)]
    mag = [math.hypot(x, y) for x, y in zip(fx, fy)]
    phi.append(phi[0])
    mag.append(mag[0])
    polar.plot(phi, mag, color="tab:blue", lw=1.8, label="residual force over one revolution")
    rmax = max(max(mag), 1e-9) * 1.15
    tilt = math.radians(inp["cylinder_tilt_deg"])
    polar.plot([tilt, tilt], [0.0, rmax], color="tab:red", lw=1.2, ls="--",
               label="cylinder axis (towards the head)")
    polar.plot([phi[0]], [mag[0]], "o", color="tab:red", label="force at TDC (0 deg)")
    polar.plot([phi[90]], [mag[90]], "s", color="tab:green", label="force at 90 deg after TDC")
    polar.set_ylim(0.0, rmax)
    # Panel titles as figure text: axes titles make matplotlib measure every
    # tick label to place them, a third of the drawing time.
    fig.text(0.255, 0.885, "Residual force on the engine at max rpm\n"
             "radius: force, N; angle: its direction, deg from +Y (ccw)",
             ha="center", va="bottom", fontsize=9.5)
    polar.tick_params(axis="y", labelsize=7.5)
    polar.legend(loc="upper center", bbox_to_anchor=(0.5, -0.06), ncol=2, fontsize=8, frameon=False)

    bf_axis = [row["balance_factor"] for row in result["sweep"]]
    has_balancer = inp["balancer"] is not None
    styles = (("peak_N", "resultant", "black"), ("peak_along_N", "along cylinder", "tab:blue"),
              ("peak_across_N", "across cylinder", "tab:orange"))
    for key, label, colour in styles:
        free = [row[key] for row in result["sweep_no_balancer"]]
        tag = " (no balancer)" if has_balancer else ""
        on_top = 3 if key == "peak_N" else 2  # the resultant over what it hides
        sweep_ax.plot(bf_axis, free, color=colour, lw=1.3, ls="--" if has_balancer else "-",
                      label=f"peak {label}{tag}", zorder=on_top)
        if has_balancer:
            given = [row[key] for row in result["sweep"]]
            sweep_ax.plot(bf_axis, given, color=colour, lw=1.8, zorder=on_top,
                          label=f"peak {label} (with balancer, share {inp['balancer']['share']:g})")
    sweep_ax.axvline(inp["balance_factor"], color="tab:red", lw=1.0,
                     label=f"job balance factor {inp['balance_factor']:g}")
    best = result["best_balance_factor"]
    best_peak = next(row["peak_N"] for row in result["sweep"] if row["balance_factor"] == best)
    sweep_ax.plot([best], [best_peak], "v", color="black", ms=8,
                  label=f"smallest peak: BF {best:g}, {best_peak:.0f} N")
    sweep_ax.set_xlabel("balance factor (share of reciprocating mass), -")
    sweep_ax.set_ylabel("peak force over one revolution, N")
    sweep_ax.set_xlim(0.0, max(row["balance_factor"] for row in result["sweep"]))
    sweep_ax.set_ylim(bottom=0.0)
    sweep_ax.grid(True, lw=0.4, alpha=0.6)
    fig.text(0.765, 0.835, f"Balance-factor sweep at {inp['max_rpm']:g} rpm",
             ha="center", va="bottom", fontsize=10)
    sweep_ax.legend(fontsize=7.5, loc="upper right")

    title = (f"stroke {inp['stroke_mm']:g} mm, rod {inp['rod_length_mm']:g} mm, "
             f"{inp['max_rpm']:g} rpm, balance factor {inp['balance_factor']:g}, "
             f"peak {result['peak_N']:.0f} N")
    if result.get("name"):
        title = f"{result['name']}: {title}"
    fig.suptitle(title, fontsize=11, y=0.985)
    fig.subplots_adjust(left=0.04, right=0.97, top=0.82, bottom=0.17, wspace=0.25)
    return fig


def warm_up() -> None:
    """Import what drawing the study figure needs (the sidecar does this while a plan builds its solids)."""
    import matplotlib.backends.backend_svg  # noqa: F401
    from matplotlib.figure import Figure  # noqa: F401


def study_svg(result: dict) -> bytes:
    """The study figure as SVG bytes; the same result gives the same bytes."""
    import matplotlib

    fig = study_figure(result)
    buf = io.BytesIO()
    # A fixed hash salt and no date keep the SVG byte-stable between runs;
    # text stays text (fonttype none) so labels are searchable and small.
    with matplotlib.rc_context({"svg.hashsalt": "geomgen-study", "svg.fonttype": "none"}):
        fig.savefig(buf, format="svg", metadata={"Date": None})
    return buf.getvalue()


def band_figure(band: dict, contributions: list[dict], *, tolerance_points: float, title: str = ""):
    """How sure the balance factor is: the Monte Carlo histogram of the balance factor (with the first-order
    normal curve, the asked value and its tolerance) beside the inputs that move it, in balance-factor
    points.  Reads plan.json's (or study.json's) "balance_factor_band" and "contributions"."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(12.5, 5.6))
    hist = fig.add_subplot(1, 2, 1)
    bars = fig.add_subplot(1, 2, 2)

    edges = [100.0 * e for e in band["histogram"]["edges"]]
    counts = band["histogram"]["counts"]
    width = edges[1] - edges[0]
    total = max(sum(counts), 1)
    density = [c / (total * width) for c in counts]
    hist.bar(edges[:-1], density, width=width, align="edge", color="tab:blue", alpha=0.55,
             label=f"Monte Carlo, {band['samples']} samples")
    lin = band["linear"]
    mu, u = 100.0 * lin["mean"], 100.0 * lin["u"]
    if u > 0:
        xs = [edges[0] + (edges[-1] - edges[0]) * i / 200.0 for i in range(201)]
        hist.plot(xs, [math.exp(-0.5 * ((x - mu) / u) ** 2) / (u * math.sqrt(2 * math.pi)) for x in xs],
                  color="tab:orange", lw=1.6, label="first order (GUM): normal, same mean and u")
    asked = 100.0 * band["asked"]
    hist.axvspan(asked - tolerance_points, asked + tolerance_points, color="tab:green", alpha=0.12,
                 label=f"asked {band['asked']:g} ± {tolerance_points:g} points")
    hist.axvline(asked, color="tab:green", lw=1.2)
    hist.axvline(100.0 * band["nominal"], color="black", lw=1.0, ls=":", label="the plan's own figure")
    for key in ("low_95", "high_95"):
        hist.axvline(100.0 * band[key], color="tab:red", lw=1.2, ls="--",
                     label="95 % interval (Monte Carlo)" if key == "low_95" else None)
    hist.set_xlabel("balance factor achieved, % of the reciprocating mass")
    hist.set_ylabel("probability density, 1/point")
    hist.set_ylim(bottom=0.0)
    hist.grid(True, lw=0.4, alpha=0.6)
    hist.legend(fontsize=7.5, loc="upper center", bbox_to_anchor=(0.5, -0.14), ncol=2, frameon=False)

    rows = contributions[:8][::-1]
    names = [r["input"] if len(r["input"]) <= 44 else r["input"][:42] + "…" for r in rows]
    values = [r["bf_points"] for r in rows]
    bars.barh(range(len(rows)), values, color="tab:blue", alpha=0.75)
    bars.set_yticks(range(len(rows)))
    bars.set_yticklabels(names, fontsize=7.5)
    bars.axvline(tolerance_points, color="tab:green", lw=1.2, label=f"tolerance ±{tolerance_points:g} points")
    bars.set_xlabel("± balance-factor points across the input's bounds")
    bars.grid(True, axis="x", lw=0.4, alpha=0.6)
    bars.legend(fontsize=7.5, loc="lower right")
    fig.text(0.27, 0.93, "Balance factor achieved: where the cranks land", ha="center", fontsize=10)
    fig.text(0.78, 0.93, "What moves it most", ha="center", fontsize=10)
    if title:
        fig.suptitle(title, fontsize=11, y=0.995)
    fig.subplots_adjust(left=0.06, right=0.98, top=0.9, bottom=0.3, wspace=0.55)
    return fig


def band_svg(band: dict, contributions: list[dict], *, tolerance_points: float, title: str = "") -> bytes:
    """The band figure as SVG bytes; the same figures give the same bytes."""
    import matplotlib

    fig = band_figure(band, contributions, tolerance_points=tolerance_points, title=title)
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": "geomgen-band", "svg.fonttype": "none"}):
        fig.savefig(buf, format="svg", metadata={"Date": None})
    return buf.getvalue()
