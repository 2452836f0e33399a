"""Shared test helpers: a small valid job, and a way to change one key of it.

Use them from any test file (pytest puts tests/ on sys.path):

    from conftest import DROP, minimal_job_dict, minimal_job_text, write_job

    path = write_job(tmp_path)                                  # the valid job as-is
    path = write_job(tmp_path, engine__stroke="3 kg")           # change one key ('__' = one level down)
    path = write_job(tmp_path, {"engine.max_rmp": 11000})       # dotted paths, for keys that are not
                                                                #   Python names ('W-alloy', 'max_rmp' typo)
    path = write_job(tmp_path, web__diameter=DROP)              # remove a key
    path = write_job(tmp_path, web__features=[{"kind": "hole", "x": 0.0, "y": -40.0,
                                               "diameter": 10.0, "depth": 8.0}])

or the fixtures `job_path` (a valid job file in tmp_path) and `make_job` (the same
`write_job` already bound to tmp_path).

The minimal job holds the numbers of the README's job-file example (invented demo
numbers, without its 20 g big_end_bearing): stroke 64 mm,
rod 110 mm, 11000 rpm, balance factor 0.55, reciprocating 250 + 80 = 330 g,
the rod's rotating end 200 g, the crankpin 140 g (a crank part), two alike 130 mm steel webs 18 mm thick with a 28 mm
pin bore.  Worked by hand from the README's definitions:
    bob weight = 200 + 0.55 * 330 = 381.5 g (the crankpin is on the crank, not on the bob)
    target per web = -(200 + 140 + 0.55 * 330) * 64/2 * 0.5 = -521.5 * 32 / 2 = -8344 g*mm (on y)
    default tolerance (whole crank) = 0.5/100 * 330 * 32 = 52.8 g*mm

Tests that build solids or import cadquery/OCP carry `@pytest.mark.cad` (a module
that needs the kernel throughout sets `pytestmark = pytest.mark.cad`), so that
`pytest -m "not cad"` stays quick and kernel-free.  The hooks at the end of this
file fail a test that loads the kernel without the mark, and fail the collection
of a test module whose import loads it.  A subprocess that builds solids (the
`geomgen plan` command) cannot be seen from here: mark such tests by hand.

`toml_dumps` writes the subset of TOML a job uses (tables, numbers including
nan/inf, strings, booleans, lists, inline tables); no TOML writer is among the
project's dependencies.  tests/test_job.py checks that it round-trips through
tomllib.
"""

from __future__ import annotations

import copy
import json
import math
import sys
from pathlib import Path

import pytest

#: value for an override that removes the key
DROP = object()

_MINIMAL = {
    "name": "demo",
    "engine": {
        "stroke": 64.0,
        "rod_length": 110.0,
        "max_rpm": 11000,
        "balance_factor": 0.55,
        "reciprocating": {"piston": 250.0, "rod_small_end": 80.0},
        "rotating": {"rod_big_end": 200.0},
        "crank_parts": {"crankpin": 140.0},
    },
    "web": {
        "diameter": 130.0,
        "thickness": 18.0,
        "material": "steel",
        "pin_bore": 28.0,
        "main_bore": 0.0,
        "features": [],
    },
    "correction": {
        "kind": "holes",
        "drills": "metric",
        "max_depth": 18.0,              # the drill reaches through the 18 mm web
        "min_wall": 3.0,
        "pin_wall": 6.0,
        "through": True,
    },
}


def minimal_job_dict(changes: dict | None = None, **overrides) -> dict:
    """A fresh copy of the minimal job as parsed TOML, with keys changed.

    changes : {"engine.stroke": value, ...}, dotted key paths
    overrides : engine__stroke=value, '__' separating the levels
    A value of DROP removes the key.  Missing tables on the way are created.
    """
    data = copy.deepcopy(_MINIMAL)
    items = list((changes or {}).items()) + [(k.replace("__", "."), v) for k, v in overrides.items()]
    for dotted, value in items:
        *parents, last = dotted.split(".")
        table = data
        for key in parents:
            table = table.setdefault(key, {})
        if value is DROP:
            table.pop(last, None)
        else:
            table[last] = copy.deepcopy(value)
    return data


