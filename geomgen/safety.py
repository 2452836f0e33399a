"""The safety section of plan.json: each plug's centrifugal load and the
rotating-disc hoop stress of each web, at max_rpm and at the overspeed, with
the press-fit, ligament and plug-seat screens.  Screens, not ratings: the
figures carry their method and what they leave out.  No CAD kernel.
"""

from __future__ import annotations

import math

from .rounding import num


def safety_figures(job, webs: list) -> dict:
    from .loads import POISSON_STEEL, disc_hoop_stress_mpa, plug_load_n
    from .screens import screen_figures

    e = job.engine
    over = e.max_rpm * job.overspeed
    plugs, discs = [], []
    for w in webs:
        for i, f in enumerate(w.all_features):
            if f.fills:
                mass = f.plug_mass_g()
                radius = math.hypot(f.x, f.y)
                plugs.append({"web": w.spec.name, "feature": i + 1, "diameter_mm": num(f.diameter),
                              "length_mm": num(f.length), "mass_g": num(mass), "radius_mm": num(radius),
                              "load_N_max_rpm": num(plug_load_n(mass_g=mass, radius_mm=radius, rpm=e.max_rpm)),
                              "load_N_overspeed": num(plug_load_n(mass_g=mass, radius_mm=radius, rpm=over))})
        r_out = w.section.rim_radius_max
        bore = 0.5 * w.section.main_bore
        # a web given only as a density has no Poisson's ratio: the steel figure (nu moves the result a few % at most)
        nu = w.spec.material.poisson_ratio if w.spec.material.poisson_ratio is not None else POISSON_STEEL
        discs.append({"web": w.spec.name, "outer_radius_mm": num(r_out), "bore_radius_mm": num(bore),
                      "poisson_ratio": num(nu),
                      "hoop_stress_MPa_max_rpm": num(disc_hoop_stress_mpa(
                          density_g_cm3=w.section.density_g_cm3, outer_radius_mm=r_out, bore_radius_mm=bore,
                          rpm=e.max_rpm, poisson=nu)),
                      "hoop_stress_MPa_overspeed": num(disc_hoop_stress_mpa(
                          density_g_cm3=w.section.density_g_cm3, outer_radius_mm=r_out, bore_radius_mm=bore,
                          rpm=over, poisson=nu))})
    return {"max_rpm": num(e.max_rpm), "overspeed_rpm": num(over), "plugs": plugs, "discs": discs,
            "disc_method": "thin rotating disc of constant thickness, each web's own Poisson's ratio (0.3 for a "
                           "web given only as a density) (Timoshenko & Goodier); "
                           "ignores the crankpin bore, the correction holes and the press fit, which all raise "
                           "the real stress: a lower bound, not a rating",
            **screen_figures(job, webs)}
