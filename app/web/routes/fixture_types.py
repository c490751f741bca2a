"""Checks for fixture types typed in from a spec sheet (the editor's fixture-type form)."""

from __future__ import annotations

from fastapi import APIRouter

from app.room.models import FixtureType
from app.service.fixture_check import fixture_findings
from app.service.results_library import FixtureTypeCheck
from app.web.errors import ERRORS

router = APIRouter(prefix="/api/fixture-types", tags=["library"])


@router.post("/check", responses=ERRORS, summary="Plausibility of a fixture type: efficacy, weight for size")
def check_fixture_type(body: FixtureType) -> FixtureTypeCheck:
    findings = fixture_findings(body)
    return {"ok": not any(f["level"] == "impossible" for f in findings), "findings": findings}
