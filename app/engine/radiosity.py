"""Radiosity over the matt (diffuse) walls, ceiling and floor.

The exitance B solves (I − ρF) B = ρ E_direct, F_ij the exact configuration factor from the centre of patch i
to rectangle j (Lambert's contour formula, app/engine/formfactors.py; Howell, A Catalog of Radiation Heat
Transfer Configuration Factors). Wall rows are split at canopy heights. Each surface has its own finish
(Enclosure.surface): only matt ones carry patches; open surfaces let light escape. In a room with mirror and
matt surfaces, mirror images light the matt patches, but matt light sent on by way of a mirror is not followed
(stated in the README). The transfer from patches to the canopy map is in app/engine/patch_transfer.py.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from app.engine.cache import MIB, memoise
from app.engine.direct import blocked, irradiance_from_nodes
from app.engine.distributions import sends_upward
from app.engine.emitters import world_nodes
from app.engine.formfactors import axis_element_to_axis_rectangles
from app.engine.mirror_images import IMAGE_RELATIVE, _axis_weights, _mirror_nodes
from app.engine.scene import Box, Emitter, Enclosure

PATCH_TARGET_M = 0.25
PATCH_IMAGE_ORDER = 3  # mirror images that light the matt patches of a mixed room
MAX_PATCHES_PER_SIDE = 12


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
    # Every patch lies along the room's axes, so the closed forms of app/engine/formfactors.py give the same
    # factors as the general contour formula at a quarter of its cost.
    F = axis_element_to_axis_rectangles(p.centres, p.normals, p.corners)
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
    # The ceiling is lit by the same kernel whenever the emitter sends light upward (tilted, or a table
    # with upward light); an emitter that sends all its light below its horizon, hung level, leaves it dark.
    lights_ceiling = emitter.tilted or sends_upward(emitter.distribution)
    walls = np.ones(len(p.areas), dtype=bool) if lights_ceiling else p.normals[:, 2] > -0.5
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
            tilt_deg=emitter.tilt_deg,
            aim_deg=emitter.aim_deg,
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
