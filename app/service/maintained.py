"""Maintained output: each fixture type's share of its rated output at the age the figures are shown.

One factor per fixture type, maintenance at the shown age (IES TM-21 exponential,
:mod:`app.engine.maintenance`) times the room's dirt factor. The scene builder
multiplies every emitter's flux by it, so the map, DLI, warnings, planner and
sheet all show the same output. Shown at installation the factor is 1.
"""

from __future__ import annotations

from typing import Any

from app.engine import maintenance as mt
from app.room.models import FixtureType, Room

L70_PERCENT = 70.0  # the end of useful life most often quoted (L70)


def projection_for(t: FixtureType) -> mt.Projection | None:
    """The type's maintenance curve, or None when it records none (output does not fall)."""
    m = t.maintenance
    if m is None:
        return None
    if m.rated_percent is not None:
        return mt.from_rated_point(m.rated_percent, m.rated_hours_h, m.test_duration_h)
    return mt.fit_measured([p.hours_h for p in m.points], [p.share for p in m.points], strict_tm21=False)


def shown_age_h(room: Room) -> float | None:
    """Hours at which figures are shown; None at installation (new and clean)."""
    a = room.output_age
    if a.shown_at == "installation":
        return None
    if a.shown_at == "chosen_age":
        return a.chosen_age_h
    return a.hours_in_service_h


def type_basis(room: Room, t: FixtureType, age_h: float | None) -> dict[str, Any]:
    """The factor of one type and where it comes from, in words."""
    out: dict[str, Any] = {"type_id": t.id, "name": t.name, "age_h": age_h, "maintenance": 1.0, "dirt_factor": 1.0}
    out.update(factor=1.0, source="", beyond_limit=False, limit_h=None, l70_h=None, l70_capped=False)
    try:
        proj = projection_for(t)
    except mt.MaintenanceError as exc:
        out["source"] = f"maintenance not projected: {exc}"
        proj = None
    if proj is not None:
        out["source"] = proj.source + (f" ({t.maintenance.source})" if t.maintenance.source else "")
        out["limit_h"] = proj.limit_h if proj.limit_h != float("inf") else None
        out["l70_h"], out["l70_capped"] = proj.reported_lp_h(L70_PERCENT)
        if out["l70_h"] == float("inf"):
            out["l70_h"] = None
    elif not out["source"]:
        out["source"] = "no output maintenance recorded for this type: output taken as constant"
    if age_h is None:
        return out
    share = float(proj.maintenance(age_h)) if proj else 1.0
    dirt = room.output_age.dirt_factor
    out.update(maintenance=share, dirt_factor=dirt, factor=share * dirt)
    out["beyond_limit"] = bool(proj and proj.beyond_limit(age_h))
    return out


def output_basis(room: Room) -> dict[str, Any]:
    """At which age the room's figures are shown, and each fixture type's factor."""
    age = shown_age_h(room)
    types = [type_basis(room, t, age) for t in room.fixture_types]
    if age is None:
        words = "at installation (new fixtures, clean lenses)"
    else:
        words = f"maintained at {age:,.0f} h in service, dirt factor {room.output_age.dirt_factor:g}"
    return {"shown_at": room.output_age.shown_at, "age_h": age, "words": words, "types": types}


def output_factors(room: Room) -> dict[str, float]:
    """Fixture type id -> share of rated output at the shown age (maintenance × dirt)."""
    age = shown_age_h(room)
    if age is None:
        return {t.id: 1.0 for t in room.fixture_types}
    return {t.id: type_basis(room, t, age)["factor"] for t in room.fixture_types}


def factor_for(room: Room, t: FixtureType) -> float:
    """One type's factor in this room at the shown age, also for a library type the room does not hold yet."""
    age = shown_age_h(room)
    return 1.0 if age is None else type_basis(room, t, age)["factor"]
