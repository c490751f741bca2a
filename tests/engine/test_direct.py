"""Direct irradiance against closed forms and SciPy: inverse-square and cosine laws, configuration factors."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate

from app.engine.direct import blocked, cull_radius_m, direct_patch, irradiance_from_nodes
from app.engine.distributions import cosine_power, intensity_per_flux, lambertian
from app.engine.scene import Box, Emitter, Grid


def full_map(emitter, grid, boxes=()):
    out = np.zeros((grid.ny, grid.nx))
    p = direct_patch(emitter, grid, boxes, dtype=np.float64)
    if p is not None:
        p.add_into(out)
    return out


@pytest.mark.parametrize("h, r", [(1.0, 0.0), (0.5, 0.3), (2.0, 3.0), (0.3, 2.5)])
def test_point_source_inverse_square_and_cosine_law_exact(h, r):
    # E = I(θ) cos θ / d² = I(θ) h / (h² + r²)^1.5 (inverse-square and cosine laws).
    dist = cosine_power(3.0)
    flux = 500.0
    e = irradiance_from_nodes(np.array([[r, 0, 0]]), np.array([[0, 0, h]]), [flux], dist)
    d2 = h * h + r * r
    cos_t = h / np.sqrt(d2)
    expected = flux * intensity_per_flux(dist, cos_t) * cos_t / d2
    assert_allclose(e, [expected], rtol=1e-12)


def howell_b3(a, b, c):
    """Differential element to a parallel rectangle a × b at distance c, normal through a corner.

    Howell J.R., A Catalog of Radiation Heat Transfer Configuration Factors, case B-3.
    """
    A, B = a / c, b / c
    return (
        A / np.sqrt(1 + A * A) * np.arctan(B / np.sqrt(1 + A * A))
        + B / np.sqrt(1 + B * B) * np.arctan(A / np.sqrt(1 + B * B))
    ) / (2 * np.pi)


def rect_factor(x0, x1, y0, y1, c):
    """Any rectangle by adding and subtracting corner rectangles."""

    def corner(x, y):
        return np.sign(x) * np.sign(y) * howell_b3(np.abs(x), np.abs(y), c)

    return corner(x1, y1) - corner(x0, y1) - corner(x1, y0) + corner(x0, y0)


def test_howell_check_value():
    # Catalogue check value (shared/REFERENCES.md): a = b = c = 1 gives 0.138531606.
    assert_allclose(howell_b3(1.0, 1.0, 1.0), 0.138531606, rtol=1e-8)


@pytest.mark.parametrize("h", [0.05, 0.15, 0.45, 1.2])
@pytest.mark.parametrize("rotation", [0.0, 30.0])
def test_lambertian_panel_matches_configuration_factor(h, rotation):
    # A Lambertian panel of exitance M gives E = M·F (Howell B-3), within 0.5 % everywhere.
    L, W, flux = 0.6, 0.3, 420.0
    e = Emitter("p", 0.0, 0.0, h, flux, lambertian(), "panel", L, W, rotation_deg=rotation)
    g = Grid("g", -0.7, -0.7, 1.4, 1.4, 0.0, 0.02)
    got = full_map(e, g)
    X, Y = np.meshgrid(g.x_m, g.y_m)
    a = np.radians(rotation)
    u = X * np.cos(a) + Y * np.sin(a)  # receiver points in the panel's own frame
    v = -X * np.sin(a) + Y * np.cos(a)
    ref = flux / (L * W) * rect_factor(-L / 2 - u, L / 2 - u, -W / 2 - v, W / 2 - v, h)
    assert np.max(np.abs(got - ref) / ref.max()) < 0.005
    centre = ref > 0.05 * ref.max()
    assert np.max(np.abs(got - ref)[centre] / ref[centre]) < 0.005


@pytest.mark.parametrize("h, x", [(0.1, 0.0), (0.3, 0.4), (0.2, 0.9)])
def test_bar_matches_scipy_line_integral(h, x):
    # A cos^n bar of length L: E = ∫ (Φ/L) I(θ) cos θ / d² dl, by scipy.integrate.quad.
    L, flux, n = 1.2, 100.0, 1.9
    dist = cosine_power(n)
    e = Emitter("b", 0.0, 0.0, h, flux, dist, "bar", L, 0.001)
    g = Grid("g", x - 0.001, -0.001, 0.002, 0.002, 0.0, 0.001)
    got = full_map(e, g)[1, 1]

    def integrand(s):
        d2 = (x - s) ** 2 + h * h
        cos_t = h / np.sqrt(d2)
        return flux / L * float(intensity_per_flux(dist, cos_t)) * cos_t / d2

    ref, _ = integrate.quad(integrand, -L / 2, L / 2, epsabs=1e-12, limit=200)
    assert_allclose(got, ref, rtol=0.005)


def test_infinite_plane_captures_all_flux():
    # A downward emitter above an (effectively) infinite plane puts all its flux on it:
    # integrate the map over a square 60 hanging heights wide (Lambertian tail beyond: ≈ (h/r)² ≈ 0.1 %).
    h, flux = 0.2, 1000.0
    e = Emitter("p", 0.0, 0.0, h, flux, lambertian(), "panel", 0.3, 0.3)
    g = Grid("g", -6.0, -6.0, 12.0, 12.0, 0.0, 0.01)
    got = full_map(e, g)
    total = float((got * g.cell_area_m2).sum())
    assert_allclose(total, flux, rtol=0.01)


def test_rotation_turns_the_footprint():
    e0 = Emitter("b", 0.5, 0.5, 0.3, 100.0, lambertian(), "bar", 1.0, 0.03)
    e90 = Emitter("b", 0.5, 0.5, 0.3, 100.0, lambertian(), "bar", 1.0, 0.03, rotation_deg=90)
    g = Grid("g", 0.0, 0.0, 1.0, 1.0, 0.0, 0.02)
    m0, m90 = full_map(e0, g), full_map(e90, g)
    assert_allclose(m90, m0.T, rtol=1e-4, atol=1e-6)  # turning by 90° transposes a square map
    assert m0[25, 0] > 2 * m0[0, 25]  # unrotated, the bar runs along x


def test_box_casts_a_shadow():
    e = Emitter("p", 0.0, 0.0, 1.0, 100.0, lambertian())
    shelf = Box(-0.2, -0.2, 0.4, 0.2, 0.2, 0.45)
    pts = np.array([[0.0, 0.0, 0.0], [0.05, 0.05, 0.0], [0.6, 0.0, 0.0]])
    b = blocked(np.array([[0.0, 0.0, 1.0]]), pts, (shelf,))
    assert b.tolist() == [[True, True, False]]
    # A canopy lying on the shelf top is lit: touching a face does not block.
    top = blocked(np.array([[0.0, 0.0, 1.0]]), np.array([[0.0, 0.0, 0.45]]), (shelf,))
    assert not top.any()
    g = Grid("g", -0.5, -0.5, 1.0, 1.0, 0.0, 0.05)
    assert full_map(e, g, (shelf,))[10, 10] == 0.0


def test_cull_radius_bounds_the_lost_contribution():
    # Beyond the cull radius the point-source irradiance is below the stated share of its peak.
    dist, h = lambertian(), 0.4
    r = cull_radius_m(dist, h)
    e_peak = float(intensity_per_flux(dist, 1.0)) / h**2
    d2 = r * r + h * h
    e_edge = float(intensity_per_flux(dist, h / np.sqrt(d2))) * h / d2**1.5
    assert_allclose(e_edge / e_peak, 1e-5, rtol=1e-6)


def test_stamps_are_shared_and_shift_exactly():
    # Two identical fixtures one whole grid step apart give the same footprint shifted by one cell.
    g = Grid("g", 0.0, 0.0, 2.0, 2.0, 0.0, 0.05)
    a = Emitter("a", 0.8, 1.0, 0.5, 100.0, lambertian(), "panel", 0.3, 0.3)
    b = Emitter("b", 0.85, 1.0, 0.5, 100.0, lambertian(), "panel", 0.3, 0.3)
    ma, mb = full_map(a, g), full_map(b, g)
    assert_allclose(mb[:, 1:], ma[:, :-1], rtol=1e-5, atol=1e-7)


def test_narrow_beam_close_to_the_plane_does_not_overflow():
    """cosⁿ with a large n a few mm above the points: E = (n+1)/(2π) Φ cos^(n+1)/d² stays finite (Lambert,
    inverse-square law); the overflow once surfaced as a server error from the map fit (found by schemathesis)."""
    import warnings

    from app.engine.direct import irradiance_from_nodes
    from app.engine.distributions import cosine_power

    n, h = 400.0, 1e-3
    pts = np.array([[0.0, 0.0, 0.0], [0.0005, 0.0, 0.0]])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        e = irradiance_from_nodes(pts, np.array([[0.0, 0.0, h]]), np.array([1.0]), cosine_power(n), 0.0)
    d = np.hypot(pts[:, 0], h)
    assert_allclose(e, (n + 1) / (2 * np.pi) * (h / d) ** (n + 1) / d**2, rtol=1e-9)


def _segment_hits_box(q, p, box):
    """Independent slab test (Kay & Kajiya 1986): does the open segment q→p pass through the box's inside?"""
    lo, hi = np.array(box[:3]), np.array(box[3:])
    d = p - q
    t0, t1 = 0.0, 1.0
    for k in range(3):
        if abs(d[k]) < 1e-15:
            if not (lo[k] < q[k] < hi[k]):
                return False
            continue
        a, b = sorted(((lo[k] - q[k]) / d[k], (hi[k] - q[k]) / d[k]))
        t0, t1 = max(t0, a), min(t1, b)
    return t1 - t0 > 1e-9


