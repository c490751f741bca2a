"""/openapi.json describes every JSON response: each operation's 2xx JSON answer has a schema, and no schema in
it is a free-form object (an object with neither properties nor typed additional properties)."""

from __future__ import annotations

import pytest

from app.settings import Settings
from app.web import create_app


def _openapi(tmp_path_factory) -> dict:
    return create_app(Settings(data_dir=tmp_path_factory.mktemp("data"))).openapi()


@pytest.fixture(scope="module")
def spec(tmp_path_factory) -> dict:
    return _openapi(tmp_path_factory)


def _resolve(spec: dict, schema: dict) -> dict:
    while "$ref" in schema:
        name = schema["$ref"].rsplit("/", 1)[-1]
        schema = spec["components"]["schemas"][name]
    return schema


def free_form(spec: dict, schema: dict, path: str, seen: set[str]) -> list[str]:
    """Places inside ``schema`` that say nothing of their content."""
    if "$ref" in schema:
        name = schema["$ref"].rsplit("/", 1)[-1]
        if name in seen:
            return []
        seen.add(name)
        return free_form(spec, _resolve(spec, schema), f"{path}<{name}>", seen)
    if not schema:
        return [f"{path}: empty schema (any value)"]
    out: list[str] = []
    for key in ("anyOf", "oneOf", "allOf"):
        for i, sub in enumerate(schema.get(key, [])):
            out += free_form(spec, sub, f"{path}|{i}", seen)
    if schema.get("type") == "object" or "properties" in schema:
        props = schema.get("properties", {})
        extra = schema.get("additionalProperties")
        if not props and not isinstance(extra, dict):
            out.append(f"{path}: free-form object")
        for k, sub in props.items():
            out += free_form(spec, sub, f"{path}.{k}", seen)
        if isinstance(extra, dict):
            out += free_form(spec, extra, f"{path}{{}}", seen)
    if schema.get("type") == "array" and "items" in schema:
        out += free_form(spec, schema["items"], f"{path}[]", seen)
    return out


# Not yet typed (issue 11 item 4, left for the next round): each still answers a free-form object.
NOT_YET_DESCRIBED = {
    "GET /api/rooms/{room_id}/zones/{zone_id}/grid.csv 200",
    "GET /api/rooms/{room_id}/zones/{zone_id}/map.svg 200",
    "GET /api/rooms/{room_id}/check 200",
    "GET /api/rooms/{room_id}/curves 200",
    "POST /api/photometry/import 200",
    "POST /api/photometry/fit 200",
    "POST /api/rooms/{room_id}/readings 200",
    "DELETE /api/rooms/{room_id}/readings/{set_id} 200",
    "GET /api/rooms/{room_id}/readings/{set_id}/compare 200",
    "POST /api/rooms/{room_id}/readings/{set_id}/apply 200",
    "POST /api/rooms/{room_id}/output-age 200",
    "GET /api/fixture-card 200",
    "GET /api/rooms/{room_id}/zones/{zone_id}/squares 200",
    "GET /api/rooms/{room_id}/year 200",
    "POST /api/footprints 200",
    "POST /api/fixture-types/check 200",
}


def json_operations(spec: dict):
    for url, item in spec["paths"].items():
        for method, op in item.items():
            for status, resp in op.get("responses", {}).items():
                if status.startswith("2") and status != "204":
                    content = resp.get("content", {})
                    if "application/json" in content:
                        yield f"{method.upper()} {url} {status}", content["application/json"]


def test_the_check_finds_a_free_form_object():
    # The check itself can fail: a dict[str, Any] answer is what it must refuse.
    spec = {"components": {"schemas": {}}}
    assert free_form(spec, {"type": "object", "additionalProperties": True}, "x", set())
    assert free_form(spec, {}, "x", set())
    assert not free_form(spec, {"type": "object", "properties": {"a": {"type": "number"}}}, "x", set())


def test_every_json_response_is_described(spec):
    problems = []
    ops = list(json_operations(spec))
    assert len(ops) > 20
    for name, media in ops:
        if name in NOT_YET_DESCRIBED:
            continue
        schema = media.get("schema")
        if schema is None:
            problems.append(f"{name}: no schema")
            continue
        problems += [f"{name}: {p}" for p in free_form(spec, schema, "", set())]
    assert not problems, "\n".join(problems)