def _value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)  # a JSON string is a valid TOML basic string
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_key(k)} = {_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(f"cannot write {type(v).__name__} as TOML")


def _key(k: str) -> str:
    bare = k and all(c.isalnum() or c in "-_" for c in k)
    return k if bare else json.dumps(k)


def toml_dumps(data: dict) -> str:
    """TOML text for a job dict: scalars and lists first, then one [section] per sub-table."""
    lines: list[str] = []

    def emit(table: dict, prefix: str) -> None:
        subs = [(k, v) for k, v in table.items() if isinstance(v, dict)]
        for k, v in table.items():
            if not isinstance(v, dict):
                lines.append(f"{_key(k)} = {_value(v)}")
        for k, v in subs:
            name = f"{prefix}.{_key(k)}" if prefix else _key(k)
            lines.append("")
            lines.append(f"[{name}]")
            emit(v, name)

    emit(data, "")
    return "\n".join(lines) + "\n"


def minimal_job_text(changes: dict | None = None, **overrides) -> str:
    """The minimal job (with any changes, as for minimal_job_dict) as TOML text."""
    return toml_dumps(minimal_job_dict(changes, **overrides))


def write_job(tmp_path, changes: dict | None = None, *, filename: str = "job.toml", **overrides) -> Path:
    """Write the minimal job with the given changes to tmp_path/filename; returns the path."""
    path = Path(tmp_path) / filename
    path.write_text(minimal_job_text(changes, **overrides), encoding="utf-8")
    return path


@pytest.fixture(scope="session", autouse=True)
def _shop_run_folder(tmp_path_factory):
    """The shared `plan` run of tests/_shop_run.py writes under pytest's own temporary folders."""
    import _shop_run

    _shop_run.TMP_FACTORY = tmp_path_factory


@pytest.fixture
def job_path(tmp_path) -> Path:
    """A valid minimal job file in tmp_path."""
    return write_job(tmp_path)


@pytest.fixture
def make_job(tmp_path):
    """write_job bound to tmp_path: make_job(engine__stroke="2.52 in") -> Path."""
    def _make(changes: dict | None = None, **kwargs) -> Path:
        return write_job(tmp_path, changes, **kwargs)
    return _make


def as_cq(shape):
    """geomgen's solid (a plain OpenCascade shape) as a cadquery Shape: the tests ask cadquery, a library
    independent of geomgen's own kernel calls, for faces, boxes, booleans and validity."""
    import cadquery as cq

    return cq.Shape.cast(shape.wrapped if hasattr(shape, "wrapped") else shape)


# ------------------------------------------------------------------ the kernel guard
#: top-level packages of the CAD kernel; loading either costs seconds and is what `-m "not cad"` avoids
KERNEL = ("cadquery", "OCP")


def _kernel_loaded() -> list[str]:
    return [name for name in KERNEL if name in sys.modules]


@pytest.hookimpl(wrapper=True)
def pytest_make_collect_report(collector):
    """A test module that imports the kernel at its top makes every run pay for it: its collection fails."""
    before = _kernel_loaded()
    report = yield
    if isinstance(collector, pytest.Module) and not before and _kernel_loaded() and report.passed:
        report.outcome = "failed"
        report.longrepr = (f"importing {collector.nodeid} loaded {', '.join(_kernel_loaded())}: import "
                           "cadquery/OCP inside the tests marked cad, not at the top of a test module")
    return report


def _fail_if_loaded_unmarked(item, before: list[str]) -> None:
    if before or item.get_closest_marker("cad") is not None:
        return  # a cad test, or the kernel came in earlier (nothing more can be learnt after that)
    loaded = _kernel_loaded()
    if loaded:
        pytest.fail(f"{item.nodeid} loaded {', '.join(loaded)} but is not marked cad: add @pytest.mark.cad "
                    "(or pytestmark = pytest.mark.cad for the module)", pytrace=False)


# Setup and call are watched apart: a module- or session-scoped fixture (a shared `plan` run) is set up
# inside the first test's setup, before any function-scoped fixture could look.
@pytest.hookimpl(wrapper=True)
def pytest_runtest_setup(item):
    before = _kernel_loaded()
    result = yield
    _fail_if_loaded_unmarked(item, before)
    return result


@pytest.hookimpl(wrapper=True)
def pytest_runtest_call(item):
    before = _kernel_loaded()
    result = yield
    _fail_if_loaded_unmarked(item, before)
    return result
