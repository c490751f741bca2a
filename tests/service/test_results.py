"""Typed results: every sample's analysis fits the documented model, and the OpenAPI schema describes it."""

from __future__ import annotations

import pytest

from app.room.roomfile import parse_room_file
from app.service.analysis import analyse
from app.service.results import Analysis
from tests.conftest import SAMPLES


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_analysis_validates_against_its_model(path):
    result = analyse(parse_room_file(path.read_bytes()), with_budget=True)
    model = Analysis.model_validate(result)
    assert model.zones and all(z.grid is not None for z in model.zones)
    assert model.budget is not None


def test_openapi_names_request_and_response_models(client):
    schema = client.get("/openapi.json").json()
    post = schema["paths"]["/api/analyze"]["post"]
    assert post["requestBody"]["content"]["application/json"]["schema"] == {"$ref": "#/components/schemas/RoomFile"}
    ok = post["responses"]["200"]["content"]["application/json"]["schema"]
    assert ok == {"$ref": "#/components/schemas/Analysis"}
    comps = schema["components"]["schemas"]
    assert {"RoomFile", "Room", "Fixture", "Analysis", "ZoneResult"} <= set(comps)
