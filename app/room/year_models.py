"""Room-file parts for the crop cycle and the year: weekly steps, greenhouse glazing and place, tariff, payback."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, model_validator

from app.room.model_base import (
    Ident,
    Metres,
    PositiveMetres,
    Stage,
    Strict,
)

MAX_CYCLE_WEEKS = 104
GLAZINGS = Literal[
    "glass_single",
    "glass_diffuse",
    "acrylic_double",
    "polycarbonate_twin",
    "polycarbonate_triple",
    "film_single",
    "film_double",
    "custom",
]


class CycleStep(Strict):
    """From ``week`` on (until the next step) the zone runs these settings; ``ramp`` moves them in a straight
    line, week by week, to the next step's values."""

    week: int = Field(ge=1, le=MAX_CYCLE_WEEKS, description="First week of the step (week 1 starts the cycle).")
    stage: Stage = "vegetative"
    photoperiod_h: float = Field(gt=0, le=24)
    canopy_height_m: Metres | None = Field(default=None, description="Canopy top this week; none: the zone's own.")
    fixture_height_m: PositiveMetres | None = Field(
        default=None, description="Hanging height of the zone's fixtures; none: as they hang."
    )
    dimming_pct: float | None = Field(default=None, ge=10, le=100, description="None: as each fixture is set.")
    ramp: bool = False


class GrowCycle(Strict):
    """A zone's crop cycle week by week, from sowing or transplant to harvest."""

    weeks: int = Field(ge=1, le=MAX_CYCLE_WEEKS)
    steps: list[CycleStep] = Field(min_length=1, max_length=MAX_CYCLE_WEEKS)
    harvests: float = Field(default=1.0, gt=0, le=1000, description="Harvests the cycle yields.")
    start_month: int | None = Field(
        default=None, ge=1, le=12, description="Month the cycle starts; in a greenhouse zone it adds the sun's light."
    )

    @model_validator(mode="after")
    def _steps_in_order(self) -> GrowCycle:
        weeks = [s.week for s in self.steps]
        if weeks[0] != 1:
            raise ValueError("the first step must start at week 1")
        if any(b <= a for a, b in zip(weeks, weeks[1:], strict=False)):
            raise ValueError("steps must start at rising weeks, one step per week at most")
        if weeks[-1] > self.weeks:
            raise ValueError(f"a step starts at week {weeks[-1]}, after the cycle's {self.weeks} weeks")
        return self


class Greenhouse(Strict):
    """A zone under glazing: the sun gives part of the light, the fixtures the rest."""

    glazing: GLAZINGS = "glass_single"
    transmission: float | None = Field(
        default=None, gt=0, le=1, description="PAR transmission of the cover; none: the glazing's typical value."
    )
    place: str = Field(default="", max_length=80, description="A chosen place (sets latitude and longitude).")
    latitude_deg: float = Field(default=40.0, ge=-66, le=66, description="Polar days and nights are not modelled.")
    longitude_deg: float = Field(default=-75.0, ge=-180, le=180)
    altitude_m: float = Field(default=0.0, ge=-400, le=5000)
    sky_share: float = Field(
        default=0.6, gt=0, le=1, description="Share of the clear-sky sun that reaches the site on average (clouds)."
    )
    outdoor_dli_by_month: list[Annotated[float, Field(ge=0, le=80)]] | None = Field(
        default=None, min_length=12, max_length=12, description="Typed monthly outdoor DLI; replaces the sun model."
    )
    target_dli: float | None = Field(default=None, gt=0, le=80, description="None: the bottom of the crop's band.")


class PriceWindowIn(Strict):
    days: list[Annotated[int, Field(ge=0, le=6)]] = Field(
        default_factory=lambda: [0, 1, 2, 3, 4], min_length=1, max_length=7, description="0 = Monday ... 6 = Sunday."
    )
    start_h: float = Field(ge=0, le=24)
    end_h: float = Field(ge=0, le=24, description="At or before start_h: runs past midnight.")
    price_per_kwh: float = Field(ge=0, le=100)
    peak: bool = Field(default=False, description="A demand charge counts in these hours.")


class Tariff(Strict):
    """Time-of-use prices over the schedule's flat price (which applies outside every window)."""

    windows: list[PriceWindowIn] = Field(default_factory=list, max_length=48)
    demand_charge_per_kw: float = Field(default=0.0, ge=0, le=1000, description="Per kW of peak draw, per month.")
    demand_in_peak_only: bool = False
    lights_on_h: float = Field(default=6.0, ge=0, lt=24, description="When the lights come on now (clock time).")


class PaybackPlan(Strict):
    """Replace fixtures with another type and see when the saving pays for it."""

    variant_type_id: Ident = Field(description="The new type: in room.fixture_types or the library.")
    replace_type_id: Ident | None = Field(default=None, description="Only fixtures of this type; none: all of them.")
    price_per_fixture: float = Field(default=0.0, ge=0, le=1e6)
    install_cost: float = Field(default=0.0, ge=0, le=1e8)
    horizon_years: int = Field(default=5, ge=1, le=30)
    discount_rate: float = Field(default=0.0, ge=0, le=0.5)
    match_light: bool = Field(default=True, description="Dim the new fixtures to the light the room has now.")
    rated_hours_now: float | None = Field(
        default=None,
        gt=0,
        le=1e6,
        description="L90 hours of the present fixtures; none: the type's maintenance record.",
    )
    rated_hours_variant: float | None = Field(
        default=None, gt=0, le=1e6, description="L90 hours of the new type; none: its maintenance record."
    )
    hours_run_now: float | None = Field(
        default=None, ge=0, le=1e6, description="Hours the present fixtures have run; none: the room's recorded age."
    )
