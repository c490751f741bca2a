"""Light returned by the walls.

Specular walls (reflective film, polished metal) use mirror-image sources: a
room 0..W × 0..L with vertical mirror walls unfolds into a lattice of mirrored
rooms, and the image of a source in cell (i, j) carries the product of the
reflectances of the walls crossed. Downward emitters never light the ceiling,
so the lattice is exact for vertical walls. Images are summed until their peak
contribution falls below ``IMAGE_RELATIVE`` of the real source's peak.

Matt walls use radiosity over wall and ceiling patches: the exitance B solves
(I − ρF) B = ρ E_direct with point-to-patch configuration factors regularised by
the coaxial-disk factor (Howell, A Catalog of Radiation Heat Transfer
Configuration Factors, case B-12: F = 1 / (1 + (h/r)²)), which stays finite for
adjacent patches. Floor and canopy absorb; open sides let light escape.
Reflected light from matt walls is not shadowed by obstacles (it is soft, and
the limitation is stated in the README).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from app.engine.cache import MIB, memoise
from app.engine.direct import blocked, irradiance_from_nodes, nearest_distance_m
from app.engine.emitters import world_nodes
from app.engine.scene import Box, Emitter, Enclosure, Grid

IMAGE_RELATIVE = 1e-6
MAX_IMAGE_ORDER = 60
NEAR_ORDER = 1  # images this close are computed on the fine grid with full emitter quadrature
IMAGE_SAMPLES_PER_DISTANCE = 8
COARSE_POINTS = 9  # far images vary slowly across a room: a coarse grid, bilinearly interpolated
PATCH_TARGET_M = 0.25
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
    rl, rr = enc.wall_reflectance("left"), enc.wall_reflectance("right")
    rf, rb = enc.wall_reflectance("front"), enc.wall_reflectance("back")
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


def _mirror_boxes(boxes: tuple[Box, ...], i: int, j: int, enc: Enclosure) -> tuple[Box, ...]:
    """Copies of the boxes in every lattice cell between (0, 0) and (i, j)."""
    out = []
    for a in range(min(0, i), max(0, i) + 1):
        for b in range(min(0, j), max(0, j) + 1):
            for bx in boxes:
                xa, xb = sorted(float(mirror_coordinate(x, a, enc.width_m)) for x in (bx.x0_m, bx.x1_m))
                ya, yb = sorted(float(mirror_coordinate(y, b, enc.length_m)) for y in (bx.y0_m, bx.y1_m))
                out.append(Box(xa, ya, bx.z0_m, xb, yb, bx.z1_m))
    return tuple(out)


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
    if enc.finish != "specular" or emitter.z_m <= grid.z_m:
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
    centre = np.array([[emitter.x_m, emitter.y_m, emitter.z_m]])
    far: dict[tuple[float, float], list[tuple[int, int, float]]] = {}
    for i, j, w in images:
        mirror = (-1.0 if i % 2 else 1.0, -1.0 if j % 2 else 1.0)
        if max(abs(i), abs(j)) <= NEAR_ORDER:
            bxs = _mirror_boxes(near_boxes, i, j, enc) if near_boxes else ()
            img = replace(
                emitter,
                x_m=float(mirror_coordinate(emitter.x_m, i, enc.width_m)),
                y_m=float(mirror_coordinate(emitter.y_m, j, enc.length_m)),
            )
            nearest = nearest_distance_m(img, grid)
            nodes, flux = world_nodes(emitter, nearest, shadowed=bool(bxs))
            # An image is at least `nearest` away from every point, so its field is smooth on that
            # scale: sample it every nearest/8 and interpolate (shadows need every point).
            step = 1 if bxs else max(1, int(nearest / (IMAGE_SAMPLES_PER_DISTANCE * grid.spacing_m)))
            sx, sy = _strided(xs, step), _strided(ys, step)
            sgx, sgy = np.meshgrid(sx, sy)
            pts = fine if step == 1 else np.column_stack([sgx.ravel(), sgy.ravel(), np.full(sgx.size, grid.z_m)])
            e = irradiance_from_nodes(
                pts,
                _mirror_nodes(nodes, i, j, enc),
                w * flux,
                emitter.distribution,
                emitter.rotation_deg,
                boxes=bxs,
                mirror=mirror,
                dtype=dtype,
            ).reshape(sgy.shape)
            out += e if step == 1 else _bilinear(sx, sy, e, xs, ys).astype(dtype)
        elif near_boxes:
            far_sum += irradiance_from_nodes(
                coarse,
                _mirror_nodes(centre, i, j, enc),
                [w * emitter.flux_umol_s],
                emitter.distribution,
                emitter.rotation_deg,
                boxes=_mirror_boxes(near_boxes, i, j, enc),
                mirror=mirror,
            )
        else:
            far.setdefault(mirror, []).append((i, j, w))
    # Without boxes the far images of one mirror parity form one batch of point sources.
    for mirror, group in far.items():
        ii = np.array([g[0] for g in group])
        jj = np.array([g[1] for g in group])
        ww = np.array([g[2] for g in group])
        nodes = np.column_stack(
            [
                mirror_coordinate(emitter.x_m, ii, enc.width_m),
                mirror_coordinate(emitter.y_m, jj, enc.length_m),
                np.full(ii.size, emitter.z_m),
            ]
        )
        far_sum += irradiance_from_nodes(
            coarse, nodes, ww * emitter.flux_umol_s, emitter.distribution, emitter.rotation_deg, mirror=mirror
        )
    if np.any(far_sum):
        out += _bilinear(xc, yc, far_sum.reshape(cgx.shape), xs, ys).astype(dtype)
    return out


# -- radiosity for matt walls ------------------------------------------------


@dataclass(frozen=True)
class Patches:
    centres: np.ndarray  # (P, 3)
    normals: np.ndarray  # (P, 3), pointing into the room
    areas: np.ndarray  # (P,)
    reflectance: np.ndarray  # (P,)
    subs: np.ndarray  # (P, 4, 3): 2 × 2 sub-points per patch, for transfers to nearby points

    @property
    def sub_points(self) -> np.ndarray:
        return self.subs.reshape(-1, 3)

    @property
    def sub_normals(self) -> np.ndarray:
        return np.repeat(self.normals, 4, axis=0)

    @property
    def sub_areas(self) -> np.ndarray:
        return np.repeat(self.areas / 4.0, 4)


def _split(extent: float) -> int:
    return int(np.clip(np.ceil(extent / PATCH_TARGET_M), 2, MAX_PATCHES_PER_SIDE))


@memoise("wall_patches", max_bytes=16 * MIB)
def wall_patches(enc: Enclosure) -> Patches:
    """Patches over the closed walls and the ceiling (same finish), normals inward."""
    W, L, H, rho = enc.width_m, enc.length_m, enc.height_m, enc.reflectance
    cs, ns, ars, subs = [], [], [], []

    def rect(origin, u_vec, v_vec, nu, nv, normal):
        u_vec, v_vec = np.asarray(u_vec, float), np.asarray(v_vec, float)
        a = np.linalg.norm(u_vec) * np.linalg.norm(v_vec) / (nu * nv)
        for a_i in range(nu):
            for b_i in range(nv):
                cs.append(np.asarray(origin, float) + u_vec * (a_i + 0.5) / nu + v_vec * (b_i + 0.5) / nv)
                subs.append(
                    [
                        np.asarray(origin, float) + u_vec * (a_i + fu) / nu + v_vec * (b_i + fv) / nv
                        for fu in (0.25, 0.75)
                        for fv in (0.25, 0.75)
                    ]
                )
                ns.append(normal)
                ars.append(a)

    sides = {
        "front": ((0, 0, 0), (W, 0, 0), (0, 0, H), W, (0, 1, 0)),
        "back": ((0, L, 0), (W, 0, 0), (0, 0, H), W, (0, -1, 0)),
        "left": ((0, 0, 0), (0, L, 0), (0, 0, H), L, (1, 0, 0)),
        "right": ((W, 0, 0), (0, L, 0), (0, 0, H), L, (-1, 0, 0)),
    }
    for side, (o, u, v, ext, nrm) in sides.items():
        if side not in enc.open_sides:
            rect(o, u, v, _split(ext), _split(H), nrm)
    rect((0, 0, H), (W, 0, 0), (0, L, 0), _split(W), _split(L), (0, 0, -1))
    return Patches(np.array(cs), np.array(ns, float), np.array(ars), np.full(len(ars), rho), np.array(subs))


def _exchange(src_c, src_n, src_a, dst_c, dst_n):
    """Irradiance at dst per unit exitance of each src patch: cos·cos·A / (π r² + A)."""
    d = src_c[None, :, :] - dst_c[:, None, :]  # from dst to src
    r2 = np.einsum("ijk,ijk->ij", d, d)
    r = np.sqrt(np.maximum(r2, 1e-12))
    cos_dst = np.maximum(np.einsum("ijk,ik->ij", d, dst_n) / r, 0.0)
    cos_src = np.maximum(-np.einsum("ijk,jk->ij", d, src_n) / r, 0.0)
    return cos_dst * cos_src * src_a[None, :] / (np.pi * r2 + src_a[None, :])


@memoise("radiosity_operators", max_bytes=48 * MIB)
def radiosity_operator(enc: Enclosure, blockers: tuple[Box, ...] = ()) -> np.ndarray:
    """K with B = K @ E_direct: K = (I − ρ F)⁻¹ ρ, F_ij the irradiance at i per unit exitance of j.

    ``blockers`` (obstacles and the canopy zones as thin slabs) hide patches from each other.
    """
    p = wall_patches(enc)
    F = _exchange(p.centres, p.normals, p.areas, p.centres, p.normals)
    if blockers:
        inset = p.centres + 1e-6 * p.normals
        F = np.where(blocked(inset, inset, blockers), 0.0, F)
    np.fill_diagonal(F, 0.0)
    rho = p.reflectance
    K = np.linalg.solve(np.eye(len(rho)) - rho[:, None] * F, np.diag(rho))
    K.setflags(write=False)
    return K


def patch_irradiance(emitter: Emitter, enc: Enclosure, boxes: tuple[Box, ...] = ()) -> np.ndarray:
    """Direct irradiance [µmol m⁻² s⁻¹] of one emitter on every wall and ceiling patch."""
    p = wall_patches(enc)
    walls = np.abs(p.normals[:, 2]) < 0.5
    e = np.zeros(len(p.areas))
    if not np.any(walls):
        return e
    d = np.min(np.linalg.norm(p.centres[walls] - [emitter.x_m, emitter.y_m, emitter.z_m], axis=1))
    nodes, flux = world_nodes(emitter, max(d, 0.05))
    sub = p.subs[walls].reshape(-1, 3)
    sub_n = np.repeat(p.normals[walls], 4, axis=0)
    e_sub = irradiance_from_nodes(
        sub + 1e-6 * sub_n, nodes, flux, emitter.distribution, emitter.rotation_deg, normal=sub_n, boxes=boxes
    )
    e[walls] = e_sub.reshape(-1, 4).mean(axis=1)
    return e  # downward emitters leave the ceiling dark


CACHE_TRANSFER_ELEMENTS = 20_000_000


def _grid_points(grid: Grid, rows: slice = slice(None)) -> np.ndarray:
    gx, gy = np.meshgrid(grid.x_m, grid.y_m[rows])
    return np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, grid.z_m)])


@memoise("patch_to_grid", max_bytes=48 * MIB)
def patch_to_grid(enc: Enclosure, grid: Grid) -> np.ndarray:
    """(M, P) irradiance at each grid point per unit exitance of each patch."""
    R = _to_points(wall_patches(enc), _grid_points(grid)).astype(np.float32)
    R.setflags(write=False)
    return R


def _to_points(p: Patches, pts: np.ndarray) -> np.ndarray:
    """(M, P) irradiance at upward points per unit patch exitance, from 2 × 2 sub-points per patch (float32)."""
    c = p.sub_points.astype(np.float32)
    n = p.sub_normals.astype(np.float32)
    a = p.sub_areas.astype(np.float32)
    q = pts.astype(np.float32)
    dx = c[None, :, 0] - q[:, None, 0]
    dy = c[None, :, 1] - q[:, None, 1]
    dz = c[None, :, 2] - q[:, None, 2]
    r2 = dx * dx + dy * dy + dz * dz
    # cos at the receiver is Δz/r, at the patch −(d·n)/r; their product over r² is (…)/r².
    cc = np.maximum(dz, 0) * np.maximum(-(dx * n[:, 0] + dy * n[:, 1] + dz * n[:, 2]), 0) / r2
    R = cc * a / (np.float32(np.pi) * r2 + a)
    return R.reshape(pts.shape[0], -1, 4).sum(axis=2)


def diffuse_map(enc: Enclosure, grid: Grid, exitance: np.ndarray) -> np.ndarray:
    """Irradiance (ny, nx) on the grid from patches of the given exitance [µmol m⁻² s⁻¹]."""
    p = wall_patches(enc)
    if grid.nx * grid.ny * len(p.areas) * 4 <= CACHE_TRANSFER_ELEMENTS:
        return (patch_to_grid(enc, grid) @ exitance.astype(np.float32)).reshape(grid.ny, grid.nx)
    out = np.empty((grid.ny, grid.nx), dtype=np.float32)
    rows = max(1, CACHE_TRANSFER_ELEMENTS // (grid.nx * len(p.areas) * 4))
    for a in range(0, grid.ny, rows):
        out[a : a + rows] = (_to_points(p, _grid_points(grid, slice(a, a + rows))) @ exitance).reshape(-1, grid.nx)
    return out
