"""Quadrature nodes over extended emitters.

An extended emitter (bar, bar array, panel) is integrated over its length or
area by composite Gauss-Legendre quadrature: each small element emits with the
fixture's angular distribution. Segments are kept no longer than
``SEGMENT_PER_DISTANCE`` × the nearest receiver distance, which holds the error
against the closed-form configuration factor under 0.5 % (tests/engine/test_direct.py).
Beyond about five times its largest dimension an emitter is a point
(common practice in photometry, no source).
"""

from __future__ import annotations

import numpy as np

from app.engine.aim import aim_matrix
from app.engine.scene import Emitter

SEGMENT_PER_DISTANCE = 0.5
SHADOW_SUBDIVISION = 6  # finer nodes where a box can shade: penumbrae need them (tests/engine/test_reflections.py)
_GL_NODES = 2
_GL = np.polynomial.legendre.leggauss(_GL_NODES)
MAX_SEGMENTS = 48
POINT_BEYOND_SIZES = 10.0
"""Beyond this many largest dimensions an emitter is one point (as is any extent under THIN_PER_DISTANCE of the
distance): the error falls as (size / distance)²; a 0.6 m Lambertian panel is 0.17 % high at 8.4 m, and was
0.5 % high at 5 m when this was 5 (tests/engine/test_direct.py, against Howell B-3)."""


def _composite_gauss_legendre(length: float, segments: int) -> tuple[np.ndarray, np.ndarray]:
    """Nodes on [-L/2, L/2] and weights summing to 1 (segments = 0: one midpoint node)."""
    if length <= 0 or segments < 1:
        return np.zeros(1), np.ones(1)
    x, w = _GL
    edges = np.linspace(-length / 2, length / 2, segments + 1)
    half = 0.5 * (edges[1:] - edges[:-1])
    mid = 0.5 * (edges[1:] + edges[:-1])
    nodes = (mid[:, None] + half[:, None] * x[None, :]).ravel()
    weights = (half[:, None] * w[None, :]).ravel() / length
    return nodes, weights


THIN_PER_DISTANCE = 0.1


def _segments(extent: float, nearest_m: float) -> int:
    """Segments so that each is at most SEGMENT_PER_DISTANCE × the nearest receiver distance."""
    # An extent under a tenth of the distance needs no quadrature across it: the
    # midpoint rule's error there is below (0.1)²/24 ≈ 0.04 %.
    if extent <= THIN_PER_DISTANCE * nearest_m:
        return 0
    return int(np.clip(np.ceil(extent / (SEGMENT_PER_DISTANCE * max(nearest_m, 1e-6))), 1, MAX_SEGMENTS))


def local_nodes(
    emitter: Emitter, nearest_m: float, shadowed: bool = False
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Node offsets (u along length, v along width) in the emitter frame and flux weights (sum 1).

    ``nearest_m`` is the shortest distance from the emitter to any receiver point it lights;
    ``shadowed`` asks for SHADOW_SUBDIVISION times finer nodes, to resolve penumbrae.
    """
    if shadowed:
        nearest_m = nearest_m / SHADOW_SUBDIVISION
    if emitter.shape == "point" or nearest_m > POINT_BEYOND_SIZES * emitter.largest_dimension_m:
        return np.zeros(1), np.zeros(1), np.ones(1)
    u, wu = _composite_gauss_legendre(emitter.length_m, _segments(emitter.length_m, nearest_m))
    if emitter.shape == "panel":
        v, wv = _composite_gauss_legendre(emitter.width_m, _segments(emitter.width_m, nearest_m))
    elif emitter.shape == "bar_array":
        n = emitter.bar_count
        pitch = (emitter.width_m - emitter.bar_width_m) / (n - 1)
        centres = -0.5 * (emitter.width_m - emitter.bar_width_m) + pitch * np.arange(n)
        vb, wb = _composite_gauss_legendre(emitter.bar_width_m, _segments(emitter.bar_width_m, nearest_m))
        v = (centres[:, None] + vb[None, :]).ravel()
        wv = np.repeat(np.full(n, 1.0 / n), vb.size) * np.tile(wb, n)
    else:  # bar
        v, wv = _composite_gauss_legendre(emitter.width_m, _segments(emitter.width_m, nearest_m))
    uu, vv = np.meshgrid(u, v, indexing="ij")
    ww = np.outer(wu, wv)
    return uu.ravel(), vv.ravel(), ww.ravel()


def world_nodes(emitter: Emitter, nearest_m: float, shadowed: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Node positions (N, 3) in room coordinates and their flux [µmol/s] (N,)."""
    u, v, w = local_nodes(emitter, nearest_m, shadowed)
    if emitter.tilted:
        # The emitting face tilts with the fixture about its centre (app/engine/aim.py).
        m = aim_matrix(emitter.rotation_deg, emitter.tilt_deg, emitter.aim_deg)
        xyz = np.array([emitter.x_m, emitter.y_m, emitter.z_m]) + np.outer(u, m[:, 0]) + np.outer(v, m[:, 1])
        return xyz, w * emitter.flux_umol_s
    a = np.radians(emitter.rotation_deg)
    c, s = np.cos(a), np.sin(a)
    xyz = np.column_stack([emitter.x_m + c * u - s * v, emitter.y_m + s * u + c * v, np.full(u.size, emitter.z_m)])
    return xyz, w * emitter.flux_umol_s
