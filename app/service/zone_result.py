"""One canopy zone's part of the analysis: its PPFD and DLI figures against the crop stage's target, the dark and
hot areas, its warnings (dark area, hot spot, over the target, uneven, unlit, photoperiod) and its maps."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from app.engine import metrics as mx
from app.room.models import CanopyZone, Crop, CropStage, Room
from app.service.notices import nearest_fixture, photoperiod_warnings, warn
from app.service.verdict import zone_verdict

UNIFORMITY_NOTE_BELOW = 0.7  # Leafcast's own prompt, no source: no horticultural pass mark is published


def zone_photoperiod_h(room: Room, zone: CanopyZone) -> float:
    return zone.photoperiod_h if zone.photoperiod_h is not None else room.schedule.photoperiod_h


@dataclass(frozen=True)
class _ZoneFigures:
    """A zone's maps and the figures its warnings and result read (PPFD µmol m⁻² s⁻¹, DLI mol m⁻² d⁻¹, m²)."""

    ppfd: np.ndarray
    dli: np.ndarray
    area: np.ndarray
    xs: np.ndarray
    ys: np.ndarray
    stats: dict[str, Any]
    dli_stats: dict[str, Any]
    dark: np.ndarray
    hot: np.ndarray
    dark_area: float
    dark_share: float
    hot_area: float
    hot_share: float


def _zone_figures(zl, stage: CropStage, photoperiod: float) -> _ZoneFigures:
    ppfd = zl.ppfd
    area = zl.grid.cell_area_m2
    dli = mx.dli_mol_m2_d(ppfd, photoperiod)
    dark = dli < stage.dli_min
    hot = ppfd > stage.ppfd_stress_umol_m2_s
    dark_area, dark_share = mx.share_of_area(dark, area)
    hot_area, hot_share = mx.share_of_area(hot, area)
    return _ZoneFigures(
        ppfd=ppfd,
        dli=dli,
        area=area,
        xs=zl.grid.x_m,
        ys=zl.grid.y_m,
        stats=mx.area_weighted_stats(ppfd, area),
        dli_stats=mx.area_weighted_stats(dli, area),
        dark=dark,
        hot=hot,
        dark_area=dark_area,
        dark_share=dark_share,
        hot_area=hot_area,
        hot_share=hot_share,
    )


def zone_result(
    room: Room, zone: CanopyZone, zl, crop: Crop, allowance: float, include_grids: bool
) -> tuple[dict[str, Any], list[dict[str, Any]], float, float]:
    """One zone's figures and warnings, and its canopy flux [µmol s⁻¹] and photons [mol d⁻¹]."""
    stage = crop.stages[zone.stage]
    photoperiod = zone_photoperiod_h(room, zone)
    fig = _zone_figures(zl, stage, photoperiod)
    flux = float((fig.ppfd * fig.area).sum())
    direct_flux = float((zl.direct * fig.area).sum())
    in_band = (fig.dli >= stage.dli_min) & (fig.dli <= stage.dli_max)
    _band_area, band_share = mx.share_of_area(in_band, fig.area)
    avg, dli_avg = fig.stats["avg"], fig.dli_stats["avg"]
    target_mid = 0.5 * (stage.dli_min + stage.dli_max)
    warnings = _zone_warnings(room, zone, crop, stage, fig, allowance) + photoperiod_warnings(zone, crop, photoperiod)

    zone_out: dict[str, Any] = {
        "id": zone.id,
        "name": zone.name,
        "crop_id": crop.id,
        "crop_name": crop.name,
        "stage": zone.stage,
        "canopy_height_m": zone.canopy_height_m,
        "photoperiod_h": photoperiod,
        "rect": [zone.x_m, zone.y_m, zone.width_m, zone.length_m],
        "target": _target(stage, photoperiod),
        "ppfd": fig.stats,
        "dli": fig.dli_stats,
        "share_in_band": band_share,
        "dark": {
            "area_m2": fig.dark_area,
            "share": fig.dark_share,
            "outline": mx.mask_outline(fig.dark, fig.xs, fig.ys),
        },
        "hot": {"area_m2": fig.hot_area, "share": fig.hot_share, "outline": mx.mask_outline(fig.hot, fig.xs, fig.ys)},
        "verdict": zone_verdict(fig.dark_share, fig.hot_share, dli_avg, stage.dli_max, allowance),
        "photoperiod_for_target_h": float(mx.photoperiod_for_dli_h(stage.dli_min, avg)) if avg > 0 else None,
        "dimming_scale_for_target_mid": target_mid / dli_avg if dli_avg > 0 else None,
        "canopy_flux_umol_s": flux,
        "direct_share": direct_flux / flux if flux > 0 else 0.0,
        "reflected_share": 1 - direct_flux / flux if flux > 0 else 0.0,
        "area_m2": float(fig.area.sum()),
    }
    if include_grids:
        zone_out["grid"] = {
            "x_m": np.round(fig.xs, 5).tolist(),
            "y_m": np.round(fig.ys, 5).tolist(),
            "spacing_m": zl.grid.spacing_m,
            "ppfd": _round_grid(fig.ppfd),
            "dli": _round_grid(fig.dli, 2),
        }
    return zone_out, warnings, flux, flux * photoperiod * mx.DLI_FACTOR


