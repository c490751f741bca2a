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


def _cosine_directions(rng, normals):
    """Cosine-weighted directions about unit normals (n, 3): Malley's method (a uniform disk lifted up)."""
    n = len(normals)
    r, phi = np.sqrt(rng.random(n)), 2 * np.pi * rng.random(n)
    local = np.column_stack([r * np.cos(phi), r * np.sin(phi), np.sqrt(np.maximum(1 - r * r, 0.0))])
    helper = np.where(np.abs(normals[:, [2]]) < 0.9, [[0.0, 0.0, 1.0]], [[1.0, 0.0, 0.0]])
    t1 = np.cross(normals, helper)
    t1 /= np.linalg.norm(t1, axis=1, keepdims=True)
    t2 = np.cross(normals, t1)
    return local[:, [0]] * t1 + local[:, [1]] * t2 + local[:, [2]] * normals


def trace_room(rng, origins, dirs, flux_each, size, surfaces, canopies, boxes=(), max_bounces=60, min_weight=1e-4):
    """Photons in a closed box room 0..W × 0..L × 0..H with a finish per surface.

    size : (W, L, H).
    surfaces : dict over 'left', 'right', 'front', 'back', 'ceiling' of (kind, rho), kind 'mirror',
        'matt' (Lambertian re-emission, weight × rho) or 'open' (escapes); the floor absorbs.
    canopies : list of (x0, y0, x1, y1, z, nx, ny); each is an opaque, absorbing sheet hit from either side,
        and photons arriving from above are tallied into its (ny, nx) bins.
    boxes : (x0, y0, z0, x1, y1, z1) opaque absorbing boxes.
    Returns (list of tallies [µmol/s per bin], dict of totals: 'canopy', 'walls_in' = flux arriving on the
    walls and ceiling, 'floor', 'boxes', 'escaped').
    """
    W, L, H = size
    tallies = [np.zeros((c[6], c[5])) for c in canopies]
    totals = dict.fromkeys(("canopy", "walls_in", "floor", "boxes", "escaped"), 0.0)
    o, d = origins.astype(float).copy(), dirs.astype(float).copy()
    w = np.full(len(o), float(flux_each))
    planes = [  # (axis, coordinate, surface name, inward normal sign)
        (0, 0.0, "left", 1.0),
        (0, W, "right", -1.0),
        (1, 0.0, "front", 1.0),
        (1, L, "back", -1.0),
        (2, H, "ceiling", -1.0),
        (2, 0.0, "floor", 1.0),
    ]
    for _ in range(max_bounces):
        if len(o) == 0:
            break
        cand = []
        with np.errstate(divide="ignore", invalid="ignore"):
            for axis, c, _name, sign in planes:
                t = (c - o[:, axis]) / d[:, axis]
                cand.append(np.where((t > 1e-10) & (d[:, axis] * sign < 0), t, np.inf))
            for x0, y0, x1, y1, z, _, _ in canopies:
                t = (z - o[:, 2]) / d[:, 2]
                hit = o[:, :2] + t[:, None] * d[:, :2]
                ok = (t > 1e-10) & (hit[:, 0] >= x0) & (hit[:, 0] <= x1) & (hit[:, 1] >= y0) & (hit[:, 1] <= y1)
                cand.append(np.where(ok, t, np.inf))
            for b in boxes:
                lo, hi = np.array(b[:3]), np.array(b[3:])
                ta, tb = (lo - o) / d, (hi - o) / d
                ta, tb = np.nan_to_num(ta, nan=-np.inf), np.nan_to_num(tb, nan=np.inf)
                tmin, tmax = np.max(np.minimum(ta, tb), axis=1), np.min(np.maximum(ta, tb), axis=1)
                cand.append(np.where((tmax > tmin) & (tmin > 1e-10), tmin, np.inf))
        T = np.vstack(cand)
        which = np.argmin(T, axis=0)
        t = T[which, np.arange(len(o))]
        p = o + np.where(np.isfinite(t), t, 0.0)[:, None] * d
        keep = np.zeros(len(o), dtype=bool)
        new_d = d.copy()
        normals = np.zeros_like(d)
        for k, (axis, _c, name, sign) in enumerate(planes):
            m = which == k
            if not m.any():
                continue
            if name == "floor":
                totals["floor"] += w[m].sum()
                continue
            kind, rho = surfaces[name]
            if kind == "open":
                totals["escaped"] += w[m].sum()
                continue
            totals["walls_in"] += w[m].sum()
            w[m] *= rho
            normals[m, axis] = sign
            if kind == "mirror":
                new_d[m, axis] *= -1
            else:
                new_d[m] = _cosine_directions(rng, normals[m])
            keep |= m & (w > min_weight * flux_each)
        for k, (x0, y0, x1, y1, _z, nx, ny) in enumerate(canopies):
            m = which == 6 + k
            down = m & (d[:, 2] < 0)
            i = np.clip(((p[down, 0] - x0) / (x1 - x0) * nx).astype(int), 0, nx - 1)
            j = np.clip(((p[down, 1] - y0) / (y1 - y0) * ny).astype(int), 0, ny - 1)
            np.add.at(tallies[k], (j, i), w[down])
            totals["canopy"] += w[m].sum()
        totals["boxes"] += w[which >= 6 + len(canopies)].sum()
        o = p[keep] + 1e-9 * normals[keep]
        d, w = new_d[keep], w[keep]
    return tallies, totals
