"""Shared building blocks of the room file model: the strict base class, identifiers, lengths, units."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import BaseModel, ConfigDict, Field

from app.room import limits


class Strict(BaseModel):
    """Base: unknown keys, NaN and infinity are refused."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)


Ident = Annotated[
    str,
    Field(
        pattern=r"^[A-Za-z0-9][A-Za-z0-9_.\-]{0,39}$",
        description="Short id: letters, digits, '_', '.', '-' (at most 40).",
    ),
]
Label = Annotated[str, Field(min_length=1, max_length=120)]
Metres = Annotated[float, Field(ge=0, le=limits.MAX_ROOM_SIDE_M)]
PositiveMetres = Annotated[float, Field(gt=0, le=limits.MAX_ROOM_SIDE_M)]

Side = Literal["front", "back", "left", "right"]
"""Walls by their place on the plan: front is y = 0, back y = length, left x = 0, right x = width."""

Stage = Literal["propagation", "vegetative", "flowering"]
DisplayUnits = Literal["imperial", "metric"]
