"""From matt-wall patches to the canopy map: the (points × patches) transfer.

Patch-to-map transfers are exact within EXACT_WITHIN_SIZES patch diagonals (Lambert's contour formula),
clipped at the map's horizon, averaged over the cell at a matt wall, and shadowed by obstacles and canopies.
"""

from __future__ import annotations

import numpy as np

from app.engine.cache import MIB, memoise
from app.engine.direct import blocked
from app.engine.formfactors import upward_element_to_axis_rectangles
from app.engine.mirror_images import _boxes_between
from app.engine.radiosity import Patches, wall_patches
from app.engine.scene import Box, Enclosure, Grid

CACHE_TRANSFER_ELEMENTS = 16_000_000  # points × patches of a cached transfer (float32: 64 MB)


def _grid_points(grid: Grid, rows: slice = slice(None)) -> np.ndarray:
    gx, gy = np.meshgrid(grid.x_m, grid.y_m[rows])
    return np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, grid.z_m)])


EDGE_CELLS = 2  # points this many spacings from a matt wall take their cell's mean transfer
_GL3 = np.polynomial.legendre.leggauss(3)


def _cell_edges(points: np.ndarray, start: float, extent: float) -> np.ndarray:
    mid = 0.5 * (points[1:] + points[:-1])
    return np.concatenate([[start], mid, [start + extent]])


@memoise("patch_to_grid", max_bytes=64 * MIB)
def patch_to_grid(
    enc: Enclosure, grid: Grid, cuts_m: tuple[float, ...] = (), boxes: tuple[Box, ...] = ()
) -> np.ndarray:
    """(M, P) irradiance at each grid point per unit exitance of each patch, shadowed by ``boxes``.

    A box hides a patch from a point when it crosses the segment to the patch's centre (clipped at
    the point's horizon); patches are a quarter metre, so many of them make a soft shadow.

    Grid points lie on the zone's edges; where a zone meets a matt wall the irradiance changes fast
    (it rises to half the wall's exitance at the wall's foot), so points within EDGE_CELLS spacings
    of a matt wall take the mean over their own cell (3 × 3 Gauss-Legendre points) rather than the
    value at the point, and the map integrates to the light that lands.
    """
    R = _transfer(enc, wall_patches(enc, cuts_m), grid, boxes=boxes)
    R.setflags(write=False)
    return R


def _transfer(enc: Enclosure, p: Patches, grid: Grid, rows: slice = slice(None), boxes=()) -> np.ndarray:
    """(M, P) transfer for the grid rows ``rows``, edge cells averaged and shadowed (see patch_to_grid)."""
    pts = _grid_points(grid, rows)
    R = _to_points(p, pts)
    above = _boxes_between(boxes, grid.z_m, enc.height_m)
    if above and len(p.areas):
        seen = p.corners.copy()
        seen[..., 2] = np.maximum(seen[..., 2], grid.z_m)
        hidden = blocked(seen.mean(axis=1) + 1e-6 * p.normals, pts, above)  # (P, M)
        R[hidden.T] = 0.0
    near = _near_matt_wall(enc, grid, pts)
    if near.any():
        j_first = range(grid.ny)[rows].start if grid.ny else 0
        xe = _cell_edges(grid.x_m, grid.x0_m, grid.width_m)
        ye = _cell_edges(grid.y_m, grid.y0_m, grid.length_m)
        idx = np.nonzero(near)[0]
        i, j = idx % grid.nx, idx // grid.nx + j_first
        t, w = _GL3
        u = 0.5 * (t + 1.0)
        sx = xe[i, None] + (xe[i + 1] - xe[i])[:, None] * u[None, :]  # (n, 3)
        sy = ye[j, None] + (ye[j + 1] - ye[j])[:, None] * u[None, :]
        sub = np.stack(
            [np.repeat(sx, 3, axis=1), np.tile(sy, (1, 3)), np.full((idx.size, 9), grid.z_m)], axis=-1
        ).reshape(-1, 3)
        ww = (np.outer(w, w) / 4.0).ravel()
        R[idx] = np.einsum("nsp,s->np", _to_points(p, sub).reshape(idx.size, 9, -1), ww.astype(np.float32))
    return R


