"""Fixes offered by the analysis: every one, applied and analysed again, solves its zone and breaks nothing.

The verdict is re-derived here from the analysis' own grids and cell areas (the rule of app.service.verdict
written out again), so a fix that only looks solved through the same code path would still be caught. The
photoperiod arithmetic is checked against the DLI definition DLI = PPFD × h × 3600 / 10⁶ (Faust & Logan
(2018), HortScience 53(9):1250-1257).
"""

import numpy as np
import pytest

from app.engine.scene import Grid
from app.room.models import WALL_FINISHES
from app.room.roomfile import parse_room_file, to_json_bytes
from app.service.advice import apply_fix
from app.service.analysis import analyse
from app.service.planner import check_setup, curves, meets_target
from tests.conftest import sample_doc

SAMPLES = ["hobby-tent-peppers", "basement-two-benches", "research-chamber-metric", "three-tier-greens-rack"]


def variant(name: str, kind: str) -> dict:
    doc = sample_doc(name)
    room = doc["room"]
    if kind == "hot":  # every fixture at 100 % over a leafy crop (stress 700)
        for f in room["fixtures"]:
            f["dimming_pct"] = 100
        for z in room["zones"]:
            z.update(crop_id="lettuce", stage="vegetative")
    elif kind == "dark":  # a short day: the band's bottom is out of reach of the present settings
        room["schedule"]["photoperiod_h"] = 9
        for z in room["zones"]:
            z["photoperiod_h"] = None
    elif kind == "white":  # matt white paint (Lighting Research Center reflectance 0.90)
        room["wall_finish"] = WALL_FINISHES["white_paint"].model_dump()
        room["open_sides"] = []
    return doc


def independent_verdict(zone: dict, allowance: float) -> bool:
    """At most `allowance` of the area below the band, nothing above stress, average DLI not above the band."""
    g = zone["grid"]
    x, y = np.array(g["x_m"]), np.array(g["y_m"])
    x0, y0, w, length = zone["rect"]
    cells = Grid("z", x0, y0, w, length, 0.0, g["spacing_m"]).cell_area_m2
    assert cells.shape == (y.size, x.size)
    dli, ppfd = np.array(g["dli"]), np.array(g["ppfd"])
    share_dark = cells[dli < zone["target"]["dli_min"] - 0.006].sum() / cells.sum()  # grid rounded to 0.01
    hot = (ppfd > zone["target"]["ppfd_stress"] + 0.06).any()
    avg = (dli * cells).sum() / cells.sum()
    return share_dark <= allowance + 0.005 and not hot and avg <= zone["target"]["dli_max"] + 0.01


CASES = [(n, k) for n in SAMPLES for k in ("as is", "hot", "dark", "white")]


@pytest.mark.parametrize("name, kind", CASES)
def test_every_offered_fix_solves_its_zone_and_breaks_nothing(name, kind):
    rf = parse_room_file(to_json_bytes(variant(name, kind)))
    base = analyse(rf, with_fixes="all")  # every kind of fix, as check-my-setup asks for
    serious = {(w["code"], w["zone_id"]) for w in base["warnings"] if w["severity"] in ("warning", "error")}
    for z in base["zones"]:
        for fix in z.get("fixes", []):
            assert fix["verified"] and fix["action"] in ("set_photoperiod", "set_dimming", "set_height")
            if fix["action"] == "set_dimming":  # absolute settings in whole per cent, within the dimmer's range
                assert all(10 <= v <= 100 and v == int(v) for v in fix["fixtures"].values())
            after = analyse(apply_fix(rf, fix), with_fixes=False)
            zone = next(a for a in after["zones"] if a["id"] == z["id"])
            assert independent_verdict(zone, base["verdict"]["dark_allowance"]), (fix["text"], zone["dark"])
            new = {(w["code"], w["zone_id"]) for w in after["warnings"] if w["severity"] in ("warning", "error")}
            assert new <= serious, (fix["text"], new - serious)
            assert all(c["ok"] for c in after["circuits"]) or not all(c["ok"] for c in base["circuits"])
            assert f"{zone['dli']['avg']:.1f}" in fix["text"]  # the text states the resulting figures


def test_fixes_are_offered_at_all():
    """The loop above must have something to check: the hot and dark tents each get a verified fix (the live
    analysis offers the photoperiod kind, check-my-setup every kind)."""
    for kind, fixes in (("hot", "all"), ("dark", True)):
        a = analyse(parse_room_file(to_json_bytes(variant("hobby-tent-peppers", kind))), with_fixes=fixes)
        assert a["zones"][0].get("fixes"), kind
        warned = [w for w in a["warnings"] if w.get("fixes")]
        assert warned and warned[0]["fix"] == warned[0]["fixes"][0]["text"]


