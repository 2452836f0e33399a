"""The job's `[machining]` section: what the shop's mill and tools allow, and overrides of the cutting data.

Every key is optional; the defaults are common practice for a small CNC mill cutting a steel web, said
beside each.  Lengths in mm (or a unit string), speeds in rpm, surface speeds in m/min, feeds per minute
in mm/min, angles in deg.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import BadInput
from ..units import to_internal

#: the keys of [machining], for job.py's key check
KEYS = {"programs", "max_spindle_rpm", "rapid_rate", "max_feed", "clearance", "retract", "surface_speed",
        "feed_per_rev", "feed_per_tooth", "flutes", "peck_depth", "peck_above", "step_down", "stepover",
        "ramp_angle", "finish_allowance", "end_mills", "breakthrough", "tool_change_s"}
#: tool kinds that surface_speed / feed_per_rev / feed_per_tooth may name
TOOL_KINDS = ("drill", "reamer", "end_mill")

#: end mills a shop keeps, mm (common practice: the usual metric sizes)
METRIC_END_MILLS = (3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 12.0, 16.0, 20.0)
#: the usual fractional sizes, 1/8 to 3/4 in, as mm
INCH_END_MILLS = tuple(k / 16 * 25.4 for k in (2, 3, 4, 5, 6, 8, 10, 12))


@dataclass(frozen=True)
class Machining:
    """What the programs may ask of the machine and its tools (mm, rpm, mm/min, deg).

    programs : write the NC programs at all;  max_spindle_rpm : the spindle's top speed (speeds above it
    are cut to it, and the feed with them);  rapid_rate : G0 speed for the time estimate;  max_feed : no
    feed above it;  clearance : the safe height above the face for moves between operations and tool
    changes;  retract : the R plane of canned cycles, above the face;  surface_speed / feed_per_rev /
    feed_per_tooth : {tool kind: value} overriding the cutting-data table;  flutes : of the end mills;
    peck_depth : G83 Q (0 = one drill diameter);  peck_above : peck when the drill's travel is more than
    this many diameters;  step_down : depth per pocket layer (0 = half the end mill's diameter);
    stepover : roughing step across, as a share of the end mill's diameter (at most a half, so that
    the passes overlap and leave no ridge);  ramp_angle : of the ramped
    and helical entries;  finish_allowance : left on the walls for the finishing contour;  end_mills :
    the end mills the shop owns, mm;  breakthrough : how far an end mill or reamer goes past the far face
    of a through bore;  tool_change_s : time per tool change for the estimate.
    """

    programs: bool = True
    max_spindle_rpm: float = 6000.0
    rapid_rate: float = 5000.0
    max_feed: float = 2000.0
    clearance: float = 10.0
    retract: float = 2.0
    surface_speed: tuple[tuple[str, float], ...] = ()
    feed_per_rev: tuple[tuple[str, float], ...] = ()
    feed_per_tooth: tuple[tuple[str, float], ...] = ()
    flutes: int = 4
    peck_depth: float = 0.0
    peck_above: float = 3.0
    step_down: float = 0.0
    stepover: float = 0.4
    ramp_angle: float = 2.0
    finish_allowance: float = 0.2
    end_mills: tuple[float, ...] | None = None
    breakthrough: float = 1.0
    tool_change_s: float = 20.0

    def override(self, table: str, kind: str) -> float | None:
        """The job's value for `kind` ("drill" | "reamer" | "end_mill") in surface_speed, feed_per_rev or
        feed_per_tooth, or None."""
        return dict(getattr(self, table)).get(kind)

    def end_mill_sizes(self, drill_series: str) -> tuple[float, ...]:
        """The shop's end mills, mm ascending: the job's list, else the usual sizes of the drill series."""
        if self.end_mills is not None:
            return self.end_mills
        return INCH_END_MILLS if drill_series == "inch" else METRIC_END_MILLS


def _num(t: dict, key: str, kind: str, default: float, lo: float, hi: float, *, lo_open: bool = False) -> float:
    if key not in t:
        return default
    value = to_internal(t[key], kind, f"machining.{key}")
    low_bad = value <= lo if lo_open else value < lo
    if low_bad or value > hi:
        raise BadInput(f"machining.{key}: {value:g} is out of range; must be {'>' if lo_open else '>='} {lo:g} and "
                       f"<= {hi:g}")
    return value


def _per_tool(t: dict, key: str, kind: str, lo: float, hi: float) -> tuple[tuple[str, float], ...]:
    raw = t.get(key, {})
    if not isinstance(raw, dict):
        raise BadInput(f"machining.{key}: must be a table by tool, e.g. {{ drill = 20, end_mill = 60 }}; "
                       f"tools: {', '.join(TOOL_KINDS)}")
    out = []
    for tool in sorted(raw):
        if tool not in TOOL_KINDS:
            raise BadInput(f"machining.{key}.{tool}: unknown tool; allowed: {', '.join(TOOL_KINDS)}")
        out.append((tool, _num(raw, tool, kind, 0.0, lo, hi, lo_open=True)))
    return tuple(out)


def read_machining(data) -> Machining:
    """The [machining] table of a job (a dict as parsed TOML) as a Machining; BadInput names the key."""
    if not isinstance(data, dict):
        raise BadInput(f"machining: must be a table, got {type(data).__name__}")
    for key in data:
        if key not in KEYS:
            raise BadInput(f"machining.{key}: unknown key; allowed: {', '.join(sorted(KEYS))}")
    programs = data.get("programs", True)
    if not isinstance(programs, bool):
        raise BadInput(f"machining.programs: must be true or false, got {programs!r}")
    flutes = data.get("flutes", 4)
    if isinstance(flutes, bool) or not isinstance(flutes, int) or not 1 <= flutes <= 8:
        raise BadInput(f"machining.flutes: must be a whole number 1 .. 8, got {flutes!r}")
    mills = data.get("end_mills")
    if mills is not None:
        if not isinstance(mills, list) or not mills:
            raise BadInput("machining.end_mills: must be a list of the end mills' diameters in mm, e.g. [6, 10, 16]")
        sizes = sorted({to_internal(v, "length", f"machining.end_mills[{i}]") for i, v in enumerate(mills)})
        if sizes[0] < 0.5 or sizes[-1] > 50.0:
            raise BadInput(f"machining.end_mills: diameters must be 0.5 .. 50 mm, got {sizes[0]:g} .. {sizes[-1]:g}")
        mills = tuple(sizes)
    retract = _num(data, "retract", "length", 2.0, 0.5, 50.0)
    clearance = _num(data, "clearance", "length", 10.0, 1.0, 200.0)
    if clearance < retract:
        raise BadInput(f"machining.clearance: {clearance:g} mm must be at least the retract height ({retract:g} mm)")
    return Machining(
        programs=programs,
        max_spindle_rpm=_num(data, "max_spindle_rpm", "speed", 6000.0, 100.0, 100000.0),
        rapid_rate=_num(data, "rapid_rate", "feed_rate", 5000.0, 100.0, 100000.0),
        max_feed=_num(data, "max_feed", "feed_rate", 2000.0, 10.0, 100000.0),
        clearance=clearance, retract=retract,
        surface_speed=_per_tool(data, "surface_speed", "surface_speed", 0.5, 1000.0),
        feed_per_rev=_per_tool(data, "feed_per_rev", "length", 0.001, 2.0),
        feed_per_tooth=_per_tool(data, "feed_per_tooth", "length", 0.001, 1.0),
        flutes=flutes,
        peck_depth=_num(data, "peck_depth", "length", 0.0, 0.0, 100.0),
        peck_above=_num(data, "peck_above", "dimensionless", 3.0, 0.5, 50.0),
        step_down=_num(data, "step_down", "length", 0.0, 0.0, 50.0),
        stepover=_num(data, "stepover", "dimensionless", 0.4, 0.05, 0.5),
        ramp_angle=_num(data, "ramp_angle", "angle", 2.0, 0.5, 15.0),
        finish_allowance=_num(data, "finish_allowance", "length", 0.2, 0.0, 2.0),
        end_mills=mills,
        breakthrough=_num(data, "breakthrough", "length", 1.0, 0.0, 10.0),
        tool_change_s=_num(data, "tool_change_s", "dimensionless", 20.0, 0.0, 600.0),
    )