def test_wall_beside_the_zone_shades_an_off_zone_fixture():
    # A tall wall standing beside the zone (outside its footprint) between the zone and a fixture hung off
    # to the side: the zone gets only the fixture above it. Point Lambertian source: E = (Φ/π) h² / d⁴
    # (inverse-square and Lambert cosine laws, I = Φ/π · cos θ).
    g = Grid("g", 0.0, 0.0, 1.0, 1.0, 0.0, 0.1)
    above = Emitter("a", 0.5, 0.5, 1.0, 300.0, lambertian())
    beside = Emitter("b", -1.0, 0.5, 1.0, 300.0, lambertian())
    wall = Box(-0.3, -5.0, -0.1, -0.1, 5.0, 2.0)
    total = full_map(above, g, (wall,)) + full_map(beside, g, (wall,))
    gx, gy = np.meshgrid(g.x_m, g.y_m)
    d2 = (gx - 0.5) ** 2 + (gy - 0.5) ** 2 + 1.0
    expected = 300.0 / np.pi / d2**2
    assert_allclose(total, expected, rtol=1e-6)
    assert full_map(beside, g).min() > 3.0  # without the wall the side fixture does light the zone


def test_low_wall_beside_the_zone_matches_brute_force_point_shadow():
    # A lower wall beside the zone shades only the zone's near edge: every point compared with a
    # brute-force point-source sum that tests each fixture-to-point ray against the box itself.
    g = Grid("g", 0.0, 0.0, 1.0, 1.0, 0.0, 0.05)
    beside = Emitter("b", -0.8, 0.3, 1.2, 300.0, lambertian())
    wall = (-0.25, 0.0, 0.0, -0.05, 0.8, 0.5)
    got = full_map(beside, g, (Box(*wall),))
    q = np.array([beside.x_m, beside.y_m, beside.z_m])
    ref = np.zeros_like(got)
    for j, y in enumerate(g.y_m):
        for i, x in enumerate(g.x_m):
            p = np.array([x, y, 0.0])
            if not _segment_hits_box(q, p, wall):
                d2 = float(np.sum((p - q) ** 2))
                ref[j, i] = 300.0 / np.pi * (q[2] / np.sqrt(d2)) ** 2 / d2
    shaded = ref == 0.0
    assert 0.05 < shaded.mean() < 0.6  # the scene does put part of the zone in shade
    assert_allclose(got, ref, rtol=1e-6, atol=1e-9)


@pytest.mark.parametrize("height_m", [2.0, 3.5, 5.0, 8.0])
def test_a_far_panel_stays_within_0_2_percent_of_howell(height_m):
    """A 0.6 m Lambertian panel hung high (where the engine may treat it as a point): E = M · F with F by
    superposition of Howell B-3 corner rectangles. A point beyond five diagonals was 0.5 % high at 5 m."""
    a, ppf = 0.6, 1000.0
    g = Grid("g", -0.5, -0.5, 1.0, 1.0, 0.0, 0.5)
    out = np.zeros((g.ny, g.nx))
    direct_patch(Emitter("e", 0.0, 0.0, height_m, ppf, lambertian(), "panel", a, a), g, dtype=np.float64).add_into(out)
    xs = g.x0_m + np.arange(g.nx) * g.spacing_m
    ref = np.array([[rect_factor(-a / 2 - x, a / 2 - x, -a / 2 - y, a / 2 - y, height_m) for x in xs] for y in xs])
    assert_allclose(out, ref * ppf / a**2, rtol=2e-3)
