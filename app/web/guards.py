"""Two guards against other web pages: no cross-site writes, and security headers on every response.

Leafcast listens on this machine only, but any page the grower opens in the same browser can send requests to
it. Browsers let such a page POST a ``text/plain`` form, a ``fetch(..., {mode: "no-cors"})`` or a
``navigator.sendBeacon`` without asking anyone. So every state-changing request (POST, PUT, PATCH, DELETE):

- is refused with 403 when its ``Sec-Fetch-Site`` says it comes from another site or origin, or its ``Origin``
  is not the origin the request was sent to (a sandboxed page's ``Origin: null`` included);
- must carry ``Content-Type: application/json`` (a photometric file: ``application/octet-stream``) when it has
  a body, else 415: no form or beacon can set those types without a CORS preflight, which Leafcast never grants.

Requests without ``Origin`` and ``Sec-Fetch-Site`` (curl, scripts, the CLI) are not from a browser page, and
pass. References: W3C, Fetch Metadata Request Headers (2021); WHATWG Fetch standard, "CORS-safelisted request
header" (the three content types a page may send without a preflight).
"""

from __future__ import annotations

from urllib.parse import urlsplit

from app.web.middleware import _json_response

UNSAFE_METHODS = frozenset({"POST", "PUT", "PATCH", "DELETE"})
SAME_SITE_VALUES = frozenset({"same-origin", "none"})  # "none": the user typed the URL or used a bookmark
JSON_TYPE = "application/json"
# Routes whose body is a file, not JSON (still a type a cross-site form cannot send).
FILE_BODY_TYPES = {"/api/photometry/import": ("application/octet-stream",)}

# Only this app's own origin; no inline script. Plotly and the API docs set inline styles, hence 'unsafe-inline'
# for styles only. frame-ancestors 'none': no other page may frame the editor.
CONTENT_SECURITY_POLICY = "; ".join(
    (
        "default-src 'self'",
        "script-src 'self'",
        "style-src 'self' 'unsafe-inline'",
        "img-src 'self' data: blob:",
        "font-src 'self' data:",
        "connect-src 'self'",
        "worker-src 'self' blob:",
        "object-src 'none'",
        "base-uri 'none'",
        "form-action 'self'",
        "frame-ancestors 'none'",
    )
)
SECURITY_HEADERS = (
    (b"content-security-policy", CONTENT_SECURITY_POLICY.encode()),
    (b"x-content-type-options", b"nosniff"),
    (b"referrer-policy", b"no-referrer"),
    (b"x-frame-options", b"DENY"),
    (b"cross-origin-opener-policy", b"same-origin"),
    (b"cross-origin-resource-policy", b"same-origin"),
)


def _media_type(raw: bytes) -> str:
    return raw.decode("latin-1").split(";", 1)[0].strip().lower()


def _origin_matches(origin: str, host: str) -> bool:
    """Whether an Origin header names the origin (scheme http, the Host's name and port) it was sent to."""
    parts = urlsplit(origin)
    return parts.scheme == "http" and bool(parts.netloc) and parts.netloc.lower() == host.strip().lower()


def cross_site_refusal(method: str, path: str, headers: dict[bytes, bytes]) -> tuple[int, str, str] | None:
    """(status, error, message) if a request must be refused, else None."""
    if method not in UNSAFE_METHODS:
        return None
    site = headers.get(b"sec-fetch-site", b"").decode("latin-1").strip().lower()
    origin = headers.get(b"origin", b"").decode("latin-1").strip()
    host = headers.get(b"host", b"").decode("latin-1")
    if site and site not in SAME_SITE_VALUES:
        return (
            403,
            "cross_site",
            f"Refused: this {method} came from another web page ({site}). Leafcast changes rooms only for its "
            "own pages; nothing was changed.",
        )
    if origin and not _origin_matches(origin, host):
        return (
            403,
            "cross_site",
            f"Refused: this {method} came from the page at '{origin[:100]}', not from Leafcast. Nothing was changed.",
        )
    has_body = headers.get(b"content-length", b"0") not in (b"0", b"") or b"transfer-encoding" in headers
    ctype = headers.get(b"content-type")
    allowed = FILE_BODY_TYPES.get(path, (JSON_TYPE,))
    if (has_body or ctype is not None) and (ctype is None or _media_type(ctype) not in allowed):
        got = _media_type(ctype) if ctype is not None else "none"
        return (
            415,
            "unsupported_media_type",
            f"Send the body as Content-Type: {' or '.join(allowed)} (got {got[:60]}).",
        )
    return None


class CrossSiteGuard:
    """Refuse state-changing requests from other origins, and bodies of a type a cross-site form could send."""

    def __init__(self, app) -> None:
        self.app = app

    async def __call__(self, scope, receive, send):
        if scope["type"] == "http":
            refusal = cross_site_refusal(scope["method"], scope["path"], dict(scope["headers"]))
            if refusal is not None:
                for msg in _json_response(*refusal):
                    await send(msg)
                return
        await self.app(scope, receive, send)


class SecurityHeaders:
    """Add the content security policy and its companions to every response (pages, API, static files)."""

    def __init__(self, app) -> None:
        self.app = app

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)

        async def with_headers(message):
            if message["type"] == "http.response.start":
                present = {k.lower() for k, _ in message.get("headers", [])}
                extra = [(k, v) for k, v in SECURITY_HEADERS if k not in present]
                message = {**message, "headers": list(message.get("headers", [])) + extra}
            await send(message)

        await self.app(scope, receive, with_headers)
