"""Typed results of the cycle-and-year page (:func:`app.service.year.year_view`): grow cycles by week,
greenhouse months, tariff placement and payback.

A part that cannot be computed answers :class:`PartProblem` (its reason) in place of its figures. DLI in
mol m⁻² d⁻¹, PPFD in µmol m⁻² s⁻¹, energy in kWh, money in the room's currency.
"""

from __future__ import annotations

from pydantic import Field

from app.room.models import Crop, RoomFile
from app.service.results import Result


class PartProblem(Result):
    problem: str = Field(description="Why this part could not be computed")


# -- the grow cycle ----------------------------------------------------------------------------------------


class WeekBand(Result):
    dli_min: float
    dli_max: float
    ppfd_stress: float


class PhotoperiodRuleOut(Result):
    min_h: float
    max_h: float
    why: str


class WeekFigures(Result):
    ppfd_avg: float
    ppfd_max: float
    ppfd_min: float
    dli_avg: float = Field(description="The fixtures' DLI plus the sun's at the bench")
    dli_min: float


class WeekFix(Result):
    """The first change that puts the week in its band, computed again."""

    kind: str = Field(description="dimming, photoperiod or height")
    photoperiod_h: float
    dimming_pct: float | None = Field(description="None: each fixture as set")
    fixture_height_m: float | None = Field(description="None: as hung")
    verified: WeekFigures


class CycleWeek(WeekFigures):
    week: int
    stage: str
    photoperiod_h: float
    canopy_height_m: float
    fixture_height_m: float | None = Field(description="None: as hung")
    dimming_pct: float | None = Field(description="None: each fixture as set")
    dli_natural: float = Field(description="The sun's DLI at the bench (greenhouse zones with a start month)")
    band: WeekBand
    status: list[str] = Field(description="below, above and/or stress; empty when the week is in its band")
    power_w: float
    canopy_flux_umol_s: float
    photoperiod_ok: bool
    photoperiod_rule: PhotoperiodRuleOut
    fix: WeekFix | None


class CycleTotals(Result):
    weeks: int
    kwh: float
    cost: float
    heat_kwh: float
    heat_btu: float
    canopy_mol: float
    canopy_mol_per_m2: float
    cost_per_mol: float
    kwh_per_m2: float
    cost_per_m2: float
    cost_per_harvest: float
    kwh_per_harvest: float
    natural_mol: float
    mean_price_per_kwh: float
    harvests: float
    area_m2: float


class CycleReport(Result):
    zone_id: str
    zone_name: str
    crop_name: str
    weeks: list[CycleWeek]
    totals: CycleTotals
    flagged: int = Field(description="Weeks outside their band")
    fixed: int = Field(description="Flagged weeks with a verified fix")
    analyses: int
    fixtures: list[str]


# -- the greenhouse ----------------------------------------------------------------------------------------


class GreenhouseReport(Result):
    """Natural, supplemental and target DLI by month; the fixtures' hours or dimming; energy and cost."""

    zone_id: str
    zone_name: str
    crop_name: str
    months: list[str]
    outdoor_clear_sky_mj_m2_d: list[float] | None = Field(description="None when the grower typed monthly DLI")
    outdoor_dli: list[float]
    inside_dli: list[float]
    transmission: float
    transmission_note: str
    source: str
    target_dli: float
    target_note: str
    supplemental_need_dli: list[float]
    supplemental_dli: list[float]
    fixture_ppfd_avg: float
    hours_per_day: list[float]
    max_hours: float
    max_hours_why: str
    dimming_at_photoperiod_pct: list[float]
    photoperiod_h: float
    power_w: float
    kwh_by_month: list[float]
    cost_by_month: list[float]
    kwh_year: float
    cost_year: float
    short_months: list[str]
    currency: str


# -- the tariff --------------------------------------------------------------------------------------------


class LightPeriod(Result):
    lights_on_h: float
    lights_off_h: float
    dark_h: float
    energy_cost_per_month: float
    demand_cost_per_month: float
    cost_per_month: float


class TariffZone(Result):
    zone_id: str
    zone_name: str
    power_w: float
    photoperiod_h: float
    min_dark_h: float
    why: str
    lights_on_now_h: float
    cost_now_per_month: float
    problem: str | None
    best: LightPeriod | None = Field(description="The cheapest light period; None when there is none")
    saving_per_month: float
    saving_per_year: float


class TariffReport(Result):
    zones: list[TariffZone]
    saving_per_month: float
    saving_per_year: float
    currency: str
    price_hours: list[float] = Field(description="Start of each price slot of a day [h]")
    price_by_day: list[list[float]] = Field(description="Monday ... Sunday, price per kWh in each slot")
    demand_charge_per_kw: float
    demand_in_peak_only: bool


# -- payback -----------------------------------------------------------------------------------------------


class YearlyRun(Result):
    power_w: float
    hours_per_day: float
    kwh_year: float
    cost_year: float
    demand_year: float
    canopy_flux_umol_s: float
    mol_year_first: float
    mol_by_year: list[float]
    cost_per_mol: float | None = Field(description="None when no photon is delivered")


class VariantRun(YearlyRun):
    dimming_pct: list[float] = Field(description="Dimming of the new fixtures (matched light)")


class PaybackReport(Result):
    problem: None = None
    variant_type_name: str
    replaced: list[str]
    purchase_cost: float
    now: YearlyRun
    variant: VariantRun
    maintenance_now: str
    maintenance_variant: str
    hours_run_now: float
    match_light: bool
    horizon_years: int
    discount_rate: float
    years: float | None = Field(description="Payback time; None if the horizon ends first")
    simple_years: float | None = Field(description="Purchase ÷ yearly saving; None without a saving")
    yearly_saving: float
    cumulative: list[float] = Field(description="Balance at the end of each year")
    net_at_horizon: float
    currency: str


# -- the page ----------------------------------------------------------------------------------------------


class Glazing(Result):
    transmission: float
    note: str


class YearFixtureType(Result):
    id: str
    name: str
    ppf_umol_s: float
    power_w: float


class YearView(Result):
    """The cycle-and-year page's data, as the page and ``GET /api/rooms/{room_id}/year`` give it."""

    title: str
    room_id: str
    room_file: RoomFile
    display_units: str
    area_unit: str
    per_area_factor: float = Field(description="m² per shown area unit")
    currency: str
    cycles: list[CycleReport | PartProblem]
    greenhouses: list[GreenhouseReport | PartProblem]
    tariff: TariffReport | PartProblem | None
    payback: PaybackReport | PartProblem | None
    cautions: list[str]
    crops: dict[str, Crop]
    glazings: dict[str, Glazing]
    places: dict[str, list[float]] = Field(description="Place name -> latitude, longitude [°], altitude [m]")
    fixture_types: list[YearFixtureType]
