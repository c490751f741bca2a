"""The planner: a search per zone, then whole-room proposals analysed on the room's own grid.

A proposal is offered only when the full analysis of the changed room says every zone meets its target
(:mod:`app.service.verdict`) and every circuit stays within its continuous limit with all fixtures at 100 %.
Proposals differ in fixture count, type or arrangement (not only in height).
"""

from __future__ import annotations

import math
import threading
import time
from dataclasses import replace
from typing import Any

import numpy as np

from app.engine import electrical as elec
from app.engine.metrics import value_at_area_share
from app.room.library import fixture_library
from app.room.models import RoomFile
from app.room.roomfile import consistency_problems
from app.service.analysis import analyse
from app.service.hanging import grid_words
from app.service.planner.apply import CircuitsFull, apply_layouts, full_load_w
from app.service.planner.options import MIN_DIMMING, PlanOptions, ZoneLayout
from app.service.planner.search import Cancelled, zone_search
from app.service.scene_builder import zone_grid
from app.service.verdict import allowance_info, meets_target

DEFAULT_TYPES = ("panel-0.6",)
DEPTH = 4  # combinations tried per proposal kept
SETTLE_ROUNDS = 2
SETTLE_STEP = 0.02
TIGHTEN_MARGIN = 0.005


def candidate_types(rf: RoomFile, opts: PlanOptions):
    lib = fixture_library()
    own = {t.id: t for t in rf.room.fixture_types}
    ids = opts.type_ids or tuple(own) or DEFAULT_TYPES
    return [own.get(i) or lib[i] for i in ids if i in own or i in lib]


def circuits_at_full(rf: RoomFile) -> list[dict[str, Any]]:
    """Each circuit with every fixture at 100 % (what the dimmer can reach) against its continuous limit."""
    room = rf.room
    types = {t.id: t for t in room.fixture_types}
    load = full_load_w(room, list(room.fixtures), types)
    v = room.schedule.supply_voltage_v
    out = []
    for c in room.circuits:
        amps = float(elec.current_a(load.get(c.name, 0.0), v))
        limit = float(elec.continuous_limit_a(c.breaker_a))
        names = [f.id for f in room.fixtures if f.circuit == c.name]
        out.append(
            {
                "name": c.name,
                "breaker_a": c.breaker_a,
                "full_load_w": load.get(c.name, 0.0),
                "full_current_a": amps,
                "continuous_limit_a": limit,
                "ok": amps <= limit + 1e-9,
                "fixtures": names,
            }
        )
    return out


def plan(rf: RoomFile, opts: PlanOptions | None = None, progress=None, cancel: threading.Event | None = None):
    """Proposals for the whole room, best first, each analysed with the full model on the room's grid."""
    opts = opts or PlanOptions()
    cancel = cancel or threading.Event()
    types = candidate_types(rf, opts)
    t0 = time.perf_counter()
    first_s = None
    zones = list(rf.room.zones)
    per_zone: list[list[ZoneLayout]] = []
    for i, zone in enumerate(zones):

        def report(frac, found, i=i, zone=zone):
            nonlocal first_s
            if found and first_s is None and i == len(zones) - 1:
                first_s = time.perf_counter() - t0
            if progress:
                best = min(found, key=lambda r: r.key(opts.objective)) if found else None
                progress(0.8 * (i + frac) / len(zones), zone.name, len(found), best.summary() if best else None)

        per_zone.append(zone_search(rf, zone, types, opts, report, cancel))
    proposals, reasons = combine(rf, zones, per_zone, opts, progress, cancel)
    unmet = [z.name for z, found in zip(zones, per_zone, strict=True) if not found]
    return {
        "proposals": proposals,
        "unmet_zones": unmet,
        "not_offered": reasons,
        "verdict": allowance_info(rf.room),
        "hanging_grid": grid_words(rf.room),
        "revision": rf.revision,
        "elapsed_s": time.perf_counter() - t0,
        "first_feasible_s": first_s,
        "searched": {z.name: len(found) for z, found in zip(zones, per_zone, strict=True)},
    }


