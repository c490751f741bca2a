"""A fixture's aim: the rotation from its own frame to the room's, and directions read in its own frame.

The emitter's own frame has x along its length, y across it and its nadir along −z; a distribution
(app/engine/distributions.py) is given in that frame. In the room the emitter is first turned by
``rotation_deg`` about the vertical, then tilted by ``tilt_deg`` about the level axis perpendicular
to ``aim_deg``, so that its nadir points along

    â = (sin t cos α, sin t sin α, −cos t)

(t = 0: straight down; t = 90°: level, toward compass direction α in the room's x-y frame; t = 180°:
straight up). The tilt is Rodrigues' rotation R = cos t I + sin t [k]ₓ + (1 − cos t) k kᵀ about
k = (sin α, −cos α, 0) (Rodrigues O. (1840), J. Math. Pures Appl. 5, 380-440; any rigid-body text).
"""

from __future__ import annotations

import numpy as np


def is_tilted(tilt_deg: float) -> bool:
    return float(tilt_deg) != 0.0


def aim_matrix(rotation_deg: float, tilt_deg: float = 0.0, aim_deg: float = 0.0) -> np.ndarray:
    """Room-from-emitter rotation (3, 3): columns are the emitter's own x, y and z axes in room coordinates."""
    r = np.radians(rotation_deg)
    cr, sr = np.cos(r), np.sin(r)
    turn = np.array([[cr, -sr, 0.0], [sr, cr, 0.0], [0.0, 0.0, 1.0]])
    t, a = np.radians(tilt_deg), np.radians(aim_deg)
    k = np.array([np.sin(a), -np.cos(a), 0.0])
    kx = np.array([[0.0, -k[2], k[1]], [k[2], 0.0, -k[0]], [-k[1], k[0], 0.0]])
    tilt = np.cos(t) * np.eye(3) + np.sin(t) * kx + (1.0 - np.cos(t)) * np.outer(k, k)
    return tilt @ turn


def aim_axis(tilt_deg: float, aim_deg: float) -> np.ndarray:
    """The emitter's nadir (its aim) in room coordinates, a unit vector (3,)."""
    return -aim_matrix(0.0, tilt_deg, aim_deg)[:, 2]


def own_frame_angles(vx, vy, vz, r, matrix: np.ndarray):
    """cos θ from the emitter's nadir and azimuth φ in its own frame, of room directions (vx, vy, vz) of length r.

    The inverse rotation Rᵀ takes room vectors into the emitter's frame (R is orthogonal).
    """
    m = matrix
    lx = m[0, 0] * vx + m[1, 0] * vy + m[2, 0] * vz
    ly = m[0, 1] * vx + m[1, 1] * vy + m[2, 1] * vz
    lz = m[0, 2] * vx + m[1, 2] * vy + m[2, 2] * vz
    return -lz / r, np.arctan2(ly, lx)
