"""A job's webs as the maths sees them: the bare section, the planner's limits,
and the change a list of features makes.  No CAD kernel.
"""

from __future__ import annotations

from .massprops import MassProps
from .planner import Limits


def web_section(job, web):
    """The WebSection of one job web (no features)."""
    from .section import outline_web, parametric_web

    where = f"web {web.name}"
    if web.model is not None:
        from .model3d import load_model, model_section

        model = load_model(web.model, units=web.model_units, rotate_deg=web.model_rotate_deg,
                           stroke=job.engine.stroke, pin_bore=web.pin_bore, main_bore=web.main_bore,
                           where=where)
        return model_section(model, density_g_cm3=web.density, stroke=job.engine.stroke, pin_bore=web.pin_bore,
                             main_bore=web.main_bore)
    if web.diameter is not None:
        return parametric_web(diameter=web.diameter, thickness=web.thickness, density_g_cm3=web.density,
                              stroke=job.engine.stroke, pin_bore=web.pin_bore, main_bore=web.main_bore,
                              where=where)
    return outline_web(path=web.outline, thickness=web.thickness, density_g_cm3=web.density,
                       stroke=job.engine.stroke, pin_bore=web.pin_bore, main_bore=web.main_bore,
                       units=web.outline_units, gap_tol=web.outline_gap, where=f"{where} outline")


def limits_of(job) -> Limits:
    """The planner's limits from the job's [correction] table."""
    c = job.correction
    return Limits(min_wall=c.min_wall, pin_wall=c.pin_wall, max_depth=c.max_depth, through=c.through,
                  drills=c.drills, point_angle=c.point_angle, depth_step=c.depth_step,
                  plug_min_length=c.plug_min_length, plug_min_length_ratio=c.plug_min_length_ratio)


def features_massprops(features, section) -> MassProps:
    """The change the features make to the bare web (each plug with its own material)."""
    return sum((section.change(f) for f in features), MassProps.zero())


def keep_out_of(job, web) -> tuple:
    """Where nothing new may be cut on this web: the job's keep-out zones, and an integral mainshaft
    (`shaft_diameter`, on a web with no main bore) grown by min_wall."""
    from .job import KeepOut

    zones = tuple(job.correction.keep_out)
    if not web.main_bore and web.shaft_diameter > 0:
        zones += (KeepOut(center=(0.0, 0.0), diameter=web.shaft_diameter + 2.0 * job.correction.min_wall),)
    return zones
