"""Check my setup: does the room as it is meet each zone's target, and if not, the smallest checked changes.

Settings first (photoperiod, one dimming, one hanging height: :mod:`app.service.advice`); only when none of
them works, a new layout for that zone from the planner's search, of the type already there and then of any
library type. Every change offered has been applied and the whole room analysed again.
"""

from __future__ import annotations

import threading
from typing import Any

from app.room import layout
from app.room.library import fixture_library
from app.room.models import RoomFile
from app.service.advice import describe, verify
from app.service.analysis import analyse
from app.service.planner.apply import CircuitsFull, apply_layouts
from app.service.planner.options import PlanOptions
from app.service.planner.search import Cancelled, zone_search
from app.service.verdict import allowance_info

QUICK = {"heights": 3, "max_fixtures_per_zone": 16}


def stop_if(cancel: threading.Event) -> None:
    """Raise :class:`Cancelled` when Cancel was pressed: called before each trial (each analysis of a change)."""
    if cancel.is_set():
        raise Cancelled


def layout_fix(rf: RoomFile, base: dict[str, Any], zone, type_ids, label: str, opts: PlanOptions, cancel):
    """The fewest-fixture layout of these types that, hung in place of the zone's fixtures, passes the check."""
    room = rf.room
    lib = fixture_library()
    own = {t.id: t for t in room.fixture_types}
    types = [own.get(i) or lib[i] for i in type_ids]
    search_opts = PlanOptions(
        type_ids=tuple(type_ids),
        objective="count",
        min_clearance_m=opts.min_clearance_m,
        min_gap_m=opts.min_gap_m,
        **QUICK,
    )
    mine = layout.fixtures_lighting(room.zones, room.fixtures, zone.id)
    for lay in zone_search(rf, zone, types, search_opts, lambda *_: None, cancel)[:2]:
        stop_if(cancel)
        try:
            changed = apply_layouts(rf, [lay])
        except CircuitsFull:
            continue
        new_ids = {f.id for f in changed.room.fixtures} - {f.id for f in room.fixtures}
        fix = {
            "action": "add_fixtures",
            "zone": zone.id,
            "remove": [f.id for f in mine],
            "fixtures": [f.model_dump(mode="json") for f in changed.room.fixtures if f.id in new_ids],
            "fixture_types": [t.model_dump(mode="json") for t in types if t.id == lay.type_id and t.id not in own],
            "summary": f"Re-hang {zone.name} with {label}: {lay.describe().split(': ', 1)[1]}",
        }
        fig = verify(rf, base, fix, zone.id)
        if fig is not None:
            return {
                **fix,
                "kind": "layout",
                "verified": True,
                "result": fig,
                "text": describe(fix, fig, zone.name),
                "count": lay.count,
                "change_in_count": lay.count - len(mine),
            }
    return None


def check_setup(rf: RoomFile, opts: PlanOptions | None = None, progress=None, cancel=None) -> dict[str, Any]:
    """Per zone: meets the target or not, with the checked changes that make it meet it."""
    opts = opts or PlanOptions()
    cancel = cancel or threading.Event()
    stop_if(cancel)
    base = analyse(rf, include_grids=False, with_fixes="all", before_trial=lambda: stop_if(cancel))
    room = rf.room
    out = []
    for i, (z, a) in enumerate(zip(room.zones, base["zones"], strict=True)):
        stop_if(cancel)
        if progress:
            progress(i / len(room.zones), z.name, 0, None)
        fixes = list(a.get("fixes", []))
        mine = layout.fixtures_lighting(room.zones, room.fixtures, z.id)
        if not a["verdict"]["meets_target"] and not fixes:
            same = list(dict.fromkeys(f.type_id for f in mine)) or [t.id for t in room.fixture_types][:1]
            fix = layout_fix(rf, base, z, same, "the same type", opts, cancel) if same else None
            if fix is None:
                fix = layout_fix(rf, base, z, list(fixture_library()), "a library type", opts, cancel)
            if fix is not None:
                fixes.append(fix)
        out.append(
            {
                "zone_id": z.id,
                "name": z.name,
                "meets_target": a["verdict"]["meets_target"],
                "reasons": a["verdict"]["reasons"],
                "dark_share": a["dark"]["share"],
                "hot_share": a["hot"]["share"],
                "dli_avg": a["dli"]["avg"],
                "band": [a["target"]["dli_min"], a["target"]["dli_max"]],
                "fixtures": [f.id for f in mine],
                "fixes": fixes,
                "no_fix_because": a.get("no_fix_because", []),
            }
        )
    if progress:
        progress(1.0, "", len(out), None)
    return {
        "zones": out,
        "meets_target": base["verdict"]["meets_target"],
        "verdict": allowance_info(room),
        "circuits": base["circuits"],
        "revision": rf.revision,
    }
