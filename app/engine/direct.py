"""Direct irradiance from emitter nodes onto receiver points, with shadows and culling.

For a node of flux Φₙ [µmol/s] at q and a receiver point p with unit normal n̂,
the inverse-square and cosine laws give

    E = Σₙ Φₙ · (I/Φ)(θ, φ) · cos θ_r / d²,   d = |p − q|,

where θ is the angle of p − q from the emitter's nadir and θ_r the angle of
incidence at the receiver. For a level, upward receiver cos θ_r = Δz / d.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from app.engine.aim import aim_matrix, is_tilted, own_frame_angles
from app.engine.cache import MIB, memoise
from app.engine.distributions import Distribution, intensity_per_flux
from app.engine.emitters import SHADOW_SUBDIVISION, world_nodes
from app.engine.scene import Box, Emitter, Grid
from app.engine.shadows import boxes_blocked, shadow_candidates

CHUNK_ELEMENTS = 1 << 20  # node × point pairs per numpy pass: bounds temporary memory
CULL_RELATIVE = 1e-5
"""Contributions below this share of an emitter's own peak irradiance are not computed.
For a Lambertian emitter this drops about 0.3 % of its flux, all of it more than
18 hanging heights away (the share of flux beyond θ is cos^(n+1) θ)."""


def blocked(q: np.ndarray, p: np.ndarray, boxes: tuple[Box, ...], fold_m=(None, None)) -> np.ndarray:
    """True where the segment q→p passes through any box (or, with ``fold_m``, a mirror copy of one).

    q : (N, 3) sources, p : (M, 3) receiver points; returns (N, M) booleans.
    Touching a box face does not block, so a canopy lying on a shelf top is lit.
    The test itself is in app/engine/shadows.py.
    """
    return boxes_blocked(q, p, boxes, fold_m)


def irradiance_from_nodes(
    points: np.ndarray,
    nodes: np.ndarray,
    node_flux: np.ndarray,
    dist: Distribution,
    rotation_deg: float = 0.0,
    normal=(0.0, 0.0, 1.0),
    boxes: tuple[Box, ...] = (),
    mirror=(1.0, 1.0),
    dtype=np.float64,
    fold_m=(None, None),
    blocked_only: bool = False,
    tilt_deg: float = 0.0,
    aim_deg: float = 0.0,
) -> np.ndarray:
    """Irradiance [µmol m⁻² s⁻¹] at ``points`` (M, 3) from ``nodes`` (N, 3) of flux ``node_flux`` [µmol/s].

    tilt_deg, aim_deg : the emitter's aim (app/engine/aim.py); the distribution is read in the emitter's own
        frame (node-to-point vectors turned by the inverse aim rotation), the receiver cosine in the room's.

    normal : receiver normal, one for all points (3,) or one per point (M, 3).
    mirror : (±1, ±1) when the nodes are a mirror image, so that azimuths of a
        tabulated distribution are read in the real emitter's frame.
    fold_m : (W, L) along which mirror walls fold the segments (image nodes), None where they do not.
    blocked_only : sum only the contributions that ``boxes`` block (the light a shadow takes away).
    """
    points = np.asarray(points, dtype=dtype)
    nodes = np.asarray(nodes, dtype=dtype)
    flux = np.asarray(node_flux, dtype=dtype)
    normal = np.asarray(normal, dtype=dtype)
    m = points.shape[0]
    out = np.zeros(m, dtype=dtype)
    step = max(1, CHUNK_ELEMENTS // max(nodes.shape[0], 1))
    upward = normal.ndim == 1 and normal[0] == 0 and normal[1] == 0 and normal[2] == 1
    rot = np.radians(rotation_deg)
    frame = aim_matrix(rotation_deg, tilt_deg, aim_deg) if is_tilted(tilt_deg) else None
    for a in range(0, m, step):
        p = points[a : a + step]
        dx = p[None, :, 0] - nodes[:, None, 0]
        dy = p[None, :, 1] - nodes[:, None, 1]
        dz = nodes[:, None, 2] - p[None, :, 2]  # > 0 when the node is above the point
        r2 = dx * dx + dy * dy + dz * dz
        if upward and dist.kind == "cosine_power" and frame is None:
            # E = (n+1)/(2π) · Δz^(n+1) / d^(n+3): one power, no square root (Lambertian: (Δz/d²)²/π).
            dzp = np.maximum(dz, 0.0)
            n = dist.exponent
            if n == 1.0:
                q = dzp / r2
                e = q * q
            else:
                # As cos^(n+1) / d² (cos <= 1): the one-power form d^-(n+3) overflows for narrow beams near a node.
                e = (dzp / np.sqrt(r2)) ** (n + 1.0) / r2
            if boxes:
                e = _shade(e, nodes, p, boxes, fold_m, blocked_only)
            out[a : a + step] = (flux * ((n + 1.0) / (2.0 * np.pi))) @ e
            continue
        r = np.sqrt(r2)
        cos_t = dz / r
        if frame is not None:
            # A mirror image's ray left the real emitter along the mirrored vector: read that in its frame.
            cos_own, phi = own_frame_angles(mirror[0] * dx, mirror[1] * dy, -dz, r, frame)
            ipf = intensity_per_flux(dist, cos_own, phi)
        elif dist.kind == "tabulated":
            phi = np.arctan2(mirror[1] * dy, mirror[0] * dx) - rot
            ipf = intensity_per_flux(dist, cos_t, phi)
        else:
            ipf = intensity_per_flux(dist, cos_t)
        if upward:
            cos_r = np.maximum(cos_t, 0.0)  # light from below never reaches a level, upward receiver
        else:
            nn = normal if normal.ndim == 1 else normal[a : a + step][None, :, :]
            nx, ny, nz = (nn[..., 0], nn[..., 1], nn[..., 2])
            cos_r = np.maximum((-dx * nx - dy * ny + dz * nz) / r, 0.0)
        e = ipf * cos_r / r2
        if boxes:
            e = _shade(e, nodes, p, boxes, fold_m, blocked_only)
        out[a : a + step] = flux @ e
    return out


def aim_of(emitter: Emitter) -> dict:
    """The emitter's aim as keyword arguments of irradiance_from_nodes."""
    return {"tilt_deg": emitter.tilt_deg, "aim_deg": emitter.aim_deg}


