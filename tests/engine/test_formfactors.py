"""Configuration factors against Howell's catalogue and the point formula's stated error."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.formfactors import (
    axis_element_to_axis_rectangles,
    element_to_polygon,
    upward_element_to_axis_rectangles,
)
from app.engine.patch_transfer import EXACT_WITHIN_SIZES


def howell_b3(a, b, c):
    """Element to a parallel rectangle a × b at distance c, normal through one corner.

    Howell J.R., A Catalog of Radiation Heat Transfer Configuration Factors, case B-3.
    """
    A, B = a / c, b / c
    return (
        A / np.sqrt(1 + A * A) * np.arctan(B / np.sqrt(1 + A * A))
        + B / np.sqrt(1 + B * B) * np.arctan(A / np.sqrt(1 + B * B))
    ) / (2 * np.pi)


def test_howell_b3_check_value():
    # Check value from the catalogue (shared/REFERENCES.md): a = b = c = 1 gives 0.138531606.
    v = np.array([[[0, 0, 1], [1, 0, 1], [1, 1, 1], [0, 1, 1]]], float)
    assert_allclose(element_to_polygon(np.zeros((1, 3)), [0, 0, 1], v), [[0.138531606]], rtol=1e-8)


@pytest.mark.parametrize("a, b, c", [(0.3, 2.0, 0.5), (2.5, 0.1, 1.7), (4.0, 4.0, 0.2)])
def test_parallel_rectangles_match_howell_b3(a, b, c):
    v = np.array([[[0, 0, c], [a, 0, c], [a, b, c], [0, b, c]]], float)
    assert_allclose(element_to_polygon(np.zeros((1, 3)), [0, 0, 1], v)[0, 0], howell_b3(a, b, c), rtol=1e-9)


def test_coaxial_disk_matches_howell_b12():
    # Element to a coaxial parallel disk of radius r at distance h: F = 1 / (1 + (h/r)²) (Howell B-12);
    # h = 2, r = 1 gives 0.2. The disk is a 2000-gon (area deficit ~ (2π/2000)²/6).
    t = np.linspace(0, 2 * np.pi, 2001)[:-1]
    disk = np.stack([np.cos(t), np.sin(t), np.full_like(t, 2.0)], axis=1)[None]
    assert_allclose(element_to_polygon(np.zeros((1, 3)), [0, 0, 1], disk)[0, 0], 0.2, rtol=1e-5)


def test_element_at_the_foot_of_a_wall_sees_half_of_an_infinite_wall():
    # A horizontal element at the foot of a vertical wall: F → 1/2 as the wall grows without bound
    # (the wall fills half the hemisphere; Nusselt's unit-sphere method, Howell's catalogue introduction).
    big = 1e4
    wall = np.array([[[0, -big, 0], [0, big, 0], [0, big, big], [0, -big, big]]], float)
    assert_allclose(element_to_polygon(np.array([[1e-6, 0, 0]]), [0, 0, 1], wall)[0, 0], 0.5, rtol=1e-3)


def test_perpendicular_rectangle_matches_quadrature():
    # Element on the floor to a vertical rectangle: the definition F = ∫ cosθ₁ cosθ₂ / (π r²) dA by SciPy.
    from scipy.integrate import dblquad

    p = np.array([0.3, 0.2, 0.0])
    # Wall x = 1, y ∈ [0, 0.8], z ∈ [0.1, 0.9], normal −x.
    f = dblquad(
        lambda z, y: (z - p[2]) * (1 - p[0]) / (np.pi * ((1 - p[0]) ** 2 + (y - p[1]) ** 2 + (z - p[2]) ** 2) ** 2),
        0.0,
        0.8,
        0.1,
        0.9,
        epsabs=1e-12,
    )[0]
    v = np.array([[[1, 0, 0.1], [1, 0.8, 0.1], [1, 0.8, 0.9], [1, 0, 0.9]]], float)
    assert_allclose(element_to_polygon(p[None], [0, 0, 1], v)[0, 0], f, rtol=1e-8)


def test_closed_forms_for_axis_rectangles_match_howell_and_scipy():
    """The fast closed forms the engine uses for its axis-aligned patches: Howell B-3 (parallel rectangle),
    the perpendicular rectangle against SciPy's quadrature of the definition, and the infinite-wall limit."""
    from scipy.integrate import dblquad

    up = upward_element_to_axis_rectangles
    ceiling = np.array([[[0, 0, 1], [1, 0, 1], [1, 1, 1], [0, 1, 1]]], float)
    assert_allclose(up(np.zeros((1, 3)), ceiling), [0.138531606], rtol=1e-8)  # Howell B-3 check value
    off = np.array([[[-0.4, -1.1, 0.7], [2.1, -1.1, 0.7], [2.1, 0.3, 0.7], [-0.4, 0.3, 0.7]]], float)
    corners = [howell_b3(a, b, 0.7) for a, b in ((2.1, 0.3), (0.4, 0.3), (2.1, 1.1), (0.4, 1.1))]
    assert_allclose(up(np.zeros((1, 3)), off), [sum(corners)], rtol=1e-9)  # four corner rectangles
    p = np.array([0.3, 0.2, 0.0])
    f = dblquad(
        lambda z, y: z * 0.7 / (np.pi * (0.7**2 + (y - 0.2) ** 2 + z**2) ** 2), -0.5, 0.8, 0.1, 0.9, epsabs=1e-12
    )[0]
    wall = np.array([[[1, -0.5, 0.1], [1, 0.8, 0.1], [1, 0.8, 0.9], [1, -0.5, 0.9]]], float)
    assert_allclose(up(p[None], wall), [f], rtol=1e-8)
    big = 1e4
    infinite = np.array([[[0, -big, 0], [0, big, 0], [0, big, big], [0, -big, big]]], float)
    assert_allclose(up(np.array([[1e-6, 0, 0]]), infinite), [0.5], rtol=1e-3)


