"""One verdict for "does a zone meet its target": used by the analysis warnings, check-my-setup and the planner.

A zone **meets its target** when

* at most the room's dark-area allowance of its area gets less than the bottom of the crop's DLI band,
* no point is above the crop's stress PPFD, and
* its area-weighted average DLI is not above the top of the band.

The allowance is Leafcast's own default (:data:`DEFAULT_DARK_ALLOWANCE`, 10 % of the zone's area; no
horticultural pass mark is published, see Ashdown & Descoteaux (2022), "Lighting uniformity in horticulture"),
and a room can set its own in the optional room-file field ``room.dark_allowance``. A room meets its target when
every zone does and no circuit is over its continuous limit.
"""

from __future__ import annotations

from typing import Any

DEFAULT_DARK_ALLOWANCE = 0.10  # Leafcast's own default share of a zone allowed below the band (no source)
ALLOWANCE_SOURCE = "Leafcast's own default (no published pass mark)"
TOLERANCE = 1e-9


def dark_allowance(room: Any) -> float:
    """The share of a zone's area allowed below the DLI band in this room (0-1)."""
    value = getattr(room, "dark_allowance", None)
    return DEFAULT_DARK_ALLOWANCE if value is None else float(value)


def allowance_info(room: Any) -> dict[str, Any]:
    """The allowance with its value and where it comes from, for every page that shows a verdict."""
    own = getattr(room, "dark_allowance", None)
    return {
        "dark_allowance": dark_allowance(room),
        "is_default": own is None,
        "source": ALLOWANCE_SOURCE if own is None else "set for this room",
    }


def zone_verdict(dark_share: float, hot_share: float, dli_avg: float, dli_max: float, allowance: float) -> dict:
    """Whether one zone meets its target, with the reasons it does not."""
    reasons = []
    if dark_share > allowance + TOLERANCE:
        reasons.append("dark")
    if hot_share > 0:
        reasons.append("hot")
    if dli_avg > dli_max + TOLERANCE:
        reasons.append("over")
    return {"meets_target": not reasons, "reasons": reasons, "dark_allowance": allowance}


def zone_result_verdict(zone: dict[str, Any], allowance: float) -> dict:
    """The verdict of one zone of an analysis result."""
    return zone_verdict(zone["dark"]["share"], zone["hot"]["share"], zone["dli"]["avg"], zone["target"]["dli_max"],
                        allowance)


def meets_target(result: dict[str, Any]) -> bool:
    """Every zone of an analysis result meets its target and every circuit is within its limit."""
    if any(not c["ok"] for c in result["circuits"]):
        return False
    allowance = result.get("verdict", {}).get("dark_allowance", DEFAULT_DARK_ALLOWANCE)
    return all(zone_result_verdict(z, allowance)["meets_target"] for z in result["zones"])
