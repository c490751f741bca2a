"""Light returned by the walls.

Specular walls (reflective film, polished metal) use mirror-image sources: a
room 0..W × 0..L with vertical mirror walls unfolds into a lattice of mirrored
rooms, and the image of a source in cell (i, j) carries the product of the
reflectances of the walls crossed. Downward emitters never light the ceiling,
so the lattice is exact for vertical walls. Images are summed until their peak
contribution falls below ``IMAGE_RELATIVE`` of the real source's peak.

Each surface has its own finish (Enclosure.surface): only mirror surfaces make
images, only matt ones carry patches.

Matt surfaces use radiosity over patches: the exitance B solves
(I − ρF) B = ρ E_direct, F_ij the exact configuration factor from the centre of
patch i to rectangle j (Lambert's contour formula, app/engine/formfactors.py;
Howell, A Catalog of Radiation Heat Transfer Configuration Factors). Wall rows
are split at canopy heights. Patch-to-map transfers are exact within
EXACT_WITHIN_SIZES patch diagonals, clipped at the map's horizon, averaged over
the cell at a matt wall, and shadowed by obstacles and canopies. Floor and
canopy absorb unless the floor is given as matt; open surfaces let light escape.
In a room with mirror and matt surfaces, mirror images light the matt patches,
but matt light sent on by way of a mirror is not followed (stated in the README).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from app.engine.cache import MIB, memoise
from app.engine.direct import blocked, irradiance_from_nodes, nearest_distance_m, relight_shadowed
from app.engine.emitters import world_nodes
from app.engine.formfactors import element_to_polygon
from app.engine.penumbra import unit_irradiance
from app.engine.scene import Box, Emitter, Enclosure, Grid

IMAGE_RELATIVE = 1e-6
MAX_IMAGE_ORDER = 60
NEAR_ORDER = 1  # images this close are computed on the fine grid with full emitter quadrature
IMAGE_SAMPLES_PER_DISTANCE = 8
COARSE_POINTS = 9  # far images vary slowly across a room: a coarse grid, bilinearly interpolated
PATCH_TARGET_M = 0.25
SHADOW_TEST_ORDER = 4
"""Far images up to this order are shadow-tested one by one; beyond it they take the tested ones'
visible fraction. In the sample tent with a 15 cm fan, images beyond order 4 carry 0.06 % of the
canopy's light that the fan blocks (measured with every image tested), so the map moves < 0.1 %."""
IMAGE_SHADOW_SUBDIVISION = 1.0
PATCH_IMAGE_ORDER = 3  # mirror images that light the matt patches of a mixed room
"""Penumbra nodes of mirror images are this much closer than their open-air nodes (direct light: 6);
1 costs no accuracy: 0.85 % RMS against the Monte Carlo reference with 1, 2 or 6 (12 x 12 bins).
An image is farther than the fixture, so its penumbrae are wider and softer; the error this costs
is measured against the Monte Carlo reference in tests/engine/test_reflections.py."""
MAX_PATCHES_PER_SIDE = 12


def _axis_weights(idx: np.ndarray, rho_low: float, rho_high: float) -> np.ndarray:
    """Reflectance product of images idx along one axis (image i > 0 first crosses the high wall)."""
    n_first, n_second = (np.abs(idx) + 1) // 2, np.abs(idx) // 2
    first = np.where(idx > 0, rho_high, rho_low)
    second = np.where(idx > 0, rho_low, rho_high)
    with np.errstate(invalid="ignore"):
        return np.where(idx == 0, 1.0, first**n_first * second**n_second)


def mirror_coordinate(x, i, size: float):
    """Coordinate of x's image in lattice cell i: iW + x (i even) or iW + W − x (i odd)."""
    return i * size + np.where(np.asarray(i) % 2 == 0, x, size - x)


