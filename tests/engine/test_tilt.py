"""Tilted and upward fixtures against closed forms.

References
----------
- Inverse-square law and Lambert's cosine law: a Lambertian point source of flux Φ has I(γ) = (Φ/π) cos γ,
  γ the angle from its axis, and lights a surface element at distance d with E = I(γ) cos θ_r / d²
  (Rea M.S. (ed.), IESNA Lighting Handbook, 9th ed., 2000, ch. 9; from memory as the textbook result).
- Configuration factor of a differential element parallel to a rectangle, one corner of the rectangle over
  the element: F = (1/2π)[A/√(1+A²) atan(B/√(1+A²)) + B/√(1+B²) atan(A/√(1+B²))], A = a/c, B = b/c
  (Howell J.R., A Catalog of Radiation Heat Transfer Configuration Factors, case B-3; from memory).
- A Lambertian surface of exitance M lights an element at r with dE = M cos θ₁ cos θ₂ dA / (π r²).
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.aim import aim_axis
from app.engine.compute import clear_caches, compute_scene
from app.engine.direct import irradiance_from_nodes
from app.engine.distributions import lambertian
from app.engine.scene import Emitter, Enclosure, Grid

PPF = 500.0  # µmol/s


def lambert_tilted(points, source, tilt_deg, aim_deg, flux=PPF):
    """E = (Φ/π) max(cos γ, 0) cos θ_r / d² on level, upward points: the closed form above."""
    v = points - source
    d = np.linalg.norm(v, axis=-1)
    cos_gamma = np.maximum(v @ aim_axis(tilt_deg, aim_deg) / d, 0.0)
    cos_r = np.maximum(-v[..., 2] / d, 0.0)
    return flux / np.pi * cos_gamma * cos_r / d**2


def grid_points(g: Grid) -> np.ndarray:
    gx, gy = np.meshgrid(g.x_m, g.y_m)
    return np.stack([gx, gy, np.full(gx.shape, g.z_m)], axis=-1)


@pytest.mark.parametrize("tilt", [30.0, 60.0, 90.0])
@pytest.mark.parametrize("aim", [0.0, 135.0])
def test_tilted_lambertian_point_on_a_level_plane(tilt, aim):
    src = np.array([3.0, 2.5, 1.2])
    g = Grid("g", 0.0, 0.0, 6.0, 5.0, 0.0, 0.1)
    pts = grid_points(g)
    got = irradiance_from_nodes(pts.reshape(-1, 3), src[None, :], np.array([PPF]), lambertian(), 25.0,
                                tilt_deg=tilt, aim_deg=aim).reshape(pts.shape[:2])  # fmt: skip
    ref = lambert_tilted(pts, src, tilt, aim)
    assert_allclose(got, ref, rtol=1e-9, atol=1e-12)
    # Through the whole chain (footprint stamp, cull window): the same map, within the cull tolerance.
    e = Emitter("F", *src, PPF, lambertian(), rotation_deg=25.0, tilt_deg=tilt, aim_deg=aim)
    ppfd = compute_scene((e,), (g,), Enclosure(6.0, 5.0, 3.0))[0].ppfd
    assert_allclose(ppfd, ref, rtol=2e-5, atol=1e-4 * ref.max())
    # It leans toward the aim: the brightest point lies on the aim's side of the plumb point.
    j, i = np.unravel_index(np.argmax(ppfd), ppfd.shape)
    lean = np.array([np.cos(np.radians(aim)), np.sin(np.radians(aim))])
    assert (np.array([g.x_m[i], g.y_m[j]]) - src[:2]) @ lean > 0


def test_level_fixtures_ignore_the_aim_and_share_footprints():
    g = Grid("g", 0.0, 0.0, 4.0, 4.0, 0.0, 0.1)
    a = Emitter("A", 2.0, 2.0, 1.0, PPF, lambertian(), tilt_deg=0.0, aim_deg=0.0)
    b = Emitter("B", 2.0, 2.0, 1.0, PPF, lambertian(), tilt_deg=1e-9, aim_deg=200.0)
    enc = Enclosure(4.0, 4.0, 3.0)
    assert_allclose(compute_scene((a,), (g,), enc)[0].ppfd, compute_scene((b,), (g,), enc)[0].ppfd, rtol=1e-6)


def test_footprint_cache_keeps_aims_apart():
    """Two tilted fixtures alike but for the aim, at the same place in a grid cell: different maps."""
    clear_caches()
    g = Grid("g", 0.0, 0.0, 6.0, 4.0, 0.0, 0.1)
    enc = Enclosure(6.0, 4.0, 3.0)
    east = Emitter("E", 1.5, 2.0, 1.0, PPF, lambertian(), tilt_deg=45.0, aim_deg=0.0)
    west = Emitter("W", 4.5, 2.0, 1.0, PPF, lambertian(), tilt_deg=45.0, aim_deg=180.0)
    ppfd = compute_scene((east, west), (g,), enc)[0].ppfd
    pts = grid_points(g)
    ref = lambert_tilted(pts, np.array([1.5, 2.0, 1.0]), 45, 0) + lambert_tilted(
        pts, np.array([4.5, 2.0, 1.0]), 45, 180
    )
    assert_allclose(ppfd, ref, rtol=2e-5, atol=1e-4 * ref.max())


def test_sideways_bar_lights_the_canopy_beside_it():
    """A 1.2 m bar along x, turned to face +y (tilt 90°, aim 90°), 0.8 m above a canopy that starts at its
    plumb line: the reference sums 2,400 Lambertian point elements along the bar (inverse-square and cosine
    laws), each carrying Φ/2400."""
    src = np.array([2.0, 1.0, 0.8])
    g = Grid("g", 0.5, 1.0, 3.0, 2.0, 0.0, 0.1)
    e = Emitter("B", *src, PPF, lambertian(), "bar", 1.2, 0.04, tilt_deg=90.0, aim_deg=90.0)
    ppfd = compute_scene((e,), (g,), Enclosure(4.0, 4.0, 2.5))[0].ppfd
    pts = grid_points(g)
    us = (np.arange(2400) + 0.5) / 2400 * 1.2 - 0.6
    ref = sum(lambert_tilted(pts, src + [u, 0.0, 0.0], 90.0, 90.0, PPF / us.size) for u in us)
    assert_allclose(ppfd, ref, rtol=5e-3, atol=1e-3 * ref.max())
    assert ppfd[:, :].max() > 0 and np.all(ppfd[0] >= 0)


def test_sideways_fixture_sends_nothing_behind_it():
    """Aimed level toward +x: a Lambertian sends no light into the half-space behind it (cos γ < 0)."""
    g = Grid("g", 0.0, 0.0, 4.0, 2.0, 0.0, 0.1)
    e = Emitter("F", 2.0, 1.0, 1.0, PPF, lambertian(), tilt_deg=90.0, aim_deg=0.0)
    ppfd = compute_scene((e,), (g,), Enclosure(4.0, 2.0, 2.5))[0].ppfd
    behind = g.x_m < 2.0 - 1e-9
    assert np.all(ppfd[:, behind] == 0.0) and ppfd[:, ~behind].max() > 0


def _ceiling_to_points(points, exitance, W, L, H, n=400):
    """∫ M(q) cos θ₁ cos θ₂ / (π r²) dA over the ceiling 0..W × 0..L at H, midpoint rule on n × n cells."""
    xs, ys = (np.arange(n) + 0.5) * W / n, (np.arange(n) + 0.5) * L / n
    qx, qy = np.meshgrid(xs, ys)
    m = exitance(qx, qy) * (W / n) * (L / n)
    out = []
    for p in points:
        h = H - p[2]
        r2 = (qx - p[0]) ** 2 + (qy - p[1]) ** 2 + h * h
        out.append(np.sum(m * h * h / (np.pi * r2 * r2)))
    return np.array(out)


def test_ceiling_integral_matches_the_configuration_factor():
    """The reference integrator itself: a uniform ceiling of exitance 1 seen from the centre of the floor of a
    4 × 4 × 2 m room gives 4 F(A = B = 1) (Howell B-3, four corners meeting over the point)."""
    got = _ceiling_to_points(np.array([[2.0, 2.0, 0.0]]), lambda x, y: np.ones_like(x), 4.0, 4.0, 2.0)[0]
    a = b = 1.0
    f = (a / np.hypot(1, a) * np.arctan(b / np.hypot(1, a)) + b / np.hypot(1, b) * np.arctan(a / np.hypot(1, b))) / (
        2 * np.pi
    )
    assert_allclose(got, 4 * f, rtol=1e-4)


def test_upward_fixture_lights_the_canopy_only_through_a_matt_ceiling():
    """An upward Lambertian point (tilt 180°) 1 m under a matt ceiling (ρ = 0.8; walls and floor dark): no direct
    light on the canopy below; the ceiling's irradiance is E_c = Φ h² / (π d⁴) (Lambert, inverse-square), its
    exitance ρ E_c, and the canopy gets ∫ ρ E_c cos θ₁ cos θ₂ / (π r²) dA (the ceiling sees no other lit surface)."""
    W, L, H, rho = 4.0, 4.0, 2.5, 0.8
    src = np.array([2.0, 2.0, 1.5])
    kinds = tuple((s, "absorbing", 0.0) for s in ("left", "right", "front", "back")) + (("ceiling", "diffuse", rho),)
    enc = Enclosure(W, L, H, surfaces=kinds)
    g = Grid("g", 0.0, 0.0, W, L, 0.5, 0.5)
    e = Emitter("U", *src, PPF, lambertian(), tilt_deg=180.0)
    zone = compute_scene((e,), (g,), enc)[0]
    assert np.all(zone.direct == 0.0)
    hc = H - src[2]

    def exitance(x, y):
        d2 = (x - src[0]) ** 2 + (y - src[1]) ** 2 + hc * hc
        return rho * PPF * hc * hc / (np.pi * d2 * d2)

    pts = grid_points(g).reshape(-1, 3)
    ref = _ceiling_to_points(pts, exitance, W, L, H).reshape(g.ny, g.nx)
    assert zone.reflected.min() > 0
    assert_allclose(zone.reflected, ref, rtol=0.015)  # measured: 0.84 % at worst (12 x 12 ceiling patches)


def test_upward_fixture_under_a_dark_ceiling_gives_nothing():
    enc = Enclosure(4.0, 4.0, 2.5)  # absorbing everywhere
    g = Grid("g", 0.0, 0.0, 4.0, 4.0, 0.5, 0.5)
    zone = compute_scene((Emitter("U", 2.0, 2.0, 1.5, PPF, lambertian(), tilt_deg=180.0),), (g,), enc)[0]
    assert np.all(zone.ppfd == 0.0)


def test_mirror_image_of_a_tilted_fixture_is_mirrored():
    """A right-hand mirror wall (x = W, ρ = 0.9, the rest open): by the method of images the canopy gets the real
    source's light at (x, y) plus ρ × its light at the mirrored point (2W − x, y), both by the closed form, for a
    fixture tilted 50° toward the mirror (aim 20°)."""
    W, L, rho = 3.0, 3.0, 0.9
    kinds = (("left", "open", 0.0), ("right", "specular", rho), ("front", "open", 0.0), ("back", "open", 0.0))
    enc = Enclosure(W, L, 3.0, surfaces=(*kinds, ("ceiling", "open", 0.0)))
    src = np.array([2.0, 1.2, 1.0])
    g = Grid("g", 0.0, 0.0, W, L, 0.0, 0.1)
    e = Emitter("F", *src, PPF, lambertian(), tilt_deg=50.0, aim_deg=20.0)
    ppfd = compute_scene((e,), (g,), enc)[0].ppfd
    pts = grid_points(g)
    mirrored = pts.copy()
    mirrored[..., 0] = 2 * W - pts[..., 0]
    ref = lambert_tilted(pts, src, 50.0, 20.0) + rho * lambert_tilted(mirrored, src, 50.0, 20.0)
    assert_allclose(ppfd, ref, rtol=1e-3, atol=1e-4 * ref.max())


@pytest.mark.parametrize("tilt, aim", [(40.0, 30.0), (90.0, 0.0), (180.0, 0.0), ("isotropic table", 0.0)])
def test_budget_of_tilted_fixtures_agrees_with_the_maps(tent_doc, tilt, aim):
    """The ray tally (app/engine/budget.py) follows each ray from the tilted fixture, independently of the maps:
    the canopy's share of the photons matches Σ PPFD × cell area, within 1 % in the mirror tent (walls and
    ceiling: the upward light comes back from the ceiling images) and 6 % with a matt ceiling (radiosity on
    coarse patches), the tolerances of tests/engine/test_budget.py."""
    import json

    from app.engine.budget import photon_budget
    from app.room.roomfile import parse_room_file
    from app.service.scene_builder import build_scene

    if tilt == "isotropic table":  # hung level; half its light goes up to the mirror ceiling and comes back
        iso = {"kind": "tabulated", "polar_deg": [0, 90, 180], "azimuth_deg": [0], "relative_intensity": [[1, 1, 1]]}
        for t in tent_doc["room"]["fixture_types"]:
            t["beam"] = iso
        tilt = 0.0
    for f in tent_doc["room"]["fixtures"]:
        f.update(tilt_deg=tilt, aim_deg=aim)
    if tilt == 180.0:
        # Dark walls: the maps do not follow matt light sent on by way of a mirror wall (README), the tally does.
        tent_doc["room"]["wall_finish"] = {"kind": "absorbing", "reflectance": 0.0}
        tent_doc["room"]["surface_finishes"] = {"ceiling": {"kind": "diffuse", "reflectance": 0.8}}
    scene = build_scene(parse_room_file(json.dumps(tent_doc)).room)
    b = photon_budget(scene.emitters, scene.grids, scene.enclosure, scene.boxes)
    for zl in compute_scene(scene.emitters, scene.grids, scene.enclosure, scene.boxes):
        mapped = float((zl.ppfd * zl.grid.cell_area_m2).sum())
        assert mapped > 0
        assert_allclose(mapped, b.zones_umol_s[zl.grid.id], rtol=0.01 if tilt < 180 else 0.06)


def test_upward_fixture_under_a_mirror_ceiling_is_its_image():
    """Method of images: an upward Lambertian point at z under a mirror ceiling at H (ρ = 0.9, walls open) lights
    the canopy as ρ × a downward Lambertian point at 2H − z (inverse-square and cosine laws)."""
    W = L = 3.0
    H, rho = 2.4, 0.9
    kinds = tuple((s, "open", 0.0) for s in ("left", "right", "front", "back")) + (("ceiling", "specular", rho),)
    enc = Enclosure(W, L, H, surfaces=kinds)
    g = Grid("g", 0.0, 0.0, W, L, 0.3, 0.1)
    e = Emitter("U", 1.2, 1.6, 1.5, PPF, lambertian(), tilt_deg=180.0, aim_deg=75.0)
    zone = compute_scene((e,), (g,), enc)[0]
    assert np.all(zone.direct == 0.0)
    ref = rho * lambert_tilted(grid_points(g), np.array([1.2, 1.6, 2 * H - 1.5]), 0.0, 0.0)
    assert_allclose(zone.reflected, ref, rtol=0.02)  # measured 1.5 %: the images are bilinear on a 9 x 9 grid


def _segment_hits_box(q, p, lo, hi):
    """Slab test (Kay & Kajiya 1986) for segments q → p (broadcast (…, 3)) against one box, written here alone."""
    d = p - q
    with np.errstate(divide="ignore", invalid="ignore"):
        t1, t2 = (lo - q) / d, (hi - q) / d
    t1 = np.where(np.isnan(t1), -np.inf, t1)
    t2 = np.where(np.isnan(t2), np.inf, t2)
    tmin = np.max(np.minimum(t1, t2), axis=-1)
    tmax = np.min(np.maximum(t1, t2), axis=-1)
    return (tmax > tmin) & (tmax > 1e-9) & (tmin < 1 - 1e-9)


@pytest.mark.parametrize("with_box", [False, True])
def test_tilted_panel_with_and_without_a_shadow(with_box):
    """A 0.6 × 0.4 m Lambertian panel turned 30° and tilted 60° toward aim 200°, 0.9 m over a canopy, with a box
    beside its plumb point: the reference cuts the tilted face into 60 × 40 elements, each a Lambertian point of
    Φ/2400 (inverse-square and cosine laws), hidden where the segment to the point crosses the box."""
    from app.engine.aim import aim_matrix
    from app.engine.scene import Box

    c = np.array([2.0, 2.0, 0.9])
    tilt, aim, rot = 60.0, 200.0, 30.0
    box = Box(1.0, 1.5, 0.0, 1.3, 2.3, 0.5)
    boxes = (box,) if with_box else ()
    g = Grid("g", 0.0, 0.0, 4.0, 4.0, 0.0, 0.1)
    e = Emitter("P", *c, PPF, lambertian(), "panel", 0.6, 0.4, rotation_deg=rot, tilt_deg=tilt, aim_deg=aim)
    ppfd = compute_scene((e,), (g,), Enclosure(4.0, 4.0, 2.5), boxes)[0].ppfd
    m = aim_matrix(rot, tilt, aim)
    u = (np.arange(60) + 0.5) / 60 * 0.6 - 0.3
    v = (np.arange(40) + 0.5) / 40 * 0.4 - 0.2
    uu, vv = np.meshgrid(u, v, indexing="ij")
    nodes = c + uu.reshape(-1, 1) * m[:, 0] + vv.reshape(-1, 1) * m[:, 1]
    pts = grid_points(g).reshape(-1, 3)
    ref = np.zeros(pts.shape[0])
    lo, hi = np.array([box.x0_m, box.y0_m, box.z0_m]), np.array([box.x1_m, box.y1_m, box.z1_m])
    for q in nodes:
        k = lambert_tilted(pts, q, tilt, aim, PPF / nodes.shape[0])
        if with_box:
            k = np.where(_segment_hits_box(q[None, :], pts, lo, hi), 0.0, k)
        ref += k
    ref = ref.reshape(ppfd.shape)
    if with_box:
        assert ref.min() == 0.0 and np.any((ref > 0) & (ref < 0.5 * ref.max()))  # a shadow with a penumbra
    # Elements of 1 cm against the engine's Gauss-Legendre cells: a penumbra's edge is where they differ most.
    err = np.abs(ppfd - ref) / ref.max()
    # Measured: 0.09 % of the peak at worst in open air, 0.66 % at the shadow's edge (RMS 0.01 % and 0.04 %).
    assert err.max() < (0.01 if with_box else 2e-3), err.max()
    assert np.sqrt(np.mean(err**2)) < (2e-3 if with_box else 5e-4)


@pytest.mark.parametrize("tilt, aim", [(30.0, 0.0), (50.0, 120.0)])
def test_tilted_lambertian_panel_matches_the_contour_formula(tilt, aim):
    """A 0.6 × 0.4 m Lambertian panel tilted toward one side, seen from level points on the floor: by
    reciprocity E = M · F(dA → panel), M = Φ / area, F by Lambert's contour formula for the element and the
    tilted rectangle (Siegel & Howell, Thermal Radiation Heat Transfer, element to polygon; the same formula
    gives Howell's element-to-tilted-rectangle cases)."""
    from app.engine.aim import aim_matrix
    from app.engine.direct import direct_patch
    from app.engine.formfactors import element_to_polygon

    length, width, z = 0.6, 0.4, 1.0
    e = Emitter("p", 0.0, 0.0, z, PPF, lambertian(), "panel", length, width, tilt_deg=tilt, aim_deg=aim)
    g = Grid("g", -1.0, -1.0, 2.0, 2.0, 0.0, 0.1)
    out = np.zeros((g.ny, g.nx))
    direct_patch(e, g, dtype=np.float64).add_into(out)
    m = aim_matrix(0.0, tilt, aim)
    u, v = m[:, 0] * length / 2, m[:, 1] * width / 2
    c = np.array([0.0, 0.0, z])
    corners = np.array([[c - u - v, c + u - v, c + u + v, c - u + v]])
    pts = grid_points(g).reshape(-1, 3)
    face = aim_axis(tilt, aim)
    # Points the whole face looks at (in front of its plane), as the formula asks.
    front = np.all((pts[:, None, :] - corners[0][None]) @ face > 1e-9, axis=1)
    ref = PPF / (length * width) * element_to_polygon(pts[front], (0.0, 0.0, 1.0), corners)[:, 0]
    got = out.reshape(-1)[front]
    assert front.sum() > 200
    assert_allclose(got, ref, rtol=2e-3, atol=1e-3 * ref.max())
