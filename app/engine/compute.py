"""The chain: emitters, receiver grids, walls and boxes in; per-zone PPFD maps out.

Each fixture's contribution to each grid is a pure function of that fixture,
that grid, the walls and the boxes, and is memoised: when one fixture moves,
only its own contribution is recomputed (the drag case).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from app.engine.cache import MIB, memoise
from app.engine.direct import Patch, direct_patch
from app.engine.mirror_images import image_list, specular_map
from app.engine.patch_transfer import diffuse_map
from app.engine.radiosity import patch_irradiance, radiosity_operator
from app.engine.scene import Box, Emitter, Enclosure, Grid
from app.engine.sideways import _local_sideways, sideways_patch
from app.engine.tier_cover import (
    covering_box,
    direct_matrix,
    direct_reaches,
    hangs_below,
    images_past_cover,
    spans_room,
)


class SceneError(ValueError):
    """Geometry the engine refuses before computing anything."""


@dataclass
class ZoneLight:
    grid: Grid
    direct: np.ndarray  # (ny, nx) µmol m⁻² s⁻¹
    reflected: np.ndarray  # (ny, nx) µmol m⁻² s⁻¹

    @property
    def ppfd(self) -> np.ndarray:
        return self.direct + self.reflected


def canopy_slabs(grids: tuple[Grid, ...]) -> tuple[Box, ...]:
    """Canopy zones as thin opaque slabs: wall light does not pass through a bench of plants."""
    return tuple(Box(g.x0_m, g.y0_m, g.z_m - 1e-3, g.x0_m + g.width_m, g.y0_m + g.length_m, g.z_m) for g in grids)


def check_scene(emitters, grids, boxes) -> None:
    """Refuse emitters that sit in a canopy, inside a box, or have no size or flux."""
    for e in emitters:
        if e.flux_umol_s < 0 or not np.isfinite(e.flux_umol_s):
            raise SceneError(f"emitter {e.id}: flux must be a finite number >= 0")
        if e.shape != "point" and e.length_m <= 0:
            raise SceneError(f"emitter {e.id}: a {e.shape} needs a length > 0")
        if e.shape == "panel" and e.width_m <= 0:
            raise SceneError(f"emitter {e.id}: a panel needs a width > 0")
        for g in grids:
            inside = g.x0_m <= e.x_m <= g.x0_m + g.width_m and g.y0_m <= e.y_m <= g.y0_m + g.length_m
            if inside and abs(e.z_m - g.z_m) < 1e-9:
                raise SceneError(f"emitter {e.id} sits in the canopy of {g.id}")
        for b in boxes:
            if b.x0_m < e.x_m < b.x1_m and b.y0_m < e.y_m < b.y1_m and b.z0_m < e.z_m < b.z1_m:
                raise SceneError(f"emitter {e.id} is inside an obstacle")


def covering_height_m(grid: Grid, boxes: tuple[Box, ...]) -> float:
    """Bottom of the lowest box that covers the whole grid from above (a shelf over a tier), or inf."""
    cover = covering_box(grid, boxes)
    return cover.z0_m if cover is not None else np.inf


def lights_grid(emitter: Emitter, grid: Grid, cover: Box | None, enc: Enclosure | None = None) -> bool:
    """Whether the emitter can light the grid at all, directly or (``enc`` given) by a mirror image.

    Every emitter above the canopy does, except one above the shelf covering a tier whose every segment to
    the tier enters that shelf (the cheap test of app/engine/tier_cover.py); the rest are shadow-tested.
    """
    if direct_reaches(emitter, grid, cover):
        return True
    if enc is None or not enc.has_specular or emitter.z_m <= grid.z_m or spans_room(cover, enc):
        return False
    return _images_reach(emitter, grid, enc, cover)


@memoise("images_past_cover", max_bytes=4 * MIB)
def _images_reach(emitter: Emitter, grid: Grid, enc: Enclosure, cover: Box) -> bool:
    """Whether some mirror image of the emitter reaches the grid past the cover (listing images costs ms)."""
    return bool(images_past_cover(emitter, grid, enc, cover, image_list(emitter, grid, enc)))


def lights_matrix(emitters, grids, covers, enc: Enclosure) -> np.ndarray:
    """(G, E) booleans: :func:`lights_grid` for every grid and emitter (the direct test vectorised)."""
    lit = direct_matrix(emitters, grids, covers)
    if enc.has_specular:
        for k, g in enumerate(grids):
            for i in np.nonzero(~lit[k])[0]:
                lit[k, i] = lights_grid(emitters[i], g, covers[k], enc)
    return lit


def reference_drop_m(emitter: Emitter, grids: tuple[Grid, ...], lit) -> float | None:
    """The emitter's smallest drop to a grid it lights (``lit``: one boolean per grid): the cull tolerance is set
    there."""
    drops = [emitter.z_m - g.z_m for g, on in zip(grids, lit, strict=True) if on]
    return min(drops, default=None)


class BoxSet(tuple):
    """A tuple of boxes that hashes once: it is part of every memoised fixture contribution's key."""

    def __hash__(self) -> int:
        h = self.__dict__.get("_hash")
        if h is None:
            h = self.__dict__["_hash"] = tuple.__hash__(self)
        return h


