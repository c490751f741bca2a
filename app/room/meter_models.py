"""Room-file parts for meter readings and maintained output (IES TM-21): readings, maintenance, age."""

from __future__ import annotations

from datetime import date
from typing import Annotated, Literal

from pydantic import Field, model_validator

from app.room import limits
from app.room.model_base import (
    Ident,
    Metres,
    PositiveMetres,
    Strict,
)


class MaintenancePoint(Strict):
    hours_h: float = Field(ge=0, le=500_000, description="Hours of operation.")
    share: float = Field(gt=0, le=1.2, description="Output as a share of the initial output (1 = 100 %).")


class OutputMaintenance(Strict):
    """How a fixture type's output falls with hours: a rated point (L90 at 36,000 h) or measured points.

    Projected by the exponential form of IES TM-21 (see :mod:`app.engine.maintenance`).
    """

    rated_percent: float | None = Field(default=None, gt=0, lt=100, description="p of the rated Lp (90 for L90).")
    rated_hours_h: float | None = Field(default=None, gt=0, le=500_000, description="Hours of the rated Lp.")
    test_duration_h: float | None = Field(
        default=None, gt=0, le=200_000, description="Test behind the rating, when known (projection held at 6 ×)."
    )
    points: list[MaintenancePoint] = Field(default_factory=list, max_length=200)
    source: str = Field(default="", max_length=300, description="Where the figures come from.")

    @model_validator(mode="after")
    def _rated_or_points(self) -> OutputMaintenance:
        rated = (self.rated_percent is None, self.rated_hours_h is None)
        if rated[0] != rated[1]:
            raise ValueError("a rated maintenance needs both rated_percent and rated_hours_h (e.g. 90 and 36000)")
        if rated == (True, True) and len(self.points) < 2:
            raise ValueError("give a rated point (rated_percent and rated_hours_h) or at least two measured points")
        if rated == (False, False) and self.points:
            raise ValueError("give either a rated point or measured points, not both")
        if self.points and len({p.hours_h for p in self.points if p.hours_h > 0}) < 2:
            raise ValueError("measured maintenance needs points at two or more different hours after 0 h")
        return self


class OutputAge(Strict):
    """The fixtures' age and dirt, and at which age figures are shown."""

    hours_in_service_h: float | None = Field(
        default=None, ge=0, le=500_000, description="Hours the fixtures have run so far; none: new."
    )
    dirt_factor: float = Field(default=1.0, ge=0.5, le=1.0, description="Share of output through dust on lenses.")
    shown_at: Literal["recorded_age", "installation", "chosen_age"] = Field(
        default="recorded_age",
        description="recorded_age: at hours_in_service_h (installation when none); chosen_age: at chosen_age_h.",
    )
    chosen_age_h: float | None = Field(default=None, ge=0, le=500_000)

    @model_validator(mode="after")
    def _chosen_age_given(self) -> OutputAge:
        if self.shown_at == "chosen_age" and self.chosen_age_h is None:
            raise ValueError("shown_at 'chosen_age' needs chosen_age_h")
        return self


ReadingValue = Annotated[float, Field(ge=0, le=limits.MAX_READING_VALUE)]


class ReadingPoint(Strict):
    x_m: Metres
    y_m: Metres
    value: ReadingValue = Field(description="Meter reading: µmol m⁻² s⁻¹ (quantum) or lx (lux meter).")


class ReadingGrid(Strict):
    """Readings taken on a grid: row r, column c at (origin_x + c·spacing_x, origin_y + r·spacing_y)."""

    origin_x_m: Metres
    origin_y_m: Metres
    spacing_x_m: PositiveMetres
    spacing_y_m: PositiveMetres
    values: list[list[ReadingValue | None]] = Field(
        min_length=1, max_length=limits.MAX_READING_ROWS, description="Rows front to back; None: not taken."
    )

    @model_validator(mode="after")
    def _rectangular(self) -> ReadingGrid:
        widths = {len(row) for row in self.values}
        if len(widths) != 1 or 0 in widths:
            raise ValueError(f"every row must have the same number of readings (rows have {sorted(widths)})")
        if max(widths) > limits.MAX_READING_ROWS:
            raise ValueError(f"at most {limits.MAX_READING_ROWS} readings per row")
        return self


class ReadingSet(Strict):
    """Meter readings over one zone on one day."""

    id: Ident
    zone_id: Ident
    taken_on: date
    sensor: Literal["quantum", "lux"] = "quantum"
    lux_per_ppfd: float | None = Field(
        default=None, gt=1, le=200, description="Lux per µmol m⁻² s⁻¹ of the light measured (lux meters)."
    )
    lux_factor_source: str = Field(default="", max_length=200)
    dimming_pct: float | None = Field(
        default=None, ge=10, le=100, description="Dimming of every fixture when read; none: as in the room now."
    )
    grid: ReadingGrid | None = None
    points: list[ReadingPoint] = Field(default_factory=list, max_length=limits.MAX_READING_POINTS)
    notes: str = Field(default="", max_length=500)

    @model_validator(mode="after")
    def _one_layout(self) -> ReadingSet:
        if (self.grid is None) == (not self.points):
            raise ValueError("give the readings either as a grid or as points (exactly one of the two)")
        if self.sensor == "lux" and self.lux_per_ppfd is None:
            raise ValueError("lux readings need lux_per_ppfd, the spectrum's lux per µmol m⁻² s⁻¹")
        if self.sensor == "quantum":
            values = [p.value for p in self.points] if self.points else [v for r in self.grid.values for v in r]
            top = max((v for v in values if v is not None), default=0.0)
            if top > limits.MAX_PPFD_READING:
                raise ValueError(
                    f"a quantum reading of {top:g} µmol m⁻² s⁻¹ is above {limits.MAX_PPFD_READING:g}: "
                    "lux readings need sensor 'lux'"
                )
        return self
