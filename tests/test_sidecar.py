"""The sidecar process (trimesh imported on the other core while the kernel works, the pictures drawn there) is a
speed-up only: a plan verified with it writes the very bytes a plan verified in-process writes, and a
helper that fails or cannot start leaves the work to the caller."""

from __future__ import annotations

from pathlib import Path

import pytest

import geomgen
from geomgen import sidecar

SAMPLES = Path(__file__).resolve().parent.parent / "samples"


@pytest.mark.cad
def test_with_and_without_the_sidecar_the_files_are_the_same(monkeypatch):
    job = geomgen.load_job(SAMPLES / "plugs-stroker.toml")      # plugs: the mesh check splits the plug pieces
    helped = geomgen.plan(job).verify()

    def refuse():
        raise OSError("no second process here")

    monkeypatch.setattr(sidecar, "Sidecar", refuse)
    alone = geomgen.plan(job).verify()
    for name in ("plan.json", "study.svg", "report.html", "operations.csv", "drawing.dxf"):
        assert helped.files[name] == alone.files[name], name
    # the mesh road (trimesh on the written STL, in the helper) agrees with the exact solid within its stated
    # bound, and reads the mesh a little light as any inscribed mesh does
    for web in helped.webs:
        assert web.agreement["mesh_vs_exact"]["mass_g"] <= web.agreement["mesh_bound"]["mass_g"]
        assert web.mesh.mass_g < web.exact.mass


def test_a_failing_helper_answers_none():
    with sidecar.started() as side:
        assert side is not None
        assert side.ask({"op": "mesh", "stl": "/nonexistent.stl", "density": 7.85}) is None
        assert side.ask({"op": "no such thing"}) is None
    assert sidecar.active() is None


def test_requests_sent_ahead_and_long_answers_do_not_deadlock():
    # two study figures (answers of some 40 kB each, together more than a 64 kB pipe holds) sent ahead,
    # then asked for in the other order: the answers must be the very bytes plots.study_svg draws here,
    # within a minute
    import threading

    from geomgen.plots import study_svg

    from conftest import minimal_job_dict

    first = geomgen.study(minimal_job_dict())
    second = geomgen.study(minimal_job_dict({"name": "second"}))
    got = {}

    def run():
        with sidecar.started() as side:
            side.prefetch({"op": "svg", "study": first})
            side.prefetch({"op": "svg", "study": second})
            got["second"] = side.ask({"op": "svg", "study": second})
            got["first"] = side.ask({"op": "svg", "study": first})

    worker = threading.Thread(target=run, daemon=True)
    worker.start()
    worker.join(timeout=60)
    assert not worker.is_alive(), "the sidecar deadlocked"
    assert len(got["first"]["svg"]) + len(got["second"]["svg"]) > 65536
    assert got["first"]["svg"].encode() == study_svg(first)
    assert got["second"]["svg"].encode() == study_svg(second)


def test_a_forked_helper_checks_a_mesh_and_leaves_when_its_input_ends(tmp_path):
    # the console's kernel child forks its helper (no fresh interpreter).  On a 10 x 20 x 30 mm box of
    # steel at 7.85 g/cm3 the helper must give the closed form: volume 6000 mm3, mass 6000 mm3 x
    # 0.00785 g/mm3 = 47.1 g, centre of mass at the box's centre; and it must leave once its input ends
    import threading

    import trimesh

    box = trimesh.creation.box(extents=(10.0, 20.0, 30.0))
    box.apply_translation((5.0, 10.0, 15.0))
    stl = tmp_path / "box.stl"
    stl.write_bytes(box.export(file_type="stl"))
    got = {}

    def run():
        side = sidecar.Sidecar(forked=True)
        got["answer"] = side.ask({"op": "mesh", "stl": str(stl), "density": 7.85})
        side.close()
        got["exit"] = side.proc.wait(timeout=30)

    worker = threading.Thread(target=run, daemon=True)
    worker.start()
    worker.join(timeout=60)
    assert not worker.is_alive(), "the forked helper did not answer or did not leave"
    props = sidecar.massprops_from_json(got["answer"])
    assert props.volume == pytest.approx(6000.0, rel=1e-9)
    assert props.mass == pytest.approx(47.1, rel=1e-9)
    assert props.first_moment / props.mass == pytest.approx([5.0, 10.0, 15.0], rel=1e-9)
    assert got["exit"] == 0
