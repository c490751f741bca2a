"""A generated vertical farm, for the benchmark and the tests of large scenes (invented, generic)."""

from __future__ import annotations

from app.room.library import fixture_library
from app.room.models import WALL_FINISHES, CanopyZone, Circuit, Fixture, Obstacle, Room, RoomFile, Schedule


def vertical_farm(
    rows: int = 10,
    tiers: int = 5,
    fixtures_per_tier: int = 20,
    rack_length_m: float = 28.0,
    rack_width_m: float = 1.2,
    aisle_m: float = 1.7,
    tier_pitch_m: float = 0.6,
    grid_spacing_m: float = 0.05,
) -> RoomFile:
    """Rows of racks with ``tiers`` shelves each; a six-bar fixture every metre under every shelf.

    The defaults give 10 × 5 × 20 = 1,000 fixtures over 1,680 m² of canopy in a room of 964 m².
    """
    t = fixture_library()["bararray-6x1.0"]
    width = rows * rack_width_m + (rows + 1) * aisle_m
    length = rack_length_m + 2 * aisle_m
    zones, fixtures, shelves = [], [], []
    pitch = rack_length_m / fixtures_per_tier
    for r in range(rows):
        x0 = aisle_m + r * (rack_width_m + aisle_m)
        for k in range(tiers + 1):
            z = 0.15 + k * tier_pitch_m
            shelves.append(
                Obstacle(
                    id=f"r{r}-s{k}",
                    name=f"Rack {r + 1} shelf {k + 1}",
                    x_m=x0,
                    y_m=aisle_m,
                    z_m=z,
                    width_m=rack_width_m,
                    length_m=rack_length_m,
                    height_m=0.03,
                )
            )
        for k in range(tiers):
            canopy = 0.15 + k * tier_pitch_m + 0.03 + 0.2
            zones.append(
                CanopyZone(
                    id=f"r{r}-t{k}",
                    name=f"Rack {r + 1}, tier {k + 1}",
                    x_m=x0,
                    y_m=aisle_m,
                    width_m=rack_width_m,
                    length_m=rack_length_m,
                    canopy_height_m=round(canopy, 4),
                    crop_id="lettuce",
                    stage="vegetative",
                )
            )
            hang = 0.15 + (k + 1) * tier_pitch_m - 0.01
            for j in range(fixtures_per_tier):
                fixtures.append(
                    Fixture(
                        id=f"r{r}-t{k}-f{j}",
                        type_id=t.id,
                        x_m=round(x0 + rack_width_m / 2, 4),
                        y_m=round(aisle_m + (j + 0.5) * pitch, 4),
                        hanging_height_m=round(hang, 4),
                        rotation_deg=90,
                        dimming_pct=100,
                        circuit=f"R{r + 1}",
                    )
                )
    room = Room(
        name="Vertical farm (generated)",
        width_m=round(width, 4),
        length_m=round(length, 4),
        height_m=round(0.15 + (tiers + 1) * tier_pitch_m + 0.5, 4),
        wall_finish=WALL_FINISHES["dark"],
        zones=zones,
        fixture_types=[t],
        fixtures=fixtures,
        obstacles=shelves,
        circuits=[Circuit(name=f"R{r + 1}", breaker_a=400) for r in range(rows)],
        schedule=Schedule(photoperiod_h=16, supply_voltage_v=277),
        grid_spacing_m=grid_spacing_m,
        display_units="metric",
    )
    return RoomFile(room=room)
