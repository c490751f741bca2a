"""Security headers on every answer, no inline script in any template, API docs from installed files."""

from __future__ import annotations

import re
from html.parser import HTMLParser

import pytest

from app.assets import asset_dir
from app.web.guards import CONTENT_SECURITY_POLICY, cross_site_refusal

JSON = {"Content-Type": "application/json"}


def _room_id(client) -> str:
    return client.get("/api/rooms").json()[0]["id"]


def _urls(client) -> list[str]:
    rid = _room_id(client)
    return [
        "/",
        f"/rooms/{rid}",
        f"/rooms/{rid}/sheet",
        f"/rooms/{rid}/plan",
        "/fixtures/new",
        "/api/rooms",
        f"/api/rooms/{rid}",
        "/api/library/crops",
        "/static/leafcast.css",
        "/static-lib/plotly.min.js",
        "/docs",
        "/redoc",
        "/docs-assets/swagger-ui-bundle.js",
        "/openapi.json",
        "/api/rooms/no-such-room",  # a 404
        "/nowhere",
    ]


def _assert_headers(r):
    h = r.headers
    csp = h["content-security-policy"]
    assert "frame-ancestors 'none'" in csp
    script_src = re.search(r"script-src ([^;]+)", csp).group(1).split()
    assert script_src == ["'self'"], "scripts only from the app's own origin: no inline, no eval, no CDN"
    assert "default-src 'self'" in csp
    assert h["x-content-type-options"] == "nosniff"
    assert h["referrer-policy"] == "no-referrer"
    assert h["x-frame-options"] == "DENY"


def test_every_page_and_answer_carries_the_security_headers(client):
    for url in _urls(client):
        r = client.get(url)
        assert r.status_code in (200, 404), url
        _assert_headers(r)


def test_refusals_from_the_guards_carry_the_headers_too(client):
    for r in (
        client.post("/api/rooms", content=b"{}", headers={"Content-Type": "text/plain"}),  # 415
        client.post("/api/rooms", content=b"{}", headers={**JSON, "Origin": "http://127.0.0.1:1"}),  # 403
        client.get("/", headers={"Host": "evil.example"}),  # 421
        client.post("/api/rooms", content=b"x" * (9 * 1024 * 1024), headers=JSON),  # 413
    ):
        assert r.status_code in (403, 413, 415, 421)
        _assert_headers(r)


class _ScriptFinder(HTMLParser):
    """Inline script in a template: a <script> with a body and no src (JSON data blocks excepted), an on*=
    handler, or a javascript: URL. Any of them would be blocked by the CSP (or need 'unsafe-inline')."""

    def __init__(self):
        super().__init__()
        self.found: list[str] = []
        self._in_script = False

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        for name, value in attrs:
            if name.startswith("on"):
                self.found.append(f"inline handler {name}= on <{tag}>")
            if value and value.strip().lower().startswith("javascript:"):
                self.found.append(f"javascript: URL in {name} on <{tag}>")
        if tag == "script":
            self._in_script = "src" not in a and a.get("type", "text/javascript").lower() != "application/json"

    def handle_data(self, data):
        if self._in_script and data.strip():
            self.found.append(f"inline <script>: {data.strip()[:60]}")

    def handle_endtag(self, tag):
        if tag == "script":
            self._in_script = False


def inline_script_in(html: str) -> list[str]:
    finder = _ScriptFinder()
    finder.feed(html)
    return finder.found


def test_the_inline_script_check_itself_finds_each_kind():
    assert inline_script_in("<script>alert(1)</script>")
    assert inline_script_in('<button onclick="go()">x</button>')
    assert inline_script_in('<a href="javascript:go()">x</a>')
    assert not inline_script_in('<script src="/static/x.js"></script>')
    assert not inline_script_in('<script type="application/json" id="d">{"a": 1}</script>')


@pytest.mark.parametrize("template", sorted(p.name for p in asset_dir("templates").glob("*.html")))
def test_no_template_has_inline_script(template):
    text = (asset_dir("templates") / template).read_text(encoding="utf-8")
    assert not inline_script_in(text), f"{template}: move it to a file under static/ (the CSP forbids it)"


def test_rendered_pages_have_no_inline_script(client):
    rid = _room_id(client)
    for url in ("/", f"/rooms/{rid}", f"/rooms/{rid}/sheet", f"/rooms/{rid}/plan", "/fixtures/new", "/docs", "/redoc"):
        assert not inline_script_in(client.get(url).text), url


def test_api_docs_load_only_local_files(client):
    for url in ("/docs", "/redoc"):
        html = client.get(url).text
        srcs = re.findall(r'(?:src|href)="([^"]+)"', html)
        assert srcs and all(s.startswith("/") or s.startswith("data:") for s in srcs), srcs
        for s in srcs:
            if s.startswith("/"):
                assert client.get(s).status_code == 200, s
    assert "SwaggerUIBundle" in client.get("/docs-assets/swagger-ui-bundle.js").text[:5_000_000]
    assert client.get("/docs-assets/../../etc/passwd").status_code == 404


@pytest.mark.parametrize(
    "method,headers,status",
    [
        ("POST", {"sec-fetch-site": "cross-site", "content-type": "application/json"}, 403),
        ("POST", {"sec-fetch-site": "same-site", "content-type": "application/json"}, 403),  # another port
        ("PUT", {"origin": "http://127.0.0.1:9999", "host": "127.0.0.1:8000", "content-type": "application/json"}, 403),
        ("DELETE", {"origin": "null", "host": "127.0.0.1:8000"}, 403),
        ("POST", {"content-type": "text/plain", "content-length": "5"}, 415),
        ("POST", {"content-type": "application/x-www-form-urlencoded", "content-length": "5"}, 415),
        ("POST", {"content-type": "multipart/form-data; boundary=x", "content-length": "5"}, 415),
        ("POST", {"content-length": "5"}, 415),
        ("POST", {"content-type": "application/json; charset=utf-8", "content-length": "5"}, None),
        ("POST", {"sec-fetch-site": "same-origin", "content-type": "application/json"}, None),
        (
            "PUT",
            {"origin": "http://127.0.0.1:8000", "host": "127.0.0.1:8000", "content-type": "application/json"},
            None,
        ),
        ("DELETE", {}, None),  # curl, scripts
        ("GET", {"sec-fetch-site": "cross-site"}, None),  # reading is not guarded here (CORP and CORS protect it)
    ],
)
def test_cross_site_rule(method, headers, status):
    got = cross_site_refusal(method, "/api/rooms", {k.encode(): v.encode() for k, v in headers.items()})
    assert (got[0] if got else None) == status
    if got:
        assert "refused" in got[2].lower() or "content-type" in got[2].lower()


def test_curl_style_calls_and_the_apps_own_pages_keep_working(client, tent_doc):
    assert client.post("/api/rooms", json=tent_doc).status_code == 201
    same = {"Origin": "http://127.0.0.1", "Sec-Fetch-Site": "same-origin"}
    assert client.post("/api/rooms", json=tent_doc, headers=same).status_code == 201
    r = client.post("/api/rooms", json=tent_doc, headers={"Origin": "http://localhost:8000"})
    assert r.status_code == 403 and r.json()["error"] == "cross_site"


def test_csp_allows_nothing_from_elsewhere():
    for directive in CONTENT_SECURITY_POLICY.split("; "):
        sources = directive.split()[1:]
        assert not any(s.startswith("http") or s == "*" for s in sources), directive
