"""How far the correction planner reaches before it says a target cannot be reached (exit 3).

Three jobs a user tried (invented data, no real engine), each once refused although a hand-placed
layout within every wall of [correction] reaches the target.  The planner runs through the Python API
(`geomgen.plan`, maths only, no CAD kernel); each check is computed here without the planner:
- a kidney pocket's effect from its plan-view polygon rebuilt with shapely (tests/plancheck.py,
  independent of geomgen's own loops), times depth and density; the first moment of an annular
  sector of half-angle a between radii r1 and r2 about its axis of symmetry is (2/3) sin(a) (r2^3 - r1^3)
  (centroid of an annular sector, Machinery's Handbook "centroids of areas"; also Beer & Johnston,
  Vector Mechanics for Engineers: Statics, table of centroids of common shapes of areas);
- a hole's effect from its mass, a cylinder rho pi d^2/4 t, at its centre (Machinery's Handbook, volume
  of a cylinder); the web's own unbalance from the closed form of a disc with its pin bore
  (tests/plancheck.py);
- walls measured on shapely footprints (tests/plancheck.py).
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
import shapely

import geomgen
from geomgen.errors import Infeasible
from geomgen.features import feature_to_table

import plancheck as pc

STEEL = 7.85  # g/cm^3, the job's "steel" (carbon steel, common practice)


def _job(*, stroke, diameter, thickness, pin_bore, main_bore=0.0, correction, reciprocating, rotating,
         crank_parts, balance_factor):
    """A job dict as a user writes it (invented demo data)."""
    return {
        "name": "reach demo (invented)",
        "engine": {"stroke": stroke, "rod_length": 2.1 * stroke, "max_rpm": 9000, "balance_factor": balance_factor,
                   "reciprocating": reciprocating, "rotating": rotating, "crank_parts": crank_parts},
        "web": {"diameter": diameter, "thickness": thickness, "material": "steel", "pin_bore": pin_bore,
                "main_bore": main_bore, "features": []},
        "correction": correction,
    }


def _need(job) -> np.ndarray:
    """The change one web needs, g*mm: the README's target (tests/plancheck.py) less the disc with its
    pin bore (a centred main bore has no first moment)."""
    w = job["web"]
    before = pc.disc_web_unbalance(diameter=w["diameter"], thickness=w["thickness"], density=STEEL,
                                   stroke=job["engine"]["stroke"], pin_bore=w["pin_bore"])
    return pc.contract_target(job) - before


def _kidney_effect(table: dict, density=STEEL) -> np.ndarray:
    """The unbalance change of a pocket, g*mm: minus rho * depth * area * centroid of its shapely polygon."""
    poly = pc.kidney_polygon(table)
    c = poly.centroid
    return -density * 1e-3 * table["depth"] * poly.area * np.array([c.x, c.y])


def _reach_in(message: str, kind: str) -> float:
    m = re.search(rf"the search found at most ([0-9.]+) g\*mm with {kind} ", message)
    assert m, message
    return float(m.group(1))


# ------------------------------------------------------------------ 1. a kidney pocket on a small web
# An 80 mm web (stroke 42, 14 mm pin bore, 12 mm main bore, 12 mm thick) may be pocketed 6 mm deep, with
# 2 mm walls and 4 mm round the pin bore.  The pocket goes on the pin side, centred on +Y.
POCKET_WEB = dict(stroke=42.0, diameter=80.0, thickness=12.0, pin_bore=14.0, main_bore=12.0)
POCKET_CORRECTION = {"kind": "pockets", "max_depth": 6.0, "min_wall": 2.0, "pin_wall": 4.0}
# the walls bound every kidney centred on +Y: on the Y axis the pin bore and its wall cover radii
# 21 -+ (7 + 4), so r1 >= 32 (or r2 <= 10, with the main bore's wall at 8 too narrow for a kidney), and the
# rim's wall gives r2 <= 40 - 2 = 38
R1_WALL, R2_WALL = 21.0 + 7.0 + 4.0, 40.0 - 2.0


def _sector_moment(r1, r2, half_deg, depth, density=STEEL):
    """g*mm: (2/3) sin(a) (r2^3 - r1^3) times depth and density (centroid of an annular sector)."""
    return (2.0 / 3.0) * math.sin(math.radians(half_deg)) * (r2 ** 3 - r1 ** 3) * depth * density * 1e-3


def test_pocket_bound_of_the_walls_is_the_half_annulus():
    """The most any kidney centred on +Y can do here is the half annulus 32..38 at 6 mm: no part of the
    band adds more than the points within 90 deg of the line.  694 g*mm, which the shapely polygon of the
    sector (no corners) reproduces: the closed form and the polygon agree."""
    bound = _sector_moment(R1_WALL, R2_WALL, 90.0, 6.0)
    assert bound == pytest.approx(694.07, abs=0.01)    # (2/3)(38^3 - 32^3) 6 * 7.85e-3 = 694.066
    table = {"r_inner": R1_WALL, "r_outer": R2_WALL, "angle_start": -90.0, "angle_end": 90.0, "depth": 6.0,
             "corner_radius": 0.0}
    assert -_kidney_effect(table)[1] == pytest.approx(bound, rel=1e-5)


def test_pocket_reach_reaches_a_hand_placed_half_annulus_kidney():
    """Once refused with "at most 88 g*mm" (the kidney was widened to the largest span that fits, up to
    340 deg, which cancels its own unbalance).  Asked for more than the walls allow, the planner now names
    a reach of at least a hand-placed +-90 deg kidney 0.2 mm inside the walls (r 32.2 .. 37.8, corners
    r 2.8 = half its width, 6 mm deep; its walls measured here), and at most the half-annulus bound."""
    job = _job(**POCKET_WEB, correction=POCKET_CORRECTION, balance_factor=0.55,
               reciprocating={"piston": 55.0, "rod_small_end": 15.0}, rotating={"rod_big_end": 28.0},
               crank_parts={"crankpin": 60.0})
    need = float(np.linalg.norm(_need(job)))
    bound = _sector_moment(R1_WALL, R2_WALL, 90.0, 6.0)
    assert need > bound + 100.0                         # provably out of reach of one kidney
    hand = {"kind": "pocket", "r_inner": R1_WALL + 0.2, "r_outer": R2_WALL - 0.2, "angle_start": -90.0,
            "angle_end": 90.0, "depth": 6.0, "corner_radius": 2.8, "face": "outer"}
    pc.assert_walls([hand], outline=pc.disc_outline(80.0), pin_center=(0.0, 21.0), pin_bore=14.0,
                    thickness=12.0, min_wall=2.0, pin_wall=4.0, max_depth=6.0, bores=[(0.0, 0.0, 12.0)])
    by_hand = -_kidney_effect(hand)[1]
    # the rounded corners lie within 2 * 0.2146 rc^2 of each end, near 90 deg from the line: they cost little
    assert _sector_moment(R1_WALL + 0.2, R2_WALL - 0.2, 90.0, 6.0) - by_hand < 1.0
    with pytest.raises(Infeasible) as err:
        geomgen.plan(geomgen.load_job(job))
    reach = _reach_in(str(err.value), "pockets")
    assert by_hand - 0.5 <= reach <= bound + 0.5, (by_hand, reach, bound)   # the message rounds to 1 g*mm


def test_pocket_planned_where_one_was_refused():
    """A 604 g*mm need (once exit 3): the planner lays one kidney centred on +Y that meets the target, by
    the shapely polygon's moment, within its walls, in the outermost band the walls leave."""
    job = _job(**POCKET_WEB, correction=POCKET_CORRECTION, balance_factor=0.55,
               reciprocating={"piston": 55.0, "rod_small_end": 15.0}, rotating={"rod_big_end": 28.0},
               crank_parts={"crankpin": 20.0})
    need = _need(job)
    # (28 + 20 + 0.55 * 70) * 21 / 2 = 908.25 g*mm target; the disc carries 7.85e-3 * 12 * pi * 49 * 21
    assert need[1] == pytest.approx(-(908.25 - STEEL * 1e-3 * 12.0 * math.pi * 49.0 * 21.0), abs=1e-6)
    plan = geomgen.plan(geomgen.load_job(job))
    web = plan.webs[0]
    assert web.method == "pockets" and len(web.features) == 1
    table = feature_to_table(web.features[0])
    assert table["angle_start"] == pytest.approx(-table["angle_end"], abs=1e-9)    # centred on +Y
    got = _kidney_effect(table)
    tol = pc.contract_tolerance(job)
    # shapely's polygon is inscribed: its moment lies below the true one by under 1e-5 (measured on the
    # corner-free sector above), so it is held to the tolerance plus that
    assert math.hypot(*(got - need)) <= tol + 1e-5 * abs(need[1]), (got, need, tol)
    pc.assert_walls([table], outline=pc.disc_outline(80.0), pin_center=(0.0, 21.0), pin_bore=14.0,
                    thickness=12.0, min_wall=2.0, pin_wall=4.0, max_depth=6.0, bores=[(0.0, 0.0, 12.0)])
    # the least mass for the need is in the outermost band: within 0.5 mm of both walls
    assert R1_WALL <= table["r_inner"] <= R1_WALL + 0.5 and R2_WALL - 0.5 <= table["r_outer"] <= R2_WALL