def _round_grid(a: np.ndarray, digits: int = 1) -> list[list[float]]:
    return np.round(a.astype(float), digits).tolist()


def _target(stage: CropStage, photoperiod: float) -> dict[str, Any]:
    return {
        "dli_min": stage.dli_min,
        "dli_max": stage.dli_max,
        "ppfd_min": float(mx.ppfd_for_dli(stage.dli_min, photoperiod)),
        "ppfd_max": float(mx.ppfd_for_dli(stage.dli_max, photoperiod)),
        "ppfd_stress": stage.ppfd_stress_umol_m2_s,
        "source": stage.source,
    }


def _zone_warnings(
    room: Room, zone: CanopyZone, crop: Crop, stage: CropStage, fig: _ZoneFigures, allowance: float
) -> list[dict[str, Any]]:
    """The zone's warnings from its figures, in the order the pages list them (photoperiod rules follow)."""
    warnings: list[dict[str, Any]] = []
    if fig.dark_share > 0:
        warnings.append(_dark_warning(zone, crop, stage, fig, allowance))
    if fig.hot_share > 0:
        warnings.append(_hot_warning(room, zone, crop, stage, fig))
    if fig.dli_stats["avg"] > stage.dli_max and fig.stats["avg"] > 0:
        warnings.append(_over_target_warning(zone, stage, fig))
    if fig.stats["avg"] > 0 and fig.stats["min_over_avg"] < UNIFORMITY_NOTE_BELOW:
        warnings.append(
            warn(
                "uneven",
                "info",
                f"{zone.name}: uniformity min/avg is {fig.stats['min_over_avg']:.2f} "
                f"(Leafcast flags below {UNIFORMITY_NOTE_BELOW:g}, a default with no published source).",
                "Spread the fixtures more evenly, raise them, or add one where it is darkest.",
                zone.id,
                where=mx.mask_bounds(fig.ppfd <= fig.stats["min"] * 1.05, fig.xs, fig.ys),
            )
        )
    if fig.stats["avg"] == 0:
        warnings.append(warn("unlit", "error", f"{zone.name} gets no light.", "Hang a fixture over it.", zone.id))
    return warnings


def _dark_warning(
    zone: CanopyZone, crop: Crop, stage: CropStage, fig: _ZoneFigures, allowance: float
) -> dict[str, Any]:
    within = fig.dark_share <= allowance + 1e-9
    return warn(
        "dark_zone",
        "info" if within else ("warning" if fig.dark_share < 0.5 else "error"),
        f"{fig.dark_share:.0%} of {zone.name} ({fig.dark_area:.2f} m²) gets less than the "
        f"{stage.dli_min:g} mol m⁻² d⁻¹ that {crop.name.lower()} needs "
        f"(lowest {fig.dli_stats['min']:.1f}); "
        + (
            f"within the {allowance:.0%} allowance for dark area."
            if within
            else f"more than the {allowance:.0%} allowance for dark area."
        ),
        "Nothing to do: within the allowance."
        if within
        else "Lengthen the photoperiod, raise the dimming, lower the fixtures or add one over the dark area.",
        zone.id,
        where=mx.mask_bounds(fig.dark, fig.xs, fig.ys),
    )


def _hot_warning(room: Room, zone: CanopyZone, crop: Crop, stage: CropStage, fig: _ZoneFigures) -> dict[str, Any]:
    b = mx.mask_bounds(fig.hot, fig.xs, fig.ys)
    fid = nearest_fixture(room, 0.5 * (b[0] + b[2]), 0.5 * (b[1] + b[3]))
    fix = (
        f"Raise or dim the fixtures over it (peak {fig.stats['max']:.0f} against the "
        f"{stage.ppfd_stress_umol_m2_s:g} limit)."
    )
    return warn(
        "hot_spot",
        "warning",
        f"{fig.hot_share:.0%} of {zone.name} ({fig.hot_area:.2f} m²) is above "
        f"{stage.ppfd_stress_umol_m2_s:g} µmol m⁻² s⁻¹, where {crop.name.lower()} leaves are stressed.",
        fix,
        zone.id,
        fid,
        b,
    )


def _over_target_warning(zone: CanopyZone, stage: CropStage, fig: _ZoneFigures) -> dict[str, Any]:
    hours_fit = float(mx.photoperiod_for_dli_h(stage.dli_max, fig.stats["avg"]))
    return warn(
        "over_target",
        "info",
        f"{zone.name} averages {fig.dli_stats['avg']:.1f} mol m⁻² d⁻¹, above the "
        f"{stage.dli_min:g}-{stage.dli_max:g} band: power is being spent for no gain.",
        f"Shorten the photoperiod (about {math.floor(hours_fit * 4) / 4:g} h would bring the average "
        "to the top of the band) or dim the fixtures over it.",
        zone.id,
    )
