"""/openapi.json describes every response: each operation's 2xx JSON answer has a schema in which no place is
free-form (an object with neither properties nor typed additional properties, or a schema that says nothing but a
title or description: pydantic's ``Any``), and every other 2xx answer names its media type, which is the one the
route really sends."""

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


# Keys that describe a value without constraining it: a schema made only of these accepts anything.
ANNOTATIONS = {"title", "description", "default", "examples", "example", "deprecated", "readOnly", "writeOnly"}


def free_form(spec: dict, schema: dict, path: str, seen: set[str]) -> list[str]:
    """Places inside ``schema`` that say nothing of their content."""
    if "$ref" in schema:
        name = schema["$ref"].rsplit("/", 1)[-1]
        if name in seen:
            return []
        seen.add(name)
        return free_form(spec, _resolve(spec, schema), f"{path}<{name}>", seen)
    if not set(schema) - ANNOTATIONS:
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


# Operations still answering a free-form object (none: keep it that way).
NOT_YET_DESCRIBED: set[str] = set()


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
    # pydantic's Any with a description or a default: still nothing about the value.
    assert free_form(spec, {"description": "text, or a change", "title": "Fix"}, "x", set())
    assert free_form(spec, {"type": "object", "properties": {"r": {"default": None, "title": "R"}}}, "x", set())
    assert free_form(spec, {"type": "array", "items": {"type": "object"}}, "x", set())
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


def non_json_answers(spec: dict):
    for url, item in spec["paths"].items():
        for method, op in item.items():
            for status, resp in op.get("responses", {}).items():
                if status.startswith("2") and status != "204":
                    yield f"{method.upper()} {url} {status}", resp.get("content", {})


def test_every_other_answer_names_its_media_type(spec):
    problems = []
    for name, content in non_json_answers(spec):
        if not content:
            problems.append(f"{name}: no media type")
        for media_type, media in content.items():
            if media_type != "application/json" and "schema" not in media:
                problems.append(f"{name}: {media_type} without a schema")
    assert not problems, "\n".join(problems)
    exports = {
        "GET /api/rooms/{room_id}/zones/{zone_id}/grid.csv 200": {"text/csv"},
        "GET /api/rooms/{room_id}/zones/{zone_id}/map.svg 200": {"image/svg+xml"},
        "GET /api/rooms/{room_id}/plan.dxf 200": {"application/dxf"},
    }
    declared = dict(non_json_answers(spec))
    for name, types in exports.items():
        assert set(declared[name]) == types, name


def test_the_exports_send_the_media_type_they_declare(client, tent_doc, spec):
    room_id = client.post("/api/rooms", json=tent_doc).json()["id"]
    zone_id = tent_doc["room"]["zones"][0]["id"]
    for url in ("grid.csv", "map.svg"):
        path = f"/api/rooms/{{room_id}}/zones/{{zone_id}}/{url}"
        (declared,) = spec["paths"][path]["get"]["responses"]["200"]["content"]
        r = client.get(f"/api/rooms/{room_id}/zones/{zone_id}/{url}")
        assert r.status_code == 200
        assert r.headers["content-type"].split(";")[0] == declared