def _shade(e, nodes, p, boxes, fold_m, blocked_only: bool):
    hit = blocked(nodes, p, boxes, fold_m)
    return np.where(hit, e, 0.0) if blocked_only else np.where(hit, 0.0, e)


def cull_share(dz_m: float, reference_drop_m: float | None = None) -> float:
    """The share of an emitter's peak below which its light on a grid dz_m below it is not computed:
    CULL_RELATIVE of its peak at its nearest canopy (``reference_drop_m``; this drop when not given), so a
    far-below tier is not computed to a finer absolute tolerance. 1 or more (and dz_m <= 0): nothing is lit."""
    if dz_m <= 0:
        return np.inf
    return CULL_RELATIVE * (dz_m / min(reference_drop_m or dz_m, dz_m)) ** 2


def cull_radius_m(dist: Distribution, drop_m: float, relative: float = CULL_RELATIVE, tilted: bool = False) -> float:
    """Horizontal distance beyond which a point emitter's irradiance is below ``relative`` × its peak.

    E(r)/E(0) = [I(θ)/I(0)] cos³θ with tan θ = r / Δz. A tilted emitter is bounded as if isotropic at
    its largest intensity: E ≤ I_max cos³θ / Δz², so beyond cos θ = relative^(1/3) it gives less than
    ``relative`` × I_max / Δz² (conservative: a wider window than it needs).
    """
    if tilted:
        cos_cut = relative ** (1.0 / 3.0)
    elif dist.kind == "cosine_power":
        cos_cut = relative ** (1.0 / (dist.exponent + 3.0))
    else:
        theta = np.linspace(0, np.pi / 2, 901)
        prof = dist.table_per_sr.max(axis=0)
        prof_t = np.interp(theta, dist.polar_rad, prof, right=0.0)
        ratio = prof_t * np.cos(theta) ** 3 / max(prof_t.max(), 1e-300)
        above = np.nonzero(ratio >= relative)[0]
        cos_cut = np.cos(theta[above[-1]]) if above.size else 1.0
    cos_cut = max(cos_cut, 1e-3)
    return float(drop_m * np.sqrt(1.0 - cos_cut**2) / cos_cut)


