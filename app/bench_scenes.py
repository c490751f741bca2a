"""The benchmark's scenes beyond the plain samples: a sample room as an engine scene, the sample tent with a
carbon filter and a clip fan, and a white-painted room with an open doorway (``python -m app.bench``)."""

from __future__ import annotations

from dataclasses import replace

from app.assets import asset_dir
from app.engine.distributions import lambertian
from app.engine.scene import Box, Emitter, Enclosure, Grid
from app.room.roomfile import parse_room_file
from app.service.scene_builder import EngineScene, build_scene


def sample(name: str) -> EngineScene:
    return build_scene(parse_room_file((asset_dir("sample_rooms") / f"{name}.json").read_bytes()).room)


def tent_with_filter_and_fan() -> EngineScene:
    """The sample tent with a carbon filter hung from the top bars and a 15 cm clip fan on a corner pole."""
    s = sample("hobby-tent-peppers")
    carbon_filter = Box(0.45, 0.45, 1.45, 0.75, 0.75, 1.95)
    fan = Box(0.03, 0.03, 0.75, 0.18, 0.18, 0.90)
    return replace(s, boxes=(*s.boxes, carbon_filter, fan))


def white_room() -> EngineScene:
    """Three white-painted walls and ceiling, an open front (a wide doorway), four 0.6 m panels."""
    W, L, H = 3.0, 3.6, 2.4
    paint = ("diffuse", 0.8)
    enc = Enclosure(
        W,
        L,
        H,
        surfaces=(
            ("left", *paint),
            ("right", *paint),
            ("back", *paint),
            ("front", "open", 0.0),
            ("ceiling", *paint),
        ),
    )
    fixtures = tuple(
        Emitter(f"p{k}", x, y, 1.6, 560.0, lambertian(), "panel", 0.6, 0.6)
        for k, (x, y) in enumerate([(0.9, 1.2), (2.1, 1.2), (0.9, 2.4), (2.1, 2.4)])
    )
    return EngineScene(fixtures, (Grid("floor", 0.0, 0.0, W, L, 0.9, 0.025),), enc, ())
