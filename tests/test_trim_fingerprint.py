"""`trim --from DIR` checks that DIR's plan.json was made for the job it is given (README "Commands",
"Output files": plan.json's job_fingerprint).

The fingerprint's digest is recomputed here with hashlib over the canonical JSON of its fields
(sorted keys, no spaces), independently of geomgen.  Jobs are the invented demo job of
tests/conftest.py (stroke 64 mm, two 130 mm webs 18 mm thick) and variants of it; plans are made
with the maths only (no solids), and written as plan.json is written.
"""

from __future__ import annotations

import hashlib
import json

import ezdxf
import pytest

from geomgen import api
from geomgen.cli import main
from geomgen.errors import BadInput
from geomgen.plan_json import plan_json_bytes

from conftest import DROP, write_job

TRIM = ["--unbalance", "300", "--angle", "40"]


def plan_folder(folder, job_path):
    """The plan.json of `job_path`'s plan (prediction alone) written into `folder`."""
    folder.mkdir()
    doc = api.plan(api.load_job(job_path)).document
    (folder / "plan.json").write_bytes(plan_json_bytes(doc))
    return folder


def one_error(capsys, argv) -> str:
    code = main(list(map(str, argv)))
    err = capsys.readouterr().err.splitlines()
    assert code == 2 and len(err) == 1, err
    return err[0]


