"""Each wall its own finish: the engine against a Monte Carlo photon tracer with a finish per surface."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.budget import photon_budget
from app.engine.compute import clear_caches, compute_scene
from app.engine.distributions import lambertian
from app.engine.scene import Emitter, Enclosure, Grid
from tests.engine.reference_tracer import sample_cos_power, sample_emitter, trace_room
from tests.engine.test_reflections import binned

W_TENT = 1.2192
TENT = (
    Emitter("a", 0.3148, 0.6096, 1.05, 420.0, lambertian(), "bar_array", 0.6, 0.55, 4, 0.03, rotation_deg=90),
    Emitter("b", 0.9044, 0.6096, 1.05, 420.0, lambertian(), "bar_array", 0.6, 0.55, 4, 0.03, rotation_deg=90),
)


def _surfaces(**kinds):
    return tuple((s, *kinds[s]) for s in ("left", "right", "front", "back", "ceiling"))


def test_one_finish_and_the_same_finish_per_surface_agree():
    # A 0.1 room (one finish, an open side) and the same room written surface by surface give the same map.
    g = Grid("t", 0, 0, W_TENT, W_TENT, 0.6, 0.0254)
    legacy = Enclosure(W_TENT, W_TENT, 2.0, "specular", 0.95, frozenset({"front"}))
    m = ("specular", 0.95)
    per = Enclosure(W_TENT, W_TENT, 2.0, surfaces=_surfaces(left=m, right=m, back=m, front=("open", 0.0), ceiling=m))
    for s in ("left", "right", "front", "back", "ceiling"):
        assert legacy.surface(s) == per.surface(s)
    clear_caches()
    a = compute_scene(TENT, (g,), legacy)[0].ppfd
    clear_caches()
    b = compute_scene(TENT, (g,), per)[0].ppfd
    assert_allclose(a, b, rtol=1e-6)


def _mc(fixtures, size, surfaces, canopy, n, seed):
    rng = np.random.default_rng(seed)
    tally = 0.0
    for f in fixtures:
        o = sample_emitter(
            rng, n, f.x_m, f.y_m, f.z_m, f.shape, f.length_m, f.width_m, f.bar_count, f.bar_width_m, f.rotation_deg
        )
        d = sample_cos_power(rng, n, f.distribution.exponent)
        t, _ = trace_room(rng, o, d, f.flux_umol_s / n, size, surfaces, [canopy])
        tally = tally + t[0]
    return tally


@pytest.mark.slow
@pytest.mark.parametrize(
    "open_side, rho_left",
    [("front", 0.95), ("right", 0.95), ("front", 0.6)],
    ids=["flap-front", "flap-right", "dull-left"],
)
def test_tent_with_one_open_flap_matches_monte_carlo(open_side, rho_left):
    # A reflective tent with one flap open (and, in one case, a duller left wall): photons traced with
    # real mirror bounces and escape through the opening (tests/engine/reference_tracer.py).
    kinds = {s: ("specular", 0.95) for s in ("left", "right", "front", "back", "ceiling")}
    kinds["left"] = ("specular", rho_left)
    kinds[open_side] = ("open", 0.0)
    enc = Enclosure(W_TENT, W_TENT, 2.0, surfaces=_surfaces(**kinds))
    g = Grid("t", 0, 0, W_TENT, W_TENT, 0.6, 0.0254)
    clear_caches()
    zl = compute_scene(TENT, (g,), enc)[0]
    ref_kinds = {s: ("open", 0.0) if k == "open" else ("mirror", r) for s, (k, r) in kinds.items()}
    nb = 8
    ref = _mc(TENT, (W_TENT, W_TENT, 2.0), ref_kinds, (0, 0, W_TENT, W_TENT, 0.6, nb, nb), 600_000, 21)
    ours = binned(zl.ppfd, g, nb, nb)
    assert_allclose(ours.sum(), ref.sum(), rtol=0.01)
    rms = np.sqrt(np.mean((ours - ref) ** 2)) / ref.mean()
    assert rms < 0.02, f"RMS {rms:.2%}"
    # The open side really loses light: the row of bins along it is darker than the opposite row.
    edge = {"front": ours[0], "right": ours[:, -1]}[open_side]
    far_edge = {"front": ours[-1], "right": ours[:, 0]}[open_side]
    assert edge.sum() < far_edge.sum()


def test_budget_accounts_for_every_photon_with_mixed_surfaces():
    # Conservation: zones + floor + obstacles + walls + escaped = emitted, with mirror, matt, dark and open surfaces.
    enc = Enclosure(
        3.0,
        3.6,
        2.4,
        surfaces=_surfaces(
            left=("specular", 0.9),
            right=("diffuse", 0.8),
            front=("open", 0.0),
            back=("absorbing", 0.0),
            ceiling=("diffuse", 0.8),
        ),
    )
    fixtures = (Emitter("p", 1.5, 1.8, 1.6, 500.0, lambertian(), "panel", 0.6, 0.6),)
    g = Grid("bench", 0.4, 0.4, 2.2, 2.8, 0.9, 0.05)
    b = photon_budget(fixtures, (g,), enc)
    assert_allclose(b.accounted_umol_s, b.emitted_umol_s, rtol=1e-9)
    assert b.escaped_umol_s > 0 and b.walls_absorbed_umol_s > 0


@pytest.mark.parametrize("rho", [0.3, 0.7])
def test_closed_matt_box_interreflection_sum(rho):
    # Every surface of a closed box (floor included) matt with one reflectance ρ: each photon lands on some
    # surface, a share ρ goes on, so the flux arriving on all surfaces together is Φ(1 + ρ + ρ² + …) = Φ/(1 − ρ)
    # whatever the geometry (a geometric series over bounces; textbook, from memory).
    from app.engine.radiosity import patch_irradiance, radiosity_operator, wall_patches

    kinds = {s: ("diffuse", rho) for s in ("left", "right", "front", "back", "ceiling", "floor")}
    enc = Enclosure(2.0, 3.0, 2.4, surfaces=tuple((s, *k) for s, k in kinds.items()))
    e = Emitter("p", 0.7, 1.9, 1.8, 1000.0, lambertian(), "panel", 0.6, 0.6)
    p = wall_patches(enc)
    first = patch_irradiance(e, enc)
    assert_allclose((first * p.areas).sum(), 1000.0, rtol=0.01)  # every photon first lands somewhere
    b = radiosity_operator(enc) @ first
    arriving = (b / p.reflectance * p.areas).sum()
    assert_allclose(arriving, 1000.0 / (1 - rho), rtol=0.015)


@pytest.mark.slow
def test_white_room_with_an_open_door_matches_monte_carlo():
    # Three painted walls, a painted ceiling and an open front (a doorway as wide as the wall): the
    # canopy map against photons traced with Lambertian bounces (tests/engine/reference_tracer.py).
    # Targets: zone mean 3 %, reflected part 5 %, 10 cm edge and corner cells 8 %.
    W, L, H = 3.0, 3.6, 2.4
    fixtures = tuple(
        Emitter(f"p{k}", x, y, 1.6, 560.0, lambertian(), "panel", 0.6, 0.6)
        for k, (x, y) in enumerate([(0.9, 1.2), (2.1, 1.2), (0.9, 2.4), (2.1, 2.4)])
    )
    paint = ("diffuse", 0.8)
    enc = Enclosure(
        W, L, H, surfaces=_surfaces(left=paint, right=paint, back=paint, front=("open", 0.0), ceiling=paint)
    )
    g = Grid("floor", 0.0, 0.0, W, L, 0.9, 0.025)
    clear_caches()
    zl = compute_scene(fixtures, (g,), enc)[0]
    ref_kinds = dict(
        left=("matt", 0.8), right=("matt", 0.8), back=("matt", 0.8), front=("open", 0), ceiling=("matt", 0.8)
    )
    # 10 cm cells.
    nx, ny = 30, 36
    ref = _mc(fixtures, (W, L, H), ref_kinds, (0, 0, W, L, 0.9, nx, ny), 1_500_000, 13)
    ours = binned(zl.ppfd, g, nx, ny)
    direct = binned(zl.direct, g, nx, ny)
    assert abs(ours.sum() / ref.sum() - 1) < 0.03
    assert abs((ours - direct).sum() / (ref - direct).sum() - 1) < 0.05
    # Each 10 cm edge cell holds a few thousand photons (about 2 % noise): cells along the walls are
    # compared in threes (30 cm of wall, all at the wall) and the four corner cells one by one.
    ours_ring = [ours[0], ours[-1], ours[:, 0], ours[:, -1]]
    ref_ring = [ref[0], ref[-1], ref[:, 0], ref[:, -1]]
    for o, r in zip(ours_ring, ref_ring, strict=True):
        k = len(o) // 3 * 3
        o3, r3 = o[:k].reshape(-1, 3).sum(axis=1), r[:k].reshape(-1, 3).sum(axis=1)
        assert np.max(np.abs(o3 / r3 - 1)) < 0.08
    corners = [(0, 0), (0, -1), (-1, 0), (-1, -1)]
    assert max(abs(ours[c] / ref[c] - 1) for c in corners) < 0.08


@pytest.mark.slow
def test_matt_wall_light_is_shadowed_under_a_shelf():
    # A white room with a shelf board over one corner of the canopy: the light under it (direct shade and
    # wall light hidden by the board) against Monte Carlo photons that the board stops.
    W, L, H = 3.0, 3.6, 2.4
    fixtures = tuple(
        Emitter(f"p{k}", x, y, 1.8, 560.0, lambertian(), "panel", 0.6, 0.6)
        for k, (x, y) in enumerate([(0.9, 1.2), (2.1, 1.2), (0.9, 2.4), (2.1, 2.4)])
    )
    paint = ("diffuse", 0.8)
    enc = Enclosure(W, L, H, surfaces=_surfaces(left=paint, right=paint, back=paint, front=paint, ceiling=paint))
    shelf = (0.0, 0.0, 1.3, 1.2, 1.5, 1.33)
    g = Grid("floor", 0.0, 0.0, W, L, 0.9, 0.05)
    clear_caches()
    from app.engine.scene import Box

    zl = compute_scene(fixtures, (g,), enc, (Box(*shelf),))[0]
    nx, ny = 10, 12  # 30 cm cells: the shelf covers the 4 × 5 in the front-left corner
    ref_kinds = {s: ("matt", 0.8) for s in ("left", "right", "front", "back", "ceiling")}
    rng = np.random.default_rng(17)
    ref = 0.0
    for f in fixtures:
        n = 800_000
        o = sample_emitter(rng, n, f.x_m, f.y_m, f.z_m, f.shape, f.length_m, f.width_m)
        d = sample_cos_power(rng, n, 1.0)
        t, _ = trace_room(rng, o, d, f.flux_umol_s / n, (W, L, H), ref_kinds, [(0, 0, W, L, 0.9, nx, ny)], (shelf,))
        ref = ref + t[0]
    ours = binned(zl.ppfd, g, nx, ny)
    under = (slice(0, 5), slice(0, 4))
    assert ref[under].mean() < 0.6 * ref[6:, 5:].mean()  # the shelf really shades
    assert abs(ours[under].sum() / ref[under].sum() - 1) < 0.05
    assert abs(ours.sum() / ref.sum() - 1) < 0.03
