"""No staging folder outlives a run (README "Output files": written whole or not at all).

SIGTERM during a real `python -m geomgen plan` removes the hidden `.NAME.writing-*` folder as
Ctrl-C does; a folder left by a process killed outright (its pid is in the folder's name) is
removed by the next run into the same --out, which says so on stderr.  Folders of a live process,
of another target, or that are not geomgen's are left alone.

Sources: POSIX kill(2) (signal 0 probes a pid; a reaped child's pid answers ESRCH) and the shell
convention that a process ended by signal N exits with 128 + N (SIGTERM = 15, POSIX signal.h).
The job is the invented demo job of tests/conftest.py.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from geomgen.output import remove_stale_stages, staged, write_files

from conftest import write_job

ROOT = Path(__file__).resolve().parents[1]


def _env():
    return {"PYTHONPATH": str(ROOT), "PATH": os.environ.get("PATH", "/usr/bin:/bin")}


def dead_pid() -> int:
    """The pid of a process that has ended and been reaped (kill(pid, 0) then fails with ESRCH)."""
    child = subprocess.Popen([sys.executable, "-c", "pass"])
    child.wait()
    with pytest.raises(ProcessLookupError):
        os.kill(child.pid, 0)
    return child.pid


def stages(folder: Path, name: str) -> list[Path]:
    return sorted(p for p in folder.iterdir() if p.name.startswith(f".{name}.writing-"))


def _plan_until_staged(tmp_path, job, out, **popen):
    """A real `geomgen plan` in a subprocess, returned once its staging folder is there: (process, folders)."""
    proc = subprocess.Popen([sys.executable, "-m", "geomgen", "plan", str(job), "--out", str(out)],
                            env=_env(), cwd=ROOT, **popen)
    seen = []
    while proc.poll() is None and not seen:
        seen = stages(tmp_path, out.name)
        time.sleep(0.005)
    if not seen:
        proc.wait()
    assert seen, "the run ended before its staging folder was seen"
    return proc, seen


@pytest.mark.cad  # the subprocess builds solids
def test_sigterm_during_plan_leaves_nothing(tmp_path):
    job = write_job(tmp_path)
    out = tmp_path / "out"
    proc, seen = _plan_until_staged(tmp_path, job, out, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        proc.send_signal(signal.SIGTERM)
        _, err = proc.communicate(timeout=300)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert proc.returncode == 128 + signal.SIGTERM, err
    assert err.splitlines()[-1] == "geomgen: terminated (SIGTERM); nothing was written"
    assert "Traceback" not in err
    assert stages(tmp_path, "out") == [] and not out.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["job.toml"]


def test_next_run_removes_a_folder_left_by_a_killed_run(tmp_path):
    job = write_job(tmp_path)
    out = tmp_path / "out"
    stale = tmp_path / f".out.writing-{dead_pid()}-k1ll3d_x"
    stale.mkdir()
    (stale / "web_a.step").write_bytes(b"ISO-10303-21;\nHEADER;\n")  # a STEP cut off half way
    done = subprocess.run([sys.executable, "-m", "geomgen", "study", str(job), "--out", str(out)],
                          capture_output=True, text=True, env=_env(), cwd=ROOT, timeout=300)
    assert done.returncode == 0, done.stderr
    assert done.stderr.splitlines() == [
        f"geomgen: removed a staging folder left by an earlier run that was killed: {stale}"]
    assert not stale.exists()
    assert sorted(p.name for p in out.iterdir()) == ["study.json", "study.svg"]
    assert stages(tmp_path, "out") == []


def test_only_geomgens_own_dead_stages_of_this_target_go(tmp_path, capsys):
    gone = dead_pid()
    keep = [tmp_path / f".out.writing-{os.getppid()}-alive123",   # a live process (our parent)
            tmp_path / f".other.writing-{gone}-abc",               # another target
            tmp_path / f".out.writing-{gone}",                     # not geomgen's pattern
            tmp_path / ".out.writing-abc12345",                    # no pid recorded: cannot tell, kept
            tmp_path / f".out.old-{gone}-abc"]                     # may hold the previous results
    for p in keep:
        p.mkdir()
    drop = tmp_path / f".out.writing-{gone}-abc_9"
    drop.mkdir()
    assert remove_stale_stages(tmp_path / "out") == [drop]
    assert all(p.is_dir() for p in keep) and not drop.exists()
    assert capsys.readouterr().err.count("removed a staging folder") == 1


def test_sigterm_inside_staged_removes_the_folder_and_restores_the_handler(tmp_path):
    before = signal.getsignal(signal.SIGTERM)
    out = tmp_path / "out"
    from geomgen.output import Terminated

    with pytest.raises(Terminated), staged(out, force=False) as stage:
        write_files(stage, {"web_a.step": b"partial"})
        assert stage.name.startswith(f".out.writing-{os.getpid()}-")
        os.kill(os.getpid(), signal.SIGTERM)
        time.sleep(1)  # the handler runs at the next bytecode; never reached in practice
    assert list(tmp_path.iterdir()) == []
    assert signal.getsignal(signal.SIGTERM) is before


@pytest.mark.cad  # the subprocess builds solids
def test_sigkill_during_plan_is_cleaned_by_the_next_run(tmp_path):
    job = write_job(tmp_path)
    out = tmp_path / "out"
    proc, seen = _plan_until_staged(tmp_path, job, out, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        proc.send_signal(signal.SIGKILL)
        time.sleep(0.5)
        assert stages(tmp_path, "out") == seen  # SIGKILL cannot be caught: the folder stays
        # not reaped yet (a zombie, kill(pid, 0) still succeeds): it must count as gone all the same
        done = subprocess.run([sys.executable, "-m", "geomgen", "study", str(job), "--out", str(out)],
                              capture_output=True, text=True, env=_env(), cwd=ROOT, timeout=300)
    finally:
        if proc.poll() is None:
            proc.kill()
        proc.wait()
    assert done.returncode == 0, done.stderr
    assert done.stderr.splitlines() == [
        f"geomgen: removed a staging folder left by an earlier run that was killed: {seen[0]}"]
    assert stages(tmp_path, "out") == []
