"""Two guards for a local app: only local Host headers, and bounded, sane request bodies."""

from __future__ import annotations

import json

from app.room import limits
from app.room.roomfile import json_shape_problem


def _json_response(status: int, error: str, message: str):
    body = json.dumps({"error": error, "message": message, "problems": []}).encode()
    return [
        {
            "type": "http.response.start",
            "status": status,
            "headers": [(b"content-type", b"application/json"), (b"content-length", str(len(body)).encode())],
        },
        {"type": "http.response.body", "body": body},
    ]


def _host_name(raw: str) -> str:
    raw = raw.strip().lower()
    if raw.startswith("["):
        return raw[: raw.find("]") + 1]
    return raw.rsplit(":", 1)[0] if raw.count(":") == 1 else raw


class LocalOnly:
    """Refuse requests whose Host is not this machine's (a guard against DNS rebinding)."""

    def __init__(self, app, allowed_hosts: frozenset[str]) -> None:
        self.app, self.allowed = app, allowed_hosts

    async def __call__(self, scope, receive, send):
        if scope["type"] == "http":
            host = dict(scope["headers"]).get(b"host", b"").decode("latin-1")
            if _host_name(host) not in self.allowed:
                for msg in _json_response(
                    421,
                    "host_not_allowed",
                    f"Host '{host}' is not allowed: Leafcast answers only on this machine's own address.",
                ):
                    await send(msg)
                return
        await self.app(scope, receive, send)


class BodyLimit:
    """Refuse bodies over the limit (413) on every route, by Content-Length or while a chunked body streams, and
    JSON too deeply nested or with absurdly long numbers (422) before any parser sees it.

    The body is received here in full (at most the limit) and handed on unchanged, so every route, whatever
    parses its body, gets the same refusals with the same wording.
    """

    def __init__(self, app, max_bytes: int = limits.MAX_BODY_BYTES) -> None:
        self.app, self.max = app, max_bytes

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http" or scope["method"] in ("GET", "HEAD", "OPTIONS"):
            return await self.app(scope, receive, send)
        msg = f"request body is larger than the {self.max:,}-byte limit"
        headers = dict(scope["headers"])
        length = headers.get(b"content-length")
        if length is not None and length.isdigit() and int(length) > self.max:
            return await _refuse(send, 413, "too_large", msg)
        chunks, seen, more = [], 0, True
        while more:
            message = await receive()
            if message["type"] == "http.disconnect":
                return  # the client went away: nothing to answer
            body = message.get("body", b"")
            seen += len(body)
            if seen > self.max:
                return await _refuse(send, 413, "too_large", msg)
            chunks.append(body)
            more = message.get("more_body", False)
        body = b"".join(chunks)
        ctype = headers.get(b"content-type", b"").split(b";")[0].strip().lower()
        if body and ctype == b"application/json":
            problem = json_shape_problem(body.decode("utf-8", errors="replace"))
            if problem:
                return await _refuse(send, 422, "invalid_request", f"(body): {problem}")
        replayed = False

        async def replay():
            nonlocal replayed
            if not replayed:
                replayed = True
                return {"type": "http.request", "body": body, "more_body": False}
            return await receive()

        await self.app(scope, replay, send)


async def _refuse(send, status: int, error: str, message: str) -> None:
    for m in _json_response(status, error, message):
        await send(m)