# ------------------------------------------------------------------ 2. holes from a short drill list
# A 140 mm web 10 mm thick (stroke 60, 24 mm pin bore) with only 3, 4 and 5 mm drills, through holes,
# 2 mm walls and 4 mm round the pin bore.  Holes go on the pin side, about +Y.
HOLE_WEB = dict(stroke=60.0, diameter=140.0, thickness=10.0, pin_bore=24.0)
HOLE_CORRECTION = {"kind": "holes", "drills": [3.0, 4.0, 5.0], "max_depth": 15.0, "min_wall": 2.0,
                   "pin_wall": 4.0, "through": True}
HOLE_ENGINE = dict(balance_factor=0.6, reciprocating={"piston": 110.0, "rod_small_end": 40.0},
                   rotating={"rod_big_end": 70.0})


def _hand_rows():
    """22 through holes of 5 mm by hand: 14 on r = 65.5 (the rim's wall: 70 - 2 - 2.5) and 8 on r = 58.5
    (one drill plus one wall further in), each row in mirror pairs about +Y at the angular pitch that keeps
    2 mm between neighbours, 2 asin((5 + 2) / 2r)."""
    holes = []
    for radius, count in ((65.5, 14), (58.5, 8)):
        pitch = 2.0 * math.degrees(math.asin(7.0 / (2.0 * radius)))
        for k in range(count // 2):
            for sign in (1.0, -1.0):
                x, y = pc.polar(radius, sign * pitch * (k + 0.5))
                holes.append({"kind": "hole", "x": x, "y": y, "diameter": 5.0, "depth": 10.0, "through": True})
    return holes


def _assert_hole_walls(rows, *, rim=70.0, pin=(0.0, 30.0), pin_bore=24.0, min_wall=2.0, pin_wall=4.0,
                       thickness=10.0, shaft=24.0):
    """Every wall of [correction] on round holes, by the distances between circles (exact): to the rim,
    to the pin bore, to the integral mainshaft (shaft_diameter defaults to the pin bore), between holes,
    and the floor under a blind hole's drill point."""
    for i, h in enumerate(rows):
        c, r = np.array([h["x"], h["y"]]), 0.5 * h["diameter"]
        assert rim - np.linalg.norm(c) - r >= min_wall - 1e-6, h
        assert np.linalg.norm(c - pin) - r - 0.5 * pin_bore >= pin_wall - 1e-6, h
        assert np.linalg.norm(c) - r - 0.5 * shaft >= min_wall - 1e-6, h
        if not h.get("through"):
            point = r / math.tan(math.radians(0.5 * h["point_angle"]))
            assert thickness - h["depth"] - point >= min_wall - 1e-6, h
        for g in rows[i + 1:]:
            gap = math.dist((h["x"], h["y"]), (g["x"], g["y"])) - r - 0.5 * g["diameter"]
            assert gap >= min_wall - 1e-6, (h, g)


def _holes_effect(rows, thickness=10.0):
    """g*mm: each hole takes rho pi d^2/4 t at its centre (through holes: a cylinder)."""
    return -sum(STEEL * 1e-3 * math.pi * 0.25 * h["diameter"] ** 2 * thickness * np.array([h["x"], h["y"]])
                for h in rows)


def test_two_rows_of_holes_are_found_where_one_row_was_refused():
    """Once refused with "holes give at most 1390 g*mm" (one row of at most 16 holes).  A hand layout of
    22 holes in two rows keeps every wall and reaches the 1905 g*mm need; the planner finds a layout of no
    more holes (its search covers these two rows) that meets the target."""
    job = _job(**HOLE_WEB, correction=HOLE_CORRECTION, crank_parts={"crankpin": 38.0}, **HOLE_ENGINE)
    need = _need(job)
    # (70 + 38 + 0.6 * 150) * 30 / 2 = 2970 g*mm, less the disc's 7.85e-3 * 10 * pi * 144 * 30 = 1065.4
    assert need[1] == pytest.approx(-(2970.0 - STEEL * 1e-3 * 10.0 * math.pi * 144.0 * 30.0), abs=1e-6)
    hand = _hand_rows()
    _assert_hole_walls(hand)
    by_hand = _holes_effect(hand)
    assert abs(by_hand[0]) < 1e-9 and -by_hand[1] >= -need[1]       # the hand layout reaches it
    plan = geomgen.plan(geomgen.load_job(job))
    web = plan.webs[0]
    assert web.method == "holes"
    rows = [feature_to_table(f) for f in web.features]
    assert len(rows) <= len(hand)
    assert {r["diameter"] for r in rows} <= {3.0, 4.0, 5.0}
    _assert_hole_walls(rows)
    got = sum((_one_hole(r) for r in rows), np.zeros(2))
    assert math.hypot(*(got - need)) <= pc.contract_tolerance(job), (got, need)


def _one_hole(r, thickness=10.0, density=STEEL):
    """A hole's unbalance change: a cylinder through the web, or blind to its full-diameter depth plus its
    drill point's cone pi r^2 h / 3 (Machinery's Handbook, volume of a cone), at its centre."""
    radius = 0.5 * r["diameter"]
    if r.get("through"):
        volume = math.pi * radius ** 2 * thickness
    else:
        point = radius / math.tan(math.radians(0.5 * r["point_angle"]))
        volume = math.pi * radius ** 2 * (r["depth"] + point / 3.0)
    return -density * 1e-3 * volume * np.array([r["x"], r["y"]])


def test_hole_reach_names_at_least_the_hand_layout_and_at_most_the_half_disc():
    """Asked for far more, the refusal names what the search found: at least the 22 hand-placed holes
    (a layout it covers), at most all the metal within the rim's wall on the pin side, a half disc of
    radius 68 mm whose first moment is (2/3) r^3 t rho (centroid of a semicircle, 4r/(3 pi))."""
    job = _job(**HOLE_WEB, correction=HOLE_CORRECTION, crank_parts={"crankpin": 1500.0}, **HOLE_ENGINE)
    half_disc = (2.0 / 3.0) * 68.0 ** 3 * 10.0 * STEEL * 1e-3
    assert np.linalg.norm(_need(job)) > half_disc
    with pytest.raises(Infeasible) as err:
        geomgen.plan(geomgen.load_job(job))
    reach = _reach_in(str(err.value), "holes")
    assert -_holes_effect(_hand_rows())[1] - 0.5 <= reach <= half_disc, (reach, half_disc)


# ------------------------------------------------------------------ 3. lightening a pocketed web
def _pockets_lighten_job(lighten, keep_out=()):
    """The README's job-file example (tests/conftest.py's minimal job: 130 mm web, 18 mm thick, 28 mm pin
    bore, stroke 64, target -8344 g*mm a web) with pockets and lighten."""
    from conftest import minimal_job_dict

    return minimal_job_dict({"correction.kind": "pockets", "correction.lighten": lighten,
                             "correction.max_depth": 15.0, "correction.keep_out": list(keep_out)})


def _mirror_pairs(tables):
    """The pockets that come as a pair mirrored about the Y axis, each symmetric about the X axis
    (centred on 90 or 270 deg), and the rest."""
    side = [t for t in tables if t["kind"] == "pocket" and
            abs(0.5 * (t["angle_start"] + t["angle_end"]) % 180.0 - 90.0) < 1e-9]
    return side, [t for t in tables if t not in side]


def test_pocket_job_is_lightened_with_pockets():
    """kind = "pockets" with lighten = 40 once drilled sets of four holes for the lightening.  Now: a pair
    of kidney pockets, one centred on -X and its mirror on +X (first moment zero by symmetry, measured
    here on the shapely polygons), 40 g off within half a depth step, no holes, and the whole layout still
    meets the target within its walls."""
    job = _pockets_lighten_job(40.0)
    plan = geomgen.plan(geomgen.load_job(job))
    web = plan.webs[0]
    tables = [feature_to_table(f) for f in web.features]
    assert {t["kind"] for t in tables} == {"pocket"}, tables
    pair, rest = _mirror_pairs(tables)
    assert len(pair) == 2 and len(rest) == 1, tables
    a, b = pair
    assert (a["r_inner"], a["r_outer"], a["depth"]) == (b["r_inner"], b["r_outer"], b["depth"])
    polys = [pc.kidney_polygon(t) for t in pair]
    mass = sum(STEEL * 1e-3 * t["depth"] * p.area for t, p in zip(pair, polys))
    per_mm = sum(STEEL * 1e-3 * p.area for p in polys)
    assert mass == pytest.approx(40.0, abs=0.5 * 0.05 * per_mm + 1e-3)     # depth_step 0.05 mm
    moment = sum((_kidney_effect(t) for t in pair), np.zeros(2))
    assert np.linalg.norm(moment) < 1e-6 * mass * 65.0
    total = sum((_kidney_effect(t) for t in tables), np.zeros(2))
    before = pc.disc_web_unbalance(diameter=130.0, thickness=18.0, density=STEEL, stroke=64.0, pin_bore=28.0)
    tol = pc.contract_tolerance(job)
    assert math.hypot(*(before + total - pc.contract_target(job))) <= tol + 1e-5 * 8344.0
    pc.assert_walls(tables, outline=pc.disc_outline(130.0), pin_center=(0.0, 32.0), pin_bore=28.0,
                    thickness=18.0, min_wall=3.0, pin_wall=6.0, max_depth=15.0)
    assert "kidney pockets" in web.why and "drilled" not in web.why


def test_pocket_job_says_why_when_the_lightening_is_drilled():
    """A keep-out strip along the X axis leaves no kidney centred on it: the lightening is drilled in
    sets of four holes off the axis, and the plan says so and why (README, lighten)."""
    strip = {"points": [[-70.0, -1.0], [70.0, -1.0], [70.0, 1.0], [-70.0, 1.0]]}
    job = _pockets_lighten_job(20.0, keep_out=[strip])
    web = geomgen.plan(geomgen.load_job(job)).webs[0]
    tables = [feature_to_table(f) for f in web.features]
    holes = [t for t in tables if t["kind"] == "hole"]
    assert len(holes) >= 4 and len(holes) % 4 == 0, tables
    assert "drilled, not pocketed: a pair of kidney pockets takes at most 0.00 g" in web.why, web.why
    assert web.method == "pockets"                  # the correction itself is still the pocket asked for
    strip_poly = shapely.Polygon(strip["points"])
    assert all(strip_poly.distance(pc.footprint(t)) > 0 for t in tables)
