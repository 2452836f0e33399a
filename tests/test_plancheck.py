"""The walls of tests/plancheck.py are shapely's own distances, measured on less of each outline
(`plancheck.distance`): the figures of `a.distance(b)` (GEOS, the independent reference) to rounding (a
clipped piece starts at a point GEOS interpolates on the segment), and with a cap, the same below it and
at least the cap above it."""

from __future__ import annotations

import math
import random

import pytest
import shapely

import plancheck as pc


def _shapes(rng):
    """Invented circles (as plancheck builds footprints, coarser so shapely's full distance is quick) and
    kidneys, on and around a 130 mm web."""
    out = [shapely.Point(0.0, 0.0).buffer(65.0, quad_segs=64).exterior]
    for _ in range(24):
        out.append(shapely.Point(rng.uniform(-60, 60), rng.uniform(-60, 60)).buffer(rng.uniform(1.5, 14.0),
                                                                                     quad_segs=64))
    for _ in range(4):
        a0, r1 = rng.uniform(-180.0, 150.0), rng.uniform(20.0, 45.0)
        out.append(pc.kidney_polygon({"r_inner": r1, "r_outer": r1 + rng.uniform(5.0, 12.0), "angle_start": a0,
                                      "angle_end": a0 + rng.uniform(20.0, 120.0), "corner_radius": 2.0}))
    return out


def test_distance_is_shapelys_and_a_cap_only_cuts_what_lies_beyond_it():
    shapes = _shapes(random.Random(7))
    cases = 0
    for i, a in enumerate(shapes):
        for b in shapes[i + 1:]:
            full = a.distance(b)
            assert pc.distance(a, b) == pytest.approx(full, rel=1e-12, abs=1e-12)
            for cap in (0.5 * full, full, 2.0 * full + 1.0):
                got = pc.distance(a, b, cap)
                if full < cap:
                    assert got == pytest.approx(full, rel=1e-12, abs=1e-12), (full, cap, got)
                else:
                    assert got >= cap * (1 - 1e-12), (full, cap, got)
            cases += 1
    assert cases == 29 * 28 // 2
    # the figure the old pairwise loop gave: the least distance over the pairs, shapely's own
    feats = [{"kind": "hole", "x": 20.0, "y": -30.0, "diameter": 10.0},
             {"kind": "hole", "x": -20.0, "y": -30.0, "diameter": 10.0},
             {"kind": "hole", "x": 0.0, "y": -52.0, "diameter": 12.0}]
    w = pc.walls(feats, outline=pc.disc_outline(130.0), pin_center=(0.0, 32.0), pin_bore=28.0)
    polys = [pc.footprint(f) for f in feats]
    between = min(polys[i].distance(polys[j]) for i in range(3) for j in range(i + 1, 3))
    assert w["between"] == pytest.approx(between, rel=1e-12)
    assert w["rim"] == pytest.approx(min(pc.disc_outline(130.0).exterior.distance(p) for p in polys), rel=1e-12)
    # closed form of the first pair: centres 40 mm apart, radii 5 + 5 (to the flattening's sagitta)
    assert math.isclose(polys[0].distance(polys[1]), 30.0, abs_tol=1e-3)
