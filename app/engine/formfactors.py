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
