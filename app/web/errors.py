"""Error bodies and their mapping: every refusal is JSON naming the field and the reason, never a traceback."""

from __future__ import annotations

from fastapi import FastAPI, Request
from fastapi.exceptions import RequestValidationError
from pydantic import BaseModel, Field
from starlette.exceptions import HTTPException as StarletteHTTPException

from app.room.roomfile import Problem, RoomFileError
from app.room.storage import StorageFull
from app.web.json_edge import FiniteJSONResponse


class ProblemOut(BaseModel):
    field: str
    message: str


class ErrorOut(BaseModel):
    error: str = Field(description="Machine-readable kind of error.")
    message: str
    problems: list[ProblemOut] = []
    current_revision: int | None = None
    estimate: dict | None = Field(default=None, description="The cost model's estimate, when it refused")


ERRORS = {code: {"model": ErrorOut} for code in (400, 403, 404, 409, 413, 415, 421, 422, 503, 507)}


class ApiError(Exception):
    def __init__(
        self,
        status: int,
        error: str,
        message: str,
        problems: list[Problem] | None = None,
        current_revision: int | None = None,
        estimate: dict | None = None,
    ) -> None:
        self.status, self.error, self.message = status, error, message
        self.problems, self.current_revision = problems or [], current_revision
        self.estimate = estimate


def error_json(
    status: int, error: str, message: str, problems=(), current_revision=None, estimate=None
) -> FiniteJSONResponse:
    body = {"error": error, "message": message, "problems": [p.as_dict() for p in problems]}
    if current_revision is not None:
        body["current_revision"] = current_revision
    if estimate is not None:
        body["estimate"] = estimate
    return FiniteJSONResponse(body, status_code=status)


def room_error(exc: RoomFileError) -> ApiError:
    status = 413 if exc.kind == "too_large" else 422
    first = exc.problems[0] if exc.problems else Problem("(document)", "invalid")
    message = f"{first.field}: {first.message}" + (
        f" (and {len(exc.problems) - 1} more)" if len(exc.problems) > 1 else ""
    )
    return ApiError(status, exc.kind, message, exc.problems)


def stale_revision(exc) -> ApiError:
    """409 for a save based on an old revision (a :class:`app.room.storage.StaleRevision`): nothing was saved."""
    return ApiError(
        409,
        "stale_revision",
        f"This room was changed elsewhere (now revision {exc.current}); your change was based on "
        f"revision {exc.given} and was not saved.",
        current_revision=exc.current,
    )


def not_found(what: str) -> ApiError:
    return ApiError(404, "not_found", what)


def install_error_handlers(app: FastAPI) -> None:
    @app.exception_handler(ApiError)
    async def _api_error(request: Request, exc: ApiError):
        return error_json(exc.status, exc.error, exc.message, exc.problems, exc.current_revision, exc.estimate)

    @app.exception_handler(RequestValidationError)
    async def _validation(request: Request, exc: RequestValidationError):
        problems = [Problem(".".join(str(p) for p in e["loc"]), e["msg"]) for e in exc.errors()]
        return error_json(422, "invalid_request", problems[0].message if problems else "invalid request", problems)

    @app.exception_handler(StorageFull)
    async def _disk_full(request: Request, exc: StorageFull):
        return error_json(
            507,
            "storage_full",
            "The disk that holds your rooms is full, so nothing was saved; the room is still at its last saved "
            "revision. Free some space and save again.",
        )

    @app.exception_handler(StarletteHTTPException)
    async def _http(request: Request, exc: StarletteHTTPException):
        return error_json(exc.status_code, "http_error", str(exc.detail))