def _near_matt_wall(enc: Enclosure, grid: Grid, pts: np.ndarray) -> np.ndarray:
    reach = EDGE_CELLS * grid.spacing_m
    out = np.zeros(pts.shape[0], dtype=bool)
    for side, k, at in (("left", 0, 0.0), ("right", 0, enc.width_m), ("front", 1, 0.0), ("back", 1, enc.length_m)):
        if enc.surface(side)[0] == "diffuse":
            out |= np.abs(pts[:, k] - at) < reach
    return out


EXACT_WITHIN_SIZES = 5.0
"""Patch-to-point transfers closer than this many patch diagonals use the exact configuration factor;
farther ones the point formula cos·cos·A/(π r²), within 0.7 % there (tests/engine/test_formfactors.py)."""


def _to_points(p: Patches, pts: np.ndarray) -> np.ndarray:
    """(M, P) irradiance at upward points (all at one height) per unit patch exitance.

    Each patch is clipped at the points' horizon (the part of a wall below a canopy cannot light it).
    Near patches: the exact element-to-rectangle factor (app/engine/formfactors.py); far ones: the
    point formula at the clipped patch's centre.
    """
    z = float(pts[0, 2]) if len(pts) else 0.0
    corners = p.corners.copy()
    corners[..., 2] = np.maximum(corners[..., 2], z)
    centres = corners.mean(axis=1)
    e1, e2 = corners[:, 1] - corners[:, 0], corners[:, 3] - corners[:, 0]
    area = np.linalg.norm(np.cross(e1, e2), axis=1)
    diag = np.linalg.norm(e1 + e2, axis=1)
    c, n, a = centres.astype(np.float32), p.normals.astype(np.float32), area.astype(np.float32)
    q = pts.astype(np.float32)
    dx = c[None, :, 0] - q[:, None, 0]
    dy = c[None, :, 1] - q[:, None, 1]
    dz = c[None, :, 2] - q[:, None, 2]
    r2 = dx * dx + dy * dy + dz * dz
    # cos at the receiver is Δz/r, at the patch −(d·n)/r; their product over r² is (…)/r².
    r2 = np.maximum(r2, np.float32(1e-12))  # a zero-size clipped patch may sit on a point: zeroed below
    cc = np.maximum(dz, 0) * np.maximum(-(dx * n[:, 0] + dy * n[:, 1] + dz * n[:, 2]), 0) / r2
    R = cc * a / (np.float32(np.pi) * r2)
    near = r2 < (EXACT_WITHIN_SIZES * diag.astype(np.float32)) ** 2
    mi, pi = np.nonzero(near)
    if mi.size:
        R[mi, pi] = _pair_factors(pts[mi], corners[pi])
    R[:, area <= 0] = 0.0
    return R


def _pair_factors(p: np.ndarray, corners: np.ndarray) -> np.ndarray:
    """Exact factors for matched pairs: upward elements p (K, 3) and axis-aligned rectangles corners (K, 4, 3)."""
    out = np.empty(p.shape[0], dtype=np.float32)
    step = 1 << 18  # pairs per pass: bounds temporary memory
    for a in range(0, p.shape[0], step):
        out[a : a + step] = upward_element_to_axis_rectangles(p[a : a + step], corners[a : a + step])
    return out


def diffuse_map(
    enc: Enclosure, grid: Grid, exitance: np.ndarray, cuts_m: tuple[float, ...] = (), boxes: tuple[Box, ...] = ()
) -> np.ndarray:
    """Irradiance (ny, nx) on the grid from patches of the given exitance [µmol m⁻² s⁻¹], shadowed by boxes."""
    p = wall_patches(enc, cuts_m)
    boxes = tuple(_boxes_between(boxes, grid.z_m, enc.height_m))
    if grid.nx * grid.ny * len(p.areas) <= CACHE_TRANSFER_ELEMENTS:
        R = patch_to_grid(enc, grid, cuts_m, boxes)
        return (R @ exitance.astype(np.float32)).reshape(grid.ny, grid.nx)
    out = np.empty((grid.ny, grid.nx), dtype=np.float32)
    rows = max(1, CACHE_TRANSFER_ELEMENTS // (grid.nx * max(len(p.areas), 1)))
    for a in range(0, grid.ny, rows):
        out[a : a + rows] = (_transfer(enc, p, grid, slice(a, a + rows), boxes) @ exitance).reshape(-1, grid.nx)
    return out
