"""The built-in catalogue: fixture types and crops."""

from __future__ import annotations

from fastapi import APIRouter

from app.room.library import crop_library, fixture_library
from app.room.models import Crop, FixtureType

router = APIRouter(prefix="/api/library", tags=["library"])


@router.get("/fixtures", summary="The built-in fixture types")
def fixture_types() -> list[FixtureType]:
    return list(fixture_library().values())


@router.get("/crops", summary="The built-in crops and their DLI bands")
def crops() -> list[Crop]:
    return list(crop_library().values())
