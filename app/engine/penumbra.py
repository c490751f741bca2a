"""Shadowed irradiance from an extended emitter at the cost of the shadow's edge.

The emitter is cut into cells (the segments of its Gauss-Legendre quadrature,
app/engine/emitters.py). Seen from one receiver point, the part of a flat
emitter that a box hides is convex (the shadow volume of a convex box from a
point is convex), so a cell whose four corners are all hidden by one box is
hidden whole, and a cell that no segment of its bounding cloud can bring into
a box (app/engine/shadows.py) is lit whole. Only the cells the shadow's edge
crosses are integrated with the fine, penumbra-resolving nodes; the rest cost
one node pair per quadrature node, as in open air.

References
----------
Kay T.L. & Kajiya J.T. (1986), "Ray tracing complex scenes", SIGGRAPH: the slab test.
Convexity of a convex body's shadow volume from a point: elementary (if the
segments p→a and p→b meet the body at a′ and b′, p→(a+b)/2 meets a′b′).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from app.engine.aim import aim_matrix, is_tilted, own_frame_angles
from app.engine.distributions import intensity_per_flux
from app.engine.emitters import (
    _GL,
    POINT_BEYOND_SIZES,
    SEGMENT_PER_DISTANCE,
    SHADOW_SUBDIVISION,
    THIN_PER_DISTANCE,
    _segments,
)
from app.engine.scene import Emitter
from app.engine.shadows import (
    _slab,
    box_copies,
    boxes_blocked,
    cloud_may_shade,
    grown_slab,
    pairwise_blocked,
)

MAX_PAIRS = 1 << 19  # cell × point pairs per pass


@dataclass(frozen=True)
class Cells:
    """An emitter cut into equal cells, in its own frame (u along the length, v across) [m]."""

    centres_uv: np.ndarray  # (C, 2)
    half_uv: tuple[float, float]  # half-size of every cell
    weights: np.ndarray  # (C,) flux share, sums to 1
    coarse_uv: np.ndarray  # (G, 2) open-air quadrature nodes inside a cell, relative to its centre
    coarse_w: np.ndarray  # (G,) sums to 1
    fine_uv: np.ndarray  # (K, 2) penumbra-resolving nodes inside a cell
    fine_w: np.ndarray  # (K,) sums to 1


def _gl_in(extent: float, segments: int) -> tuple[np.ndarray, np.ndarray]:
    """Composite 2-point Gauss-Legendre nodes on [-extent/2, extent/2] (0 segments: the midpoint), weights sum 1."""
    if extent <= 0 or segments < 1:
        return np.zeros(1), np.ones(1)
    x, w = _GL
    edges = np.linspace(-extent / 2, extent / 2, segments + 1)
    half, mid = 0.5 * np.diff(edges), 0.5 * (edges[1:] + edges[:-1])
    return (mid[:, None] + half[:, None] * x).ravel(), (half[:, None] * w).ravel() / extent


def _axis_cells(extent: float, nearest_m: float, subdivision: float):
    """Cell centres and half-size along one axis, the open-air nodes in a cell and the fine ones."""
    n = _segments(extent, nearest_m)
    cells = max(n, 1)
    size = extent / cells if extent > 0 else 0.0
    centres = (np.arange(cells) + 0.5) * size - extent / 2
    coarse = _gl_in(size, 1 if n else 0)
    fine_d = nearest_m / subdivision
    fine_n = 0 if size <= THIN_PER_DISTANCE * fine_d else int(np.ceil(size / (SEGMENT_PER_DISTANCE * fine_d)))
    return centres, size / 2, coarse, _gl_in(size, fine_n)


def emitter_cells(emitter: Emitter, nearest_m: float, subdivision: float = SHADOW_SUBDIVISION) -> Cells:
    """Cells of an extended emitter for a receiver at least ``nearest_m`` away; fine nodes ``subdivision`` times
    closer than the open-air ones."""
    uc, hu, (cu, cwu), (fu, fwu) = _axis_cells(emitter.length_m, nearest_m, subdivision)
    if emitter.shape == "bar_array":
        n = emitter.bar_count
        pitch = (emitter.width_m - emitter.bar_width_m) / (n - 1)
        bars = -0.5 * (emitter.width_m - emitter.bar_width_m) + pitch * np.arange(n)
        vb, hv, (cv, cwv), (fv, fwv) = _axis_cells(emitter.bar_width_m, nearest_m, subdivision)
        vc = (bars[:, None] + vb[None, :]).ravel()
    else:
        vc, hv, (cv, cwv), (fv, fwv) = _axis_cells(emitter.width_m, nearest_m, subdivision)
    uu, vv = np.meshgrid(uc, vc, indexing="ij")
    centres = np.column_stack([uu.ravel(), vv.ravel()])

    def product(a, wa, b, wb):
        x, y = np.meshgrid(a, b, indexing="ij")
        return np.column_stack([x.ravel(), y.ravel()]), np.outer(wa, wb).ravel()

    coarse, coarse_w = product(cu, cwu, cv, cwv)
    fine, fine_w = product(fu, fwu, fv, fwv)
    weights = np.full(len(centres), 1.0 / len(centres))
    return Cells(centres, (hu, hv), weights, coarse, coarse_w, fine, fine_w)


def unit_irradiance(q, p, dist, rotation_deg: float, mirror=(1.0, 1.0), tilt_deg=0.0, aim_deg=0.0) -> np.ndarray:
    """Irradiance [µmol m⁻² s⁻¹] per µmol/s of a node at q on a level, upward point p (broadcast arrays (…, 3)).

    Inverse-square and cosine laws: E = (I/Φ)(θ, φ) · cos θ_r / d² (cos θ_r = Δz / d at an upward receiver),
    θ and φ read in the emitter's own frame (app/engine/aim.py).
    """
    dx, dy = p[..., 0] - q[..., 0], p[..., 1] - q[..., 1]
    dz = q[..., 2] - p[..., 2]
    r2 = dx * dx + dy * dy + dz * dz
    mz = mirror[2] if len(mirror) > 2 else 1.0  # -1: an image in a mirror ceiling, whose real ray went up
    if is_tilted(tilt_deg):
        r = np.sqrt(r2)
        frame = aim_matrix(rotation_deg, tilt_deg, aim_deg)
        cos_own, phi = own_frame_angles(mirror[0] * dx, mirror[1] * dy, -mz * dz, r, frame)
        return intensity_per_flux(dist, cos_own, phi) * np.maximum(dz / r, 0.0) / r2
    if dist.kind == "cosine_power" and mz < 0:
        return np.zeros(np.broadcast_shapes(dx.shape, dz.shape))  # a level cosⁿ beam sends nothing up
    if dist.kind == "cosine_power":
        n = dist.exponent
        return (n + 1.0) / (2.0 * np.pi) * np.maximum(dz, 0.0) ** (n + 1.0) * r2 ** (-(n + 3.0) / 2.0)
    r = np.sqrt(r2)
    cos_t = dz / r
    phi = np.arctan2(mirror[1] * dy, mirror[0] * dx) - np.radians(rotation_deg)
    return intensity_per_flux(dist, mz * cos_t, phi) * np.maximum(cos_t, 0.0) / r2


@dataclass(frozen=True)
class _Extent:
    """A box given by its extent, for the folded pairwise test."""

    x0_m: float
    y0_m: float
    z0_m: float
    x1_m: float
    y1_m: float
    z1_m: float

    @classmethod
    def of(cls, extent) -> tuple[_Extent]:
        return (cls(*extent),)


def _to_world(uv: np.ndarray, emitter: Emitter, cell=(0, 0), room_m=(None, None)) -> np.ndarray:
    """Emitter-frame offsets (…, 2) to room (or mirror-image) coordinates (…, 3); a tilted face tilts with them."""
    m = aim_matrix(emitter.rotation_deg, emitter.tilt_deg, emitter.aim_deg)
    x = emitter.x_m + m[0, 0] * uv[..., 0] + m[0, 1] * uv[..., 1]
    y = emitter.y_m + m[1, 0] * uv[..., 0] + m[1, 1] * uv[..., 1]
    z = emitter.z_m + m[2, 0] * uv[..., 0] + m[2, 1] * uv[..., 1]
    for k, (i, size) in enumerate(zip(cell, room_m, strict=True)):
        if i:
            u = x if k == 0 else y
            u = i * size + (u if i % 2 == 0 else size - u)
            x, y = (u, y) if k == 0 else (x, u)
    return np.stack([x, y, z], axis=-1)


def shadowed_irradiance(
    points: np.ndarray,
    emitter: Emitter,
    nearest_m: float,
    boxes,
    flux_umol_s: float,
    cell=(0, 0),
    room_m=(None, None),
    mirror=(1.0, 1.0),
    subdivision: float = SHADOW_SUBDIVISION,
) -> np.ndarray:
    """Irradiance [µmol m⁻² s⁻¹] at upward ``points`` (M, 3) from the emitter (or its mirror image in lattice
    ``cell`` of a room ``room_m`` = (W, L) wide) with the boxes' shadows.

    flux_umol_s : the flux the (image) emitter carries (reflectances applied).
    subdivision : how much closer than the open-air nodes the penumbra nodes are.
    """
    points = np.asarray(points, dtype=np.float64)
    fold = room_m if any(cell) or room_m != (None, None) else (None, None)
    aim = (emitter.tilt_deg, emitter.aim_deg)
    point_like = emitter.shape == "point" or nearest_m > POINT_BEYOND_SIZES * emitter.largest_dimension_m
    if point_like:
        q = _to_world(np.zeros((1, 2)), emitter, cell, room_m)
        e = unit_irradiance(q[:, None, :], points[None, :, :], emitter.distribution, emitter.rotation_deg, mirror, *aim)
        e = np.where(boxes_blocked(q, points, boxes, fold), 0.0, e)
        return flux_umol_s * e[0]
    cells = emitter_cells(emitter, nearest_m, subdivision)
    out = np.zeros(points.shape[0])
    step = max(1, MAX_PAIRS // (len(cells.weights) * len(cells.coarse_w)))
    for a in range(0, points.shape[0], step):
        out[a : a + step] = _shadowed_chunk(points[a : a + step], emitter, cells, boxes, cell, room_m, fold, mirror)
    return flux_umol_s * out


def _shadowed_chunk(p, emitter, cells, boxes, cell, room_m, fold, mirror):
    dist, rot = emitter.distribution, emitter.rotation_deg
    hu, hv = cells.half_uv
    centres = _to_world(cells.centres_uv, emitter, cell, room_m)  # (C, 3)
    m = np.abs(aim_matrix(rot, emitter.tilt_deg, emitter.aim_deg))
    half = tuple(float(m[k, 0] * hu + m[k, 1] * hv) for k in range(3))  # the turned (and tilted) cell's half-box
    aim = (emitter.tilt_deg, emitter.aim_deg)
    corner_uv = np.array([[-hu, -hv], [-hu, hv], [hu, -hv], [hu, hv]])
    corners = _to_world(cells.centres_uv[:, None, :] + corner_uv[None, :, :], emitter, cell, room_m).reshape(-1, 3)
    # Each convex box copy on its own: the cells it may shade, and those it hides whole (four corners hidden).
    copies = []
    for b in boxes:
        extent = (b.x0_m, b.y0_m, b.z0_m, b.x1_m, b.y1_m, b.z1_m)
        found = box_copies(corners, extent, fold)
        if found is None:  # a far image spanning many cells: one folded test, no whole-cell shortcut
            copies.append((extent, True, cloud_may_shade(centres, half, p, (b,), fold)))
            continue
        cloud_c, cloud_h = 0.5 * (corners.min(axis=0) + corners.max(axis=0)), 0.5 * np.ptp(corners, axis=0)
        for lo, hi in found:
            # The whole emitter's cloud first: most copies shade few of the points, if any.
            near = np.nonzero(grown_slab(cloud_c[None, None, :], p[None, :, :], lo, hi, cloud_h)[0])[0]
            if near.size == 0:
                continue
            may_c = np.zeros((len(centres), p.shape[0]), dtype=bool)
            may_c[:, near] = grown_slab(centres[:, None, :], p[None, near, :], lo, hi, half)
            if may_c.any():
                copies.append(((lo, hi), False, may_c))
    may = np.zeros((len(centres), p.shape[0]), dtype=bool)
    hidden = np.zeros_like(may)
    corners = corners.reshape(len(centres), 4, 3)
    for lo_hi, folded, may_c in copies:
        may |= may_c
        if not folded:
            ci, mi = np.nonzero(may_c)
            hidden[ci, mi] |= _slab(corners[ci], p[mi][:, None, :], *lo_hi).all(axis=1)
    # Open-air value of every cell (its coarse nodes), then the hidden ones dropped and the edge cells redone.
    nodes = _to_world(cells.centres_uv[:, None, :] + cells.coarse_uv[None, :, :], emitter, cell, room_m)
    k = unit_irradiance(nodes[:, :, None, :], p[None, None, :, :], dist, rot, mirror, *aim)  # (C, G, M)
    per_cell = np.einsum("cgm,g->cm", k, cells.coarse_w)
    lit = np.where(may, 0.0, per_cell)
    ci, mi = np.nonzero(may & ~hidden)
    if ci.size:
        fine = _to_world(cells.centres_uv[ci][:, None, :] + cells.fine_uv[None, :, :], emitter, cell, room_m)
        pe = p[mi][:, None, :]
        kf = unit_irradiance(fine, pe, dist, rot, mirror, *aim)  # (P, K)
        blk = np.zeros(kf.shape, dtype=bool)
        for lo_hi, folded, may_c in copies:
            sel = np.nonzero(may_c[ci, mi])[0]
            if sel.size == 0:
                continue
            if folded:
                hit = pairwise_blocked(fine[sel], pe[sel], _Extent.of(lo_hi), fold)
            else:
                hit = _slab(fine[sel], pe[sel], *lo_hi)
            blk[sel] |= hit
        kf = np.where(blk, 0.0, kf)
        np.add.at(lit, (ci, mi), kf @ cells.fine_w)
    return cells.weights @ lit
