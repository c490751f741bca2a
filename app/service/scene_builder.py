"""Turns the pydantic room model into the engine's plain dataclasses."""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass

from app.engine import distributions as dist
from app.engine.cache import MIB, BoundedCache
from app.engine.scene import Box, Emitter, Enclosure, Grid
from app.room import layout
from app.room.models import SURFACES, Beam, CanopyZone, FixtureType, Room
from app.service.maintained import output_factors


@dataclass(frozen=True)
class EngineScene:
    emitters: tuple[Emitter, ...]
    grids: tuple[Grid, ...]
    enclosure: Enclosure
    boxes: tuple[Box, ...]


_dist_cache = BoundedCache("distributions", max_bytes=8 * MIB)


def distribution_for(beam: Beam) -> dist.Distribution:
    key = hashlib.sha1(json.dumps(beam.model_dump(mode="json"), sort_keys=True).encode()).hexdigest()
    d = _dist_cache.get(key)
    if d is None:
        if beam.kind == "lambertian":
            d = dist.lambertian()
        elif beam.kind == "cosine_power":
            d = dist.cosine_power(float(dist.cosine_exponent_from_beam_angle(beam.beam_angle_deg)))
        else:
            d = dist.tabulated(beam.polar_deg, beam.azimuth_deg, beam.relative_intensity, key=key)
        _dist_cache.put(key, d)
    return d


def emitter_for(
    fixture_id: str,
    t: FixtureType,
    x_m: float,
    y_m: float,
    z_m: float,
    rotation_deg: float,
    dimming_pct: float,
    output_factor: float = 1.0,
    *,
    tilt_deg: float = 0.0,
    aim_deg: float = 0.0,
) -> Emitter:
    g = t.geometry
    return Emitter(
        id=fixture_id,
        x_m=x_m,
        y_m=y_m,
        z_m=z_m,
        flux_umol_s=t.ppf_umol_s * dimming_pct / 100.0 * output_factor,
        distribution=distribution_for(t.beam),
        shape=g.kind,
        length_m=g.length_m,
        width_m=layout.footprint_size_m(g)[1],
        bar_count=g.bar_count,
        bar_width_m=g.bar_width_m,
        rotation_deg=rotation_deg,
        tilt_deg=float(tilt_deg),
        # The aim means nothing on a level fixture: 0 there, so level fixtures share footprints whatever it says.
        aim_deg=float(aim_deg) if tilt_deg else 0.0,
    )


def aim_fields(fixture) -> dict[str, float]:
    """A room fixture's tilt and aim as keyword arguments of emitter_for."""
    return {"tilt_deg": fixture.tilt_deg, "aim_deg": fixture.aim_deg}


def zone_grid(zone: CanopyZone, spacing_m: float) -> Grid:
    return Grid(zone.id, zone.x_m, zone.y_m, zone.width_m, zone.length_m, zone.canopy_height_m, spacing_m)


def room_boxes(room: Room) -> tuple[Box, ...]:
    return tuple(
        Box(o.x_m, o.y_m, o.z_m, o.x_m + o.width_m, o.y_m + o.length_m, o.z_m + o.height_m) for o in room.obstacles
    )


def build_scene(room: Room, dimming_pct: float | None = None) -> EngineScene:
    """The engine's scene, each fixture at its type's output at the shown age (:mod:`app.service.maintained`).

    dimming_pct : every fixture at this dimming instead of its own (the dimming when readings were taken).
    """
    types = {t.id: t for t in room.fixture_types}
    factors = output_factors(room)
    emitters = tuple(
        emitter_for(
            f.id,
            types[f.type_id],
            f.x_m,
            f.y_m,
            f.hanging_height_m,
            f.rotation_deg,
            f.dimming_pct if dimming_pct is None else dimming_pct,
            factors[f.type_id],
            **aim_fields(f),
        )
        for f in room.fixtures
        if f.on
    )
    grids = tuple(zone_grid(z, room.grid_spacing_m) for z in room.zones)
    wf = room.wall_finish
    # Per-surface finishes only when the room has any: a 0.1 room keeps its one-finish enclosure.
    listed = (*SURFACES, "floor") if "floor" in room.surface_finishes else SURFACES
    surfaces = tuple(
        (s, room.finish_of(s).kind, room.finish_of(s).reflectance) for s in listed if room.surface_finishes
    )
    enclosure = Enclosure(
        room.width_m, room.length_m, room.height_m, wf.kind, wf.reflectance, frozenset(room.open_sides), surfaces
    )
    return EngineScene(emitters, grids, enclosure, room_boxes(room))
