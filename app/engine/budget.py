"""Photon budget: where every emitted photon goes, by a seeded ray tally.

Rays leave each emitter's quadrature nodes with directions drawn by inverse
transform from its distribution (cosⁿ: cos θ = (1 − ξ)^{1/(n+1)}), stratified
in ξ and seeded, so the budget is the same on every run. Each ray is followed
through specular bounces (weight × ρ) or diffuse re-emission (weight × ρ, a
cosine-weighted new direction) until it lands on a canopy zone, an obstacle,
the floor, or escapes through an open side. Every photon is counted exactly
once, and the canopy share is independent of the PPFD maps, so the two can be
compared (tests/engine/test_budget.py).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from app.engine.aim import aim_matrix
from app.engine.emitters import world_nodes
from app.engine.scene import Box, Emitter, Enclosure, Grid

MAX_BOUNCES = 80
MIN_WEIGHT = 1e-7
TOTAL_RAYS = 400_000
MIN_RAYS_PER_EMITTER = 256
MAX_RAYS_PER_EMITTER = 65_536


@dataclass
class Budget:
    emitted_umol_s: float = 0.0
    zones_umol_s: dict[str, float] = field(default_factory=dict)
    floor_umol_s: float = 0.0
    obstacles_umol_s: float = 0.0
    walls_absorbed_umol_s: float = 0.0
    escaped_umol_s: float = 0.0
    unresolved_umol_s: float = 0.0

    @property
    def accounted_umol_s(self) -> float:
        return (
            sum(self.zones_umol_s.values())
            + self.floor_umol_s
            + self.obstacles_umol_s
            + self.walls_absorbed_umol_s
            + self.escaped_umol_s
            + self.unresolved_umol_s
        )


def _directions(emitter: Emitter, n: int, rng: np.random.Generator) -> np.ndarray:
    """Unit vectors (n, 3), each carrying flux/n, distributed as the emitter's intensity."""
    xi = (np.arange(n) + rng.random(n)) / n
    phi = 2 * np.pi * rng.random(n)
    d = emitter.distribution
    if d.kind == "cosine_power":
        cos_t = (1.0 - xi) ** (1.0 / (d.exponent + 1.0))
    else:
        # Tabulated: invert the polar CDF of the azimuth-averaged profile (fine enough for a budget), over
        # the whole sphere: a table's upward light goes up, towards the ceiling.
        theta = np.linspace(0, np.pi, 4001)
        prof = np.interp(theta, d.polar_rad, d.table_per_sr.mean(axis=0), right=0.0) * np.sin(theta)
        cdf = np.concatenate([[0], np.cumsum(0.5 * (prof[1:] + prof[:-1]) * np.diff(theta))])
        # The azimuthal structure of a table is not followed in the budget: φ stays uniform.
        cos_t = np.cos(np.interp(xi * cdf[-1], cdf, theta))
    sin_t = np.sqrt(np.maximum(1.0 - cos_t**2, 0.0))
    if emitter.tilted:
        # Drawn in the emitter's own frame, then turned into the room's (app/engine/aim.py).
        local = np.column_stack([sin_t * np.cos(phi), sin_t * np.sin(phi), -cos_t])
        return local @ aim_matrix(emitter.rotation_deg, emitter.tilt_deg, emitter.aim_deg).T
    a = phi + np.radians(emitter.rotation_deg)
    return np.column_stack([sin_t * np.cos(a), sin_t * np.sin(a), -cos_t])


