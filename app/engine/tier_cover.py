"""Which emitters can light a canopy covered by a shelf (a tier of a rack), found by a cheap geometric test.

A grid is *covered* by the lowest box whose underside is at or above its canopy and whose footprint spans it
(the one layout rule, app/room/layout.py, holds the tolerance). An emitter hung below that underside lights the
grid as any other. An emitter above it, on the shelf above or over the floor beside the rack, reaches the grid
only along segments that pass under the shelf's underside outside its footprint, that is through the tier's open
sides; those segments are then shadow-tested against every box like any other light (app/engine/direct.py).

The test. Emitter face and grid are level, so every segment from a point q of the face F (z_e) to a point p of
the grid G (z_g) crosses the plane of the underside (z = c) at the same parameter t = (c − z_g)/(z_e − z_g), at
X = (1 − t)·p + t·q. The crossings fill the rectangle (1 − t)·G + t·F (a Minkowski sum of rectangles; only the
part of G within the emitter's cull radius when that is given). If it lies inside the box's footprint, every
segment enters the box through its underside and is blocked: the emitter is rejected at the cost of a few
comparisons. This is what keeps a rack's upper fixtures off its lower tiers (a vertical farm's thousand fixtures
would otherwise each be shadow-tested against every tier below them).

Mirror images (app/engine/mirror_images.py) unfold the room into a lattice of mirrored rooms, each holding a
mirror copy of the box: an image is rejected when its rectangle lies inside the copy of the box in the one
lattice cell it falls in, and every image is rejected when the box spans the whole room (its copies then tile
the plane of the underside). Matt-wall light needs no test here: wall patches are shadowed by every box
(app/engine/patch_transfer.py).
"""

from __future__ import annotations

import numpy as np

from app.engine.scene import Box, Emitter, Enclosure, Grid
from app.room.layout import covers_from_above  # pure numbers: the one layout rule's tolerance

INSIDE_M = 1e-7
"""Slack of the containment test [m]: a rectangle this far past the footprint still counts as inside (rounding of
a shelf and a zone drawn to the same edges); the light through such a slit is nil."""
BELOW_M = 1e-9  # an emitter this close under the underside hangs below the shelf


def covering_box(grid: Grid, boxes: tuple[Box, ...]) -> Box | None:
    """The lowest box that covers the whole grid from above (a shelf over a tier), or None."""
    over = [
        b
        for b in boxes
        if covers_from_above(
            b.x0_m,
            b.y0_m,
            b.x1_m,
            b.y1_m,
            b.z0_m,
            grid.x0_m,
            grid.y0_m,
            grid.x0_m + grid.width_m,
            grid.y0_m + grid.length_m,
            grid.z_m,
        )
    ]
    return min(over, key=lambda b: b.z0_m, default=None)


def face_half_extent_m(emitter: Emitter) -> tuple[float, float]:
    """Half sizes along x and y of the emitter's face turned by its rotation [m] (0 for a point)."""
    a = np.radians(emitter.rotation_deg)
    c, s = abs(np.cos(a)), abs(np.sin(a))
    length, width = (emitter.length_m, emitter.width_m) if emitter.shape != "point" else (0.0, 0.0)
    return 0.5 * (length * c + width * s), 0.5 * (length * s + width * c)


def hangs_below(emitter: Emitter, cover: Box | None) -> bool:
    """Whether the emitter hangs below the covering box's underside (or there is none)."""
    return cover is None or emitter.z_m < cover.z0_m + BELOW_M


def _grid_rect(emitter: Emitter, grid: Grid, reach_m: float | None):
    """The grid's rectangle, cut to the emitter's reach when given; None when nothing is left."""
    x0, x1 = grid.x0_m, grid.x0_m + grid.width_m
    y0, y1 = grid.y0_m, grid.y0_m + grid.length_m
    if reach_m is not None:
        x0, x1 = max(x0, emitter.x_m - reach_m), min(x1, emitter.x_m + reach_m)
        y0, y1 = max(y0, emitter.y_m - reach_m), min(y1, emitter.y_m + reach_m)
        if x0 > x1 or y0 > y1:
            return None
    return x0, y0, x1, y1


def crossing_rect(emitter: Emitter, grid: Grid, cover: Box, reach_m: float | None = None, centre_m=None):
    """(x0, y0, x1, y1) where the segments from the emitter's face (centred at ``centre_m``, default its own
    centre) to the grid cross the plane of the cover's underside, or None when no grid point is in reach."""
    g = _grid_rect(emitter, grid, reach_m)
    if g is None:
        return None
    t = (cover.z0_m - grid.z_m) / (emitter.z_m - grid.z_m)
    hx, hy = face_half_extent_m(emitter)
    cx, cy = centre_m if centre_m is not None else (emitter.x_m, emitter.y_m)
    return (
        (1 - t) * g[0] + t * (cx - hx),
        (1 - t) * g[1] + t * (cy - hy),
        (1 - t) * g[2] + t * (cx + hx),
        (1 - t) * g[3] + t * (cy + hy),
    )


def _inside(rect, x0, y0, x1, y1) -> bool:
    return (
        rect[0] >= x0 - INSIDE_M and rect[1] >= y0 - INSIDE_M and rect[2] <= x1 + INSIDE_M and rect[3] <= y1 + INSIDE_M
    )


