"""Two guards for a local app: only local Host headers, and bounded request bodies."""

from __future__ import annotations

import json

from app.room import limits


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
    """Refuse bodies over the limit, by Content-Length or while streaming."""

    def __init__(self, app, max_bytes: int = limits.MAX_BODY_BYTES) -> None:
        self.app, self.max = app, max_bytes

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)
        msg = f"request body is larger than the {self.max:,}-byte limit"
        length = dict(scope["headers"]).get(b"content-length")
        if length is not None and length.isdigit() and int(length) > self.max:
            for m in _json_response(413, "too_large", msg):
                await send(m)
            return
        seen = 0
        started = False

        async def counted_receive():
            nonlocal seen
            message = await receive()
            if message["type"] == "http.request":
                seen += len(message.get("body", b""))
                if seen > self.max:
                    raise _TooLarge
            return message

        async def tracking_send(message):
            nonlocal started
            if message["type"] == "http.response.start":
                started = True
            await send(message)

        try:
            await self.app(scope, counted_receive, tracking_send)
        except _TooLarge:
            if not started:
                for m in _json_response(413, "too_large", msg):
                    await send(m)


class _TooLarge(Exception):
    pass