def combine(rf, zones, per_zone, opts: PlanOptions, progress, cancel) -> tuple[list[dict], list[str]]:
    """Whole-room proposals: the k-th distinct layout of each zone, analysed again, whole."""
    proposals, reasons, seen = [], [], set()
    if any(not z for z in per_zone):
        return proposals, reasons
    depth = max(len(z) for z in per_zone)
    for k in range(min(depth, DEPTH * opts.keep)):
        if cancel.is_set():
            raise Cancelled
        choice = [z[min(k, len(z) - 1)] for z in per_zone]
        signature = tuple(c.signature for c in choice)
        if signature in seen:
            continue
        seen.add(signature)
        proposal, why = check_proposal(rf, choice, opts, cancel)
        if proposal is None:
            reasons.append(why)
            continue
        proposals.append(proposal)
        if progress:
            progress(
                0.8 + 0.2 * len(proposals) / opts.keep,
                zones[-1].name,
                len(proposals),
                {
                    "text": "; ".join(c.describe() for c in choice),
                    "power_w": proposal["figures"]["energy"]["power_w"],
                    "count": proposal["fixtures"],
                },
            )
        if len(proposals) >= opts.keep:
            break
    return proposals, reasons


def check_proposal(rf: RoomFile, choice: list[ZoneLayout], opts: PlanOptions, cancel: threading.Event | None = None):
    """(proposal, "") when the changed room, analysed whole, meets every target; else (None, why not).

    Zones are searched one at a time, so a neighbour's light (and the finer grid) can push a zone over the
    band: such a zone's dimming is corrected from the analysis and the room analysed again, twice at most.
    """
    for _ in range(SETTLE_ROUNDS + 1):
        try:
            candidate = apply_layouts(rf, choice)
        except CircuitsFull as exc:
            return None, str(exc)
        problems = consistency_problems(candidate)
        if problems:
            return None, "; ".join(p.message for p in problems)
        if cancel is not None and cancel.is_set():
            raise Cancelled
        result = analyse(candidate, include_grids=True, with_fixes=False)
        if meets_target(result):
            if cancel is not None and cancel.is_set():
                raise Cancelled
            candidate, result, choice = tighten(rf, candidate, result, choice, opts)
            break
        settled = [settle(lay, z) for lay, z in zip(choice, result["zones"], strict=True)]
        if all(s is lay for s, lay in zip(settled, choice, strict=True)):
            break
        choice = settled
    if not meets_target(result):
        missed = [z["name"] for z in result["zones"] if not z["verdict"]["meets_target"]]
        return None, f"{'; '.join(c.describe() for c in choice)}: the whole-room analysis misses {', '.join(missed)}"
    full = circuits_at_full(candidate)
    if not all(c["ok"] for c in full):
        return None, "a circuit would be over its continuous limit at full output"
    if opts.max_power_w is not None and result["energy"]["power_w"] > opts.max_power_w + 1e-6:
        return None, "over the power budget"
    return {
        "layouts": [c.describe() for c in choice],
        "zones": [c.summary() for c in choice],
        "hanging_grid": grid_words(rf.room),
        "room_file": candidate.model_dump(mode="json"),
        "figures": figures(result, full),
        "fixtures": len(candidate.room.fixtures),
        "fixture_list": fixture_list(candidate),
        "cost": cost_figures(candidate, result, opts),
    }, ""


