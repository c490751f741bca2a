"""A tier under a shelf gets the light of every fixture that can reach it, sideways through its open sides too.

Reference: a Monte Carlo photon tracer written here for these tests and sharing nothing with the engine. Photons
start uniformly on each emitting face, leave in directions drawn from the cosⁿ law (P(cos θ > c) = c^(n+1), the
inverse of the cumulative distribution; Lambert's cosine law is n = 1), fly in straight lines, stop in the first
box they enter (the slab test of Kay T.L. & Kajiya J.T., "Ray tracing complex scenes", SIGGRAPH 1986), bounce off
mirror walls (direction component reversed, weight × ρ, Hecht E., "Optics", law of reflection) and are tallied
on 10 cm cells of the tier where they cross its canopy plane going down. Each test also checks that the old rule
(a tier lit only by the fixtures hung below its shelf) was far off, so it fails on the model before this change.
"""

import numpy as np
import pytest

from app.engine.compute import clear_caches, compute_scene
from app.engine.distributions import cosine_power, lambertian
from app.engine.scene import Box, Emitter, Enclosure, Grid

CELL_M = 0.1


def _face_points(rng, e: Emitter, n: int) -> np.ndarray:
    """n points uniform on the emitting face (bars of a bar array each with an equal share)."""
    u = rng.uniform(-e.length_m / 2, e.length_m / 2, n)
    if e.shape == "bar_array":
        pitch = (e.width_m - e.bar_width_m) / (e.bar_count - 1)
        v = -(e.width_m - e.bar_width_m) / 2 + pitch * rng.integers(0, e.bar_count, n)
        v = v + rng.uniform(-e.bar_width_m / 2, e.bar_width_m / 2, n)
    else:
        v = rng.uniform(-e.width_m / 2, e.width_m / 2, n)
    a = np.radians(e.rotation_deg)
    return np.column_stack(
        [e.x_m + u * np.cos(a) - v * np.sin(a), e.y_m + u * np.sin(a) + v * np.cos(a), np.full(n, e.z_m)]
    )


def _cos_power_directions(rng, n: int, exponent: float) -> np.ndarray:
    c = rng.random(n) ** (1.0 / (exponent + 1.0))
    s = np.sqrt(1.0 - c * c)
    phi = rng.uniform(0.0, 2.0 * np.pi, n)
    return np.column_stack([s * np.cos(phi), s * np.sin(phi), -c])


def _slab_entry(o, d, box):
    """Parameter where each ray o + s·d enters the box (inf where it misses): Kay & Kajiya's slabs."""
    lo, hi = np.array(box[:3]), np.array(box[3:])
    with np.errstate(divide="ignore", invalid="ignore"):
        ta, tb = (lo - o) / d, (hi - o) / d
    ta, tb = np.nan_to_num(ta, nan=-np.inf), np.nan_to_num(tb, nan=np.inf)
    near, far = np.minimum(ta, tb).max(axis=1), np.maximum(ta, tb).min(axis=1)
    return np.where((far > near) & (far > 0), np.maximum(near, 0.0), np.inf)