def image_list(emitter: Emitter, grid: Grid, enc: Enclosure) -> list[tuple[int, int, float]]:
    """Lattice cells (i, j) with weight whose peak contribution is above the tolerance."""
    rl, rr = enc.mirror_reflectance("left"), enc.mirror_reflectance("right")
    rf, rb = enc.mirror_reflectance("front"), enc.mirror_reflectance("back")
    if max(rl, rr, rf, rb) <= 0:
        return []
    dz = emitter.z_m - grid.z_m
    n = emitter.distribution.exponent if emitter.distribution.kind == "cosine_power" else 1.0
    k = np.arange(-MAX_IMAGE_ORDER, MAX_IMAGE_ORDER + 1)
    wx, wy = _axis_weights(k, rl, rr), _axis_weights(k, rf, rb)
    ki, kj = k[wx > IMAGE_RELATIVE], k[wy > IMAGE_RELATIVE]
    gx = np.maximum(
        np.abs(mirror_coordinate(emitter.x_m, ki, enc.width_m) - (grid.x0_m + grid.width_m / 2)) - grid.width_m / 2, 0.0
    )
    gy = np.maximum(
        np.abs(mirror_coordinate(emitter.y_m, kj, enc.length_m) - (grid.y0_m + grid.length_m / 2)) - grid.length_m / 2,
        0.0,
    )
    w = np.outer(wx[wx > IMAGE_RELATIVE], wy[wy > IMAGE_RELATIVE])
    cos_t = dz / np.sqrt(dz * dz + gx[:, None] ** 2 + gy[None, :] ** 2)
    keep = (w * cos_t ** (n + 3.0) >= IMAGE_RELATIVE) & ~((ki[:, None] == 0) & (kj[None, :] == 0))
    ii, jj = np.nonzero(keep)
    return [(int(ki[a]), int(kj[b]), float(w[a, b])) for a, b in zip(ii, jj, strict=True)]


def _mirror_nodes(nodes: np.ndarray, i: int, j: int, enc: Enclosure) -> np.ndarray:
    out = nodes.copy()
    out[:, 0] = mirror_coordinate(nodes[:, 0], i, enc.width_m)
    out[:, 1] = mirror_coordinate(nodes[:, 1], j, enc.length_m)
    return out


def _boxes_between(boxes: tuple[Box, ...], z_lo: float, z_hi: float) -> tuple[Box, ...]:
    return tuple(b for b in boxes if b.z1_m > z_lo + 1e-9 and b.z0_m < z_hi - 1e-9)


def _strided(axis: np.ndarray, step: int) -> np.ndarray:
    """Every step-th value, always keeping the last."""
    sub = axis[::step]
    return sub if sub[-1] == axis[-1] else np.append(sub, axis[-1])


def _bilinear(xc, yc, vals, xf, yf):
    """Bilinear interpolation of vals (len(yc), len(xc)) onto the grid xf × yf."""

    def weights(c, f):
        t = np.interp(f, c, np.arange(c.size, dtype=float))
        i0 = np.minimum(np.floor(t).astype(int), max(c.size - 2, 0))
        return i0, np.minimum(i0 + 1, c.size - 1), t - i0

    i0, i1, fx = weights(np.asarray(xc), np.asarray(xf))
    j0, j1, fy = weights(np.asarray(yc), np.asarray(yf))
    rows = vals[:, i0] * (1 - fx) + vals[:, i1] * fx
    return rows[j0] * (1 - fy)[:, None] + rows[j1] * fy[:, None]


