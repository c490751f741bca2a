"""A tabulated beam sends down only its own share of the flux (zonal method, inverse-square law).

References: inverse-square law and Lambert's cosine law, E = I(θ) cos θ_r / d² for a point source
(any photometry text, e.g. Rea M.S. (ed.), IESNA Lighting Handbook, 9th ed., 2000, ch. 9 "point
source"); the flux of an isotropic source is Φ = 4π I; of a Lambertian (cos θ) one over a hemisphere
Φ = π I₀ (Lambert 1760; from memory as the textbook result).
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine import distributions as d
from app.engine.compute import compute_scene
from app.engine.direct import irradiance_from_nodes
from app.engine.scene import Emitter, Enclosure, Grid

PPF = 1000.0  # µmol/s


def isotropic_table():
    polar = np.arange(0, 181, 5.0)
    return d.tabulated(polar, [0.0], np.ones((1, polar.size)))


def lower_cosine_table():
    polar = np.arange(0, 181, 1.0)
    rel = np.where(polar <= 90, np.cos(np.radians(np.minimum(polar, 90))), 0.0)
    return d.tabulated(polar, [0.0], rel[None, :])


def test_isotropic_table_sends_half_down():
    dist = isotropic_table()
    # Isotropic: I = Φ/(4π) in every direction, half the flux in each hemisphere.
    assert_allclose(d.intensity_per_flux(dist, np.array([1.0, 0.3, -0.5, -1.0])), 1 / (4 * np.pi), rtol=1e-6)
    assert_allclose(d.downward_share(dist), 0.5, rtol=1e-6)


def test_isotropic_table_inverse_square_on_a_plane():
    """E = I cos θ_r / d² = (Φ/4π) h / d³ under an isotropic point source at height h (inverse-square law)."""
    dist = isotropic_table()
    h = 1.2
    xs = np.linspace(-3, 3, 13)
    pts = np.column_stack([xs, 0.5 * xs, np.zeros_like(xs)])
    got = irradiance_from_nodes(pts, np.array([[0.0, 0.0, h]]), np.array([PPF]), dist)
    d2 = xs**2 + (0.5 * xs) ** 2 + h**2
    assert_allclose(got, PPF / (4 * np.pi) * h / d2**1.5, rtol=1e-6)
    # Directly under it: I/h², not twice that (the old normalisation over the lower hemisphere alone).
    assert_allclose(got[6], PPF / (4 * np.pi) / h**2, rtol=1e-6)


def test_isotropic_table_map_through_compute_scene():
    e = Emitter("F", 2.0, 2.0, 1.0, PPF, isotropic_table())
    g = Grid("g", 1.0, 1.0, 2.0, 2.0, 0.0, 0.25)
    got = compute_scene((e,), (g,), Enclosure(4, 4, 3))[0].ppfd
    gx, gy = np.meshgrid(g.x_m, g.y_m)
    d2 = (gx - 2) ** 2 + (gy - 2) ** 2 + 1.0
    assert_allclose(got, PPF / (4 * np.pi) / d2**1.5, rtol=2e-3)


def test_lower_cosine_table_is_lambertian():
    """A cos θ table over the lower hemisphere only: I = (Φ/π) cos θ (Lambert), so under it at height h,
    E = I cos θ / d² = Φ cos θ · cos θ / (π d²) = Φ cos⁴θ / (π h²) with d = h / cos θ: the cos⁴ law of a
    Lambertian source on a level plane (the cos³ law belongs to an isotropic source, tested above)."""
    dist = lower_cosine_table()
    assert_allclose(d.downward_share(dist), 1.0, rtol=1e-9)
    h = 0.8
    xs = np.linspace(0, 2.4, 7)
    pts = np.column_stack([xs, np.zeros_like(xs), np.zeros_like(xs)])
    got = irradiance_from_nodes(pts, np.array([[0.0, 0.0, h]]), np.array([PPF]), dist)
    cos_t = h / np.sqrt(xs**2 + h**2)
    # 1° linear interpolation of cos θ: well inside 0.1 % except near the horizon.
    assert_allclose(got, PPF * cos_t**4 / (np.pi * h**2), rtol=2e-3)


@pytest.mark.parametrize("share", [0.25, 0.6])
def test_downward_share_of_a_two_level_table(share):
    """I = a below, b above the horizon (constant in each): downward flux 2π a, upward 2π b (zonal method)."""
    polar = np.array([0.0, 89.999, 90.001, 180.0])
    a, b = share, 1 - share
    dist = d.tabulated(polar, [0.0], [[a, a, b, b]])
    assert_allclose(d.downward_share(dist), share, rtol=1e-4)