def mc_tier(emitters, room, mirrors_rho, boxes, tier, n_per_emitter, seed):
    """Mean PPFD [µmol m⁻² s⁻¹] on 10 cm cells (ny, nx) of ``tier`` = (x0, y0, x1, y1, z).

    room : (W, L); walls at x = 0, W and y = 0, L mirror with reflectance ``mirrors_rho`` (0: they absorb).
    """
    rng = np.random.default_rng(seed)
    x0, y0, x1, y1, zc = tier
    nx, ny = round((x1 - x0) / CELL_M), round((y1 - y0) / CELL_M)
    tally = np.zeros((ny, nx))
    W, L = room
    for e in emitters:
        o = _face_points(rng, e, n_per_emitter)
        d = _cos_power_directions(rng, n_per_emitter, e.distribution.exponent)
        w = np.full(n_per_emitter, e.flux_umol_s / n_per_emitter)
        for _ in range(400):
            if len(o) == 0:
                break
            s_plane = (zc - o[:, 2]) / d[:, 2]  # every photon goes down: it crosses the canopy plane once
            with np.errstate(divide="ignore", invalid="ignore"):
                sx = np.where(d[:, 0] > 0, (W - o[:, 0]) / d[:, 0], np.where(d[:, 0] < 0, -o[:, 0] / d[:, 0], np.inf))
                sy = np.where(d[:, 1] > 0, (L - o[:, 1]) / d[:, 1], np.where(d[:, 1] < 0, -o[:, 1] / d[:, 1], np.inf))
            s_wall = np.minimum(sx, sy)
            s_box = np.min([_slab_entry(o, d, b) for b in boxes], axis=0) if boxes else np.full(len(o), np.inf)
            lands = (s_plane <= s_wall) & (s_plane < s_box)
            p = o[lands] + s_plane[lands, None] * d[lands]
            on = (p[:, 0] >= x0) & (p[:, 0] < x1) & (p[:, 1] >= y0) & (p[:, 1] < y1)
            i = np.clip(((p[on, 0] - x0) / CELL_M).astype(int), 0, nx - 1)
            j = np.clip(((p[on, 1] - y0) / CELL_M).astype(int), 0, ny - 1)
            np.add.at(tally, (j, i), w[lands][on])
            bounce = (s_wall < s_plane) & (s_wall < s_box) & (mirrors_rho > 0)
            o = o[bounce] + s_wall[bounce, None] * d[bounce]
            d, w, hit_x = d[bounce].copy(), w[bounce] * mirrors_rho, (sx <= sy)[bounce]
            d[hit_x, 0] *= -1.0
            d[~hit_x, 1] *= -1.0
    return tally / CELL_M**2


def _overlap(points, start, extent, nbins):
    """(nbins, npoints): length of each map point's cell inside each 10 cm bin."""
    mid = 0.5 * (points[1:] + points[:-1])
    edges = np.concatenate([[start], mid, [start + extent]])
    bins = np.linspace(start, start + extent, nbins + 1)
    return np.maximum(np.minimum(edges[None, 1:], bins[1:, None]) - np.maximum(edges[None, :-1], bins[:-1, None]), 0)


def binned_mean(ppfd, g: Grid) -> np.ndarray:
    """The engine's map averaged over the same 10 cm cells (each point's cell split between the bins it meets)."""
    nx, ny = round(g.width_m / CELL_M), round(g.length_m / CELL_M)
    bx, by = _overlap(g.x_m, g.x0_m, g.width_m, nx), _overlap(g.y_m, g.y0_m, g.length_m, ny)
    return by @ ppfd @ bx.T / CELL_M**2


def _engine(emitters, g, enc, boxes):
    clear_caches()
    return binned_mean(compute_scene(tuple(emitters), (g,), enc, tuple(Box(*b) for b in boxes))[0].ppfd, g)


# A rack 0.6 m deep standing against the left wall, its tier (canopy 0.3 m) under a shelf board at 0.7-0.73 m;
# a strip under the board lights the tier, and the open floor beside the rack has its own fixture, hung above
# the board. The tier's open side is x = 0.6.
SHELF = (0.0, 0.0, 0.7, 0.6, 1.2, 0.73)
BOARD_UNDER = (0.0, 0.0, 0.05, 0.6, 1.2, 0.08)  # the board the tier stands on
STRIP = Emitter("strip", 0.3, 0.6, 0.69, 80.0, cosine_power(1.5), "bar", 1.0, 0.03, rotation_deg=90)