def specular_map(emitter: Emitter, grid: Grid, enc: Enclosure, boxes: tuple[Box, ...] = (), dtype=np.float32):
    """Irradiance [µmol m⁻² s⁻¹] on ``grid`` from the emitter's mirror images (shape ny × nx)."""
    out = np.zeros((grid.ny, grid.nx), dtype=dtype)
    if not enc.has_specular or emitter.z_m <= grid.z_m:
        return out
    images = image_list(emitter, grid, enc)
    if not images:
        return out
    near_boxes = _boxes_between(boxes, grid.z_m, emitter.z_m)
    xs, ys = grid.x_m, grid.y_m
    gx, gy = np.meshgrid(xs, ys)
    fine = np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, grid.z_m)])
    ncx, ncy = min(grid.nx, COARSE_POINTS), min(grid.ny, COARSE_POINTS)
    xc, yc = np.linspace(xs[0], xs[-1], ncx), np.linspace(ys[0], ys[-1], ncy)
    cgx, cgy = np.meshgrid(xc, yc)
    coarse = np.column_stack([cgx.ravel(), cgy.ravel(), np.full(cgx.size, grid.z_m)])
    far_sum = np.zeros(coarse.shape[0])
    fold = (enc.width_m, enc.length_m)
    far: dict[tuple[float, float], list[tuple[int, int, float]]] = {}
    for i, j, w in images:
        mirror = (-1.0 if i % 2 else 1.0, -1.0 if j % 2 else 1.0)
        if max(abs(i), abs(j)) > NEAR_ORDER:
            far.setdefault(mirror, []).append((i, j, w))
            continue
        img = replace(
            emitter,
            x_m=float(mirror_coordinate(emitter.x_m, i, enc.width_m)),
            y_m=float(mirror_coordinate(emitter.y_m, j, enc.length_m)),
        )
        nearest = nearest_distance_m(img, grid)
        nodes, flux = world_nodes(emitter, nearest)
        # An image is at least `nearest` away from every point, so its field is smooth on that
        # scale: sample it every nearest/8 and interpolate.
        step = max(1, int(nearest / (IMAGE_SAMPLES_PER_DISTANCE * grid.spacing_m)))
        sx, sy = _strided(xs, step), _strided(ys, step)
        sgx, sgy = np.meshgrid(sx, sy)
        pts = fine if step == 1 else np.column_stack([sgx.ravel(), sgy.ravel(), np.full(sgx.size, grid.z_m)])
        e = irradiance_from_nodes(
            pts,
            _mirror_nodes(nodes, i, j, enc),
            w * flux,
            emitter.distribution,
            emitter.rotation_deg,
            mirror=mirror,
            dtype=dtype,
        ).reshape(sgy.shape)
        if near_boxes:
            # The light the boxes (and their mirror copies) take away, on the same samples: an image's
            # penumbrae are as wide as its distance allows, so they interpolate like its open-air field.
            lit = e.ravel().astype(np.float64)
            relight_shadowed(
                lit,
                pts,
                emitter,
                nearest,
                near_boxes,
                w * emitter.flux_umol_s,
                (i, j),
                fold,
                mirror,
                IMAGE_SHADOW_SUBDIVISION,
            )
            e = lit.reshape(e.shape).astype(dtype)
        e = e if step == 1 else _bilinear(sx, sy, e, xs, ys).astype(dtype)
        out += np.maximum(e, 0.0)
    # The far images of one mirror parity form one batch of point sources; their shadows fold the
    # segments back into the room (app/engine/shadows.py), so boxes cost what the segments cross.
    far_sum += _far_images(emitter, coarse, far, enc, near_boxes)
    if np.any(far_sum):
        out += _bilinear(xc, yc, far_sum.reshape(cgx.shape), xs, ys).astype(dtype)
    return out


def _far_images(emitter: Emitter, points: np.ndarray, far: dict, enc: Enclosure, boxes) -> np.ndarray:
    """Irradiance at ``points`` from the far images, as point sources, grouped by mirror parity.

    Images up to SHADOW_TEST_ORDER are shadow-tested, all together in one folded test
    (app/engine/shadows.py); farther ones, each a tiny share, take the visible fraction those
    tested images have at each point (a visibility map).
    """
    out = np.zeros(points.shape[0])
    if not far:
        return out
    groups = list(far.items())
    ii = np.concatenate([[g[0] for g in grp] for _, grp in groups])
    jj = np.concatenate([[g[1] for g in grp] for _, grp in groups])
    ww = np.concatenate([[g[2] for g in grp] for _, grp in groups]) * emitter.flux_umol_s
    nodes = np.column_stack(
        [
            mirror_coordinate(emitter.x_m, ii, enc.width_m),
            mirror_coordinate(emitter.y_m, jj, enc.length_m),
            np.full(ii.size, emitter.z_m),
        ]
    )
    k = np.empty((ii.size, points.shape[0]))
    start = 0
    for m, grp in groups:
        sl = slice(start, start + len(grp))
        start += len(grp)
        k[sl] = unit_irradiance(nodes[sl, None, :], points[None, :, :], emitter.distribution, emitter.rotation_deg, m)
    if not boxes:
        return ww @ k
    tested = np.maximum(np.abs(ii), np.abs(jj)) <= SHADOW_TEST_ORDER
    lit = ww[tested] @ np.where(blocked(nodes[tested], points, boxes, (enc.width_m, enc.length_m)), 0.0, k[tested])
    open_tested = ww[tested] @ k[tested]
    visible = np.divide(lit, open_tested, out=np.ones_like(lit), where=open_tested > 0)
    return lit + visible * (ww[~tested] @ k[~tested])


# -- radiosity for matt walls ------------------------------------------------


@dataclass(frozen=True)
class Patches:
    centres: np.ndarray  # (P, 3)
    normals: np.ndarray  # (P, 3), pointing into the room
    areas: np.ndarray  # (P,)
    reflectance: np.ndarray  # (P,)
    subs: np.ndarray  # (P, 4, 3): 2 × 2 sub-points per patch, for transfers to nearby points
    corners: np.ndarray  # (P, 4, 3) in order round each patch


