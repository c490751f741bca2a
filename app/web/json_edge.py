"""The JSON edge: every JSON answer carries only finite numbers; a non-finite float (inf, NaN) becomes null.

Some figures are undefined for some inputs and the engine says so with inf or NaN (lumens per µmol of a
spectrum with no visible light, Thimijan & Heins 1983). JSON has no such numbers, and a plain
``JSONResponse`` refuses them with a 500. Typed answers are written by pydantic's JSON serializer, which writes
null for them (``ser_json_inf_nan="null"``, stated on :class:`app.service.results.Result`); every JSON answer
built by hand (``?format=json`` pages, a room file read back, error bodies) goes through
:class:`FiniteJSONResponse`. A route without a response model is refused by tests/test_openapi_described.py.
"""

from __future__ import annotations

import json
import math
from typing import Any

from fastapi.responses import JSONResponse


def finite_or_null(value: Any) -> Any:
    """``value`` with every non-finite float inside dicts, lists and tuples replaced by None."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: finite_or_null(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [finite_or_null(v) for v in value]
    return value


class FiniteJSONResponse(JSONResponse):
    """A JSON answer in which inf and NaN are written as null instead of failing the request."""

    def render(self, content: Any) -> bytes:
        return json.dumps(
            finite_or_null(content), ensure_ascii=False, allow_nan=False, indent=None, separators=(",", ":")
        ).encode("utf-8")
