"""Walls: mirror images against flux conservation and a Monte Carlo reference; radiosity against the ray tally."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.budget import photon_budget
from app.engine.compute import clear_caches, compute_scene
from app.engine.distributions import cosine_power, lambertian
from app.engine.mirror_images import _axis_weights, image_list
from app.engine.scene import Box, Emitter, Enclosure, Grid
from tests.engine.reference_tracer import sample_cos_power, sample_emitter, trace


def _overlap(points, start, extent, nbins):
    """(nbins, npoints) length of each point's cell inside each bin."""
    mid = 0.5 * (points[1:] + points[:-1])
    edges = np.concatenate([[start], mid, [start + extent]])
    bins = np.linspace(start, start + extent, nbins + 1)
    lo = np.maximum(edges[None, :-1], bins[:-1, None])
    hi = np.minimum(edges[None, 1:], bins[1:, None])
    return np.maximum(hi - lo, 0.0)


def binned(ppfd, grid, nx, ny):
    """Flux per bin of the engine's map (each point's cell split between the bins it overlaps)."""
    bx = _overlap(grid.x_m, grid.x0_m, grid.width_m, nx)
    by = _overlap(grid.y_m, grid.y0_m, grid.length_m, ny)
    return by @ ppfd @ bx.T


def test_image_weights_follow_the_walls_crossed():
    # Image i > 0 crosses the high wall first, then alternates: ρ_hi^ceil(i/2) ρ_lo^floor(i/2).
    w = _axis_weights(np.array([-3, -2, -1, 0, 1, 2, 3]), 0.5, 0.8)
    assert_allclose(w, [0.5**2 * 0.8, 0.5 * 0.8, 0.5, 1, 0.8, 0.8 * 0.5, 0.8**2 * 0.5])


def test_open_sides_have_no_images():
    e = Emitter("p", 0.5, 0.5, 1.0, 100.0, lambertian())
    g = Grid("g", 0, 0, 1, 1, 0, 0.1)
    enc = Enclosure(1, 1, 2, "specular", 0.95, frozenset({"left", "right", "front", "back"}))
    assert image_list(e, g, enc) == []


def test_perfect_mirror_box_delivers_all_flux_to_the_floor():
    # Flux conservation: vertical perfect mirrors around a downward emitter send every photon to the floor.
    clear_caches()
    enc = Enclosure(1.2192, 1.2192, 2.0, "specular", 1.0)
    e = Emitter("a", 0.4, 0.7, 0.5, 800.0, lambertian(), "bar_array", 0.6, 0.55, bar_count=4, bar_width_m=0.03)
    g = Grid("floor", 0, 0, 1.2192, 1.2192, 0.0, 0.0254)
    zl = compute_scene((e,), (g,), enc)[0]
    total = float((zl.ppfd * g.cell_area_m2).sum())
    assert_allclose(total, 800.0, rtol=0.01)


@pytest.mark.slow
def test_reflective_tent_matches_monte_carlo_reference():
    # Independent brute-force reference: Monte Carlo photons with mirror bounces (tests/engine/reference_tracer.py).
    clear_caches()
    W = 1.2192
    rho = 0.95
    enc = Enclosure(W, W, 2.0, "specular", rho)
    fixtures = [
        Emitter("a", 0.32, 0.61, 1.05, 650.0, lambertian(), "bar_array", 0.6, 0.55, 4, 0.03, rotation_deg=90),
        Emitter("b", 0.90, 0.61, 1.05, 650.0, cosine_power(2.0), "panel", 0.5, 0.4, rotation_deg=30),
    ]
    g = Grid("tent", 0, 0, W, W, 0.6, 0.0254)
    zl = compute_scene(tuple(fixtures), (g,), enc)[0]
    nx = ny = 8
    rng = np.random.default_rng(7)
    tally = np.zeros((ny, nx))
    n = 1_000_000
    for f in fixtures:
        o = sample_emitter(
            rng, n, f.x_m, f.y_m, f.z_m, f.shape, f.length_m, f.width_m, f.bar_count, f.bar_width_m, f.rotation_deg
        )
        d = sample_cos_power(rng, n, f.distribution.exponent)
        tally += trace(
            o,
            d,
            f.flux_umol_s / n,
            W,
            W,
            dict.fromkeys(("left", "right", "front", "back"), rho),
            (0, 0, W, W, 0.6, nx, ny),
        )
    ours = binned(zl.ppfd, g, nx, ny)
    rms = np.sqrt(np.mean((ours - tally) ** 2)) / tally.mean()
    assert rms < 0.02, f"RMS difference {rms:.3%}"


