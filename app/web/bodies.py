"""Request bodies of the API (room files are parsed by app.room.roomfile, with its field-path messages)."""

from __future__ import annotations

from typing import Annotated

from fastapi import Request
from pydantic import BaseModel, ConfigDict, Field
from starlette.concurrency import run_in_threadpool

from app.room.models import RoomFile
from app.room.roomfile import RoomFileError, parse_room_file
from app.web.errors import room_error

ROOM_BODY = {
    "requestBody": {
        "required": True,
        "description": "A Leafcast room file (format 'leafcast-room').",
        "content": {"application/json": {"schema": {"$ref": "#/components/schemas/RoomFile"}}},
    }
}

# A room file answered whole (read, download): described by the room file model's JSON schema.
ROOM_RESPONSE = {
    200: {
        "description": "A Leafcast room file (format 'leafcast-room').",
        "content": {"application/json": {"schema": {"$ref": "#/components/schemas/RoomFile"}}},
    }
}


class ApiIn(BaseModel):
    """Request bodies: unknown keys, NaN and infinity refused."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)


class PeakIn(ApiIn):
    nm: float = Field(ge=300, le=800)
    fwhm_nm: float = Field(gt=1, le=300)
    weight: float = Field(gt=0, le=1e6)


class SpectrumIn(ApiIn):
    csv: str | None = Field(default=None, max_length=200_000, description="wavelength [nm], relative power")
    peaks: list[PeakIn] | None = Field(
        default=None, max_length=20, description="LED peaks (a white LED: blue + phosphor)"
    )


class MapFitIn(ApiIn):
    readings: list[list[Annotated[float, Field(ge=0, le=100_000)]]] = Field(
        min_length=3, max_length=101, description="PPFD rows, front to back [µmol m⁻² s⁻¹]"
    )
    cell_m: float = Field(gt=0, le=1, description="Spacing of the readings [m]")
    hanging_height_m: float = Field(gt=0, le=10, description="Height of the fixture above the map [m]")
    claimed_ppf_umol_s: float | None = Field(default=None, gt=0, le=20000)
    power_w: float | None = Field(default=None, gt=0, le=10000)
    ceiling_umol_j: float | None = Field(default=None, gt=0, le=10, description="From the fixture's spectrum, if known")
    heights_m: list[Annotated[float, Field(gt=0, le=10)]] = Field(default_factory=list, max_length=10)


class PlanIn(ApiIn):
    type_ids: list[str] = Field(default_factory=list, max_length=20, description="Candidate fixture types")
    objective: str = Field(
        default="power",
        pattern="^(power|count|cost)$",
        description="Least input power, fewest fixtures, or least cost (fixtures + electricity over `years`)",
    )
    target: str = Field(default="bottom", pattern="^(bottom|middle)$", description="Dim to the band's bottom or middle")
    max_power_w: float | None = Field(default=None, gt=0, le=1e7, description="Power budget for the whole room [W]")
    min_clearance_m: float = Field(default=0.15, ge=0.02, le=3, description="Least height above the canopy [m]")
    min_gap_m: float = Field(default=0.10, ge=0, le=1, description="Least gap between fixtures and to closed sides (walls; on a rack, the tier's closed shelf edges) [m]")
    years: float = Field(default=3.0, gt=0, le=30, description="Horizon of the cost objective [years]")
    seed: int = Field(default=0, ge=0, le=2**31)


def parse_room_body(raw: bytes) -> RoomFile:
    try:
        return parse_room_file(raw)
    except RoomFileError as exc:
        raise room_error(exc) from exc


async def room_from_body(request: Request) -> RoomFile:
    """Parse a posted room file with the room file's own validation (field paths, limits).

    The body is received asynchronously; parsing (up to 8 MB of JSON and its validation) runs in the thread
    pool, so the event loop keeps answering other requests meanwhile.
    """
    raw = await request.body()
    return await run_in_threadpool(parse_room_body, raw)
