"""Typed results of the planner, check-my-setup and the height and dimming curves.

The shapes are those :mod:`app.service.planner` builds (``plan``, ``check_setup``, ``curves``, the jobs' progress);
PPFD in µmol m⁻² s⁻¹, DLI in mol m⁻² d⁻¹, power in W.
"""

from __future__ import annotations

from pydantic import Field

from app.room.models import RoomFile
from app.service.results import (
    Allowance,
    AreaStats,
    CircuitResult,
    Energy,
    Heat,
    Result,
    RoomVerdict,
    VerifiedFix,
    ZoneTarget,
    ZoneVerdict,
)

# -- check my setup ----------------------------------------------------------------------------------------


class ZoneCheck(Result):
    """One zone as it is: meets its target or not, and the verified changes that make it."""

    zone_id: str
    name: str
    meets_target: bool
    reasons: list[str] = Field(description="dark, hot and/or over")
    dark_share: float
    hot_share: float
    dli_avg: float
    band: list[float] = Field(description="Bottom and top of the crop's DLI band")
    fixtures: list[str] = Field(description="Ids of the fixtures that light the zone")
    fixes: list[VerifiedFix]
    no_fix_because: list[str]


class SetupCheck(Result):
    zones: list[ZoneCheck]
    meets_target: bool
    verdict: Allowance
    circuits: list[CircuitResult]
    revision: int


# -- curves ------------------------------------------------------------------------------------------------


class HeightPoint(Result):
    above_canopy_m: float
    avg: float
    max: float
    min: float


class DimmingPoint(Result):
    dimming_pct: float
    avg: float
    max: float
    min: float


class Curves(Result):
    """Average, peak and lowest PPFD on a zone against its fixtures' hanging height and dimming."""

    zone_id: str
    zone_name: str
    fixtures: list[str]
    heights: list[HeightPoint]
    dimming: list[DimmingPoint]
    band_ppfd: list[float] = Field(description="PPFD of the DLI band's bottom and top over the photoperiod")
    stress_ppfd: float
    current_above_canopy_m: float
    current_dimming_pct: float
    fixtures_off: list[str]


# -- the planner -------------------------------------------------------------------------------------------


class LayoutSummary(Result):
    """One zone's layout in a proposal (or the best found so far)."""

    zone: str
    text: str
    type: str
    count: int
    power_w: float
    dimming_pct: int


class ProposalZone(Result):
    id: str
    name: str
    ppfd: AreaStats
    dli: AreaStats
    target: ZoneTarget
    share_in_band: float
    dark_share: float
    verdict: ZoneVerdict


class CircuitAtFull(Result):
    name: str
    breaker_a: float
    full_load_w: float
    full_current_a: float
    continuous_limit_a: float
    ok: bool
    fixtures: list[str]


class ProposalFigures(Result):
    zones: list[ProposalZone]
    energy: Energy
    heat: Heat
    circuits: list[CircuitResult]
    circuits_at_full: list[CircuitAtFull] = Field(description="Every fixture at 100 %: what the dimmer can reach")
    verdict: RoomVerdict


class ProposedFixture(Result):
    name: str
    type: str
    x_m: float
    y_m: float
    hanging_height_m: float
    rotation_deg: float
    dimming_pct: float
    circuit: str


class ProposalCost(Result):
    purchase: float
    energy: float = Field(description="Electricity over `years`")
    total: float
    years: float
    currency: str
    unpriced: int = Field(description="Fixtures without a price (counted as 0)")


class Proposal(Result):
    """A whole-room layout, analysed again whole on the room's grid: every zone meets its target."""

    layouts: list[str]
    zones: list[LayoutSummary]
    room_file: RoomFile
    figures: ProposalFigures
    fixtures: int
    fixture_list: list[ProposedFixture]
    cost: ProposalCost


class PlanResult(Result):
    proposals: list[Proposal]
    unmet_zones: list[str] = Field(description="Zones no layout of these types fits")
    not_offered: list[str] = Field(description="Why combinations tried were not offered")
    verdict: Allowance
    revision: int
    elapsed_s: float
    first_feasible_s: float | None
    searched: dict[str, int] = Field(description="Zone name -> layouts found for it")


class BestSoFar(Result):
    """The best found so far: one zone's layout while zones are searched, then a whole-room proposal."""

    text: str
    power_w: float
    count: int
    zone: str | None = None
    type: str | None = None
    dimming_pct: int | None = None


class JobStarted(Result):
    job_id: str
    revision: int = Field(description="Revision of the room the job started from (Apply saves against it)")
    queue_position: int | None = None


class PlannerJob(Result):
    """A background planner or check-my-setup job: progress, the best found so far, the final result."""

    id: str
    kind: str = Field(description="'plan' or 'check'")
    room_id: str
    revision: int
    progress: float = Field(description="Share of the search done, 0-1")
    zone: str | None = None
    found: int | None = None
    best_so_far: BestSoFar | None = None
    done: bool
    cancelled: bool
    error: str | None = None
    result: PlanResult | SetupCheck | None = Field(default=None, description="The plan or the check, once done")
    queue_position: int | None = Field(default=None, description="Place in the queue while waiting to start")
