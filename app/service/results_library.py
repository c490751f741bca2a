"""Typed results of the photometry import, the fixture-type check and the editor's drag-preview footprints."""

from __future__ import annotations

from pydantic import Field

from app.room.models import FixtureType
from app.service.results import Finding, Result


class ImportReport(Result):
    """How a photometric file became a fixture type: its fluxes and the conversion to photons."""

    zonal_flux: float = Field(description="Flux integrated from the intensity table (lm, or µmol/s for photons)")
    downward_flux: float
    upward_share: float = Field(description="Share of the flux above the horizon, 0-1 (not used)")
    declared_flux: float | None = Field(description="The flux the file states, when it states one")
    zonal_over_declared: float | None
    flux_unit: str = Field(description="lumen or photon")
    umol_per_unit: float = Field(description="µmol/s per unit of the file's flux")
    ppf_umol_s: float
    umol_per_j: float
    notes: list[str]
    findings: list[Finding]


class ImportedFixture(Result):
    fixture_type: FixtureType
    report: ImportReport


class FixtureTypeCheck(Result):
    ok: bool = Field(description="No finding is 'impossible'")
    findings: list[Finding]


class Footprint(Result):
    """One fixture's open-air direct PPFD at 100 % on a square of grid points centred on it."""

    fixture_id: str
    zone_id: str | None = Field(description="The zone it lights; None: it lights none (no footprint)")
    type_id: str
    rotation_deg: float
    above_canopy_m: float | None
    spacing_m: float
    radius_cells: int = Field(description="Points each side of the centre")
    ppfd: list[list[float]] | None = Field(description="(2r+1) rows of (2r+1) values [µmol m⁻² s⁻¹]")
