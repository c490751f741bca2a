"""The room file's data model (pydantic v2).

Everything is stored in SI units: metres, µmol/s, watts, hours. The file records
which display units the grower prefers; conversion happens only on screen
(see :mod:`app.room.units`).

Types and ranges are checked here; checks that need the whole room (a fixture
outside the room, an unknown fixture type, duplicate ids) live in
:mod:`app.room.roomfile`, which reports every problem with its field path.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, field_validator, model_validator

from app.room import limits
from app.room.meter_models import (  # noqa: F401 (re-exported: the room model's names stay here)
    MaintenancePoint,
    OutputAge,
    OutputMaintenance,
    ReadingGrid,
    ReadingPoint,
    ReadingSet,
    ReadingValue,
)
from app.room.model_base import (  # noqa: F401 (re-exported: the room model's names stay here)
    DisplayUnits,
    Ident,
    Label,
    Metres,
    PositiveMetres,
    Side,
    Stage,
    Strict,
)
from app.room.year_models import (  # noqa: F401 (re-exported: the room model's names stay here)
    GLAZINGS,
    MAX_CYCLE_WEEKS,
    CycleStep,
    Greenhouse,
    GrowCycle,
    PaybackPlan,
    PriceWindowIn,
    Tariff,
)

FORMAT_NAME = "leafcast-room"
FORMAT_VERSION = 1


class WallFinish(Strict):
    """How the walls return light: mirror-like film, matt paint, or nothing."""

    kind: Literal["specular", "diffuse", "absorbing"] = Field(
        description="specular: mirror images; diffuse: radiosity over wall patches; absorbing: no return."
    )
    reflectance: float = Field(ge=0, le=1, description="PAR reflectance, 0-1.")
    label: str = Field(default="", max_length=80)


Surface = Literal["front", "back", "left", "right", "ceiling", "floor"]
SURFACES: tuple[str, ...] = ("left", "right", "front", "back", "ceiling")
"""The walls and the ceiling. The floor may be listed too (matt or absorbing only); unlisted it absorbs."""


class SurfaceFinish(Strict):
    """One wall's (or the ceiling's) own finish: a mirror, matt paint, a dark surface, or an opening."""

    kind: Literal["specular", "diffuse", "absorbing", "open"] = Field(
        description="specular: mirror images; diffuse: radiosity; absorbing: no return; open: light escapes."
    )
    reflectance: float = Field(default=0.0, ge=0, le=1, description="PAR reflectance, 0-1 (unused when open).")
    label: str = Field(default="", max_length=80)


WALL_FINISHES: dict[str, WallFinish] = {
    # Reflectances: Lighting Research Center terminology pages, as collected in
    # shared/REFERENCES.md (photopic values, close to PAR for white surfaces).
    "reflective_film": WallFinish(kind="specular", reflectance=0.95, label="Reflective film"),
    "polished_aluminium": WallFinish(kind="specular", reflectance=0.85, label="Polished aluminium"),
    "white_paint": WallFinish(kind="diffuse", reflectance=0.90, label="High-quality white paint"),
    "flat_white": WallFinish(kind="diffuse", reflectance=0.80, label="Flat white paint"),
    "light_walls": WallFinish(kind="diffuse", reflectance=0.50, label="Light-coloured walls"),
    "dark": WallFinish(kind="absorbing", reflectance=0.0, label="Dark or open"),
}


class Geometry(Strict):
    """Real dimensions of the emitting part, in the fixture's own frame.

    ``length_m`` runs along the fixture's local x axis (the bars' long axis),
    ``width_m`` along its local y axis. A bar array spreads ``bar_count`` bars,
    each ``bar_width_m`` wide, evenly across ``width_m``.
    """

    kind: Literal["point", "bar", "bar_array", "panel"]
    length_m: float = Field(default=0.0, ge=0, le=5)
    width_m: float = Field(default=0.0, ge=0, le=5)
    bar_count: int = Field(default=1, ge=1, le=limits.MAX_BARS)
    bar_width_m: float = Field(default=0.03, gt=0, le=0.5)

    @model_validator(mode="after")
    def _dimensions_fit_kind(self) -> Geometry:
        if self.kind in ("bar", "bar_array", "panel") and self.length_m <= 0:
            raise ValueError(f"a {self.kind} must have length_m > 0 (a zero-size emitter gives no light)")
        if self.kind == "panel" and self.width_m <= 0:
            raise ValueError("a panel must have width_m > 0")
        if self.kind == "bar_array":
            if self.bar_count < 2:
                raise ValueError("a bar array needs bar_count >= 2 (use kind 'bar' for one bar)")
            if self.width_m <= self.bar_width_m:
                raise ValueError("a bar array's width_m must exceed bar_width_m")
        return self


class Beam(Strict):
    """Angular intensity distribution in the fixture's own frame (polar angle from its nadir); the fixture's
    tilt_deg and aim_deg say where that nadir points in the room."""

    kind: Literal["lambertian", "cosine_power", "tabulated"]
    beam_angle_deg: float | None = Field(
        default=None, ge=10, le=170, description="Full angle at half the peak intensity (cosine_power)."
    )
    polar_deg: list[float] | None = Field(default=None, max_length=limits.MAX_TABLE_ANGLES)
    azimuth_deg: list[float] | None = Field(default=None, max_length=limits.MAX_TABLE_ANGLES)
    relative_intensity: list[list[float]] | None = Field(
        default=None,
        max_length=limits.MAX_TABLE_ANGLES,
        description="Rows per azimuth angle, columns per polar angle (any scale).",
    )

    @model_validator(mode="after")
    def _fields_fit_kind(self) -> Beam:
        if self.kind == "cosine_power" and self.beam_angle_deg is None:
            raise ValueError("a cosine_power beam needs beam_angle_deg")
        if self.kind == "tabulated":
            if not (self.polar_deg and self.azimuth_deg and self.relative_intensity):
                raise ValueError("a tabulated beam needs polar_deg, azimuth_deg and relative_intensity")
            if len(self.relative_intensity) != len(self.azimuth_deg) or any(
                len(row) != len(self.polar_deg) for row in self.relative_intensity
            ):
                raise ValueError("relative_intensity must have one row per azimuth and one value per polar angle")
            if any(v < 0 for row in self.relative_intensity for v in row):
                raise ValueError("relative_intensity values must be >= 0")
            if sorted(self.polar_deg) != self.polar_deg or not 0 <= self.polar_deg[0] <= self.polar_deg[-1] <= 180:
                raise ValueError("polar_deg must rise from 0 to at most 180")
            if (
                sorted(self.azimuth_deg) != self.azimuth_deg
                or not 0 <= self.azimuth_deg[0] <= self.azimuth_deg[-1] <= 360
            ):
                raise ValueError("azimuth_deg must rise within 0-360")
        return self


class FixtureType(Strict):
    id: Ident
    name: Label
    geometry: Geometry
    beam: Beam
    ppf_umol_s: float = Field(gt=0, le=20000, description="Photosynthetic photon flux at full power [µmol/s].")
    power_w: float = Field(gt=0, le=10000, description="Input power at full power [W].")
    weight_kg: float | None = Field(default=None, ge=0, le=500)
    price: float | None = Field(default=None, ge=0, le=1_000_000, description="Price of one, in the room's currency.")
    notes: str = Field(default="", max_length=1000)
    hanging_points_m: (
        list[tuple[Annotated[float, Field(ge=-2.5, le=2.5)], Annotated[float, Field(ge=-2.5, le=2.5)]]] | None
    ) = Field(
        default=None,
        max_length=limits.MAX_HANGING_POINTS,
        description="Where it hangs from, (x, y) in its own frame from its centre [m]; none: the sheet's default.",
    )
    cord_note: str = Field(default="", max_length=200, description="Power cord: length, plug.")
    driver_note: str = Field(default="", max_length=200, description="Driver: built in or remote, its place.")
    price: float | None = Field(default=None, ge=0, le=1_000_000, description="Price each, in the room's currency.")
    maintenance: OutputMaintenance | None = Field(
        default=None, description="Rated or measured output maintenance; none: output does not fall with age."
    )


class Fixture(Strict):
    """One fixture hung in the room. (x_m, y_m) is the centre of its emitting face."""

    id: Ident
    type_id: Ident
    x_m: Metres
    y_m: Metres
    hanging_height_m: PositiveMetres = Field(description="Height of the emitting face above the floor.")
    rotation_deg: float = Field(default=0.0, ge=0, lt=360, description="About the vertical, counter-clockwise.")
    tilt_deg: float = Field(
        default=0.0, ge=0, le=180, description="Aim away from straight down: 0 down, 90 sideways, 180 straight up."
    )
    aim_deg: float = Field(
        default=0.0,
        ge=0,
        lt=360,
        description="Compass direction the tilt leans toward, in the room's x-y frame, counter-clockwise from +x.",
    )
    dimming_pct: float = Field(default=100.0, ge=10, le=100)
    on: bool = True
    circuit: str = Field(default="A", min_length=1, max_length=40)


class CanopyZone(Strict):
    """A bench, table or shelf tier: the canopy top is a level rectangle."""

    id: Ident
    name: Label
    x_m: Metres
    y_m: Metres
    width_m: PositiveMetres
    length_m: PositiveMetres
    canopy_height_m: Metres = Field(description="Height of the canopy top above the floor.")
    crop_id: Ident = "lettuce"
    stage: Stage = "vegetative"
    photoperiod_h: float | None = Field(default=None, gt=0, le=24, description="Overrides the room schedule.")
    cycle: GrowCycle | None = None
    greenhouse: Greenhouse | None = None


class Obstacle(Strict):
    """A box that casts shadows (a shelf, a duct, a beam)."""

    id: Ident
    name: Label
    x_m: Metres
    y_m: Metres
    z_m: Metres
    width_m: PositiveMetres
    length_m: PositiveMetres
    height_m: PositiveMetres


class Circuit(Strict):
    name: str = Field(min_length=1, max_length=40)
    breaker_a: float = Field(gt=0, le=400, description="Breaker rating [A].")


class Schedule(Strict):
    photoperiod_h: float = Field(default=16.0, gt=0, le=24, description="Lights-on hours per day.")
    electricity_price_per_kwh: float = Field(default=0.15, ge=0, le=100)
    currency: str = Field(default="USD", min_length=1, max_length=8)
    supply_voltage_v: float = Field(default=120.0, gt=0, le=1000)
    tariff: Tariff | None = None


class CropStage(Strict):
    dli_min: float = Field(ge=0, le=80, description="Lowest daily light integral of the target band [mol m⁻² d⁻¹].")
    dli_max: float = Field(ge=0, le=80)
    ppfd_stress_umol_m2_s: float = Field(gt=0, le=3000, description="PPFD above which leaves are stressed.")
    source: str = Field(max_length=400)

    @model_validator(mode="after")
    def _band_ordered(self) -> CropStage:
        if self.dli_max < self.dli_min:
            raise ValueError("dli_max must be >= dli_min")
        return self


class Crop(Strict):
    id: Ident
    name: Label
    daylength: Literal["short_day", "long_day", "day_neutral"]
    min_dark_h: float = Field(ge=0, le=24, description="Shortest dark period it needs each day [h].")
    continuous_light_injury: bool = False
    stages: dict[Stage, CropStage]
    source: str = Field(default="", max_length=600)


class Entry(Strict):
    """Where people come in: the plan's fixed reference (a door, a tent's zip)."""

    side: Side = "front"
    offset_m: Metres | None = Field(default=None, description="Centre along that wall from its left/front end.")
    width_m: float | None = Field(
        default=None, gt=0, le=limits.MAX_ROOM_SIDE_M, description="Opening width; none: 0.8 m or half a short wall."
    )
    label: str = Field(default="Entry", min_length=1, max_length=40)


class HangingGrid(Strict):
    """Rails or hook points the fixtures must hang from: fixture centres sit on lines ``origin + k × pitch``.

    A pitch along one axis only is a set of rails (free along the other axis); pitches along both are a
    grid of hook points. Added in 0.2; a file without it hangs fixtures anywhere, as in 0.1.
    """

    origin_x_m: Metres = Field(description="A rail or hook line's distance from the left wall [m].")
    origin_y_m: Metres = Field(description="A rail or hook line's distance from the front wall [m].")
    pitch_x_m: float | None = Field(
        default=None, gt=0, le=limits.MAX_ROOM_SIDE_M, description="Spacing of the lines along x; none: free along x."
    )
    pitch_y_m: float | None = Field(
        default=None, gt=0, le=limits.MAX_ROOM_SIDE_M, description="Spacing of the lines along y; none: free along y."
    )
    label: str = Field(default="", max_length=80, description="What the grid is, for the sheet (e.g. ceiling rails).")

    @model_validator(mode="after")
    def _some_pitch(self) -> HangingGrid:
        if self.pitch_x_m is None and self.pitch_y_m is None:
            raise ValueError("a hanging grid needs pitch_x_m or pitch_y_m (or both); leave hanging_grid out for none")
        return self


class Room(Strict):
    name: Label
    width_m: PositiveMetres = Field(description="Along x (left to right on the plan).")
    length_m: PositiveMetres = Field(description="Along y (front to back on the plan).")
    height_m: float = Field(gt=0, le=limits.MAX_ROOM_HEIGHT_M)
    wall_finish: WallFinish = WALL_FINISHES["reflective_film"]
    open_sides: list[Side] = Field(default_factory=list, max_length=4)
    surface_finishes: dict[Surface, SurfaceFinish] = Field(
        default_factory=dict,
        description="Per-surface finishes (left, right, front, back, ceiling, and optionally floor: diffuse or "
        "absorbing); a wall or ceiling not listed takes wall_finish, or is open when it is in open_sides; the "
        "floor absorbs unless listed. Added in 0.2; 0.1 files keep their meaning.",
    )
    zones: list[CanopyZone] = Field(min_length=1, max_length=limits.MAX_ZONES)
    fixture_types: list[FixtureType] = Field(default_factory=list, max_length=limits.MAX_FIXTURE_TYPES)
    fixtures: list[Fixture] = Field(default_factory=list, max_length=limits.MAX_FIXTURES)
    obstacles: list[Obstacle] = Field(default_factory=list, max_length=limits.MAX_OBSTACLES)
    circuits: list[Circuit] = Field(
        default_factory=lambda: [Circuit(name="A", breaker_a=15)], max_length=limits.MAX_CIRCUITS
    )
    schedule: Schedule = Field(default_factory=Schedule)
    grid_spacing_m: float = Field(
        default=0.0254, ge=limits.MIN_GRID_SPACING_M, le=1.0, description="Canopy grid spacing (1 inch)."
    )
    display_units: DisplayUnits = "imperial"
    dark_allowance: float | None = Field(
        default=None,
        ge=0,
        le=0.5,
        description="Share of a zone's area allowed below the DLI band (0-0.5); none: Leafcast's default 0.10.",
    )
    entry: Entry = Field(default_factory=Entry, description="The door or entry drawn on the sheet's plan.")
    output_age: OutputAge = Field(default_factory=OutputAge)
    readings: list[ReadingSet] = Field(default_factory=list, max_length=limits.MAX_READING_SETS)
    payback: PaybackPlan | None = None
    hanging_grid: HangingGrid | None = Field(
        default=None, description="Rails or hook points fixture centres must sit on; none: fixtures hang anywhere."
    )

    @field_validator("surface_finishes")
    @classmethod
    def _floor_is_matt_or_dark(cls, v: dict[str, SurfaceFinish]) -> dict[str, SurfaceFinish]:
        floor = v.get("floor")
        if floor is not None and floor.kind not in ("diffuse", "absorbing"):
            raise ValueError(
                f"the floor can be diffuse (matt, e.g. white ground cover) or absorbing, not {floor.kind}"
            )
        return v

    def finish_of(self, surface: str) -> SurfaceFinish:
        """The finish a surface has: its own entry, else open (a listed open side) or the room's wall_finish;
        an unlisted floor absorbs."""
        if surface in self.surface_finishes:
            return self.surface_finishes[surface]
        if surface == "floor":
            return SurfaceFinish(kind="absorbing", label="Floor")
        if surface in self.open_sides:
            return SurfaceFinish(kind="open", label="Open")
        wf = self.wall_finish
        return SurfaceFinish(kind=wf.kind, reflectance=wf.reflectance, label=wf.label)


class RoomFile(Strict):
    """What a grower saves and sends: the room with every fixture type and custom crop it uses."""

    format: Literal["leafcast-room"] = FORMAT_NAME
    version: int = Field(default=FORMAT_VERSION, ge=1, le=FORMAT_VERSION)
    revision: int = Field(default=0, ge=0, description="Storage revision this document is based on.")
    room: Room
    custom_crops: list[Crop] = Field(default_factory=list, max_length=limits.MAX_CUSTOM_CROPS)
