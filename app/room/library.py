"""The crop library and the fixture library shipped with the app (JSON under app/data)."""

from __future__ import annotations

import json
from functools import cache
from importlib import resources

from app.room.models import Crop, FixtureType, RoomFile


def _load(name: str) -> dict:
    return json.loads(resources.files("app").joinpath("data", name).read_text(encoding="utf-8"))


@cache
def crop_library() -> dict[str, Crop]:
    return {c["id"]: Crop.model_validate(c) for c in _load("crops.json")["crops"]}


@cache
def fixture_library() -> dict[str, FixtureType]:
    return {f["id"]: FixtureType.model_validate(f) for f in _load("fixtures.json")["fixture_types"]}


def crops_for(room_file: RoomFile) -> dict[str, Crop]:
    """Library crops, overridden by the custom crops the room file carries."""
    crops = dict(crop_library())
    crops.update({c.id: c for c in room_file.custom_crops})
    return crops
