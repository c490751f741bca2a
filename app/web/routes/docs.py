"""API documentation pages served from files installed with Leafcast, so they work offline under the CSP.

Swagger UI and ReDoc come from the ``fastapi-offline`` package on PyPI (a dependency), which ships their
built files; Leafcast uses only those files, with its own pages and start-up scripts (no inline script).
"""

from __future__ import annotations

from pathlib import Path

from fastapi import APIRouter, HTTPException, Request
from fastapi.responses import FileResponse, HTMLResponse

from app.web.deps import templates_of

router = APIRouter(include_in_schema=False)

DOCS_ASSETS = {
    "swagger-ui-bundle.js": "application/javascript",
    "swagger-ui.css": "text/css",
    "redoc.standalone.js": "application/javascript",
}


def docs_asset_dir() -> Path:
    import fastapi_offline

    return Path(fastapi_offline.__file__).parent / "static"


@router.get("/docs", response_class=HTMLResponse)
def swagger_page(request: Request):
    return templates_of(request).TemplateResponse(request, "api_docs.html", {"page": {"title": "API", "ui": "swagger"}})


@router.get("/redoc", response_class=HTMLResponse)
def redoc_page(request: Request):
    return templates_of(request).TemplateResponse(request, "api_docs.html", {"page": {"title": "API", "ui": "redoc"}})


@router.get("/docs-assets/{name}")
def docs_asset(name: str):
    if name not in DOCS_ASSETS:
        raise HTTPException(404, f"no docs asset '{name[:80]}'")
    return FileResponse(
        docs_asset_dir() / name, media_type=DOCS_ASSETS[name], headers={"Cache-Control": "public, max-age=86400"}
    )
