"""The layout sheet printed to PDF by Chromium at Letter and A4, read back with pypdf and checked in the page.

Checked on every sample: pages (at most 2 for a room on one level, 3 for a rack), every font at least 7 pt
in the PDF, every fixture id present and clear of every other drawn element (in the printed SVG geometry),
every dimension number equal to the room file's value, the scale bar's printed length within 1 % of its
stated length at the stated ratio, the weight total, and the colour scale's maximum.
"""

import io
import math
import unicodedata

import pytest
from pypdf import PdfReader

from tests.browser.helpers import api
from tests.conftest import SAMPLES
from tests.room import display_reference as ref

pytestmark = pytest.mark.browser

PAPER_MM = {"letter": (215.9, 279.4), "a4": (210.0, 297.0)}
MARGIN_MM = 12  # the sheet's @page margin
PX_PER_MM = 96 / 25.4  # CSS: 96 px per inch, printed at 100 %
MIN_PT = 7.0
UNIT_M = {"ft": 0.3048, "in": 0.0254, "m": 1.0, "cm": 0.01}

# Every leaf drawing element of each plan, in page coordinates: lines as segments, the rest as boxes.
GEOMETRY_JS = """
() => [...document.querySelectorAll('svg.sheet-plan')].map(svg => {
  const items = [];
  for (const el of svg.querySelectorAll('line, rect, polygon, circle, text, path')) {
    const cls = el.getAttribute('class') || '';
    const owner = el.getAttribute('data-owner') || (el.closest('[data-owner]') || {getAttribute: () => ''}).getAttribute('data-owner') || '';
    const item = {tag: el.tagName, cls, owner, text: el.tagName === 'text' ? el.textContent : null};
    if (el.tagName === 'line') {
      const m = el.getScreenCTM();
      const p = (x, y) => { const q = new DOMPoint(x, y).matrixTransform(m); return [q.x, q.y]; };
      item.seg = [p(+el.getAttribute('x1'), +el.getAttribute('y1')), p(+el.getAttribute('x2'), +el.getAttribute('y2'))];
    }
    const r = el.getBoundingClientRect();
    item.box = [r.left, r.top, r.right, r.bottom];
    items.push(item);
  }
  return {tier: svg.getAttribute('data-tier'), items};
})
"""


def _seg_hits_box(seg, box) -> bool:
    (x0, y0), (x1, y1) = seg
    dx, dy = x1 - x0, y1 - y0
    t0, t1 = 0.0, 1.0
    for den, num in ((-dx, x0 - box[0]), (dx, box[2] - x0), (-dy, y0 - box[1]), (dy, box[3] - y0)):
        if den == 0:
            if num < 0:
                return False
            continue
        t = num / den
        if den < 0:
            t0 = max(t0, t)
        else:
            t1 = min(t1, t)
        if t0 > t1:
            return False
    return True


def _boxes_hit(a, b) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def _overlaps(label, others) -> list[str]:
    """Elements that overlap a fixture id, other than its own fixture and label (which it is written on)."""
    out = []
    box = label["box"]
    for o in others:
        if o is label or o["owner"] == label["owner"] or o["cls"].startswith("sp-area"):
            continue
        hit = _seg_hits_box(o["seg"], box) if o["tag"] == "line" else _boxes_hit(o["box"], box)
        if hit:
            out.append(f"{o['tag']}.{o['cls']} {o['text'] or ''}".strip())
    return out


def _pdf_font_sizes(reader) -> list[tuple[str, float]]:
    def mul(a, b):
        return [a[0] * b[0] + a[1] * b[2], a[0] * b[1] + a[1] * b[3], a[2] * b[0] + a[3] * b[2], a[2] * b[1] + a[3] * b[3]]

    out = []
    for p in reader.pages:

        def visit(text, cm, tm, font, size):
            if text.strip():
                m = mul(tm, cm)
                out.append((text, size * math.sqrt(abs(m[0] * m[3] - m[1] * m[2]))))

        p.extract_text(visitor_text=visit)
    return out


