"""A slow and obvious Monte Carlo photon tracer, written for the tests only.

Photons start at uniformly random points on the emitting surface, leave in
directions drawn from the emitter's cosⁿ distribution, bounce off mirror walls
(weight × ρ), and are binned where they first cross a canopy rectangle.
Nothing here is shared with the engine.
"""

from __future__ import annotations

import math

import numpy as np


def sample_emitter(rng, n, x, y, z, shape, length, width, bars=1, bar_width=0.0, rotation_deg=0.0):
    u = rng.uniform(-length / 2, length / 2, n) if length > 0 else np.zeros(n)
    if shape == "bar_array":
        k = rng.integers(0, bars, n)
        pitch = (width - bar_width) / (bars - 1)
        v = -(width - bar_width) / 2 + k * pitch + rng.uniform(-bar_width / 2, bar_width / 2, n)
    else:
        v = rng.uniform(-width / 2, width / 2, n) if width > 0 else np.zeros(n)
    a = math.radians(rotation_deg)
    return np.column_stack(
        [x + u * math.cos(a) - v * math.sin(a), y + u * math.sin(a) + v * math.cos(a), np.full(n, z)]
    )


def sample_cos_power(rng, n, exponent):
    # P(cos θ > c) = c^(n+1): cos θ = U^(1/(n+1)).
    c = rng.random(n) ** (1.0 / (exponent + 1.0))
    s = np.sqrt(1 - c * c)
    phi = rng.uniform(0, 2 * np.pi, n)
    return np.column_stack([s * np.cos(phi), s * np.sin(phi), -c])


def trace(origins, dirs, flux_each, room_w, room_l, rho_walls, canopy, boxes=(), max_bounces=200):
    """Tally photon flux on a canopy rectangle (x0, y0, x1, y1, z) binned into (ny, nx).

    rho_walls: dict side -> reflectance, sides 'left','right','front','back' (0 = open or black).
    boxes: (x0, y0, z0, x1, y1, z1) opaque boxes.
    Returns the flux per bin [µmol/s].
    """
    x0, y0, x1, y1, zc, nx, ny = canopy
    tally = np.zeros((ny, nx))
    o, d = origins.copy(), dirs.copy()
    w = np.full(len(o), flux_each)
    for _ in range(max_bounces):
        if len(o) == 0:
            break
        t_canopy = (zc - o[:, 2]) / d[:, 2]
        with np.errstate(divide="ignore"):
            t_left = np.where(d[:, 0] < 0, -o[:, 0] / d[:, 0], np.inf)
            t_right = np.where(d[:, 0] > 0, (room_w - o[:, 0]) / d[:, 0], np.inf)
            t_front = np.where(d[:, 1] < 0, -o[:, 1] / d[:, 1], np.inf)
            t_back = np.where(d[:, 1] > 0, (room_l - o[:, 1]) / d[:, 1], np.inf)
        t_wall = np.minimum.reduce([t_left, t_right, t_front, t_back])
        t_box = np.full(len(o), np.inf)
        for b in boxes:
            lo, hi = np.array(b[:3]), np.array(b[3:])
            with np.errstate(divide="ignore", invalid="ignore"):
                ta, tb = (lo - o) / d, (hi - o) / d
            ta, tb = np.nan_to_num(ta, nan=-np.inf), np.nan_to_num(tb, nan=np.inf)
            tmin = np.max(np.minimum(ta, tb), axis=1)
            tmax = np.min(np.maximum(ta, tb), axis=1)
            t_box = np.where((tmax > tmin) & (tmin > 1e-12), np.minimum(t_box, tmin), t_box)
        lands = (t_canopy <= t_wall) & (t_canopy < t_box)
        p = o[lands] + t_canopy[lands, None] * d[lands]
        inside = (p[:, 0] >= x0) & (p[:, 0] < x1) & (p[:, 1] >= y0) & (p[:, 1] < y1)
        i = np.clip(((p[inside, 0] - x0) / (x1 - x0) * nx).astype(int), 0, nx - 1)
        j = np.clip(((p[inside, 1] - y0) / (y1 - y0) * ny).astype(int), 0, ny - 1)
        np.add.at(tally, (j, i), w[lands][inside])
        bounce = ~lands & (t_wall < t_box)
        o, d, w, tw = o[bounce], d[bounce], w[bounce], t_wall[bounce]
        o = o + tw[:, None] * d
        side_x = np.isclose(o[:, 0], 0) | np.isclose(o[:, 0], room_w)
        side = np.where(
            side_x, np.where(o[:, 0] < room_w / 2, "left", "right"), np.where(o[:, 1] < room_l / 2, "front", "back")
        )
        rho = np.array([rho_walls[s] for s in side]) if len(side) else np.zeros(0)
        w = w * rho
        d[side_x, 0] *= -1
        d[~side_x, 1] *= -1
        keep = w > 0
        o, d, w = o[keep], d[keep], w[keep]
    return tally