def test_axis_elements_match_the_contour_formula_inside_a_box():
    """Every face of a box room, cut into rectangles, seen from every other: the closed forms (each element's
    frame turned so its normal is +z) equal Lambert's contour formula, and each row sums to at most 1."""
    from app.engine.radiosity import wall_patches
    from app.engine.scene import Enclosure

    p = wall_patches(Enclosure(2.3, 3.1, 2.0, "diffuse", 0.5), (0.45,))
    fast = axis_element_to_axis_rectangles(p.centres, p.normals, p.corners)
    exact = element_to_polygon(p.centres, p.normals, p.corners)
    np.fill_diagonal(fast, 0.0)
    np.fill_diagonal(exact, 0.0)
    assert_allclose(fast, exact, rtol=1e-9, atol=1e-13)
    assert fast.sum(axis=1).max() <= 1.0 + 1e-9


def test_point_formula_is_within_0_7_percent_beyond_the_exact_range():
    # Beyond EXACT_WITHIN_SIZES patch diagonals the engine uses cos·cos·A/(π r²) at the patch centre.
    a = 0.25
    diag = a * np.sqrt(2)
    worst = 0.0
    for ang in np.linspace(0.1, 1.4, 14):
        r = EXACT_WITHIN_SIZES * diag
        c = np.array([r * np.cos(ang), 0.0, r * np.sin(ang)])  # patch centre, patch facing the element
        nrm = -c / np.linalg.norm(c)
        u = np.cross(nrm, [0, 1, 0])
        u /= np.linalg.norm(u)
        w = np.cross(nrm, u)
        v = np.array(
            [
                [
                    c - a / 2 * u - a / 2 * w,
                    c + a / 2 * u - a / 2 * w,
                    c + a / 2 * u + a / 2 * w,
                    c - a / 2 * u + a / 2 * w,
                ]
            ]
        )
        exact = element_to_polygon(np.zeros((1, 3)), [0, 0, 1], v)[0, 0]
        point = (c[2] / r) * 1.0 * a * a / (np.pi * r * r)
        worst = max(worst, abs(point / exact - 1))
    assert worst < 0.007, worst