def _split(extent: float) -> int:
    return int(np.clip(np.ceil(extent / PATCH_TARGET_M), 2, MAX_PATCHES_PER_SIDE))


PATCH_SAMPLES = 2  # per side of a patch: its direct irradiance is the mean over 2 × 2 points
MIN_CUT_M = 0.02  # a canopy height closer than this to a patch row edge moves no edge


def _edges(extent: float, n: int, cuts=()) -> np.ndarray:
    """Edges (fractions 0..1) of n equal rows, plus a row edge at each cut in (0, extent)."""
    edges = list(np.linspace(0.0, 1.0, n + 1))
    for c in cuts:
        f = c / extent
        if 0 < f < 1 and min(abs(f - e) for e in edges) * extent >= MIN_CUT_M:
            edges.append(f)
    return np.array(sorted(edges))


@memoise("wall_patches", max_bytes=16 * MIB)
def wall_patches(enc: Enclosure, cuts_m: tuple[float, ...] = ()) -> Patches:
    """Patches over the matt (diffuse) walls and ceiling, each with its surface's reflectance, normals inward.

    Wall rows are split at each height in ``cuts_m`` (the canopies): a patch is then wholly above or
    below a canopy, so the part a canopy hides from the fixtures is not lit by samples above it.
    """
    W, L, H = enc.width_m, enc.length_m, enc.height_m
    cs, ns, ars, subs, rhos, cns = [], [], [], [], [], []
    fs = (np.arange(PATCH_SAMPLES) + 0.5) / PATCH_SAMPLES

    def rect(origin, u_vec, v_vec, eu, ev, normal, rho):
        o, u_vec, v_vec = np.asarray(origin, float), np.asarray(u_vec, float), np.asarray(v_vec, float)
        lu, lv = np.linalg.norm(u_vec), np.linalg.norm(v_vec)
        for u0, u1 in zip(eu[:-1], eu[1:], strict=True):
            for v0, v1 in zip(ev[:-1], ev[1:], strict=True):
                cs.append(o + u_vec * (u0 + u1) / 2 + v_vec * (v0 + v1) / 2)
                subs.append(
                    [o + u_vec * (u0 + fu * (u1 - u0)) + v_vec * (v0 + fv * (v1 - v0)) for fu in fs for fv in fs]
                )
                cns.append([o + u_vec * uu + v_vec * vv for uu, vv in ((u0, v0), (u1, v0), (u1, v1), (u0, v1))])
                ns.append(normal)
                ars.append(lu * lv * (u1 - u0) * (v1 - v0))
                rhos.append(rho)

    sides = {
        "front": ((0, 0, 0), (W, 0, 0), (0, 0, H), W, (0, 1, 0)),
        "back": ((0, L, 0), (W, 0, 0), (0, 0, H), W, (0, -1, 0)),
        "left": ((0, 0, 0), (0, L, 0), (0, 0, H), L, (1, 0, 0)),
        "right": ((W, 0, 0), (0, L, 0), (0, 0, H), L, (-1, 0, 0)),
    }
    rows = _edges(H, _split(H), cuts_m)
    for side, (o, u, v, ext, nrm) in sides.items():
        kind, rho = enc.surface(side)
        if kind == "diffuse":
            rect(o, u, v, _edges(ext, _split(ext)), rows, nrm, rho)
    kind, rho = enc.surface("ceiling")
    if kind == "diffuse":
        rect((0, 0, H), (W, 0, 0), (0, L, 0), _edges(W, _split(W)), _edges(L, _split(L)), (0, 0, -1), rho)
    kind, rho = enc.surface("floor")
    if kind == "diffuse":
        rect((0, 0, 0), (W, 0, 0), (0, L, 0), _edges(W, _split(W)), _edges(L, _split(L)), (0, 0, 1), rho)
    if not ars:
        z = np.zeros((0, 4, 3))
        return Patches(np.zeros((0, 3)), np.zeros((0, 3)), np.zeros(0), np.zeros(0), z, z)
    return Patches(np.array(cs), np.array(ns, float), np.array(ars), np.array(rhos), np.array(subs), np.array(cns))


