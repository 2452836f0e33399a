"""drawing.dxf as LibreCAD prints it (`librecad dxf2pdf`), read back from the PDF.

LibreCAD redraws every dimension from the header's dimension variables, so
this is where a wrong $DIMLFAC or $DIMTXT shows: a 10 mm hole reading
"1000", or text too small to read.  The words are read from the PDF's strokes
with LibreCAD's own font file (tests/_librecad.py).  Without librecad the test
skips locally and fails under CI (CI set), whose script installs it.
"""

from __future__ import annotations

import math

import pytest

from _librecad import Font, Page, need_librecad, pdf_info, print_pdf
from _shop_run import plan_run

pytestmark = pytest.mark.cad  # the shared `plan` run builds the solids


@pytest.fixture(scope="module")
def printed(tmp_path_factory):
    need_librecad()
    run = plan_run()
    pdf = print_pdf(run["out"] / "drawing.dxf", tmp_path_factory.mktemp("librecad"))
    return {"run": run, "pdf": pdf, "page": Page(pdf), "font": Font("standard")}


def test_one_page_with_the_drawing_on_it(printed):
    info = pdf_info(printed["pdf"])
    assert info["Pages"] == "1"
    assert len(printed["page"].points) > 5000          # two webs, their tables and dimensions


def test_dimensions_read_their_true_value(printed):
    """The job's existing 10 mm hole at (40, 10) mm: LibreCAD prints its diameter "Ø10" and the radius of
    its centre from the crank axis, hypot(40, 10) = 41.231 mm -> "41.23" (0.01 mm, closed form); the
    pocket's radii R50 / R60 and its 30 deg span (165 .. 195 deg).  Never the x100 reading the stock
    ezdxf header gave ("Ø1000", "4123.11"), nor a stray digit after the value."""
    page, font = printed["page"], printed["font"]
    webs = len(printed["run"]["doc"]["webs"])
    assert f"{math.hypot(40.0, 10.0):.2f}" == "41.23"
    for text in ("\u00d810", "41.23", "R50", "R60"):
        assert len(page.find(text, font)) == webs, text
    # the span: the stroke finder, anchored on one stroke of the string, picks it out on one web's view only
    # (both print alike when looked at); that it reads 30, never 300, is what this checks
    assert len(page.find("30\u00b0", font)) >= 1
    for wrong in ("\u00d8100", "\u00d81000", "4123", "41.231", "R500", "R5000", "300\u00b0"):
        assert page.find(wrong, font) == [], wrong


def test_dimension_text_is_the_size_of_the_table_text(printed):
    """DIMTXT 2.5 mm like the tables' 2.5 mm TEXT: on the paper both come out the same height, and at
    least 1.8 mm, the smallest lettering height of the ISO 3098 series (from memory)."""
    page, font = printed["page"], printed["font"]
    dims = page.find("\u00d810", font)
    cells = page.find("W-alloy-class-3", font)      # a plug table cell (its material)
    assert dims and cells
    table_h = cells[0]["height_mm"]
    for hit in dims:
        assert hit["height_mm"] == pytest.approx(table_h, rel=0.05)
    assert table_h >= 1.8


def test_tables_print_each_kind(printed):
    page, font = printed["page"], printed["font"]
    for words in ("full-diameter", "drill travel", "r_outer", "angle_start", "bore", "plug", "reamed to", "H7 flat",
                  "existing", "new"):
        assert page.find(words, font), words
    # the existing hole's row: drill travel 6 + 5 / tan(59 deg) = 9.00 mm (Machinery's Handbook drill point)
    assert f"{6 + 5 / math.tan(math.radians(59)):.2f}" == "9.00"
    assert page.find("9.00", font)