@pytest.mark.slow
def test_tier_beside_open_floor_gets_the_floor_fixtures_light():
    # Matt-black room 2.4 x 1.2 m: a panel over the floor 0.6 m beside the rack, 0.5 m above the board.
    W, L = 2.4, 1.2
    enc = Enclosure(W, L, 2.4, "absorbing", 0.0)
    panel = Emitter("panel", 1.2, 0.6, 1.2, 500.0, lambertian(), "panel", 0.6, 0.6)
    g = Grid("tier", 0.0, 0.0, 0.6, 1.2, 0.3, 0.02)
    boxes = (SHELF, BOARD_UNDER)
    ours = _engine((STRIP, panel), g, enc, boxes)
    old_rule = _engine((STRIP,), g, enc, boxes)  # only the fixture hung below the shelf
    ref = mc_tier((STRIP, panel), (W, L), 0.0, boxes, (0.0, 0.0, 0.6, 1.2, 0.3), 1_500_000, 21)
    assert old_rule.mean() < 0.7 * ref.mean()  # the old rule was far off
    assert ref[:, -1].mean() > 2.0 * old_rule[:, -1].mean()  # most so beside the open side
    assert ours.mean() == pytest.approx(ref.mean(), rel=0.05)
    assert ours[:, -1].mean() == pytest.approx(ref[:, -1].mean(), rel=0.05)  # the column at the open side
    assert ours[:, 0].mean() == pytest.approx(ref[:, 0].mean(), rel=0.05)  # and the one at the wall


@pytest.mark.slow
def test_tier_in_a_mirror_tent_gets_light_past_its_shelf_and_by_the_mirrors():
    # Reflective-film tent 1.2 x 1.2 m (ρ = 0.95): the rack fills its left half; a bar array over the floor of the
    # right half and a strip on top of the shelf (lighting the tier above) both hang above the board. The top strip
    # reaches the tier only by its mirror images past the board's edge.
    W, rho = 1.2, 0.95
    enc = Enclosure(W, W, 2.0, "specular", rho)
    bars = Emitter("bars", 0.9, 0.6, 1.1, 300.0, lambertian(), "bar_array", 0.5, 0.4, 4, 0.03, rotation_deg=90)
    top = Emitter("top", 0.3, 0.6, 1.25, 80.0, cosine_power(1.5), "bar", 1.0, 0.03, rotation_deg=90)
    g = Grid("tier", 0.0, 0.0, 0.6, 1.2, 0.3, 0.02)
    boxes = (SHELF, BOARD_UNDER)
    ours = _engine((STRIP, bars, top), g, enc, boxes)
    old_rule = _engine((STRIP,), g, enc, boxes)
    ref = mc_tier((STRIP, bars, top), (W, W), rho, boxes, (0.0, 0.0, 0.6, 1.2, 0.3), 1_000_000, 22)
    assert old_rule.mean() < 0.7 * ref.mean()
    assert ref[:, -1].mean() > 2.0 * old_rule[:, -1].mean()
    assert ours.mean() == pytest.approx(ref.mean(), rel=0.05)
    assert ours[:, -1].mean() == pytest.approx(ref[:, -1].mean(), rel=0.05)
    assert ours[:, 0].mean() == pytest.approx(ref[:, 0].mean(), rel=0.05)


def test_shelf_over_the_whole_rack_hides_the_fixtures_above_it():
    # The cheap test: a fixture on the shelf above, inside the rack's footprint, lights nothing below the shelf
    # (every segment to the tier enters the board's underside), so the tier's map is the strip's alone.
    enc = Enclosure(0.6, 1.2, 2.0, "specular", 0.95)  # the rack fills a film-wrapped tent: images hidden too
    top = Emitter("top", 0.3, 0.6, 1.25, 80.0, cosine_power(1.5), "bar", 1.0, 0.03, rotation_deg=90)
    g = Grid("tier", 0.0, 0.0, 0.6, 1.2, 0.3, 0.05)
    clear_caches()
    both = compute_scene((STRIP, top), (g,), enc, (Box(*SHELF),))[0].ppfd
    strip = compute_scene((STRIP,), (g,), enc, (Box(*SHELF),))[0].ppfd
    np.testing.assert_array_equal(both, strip)