@dataclass(frozen=True)
class Patch:
    """A rectangular window of a grid's values: rows j0.., columns i0.."""

    i0: int
    j0: int
    values: np.ndarray

    def add_into(self, target: np.ndarray, scale: float = 1.0) -> None:
        h, w = self.values.shape
        target[self.j0 : self.j0 + h, self.i0 : self.i0 + w] += scale * self.values


def _window(axis: np.ndarray, lo: float, hi: float) -> tuple[int, int]:
    return int(np.searchsorted(axis, lo, side="left")), int(np.searchsorted(axis, hi, side="right"))


def nearest_distance_m(emitter: Emitter, grid: Grid) -> float:
    """Shortest distance from the emitter's face to any point of the grid (a lower bound)."""
    dz = emitter.z_m - grid.z_m
    hx = hy = 0.5 * emitter.largest_dimension_m
    gx = max(grid.x0_m - (emitter.x_m + hx), emitter.x_m - hx - (grid.x0_m + grid.width_m), 0.0)
    gy = max(grid.y0_m - (emitter.y_m + hy), emitter.y_m - hy - (grid.y0_m + grid.length_m), 0.0)
    return float(np.sqrt(dz * dz + gx * gx + gy * gy))


def relevant_boxes(emitter: Emitter, grid: Grid, boxes: tuple[Box, ...], reach_m: float) -> tuple[Box, ...]:
    """Boxes that can stand between the emitter and the grid (z between them, within reach).

    Every segment runs from a node on the emitter's face to a grid point within reach, so it lies
    in the bounding box of the emitter's face and the reached part of the grid. A box beside the
    grid, between it and an emitter off to the side, is inside that box and is kept.
    """
    lo_z, hi_z = grid.z_m, emitter.z_m
    half = 0.5 * emitter.largest_dimension_m
    # The reached part of the grid, then grown to take in the emitter's face.
    gx0, gx1 = max(grid.x0_m, emitter.x_m - reach_m), min(grid.x0_m + grid.width_m, emitter.x_m + reach_m)
    gy0, gy1 = max(grid.y0_m, emitter.y_m - reach_m), min(grid.y0_m + grid.length_m, emitter.y_m + reach_m)
    if gx0 > gx1 or gy0 > gy1:
        return ()
    x0, x1 = min(gx0, emitter.x_m - half), max(gx1, emitter.x_m + half)
    y0, y1 = min(gy0, emitter.y_m - half), max(gy1, emitter.y_m + half)
    out = []
    for b in boxes:
        if b.z1_m <= lo_z + 1e-9 or b.z0_m >= hi_z - 1e-9:
            continue
        if b.x1_m < x0 or b.x0_m > x1 or b.y1_m < y0 or b.y0_m > y1:
            continue
        out.append(b)
    return tuple(out)


@memoise("footprint_stamps", max_bytes=96 * MIB)
def _stamp(local: Emitter, spacing_m: float, ia: int, ib: int, ja: int, jb: int, dtype_name: str) -> np.ndarray:
    """Open-air footprint of an emitter at (fx·s, fy·s, Δz) over points (i·s, j·s), ia ≤ i < ib, ja ≤ j < jb."""
    gx, gy = np.meshgrid(spacing_m * np.arange(ia, ib), spacing_m * np.arange(ja, jb))
    pts = np.column_stack([gx.ravel(), gy.ravel(), np.zeros(gx.size)])
    nodes, flux = world_nodes(local, local.z_m)
    e = irradiance_from_nodes(
        pts, nodes, flux, local.distribution, local.rotation_deg, dtype=np.dtype(dtype_name), **aim_of(local)
    )
    e = e.reshape(gx.shape)
    e.setflags(write=False)
    return e


