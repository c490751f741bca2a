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
from app.engine.mirror_images import specular_map
from app.engine.patch_transfer import diffuse_map
from app.engine.radiosity import patch_irradiance, radiosity_operator
from app.engine.scene import Box, Emitter, Enclosure, Grid
from app.room.layout import covers_from_above  # pure numbers: the one layout rule's tolerance


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
    over = [
        b.z0_m
        for b in boxes
        if covers_from_above(
            b.x0_m,
            b.y0_m,
            b.x1_m,
            b.y1_m,
            b.z0_m,
            grid.x0_m,
            grid.y0_m,
            grid.x0_m + grid.width_m,
            grid.y0_m + grid.length_m,
            grid.z_m,
        )
    ]
    return min(over, default=np.inf)


def lights_grid(emitter: Emitter, grid: Grid, cover_m: float) -> bool:
    """Whether the emitter can light the grid at all.

    A tier covered by a shelf is lit by the fixtures hung below that shelf. Light
    from fixtures above the shelf could reach it only sideways through the tier's
    open sides; that light is neglected (its size is measured in
    tests/engine/test_reflections.py and stated in the README).
    """
    return grid.z_m < emitter.z_m < cover_m + 1e-9


def reference_drop_m(emitter: Emitter, grids: tuple[Grid, ...], covers: dict[Grid, float]) -> float | None:
    """The emitter's smallest drop to a grid it lights: the cull tolerance is set there."""
    drops = [emitter.z_m - g.z_m for g in grids if lights_grid(emitter, g, covers[g])]
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
    cover_m: float = np.inf,
):
    """(direct Patch or None, specular image map or None) of one emitter on one grid."""
    if not lights_grid(emitter, grid, cover_m):
        return None, None
    direct = direct_patch(emitter, grid, boxes, reference_drop_m=ref_drop_m)
    mirrors = enc.has_specular or enc.mirror_reflectance("ceiling") > 0
    spec = specular_map(emitter, grid, enc, boxes) if mirrors else None
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
    covers = {g: covering_height_m(g, boxes) for g in grids}
    ref = {e: reference_drop_m(e, grids, covers) for e in emitters}
    for g in grids:
        direct = np.zeros((g.ny, g.nx), dtype=np.float32)
        reflected = np.zeros_like(direct)
        for e in emitters:
            if not lights_grid(e, g, covers[g]):
                continue
            patch, spec = fixture_on_grid(e, g, enc, boxes, ref[e], covers[g])
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
    _fixture_on_patches.cache_clear()