def test_racks_light_each_other_across_the_aisle_symmetrically_and_share_the_work():
    # Three identical racks in a dark room (a small generated farm): the outer two are mirror images of each other
    # (each has one neighbour, on opposite sides), so their tiers' maps must be mirror images too; the upper fixtures
    # of a rack never reach its own lower tiers (its shelves span them); the next rack's do, across the aisle.
    from app.engine import compute
    from app.engine.tier_cover import covering_box, direct_matrix
    from app.service.farm import vertical_farm
    from app.service.scene_builder import build_scene

    s = build_scene(vertical_farm(rows=3, tiers=3, fixtures_per_tier=2, rack_length_m=2.8, grid_spacing_m=0.1).room)
    clear_caches()
    maps = {z.grid.id: z.ppfd for z in compute_scene(s.emitters, s.grids, s.enclosure, s.boxes)}
    for k in range(3):
        np.testing.assert_allclose(maps[f"r0-t{k}"], maps[f"r2-t{k}"][:, ::-1], rtol=1e-4, atol=1e-3)
    lit = direct_matrix(s.emitters, s.grids, tuple(covering_box(g, s.boxes) for g in s.grids))
    ids = [e.id for e in s.emitters]
    bottom = [g.id for g in s.grids].index("r1-t0")
    assert not lit[bottom, ids.index("r1-t2-f0")]  # its own rack's top fixture: hidden by its own shelves
    assert lit[bottom, ids.index("r0-t2-f0")]  # the next rack's: seen through the open side
    assert maps["r1-t0"].mean() > maps["r0-t0"].mean() > maps["r0-t2"].mean()  # two neighbours, one, none above
    stats = compute._local_sideways.cache.stats()
    assert stats.hits > 0  # identical racks and tiers share their sideways footprints


def test_the_map_row_on_a_shelfs_open_edge_gets_the_light_that_enters_there():
    """A thin bar in front of a tier's open edge, above its shelf, tilted toward the tier: the row of map points
    lying exactly under the shelf's edge is lit (it was dropped from the lit band by a rounding of the shared
    frame). Reference: inverse-square sum over 400 points along the bar, cos^1.5 about its tilted axis, each
    segment tested against the shelf with a plain slab test (Kay & Kajiya 1986)."""
    from app.engine.aim import aim_axis

    enc = Enclosure(1.2, 1.2, 2.0, "absorbing", 0.0)
    shelf = (0.0, 0.6, 0.575, 1.2, 1.2, 0.6)
    bar = Emitter("bar", 0.6, 0.45, 0.95, 250.0, cosine_power(1.5), "bar", 1.2, 0.002, tilt_deg=55.0, aim_deg=90.0)
    g = Grid("tier", 0.0, 0.6, 1.2, 0.6, 0.05, 0.025)
    ours = compute_scene((bar,), (g,), enc, (Box(*shelf),))[0].ppfd
    gx, gy = np.meshgrid(g.x_m, g.y_m)
    pts = np.column_stack([gx.ravel(), gy.ravel(), np.full(gx.size, g.z_m)])
    axis = aim_axis(55.0, 90.0)
    ref = np.zeros(pts.shape[0])
    for x in (np.arange(400) + 0.5) / 400 * 1.2:
        q = np.array([x, 0.45, 0.95])
        d = pts - q
        r = np.linalg.norm(d, axis=1)
        e = 250.0 / 400 * 2.5 / (2 * np.pi) * np.maximum(d @ axis / r, 0) ** 1.5 * np.maximum(-d[:, 2] / r, 0) / r**2
        e[_slab_entry(q, d, shelf) < 1.0 - 1e-9] = 0.0  # the segment enters the shelf before its end
        ref += e
    ref = ref.reshape(gx.shape)
    assert ref[0].mean() > 30.0  # the edge row is well lit in reality
    assert ours[0].mean() == pytest.approx(ref[0].mean(), rel=0.03)
    assert ours.mean() == pytest.approx(ref.mean(), rel=0.03)