def test_dark_tent_photoperiod_fix_follows_the_dli_definition():
    rf = parse_room_file(to_json_bytes(variant("hobby-tent-peppers", "dark")))
    a = analyse(rf)
    z = a["zones"][0]
    fix = next(f for f in z["fixes"] if f["action"] == "set_photoperiod")
    ppfd = np.array(z["grid"]["ppfd"])
    # DLI [mol m⁻² d⁻¹] = PPFD × h × 3600 / 1e6 (Faust & Logan 2018): the figures at the new hours.
    np.testing.assert_allclose(fix["result"]["dli_avg"], z["ppfd"]["avg"] * fix["hours"] * 3600 / 1e6, rtol=1e-6)
    assert fix["hours"] % 0.25 == 0 and fix["hours"] > 9
    # One quarter hour less would leave more than the allowance dark (the nearest working setting).
    shorter = (ppfd * (fix["hours"] - 0.25) * 0.0036 < z["target"]["dli_min"]).mean()
    assert shorter > a["verdict"]["dark_allowance"] - 0.01


def test_impossible_target_says_so_and_why():
    # Tomato (20-30 mol) on the rack's middle tier: its strips already at 100 % and hung just under the shelf.
    doc = sample_doc("three-tier-greens-rack")
    zone_doc = next(z for z in doc["room"]["zones"] if z["id"] == "tier-2")
    zone_doc.update(crop_id="tomato", stage="flowering")
    a = analyse(parse_room_file(to_json_bytes(doc)), with_fixes="all")
    tier2 = next(z for z in a["zones"] if z["id"] == "tier-2")
    assert not tier2.get("fixes")
    why = " ".join(tier2["no_fix_because"])
    assert "no photoperiod reaches 20 mol" in why and "h needed" in why
    needed = float(why.split("the zone: ")[1].split(" h needed")[0])
    g = tier2["grid"]
    x0, y0, w_m, l_m = tier2["rect"]
    cells = Grid("t", x0, y0, w_m, l_m, 0.0, g["spacing_m"]).cell_area_m2.ravel()
    ppfd = np.array(g["ppfd"]).ravel()
    order = np.argsort(ppfd)  # the PPFD below which 10 % of the area lies (area-weighted quantile)
    p10 = ppfd[order][np.searchsorted(np.cumsum(cells[order]) / cells.sum(), 0.10)]
    assert needed == pytest.approx(20 / (p10 * 0.0036), rel=0.05)  # hours = DLI / (PPFD × 0.0036)
    w = next(w for w in a["warnings"] if w["code"] == "dark_zone" and w["zone_id"] == "tier-2")
    assert w["fix"].startswith("No setting fixes it")


def test_one_verdict_for_editor_check_and_planner():
    """The sample tent has 8 % of its area below the band: within the default allowance everywhere, and
    outside a 5 % allowance set in the room file, again everywhere."""
    doc = sample_doc("hobby-tent-peppers")
    rf = parse_room_file(to_json_bytes(doc))
    a = analyse(rf)
    assert 0.05 < a["zones"][0]["dark"]["share"] < 0.10
    assert a["verdict"] == {**a["verdict"], "dark_allowance": 0.10, "is_default": True}
    assert a["verdict"]["meets_target"] and meets_target(a) and check_setup(rf)["meets_target"]
    assert not [w for w in a["warnings"] if w["severity"] in ("warning", "error")]
    doc["room"]["dark_allowance"] = 0.05
    strict = parse_room_file(to_json_bytes(doc))
    b = analyse(strict)
    assert not b["verdict"]["meets_target"] and not meets_target(b) and not check_setup(strict)["meets_target"]
    assert any(w["code"] == "dark_zone" and w["severity"] == "warning" for w in b["warnings"])


def test_stacked_rack_curves_move_only_the_tiers_own_fixtures():
    rf = parse_room_file(to_json_bytes(sample_doc("three-tier-greens-rack")))
    c = curves(rf, "tier-1")
    assert c["fixtures"] == ["S1", "S2"]  # not all six strips stacked over the same rectangle
    # The bottom tier's strips hang 0.51 m above its canopy, 1 cm under the shelf at 0.65 m: the curve spans
    # from 0.10 m above the canopy up to there (the bug was 0.10-0.20 m, set by the top tier's room).
    assert c["current_above_canopy_m"] == pytest.approx(0.51, abs=1e-6)
    heights = [r["above_canopy_m"] for r in c["heights"]]
    assert heights[0] == pytest.approx(0.10) and heights[-1] == pytest.approx(0.65 - 0.01 - 0.13)


def test_stacked_rack_check_my_setup_counts_the_tiers_own_fixtures():
    rf = parse_room_file(to_json_bytes(sample_doc("three-tier-greens-rack")))
    r = check_setup(rf)
    for z in r["zones"]:
        assert len(z["fixtures"]) == 2  # each tier is lit by its own two strips
        for fix in z["fixes"]:
            if fix["action"] == "add_fixtures":
                assert set(fix["remove"]) == set(z["fixtures"])
                assert fix["change_in_count"] == len(fix["fixtures"]) - 2
                after = analyse(apply_fix(rf, fix), with_fixes=False)
                zone = next(a for a in after["zones"] if a["id"] == z["zone_id"])
                assert zone["verdict"]["meets_target"]