def _chain(values, wall):
    stops = [0.0]
    for p in sorted(values):
        if p - stops[-1] > 0.001:
            stops.append(p)
    if wall - stops[-1] > 0.001:
        stops.append(wall)
    return [b - a for a, b in zip(stops, stops[1:], strict=False)]


@pytest.mark.parametrize("paper", ["letter", "a4"])
def test_sheet_prints_legibly_and_to_scale(live_server, page, artifacts, paper):
    rooms = api(live_server, "/api/rooms")
    sample_names = {p.stem for p in SAMPLES}
    assert len(rooms) >= len(sample_names)
    printable_px = (PAPER_MM[paper][0] - 2 * MARGIN_MM) * PX_PER_MM
    for r in rooms[: len(sample_names)]:
        doc = api(live_server, f"/api/rooms/{r['id']}")
        room = doc["room"]
        units = room["display_units"]
        data = api(live_server, f"/rooms/{r['id']}/sheet?paper={paper}&format=json")
        page.set_viewport_size({"width": round(printable_px), "height": 1000})
        page.goto(f"{live_server}/rooms/{r['id']}/sheet?paper={paper}")
        page.emulate_media(media="print")
        widest = page.evaluate(
            "() => Math.max(...[...document.querySelectorAll('.sheet *')].map(e => e.getBoundingClientRect().right))"
        )
        assert widest <= printable_px + 1, f"{r['id']}: content reaches {widest:.0f}px of {printable_px:.0f}px"
        assert page.locator(".topbar").is_hidden(), "toolbar printed"
        page_bg = page.evaluate("() => [getComputedStyle(document.documentElement).backgroundColor, getComputedStyle(document.body).backgroundColor]")
        assert all(c in ("rgb(255, 255, 255)", "rgba(0, 0, 0, 0)") for c in page_bg), page_bg

        # Fixture ids clear of everything else drawn, in the printed geometry.
        plans = page.evaluate(GEOMETRY_JS)
        assert len(plans) == len(data["tiers"])
        drawn_ids = []
        for plan in plans:
            for it in plan["items"]:
                if it["cls"] == "sp-fixture-id":
                    drawn_ids.append(it["text"])
                    hits = _overlaps(it, plan["items"])
                    assert not hits, f"{r['id']} {plan['tier']}: id {it['text']} overlapped by {hits}"
        assert sorted(drawn_ids) == sorted(f["id"] for f in room["fixtures"])

        # The scale bar at its printed size: the stated length at the stated ratio, within 1 %.
        bars = page.evaluate(
            """() => [...document.querySelectorAll('svg.sheet-plan')].map(svg => ({
                 ratio: svg.querySelector('.sp-scale-ratio').textContent,
                 width_px: svg.querySelector('.sp-scale-bar-body').getBoundingClientRect().width,
                 label: [...svg.querySelectorAll('.sp-scale-text')].pop().textContent}))"""
        )
        for b in bars:
            ratio = int(b["ratio"].split("1:")[1].split()[0])
            value, unit = b["label"].split()
            want_mm = float(value) * UNIT_M[unit] * 1000 / ratio
            got_mm = b["width_px"] / PX_PER_MM
            assert abs(got_mm - want_mm) <= 0.01 * want_mm, f"{r['id']}: scale bar {got_mm:.2f} mm, {want_mm:.2f} expected"

        pdf = page.pdf(prefer_css_page_size=True)
        (artifacts / f"sheet-{r['id']}-{paper}.pdf").write_bytes(pdf)
        reader = PdfReader(io.BytesIO(pdf))
        most = 3 if len(data["tiers"]) > 1 else 2
        assert 1 <= len(reader.pages) <= most, f"{r['id']}: {len(reader.pages)} pages"
        box = reader.pages[0].mediabox
        assert abs(float(box.width) / 72 * 25.4 - PAPER_MM[paper][0]) < 1.5
        small = [(t, round(s, 2)) for t, s in _pdf_font_sizes(reader) if s < MIN_PT - 0.05]
        assert not small, f"{r['id']}: text below {MIN_PT} pt: {small[:5]}"

        # NFKC undoes the typesetter's ligatures (ﬁ → fi) before searching the text.
        # Table cells wrap, so runs of white space are compared as one space.
        text = " ".join(unicodedata.normalize("NFKC", "\n".join(p.extract_text() for p in reader.pages)).split())
        assert room["name"] in text
        for f in room["fixtures"]:
            assert f["id"] in text, f"fixture {f['id']} missing from the sheet"
        for z in room["zones"]:
            assert z["name"] in text
        for t in data["tiers"]:
            fx = [f for f in room["fixtures"] if f["id"] in t["fixture_ids"]]
            dims = _chain([f["x_m"] for f in fx], room["width_m"]) + _chain([f["y_m"] for f in fx], room["length_m"])
            for d in [*dims, room["width_m"], room["length_m"]]:
                assert unicodedata.normalize("NFKC", ref.length(d, units, True)) in text, f"dimension {d:.4f} m"
        types = {t["id"]: t for t in room["fixture_types"]}
        total_kg = sum(types[f["type_id"]]["weight_kg"] for f in room["fixtures"])
        assert unicodedata.normalize("NFKC", ref.weight(total_kg, units)) in text
        assert f"1:{bars[0]['ratio'].split('1:')[1].split()[0]}" in text
        assert data["colour_scale"]["max"] in text
        for needle in (
            "Canopy figures per zone",
            "Cautions",
            "licensed electrician",
            "rated for their weight",
            "eye protection",
            "water away",
            "BTU/h",
            "File revision",
            "emitting face",
            "0° means",
        ):
            assert needle in text, needle


