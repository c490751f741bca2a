"""Exact configuration factors from a differential element to a planar polygon.

For an element at p with unit normal n and a polygon with vertices v₁…v_k (no
part of it behind the element's tangent plane), Lambert's contour formula gives

    F = 1/(2π) · |Σᵢ γᵢ · n · gᵢ|,   gᵢ = unit(rᵢ × rᵢ₊₁),  γᵢ = angle(rᵢ, rᵢ₊₁),  rᵢ = vᵢ − p,

and the irradiance at p from a Lambertian polygon of exitance M is E = M · F.

References
----------
Howell J.R., "A Catalog of Radiation Heat Transfer Configuration Factors", 3rd ed.,
case B-3 (element to a parallel rectangle) and the contour-integral method in
Siegel R. & Howell J.R., "Thermal Radiation Heat Transfer", chapter on
configuration factors (element to polygon, Lambert's formula).
"""

from __future__ import annotations

import numpy as np

CHUNK_ELEMENTS = 1 << 19  # element × polygon vertices per pass: bounds temporary memory


def element_to_polygon(p: np.ndarray, n: np.ndarray, vertices: np.ndarray) -> np.ndarray:
    """Configuration factors (M, P) from elements p (M, 3) with normals n (M, 3) or (3,) to polygons (P, k, 3).

    The polygons must lie wholly in front of each element's tangent plane (clip them first).
    """
    p = np.asarray(p, dtype=np.float64)
    n = np.broadcast_to(np.asarray(n, dtype=np.float64), p.shape)
    v = np.asarray(vertices, dtype=np.float64)
    out = np.empty((p.shape[0], v.shape[0]))
    step = max(1, CHUNK_ELEMENTS // max(v.shape[0] * v.shape[1], 1))
    for a in range(0, p.shape[0], step):
        out[a : a + step] = _chunk(p[a : a + step], n[a : a + step], v)
    return out


def _chunk(p, n, v):
    r = v[None, :, :, :] - p[:, None, None, :]  # (M, P, k, 3)
    r /= np.maximum(np.linalg.norm(r, axis=-1, keepdims=True), 1e-12)
    r_next = np.roll(r, -1, axis=2)
    cross = np.cross(r, r_next)
    sin = np.linalg.norm(cross, axis=-1)
    cos = np.clip(np.sum(r * r_next, axis=-1), -1.0, 1.0)
    gamma = np.arctan2(sin, cos)
    g_dot_n = np.einsum("mpkc,mc->mpk", cross, n) / np.maximum(sin, 1e-15)
    return np.abs(np.sum(gamma * g_dot_n, axis=-1)) / (2.0 * np.pi)


def rectangle_corners(centres: np.ndarray, u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Corners (P, 4, 3) in order around each rectangle centre ± u/2 ± v/2 (u, v: (P, 3) full edge vectors)."""
    hu, hv = 0.5 * np.asarray(u), 0.5 * np.asarray(v)
    c = np.asarray(centres)
    return np.stack([c - hu - hv, c + hu - hv, c + hu + hv, c - hu + hv], axis=1)


def _parallel_corner(x, y, h):
    """Element to a parallel rectangle 0..x × 0..y at distance h, one corner over the element (Howell B-3),
    signed by the quadrant so that rectangles anywhere follow by superposition."""
    a, b = np.abs(x) / h, np.abs(y) / h
    sa, sb = np.sqrt(1.0 + a * a), np.sqrt(1.0 + b * b)
    f = (a / sa * np.arctan(b / sa) + b / sb * np.arctan(a / sb)) / (2.0 * np.pi)
    return np.sign(x) * np.sign(y) * f


def _perpendicular_corner(d, u, z):
    """Element to a rectangle 0..u × 0..z in a plane perpendicular to it at distance d, its edge u on the
    element's plane and one corner at the foot of the perpendicular (Howell's catalogue, element to a
    perpendicular rectangle): F = (atan(u/d) − d/√(d²+z²) · atan(u/√(d²+z²))) / 2π, signed by u."""
    s = np.sqrt(d * d + z * z)
    f = (np.arctan(np.abs(u) / d) - d / s * np.arctan(np.abs(u) / s)) / (2.0 * np.pi)
    return np.sign(u) * f


def upward_element_to_axis_rectangles(p: np.ndarray, corners: np.ndarray) -> np.ndarray:
    """Exact factors for matched pairs: upward elements p (K, 3) and axis-aligned rectangles (K, 4, 3) that lie
    on or above each element's plane (clip them first): the closed forms above by superposition of corner
    rectangles, the same values as Lambert's contour formula (element_to_polygon) at a fraction of its cost."""
    c0, c2 = corners[:, 0], corners[:, 2]  # opposite corners of each rectangle (in order round it)
    lo = np.minimum(c0, c2) - p
    hi = np.maximum(c0, c2) - p
    ext = hi - lo
    flat = np.argmin(ext, axis=1)  # the axis along which the rectangle has no extent: its normal
    out = np.zeros(p.shape[0])
    tiny = 1e-12
    with np.errstate(divide="ignore", invalid="ignore"):
        k = (flat == 2) & (lo[:, 2] > tiny)  # horizontal, above: ceiling patches
        if k.any():
            h, x0, x1, y0, y1 = lo[k, 2], lo[k, 0], hi[k, 0], lo[k, 1], hi[k, 1]
            out[k] = (
                _parallel_corner(x1, y1, h)
                - _parallel_corner(x0, y1, h)
                - _parallel_corner(x1, y0, h)
                + _parallel_corner(x0, y0, h)
            )
        for axis, along in ((0, 1), (1, 0)):  # walls facing ±x, ±y
            k = (flat == axis) & (ext[:, 2] > 0)
            if not k.any():
                continue
            d = np.maximum(np.abs(lo[k, axis]), tiny)
            u0, u1 = lo[k, along], hi[k, along]
            z0, z1 = np.maximum(lo[k, 2], 0.0), np.maximum(hi[k, 2], 0.0)
            out[k] = (
                _perpendicular_corner(d, u1, z1)
                - _perpendicular_corner(d, u0, z1)
                - _perpendicular_corner(d, u1, z0)
                + _perpendicular_corner(d, u0, z0)
            )
    return np.abs(out)


def axis_element_to_axis_rectangles(p: np.ndarray, n: np.ndarray, corners: np.ndarray) -> np.ndarray:
    """Factors (M, P) from elements p (M, 3) whose normals n (M, 3) lie along ±x, ±y or ±z to axis-aligned
    rectangles (P, 4, 3), none of them behind an element (as in a convex room): each element's frame is turned
    (an orthogonal map, which keeps every angle) so that its normal is +z, then the closed forms apply."""
    m, k = p.shape[0], corners.shape[0]
    axis = np.argmax(np.abs(n), axis=1)
    sign = np.sign(n[np.arange(m), axis])
    out = np.empty((m, k))
    for a in range(3):
        for s in (-1.0, 1.0):
            rows = np.nonzero((axis == a) & (sign == s))[0]
            if rows.size == 0:
                continue
            order = [b for b in range(3) if b != a] + [a]  # the normal's axis becomes z
            pp = p[rows][:, order].copy()
            cc = corners[:, :, order].copy()
            pp[:, 2] *= s
            cc[..., 2] *= s
            step = max(1, (CHUNK_ELEMENTS // 2) // max(k, 1))  # element rows per pass: bounds temporary memory
            for b in range(0, rows.size, step):
                chunk = pp[b : b + step]
                pairs = upward_element_to_axis_rectangles(np.repeat(chunk, k, axis=0), np.tile(cc, (len(chunk), 1, 1)))
                out[rows[b : b + step]] = pairs.reshape(len(chunk), k)
    return out
