"""The planner's rows of centres on rings about the crank axis, checked by plain geometry.

A full-circle web of 140 mm with a 28 mm crankpin bore 31 mm from the axis (invented demo numbers):
the planner's grid keeps every centre it offers clear of the rim by min_wall and of the pin bore by
pin_wall (the README's [correction] keys), neighbours on a ring a drill plus min_wall apart, and each
row greedy from the line outwards: each centre the first free grid angle a pitch on from the last.
Here the distances are Euclid's on the centres (README frame: angles from +Y, counter-clockwise)."""

from __future__ import annotations

import bisect
import math

import pytest

from geomgen.planner import ANGLE_STEP, Clearance, Limits, _Sampler
from geomgen.section import parametric_web

RIM, PIN_BORE, PIN_Y = 70.0, 28.0, 31.0
LIMITS = Limits(min_wall=3.0, pin_wall=5.0, max_depth=15.0, through=True, drills=(8.0, 13.0),
                point_angle=118.0, depth_step=0.1)


def _centre(radius, angle_deg):
    a = math.radians(angle_deg)
    return -radius * math.sin(a), radius * math.cos(a)


@pytest.fixture(scope="module")
def sampler():
    web = parametric_web(diameter=2 * RIM, thickness=19.0, density_g_cm3=7.85, stroke=2 * PIN_Y,
                         pin_bore=PIN_BORE)
    return _Sampler(Clearance(section=web, existing=(), limits=LIMITS), 180.0)   # the line: towards -Y


@pytest.mark.parametrize("diameter", LIMITS.drills)
@pytest.mark.parametrize("odd", [True, False])
@pytest.mark.parametrize("max_angle", [90.0, 180.0])
def test_rows_keep_the_walls_and_are_greedy(sampler, diameter, odd, max_angle):
    rows = sampler.rows(diameter, LIMITS.min_wall, odd, max_angle=max_angle)
    assert rows
    pitch = diameter + LIMITS.min_wall
    for row in rows:
        rel = [a for g in row.groups for a in g if a >= 0.0]
        assert (rel[0] == 0.0) == odd and rel == sorted(rel)
        points = [_centre(row.radius, 180.0 + a) for g in row.groups for a in g]
        for x, y in points:
            assert math.hypot(x, y) + 0.5 * diameter <= RIM - LIMITS.min_wall + 1e-6
            assert math.hypot(x, y - PIN_Y) - 0.5 * diameter >= 0.5 * PIN_BORE + LIMITS.pin_wall - 1e-6
        ordered = sorted(points, key=lambda p: math.atan2(p[0], -p[1]))
        for p, q in zip(ordered, ordered[1:]):
            assert math.dist(p, q) >= pitch - 1e-6
        spacing = math.degrees(2 * math.asin(pitch / (2 * row.radius)))
        assert max(rel) <= max_angle - 0.5 * spacing + 1e-9
        # greedy: between two centres (and before the first) no grid angle a pitch on was free
        grid = [k * ANGLE_STEP for k in range(int(round(180 / ANGLE_STEP)) + 1)]
        last = 0.0 if odd else -0.5 * spacing
        for a in rel[1:] if odd else rel:
            k = bisect.bisect_left(grid, last + spacing - 1e-9)
            for b in grid[k:]:
                if b >= a - 1e-12:
                    break
                fits = all(math.hypot(*_centre(row.radius, 180.0 + s * b)) + 0.5 * diameter
                           <= RIM - LIMITS.min_wall + 1e-6
                           and math.hypot(_centre(row.radius, 180.0 + s * b)[0],
                                          _centre(row.radius, 180.0 + s * b)[1] - PIN_Y)
                           - 0.5 * diameter >= 0.5 * PIN_BORE + LIMITS.pin_wall + 1e-6
                           for s in (1, -1))
                assert not fits, (row.radius, a, b)
            last = a
