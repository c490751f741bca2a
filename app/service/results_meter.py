"""Typed results of the meter page's API: saved changes, readings against the model, core-area squares.

Figures in µmol m⁻² s⁻¹ (PPFD) unless a name says otherwise; the shapes are those of :mod:`app.service.meter`,
:mod:`app.service.core_areas` and the meter routes, which build them.
"""

from __future__ import annotations

from pydantic import Field

from app.room.models import ReadingSet, RoomFile
from app.service.results import OutputBasis, Result


class SavedRoomChange(Result):
    """A revision-checked save from the meter page: the room as saved and the age its figures are shown at."""

    id: str
    revision: int
    room_file: RoomFile
    output_basis: OutputBasis


class FittedFactor(Result):
    type_ids: list[str] = Field(description="The fixture types this factor scales")
    label: str
    factor: float = Field(description="Measured output / modelled output (least squares over the readings)")
    std_error: float | None = Field(description="Standard error of the factor; None with no degree of freedom")


class AppliedFactor(FittedFactor):
    type_id: str
    old_ppf_umol_s: float
    new_ppf_umol_s: float


class AppliedFit(SavedRoomChange):
    changed: list[AppliedFactor] = Field(description="Each fixture type whose PPF was scaled")


class ComparedPoint(Result):
    x_m: float
    y_m: float
    row: int = Field(description="Grid row of the reading; -1 for readings given as points")
    col: int
    raw: float = Field(description="The meter's value: µmol m⁻² s⁻¹, or lx for a lux meter")
    measured: float = Field(description="The reading as PPFD")
    model: float
    diff_umol: float = Field(description="measured - model")
    diff_pct: float | None = Field(description="100 × diff / model; None where the model is 0")
    outlier: bool


class MeterFit(Result):
    kind: str = Field(description="'room' (one factor) or 'type' (one per fixture type)")
    used_points: int
    left_out: int = Field(description="Outliers left out of the fit")
    factors: list[FittedFactor]
    residual_rms_umol: float | None = None
    dof: int | None = Field(default=None, description="Degrees of freedom of the fit")
    error: str | None = Field(description="Why no factor could be fitted; None when it was")


class ReadingsComparison(Result):
    """A reading set beside the model of the room as it is shown."""

    reading_set: ReadingSet
    zone_id: str
    points: list[ComparedPoint]
    rms_umol: float
    rms_pct: float | None
    mean_pct: float | None
    measured_avg: float
    model_avg: float
    worst_index: int | None = Field(description="Index in points of the largest |diff|")
    outlier_factor: float
    fit: MeterFit


class SquareStats(Result):
    """PPFD over one square centred on a spot; None where the square holds no map point."""

    side_m: float
    avg: float | None
    min: float | None
    max: float | None
    min_over_avg: float | None
    share_above: float | None = Field(description="Share of the square at or above the threshold, 0-1")
    area_m2: float | None = Field(default=None, description="Area of the map cells inside the square")


class CardSquare(SquareStats):
    share_of_output: float | None = Field(description="Photons landing in the square / the fixture's output")


class CardFixtureType(Result):
    id: str
    name: str
    ppf_umol_s: float
    power_w: float


class CardMap(Result):
    x_m: list[float] = Field(description="Offsets from the fixture's centre [m]")
    y_m: list[float]
    ppfd: list[list[float]]


class FixtureCard(Result):
    """Averages over nested squares under one fixture in open air (a maker's map, as it should read)."""

    fixture_type: CardFixtureType
    height_m: float
    dimming_pct: float
    threshold_umol: float
    display_units: str
    squares: list[CardSquare]
    map: CardMap
    peak_umol: float
    basis: str


class ZoneSquares(Result):
    zone_id: str
    x_m: float
    y_m: float
    threshold_umol: float
    squares: list[SquareStats]
    basis: str
