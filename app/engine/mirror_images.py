"""Light returned by mirror walls: mirror-image sources.

A room 0..W × 0..L with vertical mirror walls (reflective film, polished metal) unfolds into a lattice of
mirrored rooms, and the image of a source in cell (i, j) carries the product of the reflectances of the walls
crossed. Light sent up (a tilted fixture, a table's upward share) to a mirror ceiling comes back from one more
layer of images above the ceiling (ceiling_images); the floor is dark, so no higher order is needed. Images are
summed until their peak contribution falls below ``IMAGE_RELATIVE`` of the real source's peak; near images are
computed on the fine grid with full emitter quadrature, far ones on a coarse grid, bilinearly interpolated.
Each surface has its own finish (Enclosure.surface): only mirror surfaces make images.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from app.engine.direct import blocked, irradiance_from_nodes, nearest_distance_m, relight_shadowed
from app.engine.distributions import sends_upward
from app.engine.emitters import world_nodes
from app.engine.penumbra import unit_irradiance
from app.engine.scene import Box, Emitter, Enclosure, Grid
from app.engine.tier_cover import images_past_cover

IMAGE_RELATIVE = 1e-6
MAX_IMAGE_ORDER = 60
NEAR_ORDER = 1  # images this close are computed on the fine grid with full emitter quadrature
IMAGE_SAMPLES_PER_DISTANCE = 8
COARSE_POINTS = 9  # far images vary slowly across a room: a coarse grid, bilinearly interpolated
SHADOW_TEST_ORDER = 4
"""Far images up to this order are shadow-tested one by one; beyond it they take the tested ones'
visible fraction. In the sample tent with a 15 cm fan, images beyond order 4 carry 0.06 % of the
canopy's light that the fan blocks (measured with every image tested), so the map moves < 0.1 %."""
IMAGE_SHADOW_SUBDIVISION = 1.0
"""Penumbra nodes of mirror images are this much closer than their open-air nodes (direct light: 6);
1 costs no accuracy: 0.85 % RMS against the Monte Carlo reference with 1, 2 or 6 (12 x 12 bins).
An image is farther than the fixture, so its penumbrae are wider and softer; the error this costs
is measured against the Monte Carlo reference in tests/engine/test_reflections.py."""


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
    if emitter.tilted or sends_upward(emitter.distribution):
        n = 0.0  # bounded as an isotropic source at its largest intensity (app/engine/direct.py cull_radius_m)
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


def ceiling_images(emitter: Emitter, images: list[tuple[int, int, float]], enc: Enclosure) -> list:
    """(i, j, weight) of the emitter's images in a mirror ceiling: one for the emitter and one for each of its
    wall images, each times the ceiling's reflectance; none when it sends no light up.

    The floor is dark, so light that the ceiling sends down ends on the canopy or the floor: one ceiling order
    suffices. They are point sources on the coarse grid (they stand farther than 2 × the ceiling's height over
    the fixture); boxes shade their downward leg, the part of the image's segment below the ceiling.
    """
    rho = enc.mirror_reflectance("ceiling")
    if rho <= 0 or not (emitter.tilted or sends_upward(emitter.distribution)):
        return []
    return [(0, 0, rho)] + [(i, j, w * rho) for i, j, w in images]


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


def _near_image(emitter: Emitter, grid: Grid, enc: Enclosure, image, mirror, fine, near_boxes, dtype) -> np.ndarray:
    """One near image's irradiance on the whole grid (ny × nx), shadowed by the boxes and their mirror copies."""
    i, j, w = image
    xs, ys = grid.x_m, grid.y_m
    fold = (enc.width_m, enc.length_m)
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
        mirror=mirror,  # a mirrored image's aim is mirrored too: its rays are read in the real frame
        dtype=dtype,
        tilt_deg=emitter.tilt_deg,
        aim_deg=emitter.aim_deg,
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
    return e


def specular_map(
    emitter: Emitter,
    grid: Grid,
    enc: Enclosure,
    boxes: tuple[Box, ...] = (),
    dtype=np.float32,
    cover: Box | None = None,
):
    """Irradiance [µmol m⁻² s⁻¹] on ``grid`` from the emitter's mirror images (shape ny × nx).

    cover : the box covering the grid (a shelf over a tier); images it hides whole are skipped
        (app/engine/tier_cover.py), the rest are shadow-tested against every box.
    """
    out = np.zeros((grid.ny, grid.nx), dtype=dtype)
    if emitter.z_m <= grid.z_m:
        return out
    images = images_past_cover(emitter, grid, enc, cover, image_list(emitter, grid, enc))
    # Under a shelf, only the wall images that pass it send their ceiling images too (a covered tier's light
    # from a mirror ceiling is then slightly low; such rooms are rare: an upward fixture beside a rack).
    ceiling = ceiling_images(emitter, images, enc)
    if not images and not ceiling:
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
    far: dict[tuple[float, float], list[tuple[int, int, float]]] = {}
    for i, j, w in images:
        mirror = (-1.0 if i % 2 else 1.0, -1.0 if j % 2 else 1.0)
        if max(abs(i), abs(j)) > NEAR_ORDER:
            far.setdefault(mirror, []).append((i, j, w))
            continue
        out += np.maximum(_near_image(emitter, grid, enc, (i, j, w), mirror, fine, near_boxes, dtype), 0.0)
    for i, j, w in ceiling:
        far.setdefault((-1.0 if i % 2 else 1.0, -1.0 if j % 2 else 1.0, -1.0), []).append((i, j, w))
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
    # Images in a mirror ceiling stand as far above it as the emitter is below it.
    zz = np.concatenate(
        [np.full(len(grp), emitter.z_m if len(m) < 3 else 2 * enc.height_m - emitter.z_m) for m, grp in groups]
    )
    nodes = np.column_stack(
        [mirror_coordinate(emitter.x_m, ii, enc.width_m), mirror_coordinate(emitter.y_m, jj, enc.length_m), zz]
    )
    k = np.empty((ii.size, points.shape[0]))
    start = 0
    for m, grp in groups:
        sl = slice(start, start + len(grp))
        start += len(grp)
        k[sl] = unit_irradiance(
            nodes[sl, None, :],
            points[None, :, :],
            emitter.distribution,
            emitter.rotation_deg,
            m,
            emitter.tilt_deg,
            emitter.aim_deg,
        )
    if not boxes:
        return ww @ k
    tested = np.maximum(np.abs(ii), np.abs(jj)) <= SHADOW_TEST_ORDER
    lit = ww[tested] @ np.where(blocked(nodes[tested], points, boxes, (enc.width_m, enc.length_m)), 0.0, k[tested])
    open_tested = ww[tested] @ k[tested]
    visible = np.divide(lit, open_tested, out=np.ones_like(lit), where=open_tested > 0)
    return lit + visible * (ww[~tested] @ k[~tested])
