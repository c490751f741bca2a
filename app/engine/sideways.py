"""Direct light that enters a covered tier sideways: from an emitter above the shelf over the tier.

Such an emitter (on the shelf above, over the floor beside the rack, in the next rack) reaches the tier only past
the shelf's edges (app/engine/tier_cover.py rejects the ones that cannot, and bounds the band of the tier that can
be lit). Nearly every point of that band lies in some box's shadow, so the open-air footprint shared by identical
fixtures saves nothing here; instead the light is computed on samples of the band and interpolated, as the near
mirror images are (app/engine/mirror_images.py). Samples are at most a quarter of the emitter's distance apart (its
open-air field is smooth on that scale) and at most one penumbra apart along each axis (:func:`sample_steps`; a bar
array seen past a shelf edge casts one sharp step per bar, so across its bars every map point is computed); the
open-air field and the share of it the boxes leave are interpolated apart, the share running nearly straight across
a penumbra. Against the Monte Carlo reference of tests/engine/test_covered_tiers.py: tier mean within 1 %, 10 cm
columns within 4 %. A footprint depends only on where emitter, boxes and grid are relative to each other, so it is
memoised in that frame and identical racks and tiers share it. Every sample is shadow-tested against every box that can stand in the way (the
engine's one shadow test, app/engine/shadows.py, with the penumbra-resolving nodes of app/engine/penumbra.py).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from app.engine.cache import MIB, memoise
from app.engine.direct import (
    Patch,
    _window,
    cull_radius_m,
    cull_share,
    irradiance_from_nodes,
    nearest_distance_m,
    relevant_boxes,
)
from app.engine.emitters import world_nodes
from app.engine.mirror_images import _bilinear, _strided
from app.engine.penumbra import shadowed_irradiance
from app.engine.scene import Box, Emitter, Grid
from app.engine.tier_cover import direct_reaches, lit_band

SAMPLES_PER_DISTANCE = 4
"""Samples per nearest distance from the emitter to the lit band (near mirror images use 8)."""
SIDEWAYS_SHADOW_SUBDIVISION = 2.0
"""Penumbra nodes this much closer than the open-air ones (direct light under a shelf: 6, mirror images: 1)."""


def element_extent_m(emitter: Emitter) -> tuple[float, float]:
    """Extent along x and y of the emitter's narrowest emitting element (one bar, the panel; 0 for a point) [m]."""
    if emitter.shape == "point":
        return 0.0, 0.0
    across = (
        emitter.width_m if emitter.shape == "panel" else min(emitter.bar_width_m or emitter.width_m, emitter.width_m)
    )
    a = np.radians(emitter.rotation_deg)
    c, s = abs(np.cos(a)), abs(np.sin(a))
    return emitter.length_m * c + across * s, emitter.length_m * s + across * c


def sample_steps(emitter: Emitter, grid: Grid, near: tuple[Box, ...], nearest_m: float) -> tuple[int, int]:
    """Sample strides along x and y [grid spacings].

    At most nearest/SAMPLES_PER_DISTANCE (the open-air field's scale), and at most the narrowest penumbra a
    box edge can cast along that axis: an element of extent a seen past an edge h above the canopy from H above it
    casts a penumbra a·h/(H − h) wide (similar triangles), and a bar array's bars each cast their own, so the
    shadow climbs in steps as each bar comes into view.
    """
    h = min((max(b.z0_m - grid.z_m, 0.0) for b in near), default=np.inf)
    big_h = emitter.z_m - grid.z_m
    steps = []
    for a in element_extent_m(emitter):
        width = a * h / max(big_h - h, 1e-9) if np.isfinite(h) else np.inf
        step_m = min(nearest_m / SAMPLES_PER_DISTANCE, width)
        steps.append(max(1, int(step_m / grid.spacing_m)))
    return steps[0], steps[1]


@dataclass(frozen=True)
class SharedPatch(Patch):
    """A Patch whose values another cache owns (the shared sideways footprint): it holds no memory of its own."""

    def cache_bytes(self) -> int:
        return 128


def shared_frame(emitter: Emitter, grid: Grid, boxes: tuple[Box, ...], cover: Box, reference_drop_m=None):
    """(emitter, grid, boxes, cover, reference drop) moved to the frame where sideways footprints are shared, or
    None when the emitter is out of reach of the grid.

    A footprint depends only on where the emitter, the boxes and the grid are relative to each other, so it is
    computed in a frame at the grid point next to the emitter and at the canopy's height: identical fixtures in
    identical racks (a vertical farm's rows, and its tiers, one above the other) share one computation.
    """
    xs, ys, s = grid.x_m, grid.y_m, grid.spacing_m
    dz = emitter.z_m - grid.z_m
    relative = cull_share(dz, reference_drop_m)
    if relative >= 1.0:
        return None
    reach = cull_radius_m(emitter.distribution, dz, relative) + 0.5 * emitter.largest_dimension_m
    if (
        abs(emitter.x_m - (grid.x0_m + grid.width_m / 2)) > reach + grid.width_m / 2
        or abs(emitter.y_m - (grid.y0_m + grid.length_m / 2)) > reach + grid.length_m / 2
    ):
        return None  # out of reach: decided before the shared frame is built
    ox = float(xs[0] + s * np.floor((emitter.x_m - xs[0]) / s + 1e-6))
    oy = float(ys[0] + s * np.floor((emitter.y_m - ys[0]) / s + 1e-6))
    oz = grid.z_m

    def moved(b: Box) -> Box:
        return Box(
            round(b.x0_m - ox, 9),
            round(b.y0_m - oy, 9),
            round(b.z0_m - oz, 9),
            round(b.x1_m - ox, 9),
            round(b.y1_m - oy, 9),
            round(b.z1_m - oz, 9),
        )

    near = relevant_boxes(emitter, grid, boxes, reach)
    local = replace(emitter, id="", x_m=round(emitter.x_m - ox, 9), y_m=round(emitter.y_m - oy, 9), z_m=round(dz, 9))
    frame = replace(grid, id="", x0_m=round(grid.x0_m - ox, 9), y0_m=round(grid.y0_m - oy, 9), z_m=0.0)
    ref = None if reference_drop_m is None else round(reference_drop_m, 9)
    return local, frame, tuple(moved(b) for b in near), moved(cover), ref


