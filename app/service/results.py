"""Typed results of the analysis, with units: the response models of the API and the schema in /openapi.json.

The analysis computes on unrounded numpy arrays; only the grids handed to the browser are rounded (PPFD to
0.1 µmol m⁻² s⁻¹, DLI to 0.01 mol m⁻² d⁻¹), at this display edge. Extra keys are allowed so a service can add a
figure before its model here names it; every figure a page reads should be named here. Written as JSON, a
non-finite float (an undefined figure, such as lumens per µmol of a spectrum with no visible light) becomes null.
The planner's answers are in :mod:`app.service.results_planner`, the meter page's in
:mod:`app.service.results_meter`, the photometry and library checks' in :mod:`app.service.results_library` and
the year page's in :mod:`app.service.results_year`.
"""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict, Field

from app.room.models import Fixture, FixtureType


class Result(BaseModel):
    # ser_json_inf_nan="null" is pydantic's default, stated here because the API relies on it (app.web.json_edge).
    model_config = ConfigDict(extra="allow", ser_json_inf_nan="null")


class AreaStats(Result):
    """Area-weighted statistics of a map (PPFD in µmol m⁻² s⁻¹ or DLI in mol m⁻² d⁻¹)."""

    avg: float
    min: float
    max: float
    min_over_avg: float = Field(description="Uniformity U0 = E_min / E_avg (EN 12464-1 definition)")
    min_over_max: float
    max_over_avg: float
    cv: float = Field(description="Coefficient of variation, area-weighted")


class ZoneTarget(Result):
    dli_min: float = Field(description="Bottom of the crop's DLI band [mol m⁻² d⁻¹]")
    dli_max: float = Field(description="Top of the crop's DLI band [mol m⁻² d⁻¹]")
    ppfd_min: float = Field(description="PPFD giving dli_min over the zone's photoperiod [µmol m⁻² s⁻¹]")
    ppfd_max: float = Field(description="PPFD giving dli_max over the zone's photoperiod [µmol m⁻² s⁻¹]")
    ppfd_stress: float = Field(description="PPFD above which the crop's leaves are stressed [µmol m⁻² s⁻¹]")
    source: str = Field(description="Where the band comes from (publication, or 'from memory')")


class AreaShare(Result):
    area_m2: float
    share: float = Field(description="Share of the zone's area, 0-1")
    outline: list[list[float]] = Field(description="Closed polylines [x0, y0, x1, y1, ...] around the area [m]")


class Allowance(Result):
    dark_allowance: float = Field(description="Share of a zone's area allowed below the DLI band, 0-1")
    is_default: bool
    source: str


class RoomVerdict(Allowance):
    meets_target: bool = Field(description="Every zone meets its target and every circuit is within its limit")


class ZoneVerdict(Result):
    meets_target: bool
    reasons: list[str] = Field(description="dark, hot and/or over")
    dark_allowance: float


class ZoneGrid(Result):
    x_m: list[float]
    y_m: list[float]
    spacing_m: float
    ppfd: list[list[float]] = Field(description="Rows front to back, rounded to 0.1 µmol m⁻² s⁻¹ for display")
    dli: list[list[float]] = Field(description="Rows front to back, rounded to 0.01 mol m⁻² d⁻¹ for display")


class FixFigures(Result):
    """What the whole room's analysis gave with the fix applied (it is offered only when the zone then passes)."""

    zone_id: str
    ppfd_avg: float
    ppfd_max: float
    ppfd_stress: float
    dli_avg: float
    dli_band: list[float] = Field(description="Bottom and top of the crop's DLI band [mol m⁻² d⁻¹]")
    dark_share: float
    photoperiod_h: float
    power_w: float
    power_change_w: float


class VerifiedFix(Result):
    """A structured, machine-applicable change with absolute settings (app.service.advice.apply_fix)."""

    action: str = Field(description="set_photoperiod, set_dimming, set_height or add_fixtures")
    kind: str = Field(description="photoperiod, dimming, height or layout")
    verified: bool
    result: FixFigures
    text: str = Field(description="The change in words with the figures the re-analysis gave")
    zone: str | None = Field(default=None, description="The zone (set_photoperiod, add_fixtures)")
    hours: float | None = Field(default=None, description="The new photoperiod [h] (set_photoperiod)")
    fixtures: dict[str, float] | list[Fixture] | None = Field(
        default=None,
        description="Fixture id -> dimming [%] or hanging height [m]; the new fixtures for add_fixtures",
    )
    remove: list[str] | None = Field(default=None, description="Fixture ids taken away (add_fixtures)")
    fixture_types: list[FixtureType] | None = Field(default=None, description="Library types the room gains")
    summary: str | None = None
    count: int | None = Field(default=None, description="Fixtures of the new layout (add_fixtures)")
    change_in_count: int | None = None


class ZoneResult(Result):
    id: str
    name: str
    crop_id: str
    crop_name: str
    stage: str
    canopy_height_m: float
    photoperiod_h: float
    rect: list[float] = Field(description="x_m, y_m, width_m, length_m of the zone")
    target: ZoneTarget
    ppfd: AreaStats
    dli: AreaStats
    share_in_band: float
    dark: AreaShare
    hot: AreaShare
    photoperiod_for_target_h: float | None
    dimming_scale_for_target_mid: float | None
    canopy_flux_umol_s: float
    direct_share: float
    reflected_share: float
    area_m2: float
    grid: ZoneGrid | None = None
    verdict: ZoneVerdict
    fixes: list[VerifiedFix] | None = Field(default=None, description="Verified changes that make it meet its target")
    no_fix_because: list[str] | None = Field(default=None, description="Why each other kind of change cannot help")