def direct_patch(
    emitter: Emitter, grid: Grid, boxes: tuple[Box, ...] = (), dtype=np.float32, reference_drop_m: float | None = None
) -> Patch | None:
    """Direct irradiance of one emitter on the part of ``grid`` it reaches, or None if it reaches none.

    Points below the cull tolerance are skipped: CULL_RELATIVE of the peak the
    emitter gives at ``reference_drop_m`` (its nearest canopy; this grid's own
    drop when not given), so a far-below tier is not computed to a finer
    absolute tolerance than the emitter's own canopy. In open air (no box in
    the way) the footprint is a stamp that depends only on the emitter's shape,
    drop and position within a grid cell, so identical fixtures share one
    computation and a move only shifts it.
    """
    dz = emitter.z_m - grid.z_m
    relative = cull_share(dz, reference_drop_m)
    if relative >= 1.0:
        return None
    reach = cull_radius_m(emitter.distribution, dz, relative, emitter.tilted) + 0.5 * emitter.largest_dimension_m
    xs, ys = grid.x_m, grid.y_m
    i0, i1 = _window(xs, emitter.x_m - reach, emitter.x_m + reach)
    j0, j1 = _window(ys, emitter.y_m - reach, emitter.y_m + reach)
    if i0 >= i1 or j0 >= j1:
        return None
    near = relevant_boxes(emitter, grid, boxes, reach)
    s = grid.spacing_m
    u = (emitter.x_m - xs[0]) / s
    v = (emitter.y_m - ys[0]) / s
    ic, jc = int(np.floor(u)), int(np.floor(v))
    fx, fy = round(u - ic, 6), round(v - jc, 6)
    local = replace(emitter, id="", x_m=fx * s, y_m=fy * s, z_m=round(dz, 9))
    st = _stamp(local, round(s, 12), i0 - ic, i1 - ic, j0 - jc, j1 - jc, np.dtype(dtype).name)
    if not near:
        return Patch(i0, j0, st)
    # Open-air footprint everywhere, recomputed with shadow-resolving nodes only where a box may shade.
    gx, gy = np.meshgrid(xs[i0:i1], ys[j0:j1])
    pts = np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, grid.z_m)])
    values = np.array(st, dtype=dtype).ravel()
    relight_shadowed(values, pts, emitter, nearest_distance_m(emitter, grid), near, emitter.flux_umol_s)
    return Patch(i0, j0, values.reshape(gx.shape))


def _mirror(nodes: np.ndarray, cell, room_m) -> np.ndarray:
    """Nodes (N, 3) mirrored into lattice cell (i, j) of a room (W, L)."""
    out = nodes.copy()
    for k in range(2):
        i, size = cell[k], room_m[k]
        if i:
            out[:, k] = i * size + (nodes[:, k] if i % 2 == 0 else size - nodes[:, k])
    return out


def relight_shadowed(
    values: np.ndarray,
    points: np.ndarray,
    emitter: Emitter,
    nearest_m: float,
    boxes: tuple[Box, ...],
    flux_umol_s: float,
    cell=(0, 0),
    room_m=(None, None),
    mirror=(1.0, 1.0),
    subdivision: float = SHADOW_SUBDIVISION,
) -> int:
    """Overwrite ``values`` (M,) at the points some box may shade with the shadowed irradiance.

    The emitter may be a mirror image in lattice ``cell`` of a room ``room_m`` = (W, L). Candidates
    come from a conservative test per point (app/engine/shadows.py) and the shadow's edge alone is
    integrated finely (app/engine/penumbra.py), so the cost follows the shade, not the grid.
    Returns the number of points recomputed.
    """
    from app.engine.penumbra import _to_world, shadowed_irradiance

    hl, hw = 0.5 * emitter.length_m, 0.5 * emitter.width_m
    cloud = _to_world(np.array([[-hl, -hw], [-hl, hw], [hl, -hw], [hl, hw]]), emitter, cell, room_m)
    fold = room_m if any(cell) else (None, None)
    idx = np.nonzero(shadow_candidates(cloud, points, boxes, fold))[0]
    if idx.size and subdivision <= 1.0:
        # No finer penumbra nodes wanted: the open-air nodes, each tested exactly.
        nodes, flux = world_nodes(emitter, nearest_m)
        nodes = _mirror(nodes, cell, room_m)
        values[idx] = irradiance_from_nodes(
            points[idx],
            nodes,
            flux * (flux_umol_s / emitter.flux_umol_s) if emitter.flux_umol_s > 0 else flux * 0.0,
            emitter.distribution,
            emitter.rotation_deg,
            boxes=boxes,
            mirror=mirror,
            fold_m=fold,
            **aim_of(emitter),
        )
    elif idx.size:
        values[idx] = shadowed_irradiance(
            points[idx], emitter, nearest_m, boxes, flux_umol_s, cell, room_m, mirror, subdivision
        )
    return int(idx.size)
