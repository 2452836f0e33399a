"""One real `geomgen plan` run shared by the shop-output tests (about 10 s, done once).

It builds solids, so every test that uses it is marked cad.  Its folder comes from
pytest's tmp_path_factory (conftest hands it over at the start of the session), so
nothing is left in /tmp or in the repository.

The job is an invented demo: the minimal job's engine and webs (tests/conftest.py), each web
already carrying a blind hole drilled from the inner face off the centre line on the pin side
(so the sheet's mirrored x can be seen) and a kidney pocket on the outer face;
the planner adds heavy-metal plugs (kind = "auto", blind holes only, plugs down to half a diameter long).
"""

from __future__ import annotations

import functools
import json
from pathlib import Path

JOB = """\
name = "shop test (invented demo)"
[engine]
stroke = 64.0
rod_length = 110.0
max_rpm = 11000
balance_factor = 0.55
[engine.reciprocating]
piston = 250.0
rod_small_end = 80.0
[engine.rotating]
rod_big_end = 200.0
[engine.crank_parts]
crankpin = 140.0
[web]
diameter = 130.0
thickness = 18.0
material = "steel"
pin_bore = 28.0
pin_interference = 0.06
[[web.features]]
kind = "hole"
x = 40.0
y = 10.0
diameter = 10.0
depth = 6.0
face = "inner"
[[web.features]]
kind = "pocket"
r_inner = 50.0
r_outer = 60.0
angle_start = 165.0
angle_end = 195.0
depth = 5.0
corner_radius = 3.0
[correction]
kind = "auto"
through = false
max_depth = 12.0
plug_min_length_ratio = 0.5   # this shop presses plugs half a diameter long (the default asks 0.75)
"""


#: pytest's TempPathFactory for this session; set by the `_shop_run_folder` fixture in conftest
TMP_FACTORY = None


@functools.lru_cache(maxsize=1)
def plan_run() -> dict:
    """{"out": Path, "job": Job, "webs": [WebWork], "doc": plan.json dict, "study": study result}."""
    if TMP_FACTORY is None:
        raise RuntimeError("plan_run() needs pytest's tmp_path_factory: run it under pytest (tests/conftest.py)")
    import geomgen

    folder = Path(TMP_FACTORY.mktemp("shop"))
    job_path = folder / "job.toml"
    job_path.write_text(JOB)
    out = folder / "out"
    plan = geomgen.plan(geomgen.load_job(job_path))
    plan.verify().write(out)
    return {"out": out, "job": plan.job, "webs": [w.work for w in plan.webs],
            "doc": json.loads((out / "plan.json").read_text()), "study": dict(plan.study)}
