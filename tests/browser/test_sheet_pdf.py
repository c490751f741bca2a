"""The layout sheet printed to PDF by Chromium: one or two pages, everything on it, nothing cut off."""

import io
import unicodedata

import pytest
from pypdf import PdfReader

from tests.browser.helpers import api
from tests.conftest import SAMPLES

pytestmark = pytest.mark.browser

PAPER_MM = {"letter": (215.9, 279.4), "a4": (210.0, 297.0)}
MARGIN_MM = 12  # the sheet's @page margin
PX_PER_MM = 96 / 25.4


@pytest.mark.parametrize("paper", ["letter", "a4"])
def test_sheet_prints_on_one_or_two_pages(live_server, page, artifacts, paper):
    rooms = api(live_server, "/api/rooms")
    sample_names = {p.stem for p in SAMPLES}
    assert len(rooms) >= len(sample_names)
    for r in rooms[: len(sample_names)]:
        doc = api(live_server, f"/api/rooms/{r['id']}")
        page.set_viewport_size({"width": round((PAPER_MM[paper][0] - 2 * MARGIN_MM) * PX_PER_MM), "height": 1000})
        page.goto(f"{live_server}/rooms/{r['id']}/sheet?paper={paper}")
        page.emulate_media(media="print")
        # Nothing wider than the printable area.
        widest = page.evaluate(
            "() => Math.max(...[...document.querySelectorAll('.sheet *')].map(e => e.getBoundingClientRect().right))"
        )
        printable_px = (PAPER_MM[paper][0] - 2 * MARGIN_MM) * PX_PER_MM
        assert widest <= printable_px + 1, f"{r['id']}: content reaches {widest:.0f}px of {printable_px:.0f}px"
        pdf = page.pdf(prefer_css_page_size=True, print_background=True)
        (artifacts / f"sheet-{r['id']}-{paper}.pdf").write_bytes(pdf)
        reader = PdfReader(io.BytesIO(pdf))
        assert 1 <= len(reader.pages) <= 2, f"{r['id']}: {len(reader.pages)} pages"
        box = reader.pages[0].mediabox
        assert abs(float(box.width) / 72 * 25.4 - PAPER_MM[paper][0]) < 1.5
        # NFKC undoes the typesetter's ligatures (ﬁ → fi) before searching the text.
        text = unicodedata.normalize("NFKC", "\n".join(p.extract_text() for p in reader.pages))
        assert doc["room"]["name"] in text
        for f in doc["room"]["fixtures"]:
            assert f["id"] in text, f"fixture {f['id']} missing from the sheet"
        for z in doc["room"]["zones"]:
            assert z["name"] in text
        for needle in (
            "Canopy figures per zone",
            "Cautions",
            "licensed electrician",
            "rated for their weight",
            "eye protection",
            "water away",
            "BTU/h",
            "File revision",
        ):
            assert needle in text, needle