def _cosine_hemisphere(normal: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """Cosine-weighted directions about each normal (n, 3)."""
    n = normal.shape[0]
    u1, u2 = rng.random(n), rng.random(n)
    r, phi = np.sqrt(u1), 2 * np.pi * u2
    local = np.column_stack([r * np.cos(phi), r * np.sin(phi), np.sqrt(1 - u1)])
    helper = np.where(np.abs(normal[:, [0]]) < 0.9, [[1.0, 0, 0]], [[0, 1.0, 0]])
    t1 = np.cross(normal, helper)
    t1 /= np.linalg.norm(t1, axis=1, keepdims=True)
    t2 = np.cross(normal, t1)
    return local[:, [0]] * t1 + local[:, [1]] * t2 + local[:, [2]] * normal


def photon_budget(
    emitters: tuple[Emitter, ...],
    grids: tuple[Grid, ...],
    enc: Enclosure,
    boxes: tuple[Box, ...] = (),
    rays_per_emitter: int | None = None,
    seed: int = 20261201,
) -> Budget:
    """Trace rays from every emitter and tally where their photons end up [µmol/s]."""
    rng = np.random.default_rng(seed)
    budget = Budget(zones_umol_s={g.id: 0.0 for g in grids})
    if not emitters:
        return budget
    n_ray = rays_per_emitter or int(np.clip(TOTAL_RAYS // len(emitters), MIN_RAYS_PER_EMITTER, MAX_RAYS_PER_EMITTER))
    o, d, w = _launch(emitters, grids, n_ray, rng, budget)
    targets = _Targets.of(grids, boxes)
    finishes = _Finishes.of(enc)
    zone_tally = np.zeros(len(grids))
    for _ in range(MAX_BOUNCES):
        if o.shape[0] == 0:
            break
        which, t = _first_hits(o, d, enc, targets)
        p = o + np.where(np.isfinite(t), t, 0.0)[:, None] * d
        _tally_sinks(budget, zone_tally, which, d, w, len(grids))
        w, normals, refl, mirrored = _tally_surfaces(budget, enc, finishes, which, d, w)
        o, d, w = _bounce(budget, rng, p, d, w, normals, refl, mirrored)
    budget.unresolved_umol_s += float(w.sum())
    budget.zones_umol_s = {g.id: float(v) for g, v in zip(grids, zone_tally, strict=True)}
    for name in ("floor_umol_s", "obstacles_umol_s", "walls_absorbed_umol_s", "escaped_umol_s"):
        setattr(budget, name, float(getattr(budget, name)))
    return budget


def _launch(
    emitters: tuple[Emitter, ...], grids: tuple[Grid, ...], n_ray: int, rng: np.random.Generator, budget: Budget
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Ray origins [m], unit directions and weights [µmol/s]: `n_ray` rays per emitter shared over its
    quadrature nodes by their flux; each emitter's flux is added to the budget's emitted total."""
    origins, dirs, weights = [], [], []
    for e in emitters:
        budget.emitted_umol_s += e.flux_umol_s
        drop = max(e.z_m - min((g.z_m for g in grids), default=0.0), 0.05)
        nodes, flux = world_nodes(e, drop)
        idx = np.arange(n_ray) % nodes.shape[0]
        counts = np.bincount(idx, minlength=nodes.shape[0])
        origins.append(nodes[idx])
        dirs.append(_directions(e, n_ray, rng))
        weights.append(flux[idx] / counts[idx])
    return np.vstack(origins), np.vstack(dirs), np.concatenate(weights)


@dataclass(frozen=True)
class _Targets:
    """What a ray can land on besides the room's surfaces: canopy zones (height, corners) and boxes (corners) [m]."""

    zone_z: np.ndarray
    zone_lo: np.ndarray
    zone_hi: np.ndarray
    box_lo: np.ndarray
    box_hi: np.ndarray

    @classmethod
    def of(cls, grids: tuple[Grid, ...], boxes: tuple[Box, ...]) -> _Targets:
        return cls(
            zone_z=np.array([g.z_m for g in grids]),
            zone_lo=np.array([[g.x0_m, g.y0_m] for g in grids]).reshape(-1, 2),
            zone_hi=np.array([[g.x0_m + g.width_m, g.y0_m + g.length_m] for g in grids]).reshape(-1, 2),
            box_lo=np.array([[b.x0_m, b.y0_m, b.z0_m] for b in boxes]).reshape(-1, 3),
            box_hi=np.array([[b.x1_m, b.y1_m, b.z1_m] for b in boxes]).reshape(-1, 3),
        )


@dataclass(frozen=True)
class _Finishes:
    """The walls' reflectances and the ceiling's kind and reflectance."""

    wall_rho: dict[str, float]
    ceiling_kind: str
    ceiling_rho: float

    @classmethod
    def of(cls, enc: Enclosure) -> _Finishes:
        ceiling_kind, ceiling_rho = enc.surface("ceiling")
        return cls({s: enc.wall_reflectance(s) for s in ("left", "right", "front", "back")}, ceiling_kind, ceiling_rho)


def _first_hits(o: np.ndarray, d: np.ndarray, enc: Enclosure, targets: _Targets) -> tuple[np.ndarray, np.ndarray]:
    """For each ray, what it meets first and the distance [m] to it. Candidates: 0 x-wall, 1 y-wall,
    2 floor/ceiling, 3.. zones, then boxes (slab test)."""
    n = o.shape[0]
    W, L, H = enc.width_m, enc.length_m, enc.height_m
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = 1.0 / d
        tx = np.where(d[:, 0] > 0, (W - o[:, 0]) * inv[:, 0], np.where(d[:, 0] < 0, -o[:, 0] * inv[:, 0], np.inf))
        ty = np.where(d[:, 1] > 0, (L - o[:, 1]) * inv[:, 1], np.where(d[:, 1] < 0, -o[:, 1] * inv[:, 1], np.inf))
        tz = np.where(d[:, 2] > 0, (H - o[:, 2]) * inv[:, 2], np.where(d[:, 2] < 0, -o[:, 2] * inv[:, 2], np.inf))
    cand = [tx, ty, tz]
    for k in range(targets.zone_z.shape[0]):
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(d[:, 2] < 0, (targets.zone_z[k] - o[:, 2]) * inv[:, 2], np.inf)
        t = np.where(t > 1e-9, t, np.inf)
        hit = o[:, :2] + t[:, None] * d[:, :2]
        inside = np.all((hit >= targets.zone_lo[k]) & (hit <= targets.zone_hi[k]), axis=1)
        cand.append(np.where(inside, t, np.inf))
    for k in range(targets.box_lo.shape[0]):
        with np.errstate(divide="ignore", invalid="ignore"):
            t1 = (targets.box_lo[k] - o) * inv
            t2 = (targets.box_hi[k] - o) * inv
        t1 = np.nan_to_num(t1, nan=-np.inf)
        t2 = np.nan_to_num(t2, nan=np.inf)
        tmin = np.max(np.minimum(t1, t2), axis=1)
        tmax = np.min(np.maximum(t1, t2), axis=1)
        cand.append(np.where((tmax > tmin) & (tmin > 1e-9), tmin, np.inf))
    T = np.vstack(cand)
    which = np.argmin(T, axis=0)
    return which, T[which, np.arange(n)]


def _tally_sinks(
    budget: Budget, zone_tally: np.ndarray, which: np.ndarray, d: np.ndarray, w: np.ndarray, n_zones: int
) -> None:
    """Rays that end here: on a canopy zone, an obstacle or the floor."""
    for k in range(n_zones):
        m = which == 3 + k
        zone_tally[k] += w[m].sum()
    budget.obstacles_umol_s += w[which >= 3 + n_zones].sum()
    floor = (which == 2) & (d[:, 2] < 0)
    budget.floor_umol_s += w[floor].sum()


def _tally_surfaces(
    budget: Budget, enc: Enclosure, finishes: _Finishes, which: np.ndarray, d: np.ndarray, w: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Rays meeting the ceiling or a wall: escaped through an open one, or partly absorbed and reflected.
    Returns the weights after reflection, the surfaces' inward normals, and which rays reflect and which of
    them mirror-like."""
    n = d.shape[0]
    ceiling = (which == 2) & (d[:, 2] > 0)
    normals = np.zeros_like(d)
    mirrored = np.zeros(n, dtype=bool)
    if finishes.ceiling_kind == "open":
        budget.escaped_umol_s += w[ceiling].sum()
        refl = np.zeros(n, dtype=bool)
    else:
        ceiling_rho = finishes.ceiling_rho
        budget.walls_absorbed_umol_s += (w[ceiling] * (1 - ceiling_rho)).sum()
        normals[ceiling] = [0, 0, -1]
        refl = ceiling & (ceiling_rho > 0)
        mirrored |= refl if finishes.ceiling_kind == "specular" else False
        w = np.where(ceiling, w * ceiling_rho, w)
    for axis, (lo_side, hi_side) in ((0, ("left", "right")), (1, ("front", "back"))):
        m = which == axis
        hi = m & (d[:, axis] > 0)
        lo = m & (d[:, axis] < 0)
        for sel, side, sign in ((hi, hi_side, -1.0), (lo, lo_side, 1.0)):
            if enc.is_open(side):
                budget.escaped_umol_s += w[sel].sum()
                continue
            r = finishes.wall_rho[side]
            budget.walls_absorbed_umol_s += (w[sel] * (1 - r)).sum()
            w = np.where(sel, w * r, w)
            normals[sel, axis] = sign
            if r > 0:
                refl |= sel
                if enc.surface(side)[0] == "specular":
                    mirrored |= sel
    return w, normals, refl, mirrored


def _bounce(
    budget: Budget,
    rng: np.random.Generator,
    p: np.ndarray,
    d: np.ndarray,
    w: np.ndarray,
    normals: np.ndarray,
    refl: np.ndarray,
    mirrored: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The reflected rays leaving their hit points `p`: mirrored about the normal (specular) or re-emitted
    cosine-weighted (matt); rays whose weight is negligible end in the walls."""
    n = d.shape[0]
    new_d = d.copy()
    spec = refl & mirrored
    matt = refl & ~mirrored
    new_d[spec] = d[spec] - 2 * np.sum(d[spec] * normals[spec], axis=1, keepdims=True) * normals[spec]
    if matt.any():
        new_d[matt] = _cosine_hemisphere(normals[matt], rng)
    alive = refl & (w > MIN_WEIGHT * max(budget.emitted_umol_s, 1e-30) / max(n, 1))
    budget.walls_absorbed_umol_s += w[refl & ~alive].sum()  # negligible leftovers end in the walls
    return p[alive] + 1e-9 * normals[alive], new_d[alive], w[alive]
