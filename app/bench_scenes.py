"""The benchmark's scenes beyond the plain samples: a sample room as an engine scene, the sample tent with a
carbon filter and a clip fan, a white-painted room with an open doorway, a rack beside open floor in a film tent,
and a rack lit from its open front by tilted bars (``python -m app.bench``)."""

from __future__ import annotations

from dataclasses import replace

from app.assets import asset_dir
from app.engine.distributions import cosine_power, lambertian
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


def side_lit_rack() -> EngineScene:
    """A 1.2 × 0.6 m rack of three shelves (2.5 cm boards) in a film-wrapped 1.2 × 1.2 m bay, its front open;
    on each tier one 1.2 m bar hangs 15 cm in front of the shelf edge, 35 cm above the board, tilted 55°
    toward the back so it lights the tier from the side (a vertical-farm wall lit between its shelves)."""
    W, L, H = 1.2, 1.2, 2.0
    enc = Enclosure(
        W,
        L,
        H,
        surfaces=(
            ("left", "specular", 0.95),
            ("right", "specular", 0.95),
            ("back", "specular", 0.95),
            ("front", "open", 0.0),
            ("ceiling", "absorbing", 0.0),
        ),
    )
    tiers = (0.0, 0.6, 1.2)
    boards = tuple(Box(0.0, 0.6, z - 0.025, W, L, z) for z in tiers[1:])
    grids = tuple(Grid(f"tier-{k}", 0.0, 0.6, W, 0.6, z + 0.05, 0.025) for k, z in enumerate(tiers))
    bars = tuple(
        Emitter(f"b{k}", 0.6, 0.45, z + 0.35, 250.0, cosine_power(1.5), "bar", 1.2, 0.03, tilt_deg=55.0, aim_deg=90.0)
        for k, z in enumerate(tiers)
    )
    return EngineScene(bars, grids, enc, boards)


def rack_beside_floor() -> EngineScene:
    """A film-wrapped 1.2 × 1.2 m tent (ρ = 0.95): a two-shelf rack 0.6 m deep fills its left half, a strip under
    the upper shelf lights the lower tier and one on the shelf the upper tier; a four-bar array hangs over the
    open floor of the right half, above the shelf, so it reaches the lower tier sideways and by the mirrors."""
    enc = Enclosure(1.2, 1.2, 2.0, "specular", 0.95)
    boards = (Box(0.0, 0.0, 0.05, 0.6, 1.2, 0.08), Box(0.0, 0.0, 0.7, 0.6, 1.2, 0.73))
    grids = (
        Grid("lower tier", 0.0, 0.0, 0.6, 1.2, 0.3, 0.0254),
        Grid("upper tier", 0.0, 0.0, 0.6, 1.2, 0.95, 0.0254),
        Grid("floor", 0.6, 0.0, 0.6, 1.2, 0.3, 0.0254),
    )
    strip = cosine_power(1.5)
    emitters = (
        Emitter("lower", 0.3, 0.6, 0.69, 80.0, strip, "bar", 1.0, 0.03, rotation_deg=90),
        Emitter("upper", 0.3, 0.6, 1.3, 80.0, strip, "bar", 1.0, 0.03, rotation_deg=90),
        Emitter("bars", 0.9, 0.6, 1.1, 300.0, lambertian(), "bar_array", 0.5, 0.4, 4, 0.03, rotation_deg=90),
    )
    return EngineScene(emitters, grids, enc, boards)