@pytest.mark.slow
def test_rack_with_shadowing_shelf_matches_monte_carlo_reference():
    # An open rack: a fixture over a tier, and a half-width shelf between them that shades part of it.
    clear_caches()
    enc = Enclosure(0.6, 1.2, 2.0, "absorbing", 0.0, frozenset({"left", "right", "front", "back"}))
    f = Emitter("s", 0.3, 0.6, 0.9, 200.0, cosine_power(1.5), "bar", 1.0, 0.03, rotation_deg=90)
    shelf = (0.0, 0.0, 0.55, 0.35, 0.6, 0.58)  # x0, y0, z0, x1, y1, z1
    # A 1 cm grid: at 1 inch, sampling the sharp shadow edge alone costs about 2.7 % RMS in these bins.
    g = Grid("tier", 0, 0, 0.6, 1.2, 0.3, 0.01)
    zl = compute_scene((f,), (g,), enc, (Box(*shelf),))[0]
    nx, ny = 6, 12
    rng = np.random.default_rng(11)
    n = 2_000_000
    o = sample_emitter(rng, n, f.x_m, f.y_m, f.z_m, "bar", f.length_m, f.width_m, rotation_deg=90)
    d = sample_cos_power(rng, n, f.distribution.exponent)
    tally = trace(
        o,
        d,
        f.flux_umol_s / n,
        0.6,
        1.2,
        dict.fromkeys(("left", "right", "front", "back"), 0.0),
        (0, 0, 0.6, 1.2, 0.3, nx, ny),
        boxes=(shelf,),
    )
    ours = binned(zl.ppfd, g, nx, ny)
    assert tally[0, 0] < 0.2 * tally[-1, -1]  # the shelf really shades the front-left corner
    rms = np.sqrt(np.mean((ours - tally) ** 2)) / tally.mean()
    assert rms < 0.02, f"RMS difference {rms:.3%}"


@pytest.mark.parametrize(
    "finish, rho, tol", [("specular", 0.95, 0.01), ("absorbing", 0.0, 0.01), ("diffuse", 0.8, 0.05)]
)
def test_map_integral_agrees_with_the_ray_tally(finish, rho, tol):
    # Two independent computations of the photons landing on the canopy: the integrated PPFD map,
    # and the ray tally of app.engine.budget. Matt walls use coarse radiosity patches: 5 % (stated in README).
    clear_caches()
    enc = Enclosure(3.0, 3.6, 2.4, finish, rho)
    fixtures = tuple(
        Emitter(f"p{k}", x, 1.8, 1.6, 560.0, lambertian(), "panel", 0.6, 0.6) for k, x in enumerate((0.9, 2.1))
    )
    g = Grid("bench", 0.4, 0.4, 2.2, 2.8, 0.9, 0.0254)
    zl = compute_scene(fixtures, (g,), enc)[0]
    b = photon_budget(fixtures, (g,), enc)
    mapped = float((zl.ppfd * g.cell_area_m2).sum())
    assert_allclose(mapped, b.zones_umol_s["bench"], rtol=tol)


def _mc_map(fixtures, W, L, rho_walls, canopy, boxes, n, seed):
    rng = np.random.default_rng(seed)
    tally = 0.0
    for f in fixtures:
        o = sample_emitter(
            rng, n, f.x_m, f.y_m, f.z_m, f.shape, f.length_m, f.width_m, f.bar_count, f.bar_width_m, f.rotation_deg
        )
        d = sample_cos_power(rng, n, f.distribution.exponent)
        tally = tally + trace(o, d, f.flux_umol_s / n, W, L, rho_walls, canopy, boxes=boxes)
    return tally


@pytest.mark.slow
@pytest.mark.parametrize("fan", [(0.03, 0.03, 0.75, 0.18, 0.18, 0.9), (0.5, 0.5, 0.7, 0.65, 0.65, 0.85)])
def test_mirror_tent_with_a_fan_matches_monte_carlo_reference(fan):
    # A 15 cm box (a clip fan) in a reflective-film tent: direct and mirrored light shadowed by the box
    # and its mirror copies, against photons traced with real bounces (tests/engine/reference_tracer.py).
    clear_caches()
    W, rho = 1.2192, 0.95
    enc = Enclosure(W, W, 2.0, "specular", rho)
    fixtures = (
        Emitter("a", 0.3148, 0.6096, 1.05, 420.0, lambertian(), "bar_array", 0.6, 0.55, 4, 0.03, rotation_deg=90),
        Emitter("b", 0.9044, 0.6096, 1.05, 420.0, lambertian(), "bar_array", 0.6, 0.55, 4, 0.03, rotation_deg=90),
    )
    g = Grid("tent", 0, 0, W, W, 0.6, 0.0254)
    zl = compute_scene(fixtures, (g,), enc, (Box(*fan),))[0]
    nx = ny = 12
    tally = _mc_map(
        fixtures,
        W,
        W,
        dict.fromkeys(("left", "right", "front", "back"), rho),
        (0, 0, W, W, 0.6, nx, ny),
        (fan,),
        1_500_000,
        5,
    )
    ours = binned(zl.ppfd, g, nx, ny)
    rms = np.sqrt(np.mean((ours - tally) ** 2)) / tally.mean()
    assert_allclose(ours.sum(), tally.sum(), rtol=0.01)
    assert rms < 0.03, f"RMS difference {rms:.3%}"
