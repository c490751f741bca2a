"""How long and how much memory an analysis will take, estimated before computing it.

Size limits alone do not bound the work: 5,000 fixtures over a large zone at a fine spacing are each within
their limit and together run for an hour. So before an analysis the work is counted the way the engine will do
it (from the same scene, with the engine's own cull radius, quadrature nodes, mirror-image list and wall
patches) and turned into seconds with per-operation times measured on a 2-core machine by
``python -m app.bench`` (:data:`NS_PER`). A request over the budget is refused with what to change.

Terms counted (each "evaluation" is one quadrature node against one map point):

- direct light: for each fixture and each zone it lights, the map points within its cull radius x its nodes;
  identical fixtures at the same place within a map cell share one footprint, as in the engine; light entering a
  covered tier past its shelf: its samples x nodes x boxes, once per shared frame, as in the engine;
- mirror images (specular walls): near images on the (strided) map, far images on a 9 x 9 map, and one
  full-map add per fixture;
- wall patches (matt walls): each fixture onto the wall patches, the patch exchange and its solve, and the
  patches onto every map point.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from app.engine import mirror_images as rf
from app.engine.compute import lights_grid, reference_drop_m
from app.engine.direct import cull_radius_m, cull_share, nearest_distance_m, relevant_boxes
from app.engine.emitters import local_nodes
from app.engine.radiosity import wall_patches
from app.engine.scene import Emitter, Grid
from app.engine.sideways import shared_frame, sideways_plan
from app.engine.tier_cover import covering_box, hangs_below, images_past_cover
from app.room.models import Room
from app.service.scene_builder import build_scene

# Nanoseconds per unit of each term on the reference machine (2 cores shared by several users), fitted to the
# benchmark's calibration rooms (`python -m app.bench --safety`, "cost model") measured while the machine was
# busy, and rounded up: the estimate errs on the slow side. On an idle machine analyses run 2-4x faster.
NS_PER = {
    "direct_evaluations": 30.0,  # one node x one point, open air (vectorised numpy)
    "shadow_evaluations": 60.0,  # one node x one point x one box tested
    "footprint_adds": 5.0,  # adding a (shared) footprint into a map, per point
    "image_evaluations": 30.0,  # a near mirror image's node x point (full quadrature, strided map)
    "far_image_evaluations": 20.0,  # a far image (a point source) x a point of the 9 x 9 coarse map
    "map_adds": 60.0,  # spreading an image map over the whole map (bilinear) and adding it, per point
    "patch_evaluations": 130.0,  # patch sub-point x node, or patch x patch, or patch x map point
    "points": 3000.0,  # per map point: figures, rounding, JSON of the grids
}
FIXED_S = 0.05  # scene building, checks, warnings
BYTES_PER_POINT = 600  # maps, figures and the JSON answer of one map point (measured, rounded up)
BYTES_FIXED = 150 * 1024 * 1024  # the server itself with numpy and the libraries loaded
CHUNK_BYTES = 200 * 1024 * 1024  # the engine's chunked temporaries (CHUNK_ELEMENTS x a few float64 arrays)


@dataclass(frozen=True)
class CostEstimate:
    seconds: float
    memory_bytes: int
    grid_points: int
    fixtures: int
    units: dict[str, float] = field(default_factory=dict)
    footprints: int = 0  # distinct open-air footprints computed (identical fixtures share one)

    @property
    def main_term(self) -> str:
        times = {k: v * NS_PER[k] for k, v in self.units.items()}
        return max(times, key=times.get) if times else "points"

    def as_dict(self) -> dict:
        return {
            "seconds": round(self.seconds, 2),
            "memory_mib": round(self.memory_bytes / 2**20),
            "grid_points": self.grid_points,
            "fixtures": self.fixtures,
            "work": {k: int(v) for k, v in self.units.items()},
        }


class OverBudget(Exception):
    """The estimate is over the time or memory budget; the message says what to change."""

    def __init__(self, estimate: CostEstimate, message: str) -> None:
        self.estimate = estimate
        super().__init__(message)


def _window_points(e: Emitter, g: Grid, reach_m: float) -> int:
    nx = int(np.searchsorted(g.x_m, e.x_m + reach_m, "right") - np.searchsorted(g.x_m, e.x_m - reach_m, "left"))
    ny = int(np.searchsorted(g.y_m, e.y_m + reach_m, "right") - np.searchsorted(g.y_m, e.y_m - reach_m, "left"))
    return max(nx, 0) * max(ny, 0)


def _node_count(e: Emitter, nearest_m: float, shadowed: bool = False) -> int:
    return local_nodes(e, nearest_m, shadowed)[0].size


def _direct_terms(e: Emitter, g: Grid, boxes, ref_drop: float | None, units: dict, shared: set) -> None:
    dz = e.z_m - g.z_m
    relative = cull_share(dz, ref_drop)
    if dz <= 0 or relative >= 1.0:
        return
    reach = cull_radius_m(e.distribution, dz, relative, e.tilted) + 0.5 * e.largest_dimension_m
    pts = _window_points(e, g, reach)
    if pts == 0:
        return
    near = relevant_boxes(e, g, boxes, reach)
    units["footprint_adds"] += pts
    if near:
        nodes = _node_count(e, nearest_distance_m(e, g), shadowed=True)
        units["direct_evaluations"] += nodes * pts
        units["shadow_evaluations"] += nodes * pts * len(near)
        return
    # The engine's footprint key: the fixture without its place, its place within a map cell, the window.
    s = g.spacing_m
    u, v = (e.x_m - g.x0_m) / s, (e.y_m - g.y0_m) / s
    key = (
        e.shape,
        e.length_m,
        e.width_m,
        e.bar_count,
        e.bar_width_m,
        e.flux_umol_s,
        e.rotation_deg,
        e.tilt_deg,
        e.aim_deg,
        id(e.distribution),
        round(dz, 9),
        round(u - math.floor(u), 6),
        round(v - math.floor(v), 6),
        pts,
        s,
    )
    if key not in shared:
        shared.add(key)
        units["direct_evaluations"] += _node_count(e, dz) * pts


def _sideways_terms(e: Emitter, g: Grid, boxes, ref_drop: float | None, units: dict, shared: set, cover) -> None:
    """Light entering a covered tier past its shelf: one computation per shared frame (app/engine/sideways.py)."""
    key = shared_frame(e, g, boxes, cover, ref_drop)
    if key is None or key in shared:
        return
    shared.add(key)
    local, frame, near, local_cover, ref = key
    plan = sideways_plan(local, frame, near, local_cover, cull_share(local.z_m - frame.z_m, ref))
    if plan is None:
        return
    (i0, i1, j0, j1), (sx, sy), nearest, near = plan
    samples = math.ceil((i1 - i0) / sx) * math.ceil((j1 - j0) / sy)
    nodes = _node_count(e, nearest)  # the penumbra integration's cells: fine nodes only along shadow edges
    units["footprint_adds"] += (i1 - i0) * (j1 - j0)
    units["direct_evaluations"] += nodes * samples
    units["shadow_evaluations"] += nodes * samples * len(near)


def _image_terms(e: Emitter, g: Grid, enc, units: dict, cover=None) -> None:
    images = images_past_cover(e, g, enc, cover, rf.image_list(e, g, enc))
    if not images:
        return
    points = g.nx * g.ny
    units["map_adds"] += points
    for i, j, _ in images:
        if max(abs(i), abs(j)) <= rf.NEAR_ORDER:
            img = replace(
                e,
                x_m=float(rf.mirror_coordinate(e.x_m, i, enc.width_m)),
                y_m=float(rf.mirror_coordinate(e.y_m, j, enc.length_m)),
            )
            nearest = max(nearest_distance_m(img, g), 1e-6)
            step = max(1, int(nearest / (rf.IMAGE_SAMPLES_PER_DISTANCE * g.spacing_m)))
            units["image_evaluations"] += _node_count(e, nearest) * math.ceil(g.nx / step) * math.ceil(g.ny / step)
            units["map_adds"] += points  # the strided image spread back over the whole map
        else:
            units["far_image_evaluations"] += min(g.nx, rf.COARSE_POINTS) * min(g.ny, rf.COARSE_POINTS)


def estimate(room: Room) -> CostEstimate:
    """The work and memory of analysing ``room``, before doing it."""
    scene = build_scene(room)
    emitters, grids, enc, boxes = scene.emitters, scene.grids, scene.enclosure, scene.boxes
    units = dict.fromkeys(NS_PER, 0.0)
    covers = {g: covering_box(g, boxes) for g in grids}
    shared: set = set()
    specular = enc.has_specular
    for e in emitters:
        lit = [lights_grid(e, g, covers[g], enc) for g in grids]
        ref = reference_drop_m(e, grids, lit)
        for g, on in zip(grids, lit, strict=True):
            if not on:
                continue
            if hangs_below(e, covers[g]):
                _direct_terms(e, g, boxes, ref, units, shared)
            else:
                _sideways_terms(e, g, boxes, ref, units, shared, covers[g])
            if specular:
                _image_terms(e, g, enc, units, covers[g])
    points = sum(g.nx * g.ny for g in grids)
    if enc.has_diffuse and emitters:
        n_patches = len(wall_patches(enc).areas)
        nodes = sum(_node_count(e, 0.5) for e in emitters)
        units["patch_evaluations"] += 4 * n_patches * nodes + n_patches**2 * (1 + len(boxes)) + 4 * n_patches * points
    units["points"] = float(points)
    seconds = FIXED_S + sum(units[k] * NS_PER[k] for k in units) * 1e-9
    memory = BYTES_FIXED + CHUNK_BYTES + BYTES_PER_POINT * points
    return CostEstimate(seconds, int(memory), points, len(emitters), units, footprints=len(shared))


ADVICE = {
    "direct_evaluations": "use a coarser map spacing (room.grid_spacing_m), fewer fixtures, or a smaller zone",
    "shadow_evaluations": "remove obstacles that do not shade the canopy, or use a coarser map spacing",
    "footprint_adds": "use fewer fixtures or a coarser map spacing",
    "image_evaluations": "use matt walls for this estimate, a coarser map spacing, or fewer fixtures",
    "far_image_evaluations": "use walls of lower reflectance for this estimate, or fewer fixtures",
    "map_adds": "use matt walls for this estimate, a coarser map spacing, or fewer fixtures",
    "patch_evaluations": "use a coarser map spacing or fewer fixtures",
    "points": "use a coarser map spacing (room.grid_spacing_m) or smaller zones",
}


def check_budget(room: Room, budget_s: float, memory_budget_bytes: int) -> CostEstimate:
    """The estimate, or :class:`OverBudget` naming the estimate in seconds and what to change."""
    est = estimate(room)
    if est.seconds > budget_s:
        raise OverBudget(
            est,
            f"This analysis would take about {est.seconds:,.0f} s ({est.grid_points:,} map points, "
            f"{est.fixtures:,} fixtures); the limit is {budget_s:g} s. To compute it, "
            f"{ADVICE[est.main_term]}.",
        )
    if est.memory_bytes > memory_budget_bytes:
        raise OverBudget(
            est,
            f"This analysis would need about {est.memory_bytes / 2**30:.1f} GiB of memory "
            f"({est.grid_points:,} map points); the limit is {memory_budget_bytes / 2**30:.1f} GiB. "
            "Use a coarser map spacing (room.grid_spacing_m) or smaller zones.",
        )
    return est
