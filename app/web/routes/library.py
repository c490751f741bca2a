"""The built-in catalogue: fixture types and crops."""

from __future__ import annotations

from typing import Any

from fastapi import APIRouter

from app.room.library import crop_library, fixture_library

router = APIRouter(prefix="/api/library", tags=["library"])


@router.get("/fixtures")
def fixture_types() -> list[dict[str, Any]]:
    return [t.model_dump(mode="json") for t in fixture_library().values()]


@router.get("/crops")
def crops() -> list[dict[str, Any]]:
    return [c.model_dump(mode="json") for c in crop_library().values()]