def direct_reaches(emitter: Emitter, grid: Grid, cover: Box | None, reach_m: float | None = None) -> bool:
    """Whether the emitter's direct light can reach the grid at all (False: the shelf over it hides it whole)."""
    if emitter.z_m <= grid.z_m:
        return False
    if hangs_below(emitter, cover):
        return True
    rect = crossing_rect(emitter, grid, cover, reach_m)
    return rect is not None and not _inside(rect, cover.x0_m, cover.y0_m, cover.x1_m, cover.y1_m)


def spans_room(box: Box, enc: Enclosure) -> bool:
    """Whether the box's footprint holds the whole room's (its mirror copies then tile the plane)."""
    return _inside((0.0, 0.0, enc.width_m, enc.length_m), box.x0_m, box.y0_m, box.x1_m, box.y1_m)


def _copy_extent(lo: float, hi: float, cell: int, size: float) -> tuple[float, float]:
    """The extent [lo, hi] mirrored into lattice cell ``cell`` of the given size (cell 0: itself)."""
    if cell % 2 == 0:
        return cell * size + lo, cell * size + hi
    return cell * size + size - hi, cell * size + size - lo


def images_past_cover(emitter: Emitter, grid: Grid, enc: Enclosure, cover: Box | None, images) -> list:
    """The mirror images (i, j, weight) whose light can reach the grid past the cover (all when it hangs below)."""
    if hangs_below(emitter, cover) or not images:
        return list(images)
    if emitter.z_m <= grid.z_m or spans_room(cover, enc):
        return []
    out = []
    for im in images:
        # The image's centre is the emitter's centre mirrored into its lattice cell.
        cx = _copy_extent(emitter.x_m, emitter.x_m, im[0], enc.width_m)[0]
        cy = _copy_extent(emitter.y_m, emitter.y_m, im[1], enc.length_m)[0]
        rect = crossing_rect(emitter, grid, cover, centre_m=(cx, cy))
        a = int(np.floor((0.5 * (rect[0] + rect[2])) / enc.width_m))
        b = int(np.floor((0.5 * (rect[1] + rect[3])) / enc.length_m))
        x0, x1 = _copy_extent(cover.x0_m, cover.x1_m, a, enc.width_m)
        y0, y1 = _copy_extent(cover.y0_m, cover.y1_m, b, enc.length_m)
        if not _inside(rect, x0, y0, x1, y1):
            out.append(im)
    return out


def direct_matrix(emitters: tuple[Emitter, ...], grids: tuple[Grid, ...], covers) -> np.ndarray:
    """(G, E) booleans: :func:`direct_reaches` (no reach) for every emitter and grid, vectorised over emitters."""
    out = np.zeros((len(grids), len(emitters)), dtype=bool)
    if not emitters:
        return out
    ez = np.array([e.z_m for e in emitters])
    ex = np.array([e.x_m for e in emitters])
    ey = np.array([e.y_m for e in emitters])
    half = np.array([face_half_extent_m(e) for e in emitters])
    for k, (g, cover) in enumerate(zip(grids, covers, strict=True)):
        above_grid = ez > g.z_m
        if cover is None:
            out[k] = above_grid
            continue
        below = ez < cover.z0_m + BELOW_M
        with np.errstate(divide="ignore", invalid="ignore"):
            t = (cover.z0_m - g.z_m) / (ez - g.z_m)
        gx0, gx1, gy0, gy1 = g.x0_m, g.x0_m + g.width_m, g.y0_m, g.y0_m + g.length_m
        inside = (
            ((1 - t) * gx0 + t * (ex - half[:, 0]) >= cover.x0_m - INSIDE_M)
            & ((1 - t) * gy0 + t * (ey - half[:, 1]) >= cover.y0_m - INSIDE_M)
            & ((1 - t) * gx1 + t * (ex + half[:, 0]) <= cover.x1_m + INSIDE_M)
            & ((1 - t) * gy1 + t * (ey + half[:, 1]) <= cover.y1_m + INSIDE_M)
        )
        out[k] = above_grid & (below | ~inside)
    return out


def lit_band(emitter: Emitter, grid: Grid, cover: Box, reach_m: float | None = None):
    """(x0, y0, x1, y1): a rectangle of the grid holding every point the emitter above the cover can light.

    A point p is lit only if some crossing (1 − t)·p + t·q, q on the face, lies outside the cover's footprint:
    past its left edge only if p_x < (x0_B − t·x0_F)/(1 − t), and so on for each side. The union of these
    bands (each cut to the grid) is bounded by the rectangle returned; None when every band is empty.
    """
    g = _grid_rect(emitter, grid, reach_m)
    if g is None:
        return None
    t = (cover.z0_m - grid.z_m) / (emitter.z_m - grid.z_m)
    hx, hy = face_half_extent_m(emitter)
    f = (emitter.x_m - hx, emitter.y_m - hy, emitter.x_m + hx, emitter.y_m + hy)
    b = (cover.x0_m, cover.y0_m, cover.x1_m, cover.y1_m)
    bands = []
    for k in range(2):  # x, then y
        low = (b[k] - t * f[k]) / (1 - t)  # points below this along the axis see past the low edge
        high = (b[k + 2] - t * f[k + 2]) / (1 - t)  # points above this, past the high edge
        if low > g[k] - INSIDE_M:
            r = list(g)
            r[k + 2] = min(g[k + 2], low + INSIDE_M)
            bands.append(r)
        if high < g[k + 2] + INSIDE_M:
            r = list(g)
            r[k] = max(g[k], high - INSIDE_M)
            bands.append(r)
    if not bands:
        return None
    return (min(r[0] for r in bands), min(r[1] for r in bands), max(r[2] for r in bands), max(r[3] for r in bands))
