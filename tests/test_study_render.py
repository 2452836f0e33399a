"""`study.render_soon` (the study figure drawn on another core while the plan goes on)
must give the very bytes of `study.render`: the SVG is byte-stable by design (fixed hash
salt, no date), so the worker and the caller cannot differ (checked with `bytes ==`)."""

from conftest import write_job

from geomgen import job as jobmod
from geomgen import study


def test_render_soon_gives_the_bytes_of_render(tmp_path):
    result = study.study_of(jobmod.load(write_job(tmp_path)))
    files = study.render_soon(result)()
    assert files == study.render(result)
    assert set(files) == {"study.json", "study.svg"}
    assert files["study.svg"].lstrip().startswith(b"<?xml")