class FixtureResult(Result):
    id: str
    type_id: str
    type_name: str
    on: bool
    ppf_umol_s: float = Field(description="PPF at the set dimming [µmol s⁻¹]")
    power_w: float = Field(description="Input power at the set dimming [W]")
    dimming_pct: float
    circuit: str
    hours_per_day: float
    weight_kg: float


class Energy(Result):
    power_w: float
    kwh_per_day: float
    kwh_per_month: float
    cost_per_day: float
    cost_per_month: float
    currency: str
    price_per_kwh: float
    layout_umol_per_j: float = Field(description="Emitted PPF per input watt of the whole layout [µmol J⁻¹]")
    canopy_share_of_emitted: float
    canopy_mol_per_kwh: float
    month_days: float


class Heat(Result):
    w: float
    btu_h: float = Field(description="1 W = 3.41214 BTU/h (NIST SP 811)")


class CircuitResult(Result):
    name: str
    breaker_a: float
    load_w: float
    current_a: float
    continuous_limit_a: float = Field(description="80 % of the breaker rating (continuous-load planning rule)")
    limit_w: float
    share_of_limit: float
    ok: bool


class WarningResult(Result):
    code: str
    severity: str = Field(description="info, warning or error")
    message: str
    fix: str = Field(description="What would solve it, in words (with the first verified change when there is one)")
    fixes: list[VerifiedFix] | None = Field(default=None, description="The verified changes behind ``fix``")
    zone_id: str | None = None
    fixture_id: str | None = None
    where: list[float] | None = Field(default=None, description="x0, y0, x1, y1 of the place on the plan [m]")


class RegionResult(Result):
    name: str
    zone_id: str
    ppfd: AreaStats
    area_m2: float


class Budget(Result):
    """Photon budget from the seeded ray tally, independent of the maps [µmol s⁻¹]."""

    emitted_umol_s: float
    zones_umol_s: dict[str, float]
    floor_umol_s: float
    obstacles_umol_s: float
    walls_absorbed_umol_s: float
    escaped_umol_s: float
    unresolved_umol_s: float
    accounted_umol_s: float


class RoomHeader(Result):
    name: str
    revision: int
    display_units: str
    width_m: float
    length_m: float
    height_m: float


class TypeOutputBasis(Result):
    """One fixture type's share of its rated output at the shown age (IES TM-21 exponential × dirt factor)."""

    type_id: str
    name: str
    age_h: float | None = Field(description="Hours at which the output is shown; None at installation")
    maintenance: float = Field(description="Share of initial output by the maintenance projection, 0-1")
    dirt_factor: float
    factor: float = Field(description="maintenance × dirt factor: the flux used for every figure")
    source: str = Field(description="Where the maintenance comes from, in words")
    beyond_limit: bool = Field(description="The age is beyond six times the test duration (IES TM-21)")
    limit_h: float | None = Field(description="Projection limit [h]; None when no test duration is known")
    l70_h: float | None = Field(description="Reported L70 [h]: the projection limit when capped")
    l70_capped: bool


class OutputBasis(Result):
    shown_at: str = Field(description="recorded_age, installation or chosen_age")
    age_h: float | None
    words: str
    types: list[TypeOutputBasis]


class Analysis(Result):
    """The whole analysis of a room, as every page, the API and the CLI show it."""

    room: RoomHeader
    zones: list[ZoneResult]
    fixtures: list[FixtureResult]
    fixture_zones: dict[str, str | None] = Field(
        description="Fixture id -> id of the zone it lights (the one layout rule, app.room.layout)"
    )
    energy: Energy
    heat: Heat
    circuits: list[CircuitResult]
    emitted_umol_s: float
    regions: list[RegionResult]
    warnings: list[WarningResult]
    verdict: RoomVerdict
    cautions: list[str]
    compute_ms: float = Field(description="Engine time [ms]")
    elapsed_ms: float = Field(description="Whole analysis, engine included [ms]")
    budget: Budget | None = None
    output_basis: OutputBasis | None = Field(default=None, description="At which age the output is shown")


class SpectrumFigures(Result):
    """Photon shares by band, photon-efficacy ceilings (Planck relation) and photometric conversions."""

    blue_400_500: float
    green_500_600: float
    red_600_700: float
    far_red_700_750: float
    ceiling_umol_j: float = Field(description="PPF per watt of a perfectly efficient source of this spectrum")
    ceiling_400_750_umol_j: float
    umol_per_lumen: float | None = Field(description="None (undefined) for a spectrum with no visible light")
    ppfd_per_klux: float | None
    lux_per_ppfd: float | None = Field(description="Lux per µmol m⁻² s⁻¹ (Thimijan & Heins 1983 method)")


class MapFit(Result):
    ppf_umol_s: float
    exponent: float = Field(description="n of the fitted cosⁿ beam (1: Lambertian)")
    beam_angle_deg: float
    side_m: float = Field(description="Side of the fitted square emitter [m]")
    rms_error: float = Field(description="RMS residual relative to the map's mean")
    max_abs_error_umol_m2_s: float
    residuals: list[list[float]]
    at_bound: list[str] = Field(
        default_factory=list,
        description="Fitted figures that stopped at the edge of what the fit tries (widest_beam, narrowest_beam, "
        "largest_emitter): the fit is then not a trustworthy fixture",
    )


class Finding(Result):
    """A plausibility finding on a fixture's figures or a published map."""

    level: str = Field(description="info, suspicious or impossible")
    code: str
    message: str


class MapPrediction(Result):
    """The fitted fixture's map at another hanging height [µmol m⁻² s⁻¹]."""

    height_m: float
    avg: float
    max: float
    centre: float
    map: list[list[float]]


class MapFitResult(Result):
    fit: MapFit
    predictions: list[MapPrediction]
    findings: list[Finding]