def sideways_patch(
    emitter: Emitter,
    grid: Grid,
    boxes: tuple[Box, ...],
    cover: Box,
    reference_drop_m: float | None = None,
) -> Patch | None:
    """Direct irradiance [µmol m⁻² s⁻¹] of an emitter above ``cover`` on the covered grid, or None.

    The cull tolerance is that of app.engine.direct.direct_patch (CULL_RELATIVE of the emitter's peak at
    ``reference_drop_m``), so a tier gets the same share of every emitter's light whichever way it comes.
    """
    key = shared_frame(emitter, grid, boxes, cover, reference_drop_m)
    found = None if key is None else _local_sideways(*key)
    return None if found is None else SharedPatch(found.i0, found.j0, found.values)


def sideways_plan(emitter: Emitter, grid: Grid, boxes, cover: Box, relative: float):
    """((i0, i1, j0, j1) window of the lit band, (step_x, step_y) sample strides, nearest distance [m], boxes in the
    way), or None when the emitter lights nothing of the grid (also what the cost estimate counts)."""
    reach = cull_radius_m(emitter.distribution, emitter.z_m - grid.z_m, relative) + 0.5 * emitter.largest_dimension_m
    band = lit_band(emitter, grid, cover, reach) if direct_reaches(emitter, grid, cover, reach) else None
    if band is None:
        return None
    xs, ys = grid.x_m, grid.y_m
    tol = 1e-9  # a map row on the shelf's open edge is in the band (the shared frame rounds to 1e-9 m)
    i0, i1 = _window(xs, band[0] - tol, band[2] + tol)
    j0, j1 = _window(ys, band[1] - tol, band[3] + tol)
    if i0 >= i1 or j0 >= j1:
        return None
    part = replace(grid, x0_m=band[0], y0_m=band[1], width_m=band[2] - band[0], length_m=band[3] - band[1])
    nearest = max(nearest_distance_m(emitter, part), 1e-6)
    near = relevant_boxes(emitter, grid, boxes, reach)
    step_x, step_y = sample_steps(emitter, grid, near, nearest)
    return (i0, i1, j0, j1), (step_x, step_y), nearest, near


@memoise("sideways_footprints", max_bytes=96 * MIB)
def _local_sideways(emitter: Emitter, grid: Grid, boxes, cover: Box, reference_drop_m, dtype=np.float32):
    """:func:`sideways_patch` in the frame where it is shared (grid point next to the emitter, canopy at z = 0)."""
    relative = cull_share(emitter.z_m - grid.z_m, reference_drop_m)
    if relative >= 1.0:
        return None
    plan = sideways_plan(emitter, grid, boxes, cover, relative)
    if plan is None:
        return None
    (i0, i1, j0, j1), (step_x, step_y), nearest, near = plan
    xs, ys = grid.x_m, grid.y_m
    sx, sy = _strided(xs[i0:i1], step_x), _strided(ys[j0:j1], step_y)
    gx, gy = np.meshgrid(sx, sy)
    pts = np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, grid.z_m)])
    nodes, flux = world_nodes(emitter, nearest)
    aim = {"tilt_deg": emitter.tilt_deg, "aim_deg": emitter.aim_deg}  # a tilted bar is read in its own frame
    open_air = irradiance_from_nodes(pts, nodes, flux, emitter.distribution, emitter.rotation_deg, **aim)
    # Nearly every sample lies in some box's shadow: all go to the penumbra integration (no candidate pass).
    lit = (
        shadowed_irradiance(pts, emitter, nearest, near, emitter.flux_umol_s, subdivision=SIDEWAYS_SHADOW_SUBDIVISION)
        if near
        else open_air
    )
    if step_x == step_y == 1:
        values = lit.reshape(gx.shape)
    else:
        # The open-air field and the share of it the boxes leave are each smooth: interpolate them apart (the share
        # runs nearly straight across a penumbra, where the product curves).
        seen = np.divide(lit, open_air, out=np.zeros_like(lit), where=open_air > 0)
        fine_x, fine_y = xs[i0:i1], ys[j0:j1]
        values = _bilinear(sx, sy, open_air.reshape(gx.shape), fine_x, fine_y) * _bilinear(
            sx, sy, seen.reshape(gx.shape), fine_x, fine_y
        )
    if not np.any(values > 0):
        return None
    out = np.maximum(values, 0.0).astype(dtype)
    out.setflags(write=False)
    return Patch(i0, j0, out)
