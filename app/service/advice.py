"""Fixes for the analysis warnings that are checked before they are offered.

For a zone that misses its target (:mod:`app.service.verdict`) the candidates are: a photoperiod for the zone,
one dimming setting for the fixtures that light it, and one hanging height for them (moved together). A
candidate is found on the zone's map with the full model (walls included) using that PPFD is linear in the
dimming and DLI linear in the hours; then the modified room is analysed again, whole, and the fix is offered
only if that zone meets its target and no new problem appears anywhere (a new warning, a zone or a circuit that
was fine and is not). Each fix is a structured, machine-applicable change with absolute settings
(see :func:`apply_fix` and DEVELOPERS.md) and the figures the re-analysis gave. When no setting can solve it,
the warning says so and why.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from app.engine import metrics as mx
from app.engine.compute import compute_scene
from app.room import layout
from app.room.consistency import consistency_problems
from app.room.library import crops_for
from app.room.models import CanopyZone, Fixture, FixtureType, Room, RoomFile
from app.service.maintained import factor_for
from app.service.scene_builder import aim_fields, build_scene, emitter_for
from app.service.verdict import dark_allowance, zone_result_verdict, zone_verdict

ZONE_CODES = ("dark_zone", "hot_spot", "over_target")
PERIOD_CODES = ("continuous_light", "short_dark_period", "short_day_night")
HOUR_STEP_H = 0.25  # timers are set in quarter hours
MIN_FIX_CLEARANCE_M = 0.10  # least height above the canopy a re-hang fix proposes (common practice, no source)
HEIGHT_STEPS = 8
MIN_DIMMING_PCT = 10
LIVE_KINDS = 2  # the live analysis offers a photoperiod or one dimming (no new geometry); check-my-setup every kind
LIVE_DIMMING_BUDGET_S = 0.5
"""The live analysis checks a dimming fix only when the cost model (app.service.cost) puts those re-analyses
(each recomputes the dimmed fixtures' light) under this; a bigger room gets its dimming fix from check-my-setup."""
RETRIES = 3  # candidates tried, nearest first, before a kind of fix is given up
SERIOUS = ("warning", "error")


# -- applying a fix -----------------------------------------------------------------------------


def apply_fix(rf: RoomFile, fix: dict[str, Any]) -> RoomFile:
    """The room file with one structured fix applied (the same edit the editor's one-click action makes)."""
    room = rf.room
    action = fix["action"]
    if action == "set_photoperiod":
        zones = [z.model_copy(update={"photoperiod_h": fix["hours"]}) if z.id == fix["zone"] else z for z in room.zones]
        room = room.model_copy(update={"zones": zones})
    elif action in ("set_dimming", "set_height", "set_circuit"):
        key = {"set_dimming": "dimming_pct", "set_height": "hanging_height_m", "set_circuit": "circuit"}[action]
        values = fix["fixtures"]
        fixtures = [f.model_copy(update={key: values[f.id]}) if f.id in values else f for f in room.fixtures]
        room = room.model_copy(update={"fixtures": fixtures})
    elif action == "add_fixtures":
        gone = set(fix.get("remove", []))
        fixtures = [f for f in room.fixtures if f.id not in gone] + [Fixture(**f) for f in fix["fixtures"]]
        known = {t.id for t in room.fixture_types}
        types = list(room.fixture_types) + [FixtureType(**t) for t in fix.get("fixture_types", []) if t["id"] not in known]
        room = room.model_copy(update={"fixtures": fixtures, "fixture_types": types})
    else:
        raise ValueError(f"unknown fix action '{action}'")
    return rf.model_copy(update={"room": room})


# -- the zone's light as a function of the settings --------------------------------------------------


@dataclass
class ZoneCase:
    """One zone that misses its target, with what a candidate fix is judged on."""

    zone: CanopyZone
    index: int
    mine: list[Fixture]
    hours: float
    dli_min: float
    dli_max: float
    stress: float
    max_hours: float
    area: np.ndarray
    allowance: float
    current: np.ndarray  # PPFD now [µmol m⁻² s⁻¹]
    settings_fail: bool = True  # the zone misses its target (not only a photoperiod warning)

    @property
    def ids(self) -> set[str]:
        return {f.id for f in self.mine}

    def verdict(self, ppfd: np.ndarray, hours: float | None = None) -> dict:
        h = self.hours if hours is None else hours
        dli = mx.dli_mol_m2_d(ppfd, h)
        _, dark = mx.share_of_area(dli < self.dli_min, self.area)
        _, hot = mx.share_of_area(ppfd > self.stress, self.area)
        avg = float((dli * self.area).sum() / self.area.sum())
        return zone_verdict(dark, hot, avg, self.dli_max, self.allowance)


def _ppfd(room: Room, emitters: tuple, index: int) -> np.ndarray:
    """The zone's PPFD from these emitters alone, with the room's walls, boxes and every canopy as in the analysis."""
    scene = build_scene(room)
    if not emitters:
        return np.zeros((scene.grids[index].ny, scene.grids[index].nx))
    return compute_scene(emitters, scene.grids, scene.enclosure, scene.boxes)[index].ppfd.astype(float)


def fixture_emitters(room: Room, fixtures, dimming_pct: float | None = None, dz_m: float = 0.0) -> tuple:
    """The fixtures that are on as engine emitters, moved up by dz_m, at their own dimming or at ``dimming_pct``."""
    types = {t.id: t for t in room.fixture_types}
    return tuple(
        emitter_for(
            f.id,
            types[f.type_id],
            f.x_m,
            f.y_m,
            f.hanging_height_m + dz_m,
            f.rotation_deg,
            f.dimming_pct if dimming_pct is None else dimming_pct,
            factor_for(room, types[f.type_id]),
            **aim_fields(f),
        )
        for f in fixtures
        if f.on
    )


def _names(ids: list[str]) -> str:
    return ids[0] if len(ids) == 1 else ", ".join(ids[:-1]) + " and " + ids[-1]


def _nearest(values, feasible, current: float):
    ok = [v for v, good in zip(values, feasible, strict=True) if good]
    return sorted(ok, key=lambda v: (abs(v - current), v))


def dimming_candidates(case: ZoneCase, room: Room) -> tuple[list[dict], str]:
    """One dimming for every fixture that lights the zone, nearest to the present one first; or why none."""
    if not case.mine:
        return [], "no fixture lights this zone"
    others = [f for f in room.fixtures if f.on and f.id not in case.ids]
    base = _ppfd(room, fixture_emitters(room, others), case.index)
    own = _ppfd(room, fixture_emitters(room, case.mine, 100.0), case.index)
    levels = list(range(MIN_DIMMING_PCT, 101))
    verdicts = [case.verdict(base + own * d / 100) for d in levels]
    now = float(np.mean([f.dimming_pct for f in case.mine]))
    order = _nearest(levels, [v["meets_target"] for v in verdicts], now)
    fixes = [{"action": "set_dimming", "fixtures": {f.id: float(d) for f in case.mine}} for d in order]
    if fixes:
        return fixes, ""
    full = verdicts[-1]["reasons"]
    if "dark" in full and "hot" not in full:
        why = f"even at 100 % too much of the zone stays below {case.dli_min:g} mol m⁻² d⁻¹"
    elif "hot" in verdicts[0]["reasons"] and "dark" not in verdicts[0]["reasons"]:
        why = f"even at {MIN_DIMMING_PCT} % the peak stays above {case.stress:g} µmol m⁻² s⁻¹"
    else:
        why = "the light is too uneven: a setting that lights the darkest part enough overshoots elsewhere"
    return [], why


def photoperiod_candidates(case: ZoneCase) -> tuple[list[dict], str]:
    """A photoperiod for the zone that meets the target, nearest to the present one first; or why none."""
    hours = [HOUR_STEP_H * k for k in range(1, int(24 / HOUR_STEP_H) + 1)]
    allowed = [h <= case.max_hours + 1e-9 for h in hours]
    feasible = [a and case.verdict(case.current, h)["meets_target"] for h, a in zip(hours, allowed, strict=True)]
    order = _nearest(hours, feasible, case.hours)
    fixes = [{"action": "set_photoperiod", "zone": case.zone.id, "hours": h} for h in order]
    if fixes:
        return fixes, ""
    if (case.current > case.stress).any():
        return [], "the photoperiod does not change the peak PPFD"
    p_dark = mx.value_at_area_share(case.current, case.area, case.allowance)
    if p_dark <= 0:
        return [], "part of the zone gets no light at all"
    need_h = float(mx.photoperiod_for_dli_h(case.dli_min, p_dark))
    if need_h > case.max_hours:
        return [], (
            f"no photoperiod reaches {case.dli_min:g} mol m⁻² d⁻¹ on {1 - case.allowance:.0%} of the zone: "
            f"{need_h:.1f} h needed, at most {case.max_hours:g} h allowed; raise the output or add a fixture"
        )
    return [], "any photoperiod long enough for the darkest part puts the average above the band"


def height_candidates(case: ZoneCase, room: Room) -> tuple[list[dict], str]:
    """One hanging height change for the zone's fixtures (moved together), least change first; or why none."""
    if not case.mine:
        return [], "no fixture lights this zone"
    others = [f for f in room.fixtures if f.on and f.id not in case.ids]
    base = _ppfd(room, fixture_emitters(room, others), case.index)
    low = min(f.hanging_height_m for f in case.mine)
    high = max(f.hanging_height_m for f in case.mine)
    dz_min = case.zone.canopy_height_m + MIN_FIX_CLEARANCE_M - low
    dz_max = layout.highest_hanging_m(room, case.zone) - high
    if dz_max < dz_min:
        return [], "there is no room to move them"
    steps = sorted({round(float(d), 2) for d in np.linspace(dz_min, dz_max, HEIGHT_STEPS)} - {0.0})
    feasible = [case.verdict(base + _ppfd(room, fixture_emitters(room, case.mine, dz_m=dz), case.index))["meets_target"]
                for dz in steps]
    order = _nearest(steps, feasible, 0.0)
    fixes = [
        {"action": "set_height", "fixtures": {f.id: round(f.hanging_height_m + dz, 3) for f in case.mine}}
        for dz in order
    ]
    return fixes, "" if fixes else "no hanging height within reach meets the target at the present dimming"


# -- verification -------------------------------------------------------------------------------------


def _problems(result: dict[str, Any]) -> set[tuple]:
    keys = {(w["code"], w["zone_id"], w["fixture_id"]) for w in result["warnings"] if w["severity"] in SERIOUS}
    allowance = result["verdict"]["dark_allowance"]
    keys |= {("zone", z["id"], None) for z in result["zones"] if not zone_result_verdict(z, allowance)["meets_target"]}
    keys |= {("circuit", c["name"], None) for c in result["circuits"] if not c["ok"]}
    return keys


def verify(rf: RoomFile, base: dict[str, Any], fix: dict[str, Any], zone_id: str) -> dict[str, Any] | None:
    """Re-analyse the room with the fix, whole; the zone's figures if it solves the zone and breaks nothing."""
    from app.service.analysis import analyse  # the analysis calls this module: import at use

    candidate = apply_fix(rf, fix)
    if consistency_problems(candidate):
        return None
    result = analyse(candidate, include_grids=False, with_fixes=False)
    after = _problems(result)
    if any(key[1] == zone_id and key[0] in ZONE_CODES + PERIOD_CODES + ("zone",) for key in after):
        return None
    if after - _problems(base):
        return None
    z = next(z for z in result["zones"] if z["id"] == zone_id)
    return {
        "zone_id": zone_id,
        "ppfd_avg": z["ppfd"]["avg"],
        "ppfd_max": z["ppfd"]["max"],
        "ppfd_stress": z["target"]["ppfd_stress"],
        "dli_avg": z["dli"]["avg"],
        "dli_band": [z["target"]["dli_min"], z["target"]["dli_max"]],
        "dark_share": z["dark"]["share"],
        "photoperiod_h": z["photoperiod_h"],
        "power_w": result["energy"]["power_w"],
        "power_change_w": result["energy"]["power_w"] - base["energy"]["power_w"],
    }


def describe(fix: dict[str, Any], fig: dict[str, Any], zone_name: str) -> str:
    """The fix in words with absolute settings and the figures the re-analysis gave."""
    if fix["action"] == "set_photoperiod":
        head = f"Set the photoperiod of {zone_name} to {fix['hours']:g} h"
    elif fix["action"] == "set_dimming":
        ids = list(fix["fixtures"])
        head = f"Set {_names(ids)} to {next(iter(fix['fixtures'].values())):.0f} %"
    elif fix["action"] == "set_height":
        parts = sorted(set(fix["fixtures"].values()))
        head = f"Hang {_names(list(fix['fixtures']))} at {', '.join(f'{h:.2f}' for h in parts)} m"
    else:
        head = fix.get("summary", "Re-hang the zone")
    lo, hi = fig["dli_band"]
    return (
        f"{head}: avg {fig['ppfd_avg']:.0f}, max {fig['ppfd_max']:.0f} (limit {fig['ppfd_stress']:.0f}) µmol m⁻² s⁻¹, "
        f"DLI {fig['dli_avg']:.1f} in {lo:g}-{hi:g}, {fig['dark_share']:.0%} below the band; "
        f"{fig['power_w']:.0f} W ({fig['power_change_w']:+.0f} W)."
    )


# -- per zone ------------------------------------------------------------------------------------------


def zone_case(rf: RoomFile, base: dict[str, Any], index: int, ppfd: np.ndarray, area: np.ndarray) -> ZoneCase:
    room = rf.room
    zone = room.zones[index]
    crop = crops_for(rf)[zone.crop_id]
    stage = crop.stages[zone.stage]
    zr = base["zones"][index]
    longest = 24.0 - crop.min_dark_h
    if crop.continuous_light_injury:
        longest = min(longest, 24.0 - max(crop.min_dark_h, 4.0))
    if crop.daylength == "short_day" and zone.stage == "flowering":
        longest = min(longest, 12.0)
    mine = [f for f in layout.fixtures_lighting(room.zones, room.fixtures, zone.id) if f.on]
    return ZoneCase(zone, index, mine, zr["photoperiod_h"], stage.dli_min, stage.dli_max,
                    stage.ppfd_stress_umol_m2_s, longest, area, dark_allowance(room), ppfd)


def _dimming_is_cheap(rf: RoomFile) -> bool:
    from app.service.cost import NS_PER, estimate  # cost builds scenes through the same modules as advice

    cost = estimate(rf.room)
    # Wall-patch transfers depend on the geometry only and stay cached when a fixture is dimmed.
    redo_s = cost.seconds - cost.units.get("patch_evaluations", 0.0) * NS_PER["patch_evaluations"] * 1e-9
    return redo_s * RETRIES <= LIVE_DIMMING_BUDGET_S


def zone_fixes(rf: RoomFile, base: dict[str, Any], case: ZoneCase, every_kind: bool = True, before_trial=None):
    """Verified fixes for one zone (at most one of each kind) and why the other kinds cannot help.

    Kinds are tried cheapest first (photoperiod, dimming, height); unless ``every_kind``, the first that works
    is the answer, which keeps the editor's live analysis quick.
    """
    fixes, why_not = [], []
    kinds = (
        ("photoperiod", lambda: photoperiod_candidates(case)),
        ("dimming", lambda: dimming_candidates(case, rf.room)),
        ("height", lambda: height_candidates(case, rf.room)),
    )
    # The live analysis tries the settings that need no new hanging position; check-my-setup tries all.
    tried = kinds if every_kind else kinds[: LIVE_KINDS if _dimming_is_cheap(rf) else 1]
    for kind, make in tried if case.settings_fail else kinds[:1]:
        candidates, why = make()
        for fix in candidates[:RETRIES]:
            if before_trial is not None:
                before_trial()
            fig = verify(rf, base, fix, case.zone.id)
            if fig is not None:
                fixes.append({**fix, "kind": kind, "verified": True, "result": fig,
                              "text": describe(fix, fig, case.zone.name)})
                break
        if fixes and not every_kind:
            break
        else:
            if candidates:
                why = "the settings that fit this zone cause a problem elsewhere"
            why_not.append(f"{kind}: {why}")
    return fixes, why_not


def attach_fixes(rf: RoomFile, result: dict[str, Any], grids: list[np.ndarray], areas: list[np.ndarray],
                 every_kind: bool = False, before_trial=None) -> None:
    """Give each zone warning its verified fixes (``fixes``) and a sentence (``fix``) that says what to do."""
    allowance = result["verdict"]["dark_allowance"]
    for i, z in enumerate(result["zones"]):
        codes = {w["code"] for w in result["warnings"] if w["zone_id"] == z["id"] and w["severity"] in SERIOUS}
        failing = not zone_result_verdict(z, allowance)["meets_target"]
        if not failing and not codes & set(PERIOD_CODES):
            continue
        case = zone_case(rf, result, i, grids[i], areas[i])
        case.settings_fail = failing
        fixes, why_not = zone_fixes(rf, result, case, every_kind, before_trial)
        z["fixes"] = fixes
        z["no_fix_because"] = why_not
        for w in result["warnings"]:
            if w["zone_id"] != z["id"] or w["code"] not in ZONE_CODES + PERIOD_CODES:
                continue
            w["fixes"] = fixes
            if fixes and w["code"] in PERIOD_CODES:
                w["fix"] = f"{w['fix']} Checked: {fixes[0]['text']}"
            elif fixes:
                w["fix"] = fixes[0]["text"]
            elif w["severity"] in SERIOUS and every_kind:
                w["fix"] = "No setting fixes it: " + "; ".join(why_not) + ". Change the layout (the planner)."
            elif w["severity"] in SERIOUS:
                w["fix"] = (
                    f"{w['fix']} No photoperiod fixes it ({'; '.join(why_not)}); Check my setup on the planner page "
                    "tries one dimming and one hanging height, each checked."
                )
