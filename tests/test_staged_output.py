"""geomgen.output: results are written whole or not at all (README "Commands":
outputs go to a temporary folder and are moved into place whole; an existing
non-empty folder is not overwritten without --force)."""

import pytest

from geomgen.errors import BadInput
from geomgen.output import check_target, staged, write_files


def _tree(folder):
    return sorted(str(p.relative_to(folder)) for p in folder.rglob("*"))


def test_writes_whole_on_success(tmp_path):
    out = tmp_path / "result"
    with staged(out, force=False) as stage:
        assert stage != out and stage.parent == out.parent
        assert not out.exists()                       # nothing visible until the end
        write_files(stage, {"a.json": b"{}", "b.csv": b"x\n"})
    assert _tree(out) == ["a.json", "b.csv"]
    assert (out / "b.csv").read_bytes() == b"x\n"
    assert _tree(tmp_path) == ["result", "result/a.json", "result/b.csv"]  # no staging folder left


def test_exception_inside_leaves_nothing(tmp_path):
    out = tmp_path / "result"
    with pytest.raises(RuntimeError), staged(out, force=False) as stage:
        write_files(stage, {"a.json": b"{}"})
        raise RuntimeError("stage failed half way")
    assert not out.exists()
    assert list(tmp_path.iterdir()) == []             # no hidden .result.writing-* folder either


def test_exception_inside_keeps_the_old_folder_with_force(tmp_path):
    out = tmp_path / "result"
    out.mkdir()
    (out / "old.txt").write_text("keep me")
    with pytest.raises(RuntimeError), staged(out, force=True) as stage:
        write_files(stage, {"new.txt": b"n"})
        raise RuntimeError("boom")
    assert _tree(out) == ["old.txt"] and (out / "old.txt").read_text() == "keep me"
    assert [p.name for p in tmp_path.iterdir()] == ["result"]


def test_refuses_a_non_empty_folder_without_force(tmp_path):
    out = tmp_path / "result"
    out.mkdir()
    (out / "mine.txt").write_text("user data")
    with pytest.raises(BadInput, match="--force"), staged(out, force=False):
        pytest.fail("must not get here")
    with pytest.raises(BadInput, match="not empty"):
        check_target(out, force=False)
    assert _tree(out) == ["mine.txt"] and (out / "mine.txt").read_text() == "user data"
    assert [p.name for p in tmp_path.iterdir()] == ["result"]


def test_an_empty_folder_is_fine_without_force(tmp_path):
    out = tmp_path / "result"
    out.mkdir()
    with staged(out, force=False) as stage:
        write_files(stage, {"a": b"1"})
    assert _tree(out) == ["a"]


def test_replaces_the_folder_with_force(tmp_path):
    out = tmp_path / "result"
    out.mkdir()
    (out / "stale.txt").write_text("old run")
    with staged(out, force=True) as stage:
        write_files(stage, {"fresh.txt": b"new run"})
    assert _tree(out) == ["fresh.txt"]
    assert [p.name for p in tmp_path.iterdir()] == ["result"]  # the old copy is cleaned up


def test_a_file_in_the_way_is_bad_input(tmp_path):
    out = tmp_path / "result"
    out.write_text("a file")
    with pytest.raises(BadInput, match="not a folder"):
        check_target(out, force=True)


def test_creates_missing_parents(tmp_path):
    out = tmp_path / "deep" / "er" / "result"
    with staged(out, force=False) as stage:
        write_files(stage, {"a": b"1"})
    assert _tree(out) == ["a"]