@memoise("radiosity_operators", max_bytes=48 * MIB)
def radiosity_operator(enc: Enclosure, blockers: tuple[Box, ...] = (), cuts_m: tuple[float, ...] = ()) -> np.ndarray:
    """K with B = K @ E_direct: K = (I − ρ F)⁻¹ ρ, F_ij the irradiance at i per unit exitance of j.

    ``blockers`` (obstacles and the canopy zones as thin slabs) hide patches from each other;
    ``cuts_m`` are the canopy heights the wall rows are split at (wall_patches).
    """
    p = wall_patches(enc, cuts_m)
    # Exact element-to-rectangle factors from each patch centre (app/engine/formfactors.py): adjacent
    # patches meet at right angles along room edges, where point-to-point estimates are worst.
    F = element_to_polygon(p.centres, p.normals, p.corners)
    if blockers:
        inset = p.centres + 1e-6 * p.normals
        F = np.where(blocked(inset, inset, blockers), 0.0, F)
    np.fill_diagonal(F, 0.0)
    rho = p.reflectance
    K = np.linalg.solve(np.eye(len(rho)) - rho[:, None] * F, np.diag(rho))
    K.setflags(write=False)
    return K


def patch_irradiance(
    emitter: Emitter, enc: Enclosure, boxes: tuple[Box, ...] = (), cuts_m: tuple[float, ...] = ()
) -> np.ndarray:
    """Direct irradiance [µmol m⁻² s⁻¹] of one emitter on every wall and ceiling patch (mean of its samples)."""
    p = wall_patches(enc, cuts_m)
    walls = p.normals[:, 2] > -0.5  # walls and floor; downward emitters leave the ceiling dark
    e = np.zeros(len(p.areas))
    if not np.any(walls):
        return e
    d = np.min(np.linalg.norm(p.centres[walls] - [emitter.x_m, emitter.y_m, emitter.z_m], axis=1))
    nodes, flux = world_nodes(emitter, max(d, 0.05))
    sub = p.subs[walls].reshape(-1, 3)
    sub_n = np.repeat(p.normals[walls], PATCH_SAMPLES**2, axis=0)
    e_sub = np.zeros(sub.shape[0])
    for i, j, w in _patch_images(enc):
        e_sub += irradiance_from_nodes(
            sub + 1e-6 * sub_n,
            _mirror_nodes(nodes, i, j, enc),
            w * flux,
            emitter.distribution,
            emitter.rotation_deg,
            normal=sub_n,
            boxes=boxes,
            mirror=(-1.0 if i % 2 else 1.0, -1.0 if j % 2 else 1.0),
            fold_m=(enc.width_m, enc.length_m) if (i or j) else (None, None),
        )
    e[walls] = e_sub.reshape(-1, PATCH_SAMPLES**2).mean(axis=1)
    return e


def _patch_images(enc: Enclosure) -> list[tuple[int, int, float]]:
    """The real emitter and, where some walls mirror, its images up to PATCH_IMAGE_ORDER (light that a
    mirror wall sends on to a matt one). Light a matt wall sends on via a mirror is not followed."""
    out = [(0, 0, 1.0)]
    if not enc.has_specular:
        return out
    k = np.arange(-PATCH_IMAGE_ORDER, PATCH_IMAGE_ORDER + 1)
    wx = _axis_weights(k, enc.mirror_reflectance("left"), enc.mirror_reflectance("right"))
    wy = _axis_weights(k, enc.mirror_reflectance("front"), enc.mirror_reflectance("back"))
    for a, i in enumerate(k):
        for b, j in enumerate(k):
            if (i or j) and wx[a] * wy[b] > IMAGE_RELATIVE:
                out.append((int(i), int(j), float(wx[a] * wy[b])))
    return out


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
    """Exact factors for matched pairs: upward elements p (K, 3) and rectangles corners (K, 4, 3)."""
    out = np.empty(p.shape[0], dtype=np.float32)
    step = 1 << 16  # pairs per pass: bounds temporary memory
    for a in range(0, p.shape[0], step):
        r = corners[a : a + step] - p[a : a + step, None, :]
        r /= np.maximum(np.linalg.norm(r, axis=-1, keepdims=True), 1e-12)
        r_next = np.roll(r, -1, axis=1)
        cross = np.cross(r, r_next)
        sin = np.linalg.norm(cross, axis=-1)
        gamma = np.arctan2(sin, np.clip(np.sum(r * r_next, axis=-1), -1.0, 1.0))
        out[a : a + step] = np.abs(np.sum(gamma * cross[..., 2] / np.maximum(sin, 1e-15), axis=-1)) / (2 * np.pi)
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
