"""The console entry's child process (geomgen.kernel_child: the kernel loaded while the plan is worked out)
is a speed-up only: the files are those of a one-process run, the parent never loads the kernel when the
child builds the solids, a refused job leaves no process behind, and a job the child cannot take (a 3D
model web, whose kernel shapes do not pickle) is done in the parent as before.

Each run here is a fresh `python -m geomgen` (the only way in that forks); the samples are invented demo
data."""

from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

import plancheck as pc
from conftest import minimal_job_dict, toml_dumps

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "samples"

# `python -m geomgen ARGS`, reporting on stderr, as it leaves, whether this process loaded the kernel
_ENTRY = (
    "import os, sys\n"
    "real_exit = os._exit\n"
    "def leave(code):\n"
    "    sys.stderr.write('parent loaded the kernel: %s\\n' % ('OCP' in sys.modules))\n"
    "    sys.stderr.flush()\n"
    "    real_exit(code)\n"
    "os._exit = leave\n"
    "sys.argv = ['geomgen'] + sys.argv[1:]\n"
    "from geomgen.cli import run\n"
    "run()\n"
)


def _console(*args, cwd=ROOT):
    return subprocess.run([sys.executable, "-c", _ENTRY, *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, timeout=600)


def _without_step_dates(data: bytes) -> bytes:
    # a STEP header carries the time it was written (ISO 10303-21 FILE_NAME), and web-<name>.json the
    # STEP's sha256: the only bytes two runs a few seconds apart may differ in
    data = re.sub(rb"FILE_NAME\('([^']*)','[^']*'", rb"FILE_NAME('\1',''", data)
    return re.sub(rb'"web-[^"]+\.step": "[0-9a-f]{64}"', b'"step": ""', data)


@pytest.mark.cad
def test_the_child_builds_the_solids_and_the_files_are_a_one_process_runs(tmp_path):
    job = SAMPLES / "plugs-stroker.toml"     # plugs: bodies and plug solids, a mesh check per piece
    forked = _console("plan", job, "--out", tmp_path / "forked")
    assert forked.returncode == 0, forked.stderr
    assert "parent loaded the kernel: False" in forked.stderr     # the solids were the child's work
    assert pc.cli_output(["plan", job, "--out", tmp_path / "alone"]).returncode == 0
    names = sorted(p.name for p in (tmp_path / "forked").iterdir())
    assert names == sorted(p.name for p in (tmp_path / "alone").iterdir())
    assert {"web-a.step", "web-a.stl", "crank.step", "report.html", "plan.json"} <= set(names)
    for name in names:
        a, b = (tmp_path / "forked" / name).read_bytes(), (tmp_path / "alone" / name).read_bytes()
        assert _without_step_dates(a) == _without_step_dates(b), name


def _processes_naming(marker: str) -> list[int]:
    """Live processes whose command line holds `marker` (Linux /proc)."""
    found = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                cmd = (entry / "cmdline").read_bytes().replace(b"\0", b" ").decode(errors="replace")
            except OSError:
                continue
            if marker in cmd and int(entry.name) != os.getpid():
                found.append(int(entry.name))
    return found


@pytest.mark.cad
@pytest.mark.skipif(not Path("/proc/self/cmdline").exists(), reason="needs Linux /proc to list processes")
def test_a_refused_job_leaves_no_child_behind(tmp_path):
    # a 3 kg rod big end (invented): the target is beyond any web, exit 3 before any solid is built
    job = tmp_path / "out-of-reach.toml"
    job.write_text(toml_dumps(minimal_job_dict({"engine.rotating": {"rod_big_end": 3000.0}})))
    done = _console("plan", job, "--out", tmp_path / "out")
    assert done.returncode == 3, done.stderr
    assert "parent loaded the kernel: False" in done.stderr
    assert not (tmp_path / "out").exists()
    assert _processes_naming(str(job)) == []          # the child (same command line) was killed and reaped


@pytest.mark.cad
def test_a_model_web_is_planned_and_built_in_the_parent(tmp_path):
    # the model web's planning needs the kernel here, so the child is let go at once
    done = _console("plan", SAMPLES / "model-web.toml", "--out", tmp_path / "out")
    assert done.returncode == 0, done.stderr
    assert "parent loaded the kernel: True" in done.stderr
    assert (tmp_path / "out" / "web-a.step").stat().st_size > 0


@pytest.mark.cad
def test_when_the_child_fails_the_parent_does_the_work_itself(tmp_path):
    # the child's solid_files is made to fail (as a wall the solid check refuses would); the parent then
    # builds the solids itself (so it loads the kernel) and the plan is whole
    entry = _ENTRY.replace(
        "from geomgen.cli import run\n",
        "import geomgen.pipeline as pl\n"
        "parent = os.getpid()\n"
        "real = pl.solid_files\n"
        "def failing(*a, **k):\n"
        "    if os.getpid() != parent:\n"
        "        raise RuntimeError('the child fails here, for the test')\n"
        "    return real(*a, **k)\n"
        "pl.solid_files = failing\n"
        "from geomgen.cli import run\n")
    done = subprocess.run([sys.executable, "-c", entry, "plan", SAMPLES / "heavier-piston.toml", "--out",
                           tmp_path / "out"], capture_output=True, text=True, cwd=ROOT, timeout=600)
    assert done.returncode == 0, done.stderr
    assert "parent loaded the kernel: True" in done.stderr
    assert len(list((tmp_path / "out").iterdir())) == 15          # the README's sample: 15 files