@memoise("fixture_on_grid", max_bytes=128 * MIB)
def fixture_on_grid(
    emitter: Emitter,
    grid: Grid,
    enc: Enclosure,
    boxes: tuple[Box, ...],
    ref_drop_m: float | None = None,
    cover: Box | None = None,
):
    """(direct Patch or None, specular image map or None) of one emitter on one grid under ``cover``."""
    if hangs_below(emitter, cover):
        direct = direct_patch(emitter, grid, boxes, reference_drop_m=ref_drop_m)
    else:
        direct = sideways_patch(emitter, grid, boxes, cover, ref_drop_m)
    mirrors = enc.has_specular or enc.mirror_reflectance("ceiling") > 0
    spec = specular_map(emitter, grid, enc, boxes, cover=cover) if mirrors else None
    return direct, spec


@memoise("fixture_on_patches", max_bytes=32 * MIB)
def _fixture_on_patches(emitter: Emitter, enc: Enclosure, boxes: tuple[Box, ...], cuts_m=()) -> np.ndarray:
    e = patch_irradiance(emitter, enc, boxes, cuts_m)
    e.setflags(write=False)
    return e


def compute_scene(
    emitters: tuple[Emitter, ...], grids: tuple[Grid, ...], enc: Enclosure, boxes: tuple[Box, ...] = ()
) -> list[ZoneLight]:
    """Direct and reflected PPFD on every grid."""
    check_scene(emitters, grids, boxes)
    boxes = BoxSet(boxes)
    out = []
    exitance = None
    cuts = tuple(sorted({round(g.z_m, 6) for g in grids}))
    blockers = BoxSet(boxes + canopy_slabs(grids))
    if enc.has_diffuse and emitters:
        e_patch = sum(_fixture_on_patches(e, enc, blockers, cuts) for e in emitters)
        exitance = radiosity_operator(enc, blockers, cuts) @ e_patch
    covers = tuple(covering_box(g, boxes) for g in grids)
    lit = lights_matrix(emitters, grids, covers, enc)
    drops = np.array([[e.z_m - g.z_m for e in emitters] for g in grids]).reshape(lit.shape)
    nearest = np.where(lit, drops, np.inf).min(axis=0, initial=np.inf)
    ref = [float(d) if np.isfinite(d) else None for d in nearest]
    for k, g in enumerate(grids):
        direct = np.zeros((g.ny, g.nx), dtype=np.float32)
        reflected = np.zeros_like(direct)
        for i in np.nonzero(lit[k])[0]:
            patch, spec = fixture_on_grid(emitters[i], g, enc, boxes, ref[i], covers[k])
            if isinstance(patch, Patch):
                patch.add_into(direct)
            if spec is not None:
                reflected += spec
        if exitance is not None:
            reflected += diffuse_map(enc, g, exitance, cuts, blockers)
        out.append(ZoneLight(g, direct, reflected))
    return out


def clear_caches() -> None:
    fixture_on_grid.cache_clear()
    _local_sideways.cache_clear()
    _images_reach.cache_clear()
    _fixture_on_patches.cache_clear()
