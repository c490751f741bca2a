"""Direct light that enters a covered tier sideways: from an emitter above the shelf over the tier.

Such an emitter (on the shelf above, over the floor beside the rack, in the next rack) reaches the tier only past
the shelf's edges (app/engine/tier_cover.py rejects the ones that cannot, and bounds the band of the tier that can
be lit). Nearly every point of that band lies in some box's shadow, so the open-air footprint shared by identical
fixtures saves nothing here; instead the light is computed on samples of the band and interpolated, as the near
mirror images are (app/engine/mirror_images.py): the emitter is at least ``nearest`` from every point, so its
open-air field is smooth on that scale, and the shelf edge's shadow is as soft as the emitter's width seen over the
gap between shelf and canopy. Every sample is shadow-tested against every box that can stand in the way (the
engine's one shadow test, app/engine/shadows.py, with the penumbra-resolving nodes of app/engine/penumbra.py).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from app.engine.direct import (
    CULL_RELATIVE,
    Patch,
    _window,
    cull_radius_m,
    irradiance_from_nodes,
    nearest_distance_m,
    relevant_boxes,
    relight_shadowed,
)
from app.engine.emitters import world_nodes
from app.engine.mirror_images import _bilinear, _strided
from app.engine.scene import Box, Emitter, Grid
from app.engine.tier_cover import direct_reaches, lit_band

SAMPLES_PER_DISTANCE = 8
"""Samples per nearest distance from the emitter to the lit band (near mirror images use the same)."""
SIDEWAYS_SHADOW_SUBDIVISION = 2.0
"""Penumbra nodes this much closer than the open-air ones (direct light under a shelf: 6, mirror images: 1)."""


def sideways_patch(
    emitter: Emitter,
    grid: Grid,
    boxes: tuple[Box, ...],
    cover: Box,
    reference_drop_m: float | None = None,
    dtype=np.float32,
) -> Patch | None:
    """Direct irradiance [µmol m⁻² s⁻¹] of an emitter above ``cover`` on the covered grid, or None.

    The cull tolerance is that of app.engine.direct.direct_patch (CULL_RELATIVE of the emitter's peak at
    ``reference_drop_m``), so a tier gets the same share of every emitter's light whichever way it comes.
    """
    dz = emitter.z_m - grid.z_m
    if dz <= 0:
        return None
    relative = CULL_RELATIVE * (dz / min(reference_drop_m or dz, dz)) ** 2
    if relative >= 1.0:
        return None
    reach = cull_radius_m(emitter.distribution, dz, relative) + 0.5 * emitter.largest_dimension_m
    band = lit_band(emitter, grid, cover, reach) if direct_reaches(emitter, grid, cover, reach) else None
    if band is None:
        return None
    xs, ys = grid.x_m, grid.y_m
    i0, i1 = _window(xs, band[0], band[2])
    j0, j1 = _window(ys, band[1], band[3])
    if i0 >= i1 or j0 >= j1:
        return None
    part = replace(grid, x0_m=band[0], y0_m=band[1], width_m=band[2] - band[0], length_m=band[3] - band[1])
    nearest = max(nearest_distance_m(emitter, part), 1e-6)
    step = max(1, int(nearest / (SAMPLES_PER_DISTANCE * grid.spacing_m)))
    sx, sy = _strided(xs[i0:i1], step), _strided(ys[j0:j1], step)
    gx, gy = np.meshgrid(sx, sy)
    pts = np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, grid.z_m)])
    nodes, flux = world_nodes(emitter, nearest)
    values = irradiance_from_nodes(pts, nodes, flux, emitter.distribution, emitter.rotation_deg)
    near = relevant_boxes(emitter, grid, boxes, reach)
    relight_shadowed(
        values, pts, emitter, nearest, near, emitter.flux_umol_s, subdivision=SIDEWAYS_SHADOW_SUBDIVISION
    )
    values = values.reshape(gx.shape)
    if step > 1:
        values = _bilinear(sx, sy, values, xs[i0:i1], ys[j0:j1])
    if not np.any(values > 0):
        return None
    return Patch(i0, j0, np.maximum(values, 0.0).astype(dtype))
