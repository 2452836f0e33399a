"""Spindle speed and feed from the tool, its diameter and the material it cuts.

    n = 1000 * Vc / (pi * D)      rpm, Vc in m/min, D in mm
    F = n * f                     mm/min, f the feed per revolution (drills, reamers)
    F = n * z * fz                mm/min, z flutes, fz the feed per tooth (end mills)

Surface speeds for HSS drills and HSS reamers are Machinery's Handbook's table of recommended cutting
speeds in feet per minute for drilling and reaming plain carbon and alloy steels, and its companion for
ferrous cast metals (as reproduced in tool makers' charts; rows named below), converted at
1 ft = 0.3048 m.  A web of "steel" (a plain carbon forging steel) is read as the 1027-1052 row at 175-225
HB; "alloy-steel" (Cr-Mo and Ni-Cr-Mo forging steels, usually quenched and tempered) as the row for
medium-carbon alloy steels (4130, 4140, 4340) at 250-300 HB, the slowest of the rows that name these
grades; a web given as a density only is cut at those alloy-steel speeds too.

Feeds per revolution of HSS drills by diameter are the classic table of drill feeds (under 1/8 in
0.001-0.002 in/rev, 1/8-1/4 in 0.002-0.004, 1/4-1/2 in 0.004-0.007, 1/2-1 in 0.007-0.015, over 1 in
0.015-0.025), from memory; the low end of each band is used, as the handbook advises for tough steels.
Reamers run at the table's reaming speed and, from memory, at twice the drill's feed.

End mills are solid carbide, 4 flutes by default.  Their surface speeds and feeds per tooth for
full-width pocketing are from memory, on the low side of end-mill makers' charts for steel (about 90
m/min in carbon steel, 70 m/min in quenched and tempered alloy steel, fz about 0.004 D for D <= 10 mm);
check them against the maker of the tool in the spindle.

Tungsten heavy alloy (ASTM B777 plugs) machines much like a hard grey cast iron (producers' data,
from memory): 15 m/min drilling with HSS, 10 m/min reaming, 40 m/min with carbide end mills, at the
steel feeds.  A cut that enters an existing plug takes these figures.

Every figure can be overridden in the job's [machining] section; the spindle's top speed caps n
(and the feed with it, at the same feed per revolution).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

FT = 0.3048          # m per foot
INCH = 25.4          # mm per inch

HANDBOOK = ("Machinery's Handbook, recommended cutting speeds for drilling and reaming plain carbon and alloy "
            "steels (and ferrous cast metals), HSS")


@dataclass(frozen=True)
class Row:
    """Surface speeds (m/min) for one workpiece material, and where they come from."""

    group: str
    drill: float          # HSS drill
    reamer: float         # HSS reamer
    end_mill: float       # carbide end mill
    source: str           # of the drill and reamer speeds
    end_mill_source: str


#: workpiece groups (speeds in m/min)
ROWS = {
    "carbon steel": Row("carbon steel", 75 * FT, 50 * FT, 90.0,
                        f"{HANDBOOK}: plain carbon 1027-1052, 175-225 HB, 75 fpm drilling, 50 fpm reaming",
                        "carbide end mill in carbon steel 90 m/min, from memory"),
    "alloy steel": Row("alloy steel", 45 * FT, 30 * FT, 70.0,
                       f"{HANDBOOK}: medium-carbon alloy 4130, 4140, 4340 at 250-300 HB, 45 fpm drilling, 30 fpm "
                       "reaming", "carbide end mill in quenched and tempered alloy steel 70 m/min, from memory"),
    "stainless steel": Row("stainless steel", 55 * FT, 35 * FT, 60.0,
                           f"{HANDBOOK}: austenitic 302, 304, 321, 135-185 HB, 55 fpm drilling, 35 fpm reaming",
                           "carbide end mill in austenitic stainless 60 m/min, from memory"),
    "cast iron": Row("cast iron", 70 * FT, 45 * FT, 80.0,
                     f"{HANDBOOK}: ductile iron 80-55-06, 190-225 HB, 70 fpm drilling, 45 fpm reaming",
                     "carbide end mill in ductile iron 80 m/min, from memory"),
    "aluminium": Row("aluminium", 200 * FT, 130 * FT, 250.0,
                     "from memory: wrought aluminium alloys, HSS drill 200 fpm, reamer 130 fpm",
                     "carbide end mill in aluminium 250 m/min, from memory (the spindle's top speed usually caps it)"),
    "tungsten heavy alloy": Row("tungsten heavy alloy", 15.0, 10.0, 40.0,
                                "from memory: producers' data for ASTM B777 tungsten heavy alloys, machined like a "
                                "hard grey cast iron, HSS drill 15 m/min, reamer 10 m/min",
                                "carbide end mill in tungsten heavy alloy 40 m/min, from memory"),
}

#: the web materials of geomgen.materials by group
MATERIAL_GROUP = {"steel": "carbon steel", "alloy-steel": "alloy steel", "stainless-steel": "stainless steel",
                  "cast-iron": "cast iron", "aluminium": "aluminium"}

#: HSS drill feed per revolution: (largest diameter, in), low end of the band (in/rev), from memory
DRILL_FEED_IN = ((0.125, 0.001), (0.25, 0.002), (0.5, 0.004), (1.0, 0.007), (math.inf, 0.015))

#: carbide end mill feed per tooth, mm: (largest diameter, mm), fz, from memory
END_MILL_FZ_MM = ((3.0, 0.010), (6.0, 0.020), (10.0, 0.035), (16.0, 0.05), (math.inf, 0.06))


def group_of(material) -> str:
    """The cutting-data group of a geomgen.materials.Material (a name-less density: alloy steel)."""
    name = getattr(material, "name", str(material))
    if name.startswith("W-alloy"):
        return "tungsten heavy alloy"
    return MATERIAL_GROUP.get(name, "alloy steel")


def drill_feed_per_rev(diameter_mm: float) -> float:
    """mm/rev of an HSS drill of this diameter (the table above, low end)."""
    d_in = diameter_mm / INCH
    for largest, feed in DRILL_FEED_IN:
        if d_in <= largest + 1e-9:
            return feed * INCH
    raise AssertionError("unreachable")


def end_mill_feed_per_tooth(diameter_mm: float) -> float:
    for largest, fz in END_MILL_FZ_MM:
        if diameter_mm <= largest + 1e-9:
            return fz
    raise AssertionError("unreachable")


def spindle_rpm(surface_speed_m_min: float, diameter_mm: float) -> float:
    """n = 1000 Vc / (pi D)."""
    return 1000.0 * surface_speed_m_min / (math.pi * diameter_mm)


@dataclass(frozen=True)
class Cut:
    """Speed and feed of one tool in one material.

    rpm : spindle speed, after the machine's cap;  feed_mm_min : feed rate at that speed;
    surface_speed : m/min asked (before the cap);  per_rev / per_tooth : the feed it was worked from
    (mm);  capped : the spindle's top speed cut n;  source : where the figures come from.
    """

    rpm: float
    feed_mm_min: float
    surface_speed: float
    per_rev: float
    per_tooth: float | None
    capped: bool
    source: str


def cut(kind: str, diameter_mm: float, group: str, machining) -> Cut:
    """Speed and feed for a tool `kind` ("drill" | "reamer" | "end_mill") of `diameter_mm` in `group`.

    machining : geomgen.nc.settings.Machining (its overrides and the spindle's and feed's caps).
    """
    row = ROWS[group]
    vc = machining.override("surface_speed", kind)
    source = row.end_mill_source if kind == "end_mill" else row.source
    if vc is None:
        vc = getattr(row, kind)
    else:
        source = f"surface speed from the job's [machining], {vc:g} m/min"
    per_tooth = None
    feeds = " (feed from the job's [machining])" if machining.override(
        "feed_per_tooth" if kind == "end_mill" else "feed_per_rev", kind) else ""
    source += feeds
    if kind == "end_mill":
        per_tooth = machining.override("feed_per_tooth", kind) or end_mill_feed_per_tooth(diameter_mm)
        per_rev = per_tooth * machining.flutes
    else:
        base = drill_feed_per_rev(diameter_mm)
        per_rev = machining.override("feed_per_rev", kind) or (base if kind == "drill" else 2.0 * base)
    n = spindle_rpm(vc, diameter_mm)
    capped = n > machining.max_spindle_rpm
    n = min(n, machining.max_spindle_rpm)
    rpm = float(math.floor(n))                       # a whole rpm, never above the figure
    feed = min(rpm * per_rev, machining.max_feed)
    return Cut(rpm=rpm, feed_mm_min=feed, surface_speed=vc, per_rev=per_rev, per_tooth=per_tooth, capped=capped,
               source=source)