def tighten(rf: RoomFile, candidate: RoomFile, result: dict[str, Any], choice: list[ZoneLayout], opts: PlanOptions):
    """For the band's bottom: dim each zone down to what the room-grid analysis shows it needs, if that still
    passes the whole-room analysis (the planning grid is coarser, so its darkest tenth reads a little low)."""
    if opts.target != "bottom":
        return candidate, result, choice
    allowance = result["verdict"]["dark_allowance"]
    lower = []
    for lay, z in zip(choice, result["zones"], strict=True):
        ppfd = np.asarray(z["grid"]["ppfd"], dtype=float)
        grid = zone_grid(next(zz for zz in rf.room.zones if zz.id == z["id"]), rf.room.grid_spacing_m)
        p_dark = value_at_area_share(ppfd, grid.cell_area_m2, allowance)
        ratio = z["target"]["ppfd_min"] * (1 + TIGHTEN_MARGIN) / p_dark if p_dark > 0 else 1.0
        d = max(MIN_DIMMING, math.ceil(round(lay.dimming * ratio * 100, 6)) / 100)
        lower.append(replace(lay, dimming=d, power_w=lay.power_w * d / lay.dimming) if d < lay.dimming else lay)
    if all(a is b for a, b in zip(lower, choice, strict=True)):
        return candidate, result, choice
    try:
        tighter = apply_layouts(rf, lower)
    except CircuitsFull:
        return candidate, result, choice
    again = analyse(tighter, include_grids=True, with_fixes=False)
    return (tighter, again, lower) if meets_target(again) else (candidate, result, choice)


def settle(lay: ZoneLayout, zone: dict[str, Any]) -> ZoneLayout:
    """The layout with its dimming corrected for what the whole-room analysis found (or itself if nothing to do)."""
    reasons = zone["verdict"]["reasons"]
    if not reasons:
        return lay
    own = max(lay.ppfd.get("avg", 0.0), 1e-9)
    other = max(0.0, zone["ppfd"]["avg"] - own)  # light from the rest of the room and the finer grid
    if "dark" in reasons:
        ratio = 1 + SETTLE_STEP
    elif "hot" in reasons:
        ratio = zone["target"]["ppfd_stress"] * (1 - SETTLE_STEP) / zone["ppfd"]["max"]
    else:
        ratio = (zone["target"]["ppfd_max"] * (1 - SETTLE_STEP) - other) / own
    d = min(
        1.0,
        max(
            MIN_DIMMING,
            math.floor(lay.dimming * ratio * 100) / 100 if ratio < 1 else math.ceil(lay.dimming * ratio * 100) / 100,
        ),
    )
    if d == lay.dimming:
        return lay
    scale = d / lay.dimming
    ppfd = {k: (v * scale if k in ("avg", "min", "max") else v) for k, v in lay.ppfd.items()}
    return replace(lay, dimming=d, power_w=lay.power_w * scale, ppfd=ppfd)


def fixture_list(rf: RoomFile) -> list[dict[str, Any]]:
    types = {t.id: t for t in rf.room.fixture_types}
    return [
        {
            "name": f.id,
            "type": types[f.type_id].name,
            "x_m": f.x_m,
            "y_m": f.y_m,
            "hanging_height_m": f.hanging_height_m,
            "rotation_deg": f.rotation_deg,
            "dimming_pct": f.dimming_pct,
            "circuit": f.circuit,
        }
        for f in rf.room.fixtures
    ]


def cost_figures(rf: RoomFile, result: dict[str, Any], opts: PlanOptions) -> dict[str, Any]:
    types = {t.id: t for t in rf.room.fixture_types}
    priced = [types[f.type_id].price for f in rf.room.fixtures]
    purchase = sum(p or 0.0 for p in priced)
    energy = result["energy"]["cost_per_day"] * 365 * opts.years
    return {
        "purchase": purchase,
        "energy": energy,
        "total": purchase + energy,
        "years": opts.years,
        "currency": result["energy"]["currency"],
        "unpriced": sum(p is None for p in priced),
    }


def figures(result: dict[str, Any], full_circuits: list[dict[str, Any]]) -> dict[str, Any]:
    return {
        "zones": [
            {
                "id": z["id"],
                "name": z["name"],
                "ppfd": z["ppfd"],
                "dli": z["dli"],
                "target": z["target"],
                "share_in_band": z["share_in_band"],
                "dark_share": z["dark"]["share"],
                "verdict": z["verdict"],
            }
            for z in result["zones"]
        ],
        "energy": result["energy"],
        "heat": result["heat"],
        "circuits": result["circuits"],
        "circuits_at_full": full_circuits,
        "verdict": result["verdict"],
    }
