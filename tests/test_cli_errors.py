"""The command line on bad input (README "Commands", exit codes): exit code 2, exactly one
line on stderr starting "geomgen: ", no traceback, nothing written to --out; an
existing non-empty --out is left alone without --force.

Run in-process through geomgen.cli.main and once as a real `python -m geomgen`.
"""

import subprocess
import sys

import pytest

from geomgen.cli import main

from conftest import write_job


def run(argv, capsys) -> tuple[int, str, str]:
    """main(argv) -> (exit code, stdout, stderr).  argparse's own errors leave main by
    SystemExit(2) (its convention), every other error by main's return value."""
    try:
        code = main(argv)
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


def assert_one_error_line(err: str) -> str:
    lines = err.splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("geomgen: "), err
    assert "Traceback" not in err
    return lines[0]


def _tree(folder):
    return sorted((str(p.relative_to(folder)), p.read_bytes() if p.is_file() else None)
                  for p in folder.rglob("*"))


BAD_JOBS = [
    ({"engine.max_rmp": 11000}, "max_rmp"),
    ({"engine.stroke": "3 kg"}, "engine.stroke"),
    ({"engine.balance_factor": 2.0}, "engine.balance_factor"),
    ({"web.pin_bore": 80.0}, "web.pin_bore"),
    ({"web.material": "unobtainium"}, "unobtainium"),
    ({"correction.kind": "grind"}, "correction.kind"),
]


@pytest.mark.parametrize("changes, named", BAD_JOBS)
def test_study_bad_job(tmp_path, capsys, changes, named):
    job = write_job(tmp_path, changes)
    out_dir = tmp_path / "out"
    code, out, err = run(["study", str(job), "--out", str(out_dir)], capsys)
    assert code == 2
    line = assert_one_error_line(err)
    assert named in line and "job.toml" in line
    assert not out_dir.exists()
    assert [p.name for p in tmp_path.iterdir()] == ["job.toml"]   # no staging folder left either


def test_study_bad_toml_and_missing_file(tmp_path, capsys):
    broken = tmp_path / "broken.toml"
    broken.write_text("[engine\n")
    code, _, err = run(["study", str(broken), "--out", str(tmp_path / "o")], capsys)
    assert code == 2 and "broken.toml" in assert_one_error_line(err)
    code, _, err = run(["study", str(tmp_path / "none.toml"), "--out", str(tmp_path / "o")], capsys)
    assert code == 2 and "none.toml" in assert_one_error_line(err)
    assert not (tmp_path / "o").exists()


@pytest.mark.parametrize("argv", [
    [],
    ["study"],
    ["study", "job.toml"],
    ["plan", "job.toml"],
    ["trim", "job.toml", "--out", "x"],
    ["inspect"],
    ["frobnicate", "job.toml"],
    ["study", "job.toml", "--out", "x", "--colour"],
])
def test_missing_or_wrong_arguments(tmp_path, capsys, monkeypatch, argv):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(argv, capsys)
    assert code == 2
    assert_one_error_line(err)
    assert out == ""
    assert list(tmp_path.iterdir()) == []


def test_non_empty_out_is_left_alone_without_force(tmp_path, capsys):
    job = write_job(tmp_path)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    (out_dir / "notes.txt").write_text("the customer's measurements")
    before = _tree(out_dir)
    code, out, err = run(["study", str(job), "--out", str(out_dir)], capsys)
    assert code == 2
    assert "--force" in assert_one_error_line(err)
    assert _tree(out_dir) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["job.toml", "out"]


def test_force_replaces_the_folder_whole(tmp_path, capsys):
    # the good path, to show the refusal above is about --force and not about the job
    job = write_job(tmp_path)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    (out_dir / "stale.txt").write_text("old")
    code, out, err = run(["study", str(job), "--out", str(out_dir), "--force"], capsys)
    assert code == 0, err
    assert err == ""
    assert sorted(p.name for p in out_dir.iterdir()) == ["study.json", "study.svg"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["job.toml", "out"]


@pytest.mark.parametrize("command", ["build", "plan"])
def test_solid_commands_bad_job(tmp_path, capsys, command):
    job = write_job(tmp_path, {"engine.stroke": "3 kg"})
    out_dir = tmp_path / "out"
    code, out, err = run([command, str(job), "--out", str(out_dir)], capsys)
    assert code == 2
    assert "engine.stroke" in assert_one_error_line(err)
    assert not out_dir.exists()


@pytest.mark.parametrize("command", ["study", "build", "plan", "trim"])
def test_a_busy_out_is_refused_before_the_job_is_read(tmp_path, capsys, command):
    # the job is bad too: the one line must be about --out, so the folder was checked before any work
    job = write_job(tmp_path, {"engine.stroke": "3 kg"})
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    (out_dir / "notes.txt").write_text("mine")
    extra = ["--from", str(tmp_path), "--unbalance", "10", "--angle", "0"] if command == "trim" else []
    code, out, err = run([command, str(job), *extra, "--out", str(out_dir)], capsys)
    assert code == 2 and out == ""
    line = assert_one_error_line(err)
    assert line.startswith(f"geomgen: --out {out_dir}") and "--force" in line and "engine.stroke" not in line
    assert [p.name for p in out_dir.iterdir()] == ["notes.txt"]


def test_trim_out_must_differ_from_from(tmp_path, capsys):
    job = write_job(tmp_path, {"engine.stroke": "3 kg"})
    code, _, err = run(["trim", str(job), "--from", str(tmp_path / "p"), "--unbalance", "10", "--angle", "0",
                        "--out", str(tmp_path / "p")], capsys)
    assert code == 2 and "must differ from --from" in assert_one_error_line(err)
    assert not (tmp_path / "p").exists()


def test_warnings_are_lines_on_stderr_and_the_run_goes_on(tmp_path, capsys):
    # a crankpin listed with the rod's rotating end: allowed, with a warning (README "The job file")
    job = write_job(tmp_path, {"engine.rotating": {"rod_big_end": 200.0, "crankpin": 140.0},
                               "engine.crank_parts": {}})
    code, out, err = run(["study", str(job), "--out", str(tmp_path / "out")], capsys)
    assert code == 0
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("geomgen: warning: engine.rotating.crankpin:"), err
    # the bob weight moves by the crankpin's mass: 200 + 140 + 0.55 * 330 = 521.5 g (README "Target")
    assert "bob weight to hang on the assembled crank: 521.5 g" in out
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == ["study.json", "study.svg"]


def test_as_a_real_process(tmp_path):
    job = write_job(tmp_path, {"engine.max_rmp": 11000})
    out_dir = tmp_path / "out"
    proc = subprocess.run([sys.executable, "-m", "geomgen", "study", str(job), "--out", str(out_dir)],
                          capture_output=True, text=True, cwd=tmp_path, timeout=120)
    assert proc.returncode == 2
    line = assert_one_error_line(proc.stderr)
    assert "engine.max_rmp" in line and "max_rpm" in line
    assert proc.stdout == ""
    assert not out_dir.exists()

    proc = subprocess.run([sys.executable, "-m", "geomgen", "study"], capture_output=True, text=True,
                          cwd=tmp_path, timeout=120)
    assert proc.returncode == 2
    assert_one_error_line(proc.stderr)