def _luminance(rgb) -> float:
    """Relative luminance, WCAG 2.1 (W3C Recommendation, 2018), definition 'relative luminance'."""

    def ch(c):
        c = c / 255
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4

    r, g, b = (ch(c) for c in rgb)
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def _contrast(a, b) -> float:
    hi, lo = sorted((_luminance(a), _luminance(b)), reverse=True)
    return (hi + 0.05) / (lo + 0.05)


def test_contrast_formula_against_wcag_examples():
    # WCAG 2.1: black on white is 21:1; #767676 on white is the classic 4.54:1 AA pass.
    assert abs(_contrast((0, 0, 0), (255, 255, 255)) - 21.0) < 1e-9
    assert abs(_contrast((0x76, 0x76, 0x76), (255, 255, 255)) - 4.54) < 0.01


def test_toolbar_is_readable(live_server, page):
    rid = api(live_server, "/api/rooms")[0]["id"]
    page.goto(f"{live_server}/rooms/{rid}/sheet")
    items = page.evaluate(
        """() => {
          const rgb = s => s.match(/\\d+(\\.\\d+)?/g).slice(0, 3).map(Number);
          const bg = el => { while (el) { const c = getComputedStyle(el).backgroundColor;
              if (c && c !== 'rgba(0, 0, 0, 0)' && c !== 'transparent') return rgb(c); el = el.parentElement; } return [255, 255, 255]; };
          return [...document.querySelectorAll('.topbar a, .topbar button, .topbar span')].map(e => ({
            text: e.textContent.trim(), fg: rgb(getComputedStyle(e).color), bg: bg(e)}));
        }"""
    )
    assert {"Letter", "A4", "Back to the editor", "Plan for CAD (DXF)"} <= {i["text"] for i in items}
    for i in items:
        c = _contrast(i["fg"], i["bg"])
        assert c >= 4.5, f"{i['text']}: contrast {c:.2f}:1 under the WCAG AA 4.5:1"