@pytest.fixture(scope="module")
def planned(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("fp")
    (tmp / "mine").mkdir()
    job = write_job(tmp / "mine")
    return job, plan_folder(tmp / "plan", job)


def test_fingerprint_digest_and_fields(planned):
    _, folder = planned
    fp = json.loads((folder / "plan.json").read_text())["job_fingerprint"]
    text = json.dumps(fp["fields"], sort_keys=True, separators=(",", ":"))
    assert fp["sha256"] == hashlib.sha256(text.encode()).hexdigest()
    eng = fp["fields"]["engine"]
    assert (eng["stroke"], eng["rod_length"], eng["balance_factor"]) == (64.0, 110.0, 0.55)   # conftest job
    assert eng["reciprocating"] == {"piston": 250.0, "rod_small_end": 80.0}
    assert eng["rotating"] == {"rod_big_end": 200.0} and eng["crank_parts"] == {"crankpin": 140.0}
    assert [w["name"] for w in fp["fields"]["webs"]] == ["a", "b"]
    a = fp["fields"]["webs"][0]
    assert (a["diameter"], a["thickness"], a["pin_bore"], a["material"]) == (130.0, 18.0, 28.0, "steel")


def test_same_job_is_accepted_and_recorded(planned, tmp_path):
    job, folder = planned
    # max_rpm is not in the fingerprint: a trim may be run for another top speed
    other_rpm = write_job(tmp_path, engine__max_rpm=9000)
    for path in (job, other_rpm):
        trim = api.trim(path, previous=folder, unbalance="300", angle="40")
        assert trim.document["trim"]["from_check"] == "matches the job"
        assert not any("another job" in w or "job_fingerprint" in w for w in trim.warnings)


@pytest.mark.parametrize(("override", "says"), [
    ({"engine__stroke": 66.0}, "engine.stroke: 66 in the job, 64 in --from "),
    ({"web__thickness": 20.0}, "web a.thickness: 20 in the job, 18 in --from "),
    ({"engine__reciprocating": {"piston": 240.0, "rod_small_end": 80.0}},
     "engine.reciprocating.piston: 240 in the job, 250 in --from "),
    ({"web__features": [{"kind": "hole", "x": 0.0, "y": -40.0, "diameter": 10.0, "depth": 8.0}]},
     "web a.features: 1 feature(s) in the job, 0 feature(s) in --from "),
])
def test_another_jobs_plan_is_refused_naming_what_differs(planned, tmp_path, capsys, override, says):
    _, folder = planned
    other = write_job(tmp_path, **override)
    out = tmp_path / "trim"
    line = one_error(capsys, ["trim", other, "--from", folder, *TRIM, "--out", out])
    assert line.startswith(f"geomgen: --from {folder / 'plan.json'} was made for another job: ")
    assert says in line and "--accept-other-plan" in line
    assert not out.exists()


def test_accept_other_plan_trims_with_a_warning(planned, tmp_path):
    _, folder = planned
    other = write_job(tmp_path, engine__stroke=66.0)
    with pytest.raises(BadInput, match="engine.stroke: 66 in the job, 64 in"):
        api.trim(other, previous=folder, unbalance="300", angle="40")
    trim = api.trim(other, previous=folder, unbalance="300", angle="40", accept_other_plan=True)
    assert trim.document["trim"]["from_check"].startswith("made for another job (engine.stroke: 66 in the job")
    assert any("trimming from it as --accept-other-plan asks" in w for w in trim.warnings)


def test_plan_without_fingerprint_is_used_with_a_warning(planned, tmp_path):
    job, folder = planned
    old = tmp_path / "old"
    old.mkdir()
    doc = json.loads((folder / "plan.json").read_text())
    del doc["job_fingerprint"]
    (old / "plan.json").write_text(json.dumps(doc))
    trim = api.trim(job, previous=old, unbalance="300", angle="40")
    assert trim.document["trim"]["from_check"] == "not checked: the plan has no job_fingerprint"
    assert [w for w in trim.warnings if "job_fingerprint" in w] == [
        f"--from {old / 'plan.json'}: has no job_fingerprint (written by a geomgen before it recorded one), "
        "so it cannot be checked to belong to this job; make sure it does"]


def test_in_memory_plan_of_another_job_is_refused(planned, tmp_path):
    job, _ = planned
    other = api.plan(write_job(tmp_path, web__pin_bore=30.0))
    with pytest.raises(BadInput, match=r"previous \(the earlier plan of demo\) was made for another job: "
                                       r"web a\.pin_bore: 28 in the job, 30 in previous"):
        api.trim(job, previous=other, unbalance="300", angle="40")


def test_a_changed_outline_file_is_named(tmp_path, capsys):
    dxf = tmp_path / "web.dxf"

    def draw(radius):
        doc = ezdxf.new()
        doc.header["$INSUNITS"] = 4  # mm
        doc.modelspace().add_circle((0.0, 0.0), radius)
        doc.saveas(dxf)

    draw(65.0)
    job = write_job(tmp_path, web__diameter=DROP, web__outline=str(dxf))
    folder = plan_folder(tmp_path / "plan", job)
    draw(64.0)  # the same file name, another web
    line = one_error(capsys, ["trim", job, "--from", folder, *TRIM, "--out", tmp_path / "trim"])
    assert "web a.outline (file contents): " in line and "--accept-other-plan" in line


def test_every_feature_kind_reads_back_as_the_same_fingerprint(tmp_path):
    # a plan.json written and read back (9-digit figures, lists for tuples) must still match its job;
    # the hole's y in inches is 1/3 in, -8.46666... mm, a figure with more digits than plan.json keeps
    features = [{"kind": "hole", "x": 0.0, "y": "-0.333333333333 in", "diameter": 10.0, "depth": 8.0},
                {"kind": "pocket", "r_inner": 40.0, "r_outer": 55.0, "angle_start": 150.0, "angle_end": 210.0,
                 "depth": 6.0},
                {"kind": "plug", "x": 20.0, "y": -45.0, "diameter": 12.0, "length": 18.0,
                 "material": "W-alloy-class-3"}]
    job = write_job(tmp_path, web__features=features, correction__kind="holes")
    folder = tmp_path / "plan"
    folder.mkdir()
    doc = api.build(job).document
    (folder / "plan.json").write_bytes(plan_json_bytes(doc))
    fp = json.loads((folder / "plan.json").read_text())["job_fingerprint"]
    assert len(fp["fields"]["webs"][0]["features"]) == 3
    # the digest is over the fields as written, so anyone can recompute it from the file
    text = json.dumps(fp["fields"], sort_keys=True, separators=(",", ":"))
    assert fp["sha256"] == hashlib.sha256(text.encode()).hexdigest()
    trim = api.trim(job, previous=folder, unbalance="300", angle="40")
    assert trim.document["trim"]["from_check"] == "matches the job"
